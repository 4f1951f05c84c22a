"""Hostile input: no traceback, no hang, no NaN, no overwritten file.

One test (or a few) for every kind of failure a fuzz run of the command line once found: an output
that replaced an input, an internal error, no answer in time, a NaN or a value outside [0, 1], and
numpy's warnings reaching the user. Each ends either in a correct answer or in exit code 2 with one
line that names the problem (and, for a size limit, the variable that raises it), and no input file
changes. These are facts of the tool's contract, not of physics; the few physical facts used are
marked with their source or as common practice.
"""

from __future__ import annotations

import hashlib
import json
import os

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic.errors import DataFileError, FilmopticError

STACK = "TiO2 60nm / glass 3mm"


def _digest(folder) -> dict:
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in folder.rglob("*") if p.is_file()}


def _nk(path, n="1.5"):
    path.write_text(f"# wavelength_nm n k\n300 {n} 0\n1000 {n} 0\n", encoding="utf-8")
    return path


def _measured(path, rows=None):
    wl = np.arange(400.0, 801.0, 5.0) if rows is None else np.linspace(400.0, 800.0, rows)
    body = "\n".join(f"{w:.5f},{85 + 5 * np.sin(w / 9):.4f}" for w in wl)
    path.write_text("wavelength (nm),T (%)\n" + body + "\n", encoding="utf-8")
    return path


# ---------------------------------------------------------------------------------------------
# No output replaces an input
# ---------------------------------------------------------------------------------------------
@pytest.mark.parametrize("prefix", ["file:", "FILE:", "File:", "fIlE:"])
@pytest.mark.parametrize("name", ["film.txt", "(film).txt", "[film].txt", "film (2).txt"])
def test_csv_naming_a_file_table_is_refused_whatever_the_spelling(run_cli, in_tmp, prefix, name):
    _nk(in_tmp / name)
    before = _digest(in_tmp)
    result = run_cli(["spectrum", f"{prefix}{name} 100nm / glass", "--wl", "550", "--csv", name])
    assert_user_error(result, "input")
    assert _digest(in_tmp) == before


@pytest.mark.parametrize("spelling", ["./{}", "sub/../{}", "{abs}"])
def test_an_output_spelt_another_way_is_still_the_input(run_cli, in_tmp, spelling):
    (in_tmp / "sub").mkdir()
    _nk(in_tmp / "film.txt")
    before = _digest(in_tmp)
    out = spelling.format("film.txt", abs=str(in_tmp / "film.txt"))
    result = run_cli(["spectrum", "mix(file:film.txt,n=1,0.3) 100nm / glass", "--wl", "550", "--csv", out])
    assert_user_error(result, "input")
    assert _digest(in_tmp) == before


@pytest.mark.parametrize("link", ["symlink", "hardlink"])
def test_an_output_linked_to_an_input_is_refused(run_cli, in_tmp, link):
    _nk(in_tmp / "film.txt")
    (os.symlink if link == "symlink" else os.link)(in_tmp / "film.txt", in_tmp / "other.csv")
    before = (in_tmp / "film.txt").read_bytes()
    result = run_cli(["spectrum", "file:film.txt 100nm / glass", "--wl", "550", "--csv", "other.csv"])
    assert_user_error(result, "input")
    assert (in_tmp / "film.txt").read_bytes() == before


def _library(folder):
    folder.mkdir()
    (folder / "Mine__A.txt").write_text("# material: Mine\n# dataset: A\n300 1.7 0\n1000 1.6 0\n",
                                        encoding="utf-8")
    return folder


@pytest.mark.parametrize("output", ["lib/new.txt", "lib/NEW.NK", "lib/Mine__A.txt", "lib/../lib/x.txt"])
def test_no_output_lands_among_the_user_library_tables(run_cli, in_tmp, monkeypatch, output):
    # Every .txt or .nk file in that folder is part of the library the next run reads: a table
    # written there as "new.txt" would break every later command.
    _library(in_tmp / "lib")
    monkeypatch.setenv("FILMOPTIC_NKDATA", str(in_tmp / "lib"))
    before = _digest(in_tmp / "lib")
    result = run_cli(["spectrum", "Mine 100nm / glass", "--wl", "550", "--csv", output])
    assert_user_error(result, "library")
    assert _digest(in_tmp / "lib") == before


