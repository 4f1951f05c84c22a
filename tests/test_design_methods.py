"""Designing for goals, against the outside world.

* Closed-form designs of thin-film optics (H. A. Macleod, *Thin-Film Optical Filters*, 4th ed.,
  CRC Press, 2010): the single quarter-wave antireflection layer (ch. 3–4), the two-layer
  V-coat (ch. 4) and the quarter-wave high reflector (ch. 5).
* A broadband antireflection coating of a high- and a low-index oxide on glass reaching a mean
  reflectance of 0.5 % over the visible (common practice for visible broadband AR coatings).
* The pieces: the batched Levenberg–Marquardt refinement against ``scipy.optimize.least_squares``
  on the same problem, and the needle derivative against an insertion computed with ``tmm``
  (S. J. Byrnes, arXiv:1603.02720, 2016).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import tmm
from filmoptic.design import check_design, design_coating
from filmoptic.design.evaluate import Evaluator
from filmoptic.design.goals import parse_goals
from filmoptic.design.layout import layout_from_stack
from filmoptic.design.needle import needle_scan
from filmoptic.design.refine import refine
from filmoptic.errors import FilmopticError
from filmoptic.materials import get_material, parse_material
from filmoptic.stack import parse_stack

# ---------------------------------------------------------------------------------------------
# Closed forms
# ---------------------------------------------------------------------------------------------


def test_single_layer_antireflection_is_the_quarter_wave():
    # Macleod, Thin-Film Optical Filters, ch. 3–4: a single layer of index n1 on ns reflects least
    # at the design wavelength when it is a quarter wave, R = ((n0·ns − n1²)/(n0·ns + n1²))².
    # MgF2 (Franta 2017 table) on fused silica (Malitson 1965), in air (Ciddor 1996), at 550 nm.
    wl = 550.0
    n0 = get_material("air").nk([wl])[0].real
    n1 = get_material("MgF2").nk([wl])[0].real
    ns = get_material("fused-silica").nk([wl])[0].real
    result = design_coating(["R 550nm <= 0%"], "MgF2 ? / fused-silica", tries=100, starts=2)
    assert result.goals[0].achieved == pytest.approx(((n0 * ns - n1**2) / (n0 * ns + n1**2)) ** 2, rel=1e-9)
    assert result.layers[0].thickness_nm == pytest.approx(wl / (4 * n1), abs=2e-3)
    assert result.layers[0].quarter_waves == pytest.approx(1.0, abs=2e-5)


def v_coat_thicknesses(y0, y1, y2, ys, wl):
    """Both zero-reflectance solutions (d1, d2) of a two-layer coating (layer 1 faces the light).

    Macleod ch. 4 (two-layer antireflection coatings, from memory; re-derived from the
    characteristic matrix of ch. 2): tan²δ1 = (ys − y0)(y0·ys − y2²)·y1² /
    [(y1² − y0·ys)(y1²·ys − y0·y2²)], tan²δ2 = (ys − y0)(y1² − y0·ys)·y2² /
    [(y0·ys − y2²)(y1²·ys − y0·y2²)], with tan δ1 and tan δ2 of opposite sign here.
    """
    t1 = (ys - y0) * (y0 * ys - y2**2) * y1**2 / ((y1**2 - y0 * ys) * (y1**2 * ys - y0 * y2**2))
    t2 = (ys - y0) * (y1**2 - y0 * ys) * y2**2 / ((y0 * ys - y2**2) * (y1**2 * ys - y0 * y2**2))
    a1, a2 = math.atan(math.sqrt(t1)), math.atan(math.sqrt(t2))
    to_nm = lambda delta, n: delta * wl / (2 * math.pi * n)  # noqa: E731 - phase → thickness
    return [(to_nm(a1, y1), to_nm(math.pi - a2, y2)), (to_nm(math.pi - a1, y1), to_nm(a2, y2))]


def test_v_coat_formula_gives_zero_reflectance_in_tmm():
    # The formula itself, checked with the independent tmm package before it judges a design.
    for d1, d2 in v_coat_thicknesses(1.0, 1.38, 2.35, 1.52, 550.0):
        R = tmm.coh_tmm("s", [1.0, 1.38, 2.35, 1.52], [np.inf, d1, d2, np.inf], 0.0, 550.0)["R"]
        assert R < 1e-28


def test_two_layer_v_coat_reaches_zero_at_the_analytic_thicknesses():
    result = design_coating(["R 550nm <= 0%"], "n=1.38 ? / n=2.35 ? / n=1.52", ambient="n=1",
                            tries=200, starts=4)
    assert result.goals[0].achieved < 1e-9
    found = np.array([layer.thickness_nm for layer in result.layers])
    distances = [np.max(np.abs(found - np.array(s))) for s in v_coat_thicknesses(1.0, 1.38, 2.35, 1.52, 550.0)]
    assert min(distances) < 2e-3


def qw_mirror_reflectance(nH, nL, ns, pairs):
    # Macleod ch. 5: (HL)^N H on ns in air has Y = (nH/nL)^(2N)·nH²/ns, R = ((1 − Y)/(1 + Y))².
    Y = (nH / nL) ** (2 * pairs) * nH**2 / ns
    return ((1 - Y) / (1 + Y)) ** 2


def test_best_mirror_at_one_wavelength_is_the_quarter_wave_stack():
    # Seven free layers, each within one half wave: the optimum of R at 1064 nm is the
    # quarter-wave stack, whose peak reflectance has the closed form above.
    nH, nL, ns, wl = 2.35, 1.46, 1.52, 1064.0
    text = " / ".join([f"n={nH} 20..220nm / n={nL} 40..350nm"] * 3 + [f"n={nH} 20..220nm", f"n={ns}"])
    result = design_coating(["R 1064nm >= 100%"], text, ambient="n=1", tries=1000, starts=4)
    assert result.goals[0].achieved == pytest.approx(qw_mirror_reflectance(nH, nL, ns, 3), abs=1e-9)
    quarter = [wl / (4 * (nH if i % 2 == 0 else nL)) for i in range(7)]
    np.testing.assert_allclose([layer.thickness_nm for layer in result.layers], quarter, atol=0.01)


def test_needle_growth_from_nothing_builds_the_quarter_wave_mirror():
    # From two materials and a substrate alone, growth to nine layers reaches the (HL)^4 H
    # quarter-wave stack (Macleod ch. 5), the best nine-layer mirror at one wavelength.
    result = design_coating(["R 600nm >= 100%"], materials=["n=2.35", "n=1.46"], on="n=1.52",
                            ambient="n=1", max_layers=9, tries=400, starts=4)
    assert len(result.layers) == 9
    assert result.goals[0].achieved == pytest.approx(qw_mirror_reflectance(2.35, 1.46, 1.52, 4), abs=1e-9)
    assert [layer.material for layer in result.layers] == ["n=2.35", "n=1.46"] * 4 + ["n=2.35"]
    assert any("growth" in note for note in result.notes)


def test_broadband_antireflection_on_glass_reaches_half_a_percent():
    # Common practice for visible broadband AR coatings: a few layers of a high- and a
    # low-index oxide bring the mean reflectance of a glass surface over 420–680 nm to about
    # 0.5 % or below (bare glass: about 4.2 %).
    result = design_coating(["mean R 420..680nm <= 0.5%"], materials=["TiO2", "SiO2"], on="glass",
                            max_layers=6, tries=1000, starts=4, step_nm=10.0)
    assert result.goals[0].met and result.goals[0].achieved <= 0.005
    assert all(layer.thickness_nm >= 10.0 for layer in result.layers)
    # The reported value is that of the printed stack, as tmm computes it.
    stack = parse_stack(result.stack)
    wl = np.arange(420.0, 681.0, 10.0)
    indices = [np.full(wl.size, 1.0 + 0j) * stack.ambient.nk(wl)] + \
              [layer.material.nk(wl) for layer in stack.layers] + [stack.substrate.material.nk(wl)]
    d = [np.inf] + [layer.thickness_nm for layer in stack.layers] + [np.inf]
    R = [tmm.coh_tmm("s", [n[i] for n in indices], d, 0.0, lam)["R"] for i, lam in enumerate(wl)]
    assert result.goals[0].achieved == pytest.approx(np.mean(R), abs=1e-10)


# ---------------------------------------------------------------------------------------------
# The pieces against independent code
# ---------------------------------------------------------------------------------------------


def test_refinement_agrees_with_scipy_least_squares():
    # The same residuals minimised by scipy's trust-region reflective least squares (Branch,
    # Coleman & Li, SIAM J. Sci. Comput. 21, 1, 1999) from the same start reach the same minimum.
    from scipy.optimize import least_squares

    goals = parse_goals(["R 450..650nm <= 0%"])
    layout = layout_from_stack(parse_stack("TiO2 0..300nm / SiO2 0..300nm / TiO2 0..300nm / glass"))
    evaluator = Evaluator.for_layout(layout, goals, step_nm=25.0)
    # A start in the basin of one minimum (found first), so that both methods aim at the same one.
    basin = refine(evaluator.residuals, np.array([[120.0, 80.0, 20.0]]), layout.lower(), layout.upper()).x
    x0 = basin + np.array([[1.5, -1.0, 0.8]])
    ours = refine(evaluator.residuals, x0, layout.lower(), layout.upper(), max_iterations=200)
    theirs = least_squares(lambda x: evaluator.residuals(x[None, :])[0], x0[0], bounds=(layout.lower(), layout.upper()),
                           xtol=1e-12, ftol=1e-12, gtol=1e-12)
    assert ours.sum_of_squares[0] == pytest.approx(2 * theirs.cost, rel=1e-7)
    np.testing.assert_allclose(ours.x[0], theirs.x, atol=1e-3)


def test_refinement_keeps_the_bounds_and_the_total():
    goals = parse_goals(["R 450..650nm <= 0%"])
    layout = layout_from_stack(parse_stack("TiO2 30..60nm / SiO2 0..300nm / TiO2 0..300nm / glass"))
    evaluator = Evaluator.for_layout(layout, goals, step_nm=25.0)
    out = refine(evaluator.residuals, np.array([[40.0, 100.0, 100.0], [59.0, 250.0, 10.0]]), layout.lower(),
                 layout.upper(), counts=layout.counts(), budget=150.0)
    assert np.all(out.x >= layout.lower() - 1e-12) and np.all(out.x <= layout.upper() + 1e-12)
    assert np.all(out.x.sum(axis=1) <= 150.0 + 1e-9)


def tmm_sum_of_squares(n_list, d_list, wavelengths):
    """Σ of (R + 1e-5)/0.01 squared over the sampled wavelengths, divided by their number:
    the residuals of the goal 'R … <= 0%' (see filmoptic.design.goals), with R from tmm."""
    R = np.array([tmm.coh_tmm("s", n_list, d_list, 0.0, lam)["R"] for lam in wavelengths])
    return float(np.mean(((R + 1e-5) / 0.01) ** 2))


def test_needle_derivative_matches_an_insertion_computed_with_tmm():
    goals = parse_goals(["R 500..600nm <= 0%"])
    layout = layout_from_stack(parse_stack("n=1.46 ? / n=2.35 ? / n=1.52", ambient="n=1")).with_values([90.0, 60.0])
    wl = [500.0, 550.0, 600.0]
    F0 = tmm_sum_of_squares([1.0, 1.46, 2.35, 1.52], [np.inf, 90.0, 60.0, np.inf], wl)
    candidates = needle_scan(layout, goals, [parse_material("n=2.35"), parse_material("n=1.46")], step_nm=50.0)
    checked = 0
    for c in candidates:
        if c.index != 0 or not 1.0 < c.position_nm < 89.0:
            continue
        delta = 1e-4
        z = c.position_nm
        F = tmm_sum_of_squares([1.0, 1.46, 2.35, 1.46, 2.35, 1.52], [np.inf, z, delta, 90.0 - z, 60.0, np.inf], wl)
        assert c.derivative == pytest.approx((F - F0) / delta, rel=2e-3, abs=1e-6)
        checked += 1
    assert checked >= 10


# ---------------------------------------------------------------------------------------------
# Manufacturable, repeatable, interruptible
# ---------------------------------------------------------------------------------------------

AR = dict(materials=["TiO2", "SiO2"], on="glass 2mm", max_layers=6, tries=300, starts=3, step_nm=20.0)


def test_minimum_layer_and_total_thickness_are_respected():
    result = design_coating(["R 450..650nm <= 0.5%"], min_layer_nm=25.0, max_total_nm=260.0, **AR)
    thin = [layer.thickness_nm for layer in result.layers]
    assert thin and min(thin) >= 25.0 and sum(thin) <= 260.0 + 1e-6
    assert len(thin) <= 6


def test_same_seed_same_design():
    goals = ["R 450..650nm <= 0.5%"]
    a = design_coating(goals, seed=7, **AR)
    b = design_coating(goals, seed=7, **AR)
    assert a.stack == b.stack and a.merit == b.merit


def test_interrupt_returns_the_best_design_so_far():
    calls = []

    def stop_midway(done, total):
        calls.append(done)
        if done > 400:
            raise KeyboardInterrupt

    result = design_coating(["R 450..650nm <= 0.5%"], progress=stop_midway, **AR)
    assert result.interrupted and any("interrupted" in n for n in result.notes)
    # The design printed is a real stack that scores as reported.
    checked = check_design(result.stack, ["R 450..650nm <= 0.5%"], step_nm=20.0)
    assert checked.merit == pytest.approx(result.merit, rel=1e-12)
    assert len(calls) > 1


def test_fixed_layers_stay_and_repeat_groups_share_their_unknown():
    result = design_coating(["R 500..600nm <= 1%"], "[TiO2 20..200nm / SiO2 20..200nm]x2 / Al2O3 50nm / glass",
                            tries=200, starts=2, step_nm=20.0)
    t = [layer.thickness_nm for layer in result.layers]
    assert t[0] == t[2] and t[1] == t[3]
    assert result.layers[4].thickness_nm == 50.0 and result.layers[4].fixed
    assert not result.layers[0].fixed


@pytest.mark.parametrize("kwargs, fragment", [
    (dict(stack=None), "give a stack"),
    (dict(stack="TiO2 60nm / glass"), "nothing to design"),
    (dict(stack="cauchy(?,0,0) 50nm / glass"), "design finds thicknesses"),
    (dict(stack=None, on="glass"), "needs the materials"),
    (dict(stack=None, on="glass", materials=["TiO2", "TiO2"]), "listed twice"),
    (dict(stack="TiO2 ? / glass", max_total_nm=0.0), "positive"),
    (dict(stack="TiO2 50..90nm / SiO2 50..90nm / glass", max_total_nm=80.0), "exceed"),
    (dict(stack="TiO2 ? / glass", on="glass"), "not both"),
])
def test_bad_requests_are_one_line_errors(kwargs, fragment):
    stack = kwargs.pop("stack")
    with pytest.raises(FilmopticError) as info:
        design_coating(["R 550nm <= 1%"], stack, **kwargs)
    assert fragment in str(info.value) and "\n" not in str(info.value)
