"""Colours and luminous values of real stacks: an independent calculation, physics, and practice.

* End to end: spectra from the independent ``tmm`` package (S. J. Byrnes, "Multilayer optical
  calculations", arXiv:1603.02720, 2016), integrated by colour-science's own ``sd_to_XYZ`` and
  converted by its ``XYZ_to_Lab``, against :func:`filmoptic.colorimetry.appearance`.
* Physics of thin-film interference colours (Macleod, *Thin-Film Optical Filters*, ch. 3).
* Interference colour orders seen in practice on oxidised silicon and titanium.
"""

from __future__ import annotations

import numpy as np
import pytest

from filmoptic import colorimetry as cm
from filmoptic.engine import compute
from filmoptic.materials import parse_material
from filmoptic.stack import parse_stack
from reference_calculations import colour_science_XYZ_Lab, tmm_unpolarized

WL = cm.default_wavelengths()


# ---------------------------------------------------------------------------------------------
# Independent reference: tmm spectra, colour-science integration
# ---------------------------------------------------------------------------------------------

def reference_luminous(values, illuminant_key):
    # ISO 9050:2003 weights S(λ)·V(λ); V(λ) is ȳ of the CIE 1931 observer (CIE 15:2018), so the
    # luminous value is Y/100 of the 2° observer.
    return colour_science_XYZ_Lab(values, WL, illuminant_key, 2)[0][1] / 100


END_TO_END = [
    # stack, ambient, illuminant (ours, colour-science's), observer, angle
    ("TiO2 60nm / Ti", "air", ("D65", "D65"), 2, 0.0),
    ("Ti 12nm / glass 4mm", "air", ("A", "A"), 10, 0.0),
    ("[TiO2 55nm / SiO2 92nm]x3 / glass 1mm", "air", ("F11", "FL11"), 2, 30.0),
    ("SiO2 300nm / Si", "air", ("D50", "D50"), 2, 45.0),
    ("Ag 10nm / n=1.52", "air", ("LED-B3", "LED-B3"), 10, 0.0),
    ("Cr 8nm / glass 2mm", "n=1.33", ("D65", "D65"), 2, 20.0),
]


@pytest.mark.parametrize("text, ambient, illuminant, observer, angle", END_TO_END)
def test_appearance_against_tmm_and_colour_science(text, ambient, illuminant, observer, angle):
    ours, theirs = illuminant
    stack = parse_stack(text, ambient=ambient)
    result = cm.appearance(stack, illuminant=ours, observer=observer, angle_deg=angle)
    R, T = tmm_unpolarized(stack, WL, angle)
    views = [(result.reflected, R)]
    lum = [(result.luminous.R, R)]
    if result.transmission == "opaque":
        # tmm's T into an absorbing half-space (Ti, Si) is light the substrate absorbs: no
        # transmitted colour, luminous T 0, and that light is the substrate's absorptance.
        assert result.transmitted is None and result.luminous.T == 0.0
        lum.append((result.luminous.A_substrate, T))
    else:
        views.append((result.transmitted, T))
        lum.append((result.luminous.T, T))
    if stack.substrate.thickness_nm is not None:
        R_back, _ = tmm_unpolarized(stack, WL, angle, reverse=True)
        views.append((result.reflected_reverse, R_back))
        lum.append((result.luminous.R_reverse, R_back))
    else:
        assert result.reflected_reverse is None and result.luminous.R_reverse is None
    for colour_result, spectrum in views:
        XYZ, Lab = colour_science_XYZ_Lab(spectrum, WL, theirs, observer)
        # Measured agreement: ΔE00 2e-13, XYZ 3e-14, luminous 3e-16 (same tables, same
        # integration); the bounds leave room for rounding only.
        assert cm.delta_e00(colour_result.Lab, Lab) < 1e-9
        np.testing.assert_allclose(colour_result.XYZ, XYZ, rtol=0, atol=1e-10)
    for value, spectrum in lum:
        assert value == pytest.approx(reference_luminous(spectrum, theirs), abs=1e-12)


