"""Colour pipeline checks against published values and colour-science's own routines.

Every expected number names its source. Values marked "from memory" were recalled, not looked up
at the time of writing; they agree with colour-science's copies of the CIE tables, which the tests
also consult independently.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import colour
from filmoptic import colorimetry as cm
from filmoptic.errors import DataFileError, FilmopticError, WavelengthRangeError

WL = cm.default_wavelengths()
SHAPE = colour.SpectralShape(380, 780, 5)
OBSERVER_NAMES = {2: "CIE 1931 2 Degree Standard Observer", 10: "CIE 1964 10 Degree Standard Observer"}


def colour_science_XYZ(values, illuminant_key="D65", observer=2):
    """XYZ (0-100) by colour-science's own integration on the same 380-780 nm, 5 nm range."""
    cmfs = colour.MSDS_CMFS[OBSERVER_NAMES[observer]].copy().align(SHAPE)
    spd = colour.SDS_ILLUMINANTS[illuminant_key].copy().align(SHAPE)
    sd = colour.SpectralDistribution(np.asarray(values, float), WL)
    return colour.sd_to_XYZ(sd, cmfs, spd, method="Integration")


# ---------------------------------------------------------------------------------------------
# White points
# ---------------------------------------------------------------------------------------------

# CIE 15:2004 and CIE 15:2018, the tables of the CIE standard illuminants: tristimulus values of
# the perfect diffuser (X, Z with Y = 100), 1 nm data (from memory; the tables give 2 decimals).
PUBLISHED_WHITES = [
    ("D65", 2, 95.04, 108.88),
    ("D65", 10, 94.81, 107.32),
    ("A", 2, 109.85, 35.58),
    ("A", 10, 111.14, 35.20),
    ("D50", 2, 96.42, 82.51),
    ("D50", 10, 96.72, 81.43),
    ("C", 2, 98.07, 118.22),
]


@pytest.mark.parametrize("illuminant, observer, X, Z", PUBLISHED_WHITES)
def test_white_point_matches_cie_tables(illuminant, observer, X, Z):
    # 5 nm summation of the 1 nm tables reproduces the 1 nm published whites within their rounding
    # to 2 decimals (measured: 0.005 at most; CIE 15:2018 allows 5 nm summation).
    white = cm.white_point(WL, illuminant, observer)
    assert white[1] == pytest.approx(100.0, abs=1e-9)
    assert white[0] == pytest.approx(X, abs=0.006)
    assert white[2] == pytest.approx(Z, abs=0.006)


# CIE 15:2004 (fluorescent lamps F1–F12) and CIE 15:2018 (LED series), their tables of
# chromaticity coordinates for the 2° observer (from memory), cross-checked with colour-science's
# CCS_ILLUMINANTS below.
PUBLISHED_XY = [
    ("F2", 0.3721, 0.3751),
    ("F7", 0.3129, 0.3292),
    ("F11", 0.3805, 0.3769),
    ("LED-B1", 0.4560, 0.4078),
    ("LED-B5", 0.3118, 0.3236),
    ("LED-V2", 0.3781, 0.3775),
]


@pytest.mark.parametrize("illuminant, x, y", PUBLISHED_XY)
def test_lamp_chromaticities(illuminant, x, y):
    white = cm.white_point(WL, illuminant, 2)
    xy = white[:2] / white.sum()
    assert xy == pytest.approx([x, y], abs=6e-4)


def test_the_cie_illuminants_are_all_offered():
    # The tests below are parametrized over cm.ILLUMINANT_NAMES; it must hold the CIE 15:2018
    # standard and tabulated illuminants: A, C, D50–D75, E, F1–F12 and the LED series.
    cie = {"A", "C", "D50", "D55", "D65", "D75", "E", *(f"F{i}" for i in range(1, 13)),
           "LED-B1", "LED-B2", "LED-B3", "LED-B4", "LED-B5", "LED-BH1", "LED-RGB1", "LED-V1", "LED-V2"}
    assert cie <= set(cm.ILLUMINANT_NAMES)


