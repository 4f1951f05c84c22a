"""``filmoptic design``: layers that meet a set of goals, and the yield of a design."""

from __future__ import annotations

import click

from filmoptic.cli._common import (
    ambient_option,
    check_plot_path,
    echo_caution,
    emit_json,
    extrapolate_option,
    json_option,
    late_progress,
    percent,
    print_table,
    save_plot,
    user_errors,
)
# A design that passes less light than this gets the eye caution (the same rule as `solve`).
from filmoptic.cli.solve import EYE_CAUTION, EYE_CAUTION_BELOW


class LengthNmType(click.ParamType):
    """A length in nm: ``10``, ``10nm``, ``1.2um``."""

    name = "LENGTH"

    def convert(self, value, param, ctx):
        if isinstance(value, float):
            return value
        from filmoptic.errors import FilmopticError
        from filmoptic.units import parse_length_nm, parse_number

        what = f"--{param.name.replace('_', '-')}" if param else "length"
        text = str(value).strip()
        try:
            try:
                return parse_number(text, what)
            except FilmopticError:
                return parse_length_nm(text, what)
        except FilmopticError as exc:
            raise click.UsageError(str(exc)) from None


def _goal_cells(result):
    goal = result.goal
    if goal.kind == "colour":
        lab = "" if result.lab is None else " (L*a*b* {:.1f}, {:.1f}, {:.1f})".format(*result.lab)
        achieved = f"ΔE00 {result.achieved:.2f}{lab}"
    else:
        achieved = f"{percent(result.achieved, 3)} %"
    return [goal.text, achieved, goal.describe_target(), "yes" if result.met else "NO"]


def _print_design(result, check_only: bool) -> None:
    verdict = "every goal met" if result.all_met else \
        f"{sum(not g.met for g in result.goals)} of {len(result.goals)} goals not met"
    title = "Checked stack" if check_only else "Design"
    click.echo(f"{title} ({verdict}; merit {result.merit:.4g})")
    click.echo(f"  {result.stack}")
    if result.ambient != "air":
        click.echo(f"  light from: {result.ambient} (give --ambient {result.ambient} to other commands)")
    click.echo("")
    rows = []
    for number, layer in enumerate(result.layers, start=1):
        qw = "–" if layer.quarter_waves is None else f"{layer.quarter_waves:.3f}"
        rows.append([number, layer.material, f"{layer.thickness_nm:.3f}", qw,
                     "fixed" if layer.fixed else "designed"])
    if rows:
        total = sum(layer.thickness_nm for layer in result.layers if not layer.thick)
        print_table(["#", "material", "thickness (nm)", f"quarter waves at {result.reference_nm:g} nm", "role"],
                    rows)
        click.echo(f"total thickness of the thin layers: {total:.1f} nm")
    else:
        click.echo("(no coating layers)")
    click.echo("")
    print_table(["goal", "achieved", "target", "met"], [_goal_cells(g) for g in result.goals])
    for note in result.notes:
        click.echo(f"note: {note}")


def _print_tolerance(t) -> None:
    click.echo("")
    if t.distribution == "normal":
        errors = f"each layer off by {t.random} (standard deviation)"
    else:
        errors = f"each layer within ±{t.random}, spread evenly"
    if t.systematic:
        errors += f", plus {t.systematic} shared by the layers of each material"
    click.echo(f"Yield over {t.samples} simulated runs ({errors}; seed {t.seed}): "
               f"{percent(t.yield_fraction, 1)} % ± {percent(t.yield_stderr, 1)} %")
    rows = []
    for g in t.goals:
        if g.goal.kind == "colour":
            cells = [f"{v:.2f}" for v in (g.p5, g.p50, g.p95)]
        else:
            cells = [f"{percent(v, 3)} %" for v in (g.p5, g.p50, g.p95)]
        rows.append([g.goal.text, *cells, f"{percent(g.met_share, 1)} %"])
    print_table(["goal", "5 %", "median", "95 %", "runs meeting it"], rows)
    click.echo("")
    rows = [[s.layer, s.material, f"{s.thickness_nm:.3f}", f"{s.sigma_nm:.3f}", f"{s.effect:.4g}"]
            for s in t.layers]
    print_table(["layer", "material", "thickness (nm)", "error σ (nm)", "goals move by (pp / ΔE00)"], rows)
    if t.critical_layer is not None:
        critical = next(s for s in t.layers if s.layer == t.critical_layer)
        click.echo(f"critical layer: {critical.layer} ({critical.material} {critical.thickness_nm:.3f} nm) — "
                   "hold it tightest")


