"""``filmoptic rate``: deposition rate from calibration runs, and the time for the next run."""

from __future__ import annotations

import click

from filmoptic.cli._common import emit_json, json_option, print_table, to_jsonable, user_errors


#: Below this χ² probability the runs are said to scatter more than their uncertainties allow
#: (the usual 5 % significance level; common practice).
CHI2_WARNING_PROBABILITY = 0.05


def _fmt_time(seconds: float) -> str:
    minutes, secs = divmod(seconds, 60.0)
    return f"{seconds:.0f} s ({int(minutes)} min {secs:.0f} s)" if seconds >= 60 else f"{seconds:.1f} s"


def _pm(sigma, fmt: str) -> str:
    return "" if sigma is None else f" ± {format(sigma, fmt)}"


@click.command()
@click.option(
    "--run", "runs", multiple=True, required=True, metavar="DURATION:THICKNESS",
    help="A calibration run (repeatable): its deposition time (300s, 5min, 5min30s, 1h 5min, or a "
         "stopwatch time 5:30) and the thickness it gave: a length (21.8nm, or 218A in Å as a crystal "
         "monitor shows it), with its standard uncertainty when known "
         "(21.8nm+-0.4nm, 21.8nm±0.4nm or 21.8nm+-2%); 'monitor=LENGTH' for a crystal-monitor "
         "reading (needs --tooling; the same +- accepted); or a 'filmoptic solve --json' output file "
         "(its solution's thickness_nm, with half the low_nm..high_nm interval as the "
         "uncertainty; when the file lists several solutions, FILE.json#N takes the N-th, as "
         "numbered in the solve table). Give an uncertainty for every run or for none.",
)
@click.option("--target", metavar="THICKNESS", help="Thickness wanted from the next run, e.g. 15nm or 150A.")
@click.option(
    "--tooling", type=float, metavar="FACTOR",
    help="Crystal-monitor tooling factor: measured ÷ indicated thickness. Converts monitor=… runs "
         "and gives the monitor end point for --target.",
)
@click.option(
    "--through-origin/--with-offset", default=None,
    help="Fit the rate alone through the origin, or the rate and a start-up offset. Default: "
         "through the origin for one run, with an offset for two or more.",
)
@json_option
def rate(runs, target, tooling, through_origin, as_json):
    """Deposition rate from calibration runs, and the time for the next run.

    Each run is a timed deposition and the thickness it produced. The thickness grows as

        thickness = rate × time + offset

    where the offset (usually negative) is what the start-up of the source costs; its dead time is
    -offset/rate. Two or more runs fit both by least squares; one run fixes the rate through the
    origin. The rate is given in nm/s and in Å/s, as crystal monitors show it.

    Uncertainties are one standard deviation. When every run's thickness carries one (written
    21.8nm+-0.4nm, or from a solve file made with --uncertainty), the fit is weighted by 1/σ² and
    the runs' uncertainties are carried into the rate, the offset and the time for --target,
    including the correlation between rate and offset; this works with two runs too. With three
    or more such runs, χ² says whether the runs scatter more than their uncertainties allow.
    Without uncertainties they come from the scatter about the line (three runs or more; two runs
    fix the line exactly and give none).

    Examples:

    \b
        filmoptic rate --run 4min:9.1nm --run 10min:21.8nm --target 15nm
        filmoptic rate --run 4min:9.1nm+-0.3nm --run 10min:21.8nm+-0.4nm --target 15nm

    A thickness can come straight from a solve result, with its interval as the uncertainty:

    \b
        filmoptic solve "Ti ? / glass 4mm" --reading 318/1045 --source A \\
            --uncertainty 2% --json > run2.json
        filmoptic rate --run 4min:run2.json --run 10min:21.8nm+-0.4nm --target 15nm

    The rate drifts with target wear, pressure and power; check it regularly.
    """
    from filmoptic.inverse.rate import fit_rate, parse_run
    from filmoptic.units import parse_length_nm

    with user_errors():
        parsed = [parse_run(text, tooling_factor=tooling) for text in runs]
        target_nm = None if target is None else parse_length_nm(target, what="--target", allow_zero=False)
        fit = fit_rate(parsed, target_nm=target_nm, tooling_factor=tooling, through_origin=through_origin)

    if as_json:
        # Å and Å/s beside nm and nm/s: crystal monitors show Å.
        emit_json({**to_jsonable(fit), "rate_angstrom_per_s": 10.0 * fit.rate_nm_per_s,
                   "rate_sigma_angstrom_per_s": None if fit.rate_sigma_nm_per_s is None
                   else 10.0 * fit.rate_sigma_nm_per_s})
        return
    rows = [
        [r.source, f"{r.duration_s:g}", f"{r.thickness_nm:.2f}{_pm(r.sigma_nm, '.2f')}",
         f"{fit.rate_nm_per_s * r.duration_s + fit.offset_nm:.2f}"]
        for r in fit.runs
    ]
    print_table(["run thickness", "time (s)", "thickness (nm)", "fitted (nm)"], rows, title="Calibration runs")
    click.echo("")
    angstrom_sigma = None if fit.rate_sigma_nm_per_s is None else 10 * fit.rate_sigma_nm_per_s
    click.echo(
        f"Rate:    {fit.rate_nm_per_s:.4g}{_pm(fit.rate_sigma_nm_per_s, '.2g')} nm/s "
        f"= {10 * fit.rate_nm_per_s:.4g}{_pm(angstrom_sigma, '.2g')} Å/s "
        f"({fit.rate_nm_per_s * 60:.4g} nm/min)"
    )
    if fit.through_origin:
        click.echo("Offset:  0 (fitted through the origin)")
    else:
        dead = f" (dead time {fit.dead_time_s:.3g}{_pm(fit.dead_time_sigma_s, '.2g')} s)" if fit.offset_nm < 0 else ""
        click.echo(f"Offset:  {fit.offset_nm:.3g}{_pm(fit.offset_sigma_nm, '.2g')} nm{dead}")
    if fit.rate_sigma_nm_per_s is None:
        click.echo("Uncertainty: not available (the runs determine the line exactly); add a run, or give "
                   "each run's thickness uncertainty (10min:21.8nm+-0.4nm).")
    elif fit.weighted:
        click.echo("Uncertainties: the runs' thickness uncertainties, propagated (weighted fit).")
        if fit.chi2_probability is not None:
            dof = fit.degrees_of_freedom
            click.echo(f"Fit check: χ² = {fit.chi2:.3g} for {dof} degree{'s' if dof != 1 else ''} of freedom "
                       f"(probability {fit.chi2_probability:.2g}).")
            if fit.chi2_probability < CHI2_WARNING_PROBABILITY:
                click.echo("  The runs scatter more than their uncertainties allow: the uncertainties may be "
                           "understated, or the rate changed between runs. Treat the error bars with care.")
    if fit.time_s is not None:
        click.echo(
            f"Time for {fit.target_nm:g} nm: {_fmt_time(fit.time_s)}"
            f"{_pm(fit.time_sigma_s, '.2g')}{' s' if fit.time_sigma_s is not None else ''}"
        )
        if fit.monitor_endpoint_nm is not None:
            click.echo(f"Crystal monitor end point: {fit.monitor_endpoint_nm:.2f} nm "
                       f"({10 * fit.monitor_endpoint_nm:.1f} Å) indicated")