def test_appearance_over_angles_matches_single_angles():
    # Self-consistency of the vectorised angle path; single angles are tied to tmm above.
    stack = parse_stack("Ti 12nm / glass 4mm")
    many = cm.appearance(stack, illuminant="A", angle_deg=[0.0, 30.0, 60.0])
    for i, angle in enumerate([0.0, 30.0, 60.0]):
        one = cm.appearance(stack, illuminant="A", angle_deg=angle)
        assert many.reflected[i].Lab == pytest.approx(one.reflected.Lab)
        assert many.reflected_reverse[i].hex == one.reflected_reverse.hex
        assert many.luminous.T[i] == pytest.approx(one.luminous.T)


def test_sweep_matches_appearance_of_each_thickness():
    # Self-consistency: the vectorised sweep against single appearances (tied to tmm above).
    sweep = cm.colour_sweep("TiO2 ? / glass 2mm", [0.0, 37.5, 120.0], illuminant="F2", observer=10, angle_deg=15)
    for i, d in enumerate([0.0, 37.5, 120.0]):
        one = cm.appearance(f"TiO2 {d}nm / glass 2mm", illuminant="F2", observer=10, angle_deg=15)
        assert cm.delta_e00(sweep.reflected[i], one.reflected) < 1e-10     # measured 8e-14
        assert sweep.transmitted.hex[i] == one.transmitted.hex
        assert sweep.luminous_T[i] == pytest.approx(one.luminous.T, abs=1e-12)
        assert sweep.luminous_R[i] == pytest.approx(one.luminous.R, abs=1e-12)


# ---------------------------------------------------------------------------------------------
# Physics
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("text", ["TiO2 ? / Ti", "SiO2 ? / Si", "[TiO2 20nm / SiO2 ?]x2 / glass 3mm"])
def test_zero_thickness_is_the_bare_substrate(text):
    # A layer of zero thickness is no layer (Macleod, ch. 2: the characteristic matrix is the unit
    # matrix): the colour at 0 nm is that of the stack without it.
    stack = parse_stack(text)
    sweep = cm.colour_sweep(stack, [0.0])
    without = parse_stack(text.replace("TiO2 ? /", "").replace("SiO2 ? /", "").replace(" / SiO2 ?", ""))
    bare = cm.appearance(without)
    assert cm.delta_e00(sweep.reflected[0], bare.reflected) < 1e-10      # measured 2e-13
    assert sweep.luminous_R[0] == pytest.approx(bare.luminous.R, abs=1e-12)
    assert sweep.luminous_T[0] == pytest.approx(bare.luminous.T, abs=1e-12)


def test_colour_of_bare_substrate_follows_fresnel():
    # Fresnel at normal incidence, R = ((n0 − n1)/(n0 + n1))² (Hecht, *Optics*): a dispersionless
    # substrate is grey with luminous R equal to that constant.
    result = cm.appearance("n=1.52", ambient="n=1")
    assert result.luminous.R == pytest.approx(((1.52 - 1) / 2.52) ** 2, abs=1e-12)
    assert result.reflected.LCh[1] == pytest.approx(0.0, abs=1e-9)