def test_other_files_may_sit_beside_the_library_tables(run_cli, in_tmp, monkeypatch):
    # A folder of one's own tables is often the project folder: a plot or a .csv there is no table.
    _library(in_tmp / "lib")
    monkeypatch.setenv("FILMOPTIC_NKDATA", str(in_tmp / "lib"))
    before = _digest(in_tmp / "lib")
    result = run_cli(["spectrum", "Mine 100nm / glass", "--wl", "550", "--csv", "lib/result.csv"])
    assert result.exit_code == 0, result.stderr
    assert {k: v for k, v in _digest(in_tmp / "lib").items() if k != "result.csv"} == before


def test_a_fit_plot_naming_the_nk_file_it_read_is_refused(run_cli, in_tmp):
    _nk(in_tmp / "film.png")                  # an n,k table that happens to carry a plot's name
    _measured(in_tmp / "T.csv")
    before = _digest(in_tmp)
    result = run_cli(["fit", "file:film.png 10..300nm / glass 1mm", "--measured", "T.csv",
                      "--max-grid", "100", "--starts", "1", "--plot", "film.png"])
    assert_user_error(result, "input")
    assert _digest(in_tmp) == before


# Every reader with every writer of a command that has both: (command line with {input}, the
# input's file name and content, output option).
READERS = {
    "n,k table": (["spectrum", "file:{input} 100nm / glass", "--wl", "550"], "nk"),
    "ambient table": (["spectrum", STACK, "--ambient", "file:{input}", "--wl", "550"], "nk"),
    "illuminant": (["color", STACK, "--illuminant", "{input}"], "light"),
    "sweep table": (["sweep", "file:{input} 0..100nm / glass", "--range", "0:100:50"], "nk"),
    "measured spectrum": (["fit", "TiO2 10..300nm / glass 1mm", "--measured", "{input}", "--max-grid", "100",
                           "--starts", "1"], "measured"),
    "readings": (["solve", "Ti ? / glass 4mm", "--readings", "{input}", "--source", "A"], "readings"),
    "n,k shown": (["materials", "file:{input}"], "nk"),
}
WRITERS = {"spectrum": ["--csv", "--plot"], "color": ["--swatch"], "sweep": ["--chart"], "fit": ["--plot"],
           "solve": ["--out"], "materials": ["--plot"]}
CONTENT = {
    "nk": "# wavelength_nm n k\n300 1.5 0\n1000 1.5 0\n",
    "light": "380 1\n780 1\n",
    "measured": "wavelength (nm),T (%)\n" + "".join(f"{w},{90 - w / 100:.2f}\n" for w in range(400, 801, 10)),
    "readings": "part,reading\nA,0.3\nB,0.5\n",
}


@pytest.mark.parametrize("reader, option", [(r, o) for r, (args, _) in READERS.items() for o in WRITERS[args[0]]])
def test_every_writer_refuses_every_input(run_cli, in_tmp, reader, option):
    args, kind = READERS[reader]
    name = "input.png" if option in ("--plot", "--swatch", "--chart") else "input.csv"
    (in_tmp / name).write_text(CONTENT[kind], encoding="utf-8")
    before = _digest(in_tmp)
    result = run_cli([a.format(input=name) for a in args] + [option, f"./{name}"])
    assert_user_error(result, "input")
    assert _digest(in_tmp) == before


def test_the_rule_holds_where_the_command_line_does_not_show_the_input(tmp_path):
    # A file read by the run but not named on the command line (a library table, read through
    # the library index) is protected when the output is written, compared by file identity.
    from filmoptic.files import input_guard, write_csv
    from filmoptic.materials import load_nk_file

    table = _nk(tmp_path / "film.txt")
    (tmp_path / "alias.csv").symlink_to(table)
    with input_guard():
        load_nk_file(table)
        for output in (tmp_path / "alias.csv", tmp_path / "." / "film.txt"):
            with pytest.raises(FilmopticError, match="input of this run"):
                write_csv(output, ["a"], [[1]])
        write_csv(tmp_path / "fresh.csv", ["a"], [[1]])       # any other name is fine
    assert (tmp_path / "fresh.csv").read_text() == "a\n1\n"
    assert table.read_text().startswith("# wavelength_nm")


