"""``filmoptic anodize`` (also ``anodise``): colour against anodising voltage, and back.

The growth-law options (:func:`law_options`, :func:`law_from_options`) are shared with ``sweep``
and ``solve``, which can read a layer's thickness as anodising volts.
"""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    FiniteFloatRange,
    angle_option,
    check_plot_path,
    echo_caution,
    emit_json,
    json_option,
    paper_option,
    percent,
    print_table,
    save_plot,
    user_errors,
)
from filmoptic.cli.color import OUT_OF_GAMUT_NOTE, illuminant_option, observer_option

__all__ = ["anodize", "law_options", "law_from_options", "volts_from_option", "lab_cells", "pick_mode",
           "DEFAULT_VOLTS"]

#: Voltages charted (and searched) unless --volts says otherwise: the span bench power supplies
#: for colour anodising cover.
DEFAULT_VOLTS = "0:100:5"
#: Largest ΔE00 that still lists an order as a match for --hex/--lab unless --max-delta-e says.
DEFAULT_MAX_DELTA_E = 10.0

_NM_PER_VOLT = click.option(
    "--nm-per-volt", type=FiniteFloatRange(min=0, min_open=True, max=100), metavar="K",
    help="Oxide growth of your bath in nm per volt, replacing the metal's default (baths, "
         "temperatures and alloys differ).",
)
_OFFSET = click.option(
    "--offset-nm", type=FiniteFloatRange(min=-1000, max=1000), metavar="NM",
    help="Oxide thickness at 0 V in the law d = K·V + offset (e.g. the air-formed oxide); default 0.",
)


def law_options(func):
    """--anodize/--anodise METAL, --nm-per-volt, --offset-nm: a layer read in volts."""
    func = _OFFSET(func)
    func = _NM_PER_VOLT(func)
    return click.option(
        "--anodize", "--anodise", "law_metal", metavar="METAL",
        help="Read the unknown layer's thickness as anodic oxide grown on METAL (Ti, Nb, Ta, Al, Zr): "
             "voltage = (thickness − offset) / nm-per-volt, with the metal's default law unless "
             "--nm-per-volt/--offset-nm give yours.",
    )(func)


def law_from_options(law_metal, nm_per_volt, offset_nm):
    """The growth law the options ask for, or None when none of them was given."""
    from filmoptic.colouring.anodize import GrowthLaw, growth_law

    if law_metal:
        return growth_law(law_metal, nm_per_volt, offset_nm)
    if nm_per_volt is not None:
        return GrowthLaw("layer", float(nm_per_volt), float(offset_nm or 0.0), "given")
    if offset_nm is not None:
        raise click.UsageError("--offset-nm belongs to a growth law: add --anodize METAL or --nm-per-volt")
    return None


def volts_from_option(volts_text, range_text, law, need_step):
    """The voltages of --volts (a grid with ``need_step``, else START and STOP), checked against
    --range and the growth law; None when --volts was not given."""
    from filmoptic.errors import FilmopticError
    from filmoptic.units import inclusive_grid, parse_volts_range

    if volts_text is None:
        return None
    if range_text is not None:
        raise FilmopticError("give either --range (thicknesses) or --volts (voltages), not both")
    if law is None:
        raise FilmopticError("--volts needs a growth law: add --anodize METAL (Ti, Nb, Ta, Al, Zr) or --nm-per-volt K")
    span = parse_volts_range(volts_text, "--volts", need_step=need_step)
    return inclusive_grid(*span, "--volts") if need_step else span[:2]


def lab_cells(lab):
    """L*, a*, b* as table cells (shared with heat-tint)."""
    return [f"{float(lab[0]):.1f}", f"{float(lab[1]):+.1f}", f"{float(lab[2]):+.1f}"]


def pick_mode(at_text, hex_, lab):
    """Which of --at, --hex and --lab was given (None for a chart); refuses more than one."""
    from filmoptic.errors import FilmopticError

    modes = [name for name, given in (("--at", at_text), ("--hex", hex_), ("--lab", lab)) if given]
    if len(modes) > 1:
        raise FilmopticError(f"give one of --at, --hex and --lab, not {' and '.join(modes)}")
    return modes[0] if modes else None


def _rows_json(chart, idx=None):
    film = chart.film
    indices = range(chart.volts.size) if idx is None else idx
    return [{"volts": float(chart.volts[i]), "thickness_nm": float(film.thickness_nm[i]),
             "Lab": [float(x) for x in film.colours.Lab[i]], "hex": str(film.colours.hex[i]),
             "in_gamut": bool(film.colours.in_gamut[i]), "luminous_R": float(film.luminous_R[i])}
            for i in indices]


