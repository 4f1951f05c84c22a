"""``filmoptic compare``: candidate materials side by side for the same target."""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    ambient_option,
    angle_option,
    echo_caution,
    emit_json,
    extrapolate_option,
    json_option,
    percent,
    print_table,
    user_errors,
)
from filmoptic.cli.solve import (
    EYE_CAUTION,
    build_conditions,
    condition_json,
    condition_options,
    needs_eye_caution,
    warn_if_half_space,
)


def _warn_thin_metals(table, ambient) -> None:
    """One warning line for every candidate whose answer is thinner than its film constants allow."""
    from filmoptic.materials.films import thin_metal_warning
    from filmoptic.stack import parse_stack

    layers = []
    for c in table.candidates:
        if c.thickness_nm is not None:
            layers += parse_stack(c.stack, ambient=ambient).metal_layers(c.thickness_nm)
    message = thin_metal_warning(layers)
    if message:
        from filmoptic.notes import warn

        warn(message)


def _num(value, fmt):
    return "–" if value is None else format(value, fmt)


@click.command()
@click.argument("materials", nargs=-1, required=True)
@click.option("--on", "substrate", required=True, metavar="SUBSTRATE",
              help='The substrate as in stack notation, e.g. "glass 4mm" (a slab) or "Si" (a half-space).')
@condition_options
@click.option("--range", "range_text", metavar="START:STOP",
              help="Thicknesses to search, nm (default: 0:100 for metals, 0:500 otherwise).")
@angle_option
@ambient_option
@extrapolate_option
@json_option
def compare(materials, substrate, range_text, angle, ambient, extrapolate, as_json, **opts):
    """Compare candidate materials for the same target.

    Each MATERIAL is tried as a single layer on the substrate, solved for the same condition as
    'filmoptic solve' takes (--luminous-T, --luminous-R, --T-at, --R-at, --lab, --hex, --reading),
    and its first answer is summarised:

    Two tables answer two questions. How much light, and where does it go:

    \b
      thickness    the thinnest layer that meets the target (or best colour match)
      Tv           luminous transmittance (ISO 9050, D65): the light through the part
      Rv film      luminous reflectance of the film side (ISO 9050)
      Rv glass     the same seen from the glass side (the back side, for other substrates)
      in film      light absorbed in the layer (turned into heat), luminous-weighted
      in glass     the same in the substrate (a glass plate's own absorption)

    What tint, and how touchy is the thickness:

    \b
      film side, glass side, through   CIELAB chroma C* of the tint seen there: 0 is neutral
                   grey, above about 5 a visible tint
      per nm       how far a 1 nm thickness error moves the target (percentage points, or ΔE00)

    Example:

        filmoptic compare Ti Cr Ni Al Ag --on "glass 4mm" --luminous-T 30%
        filmoptic compare "Al + 2nm oxide" "Ti + 3nm oxide" Ag --on "glass 4mm" --luminous-T 30%

    A candidate written 'METAL + Xnm oxide' carries the native oxide air grows on it (see
    'filmoptic spectrum --help'); its thickness is the metal deposited. When an answer puts a
    metal below the thickness where its tabulated constants describe a continuous film (about
    5 nm for Ti, Cr, Ni, Al; 10-12 nm for Ag, Au, Cu), a warning says so.

    A thin metal film's optical constants differ from the bulk values in the tables; treat the
    thicknesses as a starting point for a calibration run.
    """
    from filmoptic.inverse.choose import compare_materials
    from filmoptic.units import parse_range_nm

    with user_errors():
        range_nm = None if range_text is None else parse_range_nm(range_text)[:2]
        conditions = build_conditions(opts)
        table = compare_materials(materials, substrate, conditions, range_nm=range_nm, angle_deg=angle,
                                  extrapolate=extrapolate, ambient=ambient)
    solved = [c.solution for c in table.candidates if c.solution is not None]
    if not solved:
        from filmoptic.errors import TargetError

        raise TargetError("no candidate meets the target: " + "; ".join(c.note for c in table.candidates))
    with user_errors():
        from filmoptic.stack import parse_stack

        warn_if_half_space(parse_stack(substrate, ambient=ambient), conditions)
    if needs_eye_caution(conditions, solved):
        echo_caution(EYE_CAUTION)
    _warn_thin_metals(table, ambient)
    if as_json:
        emit_json({
            "substrate": table.substrate,
            "condition": condition_json(conditions[0]),
            "conditions": [condition_json(c) for c in conditions],
            "candidates": [{k: v for k, v in c.__dict__.items() if k != "solution"} for c in table.candidates],
        })
        return
    colour_target = conditions[0].kind == "colour"
    for c in conditions:
        click.echo(f"Condition: {c.label()}" + ("" if c.kind == "colour" else f" = {percent(c.value)} %"))
    click.echo(f"Substrate: {table.substrate}")
    click.echo("")
    from filmoptic.stack import parse_stack
    from filmoptic.describe.views import back_side

    back = back_side(parse_stack(table.substrate, ambient=ambient)).split()[0]
    where = "glass" if back == "glass" else "subst."
    light, tint, notes = [], [], []
    for c in table.candidates:
        if c.thickness_nm is None:
            light.append([c.material, "out of reach"] + ["–"] * 5)
            tint.append([c.material] + ["–"] * 4)
            notes.append(f"{c.material}: {c.note}")
            continue
        thickness = f"{c.thickness_nm:.2f}"
        if c.high_nm is not None and c.high_nm > c.low_nm:
            thickness += f" ({c.low_nm:.1f}–{c.high_nm:.1f})"
        change = _num(c.change_per_nm, ".3f") if colour_target else percent(c.change_per_nm, 3)
        light.append([c.material, thickness, percent(c.luminous_T), percent(c.luminous_R),
                      percent(c.luminous_R_reverse), percent(c.absorptance_layers),
                      percent(c.absorptance_substrate)])
        tint.append([c.material, _num(c.reflected_chroma, ".1f"), _num(c.reflected_reverse_chroma, ".1f"),
                     _num(c.transmitted_chroma, ".1f"), change])
    print_table(["material", "thickness (nm)", "Tv %", "Rv film %", f"Rv {back} %", "in film %",
                 f"in {where} %"], light, title="How much light, and where it goes (luminous, ISO 9050)")
    click.echo("")
    print_table(["material", "C* film side", f"C* {back} side", "C* through",
                 "ΔE00 per nm" if colour_target else "% per nm"], tint,
                title="What tint (CIELAB chroma), and how touchy the thickness is")
    for note in notes:
        click.echo(note)
    if any(c.solutions > 1 for c in table.candidates):
        click.echo("Some materials meet the target at several thicknesses; the thinnest is shown "
                   "('filmoptic solve' lists them all).")
