"""Munsell notation and correlated colour temperature in ``filmoptic color`` (through colour-science)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic import colorimetry as cm
from filmoptic.describe.descriptions import describe, light_chromaticity, light_temperature, munsell_notation

WL = cm.default_wavelengths()


def _astm_d1535_Y(V):
    # Luminous reflectance Y (%) of Munsell value V: the fifth-degree polynomial of ASTM D1535
    # (Standard Practice for Specifying Color by the Munsell System), from memory.
    return 1.1914 * V - 0.22533 * V**2 + 0.23352 * V**3 - 0.020484 * V**4 + 0.00081939 * V**5


@pytest.mark.parametrize("value", [2, 3, 5, 7, 9])
def test_greys_get_the_neutral_notation_of_their_value(value):
    # A flat reflectance is neutral under illuminant C; its Munsell value follows ASTM D1535.
    notation = munsell_notation(WL, np.full(WL.size, _astm_d1535_Y(value) / 100))
    assert notation == f"N{value}.0"


def test_the_blue_of_titania_on_titanium_is_purple_blue_to_blue():
    # Anodisers' blue (about 50–60 nm of TiO2 on Ti; common practice, from memory) lies in the
    # Munsell hues B or PB, with a clear chroma.
    notation = describe("TiO2 60nm / Ti").munsell
    hue, rest = notation.split(" ")
    assert hue.endswith(("PB", "B")) and not hue.endswith("BG")
    assert float(rest.split("/")[1]) > 4


def test_a_colour_beyond_the_renotation_data_has_no_notation():
    # The renotation's samples stop well inside the spectrum locus (Newhall, Nickerson & Judd
    # 1943): a nearly spectral violet (a 10 nm band at 450 nm) matches none of them.
    assert munsell_notation(WL, np.exp(-((WL - 450.0) / 10.0) ** 2)) is None


@pytest.mark.parametrize("illuminant, cct, tolerance", [("A", 2856.0, 1.0), ("D65", 6504.0, 2.0)])
def test_colour_temperature_of_the_cie_illuminants(illuminant, cct, tolerance):
    # CIE standard illuminant A is a Planckian radiator at 2856 K and D65 has a CCT of about
    # 6504 K (ISO/CIE 11664-2:2022; CIE 015:2018 §3.1); here from their 5 nm tables.
    t = light_temperature(light_chromaticity(WL, illuminant))
    assert t.cct_K == pytest.approx(cct, abs=tolerance)
    assert abs(t.duv) < (1e-4 if illuminant == "A" else 0.0035)


def test_light_far_from_the_black_body_line_has_no_cct(tmp_path):
    # A green LED (a narrow band at 530 nm) is far from the Planckian locus: |Duv| > 0.05, and
    # CIE 015:2018 §9.5 gives no CCT there.
    lamp = tmp_path / "green.txt"
    lamp.write_text("".join(f"{w:g} {np.exp(-((w - 530) / 15) ** 2):.6g}\n" for w in WL))
    t = light_temperature(light_chromaticity(WL, str(lamp)))
    assert t.cct_K is None and abs(t.duv) > 0.05


def test_a_deep_red_light_gets_no_extrapolated_temperature(tmp_path):
    # A 700 nm band sits near the end of the Planckian locus, below the 1000 K where the search
    # of Ohno's method starts (Ohno 2014): no CCT rather than an extrapolated one.
    lamp = tmp_path / "red.txt"
    lamp.write_text("".join(f"{w:g} {np.exp(-((w - 700) / 8) ** 2) + 1e-9:.6g}\n" for w in WL))
    assert light_temperature(light_chromaticity(WL, str(lamp))).cct_K is None


def test_the_light_through_a_neutral_film_keeps_its_temperature():
    # A spectrally flat transmittance passes light of the same chromaticity, so the same CCT.
    d = describe("n=1.5", ambient="n=1", cct=True, munsell=False)
    assert d.transmitted.cct_K == pytest.approx(d.light.cct_K, abs=1e-6)
    assert d.munsell is None and d.light.xy == pytest.approx(tuple(light_chromaticity(WL, "D65")), abs=1e-15)


def test_color_command_gives_munsell_and_cct_on_request(run_cli):
    result = run_cli(["color", "Cr 8nm / glass 4mm", "--munsell", "--cct", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert set(data["munsell"]) == {"reflected", "reflected_reverse", "illuminant", "observer"}
    assert data["munsell"]["illuminant"] == "C" and data["munsell"]["reflected_reverse"]
    assert set(data["cct"]) == {"light", "transmitted"}
    assert set(data["cct"]["light"]) == {"K", "Duv", "xy"}
    assert data["cct"]["transmitted"]["K"] > 0 and data["description_notes"] == []
    table = run_cli(["color", "TiO2 60nm / Ti", "--munsell", "--cct"]).stdout
    assert "Munsell (illuminant C, 2°): reflected, coated side" in table
    assert "Correlated colour temperature: the light (D65)" in table and "through the part" not in table


def test_color_without_the_options_has_no_such_keys(run_cli):
    data = json.loads(run_cli(["color", "Cr 8nm / glass 4mm", "--json"]).stdout)
    assert "munsell" not in data and "cct" not in data


def test_describe_refuses_unknowns(run_cli):
    assert_user_error(run_cli(["color", "Cr ? / glass 4mm", "--munsell"]), "unknown")
