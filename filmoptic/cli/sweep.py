"""``filmoptic sweep``: colour and luminous values over a range of one layer's thickness."""

from __future__ import annotations

import math

import click

from filmoptic.cli._common import (
    FiniteFloatRange,
    ambient_option,
    angle_option,
    check_output_path,
    check_plot_path,
    emit_json,
    extrapolate_option,
    json_option,
    paper_option,
    percent,
    print_table,
    progress,
    save_plot,
    user_errors,
    transmission_note,
    write_atomically,
)
from filmoptic.cli.anodize import law_from_options, law_options, volts_from_option
from filmoptic.cli.color import (
    OUT_OF_GAMUT_NOTE,
    caution_if_dark,
    illuminant_option,
    observer_option,
)

__all__ = ["sweep"]

# Above this many thicknesses the sweep runs in blocks with a progress bar (on a terminal).
_PROGRESS_FROM = 20_000
# A layer's own LOW..HIGH is swept in 1 nm steps, coarser (1-2-5) for wide ranges so that the
# table stays readable: at most about this many steps.
_DEFAULT_STEPS = 1000


def _default_step(span_nm: float) -> float:
    """1 nm, or the smallest 1-2-5 step giving at most ``_DEFAULT_STEPS`` steps over the span."""
    import math

    if span_nm <= _DEFAULT_STEPS:
        return 1.0
    decade = 10.0 ** math.floor(math.log10(span_nm / _DEFAULT_STEPS))
    return next(m * decade for m in (1, 2, 5, 10) if m * decade * _DEFAULT_STEPS >= span_nm)


def _thicknesses(range_text, bounds, name):
    """The swept thicknesses: --range, the layer's own LOW..HIGH, or an error naming the conflict."""
    import numpy as np

    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_range_nm

    if range_text is None:
        if bounds is None:
            raise FilmopticError(
                "--range START:STOP:STEP is needed for a layer written '?' (e.g. --range 0:250:1), "
                "or write its range in the stack (e.g. 'TiO2 0..250nm / Ti')"
            )
        start, stop = bounds
        step = _default_step(stop - start)
    else:
        start, stop, step = parse_range_nm(range_text, what="--range", need_step=True)
        if bounds is not None:
            low, high = bounds
            tol = 1e-9 * max(1.0, high)
            if start < low - tol or stop > high + tol:
                raise FilmopticError(
                    f"--range {range_text} reaches outside {low:g}..{high:g} nm, written in the "
                    f"stack for {name}; leave out --range to sweep {low:g}–{high:g} nm, or make "
                    "the two agree"
                )
    count = int(np.floor((stop - start) / step + 1e-9)) + 1
    thickness = start + step * np.arange(count)
    if thickness[-1] < stop - 1e-9 * max(1.0, stop) and range_text is None:
        thickness = np.append(thickness, stop)    # the layer's own range: both ends included
    return thickness


# The printed table keeps to about this many rows by default; --csv and --json hold every one.
_TABLE_ROWS = 100
# Printed steps tried in turn (in the sweep's unit, nm or V): every 5, 10, 20, 50 … of them.
_TABLE_STEPS = (5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0, 2000.0, 5000.0)


def table_rows(axis, table_step=None):
    """Indices of the rows the table prints: every row of a short sweep; otherwise the rows on a
    coarser printed step (5, 10, 20 … in the axis unit, the first giving at most about
    ``_TABLE_ROWS`` rows), or on ``table_step``; the last row always.

    Examples
    --------
    >>> import numpy as np
    >>> rows, step = table_rows(np.arange(0.0, 251.0))
    >>> len(rows), step, rows[:3].tolist()
    (51, 5.0, [0, 5, 10])
    """
    import numpy as np

    from filmoptic.errors import FilmopticError

    if table_step is not None and not (math.isfinite(table_step) and table_step > 0):
        raise FilmopticError(f"--table-step must be a positive number, got {table_step!r}")
    axis = np.asarray(axis, dtype=float)
    n = axis.size
    grid = float(axis[1] - axis[0]) if n > 1 else 0.0
    if n < 2 or grid <= 0:
        return np.arange(n), grid
    if table_step is None:
        if n <= _TABLE_ROWS:
            return np.arange(n), grid
        span = float(axis[-1] - axis[0])
        table_step = next((t for t in _TABLE_STEPS if t >= grid and span / t <= _TABLE_ROWS), None)
        if table_step is None:
            table_step = grid * math.ceil(n / _TABLE_ROWS)
    every = max(1, int(round(table_step / grid)))
    rows = np.arange(0, n, every)
    if rows[-1] != n - 1:
        rows = np.append(rows, n - 1)
    return rows, every * grid


