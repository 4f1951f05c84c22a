"""The command line as a tired practitioner uses it: typos, stray units, repeated options, outputs
that would clobber inputs, files the system refuses.

Every user mistake must end with one clear line on stderr and exit code 2 (never a traceback or
an "internal error"), and nothing the user owns may be overwritten unless they named it as an
output. These are facts of the tool's contract (README.md and DEVELOPERS.md here), not of physics; the
few physical facts used are marked "common practice".
"""

from __future__ import annotations

import json
import os

import pytest

from conftest import assert_user_error

STACK = "Ti 12nm / glass 4mm"


def _nk_file(folder, name="film.txt"):
    path = folder / name
    path.write_text("# wavelength_nm n k\n300 1.5 0\n1000 1.5 0\n", encoding="utf-8")
    return path


# -- outputs never replace inputs ------------------------------------------------------------

@pytest.mark.parametrize("csv_arg", [["--csv", "film.txt"], ["--csv=./film.txt"]])
def test_csv_naming_the_stacks_nk_file_is_refused_and_the_file_survives(run_cli, in_tmp, csv_arg):
    nk = _nk_file(in_tmp)
    before = nk.read_bytes()
    result = run_cli(["spectrum", "file:film.txt 100nm / glass", *csv_arg])
    assert_user_error(result, "input")
    assert nk.read_bytes() == before


def test_output_naming_the_ambient_file_is_refused(run_cli, in_tmp):
    nk = _nk_file(in_tmp)
    before = nk.read_bytes()
    result = run_cli(["spectrum", STACK, "--ambient", "file:film.txt", "--csv", "film.txt"])
    assert_user_error(result, "input")
    assert nk.read_bytes() == before


def test_swatch_naming_the_illuminant_file_is_refused(run_cli, in_tmp):
    lamp = in_tmp / "lamp.png"   # a plot-looking name, so the extension check cannot catch it
    lamp.write_text("380 1\n780 1\n", encoding="utf-8")
    before = lamp.read_bytes()
    result = run_cli(["color", STACK, "--illuminant", "lamp.png", "--swatch", "lamp.png"])
    assert_user_error(result, "input")
    assert lamp.read_bytes() == before


def test_an_output_that_is_a_folder_is_a_user_error(run_cli, in_tmp):
    (in_tmp / "results").mkdir()
    assert_user_error(run_cli(["spectrum", STACK, "--csv", "results"]), "folder")


def test_a_write_the_system_refuses_names_the_users_file_not_a_temporary(run_cli, in_tmp):
    # /proc accepts no new files, even for root (Linux; common practice for such a test).
    result = run_cli(["spectrum", STACK, "--wl", "550", "--csv", "/proc/filmoptic-test.csv"])
    assert_user_error(result, "/proc/filmoptic-test.csv")
    assert ".tmp" not in result.stderr


def test_a_failed_swatch_leaves_no_half_report_on_stdout(run_cli, in_tmp):
    result = run_cli(["color", STACK, "--swatch", "/proc/filmoptic-test.svg"])
    assert_user_error(result, "cannot write")


@pytest.mark.parametrize("args", [
    ["spectrum", STACK, "--csv", ""],
    ["spectrum", STACK, "--plot", ""],
    ["color", STACK, "--illuminant", ""],
    ["solve", "Ti ? / glass 4mm", "--reading", "0.3", "--source", ""],
    ["rate", "--run", ""],
])
def test_empty_values_are_refused(run_cli, in_tmp, args):
    assert_user_error(run_cli(args), "empty")
    assert not any(in_tmp.iterdir())


# -- options given twice or against each other ------------------------------------------------

@pytest.mark.parametrize("args, fragment", [
    (["spectrum", STACK, "--csv", "a.csv", "--csv", "b.csv"], "--csv is given twice"),
    (["solve", "Ti ? / glass 4mm", "--luminous-T", "30%", "--luminous-T", "40%"], "--luminous-T is given twice"),
    (["spectrum", STACK, "--wl", "550", "--wl=600"], "--wl is given twice"),
    (["rate", "--run", "4min:9.1nm", "--run", "10min:21.8nm", "--through-origin", "--with-offset"],
     "contradict"),
])
def test_repeated_or_contradictory_options_are_refused(run_cli, in_tmp, args, fragment):
    assert_user_error(run_cli(args), fragment)
    assert not any(in_tmp.iterdir())


