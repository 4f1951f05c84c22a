"""Physical invariants, grid shapes, memory bound and input errors of the engine.

Invariants (common practice; Born & Wolf, *Principles of Optics* §1.5–1.6; reciprocity of
transmittance: Macleod, *Thin-Film Optical Filters*, ch. 2): R + T + A = 1, each in [0, 1]; a
stack of lossless media absorbs nothing; transmittance is the same from either side when both
outer media are transparent.
"""

from __future__ import annotations

import math
import re
import tracemalloc

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from filmoptic.engine import compute, compute_indices
from filmoptic.errors import FilmopticError, WavelengthRangeError
from filmoptic.stack import parse_stack

SETTINGS = settings(max_examples=150, deadline=None, derandomize=True)
MATERIALS = ["Ti", "Ag", "Cr", "TiO2", "SiO2", "Si", "n=2.1", "n=1.38", "n=3+2j"]
WL = np.linspace(400.0, 1000.0, 13)


@st.composite
def stack_text(draw, lossless=False, thick_substrate=None, clear_half_space=False):
    pool = ["n=2.35", "n=1.46", "n=1.38", "n=3.1", "n=1.9"] if lossless else MATERIALS
    layers = [f"{draw(st.sampled_from(pool))} {draw(st.floats(0.0, 400.0))!r}nm"
              for _ in range(draw(st.integers(0, 8)))]
    thick = draw(st.booleans()) if thick_substrate is None else thick_substrate
    substrate = draw(st.sampled_from(["n=1.52", "n=1.75", "glass" if not lossless else "n=1.6"]))
    if thick:
        substrate += f" {draw(st.floats(0.1, 6.0))!r}mm"
    elif clear_half_space and substrate == "glass":
        # The default glass absorbs (its iron, k ~ 1e-6); as an unbounded medium that breaks the
        # premise of reciprocity, so the index-only glass stands in for it there.
        substrate = "glass:Rubin-1985-clear"
    return " / ".join(layers + [substrate])


@SETTINGS
@given(stack_text(), st.floats(0.0, 85.0), st.sampled_from(["s", "p", "unpolarized"]))
def test_energy_balance_and_ranges(text, angle, pol):
    result = compute(parse_stack(text), WL, angle_deg=angle, polarization=pol)
    for values in (result.R, result.T, result.A):
        assert np.all(np.isfinite(values))
        assert np.all(values >= -1e-12) and np.all(values <= 1 + 1e-12)
    # A is 1 − R − T; the clip to [0, 1] must never have been needed beyond rounding.
    np.testing.assert_allclose(result.R + result.T + result.A, 1.0, atol=1e-12)


@SETTINGS
@given(stack_text(lossless=True), st.floats(0.0, 85.0), st.sampled_from(["s", "p"]))
def test_lossless_stacks_absorb_nothing(text, angle, pol):
    result = compute(parse_stack(text, ambient="n=1"), WL, angle_deg=angle, polarization=pol)
    np.testing.assert_allclose(result.R + result.T, 1.0, atol=1e-12)


@SETTINGS
@given(stack_text(clear_half_space=True), st.floats(0.0, 80.0), st.sampled_from(["s", "p"]))
def test_transmittance_is_the_same_from_both_sides(text, angle, pol):
    # Reciprocity: with transparent ambient and substrate, T(front) = T(back) for the same
    # ray, i.e. at the angle Snell's law gives on the other side.
    stack = parse_stack(text, ambient="n=1")
    front = compute(stack, WL, angle_deg=angle, polarization=pol)
    if stack.substrate.thickness_nm is None:
        n_back = stack.substrate.material.nk(WL).real
        back_angles = np.degrees(np.arcsin(np.sin(np.radians(angle)) / n_back))
        back = np.array([compute(stack, [w], angle_deg=a, polarization=pol, reverse=True).T[0]
                         for w, a in zip(WL, back_angles)])
    else:
        back = compute(stack, WL, angle_deg=angle, polarization=pol, reverse=True).T
    np.testing.assert_allclose(front.T, back, atol=1e-12)


def test_reverse_equals_the_reversed_stack():
    # Self-consistency of two entry points (reverse light is checked against tmm in
    # test_engine_tmm.py); the physics is in the last assertion.
    stack = parse_stack("Cr 10nm / TiO2 50nm / glass 3mm")
    a = compute(stack, WL, reverse=True, angle_deg=20.0)
    b = compute(stack.reversed(), WL, angle_deg=20.0)
    np.testing.assert_allclose(a.R, b.R, atol=1e-15)
    np.testing.assert_allclose(a.T, b.T, atol=1e-15)
    # Seen from the glass side a metal film reflects less: part of the light is absorbed
    # before it reaches the metal's best-reflecting face (common practice for semi-mirrors).
    front = compute(stack, WL, angle_deg=20.0)
    assert np.all(a.R < front.R)


