"""The engine against colour-science's multilayer transfer-matrix routine.

Reference: ``colour.phenomena.multilayer_tmm`` (colour-science, after Byrnes,
arXiv:1603.02720, 2016). That routine takes the refraction angles and the transmitted-power factor
from the indices of the *first* wavelength it is given, and turns complex refraction angles into
real ones; so it is called here one wavelength at a time, and compared where it is exact: any
coherent stack at normal incidence with a transparent exit medium, and transparent stacks at
oblique incidence. Agreement to 1e-9.
"""

from __future__ import annotations

import colour.phenomena
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from filmoptic.engine import compute_indices

# multilayer_tmm arrived in colour-science 0.4.7, which needs Python >= 3.11; on Python 3.10 pip
# installs 0.4.6, which has no transfer-matrix routine, so there is nothing to compare with.
multilayer_tmm = getattr(colour.phenomena, "multilayer_tmm", None)
pytestmark = pytest.mark.skipif(
    multilayer_tmm is None,
    reason="colour-science < 0.4.7 (the newest for Python 3.10) has no multilayer_tmm",
)

TOLERANCE = 1e-9
SETTINGS = settings(max_examples=150, deadline=None, derandomize=True)


def _colour_per_wavelength(indices, thicknesses, wavelengths, angle):
    """R, T of shape (W, 2) for (s, p), one colour-science call per wavelength."""
    R = np.empty((len(wavelengths), 2))
    T = np.empty((len(wavelengths), 2))
    for i, w in enumerate(wavelengths):
        n = np.array([np.asarray(N)[i] if np.ndim(N) else N for N in indices], dtype=complex)
        r, t = multilayer_tmm(n, thicknesses, w, angle)
        R[i], T[i] = np.real(r[0, 0, 0]), np.real(t[0, 0, 0])
    return R, T


def _ours(indices, thicknesses, wavelengths, angle):
    out = [compute_indices(indices, thicknesses, wavelengths, angle_deg=angle, polarization=p)
           for p in ("s", "p")]
    return np.stack([o[0] for o in out], axis=-1), np.stack([o[1] for o in out], axis=-1)


@st.composite
def coherent_stack(draw, absorbing: bool):
    count = draw(st.integers(1, 8))
    layers = []
    for _ in range(count):
        n = draw(st.floats(1.2, 4.0))
        k = draw(st.floats(0.0, 4.0)) if absorbing and draw(st.booleans()) else 0.0
        layers.append(complex(n, k))
    thicknesses = draw(st.lists(st.floats(0.0, 400.0), min_size=count, max_size=count))
    substrate = draw(st.floats(1.0, 3.5))
    ambient = draw(st.sampled_from([1.0, 1.33, 1.5]))
    wavelengths = np.array(draw(st.lists(st.floats(300.0, 1500.0), min_size=1, max_size=4)))
    return [ambient, *layers, substrate], thicknesses, wavelengths


@SETTINGS
@given(coherent_stack(absorbing=True))
def test_absorbing_stacks_at_normal_incidence(case):
    indices, thicknesses, wavelengths = case
    R_ref, T_ref = _colour_per_wavelength(indices, thicknesses, wavelengths, 0.0)
    R, T = _ours(indices, thicknesses, wavelengths, 0.0)
    np.testing.assert_allclose(R, R_ref, rtol=0, atol=TOLERANCE)
    np.testing.assert_allclose(T, T_ref, rtol=0, atol=TOLERANCE)


@SETTINGS
@given(coherent_stack(absorbing=False), st.floats(0.0, 80.0))
def test_transparent_stacks_at_oblique_incidence(case, angle):
    indices, thicknesses, wavelengths = case
    # colour-science has no evanescent waves (its angles are real): stay below every critical
    # angle. Total internal reflection is checked against tmm in test_engine_tmm.py.
    assume(indices[0] * np.sin(np.radians(angle)) < min(np.real(indices[1:])) - 1e-3)
    R_ref, T_ref = _colour_per_wavelength(indices, thicknesses, wavelengths, angle)
    R, T = _ours(indices, thicknesses, wavelengths, angle)
    np.testing.assert_allclose(R, R_ref, rtol=0, atol=TOLERANCE)
    np.testing.assert_allclose(T, T_ref, rtol=0, atol=TOLERANCE)


@pytest.mark.parametrize("angle", [0.0, 25.0, 55.0])
def test_dispersive_transparent_stack_over_a_spectrum(angle):
    # A dispersive index (Cauchy-like, made up for the comparison only, not a material claim)
    # checked against colour-science called per wavelength.
    wl = np.linspace(380.0, 780.0, 41)
    high = 2.2 + 0.02 / (wl / 1000.0) ** 2
    low = 1.45 + 0.004 / (wl / 1000.0) ** 2
    indices = [1.0, high, low, high, low, 1.52]
    thicknesses = [55.0, 92.0, 55.0, 92.0]
    R_ref, T_ref = _colour_per_wavelength(indices, thicknesses, wl, angle)
    R, T = _ours(indices, thicknesses, wl, angle)
    np.testing.assert_allclose(R, R_ref, rtol=0, atol=TOLERANCE)
    np.testing.assert_allclose(T, T_ref, rtol=0, atol=TOLERANCE)
