"""The engine against the independent ``tmm`` package on random stacks.

Reference: S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720 (2016), implemented
in the ``tmm`` package (coh_tmm for coherent stacks, inc_tmm for stacks with thick incoherent
slabs). Both use N = n + i·k with k >= 0, like filmoptic. Stacks are drawn by hypothesis
(deterministic): random layer counts, constant indices and shipped dispersive tables (metals
included), angles 0–85°, s and p, half-space and thick-slab substrates, thick slabs inside the
stack, light from either side. Agreement is required to 1e-9 in R and T. tmm's T into an
absorbing half-space (Si, Ti, a constant with k > 0) is light absorbed in that substrate: the
engine reports it as ``A_substrate`` and T = 0 there, and the check follows that split.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import tmm
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from filmoptic.engine import compute, compute_indices
from filmoptic.materials import parse_material
from filmoptic.stack import parse_stack

TOLERANCE = 1e-9
SETTINGS = settings(max_examples=300, deadline=None, derandomize=True,
                    suppress_health_check=[HealthCheck.too_slow])

# Shipped tables (their files cite Johnson & Christy 1972/1974, Green 2008, …); all cover
# 400–1000 nm.
DISPERSIVE = ["Ti", "Ag", "Au", "Cr", "Cu", "TiO2", "SiO2", "Si"]
TRANSPARENT_SUBSTRATES = ["glass", "SiO2", "n=1.52", "n=1.75", "sapphire"]


def _number(x: float) -> str:
    return repr(float(x))


@st.composite
def constant_index(draw, absorbing=True):
    n = draw(st.floats(1.0, 4.0))
    if absorbing and draw(st.booleans()):
        k = draw(st.floats(0.0, 5.0))
        return f"n={_number(n)}+{_number(k)}j"
    return f"n={_number(n)}"


@st.composite
def material(draw):
    if draw(st.booleans()):
        return draw(st.sampled_from(DISPERSIVE))
    return draw(constant_index())


@st.composite
def coherent_layer(draw):
    name = draw(material())
    # Mostly thin films; now and then an opaque micrometre of metal.
    thickness = draw(st.one_of(st.floats(0.0, 300.0), st.floats(300.0, 3000.0)))
    return f"{name} {_number(thickness)}nm"


@st.composite
def thick_slab(draw):
    # A weakly absorbing plate: its absorption over millimetres matters (Beer–Lambert).
    n = draw(st.floats(1.3, 2.0))
    k = draw(st.sampled_from([0.0, 1e-7, 1e-6, 1e-5]))
    mm = draw(st.floats(0.1, 5.0))
    index = f"n={_number(n)}+{_number(k)}j" if k else f"n={_number(n)}"
    return f"{index} {_number(mm)}mm"


@st.composite
def random_case(draw, incoherent: bool):
    layers = draw(st.lists(coherent_layer(), min_size=0, max_size=7))
    if incoherent and draw(st.booleans()) and layers:
        # A thick slab somewhere inside the stack: coherent packets on both sides.
        position = draw(st.integers(0, len(layers)))
        layers.insert(position, draw(thick_slab()))
    if incoherent:
        substrate = draw(thick_slab())
    else:
        substrate = draw(st.one_of(st.sampled_from(TRANSPARENT_SUBSTRATES + ["Si", "Ti"]),
                                   constant_index()))
    ambient = draw(st.sampled_from(["air", "n=1", "n=1.33", "n=1.5"]))
    angle = draw(st.one_of(st.just(0.0), st.floats(0.0, 85.0)))
    pol = draw(st.sampled_from(["s", "p"]))
    wavelengths = draw(st.lists(st.floats(400.0, 1000.0), min_size=1, max_size=3, unique=True))
    # Light from the back needs a way in: through a thick slab's back face, or through a
    # transparent half-space. An absorbing half-space (Si, Ti) is refused (tested below).
    opaque = not incoherent and np.any(parse_material(substrate).nk(np.array(wavelengths)).imag > 0)
    reverse = draw(st.booleans()) and not opaque
    return " / ".join(layers + [substrate]), ambient, angle, pol, reverse, np.array(wavelengths)


def _tmm_lists(stack, wavelength):
    """n, d and coherence lists in tmm's form, from the very materials filmoptic uses."""
    n = [complex(stack.ambient.nk(wavelength))]
    d = [math.inf]
    c = ["i"]
    for layer in stack.layers:
        n.append(complex(layer.material.nk(wavelength)))
        d.append(float(layer.thickness_nm))
        c.append("i" if layer.thick else "c")
    n.append(complex(stack.substrate.material.nk(wavelength)))
    if stack.substrate.thickness_nm is None:
        d.append(math.inf)
        c.append("i")
    else:
        d += [float(stack.substrate.thickness_nm), math.inf]
        c += ["i", "i"]
        n.append(complex(stack.exit_medium.nk(wavelength)))
    return n, d, c