def test_repeatable_options_and_repeated_flags_still_work(run_cli):
    result = run_cli(["rate", "--run", "4min:9.1nm", "--run", "10min:21.8nm", "--json", "--json"])
    assert result.exit_code == 0, result.stderr
    assert json.loads(result.stdout)


# -- numbers as people type them ----------------------------------------------------------------

def test_wavelengths_may_carry_a_unit(run_cli):
    plain = run_cli(["spectrum", STACK, "--wl", "500:600:50", "--json"])
    with_units = run_cli(["spectrum", STACK, "--wl", "500nm:0.6um:50nm", "--json"])
    assert with_units.exit_code == 0, with_units.stderr
    assert json.loads(with_units.stdout)["R"] == json.loads(plain.stdout)["R"]
    assert json.loads(with_units.stdout)["wavelength_nm"] == [500.0, 550.0, 600.0]


def test_a_dash_range_gets_the_grid_format_in_one_line(run_cli):
    result = run_cli(["spectrum", STACK, "--wl", "400-700"])
    assert_user_error(result, "START:STOP:STEP")
    assert "Invalid value" not in result.stderr  # the option is named once, not twice


@pytest.mark.parametrize("value, fragment", [("30", "did you mean 30%"), ("30,5%", "decimal point")])
def test_fraction_slips_get_a_hint(run_cli, value, fragment):
    assert_user_error(run_cli(["solve", "Ti ? / glass 4mm", "--luminous-T", value]), fragment)


def test_decimal_comma_in_a_constant_index_gets_a_hint(run_cli):
    assert_user_error(run_cli(["spectrum", "n=1,5 100nm / glass"]), "decimal point")


@pytest.mark.parametrize("written", ["45°", "45deg", "45 deg"])
def test_angles_may_carry_a_degree_sign(run_cli, written):
    plain = run_cli(["spectrum", STACK, "--wl", "550", "--angle", "45", "--json"])
    marked = run_cli(["spectrum", STACK, "--wl", "550", "--angle", written, "--json"])
    assert marked.exit_code == 0, marked.stderr
    assert json.loads(marked.stdout)["R"] == json.loads(plain.stdout)["R"]


def test_angle_lists_may_carry_a_degree_sign(run_cli):
    result = run_cli(["color", STACK, "--angles", "0°,45°", "--json"])
    assert result.exit_code == 0, result.stderr
    assert [a["angle_deg"] for a in json.loads(result.stdout)["angles"]] == [0.0, 45.0]


@pytest.mark.parametrize("angle", ["90", "-1", "nan", "x"])
def test_bad_angles_are_one_line(run_cli, angle):
    assert_user_error(run_cli(["spectrum", STACK, "--angle", angle]), "--angle")


def test_an_absurd_duration_is_refused_without_numpy_noise(run_cli):
    result = run_cli(["rate", "--run", "1e308s:1nm"])
    assert_user_error(result, "absurdly long")


# -- materials ---------------------------------------------------------------------------------

def test_materials_shows_a_users_nk_file(run_cli, in_tmp):
    _nk_file(in_tmp)
    result = run_cli(["materials", "file:film.txt", "--wl", "500", "--json"])
    assert result.exit_code == 0, result.stderr
    [entry] = json.loads(result.stdout)
    assert entry["nk"] == [{"wavelength_nm": 500.0, "n": 1.5, "k": 0.0}]


def test_an_absurd_constant_index_is_refused_instead_of_overflowing(run_cli):
    result = run_cli(["spectrum", "n=1e308 100nm / glass", "--wl", "550"])
    assert_user_error(result, "plausible")


@pytest.mark.parametrize("content, fragment", [
    (b"400 1,5 0\n500 1,5 0\n", "decimals"),
    (bytes(range(128, 256)) * 4, "not a UTF-8 text file"),
])
def test_unreadable_nk_files_are_explained(run_cli, in_tmp, content, fragment):
    (in_tmp / "bad.txt").write_bytes(content)
    assert_user_error(run_cli(["spectrum", "file:bad.txt 10nm / glass"]), fragment)


