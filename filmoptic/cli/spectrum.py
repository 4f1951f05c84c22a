"""``filmoptic spectrum``: reflectance, transmittance and absorptance of a stack."""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    PolarizationType,
    WavelengthsType,
    ambient_option,
    angle_option,
    check_output_path,
    check_plot_path,
    emit_json,
    extrapolate_option,
    json_option,
    percent,
    print_table,
    progress,
    save_plot,
    user_errors,
    write_atomically,
    transmission_note,
    echo_surface_oxides,
    warn_thin_metal,
)

__all__ = ["spectrum", "optical_density"]

# Grids larger than this (wavelengths × layers) run in blocks behind a progress bar on a terminal.
_PROGRESS_FROM = 2_000_000
# The table gains an optical-density column when T falls below this somewhere (OD above 1).
_OD_FROM_T = 0.10


@click.command()
@click.argument("stack")
@click.option(
    "--wl", "wl", type=WavelengthsType(), default="380:780:5", show_default=True,
    help="Wavelengths in nm: START:STOP:STEP (both ends included) or a comma list like 532,633.",
)
@angle_option
@click.option(
    "--pol", "--polarization", "--polarisation", "polarization", type=PolarizationType(),
    default="unpolarized", show_default=True,
    help="Polarisation of the incident light: s, p or unpolarized (also unpolarised), the mean of s and p.",
)
@click.option(
    "--reverse", is_flag=True,
    help="Send the light in from the substrate side instead of the coated side.",
)
@ambient_option
@extrapolate_option
@click.option("--csv", "csv_path", metavar="FILE",
              help="Also write the table to FILE: wavelength_nm,R,T,A,A_layers,A_substrate as "
                   "fractions and OD, with a header.")
@click.option("--plot", "plot_path", metavar="FILE",
              help="Draw R, T and A against wavelength into FILE (.png, .svg or .pdf); the command says "
                   "where it wrote it.")
@click.option("--plot-percent", "plot_percent", metavar="LOW:HIGH|auto",
              help="Vertical range of the plot in percent: LOW:HIGH (e.g. 0:50 for a semi-mirror) or "
                   "auto (from 0 to just above the highest curve). Default: the whole 0–100 %.")
