"""``filmoptic spectrum``: output formats, options and one-line errors."""

from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic.engine import compute
from filmoptic.stack import parse_stack


def test_table_shows_percent_and_the_stack(run_cli):
    result = run_cli(["spectrum", "n=1.52", "--ambient", "n=1", "--wl", "500,600"])
    assert result.exit_code == 0, result.stderr
    lines = result.stdout.splitlines()
    assert "n=1.52" in lines[0] and "unpolarized" in lines[0]
    assert lines[1].split() == ["wavelength_nm", "R", "%", "T", "%", "A", "%", "A", "layers", "%",
                                "A", "substrate", "%"]
    # Bare glass n = 1.52: 4.26 % reflected (Hecht, Optics), 95.74 % into the glass.
    assert lines[3].split() == ["500", "4.26", "95.74", "0.00", "0.00", "0.00"]
    assert lines[4].split() == ["600", "4.26", "95.74", "0.00", "0.00", "0.00"]
    assert lines[5].startswith("note: T is the light that enters the half-space substrate")


def test_json_has_fractions_and_nothing_else(run_cli):
    result = run_cli(["spectrum", "Ti 12nm / glass 3mm", "--wl", "400:700:100", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert data["wavelength_nm"] == [400.0, 500.0, 600.0, 700.0]
    expected = compute(parse_stack("Ti 12nm / glass 3mm"), np.array(data["wavelength_nm"]))
    np.testing.assert_allclose(data["R"], expected.R, rtol=1e-12)
    np.testing.assert_allclose(data["T"], expected.T, rtol=1e-12)
    np.testing.assert_allclose(data["A"], expected.A, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(data["A_layers"], expected.A_layers, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(data["A_substrate"], expected.A_substrate, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(np.add(data["A_layers"], data["A_substrate"]), data["A"], atol=1e-15)
    assert data["polarization"] == "unpolarized" and data["reverse"] is False
    assert data["transmission"] == "exits"
    # 3 mm of clear float absorbs a little of what the titanium passes (its iron: Vogt et al.,
    # IEEE J. Photovolt. 6, 111 (2016), 703 ppm Fe2O3; the absorption rises towards 1000 nm).
    assert all(0.004 < v < 0.02 for v in data["A_substrate"])
    assert all(0 <= v <= 1 for v in data["R"] + data["T"] + data["A"])


def test_default_grid_is_380_to_780_by_5(run_cli):
    data = json.loads(run_cli(["spectrum", "TiO2 60nm / glass", "--json"]).stdout)
    assert data["wavelength_nm"][0] == 380.0 and data["wavelength_nm"][-1] == 780.0
    assert len(data["wavelength_nm"]) == 81


@pytest.mark.parametrize("options", [
    ["--angle", "45", "--pol", "s"],
    ["--angle", "60", "--pol", "p"],
    ["--reverse"],
    ["--ambient", "water"],
])
def test_options_reach_the_engine(run_cli, options):
    result = run_cli(["spectrum", "Cr 10nm / glass 2mm", "--wl", "450,650", "--json", *options])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    kwargs = {}
    if "--angle" in options:
        kwargs["angle_deg"] = float(options[options.index("--angle") + 1])
    if "--pol" in options:
        kwargs["polarization"] = options[options.index("--pol") + 1]
    kwargs["reverse"] = "--reverse" in options
    ambient = options[options.index("--ambient") + 1] if "--ambient" in options else "air"
    expected = compute(parse_stack("Cr 10nm / glass 2mm", ambient=ambient), [450.0, 650.0], **kwargs)
    np.testing.assert_allclose(data["R"], expected.R, rtol=1e-12)
    np.testing.assert_allclose(data["T"], expected.T, rtol=1e-12)


def test_csv_is_written_whole_with_a_header(run_cli, tmp_path):
    out = tmp_path / "spectrum.csv"
    out.write_text("old contents\n", encoding="utf-8")
    result = run_cli(["spectrum", "TiO2 60nm / glass", "--wl", "400:420:10", "--csv", out])
    assert result.exit_code == 0, result.stderr
    lines = out.read_text(encoding="utf-8").splitlines()
    assert lines[0] == "wavelength_nm,R,T,A,A_layers,A_substrate,OD"
    rows = np.array([[float(x) for x in line.split(",")] for line in lines[1:]])
    assert rows.shape == (3, 7)
    np.testing.assert_allclose(rows[:, 1:4].sum(axis=1), 1.0, atol=1e-10)
    np.testing.assert_allclose(rows[:, 4] + rows[:, 5], rows[:, 3], atol=1e-10)
    # OD = -log10 T (definition of optical density, common practice), to the digits written.
    np.testing.assert_allclose(rows[:, 6], -np.log10(rows[:, 2]), rtol=1e-10)
    assert [p.name for p in tmp_path.iterdir()] == ["spectrum.csv"]   # no temporary left behind


@pytest.mark.parametrize("suffix, magic", [(".png", b"\x89PNG"), (".svg", b"<?xml"), (".pdf", b"%PDF")])
def test_plot_in_each_format(run_cli, tmp_path, suffix, magic):
    out = tmp_path / f"spectrum{suffix}"
    result = run_cli(["spectrum", "TiO2 60nm / glass", "--wl", "400:700:50", "--plot", out])
    assert result.exit_code == 0, result.stderr
    assert out.read_bytes().startswith(magic)


def test_input_file_is_never_written(run_cli, tmp_path):
    table = tmp_path / "film.nk"
    content = "# material: myfilm\n300 2.0 0.01\n900 1.9 0.0\n"
    table.write_text(content, encoding="utf-8")
    result = run_cli(["spectrum", f"file:{table.as_posix()} 50nm / glass", "--wl", "400,500",
                      "--csv", tmp_path / "out.csv"])
    assert result.exit_code == 0, result.stderr
    assert table.read_text(encoding="utf-8") == content


def test_extrapolate_warns_on_stderr(run_cli):
    result = run_cli(["spectrum", "Ti 10nm / glass", "--ambient", "n=1", "--wl", "2500", "--extrapolate", "--json"])
    assert result.exit_code == 0, result.stderr
    assert "warning" in result.stderr and "Ti" in result.stderr
    json.loads(result.stdout)


def test_caution_for_a_blocking_filter_goes_to_stderr(run_cli):
    result = run_cli(["spectrum", "Cr 60nm / glass 2mm", "--wl", "500", "--json"])
    assert result.exit_code == 0
    assert "CAUTION" in result.stderr
    json.loads(result.stdout)


@pytest.mark.parametrize("args, fragments", [
    (["TiO2 -5nm / glass"], ["item 1", "negative"]),
    (["TiO2 55 / glass"], ["item 1", "no unit", "55nm"]),
    (["TiO3 55nm / glass"], ["unknown material", "TiO2"]),
    (["[TiO2 55nm / SiO2 92nm]x0 / glass"], ["at least once"]),
    (["[TiO2 55nm / SiO2 92nm x4 / glass"], ["missing"]),
    (["[TiO2 55nm]x99999 / glass"], ["absurd"]),
    (["TiO2 1e9mm / glass"], ["absurdly large"]),
    ([""], ["empty stack"]),
    (["TiO2 55nm"], ["substrate"]),
    (["TiO2 ? / glass"], ["unknown"]),
    (["Ti 10nm / glass", "--wl", "100:200:10"], ["outside", "range"]),
    (["Ti 10nm / glass", "--wl", "0:200:10"], ["--wl", "positive"]),
    (["Ti 10nm / glass", "--wl", "abc"], ["--wl"]),
    (["Ti 10nm / glass", "--wl", "1:1e9:1"], ["--wl"]),
    (["Ti 10nm / glass", "--angle", "95"], ["--angle"]),
    (["Ti 10nm / glass", "--pol", "circular"], ["--pol"]),
    (["Ti 10nm / glass", "--ambient", "vacum"], ["ambient"]),
    (["TiO2 50nm / Ti", "--reverse", "--angle", "30"], ["transparent"]),
    (["Ti 10nm / glass", "--plot", "out.gif"], [".png"]),
    (["Ti 10nm / glass", "--csv", "/no/such/folder/x.csv"], ["does not exist"]),
])
def test_bad_input_is_one_line_exit_2(run_cli, args, fragments):
    assert_user_error(run_cli(["spectrum", *args]), *fragments)


def test_no_traceback_in_a_separate_process(run_cli_subprocess):
    result = run_cli_subprocess(["spectrum", "TiO2 55 / glass"])
    assert_user_error(result, "no unit")


def test_very_large_grids_run_in_blocks_with_the_same_result(run_cli, monkeypatch):
    # Large grids are computed in wavelength blocks (with a progress bar on a terminal only);
    # the numbers must not change.
    import filmoptic.cli.spectrum as command

    args = ["spectrum", "Cr 10nm / TiO2 50nm / glass 2mm", "--wl", "400:800:1", "--json"]
    whole = json.loads(run_cli(args).stdout)
    monkeypatch.setattr(command, "_PROGRESS_FROM", 50)
    blocks = run_cli(args)
    assert blocks.exit_code == 0 and blocks.stderr == ""
    data = json.loads(blocks.stdout)
    assert data["wavelength_nm"] == whole["wavelength_nm"]
    np.testing.assert_allclose(data["R"], whole["R"], rtol=0, atol=1e-15)
    np.testing.assert_allclose(data["T"], whole["T"], rtol=0, atol=1e-15)