def test_air_serves_every_wavelength_the_layers_cover(run_cli):
    # Ciddor 1996 is tabulated to 1690 nm; beyond, its formula tends to n − 1 = 2.73e-4, so an
    # infrared mirror needs no --ambient. Silver measured to 20 µm (Ciesielski 2017) on sapphire
    # (Malitson 1972, to 5 µm), 400–2500 nm, with the default ambient:
    result = run_cli(["spectrum", "Ag:Ciesielski-2017-Ge 150nm / sapphire 1mm", "--wl", "400:2500:100",
                      "--json"])
    assert result.exit_code == 0, result.stderr
    assert "warning" not in result.stderr               # nothing worth a warning
    data = json.loads(result.stdout)
    assert len(data["R"]) == 22 and min(data["R"][3:]) > 0.9   # an opaque silver mirror


def test_a_silver_mirror_into_the_infrared_and_the_hint_that_leads_there(run_cli):
    # Johnson & Christy (Phys. Rev. B 6, 4370, 1972) measured silver to 1937 nm; Yang et al.
    # (Phys. Rev. B 91, 235137, 2015) to 24.9 µm. A 400–2500 nm mirror on the default Ag is refused
    # with a pointer to datasets that cover the range, thick-film ones first.
    refused = run_cli(["spectrum", "Ag 150nm / sapphire 1mm", "--wl", "400:2500:100"])
    assert_user_error(refused, "Ag:Johnson-1972", "such as Ag:Babar-2015", "Ag:Yang-2015")
    assert refused.stderr.index("Babar-2015") < refused.stderr.index("Ciesielski")
    result = run_cli(["spectrum", "Ag:Yang-2015 150nm / sapphire 1mm", "--wl", "400:2500:100", "--json"])
    assert result.exit_code == 0, result.stderr
    R = json.loads(result.stdout)["R"]
    # An opaque silver mirror reflects over 95 % from 500 nm into the infrared, rising with
    # wavelength (common practice).
    assert min(R[1:]) > 0.95 and R[-1] > R[1]


def test_a_liquid_ambient_outside_its_table_suggests_a_constant(run_cli):
    # Water by Daimon & Masumura 2007 is given to 1129 nm; a liquid barely disperses, so the
    # message offers its index at the table's end as a constant.
    result = run_cli(["spectrum", "MgF2 100nm / fused-silica", "--wl", "1500", "--ambient", "water:Daimon-2007"])
    assert_user_error(result, "water", "--ambient n=1.3")
    suggestion = result.stderr.split("--ambient ")[1].split(")")[0]
    fixed = run_cli(["spectrum", "MgF2 100nm / fused-silica", "--wl", "1500", "--ambient", suggestion])
    assert fixed.exit_code == 0, fixed.stderr


def test_a_range_error_on_a_large_grid_names_the_far_end(run_cli):
    # Large enough to be computed in blocks behind a progress bar.
    result = run_cli(["spectrum", "[TiO2 55nm / SiO2 92nm]x10 / glass 1mm", "--wl", "1000:2000:0.005",
                      "--ambient", "n=1"])
    assert_user_error(result, "SiO2", "2000 nm")


# -- light that cannot get out, or in ----------------------------------------------------------

