"""Comparing candidate materials (filmoptic.inverse.choose, ``filmoptic compare``)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic.inverse.choose import compare_materials
from filmoptic.errors import FilmopticError
from filmoptic.inverse.solve import ColourTarget, Target, evaluate_condition


def test_each_candidate_meets_the_target_and_reports_consistent_companions():
    from filmoptic.colorimetry import appearance
    from filmoptic.stack import parse_stack

    table = compare_materials(["Ti", "Cr", "Ag"], "glass 4mm", Target("luminous_T", 0.3))
    assert [c.material for c in table.candidates] == ["Ti", "Cr", "Ag"]
    for c in table.candidates:
        look = appearance(parse_stack(c.stack).bind([c.thickness_nm]))
        assert look.luminous.T == pytest.approx(0.3, abs=1e-7)
        assert c.luminous_R == pytest.approx(look.luminous.R, abs=1e-9)
        assert c.luminous_R_reverse == pytest.approx(look.luminous.R_reverse, abs=1e-9)
        assert c.reflected_chroma == pytest.approx(float(look.reflected.LCh[1]), abs=1e-6)
        assert c.transmitted_chroma == pytest.approx(float(look.transmitted.LCh[1]), abs=1e-6)
        # Sensitivity: the luminous T change for a 1 nm error matches a finite difference.
        tv = evaluate_condition(c.stack, Target("luminous_T", 0.5), [c.thickness_nm - 0.5, c.thickness_nm + 0.5])
        assert c.change_per_nm == pytest.approx(abs(tv[1] - tv[0]), rel=0.02)
    by_name = {c.material: c for c in table.candidates}
    # Silver is the low-loss metal in the visible (k/n large; Johnson & Christy 1972): at the same
    # transmittance it absorbs far less and reflects far more than titanium (common practice).
    assert by_name["Ag"].absorptance < 0.5 * by_name["Ti"].absorptance
    assert by_name["Ag"].luminous_R > by_name["Ti"].luminous_R


def test_out_of_reach_candidates_carry_a_note():
    table = compare_materials(["Ti", "n=1.5"], "glass 4mm", Target("luminous_T", 0.3))
    ti, glassy = table.candidates
    assert ti.thickness_nm is not None
    assert glassy.thickness_nm is None and "closest" in glassy.note


def test_colour_target_uses_delta_e_per_nm():
    lab = tuple(evaluate_condition("TiO2 ? / Ti", ColourTarget((50, 0, 0)), [70.0])[0])
    table = compare_materials(["TiO2"], "Ti", ColourTarget(lab), range_nm=(0, 250))
    (c,) = table.candidates
    assert c.thickness_nm == pytest.approx(70.0, abs=1e-3)
    assert c.solution.delta_E00 == pytest.approx(0.0, abs=1e-4)
    assert c.change_per_nm > 0


def test_bad_candidates():
    with pytest.raises(FilmopticError):
        compare_materials([], "glass", Target("luminous_T", 0.3))
    with pytest.raises(FilmopticError, match="twice"):
        compare_materials(["Ti", "Ti"], "glass", Target("luminous_T", 0.3))
    with pytest.raises(FilmopticError, match="material name"):
        compare_materials(["Ti 5nm / Cr"], "glass", Target("luminous_T", 0.3))


def test_cli_table_and_json(run_cli):
    result = run_cli(["compare", "Ti", "Cr", "--on", "glass 4mm", "--luminous-T", "30%"])
    assert result.exit_code == 0, result.stderr
    assert "Ti" in result.stdout and "Cr" in result.stdout
    # The coater's words: film side and glass side; Tv/Rv only as the ISO 9050 luminous values.
    assert "Rv glass %" in result.stdout and "C* film side" in result.stdout and "C* through" in result.stdout
    assert "back" not in result.stdout
    data = json.loads(run_cli(["compare", "Ti", "Cr", "--on", "glass 4mm", "--luminous-T", "30%", "--json"]).stdout)
    assert [c["material"] for c in data["candidates"]] == ["Ti", "Cr"]
    assert all(np.isfinite(c["thickness_nm"]) for c in data["candidates"])
    assert data["condition"]["value"] == 0.3


def test_cli_errors(run_cli):
    assert_user_error(run_cli(["compare", "Ti", "Unobtainium", "--on", "glass 4mm", "--luminous-T", "30%"]),
                      "Unobtainium")
    assert_user_error(run_cli(["compare", "Ti", "Cr", "--on", "glass 4mm", "--luminous-T", "97%"]), "closest")
    assert_user_error(run_cli(["compare", "Ti", "--on", "glass 4mm"]), "say what to solve for")


def test_cli_caution_for_dark_targets(run_cli):
    result = run_cli(["compare", "Ti", "--on", "glass 4mm", "--luminous-T", "5%"])
    assert result.exit_code == 0
    assert "eye protection" in result.stderr


@pytest.mark.parametrize("candidate", ["Ti 10nm", "Ti 10 nm", "Ti ?", "Ti 2mm"])
def test_a_layer_is_not_a_candidate(run_cli, candidate):
    # compare supplies the unknown thickness itself; a thickness on a candidate is a mistake.
    result = run_cli(["compare", candidate, "--on", "glass 4mm", "--luminous-T", "30%"])
    assert_user_error(result, "is a layer", "'Ti'")
    assert f"{candidate} ?" not in result.stderr          # no internal stack text
    with pytest.raises(FilmopticError, match="is a layer"):
        compare_materials([candidate], "glass 4mm", Target("luminous_T", 0.3))


def test_missing_substrate(run_cli):
    for substrate in ("", "  ", "/"):
        with pytest.raises(FilmopticError, match="substrate is missing"):
            compare_materials(["Ti"], substrate, Target("luminous_T", 0.3))
    assert_user_error(run_cli(["compare", "Ti", "--on", "/", "--luminous-T", "30%"]), "substrate is missing")
    assert_user_error(run_cli(["compare", "Ti", "--on", "", "--luminous-T", "30%"]), "--on")


def test_unknown_candidate_is_named_once():
    with pytest.raises(FilmopticError, match="candidate 'Unobtainium'"):
        compare_materials(["Ti", "Unobtainium"], "glass 4mm", Target("luminous_T", 0.3))
