"""Deposition rate from calibration runs (filmoptic.inverse.rate, ``filmoptic rate``)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import assume, given, settings, strategies as st

from conftest import assert_user_error
from filmoptic.errors import FilmopticError
from filmoptic.inverse.rate import Run, fit_rate, parse_run, parse_thickness

# Durations and thicknesses below are arbitrary inputs for checking the arithmetic; the answers
# are computed independently in each test, never hard-coded.


def _textbook_line(t, d):
    """Straight-line least squares written out from the closed-form sums.

    Slope b = Sxy/Sxx, intercept a = ȳ − b·x̄, s² = SSR/(n − 2), SE(b) = s/√Sxx,
    SE(a) = s·√(1/n + x̄²/Sxx). Source: N. R. Draper & H. Smith, Applied Regression Analysis,
    3rd ed. (1998), §1.2–1.4 (standard in any statistics text; formulas from memory).
    """
    t, d = np.asarray(t, float), np.asarray(d, float)
    n = len(t)
    xbar, ybar = t.mean(), d.mean()
    sxx = np.sum((t - xbar) ** 2)
    sxy = np.sum((t - xbar) * (d - ybar))
    b = sxy / sxx
    a = ybar - b * xbar
    s2 = np.sum((d - a - b * t) ** 2) / (n - 2)
    return b, a, math.sqrt(s2 / sxx), math.sqrt(s2 * (1 / n + xbar**2 / sxx))


def test_fit_matches_textbook_formulas():
    t = [120.0, 240.0, 400.0, 610.0, 900.0]
    d = [4.1, 8.7, 14.9, 22.2, 33.5]
    fit = fit_rate([Run(a, b) for a, b in zip(t, d)])
    slope, intercept, se_slope, se_intercept = _textbook_line(t, d)
    assert fit.rate_nm_per_s == pytest.approx(slope, rel=1e-12)
    assert fit.offset_nm == pytest.approx(intercept, rel=1e-10, abs=1e-12)
    assert fit.rate_sigma_nm_per_s == pytest.approx(se_slope, rel=1e-10)
    assert fit.offset_sigma_nm == pytest.approx(se_intercept, rel=1e-10)
    assert fit.dead_time_s == pytest.approx(-intercept / slope)


def test_fit_matches_scipy_linregress():
    # Independent implementation: scipy.stats.linregress (slope, intercept and their standard errors).
    from scipy.stats import linregress

    rng = np.random.default_rng(7)
    t = np.sort(rng.uniform(60, 1200, 6))
    d = 0.04 * t - 1.2 + rng.normal(0, 0.3, t.size)
    ref = linregress(t, d)
    fit = fit_rate([Run(a, b) for a, b in zip(t, d)])
    assert fit.rate_nm_per_s == pytest.approx(ref.slope, rel=1e-10)
    assert fit.offset_nm == pytest.approx(ref.intercept, rel=1e-9)
    assert fit.rate_sigma_nm_per_s == pytest.approx(ref.stderr, rel=1e-9)
    assert fit.offset_sigma_nm == pytest.approx(ref.intercept_stderr, rel=1e-9)


def test_weighted_fit_equal_sigmas_gives_sigma_over_root_sxx():
    # With known equal σ the slope's standard error is σ/√Sxx (Bevington & Robinson, Data Reduction
    # and Error Analysis, 3rd ed. (2003), eq. 6.21–6.22; from memory).
    t = np.array([100.0, 300.0, 500.0])
    d = np.array([3.0, 9.5, 15.2])
    sigma = 0.4
    fit = fit_rate([Run(a, b, sigma) for a, b in zip(t, d)])
    assert fit.weighted
    sxx = np.sum((t - t.mean()) ** 2)
    assert fit.rate_sigma_nm_per_s == pytest.approx(sigma / math.sqrt(sxx), rel=1e-10)
    assert fit.rate_nm_per_s == pytest.approx(_textbook_line(t, d)[0], rel=1e-10)


@settings(max_examples=40, derandomize=True, deadline=None)
@given(
    rate=st.floats(0.005, 5.0),
    offset=st.floats(-20.0, 5.0),
    t1=st.floats(30.0, 600.0),
    gap=st.floats(30.0, 3000.0),
    target=st.floats(5.0, 500.0),
)
def test_two_runs_reproduce_the_line_and_the_target_time(rate, offset, t1, gap, target):
    t2 = t1 + gap
    d1, d2 = rate * t1 + offset, rate * t2 + offset
    # Only physical calibrations: a positive first thickness and a target above the offset. With
    # assume() hypothesis draws replacements, so no example passes without being checked.
    assume(d1 > 0 and target > offset)
    fit = fit_rate([Run(t1, d1), Run(t2, d2)], target_nm=target)
    assert fit.rate_nm_per_s == pytest.approx(rate, rel=1e-8)
    assert fit.offset_nm == pytest.approx(offset, abs=1e-7 * max(1.0, abs(d2)))
    # Round trip: the predicted time deposits the target on the fitted line.
    assert fit.rate_nm_per_s * fit.time_s + fit.offset_nm == pytest.approx(target, rel=1e-9)
    assert fit.rate_sigma_nm_per_s is None  # two points fix a line exactly: no scatter to estimate


def test_single_run_goes_through_the_origin():
    fit = fit_rate([Run(300.0, 12.0, 0.3)], target_nm=20.0)
    assert fit.through_origin and fit.offset_nm == 0.0
    assert fit.rate_nm_per_s == pytest.approx(12.0 / 300.0)
    assert fit.rate_sigma_nm_per_s == pytest.approx(0.3 / 300.0)
    assert fit.time_s == pytest.approx(20.0 / (12.0 / 300.0))
    # t = D/r → σ_t = t·σ_r/r (first-order propagation).
    assert fit.time_sigma_s == pytest.approx(fit.time_s * 0.3 / 12.0, rel=1e-10)


def test_time_uncertainty_matches_monte_carlo():
    # First-order propagation through t = (D − b)/a checked against direct sampling of the fit
    # covariance (common practice).
    t = [120.0, 300.0, 480.0, 700.0]
    d = [4.0, 11.1, 17.6, 26.3]
    fit = fit_rate([Run(a, b) for a, b in zip(t, d)], target_nm=40.0)
    rng = np.random.default_rng(3)
    samples = rng.multivariate_normal([fit.rate_nm_per_s, fit.offset_nm], np.array(fit.covariance), 200_000)
    times = (40.0 - samples[:, 1]) / samples[:, 0]
    assert fit.time_sigma_s == pytest.approx(np.std(times), rel=0.03)


# --------------------------------------------------------------------------------------------
# Thickness uncertainties: weighted fit and propagation
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "text, thickness, sigma",
    [
        ("21.8nm+-0.4nm", 21.8, 0.4),
        ("21.8nm±0.4nm", 21.8, 0.4),
        ("21.8 nm +/- 0.4 nm", 21.8, 0.4),
        ("0.2um+-5%", 200.0, 10.0),
        ("21.8nm", 21.8, None),
    ],
)
def test_thickness_with_uncertainty_notation(text, thickness, sigma):
    got, got_sigma = parse_thickness(text)
    assert got == pytest.approx(thickness)
    assert got_sigma == (None if sigma is None else pytest.approx(sigma))


def test_monitor_uncertainty_scales_with_the_tooling_factor():
    run = parse_run("10min:monitor=20nm+-0.5nm", tooling_factor=1.25)
    assert (run.thickness_nm, run.sigma_nm) == (pytest.approx(25.0), pytest.approx(0.625))


def _weighted_reference(t, d, sigma):
    """Slope, intercept and their unscaled covariance from numpy.polyfit (an independent
    implementation: weights w = 1/σ on the residuals, cov='unscaled' = (AᵀWA)⁻¹), and χ²."""
    (slope, intercept), residuals, *_ = np.polyfit(t, d, 1, w=1 / np.asarray(sigma), full=True)
    _, cov = np.polyfit(t, d, 1, w=1 / np.asarray(sigma), cov="unscaled")
    chi2 = float(residuals[0]) if len(residuals) else 0.0
    return slope, intercept, cov, chi2


@pytest.mark.parametrize("n_runs", [2, 3, 6])
def test_weighted_fit_matches_numpy_polyfit(n_runs):
    rng = np.random.default_rng(20 + n_runs)
    t = np.sort(rng.uniform(60.0, 1500.0, n_runs))
    sigma = rng.uniform(0.1, 0.8, n_runs)
    d = 0.03 * t - 0.8 + rng.normal(0.0, sigma)
    fit = fit_rate([Run(a, b, s) for a, b, s in zip(t, d, sigma)], target_nm=30.0)
    slope, intercept, cov, chi2 = _weighted_reference(t, d, sigma)
    assert fit.weighted
    assert fit.rate_nm_per_s == pytest.approx(slope, rel=1e-10)
    assert fit.offset_nm == pytest.approx(intercept, rel=1e-8, abs=1e-10)
    np.testing.assert_allclose(np.array(fit.covariance), cov, rtol=1e-8)
    assert fit.rate_sigma_nm_per_s == pytest.approx(math.sqrt(cov[0, 0]), rel=1e-8)
    assert fit.offset_sigma_nm == pytest.approx(math.sqrt(cov[1, 1]), rel=1e-8)
    assert fit.degrees_of_freedom == n_runs - 2
    if n_runs > 2:
        assert fit.chi2 == pytest.approx(chi2, rel=1e-8)
        # Probability of a larger χ² (scipy's chi-squared distribution; Bevington & Robinson, ch. 11).
        from scipy.stats import chi2 as chi2_distribution

        assert fit.chi2_probability == pytest.approx(chi2_distribution.sf(chi2, n_runs - 2), rel=1e-8)
    else:
        assert fit.chi2_probability is None


def test_weighted_fit_matches_scipy_curve_fit_with_absolute_sigma():
    # scipy.optimize.curve_fit with sigma and absolute_sigma=True returns the covariance (JᵀWJ)⁻¹
    # of the parameters, unscaled by the residuals: the textbook weighted fit.
    from scipy.optimize import curve_fit

    t = np.array([180.0, 420.0, 600.0, 900.0])
    sigma = np.array([0.2, 0.5, 0.3, 0.6])
    d = np.array([5.3, 12.9, 18.1, 27.9])
    popt, pcov = curve_fit(lambda x, a, b: a * x + b, t, d, p0=(0.03, 0.0), sigma=sigma, absolute_sigma=True)
    fit = fit_rate([Run(a, b, s) for a, b, s in zip(t, d, sigma)])
    assert (fit.rate_nm_per_s, fit.offset_nm) == pytest.approx(tuple(popt), rel=1e-6)
    np.testing.assert_allclose(np.array(fit.covariance), pcov, rtol=1e-6)


def test_two_runs_with_uncertainties_give_the_interpolation_error_exactly():
    # Two runs fix the line: the time for a target is the linear interpolation
    # t = t1 + (D − d1)(t2 − t1)/(d2 − d1), whose first-order uncertainty follows from ∂t/∂d1 and
    # ∂t/∂d2 directly (Bevington & Robinson, eq. 3.13 with independent d1, d2; from memory). This
    # route never forms the rate/offset covariance, so it checks that the covariance term is right.
    t1, t2, d1, d2, s1, s2, D = 300.0, 900.0, 12.0, 35.0, 0.5, 0.6, 20.0  # arbitrary inputs
    fit = fit_rate([Run(t1, d1, s1), Run(t2, d2, s2)], target_nm=D)
    span = (t2 - t1) / (d2 - d1)
    dt_dd1 = -span + (D - d1) * span / (d2 - d1)
    dt_dd2 = -(D - d1) * span / (d2 - d1)
    assert fit.time_s == pytest.approx(t1 + (D - d1) * span, rel=1e-12)
    assert fit.time_sigma_s == pytest.approx(math.hypot(dt_dd1 * s1, dt_dd2 * s2), rel=1e-10)
    # Leaving out the (negative) covariance of rate and offset would overstate the error.
    a = fit.rate_nm_per_s
    diagonal_only = math.hypot(fit.time_s / a * fit.rate_sigma_nm_per_s, fit.offset_sigma_nm / a)
    assert diagonal_only > 1.5 * fit.time_sigma_s


def test_propagated_uncertainties_match_monte_carlo():
    # Monte-Carlo check (common practice): draw every run's thickness from N(true, σᵢ), fit each
    # draw, and compare the spread of rate, offset, dead time and target time with the propagated σ.
    rate, offset, target = 0.035, -0.9, 40.0
    t = np.array([240.0, 600.0, 900.0])
    sigma = np.array([0.3, 0.4, 0.25])
    rng = np.random.default_rng(12)
    draws = rate * t + offset + rng.normal(0.0, sigma, (3000, t.size))
    fits = [fit_rate([Run(a, b, s) for a, b, s in zip(t, row, sigma)], target_nm=target) for row in draws]
    nominal = fit_rate([Run(a, rate * a + offset, s) for a, s in zip(t, sigma)], target_nm=target)
    spread = {name: np.std([getattr(f, name) for f in fits], ddof=1)
              for name in ("rate_nm_per_s", "offset_nm", "time_s", "dead_time_s")}
    # The standard deviation of 3000 normal draws is known to about 1/√(2·3000) ≈ 1.3 %.
    assert nominal.rate_sigma_nm_per_s == pytest.approx(spread["rate_nm_per_s"], rel=0.05)
    assert nominal.offset_sigma_nm == pytest.approx(spread["offset_nm"], rel=0.05)
    assert nominal.time_sigma_s == pytest.approx(spread["time_s"], rel=0.05)
    assert nominal.dead_time_sigma_s == pytest.approx(spread["dead_time_s"], rel=0.07)
    # The weighted fit's σ do not depend on the draw: every fit reports the same rate σ.
    assert fits[0].rate_sigma_nm_per_s == pytest.approx(nominal.rate_sigma_nm_per_s, rel=1e-12)


def test_chi2_of_consistent_runs_follows_its_distribution():
    # With the stated σ right, χ² of a straight-line fit to n runs follows the χ² distribution
    # with n − 2 degrees of freedom: its mean is n − 2 (Bevington & Robinson, ch. 11; from memory).
    t = np.array([120.0, 300.0, 480.0, 700.0, 950.0])
    sigma = np.full(t.size, 0.3)
    rng = np.random.default_rng(5)
    chi2 = [fit_rate([Run(a, b, s) for a, b, s in zip(t, 0.03 * t + rng.normal(0, sigma), sigma)]).chi2
            for _ in range(2000)]
    assert np.mean(chi2) == pytest.approx(t.size - 2, rel=0.06)


def test_uncertainties_on_some_runs_only_are_refused():
    with pytest.raises(FilmopticError, match="uncertainty"):
        fit_rate([Run(240.0, 9.1, 0.3), Run(600.0, 21.8)])


def test_tooling_factor_converts_monitor_readings():
    run = parse_run("10min:monitor=20nm", tooling_factor=1.25)
    assert run.thickness_nm == pytest.approx(25.0)
    fit = fit_rate([run], target_nm=30.0, tooling_factor=1.25)
    assert fit.monitor_endpoint_nm == pytest.approx(24.0)
    with pytest.raises(FilmopticError, match="tooling"):
        parse_run("10min:monitor=20nm")


def test_decreasing_thickness_is_refused():
    with pytest.raises(FilmopticError, match="rate"):
        fit_rate([Run(100.0, 10.0), Run(200.0, 5.0)])


def test_cli_table_and_json(run_cli):
    result = run_cli(["rate", "--run", "4min:9nm", "--run", "10min:22.5nm", "--target", "15nm", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    slope = (22.5 - 9.0) / (600.0 - 240.0)
    assert data["rate_nm_per_s"] == pytest.approx(slope)
    assert data["time_s"] == pytest.approx(240.0 + (15.0 - 9.0) / slope)
    table = run_cli(["rate", "--run", "4min:9nm", "--run", "10min:22.5nm", "--target", "15nm"])
    assert table.exit_code == 0 and "nm/s" in table.stdout


def test_cli_runs_with_uncertainties(run_cli):
    args = ["rate", "--run", "4min:9.1nm+-0.3nm", "--run", "10min:21.8nm±0.4nm", "--target", "15nm"]
    data = json.loads(run_cli([*args, "--json"]).stdout)
    fit = fit_rate([Run(240.0, 9.1, 0.3), Run(600.0, 21.8, 0.4)], target_nm=15.0)
    assert data["weighted"] is True
    assert data["time_sigma_s"] == pytest.approx(fit.time_sigma_s, rel=1e-12)
    assert [r["sigma_nm"] for r in data["runs"]] == pytest.approx([0.3, 0.4])
    table = run_cli(args)
    assert table.exit_code == 0, table.stderr
    assert f"± {fit.time_sigma_s:.2g} s" in table.stdout and "not available" not in table.stdout


def test_cli_warns_when_runs_scatter_beyond_their_uncertainties(run_cli):
    # Three runs far off one line for their stated σ: χ² is large and its probability tiny.
    args = ["rate", "--run", "4min:9.1nm+-0.1nm", "--run", "7min:19.0nm+-0.1nm", "--run", "10min:21.8nm+-0.1nm"]
    result = run_cli(args)
    assert result.exit_code == 0, result.stderr
    assert "χ²" in result.stdout and "scatter more than their uncertainties" in result.stdout


def test_cli_reads_a_solve_result(tmp_path, run_cli):
    solved = tmp_path / "solve.json"
    solved.write_text(json.dumps({"solutions": [{"thickness_nm": 12.0, "low_nm": 11.0, "high_nm": 13.0}]}))
    before = solved.read_text()
    result = run_cli(["rate", "--run", f"5min:{solved}", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert data["rate_nm_per_s"] == pytest.approx(12.0 / 300.0)
    assert data["runs"][0]["sigma_nm"] == pytest.approx(1.0)
    assert solved.read_text() == before  # input files are never written


@pytest.mark.parametrize(
    "args, fragment",
    [
        (["--run", "5min"], "DURATION:THICKNESS"),
        (["--run", "5parsecs:10nm"], "unit"),
        (["--run", "5min:10"], "unit"),
        (["--run", "5min:missing.json"], "missing.json"),
        (["--run", "5min:10nm", "--target", "-3nm"], "--target"),
        (["--run", "5min:10nm", "--run", "5min:12nm", "--with-offset"], "different durations"),
        (["--run", "5min:10nm+-0nm"], "positive"),
        (["--run", "5min:10nm+-0.2"], "unit"),
        (["--run", "5min:10nm+-0.2nm+-0.1nm"], "one uncertainty"),
        (["--run", "5min:10nm+-0.2nm", "--run", "9min:17nm"], "uncertainty"),
    ],
)
def test_cli_bad_input_is_one_line(run_cli, args, fragment):
    assert_user_error(run_cli(["rate", *args]), fragment)


def test_cli_malformed_solve_file(tmp_path, run_cli):
    bad = tmp_path / "bad.json"
    bad.write_text("{not json")
    assert_user_error(run_cli(["rate", "--run", f"5min:{bad}"]), "bad.json")


def _solve_file(path, thicknesses, half_widths=None):
    """A file shaped like 'filmoptic solve --json' output (only the fields rate reads)."""
    half_widths = half_widths or [0.0] * len(thicknesses)
    path.write_text(json.dumps({"solutions": [
        {"thickness_nm": d, "low_nm": d - h, "high_nm": d + h} for d, h in zip(thicknesses, half_widths)
    ]}))
    return path


def test_cli_solve_file_with_several_solutions_needs_a_choice(tmp_path, run_cli):
    # Several solutions are different thicknesses (interference orders): taking one silently
    # would put a wrong point on the rate line.
    multi = _solve_file(tmp_path / "multi.json", [12.0, 140.0, 160.0], [0.5, 0.6, 0.7])
    assert_user_error(run_cli(["rate", "--run", f"10min:{multi}"]), "3 solutions", "multi.json#2", "1 to 3")
    data = json.loads(run_cli(["rate", "--run", f"10min:{multi}#2", "--json"]).stdout)
    assert data["rate_nm_per_s"] == pytest.approx(140.0 / 600.0)
    assert data["runs"][0]["sigma_nm"] == pytest.approx(0.6)
    assert_user_error(run_cli(["rate", "--run", f"10min:{multi}#4"]), "3 solutions", "multi.json#1", "multi.json#3")
    assert_user_error(run_cli(["rate", "--run", f"10min:{multi}#0"]), "number")
    assert_user_error(run_cli(["rate", "--run", f"10min:{multi}#two"]), "number")


def test_solve_file_choice_in_the_api(tmp_path):
    from filmoptic.inverse.rate import thickness_from_solve_file

    multi = _solve_file(tmp_path / "multi.json", [12.0, 140.0], [0.5, 0.0])
    assert thickness_from_solve_file(f"{multi}#1") == (12.0, 0.5)
    assert thickness_from_solve_file(multi, index=2) == (140.0, None)
    with pytest.raises(FilmopticError, match="2 solutions"):
        thickness_from_solve_file(multi)
    one = _solve_file(tmp_path / "one.json", [12.0])
    assert thickness_from_solve_file(one) == thickness_from_solve_file(f"{one}#1") == (12.0, None)


def test_mixed_uncertainties_name_the_runs_that_lack_one(tmp_path, run_cli):
    plain = _solve_file(tmp_path / "plain.json", [15.0])
    result = run_cli(["rate", "--run", "4min:9.1nm+-0.3nm", "--run", "10min:21.8nm", "--run", f"7min:{plain}",
                      "--run", "12min:monitor=20nm", "--tooling", "1.3"])
    assert_user_error(result, "run 2 (--run 10min:21.8nm", "10min:21.8nm+-", "run 3", "--uncertainty",
                      "run 4 (--run 12min:monitor=20nm", "12min:monitor=20nm+-")
    assert "run 1 (" not in result.stderr
    # The API names runs built without text by their numbers.
    with pytest.raises(FilmopticError, match=r"run 2 \(600s:21.8nm: .*600s:21.8nm\+-"):
        fit_rate([Run(240.0, 9.1, 0.3), Run(600.0, 21.8)])