@pytest.mark.parametrize("name", cm.ILLUMINANT_NAMES)
def test_every_illuminant_white_agrees_with_colour_science_table(name):
    key = f"FL{name[1:]}" if name[0] == "F" and name[1:].isdigit() else name
    published = colour.CCS_ILLUMINANTS[OBSERVER_NAMES[2]][key]
    white = cm.white_point(WL, name, 2)
    assert white[:2] / white.sum() == pytest.approx(published, abs=1e-3)


# ---------------------------------------------------------------------------------------------
# Neutral surfaces
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("observer", [2, 10])
@pytest.mark.parametrize("illuminant", cm.ILLUMINANT_NAMES)
def test_perfect_reflector_is_the_white(illuminant, observer):
    # CIE 15:2018 (CIELAB): the reference white has L* = 100, a* = b* = 0 by construction.
    c = cm.colour_of(WL, np.ones(WL.size), illuminant=illuminant, observer=observer)
    assert c.Lab == pytest.approx([100.0, 0.0, 0.0], abs=1e-9)
    assert c.XYZ[1] == pytest.approx(100.0, abs=1e-9)
    # Adapted to D65, the white of any illuminant displays as sRGB white (IEC 61966-2-1).
    assert c.hex == "#ffffff" and c.in_gamut


@pytest.mark.parametrize("illuminant", ["D65", "A", "F11", "LED-B3"])
@pytest.mark.parametrize("grey", [0.04, 0.18, 0.5])
def test_neutral_grey(illuminant, grey):
    c = cm.colour_of(WL, np.full(WL.size, grey), illuminant=illuminant)
    # CIE 15:2018 eq. 8.1: L* = 116 (Y/Yn)^(1/3) - 16 for Y/Yn > (6/29)^3.
    assert c.Lab[0] == pytest.approx(116 * grey ** (1 / 3) - 16, abs=1e-9)
    assert c.Lab[1:] == pytest.approx([0.0, 0.0], abs=1e-9)
    assert c.LCh[1] == pytest.approx(0.0, abs=1e-9)
    r, g, b = c.rgb8
    assert r == g == b


def test_srgb_mid_grey_under_d65():
    # IEC 61966-2-1: V' = 1.055 L^(1/2.4) - 0.055; a linear 0.2158605 encodes to 128/255.
    linear = ((128 / 255 + 0.055) / 1.055) ** 2.4
    c = cm.colour_of(WL, np.full(WL.size, linear))
    assert c.hex == "#808080"


def test_black_is_neutral_and_displayed_black():
    c = cm.colour_of(WL, np.zeros(WL.size), illuminant="A")
    assert c.hex == "#000000" and c.in_gamut
    assert c.Lab == pytest.approx([0, 0, 0], abs=1e-12)
    white = cm.white_point(WL, "A")
    assert c.xy == pytest.approx(white[:2] / white.sum())  # documented convention for Y = 0


# ---------------------------------------------------------------------------------------------
# sRGB primaries (IEC 61966-2-1)
# ---------------------------------------------------------------------------------------------

# IEC 61966-2-1:1999: linear sRGB -> XYZ (D65) matrix.
IEC_SRGB_TO_XYZ = np.array([
    [0.4124, 0.3576, 0.1805],
    [0.2126, 0.7152, 0.0722],
    [0.0193, 0.1192, 0.9505],
])


@pytest.mark.parametrize("rgb, expected", [
    ((1, 0, 0), "#ff0000"), ((0, 1, 0), "#00ff00"), ((0, 0, 1), "#0000ff"),
    ((1, 1, 0), "#ffff00"), ((0, 1, 1), "#00ffff"), ((1, 0, 1), "#ff00ff"), ((1, 1, 1), "#ffffff"),
])
def test_srgb_primaries(rgb, expected):
    XYZ = 100 * IEC_SRGB_TO_XYZ @ np.asarray(rgb, float)
    c = cm.colour_from_XYZ(XYZ)
    assert c.hex == expected
    assert c.in_gamut


def test_srgb_primary_chromaticities():
    # IEC 61966-2-1 (the sRGB primaries): red (0.64, 0.33), green (0.30, 0.60), blue (0.15, 0.06).
    for column, xy in zip(IEC_SRGB_TO_XYZ.T, [(0.64, 0.33), (0.30, 0.60), (0.15, 0.06)]):
        c = cm.colour_from_XYZ(100 * column)
        assert c.xy == pytest.approx(xy, abs=2e-4)