def _reference(stack, wavelength, angle, pol, reverse, incoherent):
    """tmm's R, T and the light absorbed in the substrate slab (None for a half-space)."""
    n, d, c = _tmm_lists(stack, wavelength)
    if reverse:
        n, d, c = n[::-1], d[::-1], c[::-1]
    theta = math.radians(angle)
    if incoherent:
        out = tmm.inc_tmm(pol, n, d, c, theta, wavelength)
        absorbed = tmm.inc_absorp_in_each_layer(out)
        slab = 1 if reverse else len(n) - 2
        return out["R"], out["T"], absorbed[slab]
    out = tmm.coh_tmm(pol, n, d, theta, wavelength)
    return out["R"], out["T"], None


def _evanescent_in_a_thick_layer(stack, incident, wavelengths, angle):
    """True where the light reaches a thick (incoherent) layer or the exit medium only as an
    evanescent wave, i.e. beyond a critical angle. tmm.inc_tmm cannot treat that case (it asserts
    or returns NaN), so there the engine is checked against the physics instead."""
    if angle == 0:
        return np.zeros(len(wavelengths), dtype=bool)
    parallel = incident.nk(wavelengths).real * math.sin(math.radians(angle))
    thick = [layer.material for layer in stack.layers if layer.thick] + [stack.substrate.material]
    if stack.substrate.thickness_nm is not None:
        thick.append(stack.exit_medium)
    return np.any([m.nk(wavelengths).real <= parallel for m in thick], axis=0)


def _check(text, ambient, angle, pol, reverse, wavelengths, incoherent):
    stack = parse_stack(text, ambient=ambient)
    incident = stack.substrate.material if reverse and stack.substrate.thickness_nm is None else (
        stack.exit_medium if reverse else stack.ambient)
    if angle > 0 and np.any(incident.nk(wavelengths).imag > 0):
        angle = 0.0  # an angle of incidence needs a transparent incident medium (tmm too)
    result = compute(stack, wavelengths, angle_deg=angle, polarization=pol, reverse=reverse)
    beyond_critical = (
        _evanescent_in_a_thick_layer(stack.reversed() if reverse else stack, incident, wavelengths, angle)
        if incoherent else np.zeros(len(wavelengths), dtype=bool)
    )
    for i, wavelength in enumerate(wavelengths):
        if beyond_critical[i]:
            # Total internal reflection at a thick layer: an evanescent field decays over
            # millimetres to nothing, so no light passes (Born & Wolf, Principles of Optics, §1.5.4).
            assert result.T[i] <= 1e-12, (text, wavelength, result.T[i])
            assert abs(result.R[i] + result.T[i] + result.A[i] - 1) <= 1e-12
            continue
        R_ref, T_ref, slab_ref = _reference(stack, wavelength, angle, pol, reverse, incoherent)
        assert abs(result.R[i] - R_ref) <= TOLERANCE, (text, wavelength, result.R[i], R_ref)
        assert abs(result.A[i] - result.A_layers[i] - result.A_substrate[i]) <= 1e-15
        if result.transmission == "opaque":
            # Light entering an absorbing half-space stays there: tmm's T is the substrate's share.
            assert result.T[i] == 0.0
            assert abs(result.A_substrate[i] - T_ref) <= TOLERANCE, (text, wavelength, T_ref)
            continue
        assert abs(result.T[i] - T_ref) <= TOLERANCE, (text, wavelength, result.T[i], T_ref)
        if slab_ref is None:
            assert result.A_substrate[i] == 0.0
            continue
        others = [stack.ambient, stack.exit_medium] + [layer.material for layer in stack.layers]
        if all(float(np.imag(m.nk(wavelength))) == 0.0 for m in others):
            # The slab is the only absorber: by conservation of energy it takes all of tmm's
            # 1 − R − T, exactly (Byrnes 2016, eq. for incoherent absorption).
            assert abs(result.A_substrate[i] - (1 - R_ref - T_ref)) <= TOLERANCE, (text, wavelength)
        else:
            # tmm attributes the power at the face of a weakly absorbing incoherent slab by the
            # field inside the neighbouring coherent layer, we by the net intensity crossing the
            # slab's faces; the two differ at order k of the slab along the slanted path (measured
            # up to 1.1·k/cos θ in the slab), so the tolerance scales with it. The bare slab is
            # checked exactly against Beer–Lambert and Fresnel in test_engine_closed_forms.py.
            n_slab = complex(stack.substrate.material.nk(wavelength))
            sin_in = float(np.real(incident.nk(wavelength))) * math.sin(math.radians(angle)) / n_slab.real
            allowed = TOLERANCE + 2.0 * n_slab.imag / math.sqrt(1.0 - sin_in**2)
            assert abs(result.A_substrate[i] - slab_ref) <= allowed, (text, wavelength, slab_ref)