def _json_payload(result, tolerance) -> dict:
    goals = []
    for g in result.goals:
        item = {"goal": g.goal.text, "achieved": g.achieved, "met": g.met}
        if g.lab is not None:
            item["lab"] = list(g.lab)
        goals.append(item)
    payload = {
        "stack": result.stack,
        "layers": [{"material": layer.material, "thickness_nm": layer.thickness_nm,
                    "quarter_waves": layer.quarter_waves, "designed": not layer.fixed}
                   for layer in result.layers],
        "goals": goals,
        "merit": result.merit,
        "tolerance": None,
        "reference_nm": result.reference_nm,
        "ambient": result.ambient,
        "seed": result.seed,
        "interrupted": result.interrupted,
        "notes": list(result.notes),
    }
    if tolerance is not None:
        payload["tolerance"] = {
            "samples": tolerance.samples,
            "yield": tolerance.yield_fraction,
            "critical_layer": tolerance.critical_layer,
            "yield_stderr": tolerance.yield_stderr,
            "random": tolerance.random,
            "systematic": tolerance.systematic,
            "distribution": tolerance.distribution,
            "seed": tolerance.seed,
            "goals": [{"goal": g.goal.text, "p5": g.p5, "p50": g.p50, "p95": g.p95, "met_share": g.met_share}
                      for g in tolerance.goals],
            "layers": [{"layer": s.layer, "material": s.material, "thickness_nm": s.thickness_nm,
                        "sigma_nm": s.sigma_nm, "effect": s.effect} for s in tolerance.layers],
        }
    return payload


def _needs_eye_caution(goals, result) -> bool:
    asked = any(g.kind == "luminous" and g.quantity == "T" and g.operator != ">=" and g.value < EYE_CAUTION_BELOW
                for g in goals)
    reached = any(g.goal.kind == "luminous" and g.goal.quantity == "T" and g.achieved < EYE_CAUTION_BELOW
                  for g in result.goals)
    return asked or reached


@click.command()
@click.argument("stack", required=False)
@click.option("--goal", "goal_texts", multiple=True, metavar="GOAL",
              help="A goal, e.g. 'mean R 420..680nm <= 0.5%' (repeatable; the forms are listed above).")
@click.option("--goals", "goals_file", type=click.Path(dir_okay=False), metavar="FILE",
              help="A text file of goals, one a line; '#' starts a comment.")
@click.option("--materials", metavar="LIST",
              help="Materials new layers may be made of, comma-separated (TiO2,SiO2). With --on the design "
                   "starts from nothing; with a STACK, the needle method may add layers of them to it.")
@click.option("--on", "on", metavar="STACK",
              help="What a design from nothing is coated onto: a substrate ('glass 2mm', 'Si') or fixed "
                   "layers on one ('Cr 5nm / glass 2mm').")
@click.option("--max-layers", type=click.IntRange(1, 200), metavar="N",
              help="Most layers in the design (default 10, or the STACK's own count).")
@click.option("--min-layer", type=LengthNmType(), default="10nm", show_default=True, metavar="LENGTH",
              help="Thinnest layer the design keeps among those it makes; thinner ones are removed and their "
                   "neighbours merged. 10 nm is about the thinnest dielectric layer a small coater deposits "
                   "reproducibly; a STACK's own '?' layers keep their ranges (0–100 nm for a metal).")
@click.option("--max-total", type=LengthNmType(), metavar="LENGTH",
              help="Largest total thickness of the thin layers (e.g. 1.5um).")
@click.option("--seed", type=click.IntRange(0, 2**32 - 1), default=0, show_default=True,
              help="Seed of the random search and of the simulated runs: the same seed gives the same result.")
@click.option("--tries", type=click.IntRange(0, 1_000_000), default=2000, show_default=True,
              help="Random designs scored in the global search.")