# ---------------------------------------------------------------------------------------------
# Agreement with colour-science's own integration and conversions
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("observer", [2, 10])
@pytest.mark.parametrize("ours, key", [("D65", "D65"), ("A", "A"), ("F11", "FL11"), ("LED-B2", "LED-B2")])
def test_xyz_matches_colour_science_integration(ours, key, observer):
    rng = np.random.default_rng(7)
    values = rng.random((6, WL.size))
    expected = np.array([colour_science_XYZ(v, key, observer) for v in values])
    got = cm.spectrum_to_XYZ(WL, values, ours, observer)
    assert got == pytest.approx(expected, abs=1e-12)


def test_lab_and_lch_match_colour_science():
    rng = np.random.default_rng(8)
    values = rng.random((5, WL.size))
    for key in ("D65", "A"):
        white = colour_science_XYZ(np.ones(WL.size), key)
        white_xy = colour.XYZ_to_xy(white / 100)
        c = cm.colour_of(WL, values, key)
        for i, v in enumerate(values):
            lab = colour.XYZ_to_Lab(colour_science_XYZ(v, key) / 100, white_xy)
            assert c.Lab[i] == pytest.approx(lab, abs=1e-12)
            assert c.LCh[i] == pytest.approx(colour.Lab_to_LCHab(lab), abs=1e-8)


@pytest.mark.filterwarnings("ignore::colour.utilities.ColourRuntimeWarning")
def test_close_to_colour_science_astm_e308_defaults():
    # colour-science's default (ASTM E308 practice on its full 360-830 nm tables) differs from our
    # 380-780 nm summation only by the tails: measured ΔE00 0.011 at most, far below a visible
    # difference; a changed table or weighting would show.
    rng = np.random.default_rng(9)
    for v in rng.random((5, WL.size)):
        sd = colour.SpectralDistribution(v, WL)
        ref = colour.sd_to_XYZ(sd, colour.MSDS_CMFS[OBSERVER_NAMES[2]], colour.SDS_ILLUMINANTS["D65"])
        ref_lab = colour.XYZ_to_Lab(ref / 100, colour.CCS_ILLUMINANTS[OBSERVER_NAMES[2]]["D65"])
        assert cm.delta_e00(cm.colour_of(WL, v).Lab, ref_lab) < 0.02


def test_batch_equals_single_spectra():
    # Self-consistency of the vectorised path (each single spectrum is tied to colour-science above).
    rng = np.random.default_rng(10)
    values = rng.random((3, 4, WL.size))
    batch = cm.colour_of(WL, values, "D50", 10)
    assert batch.XYZ.shape == (3, 4, 3) and batch.hex.shape == (3, 4) and batch.in_gamut.shape == (3, 4)
    for i in range(3):
        for j in range(4):
            single = cm.colour_of(WL, values[i, j], "D50", 10)
            assert single.Lab == pytest.approx(batch.Lab[i, j])
            assert single.hex == batch.hex[i, j]
            assert batch[i, j].hex == single.hex


def test_non_uniform_grid_agrees_with_uniform():
    # A smooth spectrum sampled on a 1 nm grid with a 5 nm tail gives nearly the same colour
    # (self-consistency of the integration; CIE 15:2018 allows 5 nm summation).
    fine = np.concatenate([np.arange(380.0, 600.0, 1.0), np.arange(600.0, 781.0, 5.0)])

    def spectrum(wl):
        return 0.5 + 0.4 * np.sin(wl / 40.0)

    a = cm.colour_of(fine, spectrum(fine))
    b = cm.colour_of(WL, spectrum(WL))
    assert cm.delta_e00(a, b) < 0.02     # measured 0.012


# ---------------------------------------------------------------------------------------------
# Gamut mapping
# ---------------------------------------------------------------------------------------------

