"""The shipped CIE tables and the closed-form colour transforms, against colour-science.

colour-science is the independent reference: the tables must be its copies of the CIE data value
for value, and every transform must give its numbers to 1e-12 (its own implementations of
CIE 015:2018, ISO/CIE 11664-4 and -6, CIE 142-2001 and IEC 61966-2-1).
"""

from __future__ import annotations

import numpy as np
import pytest

import colour

from filmoptic import colorimetry as cm
from filmoptic.cie import tables, transforms

OBSERVER_NAMES = {2: "CIE 1931 2 Degree Standard Observer", 10: "CIE 1964 10 Degree Standard Observer"}
WL = cm.default_wavelengths()


@pytest.mark.parametrize("observer", [2, 10])
def test_colour_matching_functions_are_colour_sciences(observer):
    # ISO/CIE 11664-1:2019 tables as colour-science carries them, 360–830 nm at 1 nm.
    wl, cmf = tables.cmf_table(observer)
    ref = colour.MSDS_CMFS[OBSERVER_NAMES[observer]]
    np.testing.assert_array_equal(wl, ref.wavelengths)
    np.testing.assert_array_equal(cmf, ref.values)
    assert "11664-1" in tables.table_header(f"cmf_{observer}.txt")["reference"]


def test_photopic_efficiency_is_colour_sciences():
    # V(λ), CIE 1924 (ISO/CIE 23539:2023), equal to ȳ of the 2° observer (CIE 015:2018, Table 1).
    wl, v = tables.photopic_table()
    ref = colour.colorimetry.SDS_LEFS_PHOTOPIC["CIE 1924 Photopic Standard Observer"]
    np.testing.assert_array_equal(wl, ref.wavelengths)
    np.testing.assert_array_equal(v, ref.values)
    # The two published tables differ only in the last of their seven significant digits.
    np.testing.assert_allclose(v, tables.cmf_table(2)[1][:, 1], rtol=1e-6, atol=1e-12)
    assert "23539" in tables.table_header("v_photopic.txt")["reference"]


@pytest.mark.parametrize("name", tables.SHIPPED_ILLUMINANTS)
def test_every_shipped_illuminant_is_colour_sciences(name):
    # CIE 015:2018 Tables 5–10 data as colour-science carries them (F1–F12 are its FL1–FL12).
    key = f"FL{name[1:]}" if name[0] == "F" and name[1:].isdigit() else name
    wl, spd = tables.illuminant_table(name)
    ref = colour.SDS_ILLUMINANTS[key]
    np.testing.assert_array_equal(wl, ref.wavelengths)
    np.testing.assert_array_equal(spd, ref.values)
    header = tables.table_header(tables.illuminant_file(name))
    assert "CIE 015:2018" in header["reference"] and "colour-science" in header["source"]


def test_other_cie_illuminants_come_from_colour_science_by_name():
    # Beyond the shipped set, colour-science is the path: D60 and the FL3 series (CIE 015:2018).
    assert cm.illuminant_spd("d60", [560.0]) == pytest.approx(colour.SDS_ILLUMINANTS["D60"][560.0], rel=1e-15)
    assert cm.illuminant_label("fl3.1") == "FL3.1"
    white = cm.white_point(WL, "FL3.1")
    sd = colour.SpectralDistribution(np.ones(WL.size), WL)
    cmfs = colour.MSDS_CMFS[OBSERVER_NAMES[2]].copy().align(colour.SpectralShape(380, 780, 5))
    spd = colour.SDS_ILLUMINANTS["FL3.1"].copy().align(colour.SpectralShape(380, 780, 5))
    np.testing.assert_allclose(white, colour.sd_to_XYZ(sd, cmfs, spd, method="Integration"), rtol=0, atol=1e-12)


def _random_XYZ(rng, n=400):
    XYZ = rng.random((n, 3)) * np.array([1.0, 1.0, 1.1])
    XYZ[:20] *= 0.002             # the linear part of CIELAB's f near black
    XYZ[20] = 0.0                 # black
    return XYZ


@pytest.mark.parametrize("white_xy", [(0.3127, 0.3290), (0.44757, 0.40745), (0.38052, 0.37713), (0.3457, 0.3585)])
def test_lab_lch_and_xy_are_colour_sciences(white_xy):
    rng = np.random.default_rng(3)
    XYZ = _random_XYZ(rng)
    Lab = transforms.XYZ_to_Lab(XYZ, white_xy)
    np.testing.assert_allclose(Lab, colour.XYZ_to_Lab(XYZ, np.array(white_xy)), rtol=0, atol=1e-12)
    np.testing.assert_allclose(transforms.Lab_to_LCh(Lab), colour.Lab_to_LCHab(Lab), rtol=0, atol=1e-12)
    np.testing.assert_allclose(transforms.Lab_to_XYZ(Lab, white_xy), colour.Lab_to_XYZ(Lab, np.array(white_xy)),
                               rtol=0, atol=1e-12)
    np.testing.assert_allclose(transforms.Lab_to_XYZ(Lab, white_xy), XYZ, rtol=0, atol=1e-12)
    np.testing.assert_allclose(transforms.XYZ_to_xy(XYZ[21:], white_xy), colour.XYZ_to_xy(XYZ[21:]),
                               rtol=0, atol=1e-12)