def _write_sweep_csv(fh, result, volts) -> None:
    """Every row of the sweep: thickness (and volts), colours, luminous values as fractions."""
    import csv

    writer = csv.writer(fh, lineterminator="\n")
    head = ["volts"] if volts is not None else []
    writer.writerow(head + ["thickness_nm", "reflected_L", "reflected_a", "reflected_b", "reflected_hex",
                            "reflected_in_gamut", "transmitted_L", "transmitted_a", "transmitted_b",
                            "transmitted_hex", "transmitted_in_gamut", "luminous_T", "luminous_R",
                            "luminous_A_layers", "luminous_A_substrate"])
    for i, d in enumerate(result.thickness_nm):
        r = result.reflected[i]
        row = [f"{volts[i]:.10g}"] if volts is not None else []
        row += [f"{d:.10g}", *(f"{float(v):.6f}" for v in r.Lab), r.hex, bool(r.in_gamut)]
        if result.transmitted is None:
            row += [""] * 5          # an opaque part: no light comes through, so no colour
        else:
            t = result.transmitted[i]
            row += [*(f"{float(v):.6f}" for v in t.Lab), t.hex, bool(t.in_gamut)]
        row += [f"{float(result.luminous_T[i]):.10g}", f"{float(result.luminous_R[i]):.10g}",
                f"{float(result.luminous_A_layers[i]):.10g}", f"{float(result.luminous_A_substrate[i]):.10g}"]
        writer.writerow(row)


def _lab_text(lab) -> list[str]:
    L, a, b = (float(v) for v in lab)
    return [f"{L:.1f}", f"{a:+.1f}", f"{b:+.1f}"]


