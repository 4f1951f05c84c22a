"""Demo part "design": a protected semi-mirror with a neutral tint, and its yield at ±3 %.

All inputs come from the fictional scenario in :mod:`filmoptic.demo.scenario`.
"""

from __future__ import annotations

import pathlib

__all__ = ["run"]

REPORT_FILE = "design_report.txt"
PLOT_FILE = "design_plot.png"


def _achieved(result) -> str:
    if result.goal.kind == "colour":
        lab = ", ".join(f"{v:.1f}" for v in result.lab)
        return f"ΔE00 {result.achieved:.2f} (L*a*b* {lab})"
    return f"{100 * result.achieved:.2f} %"


def run(outdir: pathlib.Path, say) -> None:
    """Design the mirror, simulate its runs, and write a report and a plot into ``outdir``."""
    from filmoptic.demo import scenario as sc
    from filmoptic.design import design_coating, parse_goals
    from filmoptic.design.tolerance import tolerance_analysis
    from filmoptic.files import write_atomically
    from filmoptic.plots import save_figure
    from filmoptic.plots.design import plot_design

    outdir = pathlib.Path(outdir)
    goals = parse_goals(sc.DESIGN_GOALS)
    say(f"Protected semi-mirror for the cabinet door: '{sc.DESIGN_STACK}'")
    say("  goals: " + "; ".join(sc.DESIGN_GOALS))
    result = design_coating(goals, sc.DESIGN_STACK, seed=sc.DESIGN_SEED)
    lines = [f"design: {result.stack}", f"merit: {result.merit:.4g} (0 = every goal met)", "", "layers:"]
    for number, layer in enumerate(result.layers, start=1):
        lines.append(f"  {number}  {layer.material:5s} {layer.thickness_nm:8.3f} nm")
    lines += ["", "goals:"]
    for g in result.goals:
        lines.append(f"  {g.goal.text}: {_achieved(g)} — {'met' if g.met else 'NOT met'}")
    tolerance = tolerance_analysis(result.stack, goals, random=sc.DESIGN_TOLERANCE, uniform=True,
                                   samples=sc.DESIGN_SAMPLES, seed=sc.DESIGN_SEED)
    lines += ["", f"yield with every layer within ±{sc.DESIGN_TOLERANCE} (spread evenly), "
                  f"{tolerance.samples} simulated runs: {100 * tolerance.yield_fraction:.1f} % "
                  f"± {100 * tolerance.yield_stderr:.1f} %"]
    for spread in tolerance.goals:
        unit = (lambda v: f"{v:.2f}") if spread.goal.kind == "colour" else (lambda v: f"{100 * v:.2f} %")
        lines.append(f"  {spread.goal.text}: 5 % {unit(spread.p5)}, median {unit(spread.p50)}, "
                     f"95 % {unit(spread.p95)}; met in {100 * spread.met_share:.1f} % of runs")
    critical = next(s for s in tolerance.layers if s.layer == tolerance.critical_layer)
    lines.append(f"  critical layer: {critical.layer} ({critical.material}, {critical.thickness_nm:.2f} nm)")
    for line in lines:
        say(f"  {line}" if line else "")
    command = (f"filmoptic design \"{sc.DESIGN_STACK}\" " + " ".join(f"--goal \"{g}\"" for g in sc.DESIGN_GOALS)
               + f" --seed {sc.DESIGN_SEED} --tolerance {sc.DESIGN_TOLERANCE} --uniform "
                 f"--samples {sc.DESIGN_SAMPLES} --plot {PLOT_FILE}")
    write_atomically(outdir / REPORT_FILE, lambda fh: fh.write(
        f"{sc.SCENARIO_NAME}: invented scenario, computed results\ncommand: {command}\n\n" + "\n".join(lines) + "\n"))
    save_figure(plot_design(result, goals, tolerance=tolerance), outdir / PLOT_FILE)
    say(f"  → {REPORT_FILE}, {PLOT_FILE}")
    say(f"  The same from the command line: {command}")