def test_absorbing_half_space_passes_nothing_and_absorbs_what_enters(run_cli):
    # Light entering titanium never comes out (Beer–Lambert over an unbounded path): T = 0 and
    # the light not reflected, 1 − R, is absorbed in the substrate (R + T + A = 1).
    result = run_cli(["spectrum", "Ti", "--wl", "550", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert data["T"] == [0.0] and data["transmission"] == "opaque"
    assert data["A_substrate"][0] == pytest.approx(1 - data["R"][0], abs=1e-12)
    table = run_cli(["spectrum", "Ti", "--wl", "550"])
    assert table.stdout.count("absorbing half-space") == 1   # said once, under the table


def test_transparent_half_space_says_once_what_T_is(run_cli):
    result = run_cli(["spectrum", "MgF2 100nm / glass", "--wl", "550"])
    assert result.exit_code == 0
    assert result.stdout.count("enters the half-space substrate") == 1
    assert "absorbing half-space" not in result.stdout
    slab = run_cli(["spectrum", "MgF2 100nm / glass 4mm", "--wl", "550"])
    assert "note:" not in slab.stdout   # through a slab, T is plainly what comes out


def test_reverse_through_an_absorbing_half_space_is_refused(run_cli):
    # Bulk silicon is opaque at 550 nm (M. A. Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008):
    # k ≈ 0.03, absorption length λ/(4πk) ≈ 1.5 µm; from memory).
    assert_user_error(run_cli(["spectrum", "Ti 12nm / Si", "--reverse", "--wl", "550"]), "half-space")


def test_colour_of_an_opaque_part_has_no_transmitted_colour(run_cli):
    # Nothing comes through a titanium half-space, so nothing can be seen in transmission: no
    # transmitted colour at any angle, luminous T 0 and all unreflected light in the substrate.
    result = run_cli(["color", "TiO2 60nm / Ti", "--angles", "0:60:30", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert data["transmitted"] is None and data["transmission"] == "opaque"
    assert all(entry["transmitted"] is None for entry in data["angles"])
    lum = data["luminous"]
    assert lum["T"] == 0.0
    assert lum["A_layers"] + lum["A_substrate"] == pytest.approx(1 - lum["R"], abs=1e-12)
    table = run_cli(["color", "TiO2 60nm / Ti", "--angles", "0:60:30"]).stdout
    assert "transmitted" not in table and "T L*" not in table


# -- fit -----------------------------------------------------------------------------------------

def _measured(folder):
    path = folder / "T.csv"
    # A flat 90 % line: the numbers only need to be readable, the test is about the options.
    rows = "\n".join(f"{w},{90.0:.1f}" for w in range(400, 801, 20))
    path.write_text("wavelength (nm), T (%)\n" + rows + "\n", encoding="utf-8")
    return path


def test_fit_refuses_the_same_measurement_twice(run_cli, in_tmp):
    _measured(in_tmp)
    result = run_cli(["fit", "TiO2 10..400nm / glass 1mm", "--measured", "T.csv", "--measured", "./T.csv"])
    assert_user_error(result, "given twice")


def test_fit_takes_pol_like_spectrum_and_spectrum_takes_polarization_like_fit(run_cli, in_tmp):
    _measured(in_tmp)
    fitted = run_cli(["fit", "n=1.3..1.6 10..200nm / glass 1mm", "--measured", "T.csv", "--pol", "S",
                      "--max-grid", "200", "--starts", "1", "--json"])
    assert fitted.exit_code == 0, fitted.stderr
    # '--pol S' reached the fit as s-polarised light: the command gives the API's answer.
    from filmoptic.inverse.fit import fit_spectra
    from filmoptic.inverse.measured import read_spectrum

    api = fit_spectra("n=1.3..1.6 10..200nm / glass 1mm", [read_spectrum("T.csv")], polarization="s",
                      max_grid=200, starts=1)
    values = [p["value"] for p in json.loads(fitted.stdout)["parameters"]]
    assert values == [p.value for p in api.parameters]
    spectrum = run_cli(["spectrum", STACK, "--wl", "550", "--polarization", "s", "--json"])
    assert json.loads(spectrum.stdout)["polarization"] == "s"
    assert os.path.exists("T.csv")


# -- the command itself --------------------------------------------------------------------------

def test_no_arguments_shows_the_overview_not_an_error_line(run_cli):
    result = run_cli([])
    assert result.exit_code == 0
    assert result.stdout.startswith("Usage: filmoptic")
    assert "\n  spectrum" in result.stdout  # a readable command list, one per line


@pytest.mark.parametrize("typo, meant", [("spectrm", "spectrum"), ("colr", "color"), ("materail", "materials")])
def test_a_misspelt_command_gets_a_suggestion(run_cli, typo, meant):
    assert_user_error(run_cli([typo, STACK]), f"did you mean '{meant}'")


def test_extrapolation_warning_is_one_plain_line(run_cli):
    # PMMA's default table starts at 400 nm (Zhang 2020 data); the colour grid starts at 380 nm.
    result = run_cli(["color", "Al 10nm / PMMA 3mm", "--extrapolate", "--json"])
    assert result.exit_code == 0, result.stderr
    warnings_ = [line for line in result.stderr.splitlines() if line.strip()]
    assert warnings_ and all(line.startswith("filmoptic: warning: ") for line in warnings_), result.stderr
    assert "holding the end values" in warnings_[0]
    json.loads(result.stdout)


@pytest.mark.parametrize("written", ["10", "10°", "10deg", " 10 "])
def test_observer_may_be_written_with_a_degree_sign(run_cli, written):
    result = run_cli(["color", "Cr 8nm / glass 4mm", "--observer", written, "--json"])
    assert result.exit_code == 0, result.stderr


def test_a_chain_of_calls_is_not_a_material(run_cli):
    # Parsed, never evaluated: the message names what a material may be.
    assert_user_error(run_cli(["spectrum", "__import__('os').system('true') 10nm / glass"]),
                      "cannot read the material")