@json_option
def spectrum(stack, wl, angle, polarization, reverse, ambient, extrapolate, csv_path,
             plot_path, plot_percent, as_json):
    """Reflectance, transmittance and absorptance of STACK.

    STACK lists the items in the order the light meets them, separated by ' / '; the last one
    is the substrate. Every thickness carries a unit (nm, um, mm, or Å written A, Å or
    angstrom). Layers in nm or um are thin (they interfere); an item in mm is a thick slab whose
    two faces both count, with the ambient behind it. A substrate without a thickness is a
    half-space: only its front face counts. [A 55nm / B 92nm]x4 repeats a group. A material is a
    library name (see 'filmoptic materials'; common names such as copper or float glass work
    too), NAME:DATASET, a constant index (n=1.46, n=2.54+3.43j), a model (cauchy(A,B,C) with the
    wavelength in um), a mix (mix(Ti,TiO2,30%)) or file:PATH.

    A layer may be written in quarter waves at a design wavelength: 'MgF2 1qw@550nm' is one
    quarter-wave optical thickness (n·d = λ/4), '2.5qw' two and a half. Settings in braces at the
    start give the reference wavelength for the whole stack and the materials of the H/L
    shorthand (H = one quarter wave of the high-index material, 2H two of them):

    \b
        filmoptic spectrum "Ti 12nm / glass 3mm"
        filmoptic spectrum "[TiO2 55nm / SiO2 92nm]x4 / glass 1mm" --wl 400:900:2 --plot hr.png
        filmoptic spectrum "MgF2 100nm / glass" --angle 45 --pol s --json
        filmoptic spectrum "MgF2 1qw@550nm / glass"
        filmoptic spectrum "{550nm H=TiO2 L=SiO2} [H / L]x4 / H / glass 1mm" --wl 400:800:2

    The physical thickness of every layer given in quarter waves is printed above the table
    (JSON: layers).

    R is the light reflected back into the ambient, T the light that comes out behind the part,
    and A = 1 - R - T the light absorbed, split into A layers (in the coating) and A substrate
    (inside a substrate slab such as 'glass 4mm'). Through a thick substrate, T is what reaches
    the medium behind it. Into a transparent half-space ('glass' without a thickness), T is the
    light that enters it. An absorbing half-space ('Ti', 'Si' without a thickness) lets nothing
    through: T is 0 and what enters it counts as A substrate. The output says once which of
    these applies. The table shows percent; --json and --csv give fractions. Where T falls below
    10 % the table adds the optical density OD = -log10 T (always in --json and --csv; where no
    light at all comes through, T = 0, OD is infinite: 'inf' in the table and CSV, null in
    JSON, which has no infinity). When the
    wavelengths span 380–780 nm, the luminous T and R (ISO 9050, D65) are printed under the table
    (JSON: luminous_T, luminous_R). With --reverse the light comes from the substrate side and
    --angle is measured in the medium there.

    --json gives stack, ambient, angle_deg, polarization, reverse, layers, wavelength_nm, R, T,
    A, A_layers, A_substrate, OD, luminous_T, luminous_R, transmission (exits, enters substrate
    or opaque) and surface_oxides.

    A metal layer may carry the oxide air grows on it: 'Al 10nm + 2nm oxide' is 2 nm of Al2O3
    on what is left of 10 nm of deposited aluminium once the oxide has consumed its share
    (Pilling-Bedworth volume ratio); the output shows what it expanded to. A metal thinner than
    about 5 nm (Ti, Cr, Ni, Al) or 10-12 nm (Ag, Au, Cu) is not the continuous film its tabulated
    constants describe: a warning says so.

    Results are computed from published optical constants, not measured: real films differ
    (density, oxidation, roughness, interdiffusion). Never trust a computed filter for sun,
    welding or laser viewing; use certified protective equipment.
    """
    import warnings

    import numpy as np

    from filmoptic.engine import compute
    from filmoptic.stack import parse_stack

    with user_errors():
        percent_range = _percent_range(plot_percent)
        if plot_percent is not None and plot_path is None:
            raise click.UsageError("--plot-percent sets the range of a plot: give --plot FILE as well")
        if plot_path is not None:
            check_plot_path(plot_path)
        if csv_path is not None:
            check_output_path(csv_path, "--csv file")
        parsed = parse_stack(stack, ambient=ambient)
        if parsed.parameters:
            names = ", ".join(p.name for p in parsed.parameters)
            raise click.UsageError(
                f"the stack has unknowns ({names}); spectrum needs numbers — use 'filmoptic sweep' "
                "or 'filmoptic solve' for unknown thicknesses"
            )
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", UserWarning)
            # An absorbing half-space substrate: light entering it never comes out.
            opaque = not parsed.substrate_passes_light(wl, extrapolate=extrapolate)
            if reverse and opaque:
                raise click.UsageError(
                    f"--reverse: light would have to arrive through {parsed.substrate.text}, an "
                    "absorbing half-space rather than a transparent medium; give the substrate a "
                    "thickness (e.g. '"
                    f"{parsed.substrate.text} 0.5mm') to light the part from behind"
                )
            result = _compute_with_progress(compute, parsed, wl, angle, polarization,
                                            reverse, extrapolate)
            lum = _luminous(parsed, wl, angle, polarization, reverse, extrapolate)
        from filmoptic.notes import warn

        for message in dict.fromkeys(str(w.message) for w in caught):
            warn(message)
        warn_thin_metal(parsed)

        if csv_path:
            write_atomically(csv_path, lambda fh: _write_csv(fh, result, None if opaque else optical_density(result.T)))
        if plot_path:
            from filmoptic.plots.spectrum import plot_spectrum

            save_plot(plot_spectrum(result, title=_title(parsed, angle, polarization, reverse),
                                    percent_range=percent_range), plot_path)
    od = None if opaque else optical_density(result.T)
    if as_json:
        if plot_path:
            from filmoptic.notes import note

            note(f"plot written to {plot_path} (R, T and A against wavelength)")
        emit_json({
            "stack": parsed.text,
            "ambient": str(parsed.ambient),
            "angle_deg": angle,
            "polarization": result.polarization,
            "reverse": bool(reverse),
            "layers": [_layer_json(layer) for layer in parsed.layers],
            "wavelength_nm": result.wavelength_nm,
            "R": result.R,
            "T": result.T,
            "A": result.A,
            "A_layers": result.A_layers,
            "A_substrate": result.A_substrate,
            "transmission": result.transmission,
            "surface_oxides": list(parsed.surface_oxides()),
            "OD": od,
            "luminous_T": None if lum is None or not lum[2] else lum[0],
            "luminous_R": None if lum is None or not lum[2] else lum[1],
        })
    else:
        click.echo(_title(parsed, angle, polarization, reverse))
        echo_surface_oxides(parsed)
        _print_resolved(parsed)
        show_od = od is not None and float(np.min(result.T)) < _OD_FROM_T
        rows = [
            [f"{w:g}", percent(r), percent(t), percent(a), percent(al), percent(asub)]
            + ([_od_cell(d)] if show_od else [])
            for w, r, t, a, al, asub, d in zip(result.wavelength_nm, result.R, result.T, result.A,
                                               result.A_layers, result.A_substrate,
                                               od if od is not None else result.T)
        ]
        print_table(["wavelength_nm", "R %", "T %", "A %", "A layers %", "A substrate %"]
                    + (["OD"] if show_od else []), rows)
        note = transmission_note(result.transmission)
        if note:
            click.echo(note)
        if lum is not None and lum[2]:
            through = "no light comes through" if opaque else f"T {percent(lum[0])} %"
            click.echo(f"Luminous (ISO 9050, D65, 380–780 nm): {through}, R {percent(lum[1])} %")
        if show_od:
            click.echo("OD: optical density, -log10 T.")
        if csv_path:
            click.echo(f"Table written to {csv_path}")
        if plot_path:
            click.echo(f"Plot written to {plot_path} (R, T and A against wavelength)")
    if lum is not None and not opaque:
        # A person may look through the part: the caution applies only where little light passes.
        from filmoptic.cli.color import caution_if_dark

        caution_if_dark(lum[0])


