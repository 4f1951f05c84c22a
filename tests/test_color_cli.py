"""The ``filmoptic color`` command: output keys, agreement with the API, files, errors, cautions."""

from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic import colorimetry as cm

COLOUR_KEYS = {"XYZ", "xy", "Lab", "LCh", "rgb8", "hex", "in_gamut"}


def test_json_has_exactly_the_documented_keys(run_cli):
    result = run_cli(["color", "Ti 12nm / glass 4mm", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert set(data) == {"reflected", "reflected_reverse", "transmitted", "luminous", "transmission",
                         "surface_oxides"}
    for key in ("reflected", "reflected_reverse", "transmitted"):
        assert set(data[key]) == COLOUR_KEYS
        assert len(data[key]["XYZ"]) == 3 and len(data[key]["xy"]) == 2
        assert data[key]["hex"].startswith("#") and len(data[key]["hex"]) == 7
    lum = data["luminous"]
    assert set(lum) == {"T", "R", "R_reverse", "A_layers", "A_substrate"}
    assert all(0 <= lum[k] <= 1 for k in lum)
    # Luminous weighting is linear, so R + T + A = 1 carries over (ISO 9050 weights sum to 1).
    assert lum["T"] + lum["R"] + lum["A_layers"] + lum["A_substrate"] == pytest.approx(1.0, abs=1e-12)
    assert data["transmission"] == "exits"


def test_json_agrees_with_the_api(run_cli):
    result = run_cli(["color", "TiO2 60nm / Ti", "--illuminant", "A", "--observer", "10", "--angle", "20", "--json"])
    data = json.loads(result.stdout)
    api = cm.appearance("TiO2 60nm / Ti", illuminant="A", observer=10, angle_deg=20)
    # JSON carries floats exactly (shortest round-trip repr), so the two must be identical.
    assert data["reflected"]["Lab"] == api.reflected.Lab.tolist()
    assert data["reflected"]["hex"] == api.reflected.hex
    assert data["luminous"]["R"] == api.luminous.R
    assert data["luminous"]["A_substrate"] == api.luminous.A_substrate
    # Nothing comes through titanium: no transmitted colour, and T is 0.
    assert data["transmitted"] is None and api.transmitted is None and data["luminous"]["T"] == 0.0
    # A half-space substrate has no back side to look at.
    assert data["reflected_reverse"] is None and data["luminous"]["R_reverse"] is None


def test_angles_add_a_list_and_a_table(run_cli):
    result = run_cli(["color", "Ti 12nm / glass 4mm", "--angles", "0:60:15", "--json"])
    data = json.loads(result.stdout)
    assert set(data) == {"reflected", "reflected_reverse", "transmitted", "luminous", "transmission",
                         "surface_oxides", "angles"}
    assert [entry["angle_deg"] for entry in data["angles"]] == [0, 15, 30, 45, 60]
    # The 0° entry is the main result (default --angle 0).
    assert data["angles"][0]["reflected"]["Lab"] == pytest.approx(data["reflected"]["Lab"])
    assert data["angles"][4]["luminous"]["R_reverse"] != pytest.approx(data["luminous"]["R_reverse"])

    table = run_cli(["color", "Ti 12nm / glass 4mm", "--angles", "0,30"])
    assert table.exit_code == 0
    assert "Colour versus viewing angle" in table.stdout


def test_table_shows_percent(run_cli):
    result = run_cli(["color", "Ti 12nm / glass 4mm"])
    assert result.exit_code == 0, result.stderr
    api = cm.appearance("Ti 12nm / glass 4mm")
    assert f"{100 * api.luminous.T:.2f}" in result.stdout
    assert api.reflected.hex in result.stdout and api.reflected_reverse.hex in result.stdout
    # The coater's words for the three views, the plain colour word, and the ISO 9050 names.
    rows = {line.split("  ")[0]: line for line in result.stdout.splitlines()}
    assert {"film side", "glass side", "through"} <= set(rows)
    assert rows["through"].split()[1] == "grey" and rows["through"].rstrip().endswith(f"Tv        {100 * api.luminous.T:.2f}")
    assert "Rv" in rows["glass side"] and f"{100 * api.luminous.R_reverse:.2f}" in rows["glass side"]


def test_out_of_gamut_is_flagged(run_cli):
    api = cm.appearance("TiO2 180nm / Ti")
    assert api.reflected.in_gamut is False  # a saturated teal, outside sRGB
    data = json.loads(run_cli(["color", "TiO2 180nm / Ti", "--json"]).stdout)
    assert data["reflected"]["in_gamut"] is False
    table = run_cli(["color", "TiO2 180nm / Ti"]).stdout
    assert f"{api.reflected.hex} *" in table and "outside the sRGB gamut" in table


def test_opaque_substrate_says_where_the_light_goes(run_cli):
    out = run_cli(["color", "TiO2 60nm / Ti"]).stdout
    assert "through  " not in out and "Tv" not in out
    assert out.count("no light comes through") == 1
    api = cm.appearance("TiO2 60nm / Ti")
    assert f"{100 * api.luminous.A_substrate:.2f} % in the substrate; through: none" in out


@pytest.mark.parametrize("suffix, magic", [(".png", b"\x89PNG"), (".svg", b"<?xml"), (".pdf", b"%PDF")])
def test_swatch_files(run_cli, tmp_path, suffix, magic):
    path = tmp_path / f"swatch{suffix}"
    result = run_cli(["color", "Ti 12nm / glass 4mm", "--angles", "0:60:30", "--swatch", path])
    assert result.exit_code == 0, result.stderr
    assert path.read_bytes().startswith(magic)
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no temporary left over


def test_json_stdout_is_only_json_and_caution_goes_to_stderr(run_cli):
    result = run_cli(["color", "Cr 60nm / glass 2mm", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert 1e-6 < data["luminous"]["T"] < 0.1
    assert "CAUTION" in result.stderr and "certified filter" in result.stderr


def test_illuminant_file(run_cli, tmp_path):
    lamp = tmp_path / "lamp.txt"
    wl = np.arange(380.0, 781.0, 5.0)
    lamp.write_text("\n".join(f"{w:g} {s:.8g}" for w, s in zip(wl, cm.illuminant_spd("A", wl))))
    before = lamp.read_bytes()
    from_file = json.loads(run_cli(["color", "TiO2 60nm / Ti", "--illuminant", lamp, "--json"]).stdout)
    builtin = json.loads(run_cli(["color", "TiO2 60nm / Ti", "--illuminant", "A", "--json"]).stdout)
    assert from_file["reflected"]["Lab"] == pytest.approx(builtin["reflected"]["Lab"], abs=1e-6)
    assert lamp.read_bytes() == before


@pytest.mark.parametrize("args, fragments", [
    (["color", "Ti 12nm / glass 4mm", "--illuminant", "D56"], ["illuminant", "did you mean"]),
    (["color", "Ti 12nm / glass 4mm", "--illuminant", "no/such/lamp.txt"], ["no such file"]),
    (["color", "Ti ? / glass 4mm"], ["unknown"]),
    (["color", "Ti 12nm / glass 4mm", "--observer", "5"], ["observer"]),
    (["color", "Ti 12nm / glass 4mm", "--angles", "0:95:15"], ["angles"]),
    (["color", "Ti 12nm / glass 4mm", "--swatch", "swatch.jpg"], [".png"]),
    (["color", "Ti 12nm / glass 4mm", "--swatch", "no-such-folder/s.png"], ["does not exist"]),
    (["color", "Unobtainium 12nm / glass"], ["Unobtainium"]),
])
def test_user_errors(run_cli, args, fragments):
    assert_user_error(run_cli(args), *fragments)


def test_bad_illuminant_file_is_one_line(run_cli, tmp_path):
    lamp = tmp_path / "lamp.txt"
    lamp.write_text("380 1\n390 oops\n")
    assert_user_error(run_cli(["color", "Ti 12nm / glass 4mm", "--illuminant", lamp]), "line 2")


def test_help_in_a_fresh_process(run_cli_subprocess):
    result = run_cli_subprocess(["color", "--help"])
    assert result.exit_code == 0
    assert "--illuminant" in result.stdout and "ISO 9050" in result.stdout
    assert "Traceback" not in result.stderr