def test_zero_thickness_layer_is_absent():
    # A layer of zero thickness has the unit characteristic matrix (Macleod, Thin-Film Optical
    # Filters, ch. 2): the stack is the bare substrate.
    with_zero = compute(parse_stack("Ti 0nm / TiO2 0nm / glass 2mm"), WL)
    bare = compute(parse_stack("glass 2mm"), WL)
    np.testing.assert_allclose(with_zero.R, bare.R, atol=1e-15)
    np.testing.assert_allclose(with_zero.T, bare.T, atol=1e-15)


def test_grid_shapes_follow_the_contract():
    stack = parse_stack("TiO2 ? / SiO2 ? / glass")
    result = compute(stack, WL, thickness_nm=np.full((2, 5, 2), 50.0), angle_deg=[[0.0, 10.0, 20.0]])
    assert result.R.shape == (2, 5, 1, 3, WL.size)
    assert result.T.shape == result.A.shape == result.R.shape
    scalar = compute(parse_stack("TiO2 50nm / glass"), 550.0)
    assert scalar.R.shape == (1,) and isinstance(scalar.angle_deg, float)
    # A batch without free thicknesses repeats the one answer; an empty batch is empty.
    fixed = compute(parse_stack("TiO2 50nm / glass"), WL, thickness_nm=np.zeros((3, 0)))
    assert fixed.R.shape == (3, WL.size)
    np.testing.assert_array_equal(fixed.R[2], compute(parse_stack("TiO2 50nm / glass"), WL).R)
    assert compute(stack, WL, thickness_nm=np.zeros((0, 2))).R.shape == (0, WL.size)


def test_long_stacks_stay_finite():
    # 10 000 layers: the running products are rescaled, nothing overflows.
    result = compute(parse_stack("[n=2.35 58nm / n=1.46 94nm]x5000 / n=1.52"), WL)
    assert np.all(np.isfinite(result.R)) and np.all(np.isfinite(result.T))
    np.testing.assert_allclose(result.R + result.T, 1.0, atol=1e-9)


def test_ten_million_point_sweep_stays_under_one_gibibyte():
    # A memory bound, not a timing test: 25 000 thicknesses × 401 wavelengths = 10⁷ points,
    # chunked; the results alone take 3 × 80 MB.
    stack = parse_stack("Ti ? / glass")
    wl = np.linspace(380.0, 780.0, 401)
    thicknesses = np.linspace(0.0, 100.0, 25_000)[:, None]
    tracemalloc.start()
    try:
        result = compute(stack, wl, thickness_nm=thicknesses)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert result.R.size == 10_025_000
    assert peak < 2**30, peak
    assert np.all(np.isfinite(result.R[::997]))


@pytest.mark.parametrize("kwargs, fragment", [
    (dict(angle_deg=90.0), "angle"),
    (dict(angle_deg=-1.0), "angle"),
    (dict(angle_deg=float("nan")), "angle"),
    (dict(polarization="circular"), "polarization"),
])
def test_bad_options_are_user_errors(kwargs, fragment):
    with pytest.raises(FilmopticError, match=fragment):
        compute(parse_stack("TiO2 50nm / glass"), WL, **kwargs)


def test_free_thicknesses_need_numbers():
    stack = parse_stack("TiO2 ? / glass")
    with pytest.raises(FilmopticError, match="unknown thickness"):
        compute(stack, WL)
    with pytest.raises(FilmopticError, match="shape"):
        compute(stack, WL, thickness_nm=[[1.0, 2.0]])
    with pytest.raises(FilmopticError, match="negative"):
        compute(stack, WL, thickness_nm=[[-5.0]])


@pytest.mark.parametrize("wavelengths", [[], [0.0, 500.0], [-3.0], [float("inf")], [[500.0]]])
def test_bad_wavelengths_are_user_errors(wavelengths):
    with pytest.raises(FilmopticError, match="wavelength"):
        compute(parse_stack("n=2 50nm / n=1.5"), wavelengths)


def test_wavelength_outside_a_table_is_refused_unless_extrapolating():
    stack = parse_stack("Ti 10nm / glass", ambient="n=1")
    with pytest.raises(WavelengthRangeError, match="Ti"):
        compute(stack, [500.0, 2500.0])
    with pytest.warns(UserWarning):
        result = compute(stack, [2500.0], extrapolate=True)
    assert np.isfinite(result.R[0])


@pytest.mark.parametrize("angle", [0.0, 30.0])
@pytest.mark.parametrize("reverse", [False, True])
def test_light_must_arrive_through_a_practically_transparent_medium(angle, reverse):
    # R and T are the reflected and transmitted fractions of light arriving through a lossless
    # medium; in an absorbing one the incident and reflected waves exchange energy in the flow, so
    # the ratios stop being reflectances (a "reflectance" above 1 is possible). Macleod, Thin-Film
    # Optical Filters, 4th ed. (2010), ch. 2, takes the incident medium as lossless (from memory).
    # Refused at any angle, from either side (the ambient lies behind a thick substrate too).
    with pytest.raises(FilmopticError, match="practically transparent"):
        compute(parse_stack("TiO2 50nm / glass 1mm", ambient="n=1.5+0.1j"), WL, angle_deg=angle,
                reverse=reverse)
    with pytest.raises(FilmopticError, match="practically transparent"):
        compute_indices([1.5 + 0.1j, 2.0, 1.52], [50.0], WL, angle_deg=angle)