def optical_density(T):
    """OD = −log10 T (infinite where T = 0).

    Examples
    --------
    >>> optical_density([0.1, 0.001, 1.0]).tolist()
    [1.0, 3.0, -0.0]
    """
    import numpy as np

    with np.errstate(divide="ignore"):
        return -np.log10(np.asarray(T, dtype=float))


def _od_cell(od) -> str:
    return "inf" if not (od < 1e300) else f"{od:.2f}"


def _luminous(parsed, wl, angle, polarization, reverse, extrapolate):
    """(luminous T, luminous R, whether the --wl grid spans 380–780 nm), or None when the stack's
    tables do not cover the visible. Computed on its own 5 nm grid (one more engine call), so that
    a coarse or partial --wl grid does not change it."""
    from filmoptic.colorimetry import VISIBLE_RANGE_NM, default_wavelengths, luminous
    from filmoptic.engine import compute
    from filmoptic.errors import FilmopticError

    visible = default_wavelengths()
    try:
        spec = compute(parsed, visible, angle_deg=angle, polarization=polarization, reverse=reverse,
                       extrapolate=extrapolate)
    except FilmopticError:
        return None
    # A --wl grid that spans the visible range gets the luminous T and R printed under the table.
    spans = float(wl.min()) <= VISIBLE_RANGE_NM[0] and float(wl.max()) >= VISIBLE_RANGE_NM[1]
    return float(luminous(visible, spec.T)), float(luminous(visible, spec.R)), spans


def _layer_json(layer) -> dict:
    quarter = layer.quarter_waves
    return {"text": layer.text, "material": str(layer.material), "thickness_nm": layer.thickness_nm,
            "quarter_waves": None if quarter is None else quarter[0],
            "design_wavelength_nm": None if quarter is None else quarter[1]}