@SETTINGS
@given(random_case(incoherent=False))
def test_coherent_stacks_agree_with_coh_tmm(case):
    # Byrnes 2016 (tmm.coh_tmm): coherent layers on a half-space substrate.
    _check(*case, incoherent=False)


@SETTINGS
@given(random_case(incoherent=True))
def test_stacks_with_thick_slabs_agree_with_inc_tmm(case):
    # Byrnes 2016 §6 (tmm.inc_tmm); Katsidis & Siapkas, Appl. Opt. 41, 3978 (2002).
    _check(*case, incoherent=True)


@pytest.mark.parametrize("angle", [0.0, 40.0, 70.0])
@pytest.mark.parametrize("pol", ["s", "p"])
def test_total_internal_reflection_and_frustrated_tir_agree_with_tmm(angle, pol):
    # From glass (n = 1.5) through an air gap into glass: beyond the critical angle (41.8°) the
    # gap is evanescent and only tunnelling passes light (frustrated TIR); tmm uses the same
    # decaying branch (Byrnes 2016, appendix D).
    wl = np.array([500.0, 633.0])
    gaps = np.array([0.0, 50.0, 200.0, 1000.0])
    R, T = compute_indices([1.5, 1.0, 1.5], [gaps], wl, angle_deg=angle, polarization=pol)
    for i, gap in enumerate(gaps):
        for j, w in enumerate(wl):
            out = tmm.coh_tmm(pol, [1.5, 1.0, 1.5], [math.inf, gap, math.inf], math.radians(angle), w)
            assert abs(R[i, j] - out["R"]) <= TOLERANCE
            assert abs(T[i, j] - out["T"]) <= TOLERANCE


@pytest.mark.parametrize("pol", ["s", "p"])
def test_total_internal_reflection_at_a_thick_gap(pol):
    # The random cases above (derandomized) never reach the evanescent branch of _check, so it is
    # exercised here on purpose: glass (n = 1.5) / 2 mm of air / glass. Beyond the critical angle
    # (41.8°) the field in the gap decays over millimetres to nothing: R = 1, T = 0 (total internal
    # reflection; Born & Wolf, Principles of Optics, §1.5.4). Below it, tmm.inc_tmm applies.
    stack_text, ambient = "n=1 2mm / n=1.5", "n=1.5"
    wl = np.array([500.0, 633.0])
    stack = parse_stack(stack_text, ambient=ambient)
    assert np.all(_evanescent_in_a_thick_layer(stack, stack.ambient, wl, 50.0))
    _check(stack_text, ambient, 50.0, pol, False, wl, incoherent=True)
    beyond = compute(stack, wl, angle_deg=50.0, polarization=pol)
    np.testing.assert_allclose(beyond.R, 1.0, atol=1e-12)
    assert not np.any(_evanescent_in_a_thick_layer(stack, stack.ambient, wl, 30.0))
    _check(stack_text, ambient, 30.0, pol, False, wl, incoherent=True)


