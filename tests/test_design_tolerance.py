"""Monte Carlo yield of a design against closed forms and an independent library.

A single transparent film has the closed-form reflectance (O. S. Heavens, *Optical Properties of
Thin Solid Films*, Butterworths, 1955; Macleod, *Thin-Film Optical Filters*, ch. 2)

    R = (r1² + r2² + 2·r1·r2·cos 2δ) / (1 + r1²·r2² + 2·r1·r2·cos 2δ),   δ = 2π·n1·d/λ,

with the Fresnel coefficients r1 = (n0 − n1)/(n0 + n1) and r2 = (n1 − ns)/(n1 + ns). Solved for
cos 2δ it gives the thicknesses where R crosses a bound, hence the exact yield of normally or
uniformly distributed thickness errors. The Monte Carlo estimate must agree within four binomial
standard errors √(p(1 − p)/N) (common practice for checking a simulation against an exact value).
Layer sensitivities are checked against R computed with ``tmm`` (S. J. Byrnes, arXiv:1603.02720).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import tmm
from filmoptic.design.tolerance import parse_error, tolerance_analysis
from filmoptic.errors import FilmopticError

N0, N1, NS, WL = 1.0, 1.38, 1.52, 550.0
R1, R2 = (N0 - N1) / (N0 + N1), (N1 - NS) / (N1 + NS)
QUARTER = WL / (4 * N1)


def thickness_at(R):
    """The thickness under the quarter wave (first branch) where the film reflects R."""
    a, b, e = R1**2 + R2**2, 2 * R1 * R2, 1 + R1**2 * R2**2
    delta = math.acos((a - R * e) / (b * (R - 1))) / 2
    return delta * WL / (2 * math.pi * N1)


def within_binomial(estimate, exact, samples):
    return abs(estimate - exact) <= 4 * math.sqrt(exact * (1 - exact) / samples) + 1e-12


BOUND = 0.01264                     # R ≤ 1.264 % around the minimum of 1.26 % (quarter wave)
HALF_WIDTH = QUARTER - thickness_at(BOUND)
SAMPLES = 20000


def test_yield_of_normal_errors_matches_the_closed_form():
    sigma = 0.02
    exact = math.erf(HALF_WIDTH / (sigma * QUARTER * math.sqrt(2)))   # P(|error| ≤ half width)
    t = tolerance_analysis(f"n={N1} {QUARTER!r}nm / n={NS}", [f"R 550nm <= {100 * BOUND}%"], random="2%",
                           samples=SAMPLES, ambient="n=1", seed=3)
    assert 0.3 < exact < 0.9
    assert within_binomial(t.yield_fraction, exact, SAMPLES)
    assert t.yield_stderr == pytest.approx(math.sqrt(t.yield_fraction * (1 - t.yield_fraction) / SAMPLES))


def test_yield_of_uniform_errors_matches_the_closed_form():
    half = 0.03                      # errors spread evenly over ±3 %
    exact = HALF_WIDTH / (half * QUARTER)
    assert 0.3 < exact < 0.9
    t = tolerance_analysis(f"n={N1} {QUARTER!r}nm / n={NS}", [f"R 550nm <= {100 * BOUND}%"], random="3%",
                           uniform=True, samples=SAMPLES, ambient="n=1", seed=4)
    assert within_binomial(t.yield_fraction, exact, SAMPLES)
    assert t.distribution == "uniform"


def test_systematic_error_moves_layers_of_one_material_together():
    # Two layers of one material with only a shared (rate) error act as one film of their sum.
    sigma = 0.02
    exact = math.erf(HALF_WIDTH / (sigma * QUARTER * math.sqrt(2)))
    stack = f"n={N1} 40nm / n={N1} {QUARTER - 40!r}nm / n={NS}"
    t = tolerance_analysis(stack, [f"R 550nm <= {100 * BOUND}%"], random="0%", systematic="2%",
                           samples=SAMPLES, ambient="n=1", seed=5)
    assert within_binomial(t.yield_fraction, exact, SAMPLES)
    # The same errors drawn independently per layer spread the total less: a higher yield.
    independent = tolerance_analysis(stack, [f"R 550nm <= {100 * BOUND}%"], random="2%",
                                     samples=SAMPLES, ambient="n=1", seed=5)
    assert independent.yield_fraction > t.yield_fraction + 0.05


def test_percentiles_follow_the_thickness_quantiles():
    # On a monotone branch (0.8 of a quarter wave, R falling with d) the 5th, 50th and 95th
    # percentiles of R are R at the 95th, 50th and 5th percentiles of d: d0·(1 ± 1.6449σ)
    # (standard normal quantile 1.6449; common practice). Compared in units of σ.
    d0, sigma = 0.8 * QUARTER, 0.02
    t = tolerance_analysis(f"n={N1} {d0!r}nm / n={NS}", ["R 550nm <= 5%"], random="2%", samples=SAMPLES,
                           ambient="n=1", seed=6)
    spread = t.goals[0]
    z = [(thickness_at(r) / d0 - 1) / sigma for r in (spread.p95, spread.p50, spread.p5)]
    np.testing.assert_allclose(z, [-1.6449, 0.0, 1.6449], atol=0.06)
    assert spread.met_share == pytest.approx(t.yield_fraction)


def test_layer_sensitivity_matches_tmm_and_names_the_critical_layer():
    d = [60.0, 90.0]
    stack = f"n=2.35 {d[0]}nm / n=1.46 {d[1]}nm / n=1.52"
    t = tolerance_analysis(stack, ["R 550nm <= 50%"], random="2%", samples=10, ambient="n=1")

    def R(thicknesses):
        return tmm.coh_tmm("s", [1.0, 2.35, 1.46, 1.52], [np.inf, *thicknesses, np.inf], 0.0, WL)["R"]

    expected = []
    for j in range(2):
        up, down = list(d), list(d)
        up[j] *= 1.02
        down[j] *= 0.98
        expected.append(math.sqrt(0.5 * ((R(up) - R(d)) ** 2 + (R(down) - R(d)) ** 2)) / 0.01)
    np.testing.assert_allclose([s.effect for s in t.layers], expected, rtol=1e-9)
    np.testing.assert_allclose([s.sigma_nm for s in t.layers], [1.2, 1.8], rtol=1e-12)
    assert t.critical_layer == 1 + int(np.argmax(expected))


def test_same_seed_same_samples_and_chunks_do_not_matter():
    stack = f"n={N1} {QUARTER!r}nm / n={NS}"
    a = tolerance_analysis(stack, ["R 550nm <= 1.264%"], random="2%", samples=5000, ambient="n=1", seed=9)
    b = tolerance_analysis(stack, ["R 550nm <= 1.264%"], random="2%", samples=5000, ambient="n=1", seed=9)
    assert a == b


@pytest.mark.parametrize("text, relative, value", [("2%", True, 0.02), ("1nm", False, 1.0), ("5 Å", False, 0.5)])
def test_error_notation(text, relative, value):
    spec = parse_error(text)
    assert spec.relative is relative and spec.value == pytest.approx(value)


@pytest.mark.parametrize("call, fragment", [
    (lambda: parse_error("2"), "'2%'"),
    (lambda: parse_error("-1nm"), "negative"),
    (lambda: parse_error("80%"), "at most 50%"),
    (lambda: tolerance_analysis("TiO2 ? / glass", ["R 550nm <= 1%"]), "unknown values"),
    (lambda: tolerance_analysis("glass 2mm", ["R 550nm <= 1%"]), "no thin layers"),
    (lambda: tolerance_analysis("TiO2 60nm / glass", ["R 550nm <= 1%"], samples=0), "samples"),
])
def test_bad_tolerance_requests_are_one_line_errors(call, fragment):
    with pytest.raises(FilmopticError) as info:
        call()
    assert fragment in str(info.value) and "\n" not in str(info.value)