def _print_resolved(parsed) -> None:
    """The physical thickness of every item written in quarter waves (once per written item)."""
    seen = {}
    for layer in parsed.layers:
        if layer.quarter_waves is not None:
            seen.setdefault(layer.item, [layer, 0])[1] += 1
    if not seen:
        return
    click.echo("Quarter waves resolved (n·d = count × λ0/4, n at λ0):")
    for layer, repeats in seen.values():
        count, wl0 = layer.quarter_waves
        times = f"  (×{repeats})" if repeats > 1 else ""
        click.echo(f"  {layer.text:<20s} {layer.material}: {count:g} × λ/4 at {wl0:g} nm = {layer.thickness_nm:.2f} nm{times}")


def _percent_range(text):
    """None, "auto" or (low, high) from --plot-percent."""
    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_number

    if text is None:
        return None
    text = text.strip().lower().replace("%", "")
    if text == "auto":
        return "auto"
    parts = text.split(":")
    if len(parts) != 2:
        raise FilmopticError(f"--plot-percent: write LOW:HIGH in percent (e.g. 0:50) or auto, got {text!r}")
    low, high = (parse_number(p, "--plot-percent") for p in parts)
    if not -5 <= low < high <= 105:
        raise FilmopticError(f"--plot-percent: need -5 <= LOW < HIGH <= 105, got {low:g}:{high:g}")
    return low, high


def _title(parsed, angle, polarization, reverse) -> str:
    side = "from the substrate side" if reverse else "from the coated side"
    return (f"Stack: {parsed.text}  (ambient {parsed.ambient}; light {side}, "
            f"{angle:g}° incidence, {polarization})")


def _compute_with_progress(compute, parsed, wavelengths, angle, polarization, reverse, extrapolate):
    """One call for ordinary grids; on a very large grid, blocks of wavelengths with a bar."""
    import numpy as np

    from filmoptic.engine import Spectrum, check_work, interface_count

    kwargs = dict(angle_deg=angle, polarization=polarization, reverse=reverse, extrapolate=extrapolate)
    size = wavelengths.size * (len(parsed.layers) + 1)
    if size < _PROGRESS_FROM:
        return compute(parsed, wavelengths, **kwargs)
    check_work(wavelengths.size, interface_count(parsed))
    # Check every table against the whole grid first, so that a range error names the far end
    # of the request rather than the end of whichever block happened to fail.
    ends = np.array([wavelengths.min(), wavelengths.max()])
    materials = [layer.material for layer in (*parsed.layers, parsed.substrate)]
    for material in dict.fromkeys([parsed.ambient, *materials, parsed.exit_medium]):
        material.nk(ends, extrapolate=extrapolate)
    blocks = np.array_split(wavelengths, int(np.ceil(size / (_PROGRESS_FROM / 10))))
    parts = []
    with progress(len(blocks), "computing") as advance:
        for block in blocks:
            parts.append(compute(parsed, block, **kwargs))
            advance(1)
    return Spectrum(
        wavelength_nm=wavelengths, angle_deg=parts[0].angle_deg, polarization=parts[0].polarization,
        R=np.concatenate([p.R for p in parts]), T=np.concatenate([p.T for p in parts]),
        A=np.concatenate([p.A for p in parts]),
        A_layers=np.concatenate([p.A_layers for p in parts]),
        A_substrate=np.concatenate([p.A_substrate for p in parts]),
        transmission=parts[0].transmission,
    )


def _write_csv(fh, result, od=None) -> None:
    """wavelength_nm,R,T,A,A_layers,A_substrate,OD (OD empty where no light comes through)."""
    fh.write("wavelength_nm,R,T,A,A_layers,A_substrate,OD\n")
    ods = od if od is not None else [None] * len(result.T)
    for w, r, t, a, al, asub, d in zip(result.wavelength_nm, result.R, result.T, result.A,
                                       result.A_layers, result.A_substrate, ods):
        cell = "" if d is None else ("inf" if not d < 1e300 else f"{d:.12g}")
        fh.write(f"{w:.10g},{r:.12g},{t:.12g},{a:.12g},{al:.12g},{asub:.12g},{cell}\n")