@pytest.mark.parametrize("white_xy", [(0.3127, 0.3290), (0.44757, 0.40745), (0.38052, 0.37713)])
def test_srgb_is_colour_sciences_with_bradford_adaptation(white_xy):
    # IEC 61966-2-1 matrices and transfer function, Bradford adaptation (Lam 1985) to D65.
    rng = np.random.default_rng(4)
    XYZ = _random_XYZ(rng)
    linear = XYZ @ transforms.XYZ_to_srgb_matrix(white_xy)
    expected = colour.XYZ_to_RGB(XYZ, "sRGB", illuminant=np.array(white_xy),
                                 chromatic_adaptation_transform="Bradford", apply_cctf_encoding=False)
    np.testing.assert_allclose(linear, expected, rtol=0, atol=1e-12)
    rgb = rng.random((400, 3))
    np.testing.assert_allclose(transforms.srgb_encode(rgb), colour.cctf_encoding(rgb, "sRGB"), rtol=0, atol=1e-12)
    np.testing.assert_allclose(transforms.srgb_decode(rgb), colour.cctf_decoding(rgb, "sRGB"), rtol=0, atol=1e-12)
    back = transforms.srgb_decode(rgb) @ transforms.srgb_to_XYZ_matrix(white_xy)
    expected = colour.RGB_to_XYZ(rgb, "sRGB", illuminant=np.array(white_xy),
                                 chromatic_adaptation_transform="Bradford", apply_cctf_decoding=True)
    np.testing.assert_allclose(back, expected, rtol=0, atol=1e-12)


def test_bradford_matrix_is_colour_sciences():
    # The linearised Bradford transform between the whites of A and D65.
    a, d65 = (0.44757, 0.40745), (0.3127, 0.3290)
    expected = colour.adaptation.matrix_chromatic_adaptation_VonKries(
        colour.xy_to_XYZ(np.array(a)), colour.xy_to_XYZ(np.array(d65)), transform="Bradford")
    np.testing.assert_allclose(transforms.bradford_matrix(a, d65), expected, rtol=0, atol=1e-14)


def test_delta_e00_is_colour_sciences_everywhere():
    # Random pairs plus the cases CIE 142-2001's formula treats apart: neutral colours (C'1·C'2 =
    # 0), hue differences across 0°/360°, mean hues across 180° (Sharma, Wu & Dalal 2005).
    rng = np.random.default_rng(5)
    lab1 = np.column_stack([rng.uniform(0, 100, 2000), rng.uniform(-120, 120, 2000), rng.uniform(-120, 120, 2000)])
    lab2 = lab1 + rng.normal(0, 8, lab1.shape)
    lab1[:50, 1:] = 0.0
    lab2[50:100, 1] = np.abs(lab2[50:100, 1])
    lab2[50:100, 2] = -lab1[50:100, 2]
    np.testing.assert_allclose(transforms.delta_e00(lab1, lab2), colour.delta_E(lab1, lab2, method="CIE 2000"),
                               rtol=0, atol=1e-12)


@pytest.mark.parametrize("observer", [2, 10])
@pytest.mark.parametrize("illuminant", ["D65", "A", "F11", "LED-B3", "D50"])
def test_every_colour_value_is_colour_sciences(illuminant, observer):
    # The whole colour of a spectrum, value by value, against colour-science's own integration
    # (sd_to_XYZ, "Integration", on the same 5 nm grid) and conversions.
    key = f"FL{illuminant[1:]}" if illuminant == "F11" else illuminant
    shape = colour.SpectralShape(380, 780, 5)
    cmfs = colour.MSDS_CMFS[OBSERVER_NAMES[observer]].copy().align(shape)
    spd = colour.SDS_ILLUMINANTS[key].copy().align(shape)
    rng = np.random.default_rng(6)
    values = rng.random((8, WL.size)) * np.linspace(0.2, 1.0, 8)[:, None]
    got = cm.colour_of(WL, values, illuminant, observer)
    white = colour.sd_to_XYZ(colour.SpectralDistribution(np.ones(WL.size), WL), cmfs, spd, method="Integration")
    white_xy = colour.XYZ_to_xy(white / 100)
    for i, v in enumerate(values):
        XYZ = colour.sd_to_XYZ(colour.SpectralDistribution(v, WL), cmfs, spd, method="Integration")
        Lab = colour.XYZ_to_Lab(XYZ / 100, white_xy)
        np.testing.assert_allclose(got.XYZ[i], XYZ, rtol=0, atol=1e-12)
        np.testing.assert_allclose(got.xy[i], colour.XYZ_to_xy(XYZ / 100), rtol=0, atol=1e-12)
        np.testing.assert_allclose(got.Lab[i], Lab, rtol=0, atol=1e-12)
        LCh = colour.Lab_to_LCHab(Lab)
        np.testing.assert_allclose(got.LCh[i][:2], LCh[:2], rtol=0, atol=1e-12)
        # The hue angle as a distance in the a*b* plane (an angle alone is ill-defined near grey).
        assert abs(got.LCh[i][2] - LCh[2]) * np.pi / 180 * LCh[1] < 1e-12
        linear = colour.XYZ_to_RGB(XYZ / 100, "sRGB", illuminant=white_xy, chromatic_adaptation_transform="Bradford")
        if np.all((linear >= -cm.GAMUT_TOLERANCE) & (linear <= 1 + cm.GAMUT_TOLERANCE)):
            encoded = colour.cctf_encoding(np.clip(linear, 0, 1), "sRGB")
            np.testing.assert_array_equal(got.rgb8[i], np.rint(encoded * 255).astype(int))


def test_delta_e00_of_colours_is_colour_sciences():
    rng = np.random.default_rng(9)
    a = cm.colour_of(WL, rng.random((30, WL.size)), "D65")
    b = cm.colour_of(WL, rng.random((30, WL.size)), "D65")
    np.testing.assert_allclose(cm.delta_e00(a, b), colour.delta_E(a.Lab, b.Lab, method="CIE 2000"), rtol=0, atol=1e-12)
