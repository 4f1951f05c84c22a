"""``filmoptic heat-tint``: temper colours of steel, heat tint of stainless steel and copper."""

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
from filmoptic.cli.anodize import lab_cells, pick_mode
from filmoptic.cli.color import OUT_OF_GAMUT_NOTE, illuminant_option, observer_option

__all__ = ["heat_tint", "HEAT_CAUTION"]

DEFAULT_RANGE = "0:150:5"
HEAT_CAUTION = (
    "heat tinting means hot metal, flames or furnaces and, on coated or galvanised parts, toxic "
    "fumes: work in ventilation, keep flammables away, let parts cool before handling, and follow "
    "local fire and workplace codes."
)
NO_TEMPERATURE = ("Only thickness is computed: the temperature and time that grow it depend on the "
                  "alloy, the atmosphere and the heating, and filmoptic does not estimate them.")


@click.command("heat-tint")
@click.argument("model_name", metavar="MODEL")
@click.option("--range", "range_text", metavar="START:STOP:STEP",
              help=f"Oxide thicknesses in nm (default {DEFAULT_RANGE}); with --hex/--lab the span "
                   "searched (START:STOP is enough).")
@click.option("--at", "at_text", metavar="THICKNESS", help="The colour at one oxide thickness, e.g. 45nm.")
@click.option("--hex", "hex_", metavar="#RRGGBB", help="A colour seen (sRGB): the oxide thickness ranges that give it.")
@click.option("--lab", metavar="L,a,b", help="The same as --hex from CIELAB L*, a*, b* (under --illuminant).")
@click.option("--max-delta-e", type=FiniteFloatRange(min=0, min_open=True), default=5.0, show_default=True,
              metavar="DE", help="With --hex/--lab: largest ΔE00 (CIEDE2000) that still counts as the colour.")
@click.option("--oxide", metavar="MATERIAL", help="Replace the model's oxide data (as written in a stack).")
@click.option("--metal", metavar="MATERIAL", help="Replace the model's metal data (as written in a stack).")
@illuminant_option
@observer_option
@angle_option
@click.option("--chart", "chart_path", metavar="FILE",
              help="Write a printable sheet of colour tiles (one A4 or --paper letter page) for the --range "
                   "thicknesses: .png, .svg or .pdf.")
