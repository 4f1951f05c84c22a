"""``filmoptic explore``: a self-contained HTML page with sliders for a stack's free thicknesses."""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    FiniteFloatRange,
    ambient_option,
    emit_json,
    extrapolate_option,
    json_option,
    late_progress,
    print_table,
    user_errors,
)
from filmoptic.cli.color import LOW_LIGHT_CAUTION, LOW_LIGHT_LIMIT, caution_if_dark, illuminant_option, observer_option

__all__ = ["explore"]

_PAGE_SUFFIXES = (".html", ".htm")


def _ranges(texts, count):
    """One (low, high) per free thickness from repeated --range START:STOP, or None."""
    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_range_nm

    if not texts:
        return None
    if len(texts) != count:
        raise FilmopticError(f"--range: give it once per free thickness ({count}), in the stack's order; "
                             f"got {len(texts)}")
    return [parse_range_nm(text, what="--range")[:2] for text in texts]


def _page_caution(grids):
    """The eye caution for the foot of the page, when some setting lets little light through."""
    import numpy as np

    if "transmitted" not in grids.views:
        return None
    T = np.asarray(grids.luminous["T"])
    passing = T[T > 1e-6]
    if passing.size and passing.min() < LOW_LIGHT_LIMIT:
        return "Caution: " + LOW_LIGHT_CAUTION.format(t=f"{100 * passing.min():.2f}")
    return None


def _check_page_path(path):
    from pathlib import Path

    from filmoptic.cli._common import check_output_path
    from filmoptic.errors import FilmopticError

    path = check_output_path(path, "--out file")
    if Path(path).suffix.lower() not in _PAGE_SUFFIXES:
        raise FilmopticError(f"--out {path} must end in .html (the page is one HTML file)")
    return path


@click.command()
@click.argument("stack")
@click.option("--out", "out_path", required=True, metavar="FILE.html",
              help="The page to write: one HTML file with everything inside it.")
@click.option("--open", "open_page", is_flag=True, help="Open the page in the default browser when written.")
@click.option("--range", "range_texts", multiple=True, metavar="START:STOP",
              help="Thicknesses a slider covers, nm; once per free thickness, in the stack's order "
                   "(default: the stack's LOW..HIGH, else 0–100 nm for a metal and 0–500 nm otherwise).")
@click.option("--step", "step_text", metavar="LENGTH",
              help="Thickness step of the sliders (e.g. 0.5nm; default 0.5 nm, coarser when the page would "
                   "pass --max-mb).")
@click.option("--angles", "angles_text", metavar="ANGLES",
              help="Angles of the angle slider: START:STOP:STEP or a comma list, degrees (default 0:70:5 "
                   "for one free thickness, 0:70:10 for two).")
@click.option("--max-mb", type=FiniteFloatRange(0.2, 20.0), default=4.0, show_default=True,
              help="Largest page, in megabytes.")
@illuminant_option
@observer_option
@ambient_option
@extrapolate_option
@json_option
def explore(stack, out_path, open_page, range_texts, step_text, angles_text, max_mb, illuminant, observer,
            ambient, extrapolate, as_json):
    """Write a page to play with STACK in a browser: sliders for its free thicknesses and the angle.

    STACK has one or two free layer thicknesses, written '?' or LOW..HIGH:

    \b
        filmoptic explore "TiO2 0..250nm / Ti" --out oxide.html --open
        filmoptic explore "Ti ? / glass 4mm" --out mirror.html
        filmoptic explore "SiO2 20..200nm / Cr ? / glass 4mm" --out two.html --angles 0:60:15

    As a slider moves, the page shows the colour of the film side (the coated face), of the
    glass side (the part turned over; only for a substrate with a thickness) and through the
    part (drawn as the part on a lit light box; none when the substrate absorbs all the light
    that enters it), each with its plain name, CIELAB L*, a*, b* and sRGB code; the luminous
    values Tv and Rv (ISO 9050) and the light absorbed in the film and in the substrate; and the
    film side's R, T and A from 380 to 780 nm.

    Every value is computed here, with the same functions as 'filmoptic color', on a grid
    (0.5 nm steps where the page stays under --max-mb; angles every 5°), and stored in the page;
    the browser only looks them up, so a value read at a grid point is the one 'filmoptic color'
    gives there. The page is one file that needs no network and no server: it opens from a USB
    stick or as an e-mail attachment.

    With --json: out, bytes, stack, sliders (name, label, low_nm, high_nm, step_nm, count),
    angles_deg, points, views, curve_wavelength_nm, illuminant, observer, ambient and
    transmission.

    Colours on screen depend on the screen; compare real parts under the light you work in.
    """
    from filmoptic.colorimetry import check_illuminant, check_observer
    from filmoptic.explore import explore_grids, write_explore_page
    from filmoptic.stack import parse_stack
    from filmoptic.units import parse_angles_deg, parse_length_nm

    with user_errors():
        path = _check_page_path(out_path)
        check_observer(observer)
        check_illuminant(illuminant)
        step = None if step_text is None else parse_length_nm(step_text, "--step", allow_zero=False)
        angles = None if angles_text is None else parse_angles_deg(angles_text)
        parsed = parse_stack(stack, ambient=ambient)
        ranges = _ranges(range_texts, len(parsed.parameters))
        with late_progress("computing the page") as report:
            grids = explore_grids(parsed, step_nm=step, angles_deg=angles, ranges_nm=ranges,
                                  illuminant=illuminant, observer=observer, extrapolate=extrapolate,
                                  max_mb=max_mb, progress=report)
        size = write_explore_page(path, grids, caution=_page_caution(grids))

    sliders = [{"name": f.name, "label": f.label, "low_nm": float(f.values_nm[0]), "high_nm": float(f.values_nm[-1]),
                "step_nm": f.step_nm, "count": int(f.values_nm.size)} for f in grids.free]
    if as_json:
        emit_json({
            "out": str(path), "bytes": size, "stack": grids.stack, "sliders": sliders,
            "angles_deg": grids.angle_deg, "points": grids.points,
            "views": [grids.view_names[k] for k in grids.views], "curve_wavelength_nm": grids.curve_wavelength_nm,
            "illuminant": grids.illuminant, "observer": grids.observer, "ambient": grids.ambient,
            "transmission": grids.transmission,
        })
    else:
        rows = [[f"{s['label']} thickness", f"{s['low_nm']:g}", f"{s['high_nm']:g}", f"{s['step_nm']:g}",
                 str(s["count"]), "nm"] for s in sliders]
        a = grids.angle_deg
        rows.append(["viewing angle", f"{a[0]:g}", f"{a[-1]:g}", f"{a[1] - a[0]:g}" if a.size > 1 else "–",
                     str(a.size), "°"])
        print_table(["slider", "from", "to", "step", "values", "unit"], rows,
                    title=f"Explore page of {grids.stack!r} — {grids.illuminant} light, {grids.observer}° observer, "
                          f"in {grids.ambient}")
        views = ", ".join(grids.view_names[k] for k in grids.views)
        click.echo(f"views: {views}" + ("" if "transmitted" in grids.views else " (nothing comes through)"))
        click.echo(f"Page written to {path} ({size / 1e6:.2f} MB, {grids.points} grid points): open it in any "
                   "browser; it needs no network.")
    if "transmitted" in grids.views:
        caution_if_dark(grids.luminous["T"])
    if open_page:
        import webbrowser
        from pathlib import Path

        webbrowser.open(Path(path).resolve().as_uri())