@click.command("anodize")
@click.argument("metal")
@click.option("--volts", "volts_text", metavar="START:STOP:STEP",
              help=f"Voltages to chart, e.g. 10:110:5 (default {DEFAULT_VOLTS}); with --hex/--lab the "
                   "span searched (START:STOP is enough).")
@click.option("--at", "at_text", metavar="VOLTS", help="The colour at one voltage, e.g. 25 or 25V.")
@click.option("--hex", "hex_", metavar="#RRGGBB",
              help="A colour wanted (sRGB): list every voltage, one per interference order, that gives it.")
@click.option("--lab", metavar="L,a,b", help="The same as --hex from CIELAB L*, a*, b* (under --illuminant).")
@click.option("--max-delta-e", type=FiniteFloatRange(min=0, min_open=True), default=DEFAULT_MAX_DELTA_E,
              show_default=True, metavar="DE",
              help="With --hex/--lab: largest ΔE00 (CIEDE2000) that still counts as a match.")
@_NM_PER_VOLT
@_OFFSET
@click.option("--oxide", metavar="MATERIAL",
              help="The oxide's optical data as written in a stack (default: the library's amorphous "
                   "film of the metal's oxide, e.g. TiO2 for Ti).")
@illuminant_option
@observer_option
@angle_option
@click.option("--chart", "chart_path", metavar="FILE",
              help="Write a printable sheet of colour tiles (one A4 or --paper letter page) for the --volts "
                   "range: .png, .svg or .pdf.")
