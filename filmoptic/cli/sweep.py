"""``filmoptic sweep``: colour and luminous values over a range of one layer's thickness."""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    ambient_option,
    angle_option,
    check_plot_path,
    emit_json,
    extrapolate_option,
    json_option,
    percent,
    print_table,
    progress,
    save_plot,
    user_errors,
)
from filmoptic.cli.color import caution_if_dark, illuminant_option, observer_option

__all__ = ["sweep"]

# Above this many thicknesses the sweep runs in blocks with a progress bar (on a terminal).
_PROGRESS_FROM = 20_000


def _lab_text(lab) -> list[str]:
    L, a, b = (float(v) for v in lab)
    return [f"{L:.1f}", f"{a:+.1f}", f"{b:+.1f}"]


@click.command()
@click.argument("stack")
@click.option(
    "--range", "range_text", required=True, metavar="START:STOP:STEP",
    help="Thicknesses of the unknown layer in nm, e.g. 0:250:1 (both ends included).",
)
@illuminant_option
@observer_option
@angle_option
@ambient_option
@click.option(
    "--chart", "chart_path", metavar="FILE",
    help="Write a printable A4 colour-versus-thickness chart: .png, .svg or .pdf.",
)
@extrapolate_option
@json_option
def sweep(stack, range_text, illuminant, observer, angle, ambient, chart_path, extrapolate, as_json):
    """Colour and luminous values of STACK over a range of one layer's thickness.

    STACK has exactly one unknown, the thickness of the layer to vary, written '?':

    \b
        filmoptic sweep "TiO2 ? / Ti" --range 0:250:1 --chart ti-oxide.pdf
        filmoptic sweep "SiO2 ? / Si" --range 0:600:5 --observer 10

    For every thickness the command reports the colour reflected from the coated side and the
    transmitted colour (CIELAB L*, a*, b* and the sRGB colour a screen would show; '*' marks a
    colour outside the sRGB gamut, shown with reduced chroma at the same lightness and hue), and
    the luminous transmittance and reflectance (ISO 9050 weighting with the chosen illuminant).
    The whole range is computed in one vectorised pass.

    --chart draws what a coater can pin beside the chamber: strips of the reflected and
    transmitted colours along the thickness axis, the luminous T and R curves beneath, and the path
    of the reflected colour in the a*b* plane with thicknesses marked. Printed and on-screen colours
    depend on the device; judge against real samples.

    With --json: thickness_nm, luminous_T, luminous_R (fractions), reflected_Lab, reflected_hex,
    reflected_in_gamut, transmitted_Lab, transmitted_hex, transmitted_in_gamut, one entry per
    thickness.
    """
    import numpy as np

    from filmoptic.colorimetry import check_illuminant, check_observer, colour_sweep
    from filmoptic.stack import parse_stack
    from filmoptic.units import parse_range_nm

    with user_errors():
        if chart_path:
            check_plot_path(chart_path)
        start, stop, step = parse_range_nm(range_text, what="--range", need_step=True)
        thickness = start + step * np.arange(int(np.floor((stop - start) / step + 1e-9)) + 1)
        obs = check_observer(observer)
        label = check_illuminant(illuminant)
        parsed = parse_stack(stack, ambient=ambient)
        options = dict(illuminant=illuminant, observer=obs, angle_deg=angle, extrapolate=extrapolate)
        if thickness.size > _PROGRESS_FROM:
            with progress(thickness.size, "sweeping") as advance:
                result = colour_sweep(parsed, thickness, progress=advance, **options)
        else:
            result = colour_sweep(parsed, thickness, **options)

    if chart_path:
        # Written before anything is printed, so that a failure leaves no half report on stdout.
        from filmoptic.plots.chart import sweep_chart

        with user_errors():
            save_plot(sweep_chart(result), chart_path)

    if as_json:
        emit_json({
            "thickness_nm": result.thickness_nm,
            "luminous_T": result.luminous_T,
            "luminous_R": result.luminous_R,
            "reflected_Lab": result.reflected.Lab,
            "reflected_hex": result.reflected.hex,
            "reflected_in_gamut": result.reflected.in_gamut,
            "transmitted_Lab": result.transmitted.Lab,
            "transmitted_hex": result.transmitted.hex,
            "transmitted_in_gamut": result.transmitted.in_gamut,
        })
    else:
        rows = []
        for i, d in enumerate(result.thickness_nm):
            r, t = result.reflected[i], result.transmitted[i]
            rows.append(
                [f"{d:g}"] + _lab_text(r.Lab) + [r.hex + ("" if r.in_gamut else " *")]
                + _lab_text(t.Lab) + [t.hex + ("" if t.in_gamut else " *")]
                + [percent(result.luminous_T[i]), percent(result.luminous_R[i])]
            )
        title = (f"Colour of {stack!r} versus thickness — illuminant {label}, {obs}° observer, "
                 f"{angle:g}° incidence, ambient {ambient}")
        print_table(["nm", "R L*", "R a*", "R b*", "R sRGB", "T L*", "T a*", "T b*", "T sRGB",
                     "T lum %", "R lum %"], rows, title=title)
        if not result.transmission_exits:
            click.echo("T: light entering the substrate, which absorbs it (an opaque half-space); "
                       "only the reflected colour is seen.")
        if not (np.all(result.reflected.in_gamut) and np.all(result.transmitted.in_gamut)):
            click.echo("* outside the sRGB gamut: shown with reduced chroma at the same lightness and hue.")

    if chart_path and not as_json:
        click.echo(f"Chart written to {chart_path}")
    if result.transmission_exits:
        caution_if_dark(result.luminous_T)