def test_outside_a_guard_the_api_writes_as_asked(tmp_path):
    # A Python program that wants the rule opens files.input_guard(); otherwise a file read
    # earlier may be rewritten on purpose (e.g. a notebook updating its own table).
    from filmoptic.files import write_csv
    from filmoptic.materials import load_nk_file

    table = _nk(tmp_path / "film.txt")
    load_nk_file(table)
    write_csv(table, ["a"], [[1]])
    assert table.read_text() == "a\n1\n"


# ---------------------------------------------------------------------------------------------
# No internal error
# ---------------------------------------------------------------------------------------------
def test_a_repeat_count_with_thousands_of_digits(run_cli):
    assert_user_error(run_cli(["spectrum", "[TiO2 55nm / SiO2 92nm]x" + "9" * 5000 + " / glass"]),
                      "5000 digits")


@pytest.mark.parametrize("text", ["[" * 5000 + "]" * 5000,
                                  '{"solutions":' + "[" * 100_000 + "]" * 100_000 + "}"])
def test_a_solve_file_nested_thousands_deep(run_cli, in_tmp, text):
    (in_tmp / "run.json").write_text(text, encoding="utf-8")
    assert_user_error(run_cli(["rate", "--run", "5min:run.json", "--run", "10min:21.8nm"]),
                      "levels of nesting", "FILMOPTIC_MAX_DEPTH")


@pytest.mark.parametrize("data, fragment", [
    ({"solutions": [1, 2]}, "not a 'filmoptic solve --json' output"),
    ([{"thickness_nm": 20.0}], "not a 'filmoptic solve --json' output"),
    ({"solutions": [{"thickness_nm": 20.0, "low_nm": "x", "high_nm": []}]}, "low_nm"),
    ({"solutions": [{"thickness_nm": True}]}, "thickness_nm"),
    ({"solutions": [{"thickness_nm": 1e300}]}, "not a valid thickness"),
    ({"solutions": [{"thickness_nm": 20.0, "low_nm": 30.0, "high_nm": 40.0}]}, "does not hold"),
    ({"solutions": {"thickness_nm": 20.0}}, "not a 'filmoptic solve --json' output"),
])
def test_a_solve_file_of_the_wrong_shape(run_cli, in_tmp, data, fragment):
    (in_tmp / "run.json").write_text(json.dumps(data), encoding="utf-8")
    assert_user_error(run_cli(["rate", "--run", "5min:run.json", "--run", "10min:21.8nm"]), fragment)


def test_a_solution_number_with_thousands_of_digits(run_cli, in_tmp):
    (in_tmp / "run.json").write_text(json.dumps({"solutions": [{"thickness_nm": 9.0}]}), encoding="utf-8")
    assert_user_error(run_cli(["rate", "--run", "5min:run.json#" + "1" * 5000]), "solution's number")


@pytest.mark.parametrize("wl", ["400:700:1e-320", "400:700:1e-300", "0:1e6:1e-3"])
def test_a_grid_step_so_small_the_grid_is_endless(run_cli, wl):
    assert_user_error(run_cli(["spectrum", STACK, "--wl", wl]), "grid points", "FILMOPTIC_MAX_POINTS")


def test_the_variable_sets_the_grid_limit(run_cli, monkeypatch):
    args = ["spectrum", "n=1.5", "--ambient", "n=1", "--wl", "400:700:1"]
    monkeypatch.setenv("FILMOPTIC_MAX_POINTS", "300")
    assert_user_error(run_cli(args), "301 grid points", "limit of 300", "FILMOPTIC_MAX_POINTS")
    monkeypatch.setenv("FILMOPTIC_MAX_POINTS", "301")
    result = run_cli([*args, "--json"])
    assert result.exit_code == 0, result.stderr
    # Bare glass n = 1.5 in air, normal incidence: R = ((n − 1)/(n + 1))² = 0.04 (Fresnel; common practice).
    assert np.allclose(json.loads(result.stdout)["R"][:3], 0.04, rtol=0, atol=1e-12)


def test_a_bad_value_of_a_limit_variable_is_one_line(run_cli, monkeypatch):
    monkeypatch.setenv("FILMOPTIC_MAX_POINTS", "lots")
    assert_user_error(run_cli(["spectrum", STACK, "--wl", "400:700:1"]), "FILMOPTIC_MAX_POINTS", "lots")