def test_spectral_green_is_flagged_and_mapped_at_constant_lightness_and_hue():
    # A narrow band around 520 nm lies outside sRGB (IEC 61966-2-1 primaries do not reach the
    # spectrum locus; common practice).
    values = np.where(np.abs(WL - 520) <= 10, 1.0, 0.0)
    c = cm.colour_of(WL, values)
    assert c.in_gamut is False
    # Decode the displayed colour and compare in CIELAB under D65 (the display white).
    shown_linear = colour.cctf_decoding(c.rgb8 / 255.0, "sRGB")
    shown_lab = colour.XYZ_to_Lab(colour.RGB_to_XYZ(shown_linear, "sRGB"),
                                  colour.RGB_COLOURSPACES["sRGB"].whitepoint)
    shown_lch = colour.Lab_to_LCHab(shown_lab)
    # 8-bit rounding moves L* and hue a little (measured 0.10 and 0.11°); chroma must have
    # dropped well below the original.
    assert shown_lch[0] == pytest.approx(c.LCh[0], abs=0.3)
    assert shown_lch[2] == pytest.approx(c.LCh[2], abs=0.5)
    assert shown_lch[1] < 0.8 * c.LCh[1]
    # Plain clipping of the same colour would shift the hue noticeably: the mapping is not clipping.
    white_xy = cm.white_point(WL)[:2] / cm.white_point(WL).sum()
    raw = colour.XYZ_to_RGB(c.XYZ / 100, "sRGB", illuminant=white_xy, chromatic_adaptation_transform="Bradford")
    clipped = np.clip(raw, 0, 1)
    clipped_lch = colour.Lab_to_LCHab(colour.XYZ_to_Lab(colour.RGB_to_XYZ(clipped, "sRGB"),
                                                        colour.RGB_COLOURSPACES["sRGB"].whitepoint))
    assert abs(clipped_lch[2] - c.LCh[2]) > abs(shown_lch[2] - c.LCh[2])


def test_gamut_mapping_is_maximal():
    # The mapped colour sits on the gamut boundary: at least one linear channel at 0 or 1.
    values = np.where(np.abs(WL - 470) <= 10, 0.9, 0.02)
    c = cm.colour_of(WL, values)
    assert not c.in_gamut
    linear = colour.cctf_decoding(c.rgb8 / 255.0, "sRGB")
    assert np.min(linear) < 0.01 or np.max(linear) > 0.99


def test_in_gamut_colours_are_not_altered():
    rng = np.random.default_rng(11)
    values = 0.3 + 0.2 * rng.random((20, WL.size))
    c = cm.colour_of(WL, values)
    assert np.all(c.in_gamut)
    white = cm.white_point(WL)
    linear = colour.XYZ_to_RGB(c.XYZ / 100, "sRGB", illuminant=white[:2] / white.sum(),
                               chromatic_adaptation_transform="Bradford")
    expected = np.rint(colour.cctf_encoding(linear, "sRGB") * 255).astype(int)
    assert np.array_equal(c.rgb8, expected)


# ---------------------------------------------------------------------------------------------
# ΔE00
# ---------------------------------------------------------------------------------------------

# G. Sharma, W. Wu, E. N. Dalal, "The CIEDE2000 color-difference formula: implementation notes,
# supplementary test data, and mathematical observations", Color Res. Appl. 30, 21 (2005),
# Table 1 (pairs 1, 7, 17, 25; from memory).
SHARMA_PAIRS = [
    ((50.0, 2.6772, -79.7751), (50.0, 0.0, -82.7485), 2.0425),
    ((50.0, 0.0, 0.0), (50.0, -1.0, 2.0), 2.3669),
    ((50.0, 2.5, 0.0), (73.0, 25.0, -18.0), 27.1492),
    ((60.2574, -34.0099, 36.2677), (60.4626, -34.1751, 39.4387), 1.2644),
]


@pytest.mark.parametrize("lab1, lab2, expected", SHARMA_PAIRS)
def test_delta_e00_sharma_test_data(lab1, lab2, expected):
    assert cm.delta_e00(lab1, lab2) == pytest.approx(expected, abs=1e-4)
    assert cm.delta_e00(lab2, lab1) == pytest.approx(expected, abs=1e-4)