@click.command()
@click.argument("stack")
@click.option(
    "--range", "range_text", metavar="START:STOP:STEP",
    help="Thicknesses of the unknown layer in nm, e.g. 0:250:1 (both ends included). Needed for "
         "a layer written '?'; a layer written LOW..HIGH sweeps that range without it.",
)
@click.option(
    "--volts", "volts_text", metavar="START:STOP:STEP",
    help="Sweep anodising voltages instead of thicknesses (with --anodize METAL or --nm-per-volt): "
         "each voltage becomes a thickness through the growth law.",
)
@law_options
@illuminant_option
@observer_option
@angle_option
@ambient_option
@click.option(
    "--chart", "chart_path", metavar="FILE",
    help="Write a printable colour ladder (one page, A4 or --paper letter): .png, .svg or .pdf.",
)
@click.option(
    "--tolerance", "tolerance_text", default="5%", show_default=True, metavar="PCT|LENGTH",
    help="How far a run may come out thin or thick, for the ladder's side chips: a percentage "
         "of the thickness (5%) or a length (2nm).",
)
@paper_option
@click.option(
    "--ab-plot", "ab_path", metavar="FILE",
    help="Also draw the film-side colour's path in the CIELAB a*b* plane, labelled at the "
         "ladder's rungs: .png, .svg or .pdf.",
)
@click.option(
    "--csv", "csv_path", metavar="FILE",
    help="Write every row of the sweep to FILE (the full grid; the printed table may show a coarser step): "
         "thickness_nm, reflected and transmitted L, a, b, hex and in_gamut, luminous_T and luminous_R as fractions.",
)
@click.option(
    "--table-step", "table_step", type=FiniteFloatRange(min=0, min_open=True), metavar="STEP",
    help="Print every STEP nm (or volts with --volts) of the sweep in the table. Default: every row of a "
         "short sweep (up to 100 rows), else every 5 (10, 20 …) nm, the first giving at most about 100 rows.",
)
@extrapolate_option
@json_option
def sweep(stack, range_text, volts_text, law_metal, nm_per_volt, offset_nm, illuminant, observer, angle, ambient,
          chart_path, tolerance_text, paper, ab_path, csv_path, table_step, extrapolate, as_json):
    """Colour and luminous values of STACK over a range of one layer's thickness.

    STACK has exactly one unknown, the thickness of the layer to vary, written '?' (then
    --range says which thicknesses) or LOW..HIGH (then that range is swept in 1 nm steps, or
    in coarser 1-2-5 steps beyond 1000 nm; a --range must lie inside it):

    \b
        filmoptic sweep "TiO2 ? / Ti" --range 0:250:1 --chart ti-oxide.pdf
        filmoptic sweep "SiO2 ? / Si" --range 0:600:5 --observer 10
        filmoptic sweep "TiO2 10..50nm / Ti"
        filmoptic sweep "TiO2 ? / Ti" --anodize Ti --volts 0:100:1 --chart ti-volts.pdf

    For an anodised layer, --volts START:STOP:STEP with --anodize METAL (Ti, Nb, Ta, Al, Zr; or
    your own --nm-per-volt and --offset-nm) sweeps the anodising voltage: each voltage becomes a
    thickness through thickness = nm-per-volt × volts + offset, the table and --json gain the
    volts, and the chart's axis reads in volts. --anodize alone adds the volts to a thickness
    sweep.

    For every thickness the command reports the colour reflected from the coated side and the
    transmitted colour (CIELAB L*, a*, b* and the sRGB colour a screen would show; '*' marks a
    colour outside the sRGB gamut, shown with reduced chroma at the same lightness and hue), and
    the luminous transmittance and reflectance (ISO 9050 weighting with the chosen illuminant).
    The whole range is computed in one vectorised pass.

    --chart draws a colour ladder to pin beside the chamber: the thickness runs down the page,
    with a rung at each round thickness (or voltage) a shop can aim for. Each rung shows the
    film-side colour at the aim between chips of the run --tolerance thin and thick, the part on a
    light box when light comes through it, the colour's plain name, its interference order and
    how far the thin and thick chips are from the aim (ΔE00). Beside the rungs, on the same
    ruler: lightness L*, hue angle and the luminous values. --ab-plot draws the film-side colour's
    path in the CIELAB a*b* plane instead of (or as well as) the ladder. Printed and on-screen
    colours depend on the device; judge against real samples.

    The light absorbed is split between the layers and the substrate (inside a glass plate, or
    everything entering a metal or silicon half-space). When the substrate is an absorbing
    half-space no light comes through: there is no transmitted colour and T is 0.

    The printed table keeps to about 100 rows: a longer sweep is printed every 5 nm (10, 20 …
    for wider ranges; --table-step says otherwise) and says so; --csv FILE and --json hold every
    computed thickness.

    With --json: thickness_nm (and volts with a growth law), luminous_T, luminous_R,
    luminous_A_layers, luminous_A_substrate (fractions), reflected_Lab, reflected_hex,
    reflected_in_gamut, transmitted_Lab, transmitted_hex, transmitted_in_gamut (null when no light
    comes through), one entry per thickness, and transmission (what T means: exits, enters
    substrate or opaque).
    """
    import numpy as np

    from filmoptic.colorimetry import check_illuminant, check_observer, colour_sweep, sweep_bounds_nm
    from filmoptic.stack import parse_stack
    from filmoptic.units import parse_range_nm

    from filmoptic.describe.ladder import colour_ladder, parse_tolerance

    with user_errors():
        for path in (chart_path, ab_path):
            if path:
                check_plot_path(path)
        if csv_path:
            check_output_path(csv_path, "--csv file")
        tolerance, tolerance_nm = parse_tolerance(tolerance_text)
        if range_text is not None:
            parse_range_nm(range_text, what="--range", need_step=True)   # before the stack's errors
        obs = check_observer(observer)
        label = check_illuminant(illuminant)
        parsed = parse_stack(stack, ambient=ambient)
        bounds = sweep_bounds_nm(parsed)
        law = law_from_options(law_metal, nm_per_volt, offset_nm)
        volts = volts_from_option(volts_text, range_text, law, need_step=True)
        if volts is not None:
            thickness = law.thickness_nm(volts)
        else:
            thickness = _thicknesses(range_text, bounds, parsed.parameters[parsed.thickness_parameters[0]].name)
            if law is not None:
                volts = law.volts(thickness)
        options = dict(illuminant=illuminant, observer=obs, angle_deg=angle, extrapolate=extrapolate)
        drawing = bool(chart_path or ab_path)
        if drawing:
            # The ladder computes the sweep itself, with its rungs, in the same pass.
            options.update(tolerance=tolerance, tolerance_nm=tolerance_nm, law=law if volts_text else None)
        compute = colour_ladder if drawing else colour_sweep
        if thickness.size > _PROGRESS_FROM:
            with progress(thickness.size, "sweeping") as advance:
                computed = compute(parsed, thickness, progress=advance, **options)
        else:
            computed = compute(parsed, thickness, **options)
        result = computed.sweep if drawing else computed

    if drawing:
        # Written before anything is printed, so that a failure leaves no half report on stdout.
        from filmoptic.plots.chart import ab_chart, ladder_chart

        with user_errors():
            if chart_path:
                title = None if not volts_text else f"Colour ladder by anodising voltage: {result.stack_text}"
                save_plot(ladder_chart(computed, title=title, paper=paper), chart_path)
            if ab_path:
                save_plot(ab_chart(computed), ab_path)

    if csv_path:
        with user_errors():
            write_atomically(csv_path, lambda fh: _write_sweep_csv(fh, result, volts))

    if as_json:
        seen = result.transmitted
        emit_json({
            **({} if volts is None else {"volts": volts, "nm_per_volt": law.nm_per_volt,
                                         "offset_nm": law.offset_nm}),
            "thickness_nm": result.thickness_nm,
            "luminous_T": result.luminous_T,
            "luminous_R": result.luminous_R,
            "luminous_A_layers": result.luminous_A_layers,
            "luminous_A_substrate": result.luminous_A_substrate,
            "reflected_Lab": result.reflected.Lab,
            "reflected_hex": result.reflected.hex,
            "reflected_in_gamut": result.reflected.in_gamut,
            "transmitted_Lab": None if seen is None else seen.Lab,
            "transmitted_hex": None if seen is None else seen.hex,
            "transmitted_in_gamut": None if seen is None else seen.in_gamut,
            "transmission": result.transmission,
        })
    else:
        axis = result.thickness_nm if volts is None else volts
        shown, printed_step = table_rows(axis, table_step)
        rows = []
        seen = result.transmitted is not None
        for i in shown:
            d = result.thickness_nm[i]
            r = result.reflected[i]
            row = ([] if volts is None else [f"{volts[i]:.4g}"]) + [f"{d:g}"] + _lab_text(r.Lab) + [r.hex + ("" if r.in_gamut else " *")]
            if seen:
                t = result.transmitted[i]
                row += _lab_text(t.Lab) + [t.hex + ("" if t.in_gamut else " *")]
            row += [percent(result.luminous_T[i]), percent(result.luminous_R[i]),
                    percent(result.luminous_A_layers[i]), percent(result.luminous_A_substrate[i])]
            rows.append(row)
        title = (f"Colour of {stack!r} versus thickness — illuminant {label}, {obs}° observer, "
                 f"{angle:g}° incidence, ambient {ambient}")
        headers = (([] if volts is None else ["V"]) + ["nm", "R L*", "R a*", "R b*", "R sRGB"]
                   + (["T L*", "T a*", "T b*", "T sRGB"] if seen else [])
                   + ["T lum %", "R lum %", "A layers %", "A substrate %"])
        print_table(headers, rows, title=title)
        if len(shown) < len(axis):
            unit = "nm" if volts is None else "V"
            grid_step = float(axis[1] - axis[0])
            click.echo(f"Every {printed_step:g} {unit} of the {grid_step:g} {unit} grid is shown ({len(shown)} of "
                       f"{len(axis)} rows); --csv FILE or --json has every row, --table-step {grid_step:g} prints them.")
        note = transmission_note(result.transmission)
        if note:
            click.echo(note)
        if not (np.all(result.reflected.in_gamut[shown]) and (not seen or np.all(result.transmitted.in_gamut[shown]))):
            click.echo(OUT_OF_GAMUT_NOTE)

    if chart_path and not as_json:
        click.echo(f"Chart written to {chart_path}")
    if csv_path and not as_json:
        click.echo(f"Table written to {csv_path} (every row)")
    if ab_path and not as_json:
        click.echo(f"a*b* plot written to {ab_path}")
    if result.transmission_exits:
        caution_if_dark(result.luminous_T)