def test_a_fit_whose_coefficient_range_collapses(run_cli, in_tmp):
    # A range one rounding step wide fixes the value rather than frees it.
    _measured(in_tmp / "T.csv")
    result = run_cli(["fit", "n=1.5..1.5000000000000002 10..20nm / glass 1mm", "--measured", "T.csv"])
    assert_user_error(result, "index n (layer 1)", "part in a billion")


@pytest.mark.parametrize("model", [
    "TiO2 0..1e-300nm / glass 1mm",                     # a thickness range of nothing
    "TiO2 0..1e9nm / glass 1mm",                        # a metre of range
])
def test_a_fit_whose_range_is_tiny_or_huge(run_cli, in_tmp, model):
    _measured(in_tmp / "T.csv")
    result = run_cli(["fit", model, "--measured", "T.csv", "--max-grid", "200", "--starts", "1", "--json"])
    assert result.exit_code in (0, 2), result.stderr
    if result.exit_code == 0:
        answer = json.loads(result.stdout)
        assert all(np.isfinite(p["value"]) for p in answer["parameters"])
        assert all(0 <= v <= 1 for f in answer["fitted"] for v in f["model"])
    else:
        assert_user_error(result)


@pytest.mark.parametrize("text, fragment", [
    ("mix(" * 100 + "Ti" + ",Ti,0.1)" * 100 + " 10nm / glass", "nested more than"),
    ("[" * 100 + "Ti 1nm" + "]x2" * 100 + " / glass", "nested more than"),
    ("n=" + "1" * 400 + " 10nm / glass", "400 digits"),
])
def test_deeply_nested_or_long_stacks(run_cli, text, fragment):
    assert_user_error(run_cli(["spectrum", text, "--wl", "550"]), fragment)


# ---------------------------------------------------------------------------------------------
# No hang: refused at once, or answered within the documented limits
# ---------------------------------------------------------------------------------------------
def test_a_thickness_written_with_100000_digits_is_refused_at_once(run_cli):
    assert_user_error(run_cli(["spectrum", "TiO2 " + "1" * 100_000 + "nm / glass"]), "100000 digits")


def test_a_fit_to_a_million_rows_is_refused_before_it_starts(run_cli, in_tmp):
    _measured(in_tmp / "T.csv", rows=1_000_000)
    assert_user_error(run_cli(["fit", "TiO2 10..300nm / glass 1mm", "--measured", "T.csv"]),
                      "--range", "FILMOPTIC_MAX_WORK")


def test_a_thousand_layer_repeat_with_an_unknown(run_cli, monkeypatch):
    # A needlessly fine step is refused at once, by the grid or the work limit; a job of many
    # small calculations stops once the command has done the limit's worth of work (here made
    # small so that the test is quick; by default about ten seconds' worth).
    stack = "[TiO2 ? / SiO2 92nm]x1000 / glass 1mm"
    assert_user_error(run_cli(["solve", stack, "--luminous-T", "30%", "--step", "0.01"]),
                      "FILMOPTIC_MAX_WORK")
    assert_user_error(run_cli(["solve", stack, "--T-at", "550=50%", "--step", "0.0001"]),
                      "5 000 001 grid points", "FILMOPTIC_MAX_POINTS")
    monkeypatch.setenv("FILMOPTIC_MAX_WORK", "2e7")
    assert_user_error(run_cli(["solve", stack, "--T-at", "550=40%"]), "stopped after", "FILMOPTIC_MAX_WORK")


def test_work_limit_names_the_job_and_its_variable(run_cli, monkeypatch):
    monkeypatch.setenv("FILMOPTIC_MAX_WORK", "500")
    result = run_cli(["spectrum", "[TiO2 55nm / SiO2 92nm]x4 / glass 1mm", "--wl", "380:780:5"])
    assert_user_error(result, "81 grid points", "10 interfaces", "FILMOPTIC_MAX_WORK")


def test_a_sweep_past_the_work_limit_is_refused_before_the_first_block(run_cli, monkeypatch):
    monkeypatch.setenv("FILMOPTIC_MAX_WORK", "1e6")
    assert_user_error(run_cli(["sweep", "TiO2 ? / glass", "--range", "0:500:0.01"]),
                      "sweeping 50001 thicknesses", "FILMOPTIC_MAX_WORK")