def test_delta_e00_broadcasts_and_accepts_colours():
    a = np.array([p[0] for p in SHARMA_PAIRS])
    b = np.array([p[1] for p in SHARMA_PAIRS])
    assert cm.delta_e00(a, b) == pytest.approx([p[2] for p in SHARMA_PAIRS], abs=1e-4)
    # Two neutral greys differ in lightness only: ΔE00 = ΔL*/S_L with
    # S_L = 1 + 0.015·(L̄ − 50)²/√(20 + (L̄ − 50)²) (Sharma, Wu & Dalal 2005, eq. 22 of CIEDE2000).
    light, dark = cm.colour_of(WL, np.full(WL.size, 0.4)), cm.colour_of(WL, np.full(WL.size, 0.2))
    L1, L2 = float(light.Lab[0]), float(dark.Lab[0])
    mean = (L1 + L2) / 2
    S_L = 1 + 0.015 * (mean - 50) ** 2 / math.sqrt(20 + (mean - 50) ** 2)
    assert cm.delta_e00(light, dark) == pytest.approx((L1 - L2) / S_L, rel=1e-9)
    with pytest.raises(FilmopticError):
        cm.delta_e00([50, 0], [50, 0, 0])


# ---------------------------------------------------------------------------------------------
# Luminous values (ISO 9050:2003)
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("illuminant", ["D65", "A", "F2"])
def test_luminous_of_constant_is_the_constant(illuminant):
    assert cm.luminous(WL, np.full(WL.size, 0.37), illuminant) == pytest.approx(0.37, abs=1e-12)


@pytest.mark.parametrize("illuminant, key", [("D65", "D65"), ("A", "A"), ("F11", "FL11")])
def test_luminous_equals_y_of_the_2_degree_observer(illuminant, key):
    # ISO 9050 weights with S(λ)V(λ); V(λ) is ȳ(λ) of the CIE 1931 observer (CIE 15:2018), so
    # τ_v = Y/100 computed independently by colour-science.
    rng = np.random.default_rng(12)
    values = rng.random((4, WL.size))
    got = cm.luminous(WL, values, illuminant)
    expected = [colour_science_XYZ(v, key, 2)[1] / 100 for v in values]
    assert got == pytest.approx(expected, abs=1e-9)


def test_photopic_efficiency_is_cie_y_bar():
    # CIE 15:2018: V(λ) = ȳ(λ) of the 1931 observer; V(555 nm) = 1 (CIE 1924 definition).
    cmfs = colour.MSDS_CMFS[OBSERVER_NAMES[2]]
    wl = np.arange(380.0, 781.0, 1.0)
    assert cm.photopic_efficiency(wl) == pytest.approx(cmfs[wl][:, 1], abs=1e-6)
    assert cm.photopic_efficiency([555.0])[0] == pytest.approx(1.0)
    assert cm.photopic_efficiency([300.0, 900.0]).tolist() == [0.0, 0.0]


def test_luminous_broadcasts():
    rng = np.random.default_rng(13)
    values = rng.random((2, 3, WL.size))
    got = cm.luminous(WL, values)
    assert got.shape == (2, 3)
    assert got[1, 2] == pytest.approx(cm.luminous(WL, values[1, 2]))
    assert isinstance(cm.luminous(WL, values[0, 0]), float)


# ---------------------------------------------------------------------------------------------
# Illuminants and user spectrum files
# ---------------------------------------------------------------------------------------------

def planck_illuminant_a(wl):
    # CIE 15:2018 eq. 3.1: S_A(λ) = 100 (560/λ)^5 (exp(c2/(2848·560)) − 1)/(exp(c2/(2848 λ)) − 1),
    # c2 = 1.435e7 nm·K.
    c2 = 1.435e7
    return 100 * (560 / wl) ** 5 * np.expm1(c2 / (2848 * 560)) / np.expm1(c2 / (2848 * wl))


def test_illuminant_a_follows_its_defining_formula():
    assert cm.illuminant_spd("A", WL) == pytest.approx(planck_illuminant_a(WL), rel=1e-4)


def test_illuminant_names():
    assert cm.illuminant_spd("d65", [560.0])[0] == pytest.approx(100.0)
    assert cm.illuminant_spd("f11", WL) == pytest.approx(colour.SDS_ILLUMINANTS["FL11"][WL])
    assert cm.illuminant_label("f2") == "F2"
    with pytest.raises(FilmopticError, match="did you mean"):
        cm.illuminant_spd("D56", WL)
    with pytest.raises(WavelengthRangeError):
        cm.illuminant_spd("F2", [300.0])


