"""Native oxides on metal layers (``METAL D + Xnm oxide``) and the thin-metal warning."""

from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic.engine import compute
from filmoptic.errors import FilmopticError
from filmoptic.materials.films import NATIVE_OXIDES, pilling_bedworth_ratio, sample_form
from filmoptic.inverse.solve import Target, solve_thickness
from filmoptic.stack import parse_stack

WL = np.linspace(400.0, 800.0, 9)


@pytest.mark.parametrize("metal, published", [
    # Pilling & Bedworth, J. Inst. Metals 29, 529 (1923), as tabulated in corrosion textbooks
    # (from memory): Al 1.28, Ti 1.73, Ni 1.70, Cu (Cu2O) 1.64, Cr 2.07, Zr 1.56.
    ("Al", 1.28), ("Ti", 1.73), ("Ni", 1.70), ("Cu", 1.64), ("Cr", 2.07), ("Zr", 1.56),
])
def test_oxide_to_metal_volume_ratios_are_pilling_bedworths(metal, published):
    # Ours come from handbook molar masses and densities; textbook tables round and use slightly
    # different densities, hence 3 %.
    assert NATIVE_OXIDES[metal].ratio == pytest.approx(published, rel=0.03)


def test_silicon_loses_0_44_nm_per_nm_of_oxide():
    # A thermal oxide consumes 0.44 of its thickness in silicon (Deal & Grove, J. Appl. Phys. 36,
    # 3770 (1965); common practice).
    assert NATIVE_OXIDES["Si"].consumed_nm(1.0) == pytest.approx(0.44, abs=0.005)


def test_pilling_bedworth_ratio_is_the_volume_ratio():
    # The ratio is the oxide's volume over the volume of the metal it consumes (Pilling & Bedworth,
    # J. Inst. Metals 29, 529 (1923)): one mole of Al2O3 (101.96 g at 3.95 g/cm³) per two moles of
    # Al (2 × 26.98 g at 2.70 g/cm³); the numbers are illustrative inputs.
    oxide_volume = 101.96 / 3.95
    metal_volume = 2 * 26.98 / 2.70
    assert pilling_bedworth_ratio(26.98, 2.70, 101.96, 3.95, 2) == pytest.approx(oxide_volume / metal_volume,
                                                                                rel=1e-15)


def test_oxide_expands_to_two_layers_with_the_metal_consumed():
    stack = parse_stack("Al 10nm + 2nm oxide / glass 4mm")
    oxide, metal = stack.layers
    consumed = 2.0 / NATIVE_OXIDES["Al"].ratio
    assert oxide.material.name == "Al2O3" and oxide.thickness_nm == 2.0
    assert metal.thickness_nm == 10.0 and metal.consumed_nm == pytest.approx(consumed, rel=1e-15)
    written_out = parse_stack(f"Al2O3 2nm / Al {10.0 - consumed!r}nm / glass 4mm")
    np.testing.assert_allclose(compute(stack, WL).R, compute(written_out, WL).R, rtol=0, atol=1e-15)
    (note,) = stack.surface_oxides()
    assert "Al2O3 2nm / Al 8.45nm" in note and "1.55 nm of Al" in note


def test_an_unknown_thickness_is_the_metal_deposited():
    stack = parse_stack("Ti ? + 3nm oxide / glass 4mm")
    assert [p.name for p in stack.parameters] == ["Ti thickness (layer 2)"]
    consumed = 3.0 / NATIVE_OXIDES["Ti"].ratio
    batch = compute(stack, WL, thickness_nm=[[12.0], [consumed / 2]])
    explicit = compute(parse_stack(f"TiO2 3nm / Ti {12.0 - consumed!r}nm / glass 4mm"), WL)
    np.testing.assert_allclose(batch.T[0], explicit.T, rtol=0, atol=1e-15)
    # Less deposited than the oxide consumes: no metal is left under the oxide.
    all_oxide = compute(parse_stack("TiO2 3nm / glass 4mm"), WL)
    np.testing.assert_allclose(batch.T[1], all_oxide.T, rtol=0, atol=1e-15)


def test_solving_through_the_oxide_finds_the_deposited_metal():
    result = solve_thickness("Ti ? + 3nm oxide / glass 4mm", [Target("luminous_T", 0.30)])
    deposited = result.solutions[0].thickness_nm
    left = deposited - 3.0 / NATIVE_OXIDES["Ti"].ratio
    check = solve_thickness("TiO2 3nm / Ti ? / glass 4mm", [Target("luminous_T", 0.30)])
    assert left == pytest.approx(check.solutions[0].thickness_nm, abs=1e-6)


def test_a_substrate_may_carry_its_oxide_without_losing_metal():
    stack = parse_stack("Al + 4nm oxide")
    assert stack.layers[0].material.name == "Al2O3" and stack.substrate.material.name == "Al"
    np.testing.assert_allclose(compute(stack, WL).R, compute("Al2O3 4nm / Al", WL).R, rtol=0, atol=1e-15)


def test_oxide_in_a_group_repeats_with_it():
    stack = parse_stack("[Cr 12nm + 2nm n=2.2 / SiO2 50nm]x2 / glass")
    assert [layer.material.name for layer in stack.layers] == ["n=2.2", "Cr", "SiO2"] * 2