def test_an_input_file_past_the_size_limit_is_refused_unread(run_cli, in_tmp, monkeypatch):
    _measured(in_tmp / "T.csv", rows=100_000)
    monkeypatch.setenv("FILMOPTIC_MAX_FILE_MB", "1")
    assert_user_error(run_cli(["fit", "TiO2 10..300nm / glass 1mm", "--measured", "T.csv"]),
                      "T.csv", "FILMOPTIC_MAX_FILE_MB")


def test_an_input_table_past_the_row_limit_is_refused(in_tmp, monkeypatch):
    from filmoptic.inverse.measured import read_spectrum

    _measured(in_tmp / "T.csv", rows=2000)
    monkeypatch.setenv("FILMOPTIC_MAX_ROWS", "1000")
    with pytest.raises(DataFileError, match="2 000 rows.*FILMOPTIC_MAX_ROWS"):
        read_spectrum(in_tmp / "T.csv")


# ---------------------------------------------------------------------------------------------
# Large files: the vectorised reading gives what the careful one gives
# ---------------------------------------------------------------------------------------------
def test_a_large_export_reads_the_same_by_either_path(in_tmp):
    from filmoptic.inverse.measured import read_spectrum

    rows = 100_000
    wl = 300.0 + 0.007 * np.arange(rows)
    values = 90.0 + 5.0 * np.sin(wl / 7.0)
    body = "".join(f"{w:.4f},{v:.4f}\n" for w, v in zip(wl, values))
    (in_tmp / "plain.csv").write_text("wavelength (nm),T (%)\n" + body, encoding="utf-8")
    # One NaN row sends the reader down its line-by-line path, which skips and reports it.
    (in_tmp / "odd.csv").write_text("wavelength (nm),T (%)\n" + body + "1000.5,nan\n", encoding="utf-8")
    plain, odd = read_spectrum(in_tmp / "plain.csv"), read_spectrum(in_tmp / "odd.csv")
    assert np.array_equal(plain.wavelength_nm, odd.wavelength_nm)
    assert np.array_equal(plain.values, odd.values)
    assert np.allclose(plain.values, np.round(values, 4) / 100, rtol=0, atol=1e-12)
    assert any("skipped line(s) 100002" in note for note in odd.notes)


def test_a_large_nk_table_reads_the_same_by_either_path(in_tmp):
    from filmoptic.materials.tables import _careful_table, read_nk_file

    wl = 300.0 + 0.007 * np.arange(20_000)
    lines = ["wavelength n k"] + [f"{w:.4f}, {1.5 + w / 1e4:.6f}; 0.01" for w in wl]
    (in_tmp / "t.txt").write_text("\n".join(lines) + "\n", encoding="utf-8")
    table = read_nk_file(in_tmp / "t.txt")
    careful = _careful_table(lines, in_tmp / "t.txt")
    assert np.array_equal(np.column_stack([table.wavelength, table.n, table.k]), careful)


# ---------------------------------------------------------------------------------------------
# No NaN and nothing outside [0, 1]
# ---------------------------------------------------------------------------------------------
@pytest.mark.parametrize("ambient", ["Ti", "n=1.33+0.1j", "Si"])
def test_an_absorbing_ambient_is_refused(run_cli, ambient):
    # Light arriving through an absorbing medium has no reflectance in the usual sense: the
    # incident and reflected waves exchange energy in the flow, and the ratio can exceed 1
    # (titanium and silicon absorb across the visible: Johnson & Christy, Phys. Rev. B 9, 5056
    # (1974); Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008); common practice).
    for command in (["spectrum", "n=1.46", "--wl", "550"], ["color", "glass"]):
        assert_user_error(run_cli([*command, "--ambient", ambient]), "practically transparent")


def test_water_is_a_practically_transparent_ambient(run_cli):
    result = run_cli(["spectrum", STACK, "--ambient", "water", "--wl", "550", "--json"])
    assert result.exit_code == 0, result.stderr


@pytest.mark.parametrize("text", ["n=1e-300", "n=0.001", "n=1e-5+1e-5j"])
def test_an_index_near_zero_is_refused(run_cli, text):
    assert_user_error(run_cli(["spectrum", STACK, "--ambient", text, "--wl", "550"]), "at least 0.01")
    assert_user_error(run_cli(["spectrum", f"{text} 10nm / glass", "--wl", "550"]), "at least 0.01")