def test_user_illuminant_file_matches_builtin(tmp_path):
    path = tmp_path / "lamp.csv"
    wl = np.arange(360.0, 831.0, 1.0)
    path.write_text("wavelength_nm,power\n" + "\n".join(f"{w:g},{s:.9g}" for w, s in zip(wl, planck_illuminant_a(wl))))
    before = path.read_bytes()
    values = 0.2 + 0.6 * (WL - 380) / 400
    # Planck's law at 2856 K (CIE 15:2018's definition of illuminant A) against the CIE table:
    # measured 2e-8 in luminous value and 4e-6 in CIELAB.
    assert cm.luminous(WL, values, str(path)) == pytest.approx(cm.luminous(WL, values, "A"), abs=1e-7)
    assert cm.colour_of(WL, values, path).Lab == pytest.approx(cm.colour_of(WL, values, "A").Lab, abs=2e-5)
    assert path.read_bytes() == before  # input files are never written


@pytest.mark.parametrize("content, fragment", [
    ("380 1\n390 x\n", "line 2"),
    ("380 1 2\n390 1 2\n", "2 columns"),
    ("380 1\n", "at least two rows"),
    ("380 1\n380 2\n", "increase strictly"),
    ("380 1\n390 -0.5\n", "negative"),
    ("380 0\n390 0\n", "all values are zero"),
    ("0.38 1\n0.78 1\n", "µm"),
    ("380 1\n390 nan\n", "finite"),
    ("", "at least two rows"),
])
def test_bad_spectrum_files(tmp_path, content, fragment):
    path = tmp_path / "spd.txt"
    path.write_text(content)
    with pytest.raises(DataFileError) as info:
        cm.read_spectrum_file(path)
    message = str(info.value)
    assert "\n" not in message and fragment in message and str(path) in message


# A decimal comma (common practice in much of Europe, and what spreadsheets there export) is
# split by the column separators; the error says so and shows the number as meant.
@pytest.mark.parametrize("content, fragments", [
    ("380 1,5\n780 2,5\n", ["line 1", "found 3", "'1,5' looks like a decimal comma", "'1.5'"]),
    ("380;1,5\n780;2\n", ["line 1", "found 3", "'1,5'", "decimal comma"]),
    ("380 1\n390,5 2,25\n", ["line 2", "found 4", "'390,5'", "'390.5'"]),
])
def test_decimal_comma_gets_a_hint(tmp_path, content, fragments):
    path = tmp_path / "lamp.txt"
    path.write_text(content)
    with pytest.raises(DataFileError) as info:
        cm.read_spectrum_file(path, what="illuminant file")
    message = str(info.value)
    assert "\n" not in message
    for fragment in fragments:
        assert fragment in message, (fragment, message)
    # Three plain columns are not a decimal comma.
    path.write_text("380 1 2\n390 1 2\n")
    with pytest.raises(DataFileError) as info:
        cm.read_spectrum_file(path)
    assert "looks like a decimal comma" not in str(info.value)


def test_spectrum_file_forms(tmp_path):
    path = tmp_path / "resp.txt"
    path.write_text("# detector response\n\n780;0.5\n580;1.0\n380;0.0\n")  # long to short, semicolons
    spd = cm.read_spectrum_file(path, what="detector response")
    assert spd.wavelength_nm.tolist() == [380.0, 580.0, 780.0]
    assert spd.at([480.0, 680.0]).tolist() == [0.5, 0.75]
    with pytest.raises(WavelengthRangeError):
        spd.at([300.0])
    with pytest.raises(DataFileError, match="no such file"):
        cm.read_spectrum_file(tmp_path / "missing.txt")
    with pytest.raises(DataFileError, match="folder"):
        cm.read_spectrum_file(tmp_path)
    binary = tmp_path / "x.bin"
    binary.write_bytes(b"\xff\xfe\x00\x81" * 10)
    with pytest.raises(DataFileError, match="UTF-8"):
        cm.read_spectrum_file(binary)


