"""Readings as they come off a meter, the guards against a wrong answer given without a word, and
the outputs a coater looks for first (``filmoptic solve``, ``spectrum``, ``sweep``; the reading
model in ``filmoptic.inverse.readings``)."""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest
import tmm

from conftest import assert_user_error
from filmoptic.errors import FilmopticError
from filmoptic.inverse.readings import (
    LED_DEFAULT_FWHM_NM,
    SILICON_RESPONSE,
    band_weights,
    dark_corrected_ratio,
    detector_response,
    parse_reading,
)
from filmoptic.inverse.solve import Reading, evaluate_condition

MIRROR = "Ti ? / glass 4mm"


def _solve_json(run_cli, *args):
    result = run_cli(["solve", *args, "--json"])
    assert result.exit_code == 0, result.stderr
    return json.loads(result.stdout), result


def _thickness(run_cli, *args):
    return _solve_json(run_cli, *args)[0]["solutions"][0]["thickness_nm"]


# --------------------------------------------------------------------------------------------
# Units and dark readings
# --------------------------------------------------------------------------------------------


def test_readings_with_units_and_dark():
    # A dark reading is taken off sample and reference: (S − D)/(R − D) (common practice).
    assert parse_reading("318lx/1045lx").ratio == 318 / 1045
    r = parse_reading("12.1uA/40.2uA/0.3uA")
    assert r.ratio == pytest.approx((12.1 - 0.3) / (40.2 - 0.3), rel=1e-14)
    assert (r.unit, r.dark) == ("A", pytest.approx(0.3e-6, rel=1e-14))
    assert parse_reading("2.3V/7100mV").ratio == pytest.approx(2.3 / 7.1, rel=1e-15)
    assert parse_reading("2.3/7.1", dark=0.1).ratio == pytest.approx(2.2 / 7.0, rel=1e-15)
    assert dark_corrected_ratio(5.0, 10.0, 1.0) == pytest.approx(4.0 / 9.0, rel=1e-15)


@pytest.mark.parametrize("text, dark, fragment", [
    ("2.3V/1045lx", None, "one kind of unit"),
    ("2.3V/7.1", None, "unit on every number or on none"),
    ("2.3V/7.1V/0.02lx", None, "one kind of unit"),
    ("2.3V/7.1V", "0.02", "one kind of unit"),
    ("2.3V/7.1V/0.02V", "0.02V", "drop --dark"),
    ("0.3", "0.02", "already a ratio"),
    ("0.1V/1V/0.2V", None, "below the dark reading"),
    ("1V/1V/1V", None, "more than zero"),
    ("2.3 furlongs/7.1 furlongs", None, "unknown unit"),
])
def test_reading_mistakes(text, dark, fragment):
    with pytest.raises(FilmopticError, match=fragment):
        parse_reading(text, dark=dark)


def test_cli_reading_with_units_and_dark_gives_the_ratio_answer(run_cli):
    # (2.12 − 0.02)/(7.02 − 0.02) = 0.3: the same part as a plain 0.3 reading.
    plain = _thickness(run_cli, MIRROR, "--reading", "0.3")
    data, result = _solve_json(run_cli, MIRROR, "--reading", "2.12V/7.02V/0.02V")
    assert data["solutions"][0]["thickness_nm"] == pytest.approx(plain, abs=1e-9)
    assert data["reading"]["unit"] == "V" and data["reading"]["dark"] == pytest.approx(0.02, rel=1e-15)
    assert _thickness(run_cli, MIRROR, "--reading", "2120mV/7.02V", "--dark", "20mV") == pytest.approx(plain, abs=1e-9)
    table = run_cli(["solve", MIRROR, "--reading", "2.12V/7.02V", "--dark", "0.02V"])
    assert "Reading: (sample 2.12 − dark 0.02) / (reference 7.02 − dark 0.02) V = 30.00 %" in table.stdout


@pytest.mark.parametrize("args, fragments", [
    (["--reading", "2.3V/1045lx"], ["one kind of unit"]),
    (["--reading", "0.3", "--dark", "0.01"], ["already a ratio"]),
    (["--luminous-T", "30%", "--dark", "0.02V"], ["--dark", "--reading"]),
])
def test_cli_reading_mistakes_are_one_line(run_cli, args, fragments):
    assert_user_error(run_cli(["solve", MIRROR, *args]), *fragments)