def test_a_batch_of_thicknesses_and_angles_equals_one_call_each():
    # The vectorised grid must give exactly what single evaluations (checked against tmm
    # above) give: thickness sets × angles × wavelengths.
    rng = np.random.default_rng(7)
    stack = parse_stack("TiO2 ? / Ag 12nm / SiO2 ? / glass 1mm")
    wl = np.linspace(400.0, 900.0, 11)
    thicknesses = rng.uniform(0.0, 200.0, size=(4, 3, 2))
    angles = np.array([0.0, 30.0, 60.0])
    batch = compute(stack, wl, thickness_nm=thicknesses, angle_deg=angles, polarization="p")
    assert batch.R.shape == (4, 3, 3, 11)
    for index in np.ndindex(4, 3):
        for a, angle in enumerate(angles):
            single = compute(stack.bind(thicknesses[index]), wl, angle_deg=angle, polarization="p")
            np.testing.assert_allclose(batch.R[index][a], single.R, rtol=0, atol=1e-13)
            np.testing.assert_allclose(batch.T[index][a], single.T, rtol=0, atol=1e-13)


def test_unpolarized_is_the_mean_of_s_and_p_as_in_tmm():
    # tmm.unpolarized_RT averages the s and p powers (Byrnes 2016).
    stack = parse_stack("Cr 8nm / TiO2 40nm / glass", ambient="n=1")
    wl = np.array([450.0, 650.0])
    result = compute(stack, wl, angle_deg=50.0)
    for i, w in enumerate(wl):
        n, d, _ = _tmm_lists(stack, w)
        ref = tmm.unpolarized_RT(n, d, math.radians(50.0), w)
        assert abs(result.R[i] - ref["R"]) <= TOLERANCE
        assert abs(result.T[i] - ref["T"]) <= TOLERANCE


@pytest.mark.parametrize("thickness_um", [30.0, 3000.0, 60000.0])
def test_very_thick_coherent_layers_agree_with_tmm(thickness_um):
    # Phases of 10³–10⁶ rad: the engine's fast exp(i·φ) and its fallback both agree with tmm.
    stack = parse_stack(f"n=1.5+1e-7j {thickness_um}um / n=2.0 50nm / n=1.52", ambient="n=1")
    wl = np.array([400.0, 632.8, 1000.0])
    for pol, angle in (("s", 0.0), ("p", 30.0)):
        result = compute(stack, wl, angle_deg=angle, polarization=pol)
        for i, w in enumerate(wl):
            R_ref, T_ref, _ = _reference(stack, w, angle, pol, False, False)
            assert abs(result.R[i] - R_ref) <= TOLERANCE
            assert abs(result.T[i] - T_ref) <= TOLERANCE


def test_water_ambient_at_an_angle_uses_its_real_index():
    # Water's k is ~1e-9 in the visible (the shipped table): it is transparent over any path that
    # matters, so an angle of incidence is allowed and equals tmm with the real index (tmm itself
    # needs a real n0·sin θ0; Byrnes 2016).
    stack = parse_stack("TiO2 60nm / n=1.52", ambient="water")
    wl = np.array([500.0, 600.0])
    assert np.all(stack.ambient.nk(wl).imag > 0)  # the table does carry a small k
    result = compute(stack, wl, angle_deg=40.0, polarization="s")
    for i, w in enumerate(wl):
        n, d, _ = _tmm_lists(stack, w)
        n[0] = n[0].real
        out = tmm.coh_tmm("s", n, d, math.radians(40.0), w)
        assert abs(result.R[i] - out["R"]) <= TOLERANCE
        assert abs(result.T[i] - out["T"]) <= TOLERANCE