@paper_option
@json_option
def anodize(metal, volts_text, at_text, hex_, lab, max_delta_e, nm_per_volt, offset_nm, oxide, illuminant,
            observer, angle, chart_path, paper, as_json):
    """Colour of an anodised valve metal against the anodising voltage, and the voltages for a colour.

    METAL is Ti, Nb, Ta, Al or Zr (any case; NAME:DATASET picks the metal's optical data, e.g.
    Ti:Werner-2009). The oxide grows to a thickness set by the voltage,

    \b
        thickness = nm-per-volt × volts + offset

    with a default per metal from the electrochemistry literature (Ti 2.0, Nb 2.3, Ta 1.6, Al 1.32,
    Zr 2.0 nm/V; each table names its source, and --json gives it as law_source), which
    --nm-per-volt and --offset-nm replace with your bath's numbers. The colour is
    that of the oxide on the metal seen in reflection: the metal is opaque, so no light passes.

    \b
    Examples:
      filmoptic anodize Ti                       colour every 5 V from 0 to 100 V
      filmoptic anodise Nb --volts 10:110:2 --chart niobium.pdf
      filmoptic anodize Ti --at 25
      filmoptic anodize Ti --hex "#3d64ab"        which voltages give this blue?
      filmoptic anodize Ta --lab 70,10,-20 --max-delta-e 6 --json
      filmoptic anodize Ti --nm-per-volt 2.4 --offset-nm 4

    --hex/--lab lists every voltage in the range where the colour comes closest, one per
    interference order (the same colour comes round again at higher voltage), with its ΔE00 and
    the span of volts that stays within --max-delta-e; if none is within it, the command names the
    closest and exits with status 2.

    The oxide data are deposited amorphous films standing in for anodic films (no open dataset of
    an anodic film was found), and real baths differ: treat the voltages as a starting point and
    check on an offcut.

    \b
    --json: {"metal", "nm_per_volt", "offset_nm", "rows": [{"volts", "thickness_nm", "Lab", "hex",
    "luminous_R"}]}; with --hex/--lab {"metal", "nm_per_volt", "offset_nm", "solutions": [{"volts",
    "thickness_nm", "delta_E00"}]} (with a few more keys each, e.g. low_volts, high_volts, order).
    """
    import numpy as np

    from filmoptic.colorimetry import check_illuminant, check_observer
    from filmoptic.colouring.anodize import (
        ANODIZING_CAUTION,
        GROWTH_LAWS,
        anodize_colours,
        growth_law,
        split_metal,
        voltages_for_colour,
    )
    from filmoptic.errors import FilmopticError, TargetError
    from filmoptic.units import parse_volts, parse_volts_range, inclusive_grid

    with user_errors():
        if chart_path:
            check_plot_path(chart_path)
        mode = pick_mode(at_text, hex_, lab)
        law = growth_law(metal, nm_per_volt, offset_nm)
        key, _ = split_metal(metal, known_only=False)
        if key not in GROWTH_LAWS and not oxide:
            raise FilmopticError(f"{key} has no default oxide: name it with --oxide (e.g. --oxide WO3:MYDATA)")
        obs = check_observer(observer)
        label = check_illuminant(illuminant)
        inverse = mode in ("--hex", "--lab")
        span = parse_volts_range(volts_text or DEFAULT_VOLTS, "--volts", need_step=not inverse)
        if inverse and obs != 2:
            raise FilmopticError("--hex/--lab matching uses the 2° observer: leave out --observer 10")
        options = dict(law=law, oxide=oxide, illuminant=illuminant)
        chart = None
        if chart_path or mode is None:
            if len(span) < 3:
                raise FilmopticError("--chart needs --volts START:STOP:STEP")
            chart = anodize_colours(metal, inclusive_grid(*span), observer=obs, angle_deg=angle, **options)
        if mode == "--at":
            at = anodize_colours(metal, [parse_volts(at_text, "--at")], observer=obs, angle_deg=angle, **options)
        if inverse:
            from filmoptic.inverse.solve import lab_from_hex, parse_lab

            target = lab_from_hex(hex_, illuminant) if hex_ else parse_lab(lab)
            matches, closest = voltages_for_colour(metal, target, volts_range=span[:2], tolerance=max_delta_e,
                                                   angle_deg=angle, **options)
            if not matches:
                wanted = hex_ or f"L*a*b* {lab}"
                near = (f"; closest: ΔE00 {closest.delta_E00:.1f} at {closest.volts:.1f} V ({closest.hex})"
                        if closest else "")
                raise TargetError(f"no voltage in {span[0]:g}–{span[1]:g} V gives {wanted} on {key} within "
                                  f"ΔE00 {max_delta_e:g}{near}; widen --volts or raise --max-delta-e")

    if chart_path:
        from filmoptic.plots.tiles import tile_sheet

        film = chart.film
        fig = tile_sheet(
            film.colours, [f"{v:g} V" for v in chart.volts], [f"{d:.0f} nm" for d in film.thickness_nm],
            title=f"Anodised {key}: colour by voltage",
            subtitle=f"{law.formula()} · seen in reflection · illuminant {label}, {obs}° observer, "
                     f"{angle:g}° incidence",
            notes=[f"Law: {law.source}.", chart.oxide_note[0].upper() + chart.oxide_note[1:] +
                   f"; metal data: {film.stack_text.split(' / ')[-1]}.",
                   "Baths differ: check the voltages on an offcut before a run."],
            paper=paper,
        )
        with user_errors():
            save_plot(fig, chart_path)

    head = {"metal": key, "nm_per_volt": law.nm_per_volt, "offset_nm": law.offset_nm, "law_source": law.source}
    if inverse:
        if as_json:
            emit_json({**head, "target_Lab": list(target), "max_delta_E00": max_delta_e,
                       "volts_range": list(span[:2]),
                       "solutions": [{"volts": m.volts, "thickness_nm": m.thickness_nm, "delta_E00": m.delta_E00,
                                      "low_volts": m.low_volts, "high_volts": m.high_volts, "order": m.order,
                                      "Lab": list(m.Lab), "hex": m.hex} for m in matches]})
        else:
            wanted = hex_ or "L*a*b* " + ",".join(f"{v:g}" for v in target)
            title = (f"Voltages that give {wanted} on anodised {key} ({law.formula()}), ΔE00 ≤ {max_delta_e:g}, "
                     f"{span[0]:g}–{span[1]:g} V, illuminant {label}")
            rows = [[m.order, f"{m.volts:.1f}", f"{m.low_volts:.1f}", f"{m.high_volts:.1f}", f"{m.thickness_nm:.1f}",
                     f"{m.delta_E00:.2f}", *lab_cells(m.Lab), m.hex] for m in matches]
            print_table(["order", "V", "low V", "high V", "nm", "ΔE00", "L*", "a*", "b*", "sRGB"], rows, title=title)
            if len(matches) > 1:
                click.echo("The colour comes round again at higher voltage (interference orders): every one is listed.")
    else:
        shown = at if mode == "--at" else chart
        if as_json:
            emit_json({**head, "stack": shown.film.stack_text, "illuminant": label, "observer": obs,
                       "angle_deg": angle, "rows": _rows_json(shown)})
        else:
            film = shown.film
            rows = [[f"{v:g}", f"{d:.1f}", *lab_cells(film.colours.Lab[i]),
                     str(film.colours.hex[i]) + ("" if film.colours.in_gamut[i] else " *"), percent(film.luminous_R[i], 1)]
                    for i, (v, d) in enumerate(zip(shown.volts, film.thickness_nm))]
            title = (f"Anodised {key}: {law.formula()}; seen in reflection, illuminant {label}, {obs}° observer, "
                     f"{angle:g}° incidence")
            print_table(["V", "nm", "L*", "a*", "b*", "sRGB", "R lum %"], rows, title=title)
            if not np.all(film.colours.in_gamut):
                click.echo(OUT_OF_GAMUT_NOTE)
            click.echo(f"Law: {law.source}. {shown.oxide_note[0].upper() + shown.oxide_note[1:]}.")
    if chart_path and not as_json:
        click.echo(f"Chart written to {chart_path}")
    echo_caution(ANODIZING_CAUTION)