def test_lux_with_another_detector_is_said(run_cli):
    result = run_cli(["solve", MIRROR, "--reading", "318lx/1045lx", "--detector", "flat"])
    assert result.exit_code == 0
    assert result.stderr.count("warning") == 1 and "lux meter" in result.stderr


# --------------------------------------------------------------------------------------------
# Detectors and sources
# --------------------------------------------------------------------------------------------


def test_silicon_response_is_the_published_curve():
    # Knots of the c-Si relative spectral response, A. Driesse & J. S. Stein, "Global Normal
    # Spectral Irradiance in Albuquerque: a One-Year Open Dataset for PV Research" (2020),
    # doi:10.2172/1814068: 0.27 at 350 nm, 0.52 at 500 nm, 0.88 at 800 nm, peak 1.00 at 950 nm.
    response, (lo, hi) = detector_response("silicon")
    published = {350.0: 0.27, 500.0: 0.52, 800.0: 0.88, 950.0: 1.00, 1050.0: 0.58, 1150.0: 0.05}
    wl = np.array(list(published))
    np.testing.assert_allclose(response(wl), list(published.values()), atol=1e-12)
    assert SILICON_RESPONSE[7] == (950.0, 1.00)
    # Nothing beyond the silicon band edge near 1.1 µm (1.12 eV; common practice), nor below 290 nm.
    assert (lo, hi) == (290.0, 1190.0)
    assert response(np.array([280.0, 1200.0])).tolist() == [0.0, 0.0]
    fine = np.arange(290.0, 1190.0, 1.0)
    assert 930 <= fine[np.argmax(response(fine))] <= 970 and response(fine).min() >= 0
    assert detector_response("si")[1] == (lo, hi)


def test_silicon_detector_behind_a_laser_reads_the_transmittance_at_the_line(run_cli):
    # One line: the detector's response divides out, so the reading is T(633 nm); check the
    # solved thickness against tmm (S. J. Byrnes, tmm, 2016) on a constant-index film.
    stack = "n=2.1 ? / n=1.52"
    data, _ = _solve_json(run_cli, stack, "--reading", "0.85", "--source", "laser:633", "--detector", "silicon",
                          "--ambient", "n=1", "--range", "0:150")
    d = data["solutions"][0]["thickness_nm"]
    t = tmm.coh_tmm("s", [1.0, 2.1, 1.52], [np.inf, d, np.inf], 0.0, 633.0)["T"]
    assert t == pytest.approx(0.85, abs=1e-7)


def test_unknown_detector_names_get_the_right_hint(run_cli):
    result = run_cli(["solve", MIRROR, "--reading", "0.3", "--detector", "photodiode"])
    assert_user_error(result, "did you mean silicon")
    assert "did you mean photopic" not in result.stderr
    assert_user_error(run_cli(["solve", MIRROR, "--reading", "0.3", "--detector", "thermopile"]), "did you mean flat")
    assert_user_error(run_cli(["solve", MIRROR, "--reading", "0.3", "--detector", "photopik"]), "did you mean photopic")


def test_led_without_a_width_takes_the_stated_default(run_cli):
    wl, w = band_weights("led:530", "photopic")
    wl2, w2 = band_weights(f"led:530/{LED_DEFAULT_FWHM_NM:g}", "photopic")
    assert np.array_equal(wl, wl2) and np.array_equal(w, w2)
    data, result = _solve_json(run_cli, MIRROR, "--reading", "0.3", "--source", "led:530")
    assert data["condition"]["source"] == "led:530/25"
    assert "note: --source led:530: no width given, so led:530/25" in result.stderr
    assert data["solutions"][0]["thickness_nm"] == _thickness(run_cli, MIRROR, "--reading", "0.3", "--source", "led:530/25")


# --------------------------------------------------------------------------------------------
# Batch of raw readings
# --------------------------------------------------------------------------------------------


def _write(path, rows, delimiter=","):
    with open(path, "w", newline="", encoding="utf-8") as fh:
        csv.writer(fh, delimiter=delimiter).writerows(rows)


