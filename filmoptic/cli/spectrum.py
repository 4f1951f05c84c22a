"""``filmoptic spectrum``: reflectance, transmittance and absorptance of a stack."""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    WavelengthsType,
    ambient_option,
    angle_option,
    check_output_path,
    check_plot_path,
    echo_caution,
    emit_json,
    extrapolate_option,
    json_option,
    percent,
    print_table,
    progress,
    save_plot,
    user_errors,
    write_atomically,
)

__all__ = ["spectrum"]

# Grids larger than this (wavelengths × layers) run in blocks behind a progress bar on a terminal.
_PROGRESS_FROM = 2_000_000
# A stack that passes light but blocks it somewhere below this transmittance works as a filter:
# remind the user that a computed filter is not eye protection.
_BLOCKING_T = 0.01


@click.command()
@click.argument("stack")
@click.option(
    "--wl", "wl", type=WavelengthsType(), default="380:780:5", show_default=True,
    help="Wavelengths in nm: START:STOP:STEP (both ends included) or a comma list like 532,633.",
)
@angle_option
@click.option(
    "--pol", "--polarization", "polarization", type=click.Choice(["s", "p", "unpolarized"], case_sensitive=False),
    default="unpolarized", show_default=True,
    help="Polarisation of the incident light; unpolarized is the mean of s and p.",
)
@click.option(
    "--reverse", is_flag=True,
    help="Send the light in from the substrate side instead of the coated side.",
)
@ambient_option
@extrapolate_option
@click.option("--csv", "csv_path", metavar="FILE",
              help="Also write the table to FILE: wavelength_nm,R,T,A as fractions, with a header.")
@click.option("--plot", "plot_path", metavar="FILE",
              help="Draw R, T and A against wavelength into FILE (.png, .svg or .pdf).")
@json_option
def spectrum(stack, wl, angle, polarization, reverse, ambient, extrapolate, csv_path,
             plot_path, as_json):
    """Reflectance, transmittance and absorptance of STACK.

    STACK lists the items in the order the light meets them, separated by ' / '; the last one
    is the substrate. Every thickness carries a unit. Layers in nm or um are thin (they
    interfere); an item in mm is a thick slab whose two faces both count, with the ambient
    behind it. A substrate without a thickness is a half-space: only its front face counts.
    [A 55nm / B 92nm]x4 repeats a group. A material is a library name (see 'filmoptic
    materials'), NAME:DATASET, a constant index (n=1.46, n=2.54+3.43j), a model
    (cauchy(A,B,C) with the wavelength in um), a mix (mix(Ti,TiO2,30%)) or file:PATH.

    \b
        filmoptic spectrum "Ti 12nm / glass 3mm"
        filmoptic spectrum "[TiO2 55nm / SiO2 92nm]x4 / glass 1mm" --wl 400:900:2 --plot hr.png
        filmoptic spectrum "MgF2 100nm / glass" --angle 45 --pol s --json

    R is the light reflected back into the ambient, T the light that comes out behind the
    stack (into a half-space substrate, or through a thick one into the medium behind it) and
    A = 1 - R - T the light the stack absorbs. The table shows percent; --json and --csv give
    fractions. With --reverse the light comes from the substrate side and --angle is measured
    in the medium there.

    Results are computed from published optical constants, not measured: real films differ
    (density, oxidation, roughness, interdiffusion). Never trust a computed filter for sun,
    welding or laser viewing; use certified protective equipment.
    """
    import warnings

    import numpy as np

    from filmoptic.engine import compute
    from filmoptic.stack import parse_stack

    with user_errors():
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
        for message in dict.fromkeys(str(w.message) for w in caught):
            click.echo(f"filmoptic: warning: {' '.join(message.split())}", err=True)
        if opaque:
            click.echo(
                f"filmoptic: note: the substrate {parsed.substrate.text} is an absorbing half-space: "
                "T is the light that enters it and is absorbed there, nothing comes out behind it "
                f"(write a thickness, e.g. '{parsed.substrate.text} 1mm', for a slab)",
                err=True,
            )

        if csv_path:
            write_atomically(csv_path, lambda fh: _write_csv(fh, result))
        if plot_path:
            from filmoptic.plots.spectrum import plot_spectrum

            save_plot(plot_spectrum(result, title=_title(parsed, angle, polarization, reverse)), plot_path)

    if np.min(result.T) < _BLOCKING_T and np.max(result.T) > 1e-6:
        echo_caution(
            "where this stack blocks light, the figures are computed, not measured: never use a "
            "computed filter for sun, welding or laser viewing; rely on certified protective "
            "equipment and measurement."
        )
    if as_json:
        emit_json({
            "stack": parsed.text,
            "ambient": str(parsed.ambient),
            "angle_deg": angle,
            "polarization": result.polarization,
            "reverse": bool(reverse),
            "wavelength_nm": result.wavelength_nm,
            "R": result.R,
            "T": result.T,
            "A": result.A,
        })
        return
    click.echo(_title(parsed, angle, polarization, reverse))
    rows = [
        [f"{w:g}", percent(r), percent(t), percent(a)]
        for w, r, t, a in zip(result.wavelength_nm, result.R, result.T, result.A)
    ]
    print_table(["wavelength_nm", "R %", "T %", "A %"], rows)
    if csv_path:
        click.echo(f"wrote {csv_path}")
    if plot_path:
        click.echo(f"wrote {plot_path}")


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
    )


def _write_csv(fh, result) -> None:
    fh.write("wavelength_nm,R,T,A\n")
    for w, r, t, a in zip(result.wavelength_nm, result.R, result.T, result.A):
        fh.write(f"{w:.10g},{r:.12g},{t:.12g},{a:.12g}\n")
