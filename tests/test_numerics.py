"""Numerical pieces written in numpy so that commands start without scipy, checked against scipy.

Each function here replaces a scipy call on a command's path: the monotone cubic of the n,k
tables (``scipy.interpolate.PchipInterpolator``), the cubic spline of the batch solver and the
envelope method (``scipy.interpolate.CubicSpline``), the envelope method's peak finder
(``scipy.signal.find_peaks``), the fit's low-discrepancy samples (``scipy.stats.qmc``) and the χ²
tail of the rate fit (``scipy.stats.chi2``). scipy is the independent reference throughout.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from filmoptic.inverse.envelope import find_extrema, peak_indices
from filmoptic.numerics.interpolate import CubicSpline, Pchip, pchip_slopes, spline_slopes
from filmoptic.inverse.rate import chi2_survival
from filmoptic.numerics.sampling import halton, radical_inverse


def _random_table(rng, n, flat_share=0.0):
    x = np.cumsum(rng.uniform(0.2, 3.0, n)) + 300.0
    y = rng.normal(size=n)
    if flat_share:
        y[rng.random(n) < flat_share] = 0.0      # stretches of k = 0, as in transparent ranges
    return x, y


@pytest.mark.parametrize("seed", range(40))
def test_pchip_is_scipys_to_the_last_bit(seed):
    from scipy.interpolate import PchipInterpolator

    # scipy's PchipInterpolator (Fritsch & Carlson 1980, Fritsch & Butland 1984 slopes, Moler's
    # end slopes) is the reference: the same formulas in the same order give identical numbers.
    rng = np.random.default_rng(seed)
    x, y = _random_table(rng, int(rng.integers(2, 80)), flat_share=0.3 if seed % 2 else 0.0)
    xi = np.concatenate([np.linspace(x[0] - 5, x[-1] + 5, 2001), x])
    with np.errstate(all="ignore"):
        expected = PchipInterpolator(x, y, extrapolate=False)(xi)
    got = Pchip(x, y)(xi)
    np.testing.assert_array_equal(got, expected)


def test_pchip_of_every_shipped_table_is_scipys():
    from scipy.interpolate import PchipInterpolator

    from filmoptic.materials import list_materials
    from filmoptic.materials.tables import load_nk_file

    # The optical constants commands use: every shipped n and k column, between and at the rows.
    for info in list_materials():
        table = load_nk_file(info.path)
        if table.wavelength.size < 2:
            continue
        wl = table.wavelength
        xi = np.sort(np.concatenate([wl, (wl[1:] + wl[:-1]) / 2, wl[:-1] + 0.1 * np.diff(wl)]))
        for column in (table.n, table.k):
            with np.errstate(all="ignore"):
                expected = PchipInterpolator(wl, column, extrapolate=False)(xi)
            np.testing.assert_array_equal(Pchip(wl, column)(xi), expected, err_msg=str(info.path))


def test_pchip_keeps_a_non_negative_k_non_negative_and_does_not_overshoot():
    # The defining property of the monotone cubic (Fritsch & Carlson 1980): between two rows the
    # interpolant stays within their values wherever the data are monotone there.
    x = np.array([400.0, 450.0, 500.0, 550.0, 600.0, 650.0])
    k = np.array([0.0, 0.0, 0.3, 0.31, 0.0, 0.0])
    xi = np.linspace(400, 650, 2501)
    values = Pchip(x, k)(xi)
    assert values.min() >= 0.0
    assert values.max() <= 0.31


@pytest.mark.parametrize("seed", range(30))
def test_not_a_knot_spline_matches_scipy(seed):
    from scipy.interpolate import CubicSpline as ScipySpline

    # scipy's CubicSpline (not-a-knot, banded LU with pivoting) against our Thomas elimination of
    # the folded system: equal to rounding inside the data and on the end pieces beyond them.
    rng = np.random.default_rng(100 + seed)
    n = int(rng.integers(2, 400))
    x = np.cumsum(rng.uniform(0.5, 1.5, n))
    y = np.sin(x / 7.0) + 0.01 * rng.normal(size=n) if seed % 2 else rng.normal(size=n)
    xi = np.linspace(x[0] - 2.0, x[-1] + 2.0, 3001)
    reference = ScipySpline(x, y)
    ours = CubicSpline(x, y)
    scale = np.max(np.abs(y))
    np.testing.assert_allclose(ours(xi), reference(xi), rtol=0, atol=1e-13 * scale)
    np.testing.assert_allclose(ours.derivative()(xi), reference.derivative()(xi), rtol=0,
                               atol=1e-12 * scale)


def test_spline_reproduces_cubics_exactly():
    # A not-a-knot spline is exact for any cubic (de Boor 1978, ch. IV).
    x = np.array([0.0, 0.7, 1.1, 2.0, 3.3, 4.0])
    y = 2 * x**3 - x**2 + 0.5 * x - 3
    xi = np.linspace(-1, 5, 61)
    np.testing.assert_allclose(CubicSpline(x, y)(xi), 2 * xi**3 - xi**2 + 0.5 * xi - 3, rtol=0, atol=1e-11)
    np.testing.assert_allclose(spline_slopes(x, y), 6 * x**2 - 2 * x + 0.5, rtol=0, atol=1e-12)


def test_short_tables_are_lines_and_parabolas():
    # Two points: the straight line; three: the parabola through them (both as scipy does).
    assert pchip_slopes([0.0, 2.0], [1.0, 5.0]).tolist() == [2.0, 2.0]
    np.testing.assert_allclose(CubicSpline([0.0, 1.0, 3.0], [0.0, 1.0, 9.0])([2.0, -1.0]), [4.0, 1.0], atol=1e-13)


@settings(max_examples=200, deadline=None, derandomize=True)
@given(st.lists(st.integers(-6, 6), min_size=1, max_size=60), st.floats(0.0, 4.0))
def test_peaks_are_scipys(levels, prominence):
    from scipy.signal import find_peaks

    # Integer levels give flat tops and ties, the hard cases of a peak finder; scipy.signal's
    # find_peaks with a prominence is the reference (same peaks, same prominences).
    x = np.asarray(levels, dtype=float) / 2
    expected, props = find_peaks(x, prominence=prominence)
    got, prominences = peak_indices(x, prominence)
    np.testing.assert_array_equal(got, expected)
    np.testing.assert_array_equal(prominences, props["prominences"])


def test_extrema_of_a_noisy_fringe_pattern_are_the_same_as_with_scipy():
    from scipy.signal import find_peaks

    rng = np.random.default_rng(7)
    wl = np.linspace(400.0, 1000.0, 1201)
    T = 0.8 + 0.1 * np.cos(4 * np.pi * 2.2 * 700.0 / wl) + 0.002 * rng.normal(size=wl.size)
    _, _, kind = find_extrema(wl, T)
    peaks, _ = find_peaks(T, prominence=0.05)
    troughs, _ = find_peaks(-T, prominence=0.05)
    assert int(kind.sum()) == peaks.size and int((~kind).sum()) == troughs.size


@pytest.mark.parametrize("dimensions", [1, 2, 3, 5, 8])
def test_halton_points_are_scipys_unscrambled_sequence(dimensions):
    from scipy.stats import qmc

    # Halton (1960): radical inverses in the first primes; scipy's unscrambled Halton is the same
    # sequence from index 0.
    np.testing.assert_array_equal(halton(1000, dimensions, shift=False),
                                  qmc.Halton(dimensions, scramble=False).random(1000))


def test_shifted_halton_points_cover_the_box_evenly():
    from scipy.stats import qmc

    # The random shift (Cranley & Patterson 1976) keeps the evenness: the centred L2 discrepancy
    # stays well below that of as many random points (Hickernell 1998, scipy's qmc.discrepancy).
    points = halton(256, 3, seed=11)
    assert np.all((points >= 0) & (points < 1))
    random = np.random.default_rng(11).random((256, 3))
    assert qmc.discrepancy(points) < 0.2 * qmc.discrepancy(random)
    np.testing.assert_array_equal(points, halton(256, 3, seed=11))      # same seed, same points
    assert radical_inverse([6], 2).tolist() == [0.375]                  # 110₂ → 0.011₂


@pytest.mark.parametrize("dof", [1, 2, 3, 4, 5, 7, 10, 17, 30])
def test_chi2_tail_is_scipys(dof):
    from scipy.stats import chi2

    # The closed forms for whole degrees of freedom (Abramowitz & Stegun 26.4.4–26.4.5, from
    # memory) against scipy.stats.chi2.sf, from the bulk into the far tail.
    for x in np.concatenate([np.linspace(0.01, 4 * dof + 20, 60), [200.0, 600.0]]):
        expected = chi2.sf(x, dof)
        assert math.isclose(chi2_survival(x, dof), expected, rel_tol=1e-12, abs_tol=1e-300), (x, dof)