def test_a_user_table_with_a_near_zero_index_is_refused(run_cli, in_tmp):
    _nk(in_tmp / "zero.txt", n="1e-300")
    assert_user_error(run_cli(["spectrum", "file:zero.txt 10nm / glass", "--wl", "550"]), "row 1", "0.01")


def test_metals_with_a_small_n_are_kept(run_cli):
    # Silver's n falls to about 0.05 in the visible while k is about 3-4 (Johnson & Christy,
    # Phys. Rev. B 6, 4370 (1972)): |N| is far above the floor, and the answer is a proper mirror.
    result = run_cli(["spectrum", "Ag 100nm / glass", "--wl", "550", "--json"])
    assert result.exit_code == 0, result.stderr
    R = json.loads(result.stdout)["R"][0]
    assert 0.9 < R <= 1.0


def test_grazing_incidence_is_bounded(run_cli):
    # At 0.001° from grazing a thick slab still gives proper fractions, R close to 1 (Fresnel's
    # reflectance tends to 1 at grazing incidence: Born & Wolf, Principles of Optics, §1.5.3;
    # common practice); closer than that is refused rather than computed as 1 − R·R' = 0.
    result = run_cli(["spectrum", "TiO2 92nm / glass 3mm", "--angle", "89.999", "--wl", "400:900:10", "--json"])
    assert result.exit_code == 0, result.stderr
    answer = json.loads(result.stdout)
    assert all(0.999 < r <= 1.0 for r in answer["R"])
    assert all(0.0 <= t < 1e-3 for t in answer["T"])
    assert_user_error(run_cli(["spectrum", "TiO2 92nm / glass 3mm", "--angle", "89.9999999"]), "89.999")
    assert_user_error(run_cli(["color", "TiO2 92nm / glass 3mm", "--angles", "0,89.9999999"]), "89.999")


def test_the_engine_checks_its_result_as_a_last_guard():
    from filmoptic.engine import _check_result

    wl = np.array([500.0, 600.0])
    _check_result(np.array([0.2, 0.3]), np.array([0.8, 0.7]), wl)
    for R in (np.array([np.nan, 0.3]), np.array([1.38, 0.3]), np.array([-0.1, 0.3])):
        with pytest.raises(FilmopticError, match="lost precision at"):
            _check_result(R, np.array([0.0, 0.7]), wl)


# ---------------------------------------------------------------------------------------------
# numpy's warnings never reach the user; a degenerate fit says what is degenerate
# ---------------------------------------------------------------------------------------------
@pytest.mark.parametrize("runs, fragment", [
    (["1s:10nm+-1e-5nm", "2s:20nm+-1000nm"], "uncertainties differ too much"),
    (["1s:10nm", "1s:20nm"], "every run lasted 1 s"),
    (["300s:10nm", "300.000001s:20nm"], "too close together"),
    (["1s:10nm+-1e-300nm", "2s:20nm+-1nm"], "below 1e-06 nm"),
    (["1s:1e-300nm+-1e-6nm", "2s:2e-300nm+-1e-6nm"], "rate of 1e-300 nm/s"),
])
def test_a_degenerate_rate_fit_says_what_is_degenerate(run_cli, runs, fragment):
    args = ["rate", "--with-offset"]
    for run in runs:
        args += ["--run", run]
    result = run_cli(args)
    assert_user_error(result, fragment)
    assert "encountered" not in result.stderr


def test_numpy_warnings_are_kept_from_the_user_but_not_from_developers(monkeypatch):
    import warnings

    from filmoptic.cli import _show_warning

    def noisy():
        with warnings.catch_warnings():
            warnings.showwarning = _show_warning
            warnings.warn("overflow encountered in multiply", RuntimeWarning)
            warnings.warn("data cover 400–800 nm; holding the end values", UserWarning)

    from filmoptic.notes import collecting

    # Warnings are kept as notes, printed after the output of a command that succeeds.
    for debug, expected in (("", 1), ("1", 2)):
        monkeypatch.setenv("FILMOPTIC_DEBUG", debug)
        with collecting() as notes:
            noisy()
        assert len(notes) == expected, notes
        assert notes[-1] == ("warning", "data cover 400–800 nm; holding the end values")