@pytest.mark.parametrize("substrate", ["Ti", "Si", "n=1.5+0.001j"])
@pytest.mark.parametrize("angle", [0.0, 30.0])
def test_light_cannot_arrive_through_an_absorbing_half_space(substrate, angle):
    # A half-space substrate has no back face: light "from the substrate side" would have crossed
    # an unbounded stretch of it, and through a metal or silicon nothing arrives (Beer–Lambert,
    # common practice). One line, naming the substrate and the fix (a thickness in mm).
    stack = parse_stack(f"TiO2 50nm / {substrate}")
    with pytest.raises(FilmopticError, match=rf"through {re.escape(substrate)}, an absorbing half-space.*mm"):
        compute(stack, WL, angle_deg=angle, reverse=True)
    # As a thick slab it has a back face, and the light comes in from the ambient behind it.
    result = compute(parse_stack(f"TiO2 50nm / {substrate} 0.5mm"), WL, angle_deg=angle, reverse=True)
    assert np.all(np.isfinite(result.R))


def test_light_may_arrive_through_a_practically_transparent_half_space():
    # Water's k (1e-9–1e-7 of n in 400–800 nm, shipped table) is below the rule for a medium light
    # can cross (k/n <= 1e-4, filmoptic.materials.TRANSPARENT_K_OVER_N), the same rule that
    # allows an angle from it.
    visible = np.linspace(400.0, 800.0, 9)
    stack = parse_stack("TiO2 50nm / water")
    assert np.all(stack.substrate.material.nk(visible).imag > 0)
    back = compute(stack, visible, reverse=True, angle_deg=20.0)
    # Reciprocity of transmittance (Macleod, Thin-Film Optical Filters, ch. 2) at normal incidence.
    front = compute(stack, visible)
    back0 = compute(stack, visible, reverse=True)
    np.testing.assert_allclose(back0.T, front.T, rtol=1e-6)
    assert np.all(np.isfinite(back.R))
    # Just above the rule's limit it is absorbing.
    with pytest.raises(FilmopticError, match="absorbing half-space"):
        compute(parse_stack("TiO2 50nm / n=1.5+2e-4j"), WL, reverse=True)


def test_raw_entry_point_checks_its_lists():
    with pytest.raises(FilmopticError):
        compute_indices([1.0, 1.5], [10.0], [500.0])
    with pytest.raises(FilmopticError):
        compute_indices([1.0, 2.0, 1.5], [-1.0], [500.0])
    with pytest.raises(FilmopticError):
        compute_indices([1.0, 2.0, 1.5], [10.0], [500.0], incoherent=[True, False])
    R, T = compute_indices([1.0, 1.5], [], [500.0])
    assert R[0] == pytest.approx(((1 - 1.5) / 2.5) ** 2, rel=1e-14)  # Fresnel, Hecht §4.6
    assert math.isclose(R[0] + T[0], 1.0, rel_tol=1e-14)


def test_chunking_does_not_change_results(monkeypatch):
    # The grid is cut into chunks of angles × wavelengths × thickness sets to bound memory;
    # tiny chunks must give exactly the one-chunk answer.
    import filmoptic.engine as engine

    stack = parse_stack("TiO2 ? / Ag 10nm / SiO2 80nm / glass 1mm")
    wl = np.linspace(400.0, 800.0, 37)
    angles = np.linspace(0.0, 80.0, 23)
    thicknesses = np.linspace(0.0, 100.0, 9)[:, None]
    whole = compute(stack, wl, angle_deg=angles, thickness_nm=thicknesses)
    monkeypatch.setattr(engine, "CHUNK_BYTES", 50_000)
    monkeypatch.setattr(engine, "_CACHE_POINTS", 64)
    pieces = compute(stack, wl, angle_deg=angles, thickness_nm=thicknesses)
    np.testing.assert_array_equal(pieces.R, whole.R)
    np.testing.assert_array_equal(pieces.T, whole.T)


def test_raw_indices_follow_the_sign_convention():
    # N = n + i·k with k >= 0 (the convention of tmm, Byrnes 2016): a gain medium is refused.
    with pytest.raises(FilmopticError, match="k >= 0"):
        compute_indices([1.0, 2.0 - 0.1j, 1.5], [10.0], [500.0])
    with pytest.raises(FilmopticError, match="one value per wavelength"):
        compute_indices([1.0, [2.0, 2.1, 2.2], 1.5], [10.0], [500.0, 600.0])


def test_an_unknown_in_a_group_is_one_thickness_for_every_repeat():
    grouped = compute(parse_stack("[TiO2 ? / SiO2 92nm]x3 / glass"), WL, thickness_nm=[[40.0], [75.0]])
    for row, value in enumerate((40.0, 75.0)):
        written = compute(parse_stack(f"[TiO2 {value}nm / SiO2 92nm]x3 / glass"), WL)
        np.testing.assert_allclose(grouped.R[row], written.R, atol=1e-15)
        np.testing.assert_allclose(grouped.T[row], written.T, atol=1e-15)