def test_illuminant_file_must_cover_the_visible(tmp_path):
    path = tmp_path / "narrow.txt"
    path.write_text("400 1\n700 1\n")
    with pytest.raises(WavelengthRangeError, match="400–700"):
        cm.colour_of(WL, np.ones(WL.size), illuminant=path)


# ---------------------------------------------------------------------------------------------
# Grids and observers
# ---------------------------------------------------------------------------------------------

def test_grid_must_cover_the_visible_finely_enough():
    with pytest.raises(FilmopticError, match="380–780"):
        cm.colour_of(np.arange(400.0, 701.0, 5.0), np.ones(61))
    with pytest.raises(FilmopticError, match="too coarse"):
        cm.luminous(np.arange(380.0, 781.0, 20.0), np.ones(21))
    with pytest.raises(FilmopticError, match="values"):
        cm.colour_of(WL, np.ones(5))


def test_spectrum_beyond_the_visible_does_not_change_colour():
    wide = np.arange(300.0, 1001.0, 5.0)
    values = 0.4 + 0.3 * np.cos(wide / 55.0)
    inside = (wide >= 380) & (wide <= 780)
    assert cm.colour_of(wide, values).Lab == pytest.approx(cm.colour_of(wide[inside], values[inside]).Lab)
    assert cm.luminous(wide, values) == pytest.approx(cm.luminous(wide[inside], values[inside]))


def test_observers():
    assert cm.check_observer(2) == 2 and cm.check_observer("10°") == 10
    with pytest.raises(FilmopticError, match="observer"):
        cm.check_observer(5)


def test_weights_are_cached_and_read_only():
    a = cm.tristimulus_weights(WL, "D65", 2)
    b = cm.tristimulus_weights(WL.copy(), "D65", 2)
    assert a is b
    with pytest.raises(ValueError):
        a[0, 0] = 1.0
    assert math.isclose(cm.luminous_weights(WL, "A").sum(), 1.0)


def test_gamut_mapping_is_the_same_in_a_batch_and_alone():
    bands = np.array([np.where(np.abs(WL - c) <= 12, 1.0, 0.03) for c in (450, 500, 530, 600, 650)])
    batch = cm.colour_of(WL, bands)
    assert not np.all(batch.in_gamut)
    for i, values in enumerate(bands):
        single = cm.colour_of(WL, values)
        assert single.hex == batch.hex[i] and single.in_gamut == batch.in_gamut[i]


def test_srgb_conversion_is_colour_science_bradford():
    # The cached matrix reproduces colour-science's XYZ_to_RGB with Bradford adaptation exactly.
    rng = np.random.default_rng(14)
    XYZ = 100 * rng.random((10, 3))
    for name in ("D65", "A", "F11"):
        white = cm.white_point(WL, name)
        white_xy = white[:2] / white.sum()
        expected = colour.XYZ_to_RGB(XYZ / 100, "sRGB", illuminant=white_xy,
                                     chromatic_adaptation_transform="Bradford")
        assert cm._linear_srgb(XYZ, white_xy) == pytest.approx(expected, abs=1e-12)


def test_illuminant_tables_given_as_objects_are_not_confused_by_the_cache():
    # Luminous weighting with a flat lamp is the V(λ)-weighted mean (ISO 9050 with S = 1); with a
    # lamp that is zero below 580 nm it weighs only the long half. Tables created and freed one
    # after another must each get their own weights (ids of freed objects are reused by Python).
    wl = cm.default_wavelengths()
    ramp = (wl >= 580).astype(float)
    results = []
    for lamp in (np.ones_like(wl), ramp, np.ones_like(wl), ramp):
        table = cm.TabulatedSpectrum(wl.copy(), lamp.copy(), "test lamp")
        results.append(float(cm.luminous(wl, ramp, table)))
        del table
    flat_expected = float(np.sum(cm.photopic_efficiency(wl) * ramp) / np.sum(cm.photopic_efficiency(wl)))
    assert results[0] == pytest.approx(flat_expected, rel=1e-9)
    assert results[1] == pytest.approx(1.0, rel=1e-12)
    assert results[2] == pytest.approx(results[0], rel=1e-12)
    assert results[3] == pytest.approx(1.0, rel=1e-12)