@pytest.mark.parametrize("text, fragment", [
    ("Al 1nm + 2nm oxide / glass", "more than the 1 nm deposited"),
    ("SiO2 50nm + 2nm oxide / glass", "native oxide"),
    ("Ag 20nm + 2nm oxide / glass", "name the oxide"),
    ("[Al 10nm / SiO2 50nm]x2 + 2nm oxide / glass", "not a group"),
    ("Al 10nm + 0nm oxide / glass", "positive"),
    ("Cr 10nm + 2nm oxide / glass", "Cr2O3"),
])
def test_mistakes_in_the_oxide_notation_are_one_line(text, fragment):
    with pytest.raises(FilmopticError, match=fragment):
        parse_stack(text)


def test_spectrum_shows_what_the_notation_expanded_to(run_cli):
    result = run_cli(["spectrum", "Al 10nm + 2nm oxide / glass 4mm", "--wl", "550"])
    assert result.exit_code == 0, result.stderr
    assert result.stdout.splitlines()[1].startswith("expanded: Al 10nm + 2nm oxide → Al2O3 2nm / Al 8.45nm")
    data = json.loads(run_cli(["spectrum", "Al 10nm + 2nm oxide / glass 4mm", "--wl", "550", "--json"]).stdout)
    assert len(data["surface_oxides"]) == 1 and "Pilling–Bedworth ratio 1.29" in data["surface_oxides"][0]
    colour = json.loads(run_cli(["color", "Al 10nm + 2nm oxide / glass 4mm", "--json"]).stdout)
    assert colour["surface_oxides"] == data["surface_oxides"]


def test_compare_takes_a_candidate_with_its_oxide(run_cli):
    result = run_cli(["compare", "Al", "Al + 2nm oxide", "--on", "glass 4mm", "--luminous-T", "30%", "--json"])
    assert result.exit_code == 0, result.stderr
    bare, oxidised = json.loads(result.stdout)["candidates"]
    # The oxidised film needs more aluminium deposited (1.55 nm goes into the oxide), and less
    # than bare + 1.55 nm because the 2 nm of Al2O3 absorbs nothing.
    assert oxidised["stack"] == "Al ? + 2nm oxide / glass 4mm"
    assert bare["thickness_nm"] < oxidised["thickness_nm"] < bare["thickness_nm"] + 2.0 / NATIVE_OXIDES["Al"].ratio + 0.1


# ---------------------------------------------------------------------------------------------
# Thin-metal warning
# ---------------------------------------------------------------------------------------------
def test_solve_warns_once_when_the_answer_is_an_island_film(run_cli):
    # About 10 nm of silver on glass passes 60 % of daylight: below the ~12 nm where evaporated
    # silver becomes continuous (common practice), so the answer comes with one warning.
    result = run_cli(["solve", "Ag ? / glass 4mm", "--luminous-T", "60%"])
    assert result.exit_code == 0, result.stderr
    warnings = [line for line in result.stderr.splitlines() if line.startswith("filmoptic: warning:")]
    assert len(warnings) == 1
    assert "below about 12 nm" in warnings[0] and "common practice" in warnings[0]
    assert "Ag:Ciesielski-2017" in warnings[0]           # thin-film data are offered
    quiet = run_cli(["solve", "Ag ? / glass 4mm", "--luminous-T", "30%"])   # ~19 nm
    assert "warning" not in quiet.stderr


def test_compare_names_every_thin_answer_in_one_line(run_cli):
    # At 65 % daylight transmittance titanium is ~3 nm and silver ~9 nm thick: both too thin.
    result = run_cli(["compare", "Ti", "Ag", "--on", "glass 4mm", "--luminous-T", "65%"])
    assert result.exit_code == 0, result.stderr
    warnings = [line for line in result.stderr.splitlines() if "warning" in line]
    assert len(warnings) == 1
    assert "Ti " in warnings[0] and "Ag " in warnings[0] and "below about 5 nm" in warnings[0]


@pytest.mark.parametrize("command", ["spectrum", "color"])
def test_spectrum_and_colour_warn_for_a_thin_metal(run_cli, command):
    thin = run_cli([command, "Ti 3nm / glass 4mm"])
    assert thin.exit_code == 0 and thin.stderr.count("below about 5 nm") == 1
    # The oxide takes its share: 6 nm deposited under 3 nm of TiO2 leaves 4.3 nm of metal.
    oxidised = run_cli([command, "Ti 6nm + 3nm oxide / glass 4mm"])
    assert "Ti 4.31 nm is below about 5 nm" in oxidised.stderr
    assert "warning" not in run_cli([command, "Ti 10nm / glass 4mm"]).stderr


def test_sample_forms():
    assert sample_form("e-beam evaporated film, 25 nm, on Si") == "thin film, 25 nm"
    assert sample_form("commercial film, 110 nm, on glass") == "film"
    assert sample_form("Lorentz–Drude model fitted to published film and bulk data") == "model fit"
    assert sample_form("single crystals, room temperature") == "bulk"


def test_oxide_notation_errors_reach_the_command_line(run_cli):
    assert_user_error(run_cli(["spectrum", "Al 1nm + 2nm oxide / glass"]), "deposited")