def test_half_wave_layer_is_absent_at_its_design_wavelength(tmp_path):
    # A half-wave layer (n·d = λ0/2) is an absentee layer at λ0 (Macleod, ch. 3): seen by light
    # of that wavelength only, the part looks like bare glass; a quarter-wave layer does not.
    lam0, n_film = 550.0, 2.3
    lamp = tmp_path / "narrow-lamp.txt"
    lamp.write_text("380 0\n545 0\n549.9 0\n550 1\n550.1 0\n555 0\n780 0\n")
    wl = np.arange(380.0, 780.01, 0.1)
    def seen(text):
        return cm.luminous(wl, compute(text, wl).R, illuminant=lamp)
    bare = seen("n=1.52")
    assert seen(f"n={n_film} {lam0 / 2 / n_film}nm / n=1.52") == pytest.approx(bare, rel=1e-4)
    quarter = seen(f"n={n_film} {lam0 / 4 / n_film}nm / n=1.52")
    # Quarter-wave: R = ((n0·ns − n1²)/(n0·ns + n1²))² (Macleod, ch. 3).
    assert quarter == pytest.approx(((1.52 - n_film**2) / (1.52 + n_film**2)) ** 2, rel=1e-3)


def test_half_wave_colour_fades_to_neutral_at_high_order():
    # Interference colours are strong in the first orders and wash out to a neutral "higher-order
    # white" as the order rises, since many fringes fall under each colour-matching function
    # (common practice; the Michel-Lévy interference colour chart shows the same).
    wl = np.arange(380.0, 780.01, 0.5)
    chroma = {}
    for order in (1, 2, 20):
        d = order * 550.0 / 2 / 2.3
        chroma[order] = cm.colour_of(wl, compute(f"n=2.3 {d}nm / n=1.52", wl).R).LCh[1]
    assert chroma[1] > 20 and chroma[2] > 20
    assert chroma[20] < 0.5


def test_colour_cycles_with_period_of_half_a_wavelength():
    # For a dispersionless film the reflectance at λ depends on n·d/λ only; luminous R, weighted
    # near the eye's peak (555 nm), has its minima at the half-wave orders n·d = m·λ/2 (a high-index
    # film on glass: half-wave absentee = minimum; Macleod ch. 3), so the colour cycles with period
    # Δ(n·d) ≈ 555/2 nm.
    n = 2.0
    d = np.arange(0.0, 800.0, 0.5)
    sweep = cm.colour_sweep(f"n={n} ? / n=1.52", d)
    R = sweep.luminous_R
    minima = np.flatnonzero((R[1:-1] < R[:-2]) & (R[1:-1] < R[2:])) + 1
    optical = n * d[minima]
    assert len(optical) >= 4
    assert np.diff(optical[:4]) == pytest.approx(555 / 2, rel=0.02)
    assert optical[0] == pytest.approx(555 / 2, rel=0.03)
    # One period later the lightness comes back (the hue drifts: each wavelength has its own
    # period, which is why colours grow more saturated, then wash out, order by order).
    period = 555 / 2 / n
    starts = np.arange(10.0, 140.0, 10.0)
    i, j = np.searchsorted(d, starts), np.searchsorted(d, starts + period)
    assert np.max(np.abs(sweep.reflected.Lab[i, 0] - sweep.reflected.Lab[j, 0])) < 5.0


# ---------------------------------------------------------------------------------------------
# Colour orders seen in practice
# ---------------------------------------------------------------------------------------------

# Interference colours of thermally grown SiO2 on silicon in daylight, at normal incidence:
# W. A. Pliskin and E. E. Conrad, "Nondestructive determination of thickness and refractive index
# of transparent films", IBM J. Res. Dev. 8, 43 (1964), colour chart; reproduced in many
# fabrication handbooks and in F. Henrie et al., "Electronic color charts for dielectric films on
# silicon", Opt. Express 12, 1464 (2004). Thickness (nm) → colour name, from memory; the CIELAB
# hue angle ranges are broad bands around each named colour.
SIO2_ON_SI = [
    (100, "dark violet to red violet", (270, 330)),
    (120, "royal blue", (240, 300)),
    (150, "light blue to metallic blue", (225, 280)),
    (220, "gold with slight yellow-orange", (55, 110)),
    (270, "red-violet", (290, 345)),
    (310, "blue", (235, 290)),
    (350, "green to yellow-green", (120, 200)),
    (440, "violet-red", (310, 360)),
    (520, "green", (150, 210)),
]