@click.option("--starts", type=click.IntRange(1, 100), default=8, show_default=True,
              help="How many of the best distinct random designs are refined.")
@click.option("--step", type=LengthNmType(), default="5nm", show_default=True, metavar="LENGTH",
              help="Wavelength step at which bands are sampled.")
@click.option("--reference", type=LengthNmType(), metavar="WL",
              help="Wavelength for the quarter-wave counts of the layer table (default: the middle of the "
                   "goals' wavelengths).")
@click.option("--illuminant", default="D65", show_default=True, metavar="NAME",
              help="Illuminant of luminous and colour goals that do not say 'under NAME'.")
@click.option("--check-only", is_flag=True,
              help="Do not design: report how STACK (no unknowns) meets the goals, and with --tolerance its yield.")
@click.option("--tolerance", "tolerance_text", metavar="ERROR",
              help="Simulate runs with each layer off by this error: '2%' of its thickness or '1nm' "
                   "(a standard deviation; with --uniform the half-width), and report the yield.")
@click.option("--systematic", metavar="ERROR",
              help="An error shared by every layer of one material in a run (a rate calibration error), "
                   "e.g. 1%; added to --tolerance.")
@click.option("--samples", type=click.IntRange(1, 200_000), default=1000, show_default=True,
              help="Simulated runs for the yield.")
@click.option("--uniform", is_flag=True,
              help="Spread errors evenly over ± the tolerance instead of normally.")
@click.option("--plot", "plot_path", metavar="FILE",
              help="Write the spectra against the goals (with --tolerance, the 5–95 % band of the runs) "
                   "and the layer profile (.png, .svg or .pdf).")
