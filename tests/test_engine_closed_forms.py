"""The engine against closed-form results of thin-film optics.

Each check names where the formula comes from. Indices are written as
constants so that the formulas apply exactly; the few shipped tables used are named.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from filmoptic.engine import compute, compute_indices
from filmoptic.stack import parse_stack


def spectrum(text, wavelengths, ambient="n=1", **kwargs):
    return compute(parse_stack(text, ambient=ambient), np.atleast_1d(wavelengths), **kwargs)


def fresnel_normal(n0, n1):
    """R = ((n0 − n1)/(n0 + n1))² (Hecht, *Optics*, §4.6)."""
    return ((n0 - n1) / (n0 + n1)) ** 2


def test_bare_glass_reflects_4_26_percent_per_surface():
    # Hecht, Optics: uncoated glass n = 1.52 reflects 4.26 % at normal incidence.
    result = spectrum("n=1.52", [400.0, 550.0, 700.0])
    np.testing.assert_allclose(result.R, fresnel_normal(1.0, 1.52), rtol=1e-13)
    assert round(100 * float(result.R[0]), 2) == 4.26
    np.testing.assert_allclose(result.T, 1 - fresnel_normal(1.0, 1.52), rtol=1e-13)


def test_glass_plate_counts_both_faces_incoherently():
    # A thick transparent plate adds its internal reflections in intensity:
    # R = 2ρ/(1 + ρ), T = (1 − ρ)/(1 + ρ) with ρ the single-surface reflectance
    # (Born & Wolf, Principles of Optics, §1.6 / Macleod ch. 2; common practice for glazing).
    rho = fresnel_normal(1.0, 1.52)
    result = spectrum("n=1.52 3mm", [550.0])
    assert result.R[0] == pytest.approx(2 * rho / (1 + rho), rel=1e-13)
    assert result.T[0] == pytest.approx((1 - rho) / (1 + rho), rel=1e-13)


@pytest.mark.parametrize("n1", [1.38, 1.46, math.sqrt(1.52)])
def test_quarter_wave_antireflection_layer(n1):
    # Macleod, Thin-Film Optical Filters, ch. 3: a quarter-wave layer of index n1 on ns gives
    # R = ((n0·ns − n1²)/(n0·ns + n1²))² at the design wavelength; zero when n1 = √(n0·ns).
    design, ns = 550.0, 1.52
    result = spectrum(f"n={n1!r} {design / (4 * n1)!r}nm / n={ns}", [design])
    expected = ((ns - n1**2) / (ns + n1**2)) ** 2
    assert result.R[0] == pytest.approx(expected, abs=1e-14)
    if n1 == math.sqrt(1.52):
        assert result.R[0] < 1e-20


@pytest.mark.parametrize("n1", [1.38, 2.35, 3.5])
@pytest.mark.parametrize("angle", [0.0, 35.0])
def test_half_wave_layer_is_absentee(n1, angle):
    # Macleod ch. 3: a half-wave layer (optical thickness λ/2 along the refracted ray) leaves
    # the reflectance of the bare substrate unchanged.
    design = 600.0
    cos1 = math.sqrt(1 - (math.sin(math.radians(angle)) / n1) ** 2)
    coated = spectrum(f"n={n1!r} {design / (2 * n1 * cos1)!r}nm / n=1.52", [design],
                      angle_deg=angle, polarization="s")
    bare = spectrum("n=1.52", [design], angle_deg=angle, polarization="s")
    assert coated.R[0] == pytest.approx(bare.R[0], abs=1e-14)


@pytest.mark.parametrize("pairs", [1, 4, 10])
def test_quarter_wave_stack_peak_reflectance(pairs):
    # Macleod ch. 5: (HL)^N H on a substrate has admittance Y = (nH/nL)^(2N)·nH²/ns at the
    # design wavelength and R = ((n0 − Y)/(n0 + Y))².
    nH, nL, ns, design = 2.35, 1.46, 1.52, 550.0
    text = f"[n={nH} {design / (4 * nH)!r}nm / n={nL} {design / (4 * nL)!r}nm]x{pairs} / " \
           f"n={nH} {design / (4 * nH)!r}nm / n={ns}"
    Y = (nH / nL) ** (2 * pairs) * nH**2 / ns
    result = spectrum(text, [design])
    assert result.R[0] == pytest.approx(((1 - Y) / (1 + Y)) ** 2, abs=1e-13)


def test_quarter_wave_stack_stop_band_width():
    # Macleod ch. 5: the high-reflectance zone of a quarter-wave stack spans, in g = λ0/λ,
    # 1 ± Δg with Δg = (2/π)·arcsin((nH − nL)/(nH + nL)). Deep inside it a 15-pair stack
    # reflects almost everything; well outside it does not.
    nH, nL, design = 2.35, 1.46, 550.0
    text = f"[n={nH} {design / (4 * nH)!r}nm / n={nL} {design / (4 * nL)!r}nm]x15 / n=1.52"
    dg = 2 / math.pi * math.asin((nH - nL) / (nH + nL))
    inside = design / np.array([1 - 0.8 * dg, 1 + 0.8 * dg])
    outside = design / np.array([1 - 1.3 * dg, 1 + 1.3 * dg])
    assert np.all(spectrum(text, inside).R > 0.999)
    assert np.all(spectrum(text, outside).R < 0.5)


@pytest.mark.parametrize("n0, n1", [(1.0, 1.52), (1.0, 2.4), (1.33, 1.52), (1.5, 1.0)])
def test_brewster_angle_cancels_p_reflection(n0, n1):
    # Brewster: tan θB = n1/n0 gives Rp = 0 (Hecht §8.6); Rs there is
    # sin²(θB − θt)/sin²(θB + θt) (Fresnel, Born & Wolf §1.5).
    theta_b = math.degrees(math.atan(n1 / n0))
    result_p = spectrum(f"n={n1}", [550.0], ambient=f"n={n0}", angle_deg=theta_b, polarization="p")
    result_s = spectrum(f"n={n1}", [550.0], ambient=f"n={n0}", angle_deg=theta_b, polarization="s")
    assert result_p.R[0] < 1e-28
    ti = math.radians(theta_b)
    tt = math.asin(n0 * math.sin(ti) / n1)
    assert result_s.R[0] == pytest.approx(math.sin(ti - tt) ** 2 / math.sin(ti + tt) ** 2, rel=1e-12)


@pytest.mark.parametrize("pol", ["s", "p"])
def test_total_internal_reflection_beyond_the_critical_angle(pol):
    # Critical angle sin θc = n1/n0 (Hecht §4.7): from glass into air beyond θc everything is
    # reflected; just below it some light still passes.
    critical = math.degrees(math.asin(1.0 / 1.5))
    beyond = spectrum("n=1", [500.0, 700.0], ambient="n=1.5", angle_deg=critical + 1.0, polarization=pol)
    np.testing.assert_allclose(beyond.R, 1.0, atol=1e-14)
    np.testing.assert_allclose(beyond.T, 0.0, atol=1e-14)
    below = spectrum("n=1", [500.0], ambient="n=1.5", angle_deg=critical - 1.0, polarization=pol)
    assert 0.0 < below.T[0] < 1.0
    assert below.R[0] + below.T[0] == pytest.approx(1.0, abs=1e-14)


@pytest.mark.parametrize("k", [1e-3, 1e-2, 0.05])
def test_beer_lambert_limit_of_a_thick_absorbing_film(k):
    # Beer–Lambert: an index-matched film of extinction coefficient k passes
    # exp(−4πkd/λ); reflections from the index step (k/2n)² stay below 1e-3 here.
    d, wl, n = 2000.0, 500.0, 1.5
    result = spectrum(f"n={n}+{k}j {d}nm / n={n}", [wl], ambient=f"n={n}")
    assert result.T[0] == pytest.approx(math.exp(-4 * math.pi * k * d / wl), rel=2e-3)


def test_beer_lambert_in_a_thick_slab_at_an_angle():
    # Inside a thick (incoherent) slab the path is d/cos θt, so T = exp(−4πkd/(λ cos θt))
    # between index-matched media (Beer–Lambert along the refracted ray).
    n, k, d, wl, angle = 1.5, 2e-6, 2e6, 600.0, 40.0
    result = spectrum(f"n={n}+{k}j 2mm", [wl], ambient=f"n={n}", angle_deg=angle)
    q = np.sqrt(complex(n, k) ** 2 - (n * math.sin(math.radians(angle))) ** 2)
    expected = math.exp(-4 * math.pi * q.imag * d / wl)
    assert result.T[0] == pytest.approx(expected, rel=1e-9)
    assert expected < 0.99  # the absorption really matters


@pytest.mark.parametrize("metal, thickness_nm", [("Cu", 1000.0), ("Ti", 10000.0), ("Ag", 3000.0)])
def test_thick_metal_is_finite_and_opaque(metal, thickness_nm):
    # An opaque metal film reflects as the bulk metal does and passes nothing: no overflow,
    # no NaN (data: Johnson & Christy 1972/1974 tables shipped with filmoptic).
    wl = np.linspace(400.0, 900.0, 11)
    film = spectrum(f"{metal} {thickness_nm}nm / glass 1mm", wl, ambient="air")
    bulk = spectrum(metal, wl, ambient="air")
    assert np.all(np.isfinite(film.R)) and np.all(np.isfinite(film.T))
    assert np.all(film.T < 1e-25)
    np.testing.assert_allclose(film.R, bulk.R, atol=1e-12)
    np.testing.assert_allclose(film.R + film.T + film.A, 1.0, atol=1e-12)


def test_thick_metal_transmittance_falls_as_beer_lambert():
    # Once a film is opaque its transmittance drops by exp(−4πk·Δd/λ) per extra Δd
    # (Beer–Lambert), the interface factors cancelling in the ratio. Copper, Johnson & Christy
    # 1972 (shipped table); T ~ 1e-29 here, far below what the arithmetic could lose.
    wl = np.array([500.0, 700.0])
    k = parse_stack("Cu").substrate.material.nk(wl).imag
    T = compute(parse_stack("Cu ? / glass"), wl, thickness_nm=[[900.0], [1000.0]]).T
    np.testing.assert_allclose(T[1] / T[0], np.exp(-4 * np.pi * k * 100.0 / wl), rtol=1e-6)


def test_single_film_extrema_at_quarter_wave_multiples():
    # Macleod; Heavens, Optical Properties of Thin Solid Films: a transparent film of index
    # n > ns on a transparent substrate has reflectance maxima where n·d = mλ/4 (m odd) and
    # minima equal to the bare substrate where m is even.
    n, ns, d = 2.3, 1.52, 400.0
    wl = np.linspace(450.0, 1100.0, 6501)
    R = spectrum(f"n={n} {d}nm / n={ns}", wl).R
    peaks = wl[1:-1][(R[1:-1] > R[:-2]) & (R[1:-1] > R[2:])]
    expected = [4 * n * d / m for m in (3, 5, 7) if 450 < 4 * n * d / m < 1100]
    assert len(expected) == 2
    np.testing.assert_allclose(sorted(peaks), sorted(expected), atol=0.2)
    # The extreme values: at odd m the film acts as a quarter-wave layer,
    # R = ((n0·ns − n²)/(n0·ns + n²))² (Macleod ch. 3); at even m it is an absentee (half-wave)
    # layer and R is the bare substrate's Fresnel value.
    odd = spectrum(f"n={n} {d}nm / n={ns}", expected).R
    np.testing.assert_allclose(odd, ((ns - n**2) / (ns + n**2)) ** 2, rtol=1e-12)
    even = spectrum(f"n={n} {d}nm / n={ns}", [4 * n * d / m for m in (4, 6, 8)]).R
    np.testing.assert_allclose(even, fresnel_normal(1.0, ns), rtol=1e-12)


def test_raw_indices_equal_the_notation():
    # compute_indices is the same engine without the notation (a consistency check of the
    # two entry points, both tied to tmm in test_engine_tmm.py).
    R, T = compute_indices([1.0, 2.0 + 0.5j, 1.52], [80.0], [500.0, 600.0], angle_deg=30.0)
    result = spectrum("n=2+0.5j 80nm / n=1.52", [500.0, 600.0], angle_deg=30.0)
    np.testing.assert_allclose(R, result.R, atol=0)
    np.testing.assert_allclose(T, result.T, atol=0)


@pytest.mark.parametrize("k, mm", [(1e-6, 4.0), (3e-6, 10.0), (2e-5, 1.0)])
def test_light_absorbed_in_a_bare_slab(k, mm):
    # A bare plate of index N = n + i·k between vacuum on both sides: each face reflects
    # R1 = |(N − 1)/(N + 1)|² and passes T1 = 4n/|N + 1|² into the plate (Fresnel; Born & Wolf
    # §1.5), one pass leaves P = exp(−4πkd/λ) (Beer–Lambert), and the multiple reflections add in
    # intensity: the plate absorbs T1·(1 − P)·(1 + P·R1)/(1 − R1²·P²).
    n, wl, d = 1.52, 550.0, mm * 1e6
    N = complex(n, k)
    R1 = abs((N - 1) / (N + 1)) ** 2
    T1 = 4 * n / abs(N + 1) ** 2
    P = math.exp(-4 * math.pi * k * d / wl)
    result = spectrum(f"n={n}+{k}j {mm}mm", [wl], ambient="n=1")
    expected = T1 * (1 - P) * (1 + P * R1) / (1 - R1**2 * P**2)
    # The faces pass |t|²·Re(n) of power (the convention of Byrnes 2016, which the engine
    # follows), which departs from 1 − R at order (k/n)², 2e-10 here.
    assert result.A_substrate[0] == pytest.approx(expected, rel=1e-9)
    assert result.A_layers[0] == pytest.approx(0.0, abs=1e-15)
    assert result.transmission == "exits"


def test_light_entering_an_absorbing_half_space_is_absorbed_there():
    # Titanium without a thickness is an unbounded absorber: what enters it, 1 − R by the
    # Fresnel formula (Born & Wolf §1.5), never comes out, so T = 0 and A = A_substrate = 1 − R.
    wl = np.array([450.0, 650.0])
    N = parse_stack("Ti").substrate.material.nk(wl)
    result = spectrum("Ti", wl, ambient="n=1")
    R = np.abs((1 - N) / (1 + N)) ** 2
    np.testing.assert_allclose(result.R, R, rtol=1e-12)
    assert np.all(result.T == 0.0) and result.transmission == "opaque"
    np.testing.assert_allclose(result.A_substrate, 1 - R, rtol=1e-12)
    np.testing.assert_allclose(result.A_layers, 0.0, atol=1e-15)