@pytest.mark.parametrize("thickness, name, hue_range", SIO2_ON_SI)
def test_thermal_oxide_on_silicon_colour_chart(thickness, name, hue_range):
    # Thermal oxide has the index of fused silica (Malitson 1965 data); silicon from Green 2008.
    result = cm.appearance(f"SiO2:Malitson-1965 {thickness}nm / Si")
    L, C, h = result.reflected.LCh
    assert C > 10, name
    lo, hi = hue_range
    assert lo <= h <= hi, (name, h)


def _hue_class(h: float) -> str:
    bands = [(20, "orange"), (70, "yellow"), (110, "green"), (190, "cyan"), (235, "blue"),
             (290, "purple"), (340, "red")]
    name = "red"
    for lo, label in bands:
        if h >= lo:
            name = label
    return name


def _colour_sequence(sweep, min_chroma=12.0) -> list:
    sequence = []
    for L, C, h in sweep.reflected.LCh:
        if C < min_chroma:
            continue
        label = _hue_class(h)
        if not sequence or sequence[-1] != label:
            sequence.append(label)
    return sequence


def _colour_bands(sweep, min_chroma=12.0) -> list:
    """(hue class, middle thickness in nm) of each run of one colour along the sweep."""
    runs = []
    for d, (L, C, h) in zip(sweep.thickness_nm, sweep.reflected.LCh):
        if C < min_chroma:
            continue
        label = _hue_class(h)
        if runs and runs[-1][0] == label:
            runs[-1][2] = d
        else:
            runs.append([label, d, d])
    return [(label, (start + end) / 2) for label, start, end in runs]


def _is_subsequence(wanted, seen) -> bool:
    it = iter(seen)
    return all(any(w == s for s in it) for w in wanted)


@pytest.mark.parametrize("oxide", ["TiO2", "TiO2:Jolivet-2023-amorphous"])
def test_oxidised_titanium_colour_order(oxide):
    # The colour order of anodised or heat-tinted titanium as the oxide thickens: gold/bronze,
    # purple, blue, (light blue,) yellow-gold, magenta/purple, blue-teal, green — common practice
    # of titanium anodisers, who set the colour by the anodising voltage.
    sweep = cm.colour_sweep(f"{oxide} ? / Ti", np.arange(0.0, 230.0, 1.0))
    seen = _colour_sequence(sweep)
    assert _is_subsequence(["yellow", "purple", "blue", "yellow", "purple", "blue", "green"], seen), seen
    # The first colour is a warm gold/bronze (b* > 0), before any purple.
    first = np.flatnonzero(sweep.reflected.LCh[:, 1] > 12)[0]
    assert sweep.reflected.Lab[first, 2] > 0
    # Anchored to thickness, not only order. Anodisers' charts (common practice, from memory:
    # bronze near 10–15 V, purple ~20 V, blue 25–35 V, second gold 50–60 V, magenta/purple
    # 70–80 V, green 90–110 V) with anodic TiO2 growing about 2 nm per volt (from memory) put
    # the middle of each colour's thickness band in these ranges (nm):
    bands = _colour_bands(sweep)
    expected = [("yellow", 15, 35), ("purple", 35, 50), ("blue", 50, 75),
                ("yellow", 100, 130), ("purple", 140, 170), ("green", 180, 225)]
    position = 0
    for name, low, high in expected:
        while bands[position][0] != name:
            position += 1
        centre = bands[position][1]
        assert low <= centre <= high, (name, centre, bands)
        position += 1
    # One order later a colour comes back after half a wave of optical thickness (Macleod ch. 3):
    # the two blues lie λ/(2n) apart, with n of the oxide near the eye's peak (555 nm).
    blues = [centre for name, centre in bands if name == "blue"]
    n = parse_material(oxide).nk(555.0).real
    assert blues[1] - blues[0] == pytest.approx(555.0 / (2 * n), rel=0.08)
