"""``filmoptic fit``: thickness and optical constants from measured spectra."""

from __future__ import annotations

import math

import click

from filmoptic.cli._common import (
    FractionType,
    PolarizationType,
    ambient_option,
    angle_option,
    check_plot_path,
    emit_json,
    extrapolate_option,
    json_option,
    late_progress,
    save_plot,
    user_errors,
)

def _json_payload(result, spectra):
    from filmoptic.inverse.fit import fit_verdict

    verdict = fit_verdict(result)
    return {
        "verdict": {"explained": verdict.explained, "how_well": verdict.how_well,
                    "distrust": list(verdict.distrust), "text": verdict.text},
        "model": result.model,
        "parameters": [
            {"name": p.name, "value": p.value,
             "stderr": p.stderr if math.isfinite(p.stderr) else None, "unit": p.unit}
            for p in result.parameters
        ],
        "chi2_reduced": result.chi2_reduced,
        "rms": result.rms,
        "n_points": result.n_points,
        "n_parameters": result.n_parameters,
        "correlation": result.correlation,
        "warnings": list(result.warnings),
        "residual_autocorrelation": result.residual_autocorrelation,
        "converged": result.converged,
        "stopped_because": result.stopped_because,
        "sigma_source": result.sigma_source,
        "sigma": result.sigma,
        "notes": list(result.notes),
        "measured": [
            {"path": str(s.path) if s.path else None, "quantity": s.quantity, "n_points": len(s),
             "notes": list(s.notes), "read_as": s.how_read}
            for s in spectra
        ],
        "fitted": [
            {"quantity": f.quantity, "path": f.path, "wavelength_nm": f.wavelength_nm,
             "measured": f.measured, "model": f.model}
            for f in result.fitted
        ],
    }


def _refuse_repeated_files(files) -> None:
    """The same measurement given twice would count double in the fit and shrink its error bars."""
    import os

    for i, path in enumerate(files):
        for earlier in files[:i]:
            same = earlier == path
            if not same:
                try:
                    same = os.path.samefile(earlier, path)
                except OSError:
                    same = False
            if same:
                raise click.UsageError(
                    f"--measured {path} is given twice; each measured spectrum counts once"
                )


@click.command()
@click.argument("model")
@click.option(
    "--measured", "files", multiple=True, required=True, metavar="FILE",
    help="A measured T or R spectrum (repeatable; T and R files are fitted together). CSV, TSV or "
         "space-separated text with a header such as 'wavelength (nm), T (%)'; an optional third "
         "column is each value's standard uncertainty.",
)
@click.option(
    "--quantity", "quantities", multiple=True, type=click.Choice(["T", "R", "t", "r"]),
    help="What a file holds when its header does not say: once for all files, or once per "
         "--measured in the same order.",
)
@angle_option
@click.option(
    "--polarization", "--polarisation", "--pol", "polarization",
    type=PolarizationType(), default="unpolarized",
    show_default=True, help="Polarisation of the measuring beam: s, p or unpolarized (also unpolarised).",
)
@ambient_option
@click.option(
    "--sigma", type=FractionType(), metavar="VALUE",
    help="Standard uncertainty of each measured point where a file gives none, as a fraction "
         "(0.003) or percent (0.3%). Without it σ is estimated from the residuals.",
)
@click.option(
    "--range", "fit_range", metavar="START:STOP",
    help="Fit only this wavelength range, nm (e.g. 420:950).",
)
@click.option(
    "--starts", type=click.IntRange(1, 20), default=4, show_default=True,
    help="How many of the best grid points the local refinement starts from.",
)
@click.option(
    "--max-grid", type=click.IntRange(100, 2_000_000), default=40000, show_default=True,
    help="Most model evaluations in the coarse global search.",
)
@extrapolate_option
@click.option("--plot", "plot_path", metavar="FILE",
              help="Write measured and fitted curves with residuals (.png, .svg or .pdf).")
