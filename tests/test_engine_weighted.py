"""Reductions inside the engine (luminous values, XYZ of a grid without its spectra), one
polarisation at normal incidence, and the memory of a large grid."""

from __future__ import annotations

import tracemalloc

import numpy as np
import pytest

from filmoptic import colorimetry as cm
from filmoptic.engine import CHANNELS, compute, compute_weighted
from filmoptic.errors import FilmopticError

WL = cm.default_wavelengths()

CASES = [
    # stack, free thicknesses (batch, K), angle(s), polarisation, reverse
    ("SiO2 ? / Ti ? / glass 4mm", np.array([[0.0, 5.0], [90.0, 8.0], [200.0, 12.0]]), 0.0, "unpolarized", False),
    ("SiO2 ? / Ti ? / glass 4mm", np.array([[90.0, 8.0], [10.0, 3.0]]), np.array([0.0, 30.0, 60.0]), "p", True),
    ("TiO2 ? / Ti", np.linspace(0, 250, 37)[:, None], 0.0, "unpolarized", False),
    ("TiO2 ? / Ti", np.linspace(0, 250, 37)[:, None], 45.0, "s", False),
    ("[TiO2 ? / SiO2 92nm]x3 / glass 1mm / Al 2nm / glass 2mm", np.linspace(20, 80, 9)[:, None], 20.0, "unpolarized", False),
    ("Cr 8nm / glass 4mm", None, np.array([[0.0, 10.0], [20.0, 70.0]]), "unpolarized", True),
]


@pytest.mark.parametrize("stack, thickness, angle, pol, reverse", CASES)
def test_weighted_sums_equal_the_sums_of_the_spectra(stack, thickness, angle, pol, reverse):
    # The reduction is Σλ channel(λ)·w(λ) of compute()'s own spectra, chunk by chunk: equal to
    # rounding, for every channel, with one weight or several per wavelength.
    full = compute(stack, WL, angle_deg=angle, polarization=pol, reverse=reverse, thickness_nm=thickness)
    weights = np.column_stack([cm.luminous_weights(WL, "A"), cm.tristimulus_weights(WL, "D65", 10)])
    part = compute_weighted(stack, WL, weights, angle_deg=angle, polarization=pol, reverse=reverse,
                            thickness_nm=thickness)
    for channel in CHANNELS:
        expected = getattr(full, channel) @ weights
        np.testing.assert_allclose(getattr(part, channel), expected, rtol=1e-14, atol=1e-13)
    assert part.transmission == full.transmission
    single = compute_weighted(stack, WL, weights[:, 0], angle_deg=angle, polarization=pol, reverse=reverse,
                              thickness_nm=thickness, channels=("T",))
    np.testing.assert_allclose(single.T, full.T @ weights[:, 0], rtol=1e-14, atol=1e-15)
    assert single.R is None and single.T.shape == full.T.shape[:-1]


def test_weighted_sums_are_the_same_across_wavelength_chunks(monkeypatch):
    # A tiny chunk budget splits the wavelengths; the partial sums must add up to the same.
    import filmoptic.engine as engine

    weights = cm.tristimulus_weights(WL)
    whole = compute_weighted("SiO2 ? / Ti ? / glass 4mm", WL, weights, thickness_nm=[[90.0, 8.0], [0.0, 3.0]])
    monkeypatch.setattr(engine, "CHUNK_BYTES", 20_000)
    split = compute_weighted("SiO2 ? / Ti ? / glass 4mm", WL, weights, thickness_nm=[[90.0, 8.0], [0.0, 3.0]])
    for channel in CHANNELS:
        np.testing.assert_allclose(getattr(split, channel), getattr(whole, channel), rtol=1e-14, atol=1e-13)


@pytest.mark.parametrize("stack", ["SiO2 95nm / Ti 8nm / glass 4mm", "TiO2 60nm / Ti", "Au 20nm / SiO2 1mm / Si"])
def test_normal_incidence_needs_one_polarisation(stack):
    # At normal incidence s and p are the same wave (their Fresnel coefficients differ only in
    # sign: Born & Wolf, Principles of Optics, §1.5.2), so unpolarised light is either of them.
    u = compute(stack, WL)
    for pol in ("s", "p"):
        other = compute(stack, WL, polarization=pol)
        for channel in CHANNELS:
            np.testing.assert_allclose(getattr(u, channel), getattr(other, channel), rtol=0, atol=1e-15)


def test_colour_grid_equals_luminous_and_colour_of_the_spectra():
    # The luminous values (ISO 9050) and colours of a 2-D grid, without spectra, against the same
    # computed from compute()'s spectra with luminous() and colour_of().
    ti, sio2 = np.meshgrid([0.0, 6.0, 9.0], [0.0, 80.0, 160.0], indexing="ij")
    X = np.stack([sio2, ti], axis=-1)
    grid = cm.colour_grid("SiO2 ? / Ti ? / glass 4mm", X, illuminant="F11", observer=10)
    full = compute("SiO2 ? / Ti ? / glass 4mm", WL, thickness_nm=X)
    np.testing.assert_allclose(grid.luminous.T, cm.luminous(WL, full.T, "F11"), rtol=0, atol=1e-15)
    np.testing.assert_allclose(grid.luminous.R, cm.luminous(WL, full.R, "F11"), rtol=0, atol=1e-15)
    np.testing.assert_allclose(grid.luminous.A_substrate, cm.luminous(WL, full.A_substrate, "F11"), rtol=0, atol=1e-15)
    reflected = cm.colour_of(WL, full.R, "F11", 10)
    np.testing.assert_allclose(grid.reflected().Lab, reflected.Lab, rtol=0, atol=1e-12)
    np.testing.assert_array_equal(grid.transmitted().hex, cm.colour_of(WL, full.T, "F11", 10).hex)
    assert grid.luminous.R_reverse is None and grid.illuminant == "F11"
    opaque = cm.colour_grid("TiO2 ? / Ti", [[10.0], [60.0]])
    assert opaque.XYZ_T is None and opaque.transmitted() is None and np.all(opaque.luminous.T == 0)


