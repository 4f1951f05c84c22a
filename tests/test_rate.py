"""Deposition rate from calibration runs (filmoptic.rate, ``filmoptic rate``)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from conftest import assert_user_error
from filmoptic.errors import FilmopticError
from filmoptic.rate import Run, fit_rate, parse_run

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
    if d1 <= 0 or target <= offset:
        return
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
    ],
)
def test_cli_bad_input_is_one_line(run_cli, args, fragment):
    assert_user_error(run_cli(["rate", *args]), fragment)


def test_cli_malformed_solve_file(tmp_path, run_cli):
    bad = tmp_path / "bad.json"
    bad.write_text("{not json")
    assert_user_error(run_cli(["rate", "--run", f"5min:{bad}"]), "bad.json")