@json_option
def fit(model, files, quantities, angle, polarization, ambient, sigma, fit_range, starts, max_grid,
        extrapolate, plot_path, as_json):
    """Fit thickness and optical constants of MODEL to measured spectra.

    MODEL is a stack whose unknowns are written '?' (a default range) or LOW..HIGH: thicknesses
    ('TiO2 100..400nm'), coefficients of cauchy(A,B,C), sellmeier(…), drude(…), lorentz(…) and
    n=… models ('cauchy(?,?,0)', 'n=1.8..2.6'), and the volume fraction of a mix, for porosity
    or roughness ('mix(TiO2,n=1,?)'). T and R spectra given together are fitted together, at
    the angle of the measurement, with the back side of a thick substrate included. Default
    ranges of '?': 0–150 nm for a metal film, 0–2000 nm for others, and for coefficients see
    the documentation of filmoptic.inverse.fit.

    A film's spectrum repeats with its thickness, so the fit first searches the whole thickness
    range on a grid fine enough to resolve the fringes (plus a small grid over the
    coefficients, and for a transparent film on glass the envelope method's estimate), then
    refines the best few candidates by bounded least squares and keeps the best.

    The report starts with a verdict: did the model explain the data (yes, partly, no), how
    well (RMS residual, reduced χ² when σ is known, whether the residuals look like noise), and
    what to distrust. Then, each under the question it answers: what came out (each value with
    its standard uncertainty from the Jacobian at the optimum), how closely the model follows
    the data, which values move together (the correlations, strongest first), what to distrust
    and why (strongly correlated values, |ρ| > 0.95; values the data cannot fix; values stuck at
    a range end; a second solution that fits almost as well; residuals with a pattern), and how
    the search went.

    --json gives verdict (explained, how_well, distrust, text), model, parameters (name, value,
    stderr, unit), chi2_reduced, rms, residual_autocorrelation, n_points, n_parameters,
    correlation, warnings, converged, stopped_because, sigma_source, sigma, notes, measured and
    fitted.

    Examples:

    \b
        filmoptic fit "cauchy(?,?,0) 150..500nm / glass 1mm" --measured oxide_T.csv
        filmoptic fit "Au 10..80nm / glass 1mm" --measured T.csv --measured R.csv --plot fit.png
        filmoptic fit "TiO2 ? / glass 1mm" --measured scan.txt --quantity T --sigma 0.3%

    The result describes the model that fits best, not necessarily the film: check that the
    residuals show no structure, and confirm critical parts with an independent measurement.
    """
    from filmoptic.errors import WavelengthRangeError
    from filmoptic.inverse.fit import fit_spectra
    from filmoptic.inverse.measured import read_spectrum
    from filmoptic.stack import parse_stack
    from filmoptic.units import parse_range_nm

    with user_errors():
        if quantities and len(quantities) not in (1, len(files)):
            raise click.UsageError(
                f"--quantity: give it once for all files or once per --measured ({len(files)}), "
                f"not {len(quantities)} times"
            )
        _refuse_repeated_files(files)
        per_file = [None] * len(files)
        if quantities:
            per_file = [q.upper() for q in (quantities * len(files) if len(quantities) == 1 else quantities)]
        if plot_path:
            check_plot_path(plot_path)
        wl_range = parse_range_nm(fit_range, what="--range") if fit_range else None
        stack = parse_stack(model, ambient=ambient)
        spectra = [read_spectrum(path, quantity=q) for path, q in zip(files, per_file)]
        with late_progress("Fitting") as report:
            try:
                result = fit_spectra(
                    stack, spectra, angle_deg=angle, polarization=polarization, sigma=sigma,
                    wavelength_range_nm=wl_range, extrapolate=extrapolate, starts=starts,
                    max_grid=max_grid, progress=report,
                )
            except WavelengthRangeError as exc:
                raise WavelengthRangeError(f"{exc} — or fit only part of the spectrum (--range START:STOP)") from None
        if plot_path:
            from filmoptic.plots.fit import plot_fit

            save_plot(plot_fit(result), plot_path)

    if as_json:
        emit_json(_json_payload(result, spectra))
        return
    from filmoptic.inverse.fit import format_report

    click.echo(format_report(result, spectra))
    if plot_path:
        click.echo(f"\nPlot written to {plot_path}")
