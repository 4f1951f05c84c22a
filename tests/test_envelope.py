"""The envelope method (filmoptic.inverse.envelope) against transparent films of known thickness and index.

The "measured" curves are computed independently with the `tmm` package (S. J. Byrnes,
"Multilayer optical calculations", arXiv:1603.02720, 2016): a coherent film on a thick slab whose
two faces add incoherently (`tmm.inc_tmm`), which is the situation of R. Swanepoel, J. Phys. E 16,
1214 (1983).
"""

from __future__ import annotations

import numpy as np
import pytest
import tmm

from filmoptic.inverse.envelope import find_extrema, substrate_index_from_transmittance, swanepoel
from filmoptic.errors import FilmopticError
from filmoptic.materials import get_material


def tmm_film_on_slab(n_film, d_nm, s, wavelength_nm):
    """T of film / thick slab (1 mm) in air at normal incidence, one wavelength at a time."""
    shape = wavelength_nm.shape
    return np.array([
        tmm.inc_tmm("s", [1.0, n, ns, 1.0], [np.inf, d_nm, 1e6, np.inf], ["i", "c", "i", "i"], 0.0, wl)["T"]
        for n, ns, wl in zip(np.broadcast_to(n_film, shape), np.broadcast_to(s, shape), wavelength_nm)
    ])


def swanepoel_dispersion(wavelength_nm):
    # The simulated film of Swanepoel (1983), from memory: n(λ) = 3·10⁵/λ² + 2.6 (λ in nm) on a
    # substrate of s = 1.51 with d = 1000 nm. Only its transparent part is used here (k = 0).
    return 3e5 / wavelength_nm**2 + 2.6


@pytest.mark.parametrize("noise", [0.0, 0.002])
def test_swanepoel_simulated_film_recovered(noise):
    wl = np.arange(600.0, 1800.0 + 1, 2.0)
    s, d = 1.51, 1000.0
    T = tmm_film_on_slab(swanepoel_dispersion(wl), d, s, wl)
    T = T + np.random.default_rng(1983).normal(0.0, noise, wl.size)
    result = swanepoel(wl, T, s)
    # Swanepoel reports his method recovering d to within about 1 % (from memory); on these clean
    # simulated fringes ours does 0.03 % (measured 0.3 nm), so 0.1 % catches a changed step. The
    # statistical error bar must cover the truth too (3 standard errors).
    assert abs(result.thickness_nm - d) < 0.001 * d
    assert abs(result.thickness_nm - d) < 3 * result.thickness_stderr_nm + 0.5
    np.testing.assert_allclose(result.n, swanepoel_dispersion(result.wavelength_nm), atol=0.005)
    # Orders fall by one half from one extremum to the next, whole at maxima (n > s).
    assert np.allclose(np.diff(result.order), -0.5)
    A, B = result.cauchy_AB
    assert abs(A - 2.6) < 0.003 and abs(B - 0.3) < 0.003   # 3e5 nm² = 0.3 µm²; measured 5e-4


def test_dispersive_oxide_with_few_fringes():
    # TiO2 (Franta et al. 2015, the library's table; real part, the film taken as lossless)
    # 450 nm thick on fused silica (Malitson 1965), only a few fringes between 450 and 1100 nm.
    wl = np.arange(450.0, 1100.0 + 1, 1.0)
    n_film = get_material("TiO2").nk(wl).real
    s = get_material("fused-silica").nk(wl).real
    T = tmm_film_on_slab(n_film, 450.0, s, wl)
    result = swanepoel(wl, T, s)
    # Few fringes and strong dispersion: measured 0.7 nm and 0.006 in n.
    assert abs(result.thickness_nm - 450.0) < 1.5
    np.testing.assert_allclose(result.n, np.interp(result.wavelength_nm, wl, n_film), atol=0.01)


def test_extrema_of_a_single_film_sit_at_quarter_wave_orders():
    # Extrema of a transparent film at n·d = m·λ/4 (Macleod, Thin-Film Optical Filters, ch. 2;
    # Heavens, Optical Properties of Thin Solid Films).
    n, d = 2.0, 600.0
    wl = np.arange(400.0, 1000.0 + 0.5, 0.5)
    x, _, is_max = find_extrema(wl, tmm_film_on_slab(n, d, 1.5, wl))
    quarter_orders = 4 * n * d / x
    np.testing.assert_allclose(quarter_orders, np.round(quarter_orders), atol=0.02)
    # n > s: maxima where the film is a whole number of half waves (even quarter orders).
    assert np.all(np.round(quarter_orders[is_max]) % 2 == 0)


def test_substrate_index_from_its_transmittance():
    # Bare slab with incoherent faces: Ts = 2s/(s² + 1) (Swanepoel 1983), checked against tmm.
    for s in (1.46, 1.52, 1.76):
        Ts = tmm.inc_tmm("s", [1.0, s, 1.0], [np.inf, 1e6, np.inf], ["i", "i", "i"], 0.0, 550.0)["T"]
        assert substrate_index_from_transmittance(Ts) == pytest.approx(s, rel=1e-9)


def test_too_few_fringes_is_a_user_error():
    wl = np.arange(400.0, 800.0 + 1, 2.0)
    T = tmm_film_on_slab(2.0, 60.0, 1.52, wl)   # thinner than a half wave: no fringes at all
    with pytest.raises(FilmopticError, match="extrema"):
        swanepoel(wl, T, 1.52)


def test_film_below_the_substrate_index_is_refused():
    wl = np.arange(400.0, 1000.0 + 1, 1.0)
    T = tmm_film_on_slab(1.38, 2000.0, 1.52, wl)   # MgF2-like film on glass: n < s
    # Many fringes here, so the refusal must be about the index, not about too few extrema: with
    # n < s the film only ever raises T above the bare substrate's, its half-wave minima equal to
    # it (Macleod ch. 3); Swanepoel's (1983) formulas assume n > s.
    with pytest.raises(FilmopticError, match="index is below the substrate"):
        swanepoel(wl, T, 1.52)