def test_batch_from_raw_sample_reference_and_dark_columns(tmp_path, run_cli):
    d = [6.0, 11.0]
    ratios = evaluate_condition(MIRROR, Reading(0.5, "A", "photopic"), d)
    dark = 0.05
    src = tmp_path / "raw.csv"
    _write(src, [["part", "sample (V)", "reference (V)", "dark (V)"]]
           + [[f"P{i}", f"{r * 7 + dark * (1 - r):.12f}", "7", f"{dark}"] for i, r in enumerate(ratios)])
    out = tmp_path / "out.csv"
    result = run_cli(["solve", MIRROR, "--readings", src, "--source", "A", "--out", out])
    assert result.exit_code == 0, result.stderr
    with open(out, newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    np.testing.assert_allclose([float(r["ratio"]) for r in rows], ratios, atol=1e-4)
    np.testing.assert_allclose([float(r["thickness_nm"]) for r in rows], d, atol=1e-3)
    note = [line for line in result.stderr.splitlines() if "note: read" in line]
    assert len(note) == 1
    for fragment in ("commas between fields", "decimal point", "sample = sample (V)", "dark = dark (V)",
                     "unit V", "2 rows"):
        assert fragment in note[0], (fragment, note[0])


def test_batch_with_semicolons_decimal_commas_and_dark_option(tmp_path, run_cli):
    # A European export: semicolons between fields, decimal commas; the dark reading from --dark.
    d = 9.0
    ratio = float(evaluate_condition(MIRROR, Reading(0.5), [d])[0])
    src = tmp_path / "raw.csv"
    sample = f"{ratio * 4.0 + 0.1 * (1 - ratio):.10f}".replace(".", ",")
    _write(src, [["sample", "reference"], [sample, "4,0"], ["x", "4,0"]], delimiter=";")
    data, result = _solve_json(run_cli, MIRROR, "--readings", src, "--dark", "0.1")
    assert data["rows"][0]["thickness_nm"] == pytest.approx(d, abs=1e-3)
    assert data["rows"][1]["status"] == "bad reading"
    assert "semicolons between fields, decimal comma" in data["read_as"]
    assert "1 unusable (first: line 3" in data["read_as"]
    assert "read " in result.stderr


def test_batch_raw_column_mistakes(tmp_path, run_cli):
    src = tmp_path / "raw.csv"
    _write(src, [["sample", "reference"], ["2.3V", "1045lx"]])
    assert_user_error(run_cli(["solve", MIRROR, "--readings", src]), "no usable reading", "unit")
    _write(src, [["a", "b"], ["1", "2"]])
    assert_user_error(run_cli(["solve", MIRROR, "--readings", src]), "--columns SAMPLE,REFERENCE")
    assert_user_error(run_cli(["solve", MIRROR, "--readings", src, "--columns", "a"]), "SAMPLE,REFERENCE")
    assert_user_error(run_cli(["solve", MIRROR, "--readings", src, "--columns", "a,b", "--column", "a"]), "not both")


# --------------------------------------------------------------------------------------------
# Uncertainty: % of the value and percentage points
# --------------------------------------------------------------------------------------------


def test_uncertainty_bare_number_above_one_is_refused(run_cli):
    assert_user_error(run_cli(["solve", MIRROR, "--luminous-T", "30%", "--uncertainty", "2"]),
                      "did you mean 2% ", "2pp")


def test_uncertainty_relative_and_points_are_spelled_and_said(run_cli):
    relative, _ = _solve_json(run_cli, MIRROR, "--luminous-T", "30%", "--uncertainty", "2%")
    absolute, _ = _solve_json(run_cli, MIRROR, "--luminous-T", "30%", "--uncertainty", "0.006")
    points, _ = _solve_json(run_cli, MIRROR, "--luminous-T", "30%", "--uncertainty", "2pp")
    fraction, _ = _solve_json(run_cli, MIRROR, "--luminous-T", "30%", "--uncertainty", "0.02")
    # 2 % of 0.30 is 0.006; 2 percentage points are 0.02 (definitions, common practice).
    assert relative["solutions"][0]["low_nm"] == pytest.approx(absolute["solutions"][0]["low_nm"], abs=1e-9)
    assert points["solutions"][0]["high_nm"] == pytest.approx(fraction["solutions"][0]["high_nm"], abs=1e-9)
    assert relative["condition"]["uncertainty"] == pytest.approx(0.006, rel=1e-12)
    assert (relative["uncertainty_kind"], points["uncertainty_kind"], fraction["uncertainty_kind"]) == \
        ("relative", "points", "absolute")
    table = run_cli(["solve", MIRROR, "--luminous-T", "30%", "--uncertainty", "2%"]).stdout
    assert "± 0.60 percentage points (--uncertainty 2%: 2 % of the value)" in table
    table = run_cli(["solve", MIRROR, "--luminous-T", "30%", "--uncertainty", "2pp"]).stdout
    assert "± 2.00 percentage points (--uncertainty 2pp: 2 percentage points)" in table
    assert_user_error(run_cli(["solve", "TiO2 ? / Ti", "--hex", "#3d64ab", "--uncertainty", "2pp"]), "ΔE00")


# --------------------------------------------------------------------------------------------
# Half-space substrate in a transmittance solve; solve --plot
# --------------------------------------------------------------------------------------------


def test_half_space_glass_in_a_transmittance_solve_is_said_once(run_cli):
    half, warned = _solve_json(run_cli, "Ti ? / glass", "--luminous-T", "30%")
    slab, quiet = _solve_json(run_cli, "Ti ? / glass 4mm", "--luminous-T", "30%")
    assert warned.stderr.count("half-space") == 1 and "'glass 4mm'" in warned.stderr
    assert "half-space" not in quiet.stderr
    # The back face of a real pane changes the answer (by more than the solver's tolerance).
    assert abs(half["solutions"][0]["thickness_nm"] - slab["solutions"][0]["thickness_nm"]) > 0.1
    # A reflectance needs no light through the substrate: nothing to say.
    assert "half-space" not in run_cli(["solve", "Ti ? / glass", "--luminous-R", "30%"]).stderr
    # compare says the same for its --on substrate.
    assert run_cli(["compare", "Ti", "Cr", "--on", "glass", "--luminous-T", "30%"]).stderr.count("half-space") == 1


def test_solve_plot_is_written_and_named(run_cli, tmp_path):
    png = tmp_path / "solve.png"
    result = run_cli(["solve", MIRROR, "--reading", "318/1045", "--uncertainty", "2%", "--plot", png])
    assert result.exit_code == 0, result.stderr
    assert png.read_bytes()[:4] == b"\x89PNG" and f"Plot written to {png}" in result.stdout
    data, _ = _solve_json(run_cli, MIRROR, "--reading", "318/1045", "--plot", tmp_path / "s.svg")
    assert data["plot"] == str(tmp_path / "s.svg") and (tmp_path / "s.svg").exists()
    assert_user_error(run_cli(["solve", MIRROR, "--reading", "0.3", "--plot", tmp_path / "x.gif"]), ".png")
    assert not (tmp_path / "x.gif").exists()


# --------------------------------------------------------------------------------------------
# spectrum: optical density, luminous values, plot, caution; sweep's printed step
# --------------------------------------------------------------------------------------------


def test_spectrum_optical_density_and_luminous_values(run_cli):
    from filmoptic.colorimetry import appearance

    data = json.loads(run_cli(["spectrum", "Cr 60nm / glass 2mm", "--wl", "380:780:5", "--json"]).stdout)
    # OD = −log10 T (definition of optical density; e.g. EN 207 grades laser filters by it, from memory).
    np.testing.assert_allclose(data["OD"], -np.log10(data["T"]), rtol=1e-14)
    look = appearance("Cr 60nm / glass 2mm")
    assert data["luminous_T"] == pytest.approx(look.luminous.T, abs=1e-12)
    assert data["luminous_R"] == pytest.approx(look.luminous.R, abs=1e-12)
    table = run_cli(["spectrum", "Cr 60nm / glass 2mm", "--wl", "380:780:100"])
    assert " OD" in table.stdout.splitlines()[1] and "OD: optical density" in table.stdout
    assert f"Luminous (ISO 9050, D65, 380–780 nm): T {100 * look.luminous.T:.2f} %" in table.stdout
    assert table.stderr.count("CAUTION") == 1
    # A range short of 380–780 nm prints no luminous values; a clear part shows no OD column.
    part = run_cli(["spectrum", "TiO2 60nm / glass", "--wl", "500:600:50"])
    assert "Luminous" not in part.stdout and "OD" not in part.stdout and "CAUTION" not in part.stderr
    assert json.loads(run_cli(["spectrum", "TiO2 60nm / glass", "--wl", "500", "--json"]).stdout)["luminous_T"] is None


def test_eye_caution_only_where_a_person_looks_through(run_cli):
    # An opaque half-space substrate (silicon) passes nothing a person could look through.
    assert "CAUTION" not in run_cli(["spectrum", "Cr 60nm / Si", "--wl", "550"]).stderr
    # A dark filter: once per command, even with several views.
    assert run_cli(["color", "Cr 40nm / glass 2mm", "--angles", "0:60:20"]).stderr.count("CAUTION") == 1
    assert run_cli(["solve", MIRROR, "--luminous-T", "5%"]).stderr.count("CAUTION") == 1
    assert run_cli(["spectrum", "Cr 40nm / glass 2mm", "--wl", "550"]).stderr.count("CAUTION") == 1


def test_spectrum_plot_says_where_it_wrote(run_cli, tmp_path):
    png = tmp_path / "s.png"
    result = run_cli(["spectrum", "Ti 10nm / glass", "--wl", "400:700:10", "--plot", png])
    assert result.exit_code == 0 and f"Plot written to {png}" in result.stdout
    result = run_cli(["spectrum", "Ti 10nm / glass", "--wl", "400:700:10", "--plot", png, "--json"])
    json.loads(result.stdout)
    assert f"plot written to {png}" in result.stderr


def test_sweep_prints_a_coarser_step_and_writes_every_row(run_cli, tmp_path):
    out = tmp_path / "sweep.csv"
    result = run_cli(["sweep", "TiO2 ? / Ti", "--range", "0:300:1", "--csv", out])
    assert result.exit_code == 0, result.stderr
    rows = [line.split()[0] for line in result.stdout.splitlines()[3:] if line.strip() and line.split()[0].isdigit()]
    assert rows[:3] == ["0", "5", "10"] and rows[-1] == "300" and len(rows) == 61
    assert "61 of 301 rows" in result.stdout
    with open(out, newline="", encoding="utf-8") as fh:
        written = list(csv.DictReader(fh))
    assert len(written) == 301 and written[7]["thickness_nm"] == "7"
    data = json.loads(run_cli(["sweep", "TiO2 ? / Ti", "--range", "0:300:1", "--json"]).stdout)
    assert len(data["thickness_nm"]) == 301
    assert float(written[7]["luminous_R"]) == pytest.approx(data["luminous_R"][7], rel=1e-9)
    every = run_cli(["sweep", "TiO2 ? / Ti", "--range", "0:300:1", "--table-step", "100"])
    assert "4 of 301 rows" in every.stdout
    short = run_cli(["sweep", "TiO2 ? / Ti", "--range", "0:50:1"])
    assert "rows)" not in short.stdout


# --------------------------------------------------------------------------------------------
# Every tabular reader says how it read its file
# --------------------------------------------------------------------------------------------


def test_readers_say_how_they_read(run_cli, tmp_path):
    lamp = tmp_path / "lamp.csv"
    lamp.write_text("wavelength,power\n" + "".join(f"{w},{1 + w / 1000}\n" for w in range(780, 370, -10)),
                    encoding="utf-8")
    result = run_cli(["color", "Ti 10nm / glass 4mm", "--illuminant", lamp])
    assert result.exit_code == 0, result.stderr
    assert f"note: read {lamp}: commas between fields" in result.stderr
    assert "column-title line skipped" in result.stderr and "reversed" in result.stderr

    sensor = tmp_path / "sensor.txt"
    sensor.write_text("".join(f"{w}\t{w / 1000}\n" for w in range(300, 1101, 20)), encoding="utf-8")
    result = run_cli(["solve", MIRROR, "--reading", "0.3", "--detector", sensor, "--source", "A"])
    assert result.exit_code == 0 and f"note: read {sensor}: tabs between fields" in result.stderr

    nk = tmp_path / "film.nk"
    nk.write_text("400 2.1 0.01\n800 1.9 0\n", encoding="utf-8")
    result = run_cli(["spectrum", f"file:{nk} 50nm / glass", "--wl", "500"])
    assert result.exit_code == 0 and "columns wavelength (nm), n, k; 2 rows" in result.stderr

    measured = tmp_path / "T.csv"
    measured.write_text("wl (nm);T (%)\n400;90,5\n500;x\n600;91,0\n", encoding="utf-8")
    from filmoptic.inverse.measured import read_spectrum

    how = read_spectrum(measured).how_read
    for fragment in ("semicolons between fields, decimal comma", "wavelength in nm (from the header)",
                     "T in percent (from the header)", "2 rows used", "lines 3 dropped"):
        assert fragment in how, (fragment, how)
    # An error stays one line: no notes printed before or after it.
    assert_user_error(run_cli(["color", "Ti 10nm / glass 4mm", "--illuminant", lamp, "--observer", "5"]), "observer")