@paper_option
@json_option
def heat_tint(model_name, range_text, at_text, hex_, lab, max_delta_e, oxide, metal, illuminant, observer, angle,
              chart_path, paper, as_json):
    """Temper colours of steel and heat tint of stainless steel and copper, against oxide thickness.

    MODEL is steel (temper colours), stainless-steel (also: stainless) or copper. Each model is one
    oxide layer on the metal, seen in reflection, and states what it leaves out:

    \b
      steel            magnetite Fe3O4 on iron (the thin outer hematite is left out)
      stainless-steel  hematite Fe2O3 on austenitic stainless steel, standing in for the
                       chromium-rich oxide (no open Cr2O3 data were found)
      copper           Cu2O on copper; no citable visible-range Cu2O data exist in the open
                       data sets, so give your own table with --oxide file:PATH

    A thickness gives a colour; a colour (--hex or --lab) gives every thickness range that shows
    it within --max-delta-e, one per interference order, because the same hue comes round again
    as the oxide thickens. Only thickness is computed, never a temperature: the temperature and
    time that grow a given oxide depend on alloy, atmosphere and heating.

    \b
    Examples:
      filmoptic heat-tint steel
      filmoptic heat-tint steel --at 45nm
      filmoptic heat-tint stainless --hex "#6a4a8c" --json
      filmoptic heat-tint copper --oxide file:my_cu2o.txt --chart copper.pdf

    \b
    --json: {"model", "metal", "oxide", "statement", "rows": [{"thickness_nm", "Lab", "hex",
    "luminous_R"}]}; with --hex/--lab {"model", …, "solutions": [{"thickness_nm", "low_nm",
    "high_nm", "delta_E00", "order", "Lab", "hex"}]}.
    """
    import numpy as np

    from filmoptic.colorimetry import check_illuminant, check_observer
    from filmoptic.colouring.heat_tint import heat_tint_colours, heat_tint_model, thickness_for_colour
    from filmoptic.errors import FilmopticError, TargetError
    from filmoptic.units import inclusive_grid, parse_length_nm, parse_range_nm

    with user_errors():
        if chart_path:
            check_plot_path(chart_path)
        mode = pick_mode(at_text, hex_, lab)
        inverse = mode in ("--hex", "--lab")
        obs = check_observer(observer)
        label = check_illuminant(illuminant)
        if inverse and obs != 2:
            raise FilmopticError("--hex/--lab matching uses the 2° observer: leave out --observer 10")
        span = parse_range_nm(range_text or DEFAULT_RANGE, "--range", need_step=not inverse)
        model = heat_tint_model(model_name, oxide=oxide, metal=metal)
        options = dict(illuminant=illuminant, angle_deg=angle)
        grid = None
        if chart_path or mode is None:
            if len(span) < 3:
                raise FilmopticError("--chart needs --range START:STOP:STEP")
            grid = heat_tint_colours(model, inclusive_grid(*span, "--range"),
                                     observer=obs, **options)
        if mode == "--at":
            one = heat_tint_colours(model, [parse_length_nm(at_text, "--at")], observer=obs, **options)
        if inverse:
            from filmoptic.inverse.solve import lab_from_hex, parse_lab

            target = lab_from_hex(hex_, illuminant) if hex_ else parse_lab(lab)
            found = thickness_for_colour(model, target, range_nm=span[:2], tolerance=max_delta_e, **options)
            if not found.matches:
                wanted = hex_ or f"L*a*b* {lab}"
                c = found.closest
                near = f"; closest: ΔE00 {c.delta_E00:.1f} at {c.thickness_nm:.1f} nm ({c.hex})" if c else ""
                raise TargetError(f"no oxide thickness in {span[0]:g}–{span[1]:g} nm gives {wanted} on the "
                                  f"{model.key} model within ΔE00 {max_delta_e:g}{near}; widen --range or raise "
                                  "--max-delta-e")

    if chart_path:
        from filmoptic.plots.tiles import tile_sheet

        fig = tile_sheet(grid.colours, [f"{d:g} nm" for d in grid.thickness_nm],
                         [f"R {100 * r:.0f} %" for r in grid.luminous_R],
                         title=f"{model.title[0].upper() + model.title[1:]}: colour by oxide thickness",
                         subtitle=f"{grid.stack_text} · seen in reflection · illuminant {label}, {obs}° observer, "
                                  f"{angle:g}° incidence",
                         notes=[f"Model: {model.statement}.", NO_TEMPERATURE], paper=paper)
        with user_errors():
            save_plot(fig, chart_path)

    head = {"model": model.key, "metal": model.metal, "oxide": model.oxide, "statement": model.statement}
    if inverse:
        if as_json:
            emit_json({**head, "target_Lab": list(target), "max_delta_E00": max_delta_e,
                       "range_nm": list(span[:2]),
                       "solutions": [{"thickness_nm": m.thickness_nm, "low_nm": m.low_nm, "high_nm": m.high_nm,
                                      "delta_E00": m.delta_E00, "order": m.order, "Lab": list(m.Lab), "hex": m.hex}
                                     for m in found.matches]})
        else:
            wanted = hex_ or "L*a*b* " + ",".join(f"{v:g}" for v in target)
            rows = [[m.order, f"{m.thickness_nm:.1f}", f"{m.low_nm:.1f}–{m.high_nm:.1f}", f"{m.delta_E00:.2f}",
                     *lab_cells(m.Lab), m.hex] for m in found.matches]
            print_table(["order", "nm", "range nm", "ΔE00", "L*", "a*", "b*", "sRGB"], rows,
                        title=f"Oxide thicknesses that show {wanted} ({model.title}), ΔE00 ≤ {max_delta_e:g}, "
                              f"illuminant {label}")
            if len(found.matches) > 1:
                click.echo(f"{len(found.matches)} orders show this colour: the colour alone cannot tell them "
                           "apart; the order of colours seen while heating can.")
            click.echo(f"Model: {model.statement}.")
            click.echo(NO_TEMPERATURE)
    else:
        shown = one if mode == "--at" else grid
        if as_json:
            emit_json({**head, "stack": shown.stack_text, "illuminant": label, "observer": obs, "angle_deg": angle,
                       "rows": [{"thickness_nm": float(d), "Lab": [float(x) for x in shown.colours.Lab[i]],
                                 "hex": str(shown.colours.hex[i]), "in_gamut": bool(shown.colours.in_gamut[i]),
                                 "luminous_R": float(shown.luminous_R[i])}
                                for i, d in enumerate(shown.thickness_nm)]})
        else:
            c = shown.colours
            rows = [[f"{d:g}", *lab_cells(c.Lab[i]), str(c.hex[i]) + ("" if c.in_gamut[i] else " *"),
                     percent(shown.luminous_R[i], 1)] for i, d in enumerate(shown.thickness_nm)]
            print_table(["nm", "L*", "a*", "b*", "sRGB", "R lum %"], rows,
                        title=f"{model.title[0].upper() + model.title[1:]} ({shown.stack_text}), seen in reflection, "
                              f"illuminant {label}, {obs}° observer, {angle:g}° incidence")
            if not np.all(c.in_gamut):
                click.echo(OUT_OF_GAMUT_NOTE)
            click.echo(f"Model: {model.statement}.")
            click.echo(NO_TEMPERATURE)
    if chart_path and not as_json:
        click.echo(f"Chart written to {chart_path}")
    echo_caution(HEAT_CAUTION)