def test_a_500_by_500_map_of_luminous_T_stays_small():
    # A memory bound, not a timing test: 250 000 thickness pairs × 81 wavelengths would be
    # 162 MB per spectrum channel (about 0.8 GB for R, T, A and its split); reduced inside the
    # engine, the map needs its own 2 MB per channel plus chunks.
    sio2, ti = np.meshgrid(np.linspace(0, 200, 500), np.linspace(0, 20, 500), indexing="ij")
    X = np.stack([sio2, ti], axis=-1)
    cm.colour_grid("SiO2 ? / Ti ? / glass 4mm", X[:2, :2])          # tables and weights cached first
    tracemalloc.start()
    try:
        grid = cm.colour_grid("SiO2 ? / Ti ? / glass 4mm", X, colours=False)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert grid.luminous.T.shape == (500, 500)
    assert peak < 24 * 2**20, peak
    # Spot checks against the whole-spectrum path.
    for i, j in [(0, 0), (250, 400), (499, 17)]:
        full = compute("SiO2 ? / Ti ? / glass 4mm", WL, thickness_nm=X[i, j])
        assert grid.luminous.T[i, j] == pytest.approx(cm.luminous(WL, full.T), abs=1e-15)


def test_a_long_colour_sweep_holds_no_spectra():
    # 200 000 thicknesses: colours and luminous values in memory of the order of the answer
    # (2 × 3 XYZ + 4 luminous values per thickness), not of the spectra (5 × 81 per thickness).
    cm.colour_sweep("TiO2 ? / Ti", np.linspace(0, 250, 10))
    d = np.linspace(0, 250, 200_000)
    tracemalloc.start()
    try:
        sweep = cm.colour_sweep("TiO2 ? / Ti", d)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < 100 * 2**20, peak            # the spectra alone would take 648 MB
    assert sweep.reflected.Lab.shape == (200_000, 3)


def test_weights_must_fit_the_grid():
    with pytest.raises(FilmopticError, match="one row per wavelength"):
        compute_weighted("Cr 8nm / glass 4mm", WL, np.ones(WL.size - 1))
    with pytest.raises(FilmopticError, match="channels"):
        compute_weighted("Cr 8nm / glass 4mm", WL, np.ones(WL.size), channels=("Q",))
    with pytest.raises(FilmopticError, match="finite"):
        compute_weighted("Cr 8nm / glass 4mm", WL, np.full(WL.size, np.nan))


def test_design_scores_from_sums_equal_scores_from_spectra():
    # Luminous and colour goals are scored from sums reduced inside the engine; the same goals
    # scored from whole spectra (goals.samples_of) must give the same numbers.
    from filmoptic.design.evaluate import Evaluator
    from filmoptic.design.goals import parse_goals, samples_of
    from filmoptic.stack import parse_stack

    goals = parse_goals(["luminous-T = 30%", "reflected Lab = 62,0,0 within 2", "luminous-R <= 40% @0..40deg"])
    template = parse_stack("SiO2 ? / Cr ? / TiO2 ? / glass 4mm")
    ev = Evaluator(template, goals)
    X = np.array([[100.0, 8.0, 50.0], [171.7, 7.9, 110.8], [20.0, 3.0, 0.0]])
    spectra = ev.spectra(X)
    expected = []
    for goal, (key, index, own) in zip(goals, ev._plan):
        R, T, A = spectra[key]
        expected.append(samples_of(goal, {"R": R, "T": T, "A": A}[goal.quantity][..., index], own))
    for got, want in zip(ev.goal_samples(X), expected):
        np.testing.assert_allclose(got, want, rtol=0, atol=1e-12)


def test_a_monte_carlo_of_luminous_and_colour_goals_stays_small():
    # 20 000 simulated runs of a three-layer design: memory bounded by the engine's chunks and the
    # per-run answers, not by 20 000 spectra (about 65 MB per channel on the 5 nm grid).
    from filmoptic.design.tolerance import tolerance_analysis

    goals = ["luminous-T = 30% within 2%", "reflected Lab = 62,0,0 within 3"]
    stack = "SiO2 171.7nm / Cr 7.86nm / TiO2 110.8nm / glass 4mm"
    tolerance_analysis(stack, goals, samples=50)
    tracemalloc.start()
    try:
        result = tolerance_analysis(stack, goals, samples=20_000, random="2%", seed=3)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert 0 < result.yield_fraction < 1
    assert peak < 16 * 2**20, peak            # the same run scored from spectra peaks near 22 MB
