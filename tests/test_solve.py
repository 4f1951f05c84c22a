"""Thickness solving (filmoptic.inverse.solve, ``filmoptic solve``).

The forward model is checked against independent references (the ``tmm`` package, closed-form
thin-film results, colour-science through filmoptic.colorimetry); the solver is checked by round
trips: a thickness → the forward value → solve → the same thickness.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import tmm
from hypothesis import given, settings, strategies as st

from conftest import assert_user_error
from filmoptic.errors import FilmopticError
from filmoptic.inverse.readings import band_weights, parse_reading
from filmoptic.numerics.roots import find_minima, find_roots, interval_around
from filmoptic.inverse.solve import (
    ColourTarget,
    Reading,
    Target,
    evaluate_condition,
    grid_step_nm,
    lab_from_hex,
    parse_uncertainty,
    solve_thickness,
)

SETTINGS = dict(max_examples=20, derandomize=True, deadline=None)
MIRROR = "Ti ? / glass 4mm"


def _tmm_single_layer(n_film, d_nm, n_sub, wl_nm, n0=1.0):
    """R and T of one coherent layer on a half-space substrate, normal incidence (tmm, Byrnes 2016)."""
    out = tmm.coh_tmm("s", [n0, n_film, n_sub], [np.inf, d_nm, np.inf], 0.0, wl_nm)
    return out["R"], out["T"]


# --------------------------------------------------------------------------------------------
# Root finding and intervals on synthetic functions (no optics)
# --------------------------------------------------------------------------------------------


def test_find_roots_of_a_periodic_function_finds_every_root():
    # sin(x) = 0.3 has roots arcsin(0.3) + 2πm and π − arcsin(0.3) + 2πm (elementary).
    grid = np.linspace(0.0, 20.0, 201)
    roots = find_roots(lambda x: np.sin(x) - 0.3, grid, np.sin(grid) - 0.3)
    a = math.asin(0.3)
    expected = sorted(x for m in range(4) for x in (a + 2 * math.pi * m, math.pi - a + 2 * math.pi * m) if x <= 20)
    np.testing.assert_allclose(roots, expected, atol=1e-9)


def test_find_minima_and_interval_on_a_parabola():
    grid = np.linspace(-2.0, 5.0, 71)
    f = lambda x: (x - 1.234) ** 2  # noqa: E731
    x, fx = find_minima(f, grid, f(grid))
    assert x.tolist() == pytest.approx([1.234], abs=1e-6)
    low, high = interval_around(lambda t: f(t) - 0.25, grid, f(grid), x, 0.25)
    assert (low[0], high[0]) == pytest.approx((1.234 - 0.5, 1.234 + 0.5), abs=1e-9)


def test_interval_stops_at_the_range_end():
    grid = np.linspace(0.0, 1.0, 11)
    low, high = interval_around(lambda t: np.abs(t - 0.05) - 0.3, grid, np.abs(grid - 0.05), np.array([0.05]), 0.3)
    assert low[0] == 0.0 and high[0] == pytest.approx(0.35, abs=1e-9)


def test_grid_step_resolves_a_quarter_wave():
    # λ/(4n) is the longest monotone stretch of a transparent layer's response (Macleod, ch. 3).
    for wl, n in [(380.0, 2.6), (550.0, 1.38), (1550.0, 3.5)]:
        assert grid_step_nm(wl, n) <= wl / (4 * n) / 8


# --------------------------------------------------------------------------------------------
# Parsing
# --------------------------------------------------------------------------------------------


def test_reading_forms():
    assert parse_reading("318/1045").ratio == pytest.approx(318 / 1045)
    assert round(parse_reading("318/1045").ratio, 4) == 0.3043
    assert parse_reading("30.4%").ratio == pytest.approx(0.304)
    assert parse_reading("0.5").ratio == 0.5
    for bad in ("1.2", "-0.1", "1045/318", "x", "3/0", "1/2/3"):
        with pytest.raises(FilmopticError):
            parse_reading(bad)


def test_uncertainty_percent_is_of_the_value():
    assert parse_uncertainty("2%", 0.3) == pytest.approx(0.006)
    assert parse_uncertainty("0.01", 0.3) == 0.01
    with pytest.raises(FilmopticError):
        parse_uncertainty("-1")


def test_hex_grey_has_no_tint():
    # sRGB #808080 is L* ≈ 53.59, a* = b* = 0 under D65 (IEC 61966-2-1 decoding; value from memory).
    # The a*, b* left (0.005) come from the standard's 4-decimal matrix against the D65 white.
    L, a, b = lab_from_hex("#808080")
    assert L == pytest.approx(53.59, abs=0.006)
    assert abs(a) < 0.006 and abs(b) < 0.006


def test_hex_matches_colour_science():
    # colour-science's own sRGB → XYZ → Lab chain (D65 white) as the independent reference.
    import colour

    rgb = np.array([0x30, 0x50, 0xC0]) / 255
    ref = colour.XYZ_to_Lab(colour.sRGB_to_XYZ(rgb), colour.CCS_ILLUMINANTS["CIE 1931 2 Degree Standard Observer"]["D65"])
    # Measured 0.006: colour-science derives its matrix from the primaries, we use the standard's
    # rounded one.
    assert np.allclose(lab_from_hex("#3050c0"), ref, rtol=0, atol=0.01)


# --------------------------------------------------------------------------------------------
# Readings: band weights
# --------------------------------------------------------------------------------------------


def test_led_weights_have_the_stated_fwhm():
    wl, w = band_weights("led:530/30", "flat")
    assert w.sum() == pytest.approx(1.0)
    peak = np.interp(530.0, wl, w)
    # Full width at half maximum: half the peak 15 nm either side (definition of FWHM).
    assert np.interp(515.0, wl, w) == pytest.approx(peak / 2, rel=0.02)
    assert np.interp(545.0, wl, w) == pytest.approx(peak / 2, rel=0.02)


def test_d65_photopic_reading_equals_luminous_transmittance():
    # ISO 9050:2003 luminous transmittance is the D65 × V(λ) weighted mean of T: a reading with a
    # D65 source and a photopic detector must equal it (computed independently by colorimetry).
    from filmoptic.colorimetry import default_wavelengths, luminous
    from filmoptic.engine import compute
    from filmoptic.stack import parse_stack

    stack = parse_stack(MIRROR)
    t = np.array([0.0, 4.0, 9.0, 20.0])
    reading = evaluate_condition(stack, Reading(0.5, "D65", "photopic"), t)
    wl = default_wavelengths()
    reference = luminous(wl, compute(stack, wl, thickness_nm=t[:, None]).T)
    np.testing.assert_allclose(reading, reference, atol=2e-4)


def test_unknown_source_and_empty_overlap_are_errors():
    with pytest.raises(FilmopticError, match="illuminant"):
        band_weights("D66", "photopic")
    with pytest.raises(FilmopticError):
        band_weights("laser:2000", "photopic")  # V(λ) is tabulated to 830 nm only


# --------------------------------------------------------------------------------------------
# Round trips through the forward model
# --------------------------------------------------------------------------------------------


@settings(**SETTINGS)
@given(d=st.floats(1.0, 60.0))
def test_round_trip_luminous_T_on_a_metal(d):
    value = float(evaluate_condition(MIRROR, Target("luminous_T", 0.5), [d])[0])
    result = solve_thickness(MIRROR, Target("luminous_T", value), companions=False)
    # A metal film's transmittance falls monotonically with thickness (Beer–Lambert, common
    # practice): exactly one solution.
    assert len(result.solutions) == 1
    assert result.solutions[0].thickness_nm == pytest.approx(d, abs=1e-5)


@settings(**SETTINGS)
@given(d=st.floats(2.0, 80.0), side=st.sampled_from(["front", "reverse"]))
def test_round_trip_luminous_R_both_sides(d, side):
    value = float(evaluate_condition(MIRROR, Target("luminous_R", 0.5, side=side), [d])[0])
    result = solve_thickness(MIRROR, Target("luminous_R", value, side=side), companions=False)
    assert any(abs(s.thickness_nm - d) < 1e-5 for s in result.solutions)
    for s in result.solutions:
        assert s.value == pytest.approx(value, abs=1e-7)


@settings(**SETTINGS)
@given(d=st.floats(5.0, 480.0), n=st.floats(1.6, 2.5), wl=st.floats(400.0, 900.0))
def test_round_trip_T_at_against_tmm(d, n, wl):
    # The target value comes from the tmm package (independent implementation, Byrnes 2016).
    _, T = _tmm_single_layer(n, d, 1.5, wl)
    stack = f"n={n!r} ? / n=1.5"
    result = solve_thickness(stack, Target("T", T, wavelength_nm=wl), ambient="n=1", companions=False)
    assert any(abs(s.thickness_nm - d) < 1e-4 for s in result.solutions), [s.thickness_nm for s in result.solutions]
    assert all(s.exact for s in result.solutions)


@settings(**SETTINGS)
@given(d=st.floats(5.0, 480.0), wl=st.floats(450.0, 800.0))
def test_round_trip_R_at_against_tmm(d, wl):
    R, _ = _tmm_single_layer(2.1, d, 1.5, wl)
    result = solve_thickness("n=2.1 ? / n=1.5", Target("R", R, wavelength_nm=wl), ambient="n=1", companions=False)
    assert any(abs(s.thickness_nm - d) < 1e-4 for s in result.solutions)


@settings(max_examples=10, derandomize=True, deadline=None)
@given(d=st.floats(20.0, 230.0))
def test_round_trip_colour(d):
    stack = "TiO2 ? / Ti"
    lab = evaluate_condition(stack, ColourTarget((50, 0, 0)), [d])[0]
    result = solve_thickness(stack, ColourTarget(tuple(lab)), range_nm=(0, 250), companions=False)
    best = result.solutions[0]
    assert best.delta_E00 == pytest.approx(0.0, abs=1e-4)
    assert best.thickness_nm == pytest.approx(d, abs=1e-3)


@settings(**SETTINGS)
@given(d=st.floats(1.0, 50.0), source=st.sampled_from(["A", "laser:633", "led:530/30", "D65"]),
       detector=st.sampled_from(["photopic", "flat"]))
def test_round_trip_reading(d, source, detector):
    if source.startswith("laser") and detector == "photopic":
        detector = "flat"
    template = Reading(0.5, source, detector)
    value = float(evaluate_condition(MIRROR, template, [d])[0])
    result = solve_thickness(MIRROR, template.with_value(value), companions=False)
    assert len(result.solutions) == 1
    assert result.solutions[0].thickness_nm == pytest.approx(d, abs=1e-5)


def test_led_reading_matches_an_independent_integral():
    # ∫ G(λ) T(λ) dλ / ∫ G(λ) dλ for a Gaussian LED, integrated on a 0.1 nm grid with the trapezoid
    # rule (common practice), against the solver's own band weighting.
    from filmoptic.engine import compute
    from filmoptic.stack import parse_stack

    stack = parse_stack(MIRROR)
    wl = np.arange(430.0, 630.0, 0.1)
    sigma = 30.0 / (2 * math.sqrt(2 * math.log(2)))
    g = np.exp(-0.5 * ((wl - 530.0) / sigma) ** 2)
    T = compute(stack, wl, thickness_nm=[[12.0]]).T[0]
    from scipy.integrate import trapezoid

    expected = trapezoid(g * T, wl) / trapezoid(g, wl)
    got = evaluate_condition(stack, Reading(0.5, "led:530/30", "flat"), [12.0])[0]
    assert got == pytest.approx(expected, abs=2e-4)


# --------------------------------------------------------------------------------------------
# Several solutions of a dielectric; intervals; references
# --------------------------------------------------------------------------------------------


def test_dielectric_solutions_repeat_every_half_wave():
    # A transparent layer's response repeats every λ/(2n) of thickness (Macleod, Thin-Film Optical
    # Filters, ch. 3): roots on the same slope are spaced λ/(2n) apart.
    n, wl = 2.0, 600.0
    R, _ = _tmm_single_layer(n, 40.0, 1.5, wl)
    result = solve_thickness("n=2.0 ? / n=1.5", Target("R", R, wavelength_nm=wl), range_nm=(0, 500),
                             ambient="n=1", companions=False)
    xs = np.array([s.thickness_nm for s in result.solutions])
    slopes = np.array([s.slope_per_nm for s in result.solutions])
    assert len(xs) >= 6
    rising = xs[slopes > 0]
    falling = xs[slopes < 0]
    np.testing.assert_allclose(np.diff(rising), wl / (2 * n), atol=1e-5)
    np.testing.assert_allclose(np.diff(falling), wl / (2 * n), atol=1e-5)
    # Roots are ranked thinnest first.
    assert list(xs) == sorted(xs)


def test_quarter_wave_reflectance_is_an_extremum_that_is_found():
    # R of a quarter-wave layer = ((n0·ns − n1²)/(n0·ns + n1²))² at the design wavelength
    # (Macleod, ch. 3): a maximum for n1 > ns, met only by touching; solve must find it.
    n0, n1, ns, wl = 1.0, 2.0, 1.5, 600.0
    R_qw = ((n0 * ns - n1**2) / (n0 * ns + n1**2)) ** 2
    result = solve_thickness("n=2.0 ? / n=1.5", Target("R", R_qw, wavelength_nm=wl), range_nm=(0, 200),
                             ambient="n=1", companions=False)
    assert [round(s.thickness_nm, 3) for s in result.solutions] == [round(wl / (4 * n1), 3)]


@settings(**SETTINGS)
@given(d=st.floats(3.0, 40.0), u=st.floats(0.002, 0.03))
def test_interval_ends_match_value_plus_minus_uncertainty(d, u):
    target = float(evaluate_condition(MIRROR, Target("luminous_T", 0.5), [d])[0])
    result = solve_thickness(MIRROR, Target("luminous_T", target, uncertainty=u), companions=False)
    s = result.solutions[0]
    assert s.low_nm < s.thickness_nm < s.high_nm
    ends = evaluate_condition(MIRROR, Target("luminous_T", 0.5), [s.low_nm, s.high_nm])
    unclipped = [(end, x) for end, x in zip(ends, (s.low_nm, s.high_nm)) if 0.0 < x < 100.0]
    assert unclipped, (s.low_nm, s.high_nm)   # at least one end is inside the range and checked
    for end, _ in unclipped:
        assert abs(end - target) == pytest.approx(u, abs=1e-7)


def test_colour_interval_is_where_delta_e_stays_within_the_uncertainty():
    from filmoptic.colorimetry import delta_e00

    stack = "TiO2 ? / Ti"
    lab = tuple(evaluate_condition(stack, ColourTarget((50, 0, 0)), [60.0])[0])
    result = solve_thickness(stack, ColourTarget(lab, uncertainty=3.0), range_nm=(0, 250), companions=False)
    s = result.solutions[0]
    ends = evaluate_condition(stack, ColourTarget(lab), [s.low_nm, s.high_nm])
    assert np.allclose(delta_e00(ends, np.array(lab)), 3.0, atol=1e-6)


def test_bare_reference_removes_the_substrate_losses_exactly():
    # A half-wave layer of a lossless film is absent at its design wavelength (Macleod, ch. 3):
    # relative to the bare substrate it reads 1 at d = m·λ/(2n), whatever the slab's own
    # reflection and bulk absorption (here 8 % over 4 mm; the tiny k shifts the interface phase by
    # far less than the tolerance). Relative to the open beam, 1 is out of reach.
    stack = "n=2.0 ? / n=1.5+0.000001j 4mm"
    result = solve_thickness(stack, Reading(1.0, "laser:600", "flat", "bare"), range_nm=(0, 400), companions=False)
    np.testing.assert_allclose([s.thickness_nm for s in result.solutions], [0.0, 150.0, 300.0], atol=1e-3)
    open_beam = solve_thickness(stack, Reading(1.0, "laser:600", "flat", "open"), range_nm=(0, 400), companions=False)
    assert not open_beam.solutions and open_beam.closest is not None


@settings(max_examples=10, derandomize=True, deadline=None)
@given(d=st.floats(5.0, 150.0))
def test_bare_reference_ratio_against_tmm_incoherent(d):
    # The coated/bare ratio for a thick absorbing slab, computed with tmm's incoherent model
    # (Byrnes 2016; Katsidis & Siapkas 2002), solved back to the thickness.
    wl, n_sub = 633.0, 1.5 + 2e-6j
    layers = [1.0, 2.0, n_sub, 1.0]
    coated = tmm.inc_tmm("s", layers, [np.inf, d, 4e6, np.inf], ["i", "c", "i", "i"], 0.0, wl)["T"]
    bare = tmm.inc_tmm("s", [1.0, n_sub, 1.0], [np.inf, 4e6, np.inf], ["i", "i", "i"], 0.0, wl)["T"]
    stack = "n=2.0 ? / n=1.5+0.000002j 4mm"
    result = solve_thickness(stack, Reading(coated / bare, "laser:633", "flat", "bare"), range_nm=(0, 160),
                             ambient="n=1", companions=False)
    assert any(abs(s.thickness_nm - d) < 1e-4 for s in result.solutions)


def test_several_conditions_least_squares():
    n, d = 2.0, 123.0
    targets = []
    for wl in (450.0, 650.0):
        _, T = _tmm_single_layer(n, d, 1.5, wl)
        targets.append(Target("T", T, wavelength_nm=wl))
    result = solve_thickness("n=2.0 ? / n=1.5", targets, ambient="n=1", companions=False)
    best = result.solutions[0]
    assert best.thickness_nm == pytest.approx(d, abs=1e-3)
    assert best.residual == pytest.approx(0.0, abs=1e-4)
    assert not best.exact and len(best.values) == 2


def test_semi_mirror_companions_agree_with_the_colour_module():
    from filmoptic.colorimetry import appearance
    from filmoptic.stack import parse_stack

    result = solve_thickness(MIRROR, Target("luminous_T", 0.3))
    s = result.solutions[0]
    cp = s.companions
    look = appearance(parse_stack(MIRROR).bind([s.thickness_nm]))
    assert cp.luminous_T == pytest.approx(0.3, abs=1e-7)
    assert cp.luminous_R == pytest.approx(look.luminous.R, abs=1e-9)
    assert cp.luminous_R_reverse == pytest.approx(look.luminous.R_reverse, abs=1e-9)
    # Bookkeeping, not physics: the engine defines A = 1 − R − T and the luminous weights sum to
    # 1, so the three luminous values must add to 1 (energy conservation itself is checked
    # against tmm in test_engine_tmm.py).
    assert cp.luminous_R + cp.luminous_T + cp.absorptance == pytest.approx(1.0, abs=1e-9)
    assert cp.reflected_ab == pytest.approx(tuple(look.reflected.Lab[1:]), abs=1e-6)


def test_unreachable_target_reports_the_closest_value():
    result = solve_thickness(MIRROR, Target("luminous_T", 0.97))
    assert not result.solutions and not result.met
    bare = float(evaluate_condition(MIRROR, Target("luminous_T", 0.5), [0.0])[0])
    assert result.closest.thickness_nm == pytest.approx(0.0, abs=1e-6)
    assert result.closest.value == pytest.approx(bare, abs=1e-9)
    assert f"{100 * bare:.2f} %" in result.message


def test_stack_must_have_exactly_one_unknown():
    with pytest.raises(FilmopticError, match="one unknown"):
        solve_thickness("Ti 5nm / glass", Target("luminous_T", 0.3))
    with pytest.raises(FilmopticError, match="one unknown"):
        solve_thickness("Ti ? / SiO2 ? / glass", Target("luminous_T", 0.3))


# --------------------------------------------------------------------------------------------
# Command line
# --------------------------------------------------------------------------------------------


def test_cli_json_shape(run_cli):
    result = run_cli(["solve", MIRROR, "--luminous-T", "30%", "--uncertainty", "0.01", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert data["condition"]["quantity"] == "luminous_T" and data["condition"]["value"] == 0.3
    (sol,) = data["solutions"]
    for key in ("thickness_nm", "low_nm", "high_nm", "value", "slope_per_nm", "delta_E00", "companions"):
        assert key in sol
    assert sol["low_nm"] < sol["thickness_nm"] < sol["high_nm"]
    assert sol["slope_per_nm"] < 0


def test_cli_table_shows_every_order(run_cli):
    result = run_cli(["solve", "n=2.0 ? / n=1.5", "--T-at", "600=0.85", "--range", "0:400"])
    assert result.exit_code == 0, result.stderr
    assert "thinnest" in result.stdout


def test_cli_reading_from_two_numbers(run_cli):
    a = json.loads(run_cli(["solve", MIRROR, "--reading", "318/1045", "--source", "A", "--json"]).stdout)
    b = json.loads(run_cli(["solve", MIRROR, "--reading", str(318 / 1045), "--source", "A", "--json"]).stdout)
    assert a["solutions"][0]["thickness_nm"] == pytest.approx(b["solutions"][0]["thickness_nm"], abs=1e-9)


def test_cli_eye_caution_for_dark_filters(run_cli):
    result = run_cli(["solve", MIRROR, "--luminous-T", "5%", "--json"])
    assert result.exit_code == 0
    assert "CAUTION" in result.stderr and "eye protection" in result.stderr
    json.loads(result.stdout)  # stdout stays clean JSON
    assert "CAUTION" not in run_cli(["solve", MIRROR, "--luminous-T", "30%"]).stderr


@pytest.mark.parametrize(
    "args, fragment",
    [
        (["--luminous-T", "97%"], "closest reachable"),
        (["--reading", "1.2"], "between 0 and 1"),
        (["--reading", "1045/318"], "[0, 1]"),
        (["--reading", "0.3", "--source", "D66"], "unknown illuminant"),
        (["--T-at", "550"], "WAVELENGTH=VALUE"),
        (["--lab", "50,0"], "three numbers"),
        (["--hex", "#12345"], "#rrggbb"),
        ([], "say what to solve for"),
        (["--luminous-T", "30%", "--range", "50:10"], "--range"),
        (["--lab", "50,0,0", "--uncertainty", "5%"], "ΔE00"),
    ],
)
def test_cli_bad_input(run_cli, args, fragment):
    assert_user_error(run_cli(["solve", MIRROR, *args]), fragment)


def test_cli_laser_with_the_default_photopic_detector_is_solved(run_cli):
    # V(λ) is tabulated to 830 nm (CIE 15:2018), so a 633 nm laser read by a photopic detector is fine.
    result = run_cli(["solve", MIRROR, "--reading", "0.3", "--source", "laser:633", "--json"])
    assert result.exit_code == 0, result.stderr
    (sol,) = json.loads(result.stdout)["solutions"]
    assert sol["value"] == pytest.approx(0.3, abs=1e-6)


def test_cli_bad_stack(run_cli):
    assert_user_error(run_cli(["solve", "Ti 5nm / glass", "--luminous-T", "30%"]), "unknown thickness")


def test_least_squares_interval_is_delta_chi2_of_one():
    # With uncertainties σ_i the one-parameter 68 % interval is where χ² ≤ χ²_min + 1
    # (W. H. Press et al., Numerical Recipes, 3rd ed. (2007), §15.6).
    stack, d, sigma = "n=2.0 ? / n=1.5", 123.0, 0.004
    targets = []
    for wl, shift in ((450.0, 0.003), (650.0, -0.002)):
        _, T = _tmm_single_layer(2.0, d, 1.5, wl)
        targets.append(Target("T", T + shift, wavelength_nm=wl, uncertainty=sigma))
    result = solve_thickness(stack, targets, ambient="n=1", companions=False)
    best = result.solutions[0]

    def chi2(t):
        return sum(((evaluate_condition(stack, c, [t], ambient="n=1")[0] - c.value) / sigma) ** 2 for c in targets)

    c_min = chi2(best.thickness_nm)
    assert best.low_nm < best.thickness_nm < best.high_nm
    assert chi2(best.low_nm) == pytest.approx(c_min + 1, abs=1e-6)
    assert chi2(best.high_nm) == pytest.approx(c_min + 1, abs=1e-6)


def test_no_transmission_companions_on_an_opaque_substrate(run_cli):
    # Titanium as a half-space absorbs what enters it: no light comes out behind, so luminous T is
    # 0, there is no transmitted tint and no eye-protection caution to give.
    result = run_cli(["solve", "TiO2 ? / Ti", "--lab", "40,10,-40", "--range", "0:250", "--json"])
    assert result.exit_code == 0, result.stderr
    cp = json.loads(result.stdout)["solutions"][0]["companions"]
    assert cp["luminous_T"] == 0.0 and cp["transmitted_ab"] is None
    # By definition (R + T + A = 1, A = A_layers + A_substrate): all not reflected is absorbed.
    assert cp["absorptance"] == pytest.approx(1 - cp["luminous_R"], abs=1e-12)
    assert cp["absorptance_layers"] + cp["absorptance_substrate"] == pytest.approx(cp["absorptance"], abs=1e-12)
    assert cp["absorptance_substrate"] > 0.5   # most of it in the titanium
    assert "CAUTION" not in result.stderr


# --------------------------------------------------------------------------------------------
# Light that cannot cross the substrate (QA L3, L4)
# --------------------------------------------------------------------------------------------

# Titanium is a metal (k ≈ 3 across the visible; P. B. Johnson & R. W. Christy, Phys. Rev. B 9,
# 5056 (1974)): as a half-space it absorbs everything that enters it, so nothing comes out behind
# and nothing arrives from behind (common practice).
OPAQUE_BULK = "TiO2 ? / Ti"


@pytest.mark.parametrize(
    "args, fragment",
    [
        (["--luminous-T", "20%"], "no light comes out behind"),
        (["--T-at", "550=40%"], "no light comes out behind"),
        (["--reading", "0.3"], "no light comes out behind"),
        (["--lab", "50,0,0", "--appearance", "transmitted"], "no light comes out behind"),
        (["--luminous-R", "20%", "--side", "reverse"], "no light arrives from behind"),
        (["--R-at", "550=20%", "--side", "reverse"], "no light arrives from behind"),
        (["--lab", "50,0,0", "--side", "reverse"], "no light arrives from behind"),
    ],
)
def test_cli_refuses_light_through_an_absorbing_half_space(run_cli, args, fragment):
    assert_user_error(run_cli(["solve", OPAQUE_BULK, *args]), fragment, "Ti")
    assert_user_error(run_cli(["compare", "TiO2", "--on", "Ti", *args]), fragment)


def test_api_refuses_light_through_an_absorbing_half_space():
    for condition in (Target("luminous_T", 0.2), Target("T", 0.4, wavelength_nm=550.0), Reading(0.3),
                      ColourTarget((50, 0, 0), appearance="transmitted"),
                      Target("luminous_R", 0.2, side="reverse"), ColourTarget((50, 0, 0), side="reverse")):
        with pytest.raises(FilmopticError, match="absorbing half-space"):
            solve_thickness(OPAQUE_BULK, condition, companions=False)
        with pytest.raises(FilmopticError, match="absorbing half-space"):
            evaluate_condition(OPAQUE_BULK, condition, [50.0])
    # Reflectance seen from the coated side stays meaningful on a bulk metal.
    assert solve_thickness(OPAQUE_BULK, Target("luminous_R", 0.3), companions=False).met


def test_transmittance_into_a_transparent_half_space_is_solved():
    # T into a non-absorbing half-space is the power entering it, as the tmm package defines it
    # (S. J. Byrnes, arXiv:1603.02720, 2016): the solver must accept it and agree with tmm.
    d = 77.0
    _, T = _tmm_single_layer(2.0, d, 1.52, 550.0)
    # The response is symmetric about the quarter wave, 550/(4·2) = 68.75 nm (Macleod, ch. 3), so
    # the range starts above it to leave one root.
    result = solve_thickness("n=2.0 ? / n=1.52", Target("T", T, wavelength_nm=550.0), range_nm=(70, 100),
                             ambient="n=1", companions=False)
    assert [round(s.thickness_nm, 6) for s in result.solutions] == [pytest.approx(d, abs=1e-5)]
    # The substrate side of a transparent half-space is reachable too (light from inside it):
    # with no absorption T is the same from either side (Stokes relations; common practice), so
    # the same thickness meets the target from behind.
    back = solve_thickness("n=2.0 ? / n=1.52", Target("T", T, wavelength_nm=550.0, side="reverse"),
                           range_nm=(70, 100), ambient="n=1", companions=False)
    assert back.solutions[0].thickness_nm == pytest.approx(d, abs=1e-5)


def test_opacity_is_judged_at_the_condition_wavelength():
    # Silicon absorbs in the visible but is transparent below its band gap, beyond about 1.1 µm
    # (M. A. Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008); from memory): T into a silicon
    # half-space at 1300 nm is meaningful, at 600 nm it is not.
    with pytest.raises(FilmopticError, match="absorbing half-space"):
        evaluate_condition("TiO2 ? / Si", Target("T", 0.6, wavelength_nm=600.0), [50.0])
    T = evaluate_condition("TiO2 ? / Si", Target("T", 0.6, wavelength_nm=1300.0), [50.0, 120.0])
    assert np.all((T > 0) & (T < 1))


# --------------------------------------------------------------------------------------------
# Messages (QA L5, L6)
# --------------------------------------------------------------------------------------------


def test_cli_unmet_dark_target_is_one_line_without_caution(run_cli):
    # An out-of-reach target is a user error: exactly one line, no caution before it.
    result = run_cli(["solve", MIRROR, "--luminous-T", "0%", "--json"])
    assert_user_error(result, "closest reachable")
    assert "CAUTION" not in result.stderr


@pytest.mark.parametrize(
    "args, fragments",
    [
        (["--reading", "0.3", "--source", "laser:"], ("laser:WL", "laser:633")),
        (["--reading", "0.3", "--source", "laser:red"], ("laser:WL",)),
        (["--reading", "0.3", "--source", "led:530/wide"], ("led:CENTRE/FWHM", "led:530/30")),
        (["--reading", "0.3", "--source", "LED"], ("led:CENTRE/FWHM",)),
        (["--reading", "0.3", "--detector", "eye"], ("photopic", "flat", "response file")),
        (["--reading", "0.3", "--detector", "photopc"], ("did you mean photopic",)),
        (["--luminous-T", "30%", "--appearance", "transmitted"], ("--appearance", "--lab", "--hex")),
        (["--luminous-R", "30%", "--appearance", "reflected"], ("--appearance",)),
        (["--luminous-T", "30%", "--source", "A"], ("--source", "--reading")),
        (["--luminous-T", "30%", "--detector", "flat", "--reference", "bare"],
         ("--detector and --reference", "--reading")),
    ],
)
def test_cli_messages_say_how_to_write_it(run_cli, args, fragments):
    assert_user_error(run_cli(["solve", MIRROR, *args]), *fragments)


def test_line_sources_still_read():
    # The notations the messages teach are the ones accepted.
    assert band_weights("laser:633", "flat")[0].tolist() == [633.0]
    wl, w = band_weights("led:530/30", "flat")
    assert wl.min() < 530.0 < wl.max() and w.sum() == pytest.approx(1.0)
    # Illuminant names that merely start with "LED" (CIE 15:2018 LED series) are not LED lines.
    assert band_weights("LED-B1", "photopic")[0].size > 10