@ambient_option
@extrapolate_option
@json_option
def design(stack, goal_texts, goals_file, materials, on, max_layers, min_layer, max_total, seed, tries,
           starts, step, reference, illuminant, check_only, tolerance_text, systematic, samples, uniform,
           plot_path, ambient, extrapolate, as_json):
    """Find layers that meet a set of goals, and how many parts of a run will still meet them.

    Start from a STACK whose thicknesses to find are written '?' or LOW..HIGH (the other layers
    stay as written), or from nothing: --materials TiO2,SiO2 --on "glass 2mm". Goals come from
    --goal (repeatable) and --goals FILE:

    \b
      R 420..680nm <= 0.5%              R at every sampled wavelength of the band
      mean R 420..680nm <= 0.5%         the band's mean
      T 550nm = 50%                     met within 1 point; 'within 2%' to widen
      R 1064nm >= 99%                   also T and A (absorptance)
      luminous-T = 30%                  luminous values (ISO 9050, D65)
      luminous-R reverse <= 8%          'reverse': seen from the substrate side
      reflected Lab = 55,0,-25 within 2 a colour within a ΔE00 distance
      transmitted hex = #8a9a7b within 3
      mean R 420..680nm @0..40deg <= 1%  an angle range (sampled every 5° or finer)
      R 1064nm @45deg s >= 99%          a polarisation: s, p (default unpolarized)
      reflected Lab = 60,0,0 @0..30deg  colours and luminous values at angles too
      … weight 3                        counts three times in the merit
      … under A                         illuminant of a luminous or colour goal

    \b
    The design runs in stages:
      1. a global search: --tries random designs (from nothing: alternating layers of each
         pair of materials), scored in batches;
      2. a local refinement of the best --starts of them together (bounded least squares,
         Levenberg–Marquardt, one batched evaluation per step);
      3. with --materials, the needle method (Tikhonravov, Trubetskov and DeBell, 1996):
         new layers where they lower the merit fastest (where none helps, a quarter-wave
         layer on either face), while it helps and --max-layers allows;
      4. layers the design made that end thinner than --min-layer are removed, neighbours
         of one material merged, and the rest refined again (a STACK's own layers keep
         their ranges); --max-total bounds the total thickness throughout.

    The merit is the weighted RMS shortfall from the goals, in percentage points (ΔE00 for
    colours): 0 when every bound is met. The design is printed as a stack that every other
    command reads, with a table of layers (thickness and quarter waves at a reference
    wavelength) and each goal's achieved value. The same --seed gives the same design;
    Ctrl-C stops the search and prints the best design found so far.

    With --tolerance the design (or, with --check-only, the STACK as given) is made --samples
    times in simulation with random thickness errors (plus --systematic per material): the
    yield is the share of runs meeting every goal, each goal's spread is shown as percentiles,
    and each layer's sensitivity (how far the goals move for its error alone) names the critical
    layer.

    Examples:

    \b
        filmoptic design --materials TiO2,SiO2 --on glass --goal "mean R 420..680nm <= 0.5%"
        filmoptic design "SiO2 20..200nm / Cr ? / glass 4mm" --goal "luminous-T = 30%" \\
            --goal "reflected Lab = 62,0,0 within 3" --tolerance 3% --plot mirror.png
        filmoptic design "TiO2 60nm / Ti" --check-only --goal "reflected hex = #5c98c5 within 3" \\
            --tolerance 2nm --json

    A computed design is a model: confirm it with a test run and a measurement before you rely on
    it, and never trust a computed filter for sun, welding or laser viewing.
    """
    from filmoptic.design import check_design, design_coating, parse_goals, read_goals_file, split_materials
    from filmoptic.design.tolerance import parse_error, tolerance_analysis
    from filmoptic.errors import FilmopticError

    with user_errors():
        if plot_path:
            check_plot_path(plot_path)
        goals = list(parse_goals(goal_texts, illuminant)) if goal_texts else []
        if goals_file:
            goals.extend(read_goals_file(goals_file, illuminant))
        if not goals:
            raise FilmopticError("give at least one goal: --goal 'mean R 420..680nm <= 0.5%' or --goals FILE")
        goals = tuple(goals)
        random_error = parse_error(tolerance_text, "--tolerance") if tolerance_text is not None else None
        systematic_error = parse_error(systematic, "--systematic") if systematic is not None else None
        if systematic_error is not None and random_error is None:
            raise FilmopticError("--systematic is added to a --tolerance per layer; give --tolerance too "
                                 "(--tolerance 0% for the systematic part alone)")
        material_list = split_materials(materials) if materials else []
        if check_only:
            if stack is None:
                raise FilmopticError("--check-only needs the STACK to check")
            clashing = [name for name, given in (("--materials", materials), ("--on", on),
                                                 ("--max-layers", max_layers), ("--max-total", max_total))
                        if given]
            if clashing:
                raise FilmopticError(f"{', '.join(clashing)} belong(s) to a design; --check-only leaves the stack as it is")
            result = check_design(stack, goals, ambient=ambient, step_nm=step, reference_nm=reference,
                                  extrapolate=extrapolate)
        else:
            if stack is None and on is None:
                raise FilmopticError("say what to design: a STACK with '?' thicknesses, or --materials LIST "
                                     "--on SUBSTRATE to design from nothing")
            if stack is None and not material_list:
                raise FilmopticError("--on starts a design from nothing: add --materials, e.g. --materials TiO2,SiO2")
            with late_progress("Designing") as report:
                result = design_coating(goals, stack, materials=material_list, on=on, ambient=ambient,
                                        max_layers=max_layers, min_layer_nm=min_layer, max_total_nm=max_total,
                                        seed=seed, tries=tries, starts=starts, step_nm=step,
                                        reference_nm=reference, extrapolate=extrapolate, progress=report)
        tolerance = None
        if random_error is not None:
            with late_progress("Simulating runs") as report:
                tolerance = tolerance_analysis(result.stack, goals, random=random_error, systematic=systematic_error,
                                               samples=samples, uniform=uniform, seed=seed, ambient=ambient,
                                               step_nm=step, extrapolate=extrapolate, progress=report)
        if plot_path:
            from filmoptic.plots.design import plot_design

            save_plot(plot_design(result, goals, tolerance=tolerance, ambient=ambient, step_nm=step,
                                  extrapolate=extrapolate), plot_path)
    if result.interrupted:
        click.echo("filmoptic: warning: interrupted; showing the best design found so far", err=True)
    if _needs_eye_caution(goals, result):
        echo_caution(EYE_CAUTION)
    if as_json:
        emit_json(_json_payload(result, tolerance))
        return
    _print_design(result, check_only)
    if tolerance is not None:
        _print_tolerance(tolerance)
    if plot_path:
        click.echo(f"\nPlot written to {plot_path}")
