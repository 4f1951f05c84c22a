"""A column of readings solved in one pass (``filmoptic solve --readings``)."""

from __future__ import annotations

import csv

import numpy as np
import pytest
import tmm

from conftest import assert_user_error
from filmoptic.errors import FilmopticError
from filmoptic.inverse.solve import ROOT_TOLERANCE, Reading, Target, evaluate_condition, solve_batch, solve_thickness

MIRROR = "Ti ? / glass 4mm"


def test_batch_recovers_random_thicknesses_and_intervals():
    rng = np.random.default_rng(11)
    d = rng.uniform(0.5, 60.0, 400)
    template = Reading(0.5, "A", "photopic")
    values = evaluate_condition(MIRROR, template, d)
    result = solve_batch(MIRROR, template, values, uncertainty=0.02, relative_uncertainty=True)
    np.testing.assert_allclose(result.thickness_nm, d, atol=1e-5)
    assert np.all(np.abs(result.value - values) <= ROOT_TOLERANCE)
    assert set(result.status) == {"ok"}
    # Interval ends sit where the forward model reads value ± 2 % of it (unless clipped at 0 nm).
    for ends in (result.low_nm, result.high_nm):
        inside = (ends > 0) & (ends < 100)
        assert np.count_nonzero(inside) > 300   # most ends are unclipped, so the check has teeth
        at_ends = evaluate_condition(MIRROR, template, ends[inside])
        np.testing.assert_allclose(np.abs(at_ends - values[inside]), 0.02 * values[inside], atol=1e-6)


def test_batch_agrees_with_single_solves_on_a_dielectric():
    # tmm (Byrnes 2016) provides the readings; each row's thinnest root and count must match the
    # full single solve.
    wl, n = 600.0, 2.0
    d = np.array([20.0, 55.0, 90.0, 130.0])
    values = [tmm.coh_tmm("s", [1.0, n, 1.5], [np.inf, x, np.inf], 0.0, wl)["T"] for x in d]
    template = Target("T", 0.5, wavelength_nm=wl)
    stack = "n=2.0 ? / n=1.5"
    batch = solve_batch(stack, template, values, range_nm=(0, 300), ambient="n=1")
    for i, v in enumerate(values):
        single = solve_thickness(stack, template.with_value(v), range_nm=(0, 300), ambient="n=1", companions=False)
        assert batch.solutions[i] == len(single.solutions)
        assert batch.thickness_nm[i] == pytest.approx(single.solutions[0].thickness_nm, abs=1e-5)
        assert batch.status[i] == "several"


def test_batch_unreachable_rows_name_the_closest():
    bare = float(evaluate_condition(MIRROR, Target("luminous_T", 0.5), [0.0])[0])
    result = solve_batch(MIRROR, Reading(0.5, "D65", "photopic"), [0.3, 0.99])
    assert list(result.status) == ["ok", "unreachable"]
    assert np.isnan(result.thickness_nm[1])
    assert result.closest_nm[1] == 0.0
    assert result.closest_value[1] == pytest.approx(bare, abs=2e-4)  # band vs ISO 9050 grid


def test_batch_rejects_values_outside_0_1():
    with pytest.raises(FilmopticError, match="row 2"):
        solve_batch(MIRROR, Reading(0.5), [0.3, 1.5])


def _write(path, rows):
    with open(path, "w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows(rows)


def test_cli_batch_keeps_columns_and_never_writes_the_input(tmp_path, run_cli):
    src = tmp_path / "parts.csv"
    d = [5.0, 9.0, 14.0]
    values = evaluate_condition(MIRROR, Reading(0.5, "A", "photopic"), d)
    _write(src, [["part", "lux", "note"]] + [[f"P{i}", f"{v:.6f}", "x"] for i, v in enumerate(values)]
           + [["Q", "318/1045", "raw"]])
    before = src.read_bytes()
    out = tmp_path / "out.csv"
    result = run_cli(["solve", MIRROR, "--readings", src, "--column", "lux", "--source", "A", "--out", out])
    assert result.exit_code == 0, result.stderr
    assert src.read_bytes() == before
    with open(out, newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert [r["part"] for r in rows] == ["P0", "P1", "P2", "Q"]
    assert [r["note"] for r in rows] == ["x", "x", "x", "raw"]
    np.testing.assert_allclose([float(r["thickness_nm"]) for r in rows[:3]], d, atol=1e-3)
    assert all(r["status"] == "ok" for r in rows)
    assert not list(tmp_path.glob(".out.csv.*"))  # no temporary file left behind


@pytest.mark.parametrize(
    "content, fragment",
    [
        ("reading\n1.3\n", "line 2"),            # no usable row at all
        ("reading\nabc\n\n-0.2\n", "2 rows"),
        ("reading\n", "at least one row"),
        ("part,value\nA,0.3\n", "--column"),
        ("reading,b\n0.3\n", "the header has 2"),
    ],
)
def test_cli_batch_bad_files(tmp_path, run_cli, content, fragment):
    src = tmp_path / "r.csv"
    src.write_text(content, encoding="utf-8")
    assert_user_error(run_cli(["solve", MIRROR, "--readings", src, "--out", tmp_path / "o.csv"]), fragment)
    assert not (tmp_path / "o.csv").exists()


def test_cli_batch_refuses_to_overwrite_its_input(tmp_path, run_cli):
    src = tmp_path / "r.csv"
    src.write_text("reading\n0.3\n", encoding="utf-8")
    assert_user_error(run_cli(["solve", MIRROR, "--readings", src, "--out", src]), "never written")
    assert src.read_text(encoding="utf-8") == "reading\n0.3\n"


def test_cli_batch_missing_file(tmp_path, run_cli):
    assert_user_error(run_cli(["solve", MIRROR, "--readings", tmp_path / "nope.csv"]), "nope.csv")


def test_cli_batch_marks_bad_rows_and_solves_the_rest(tmp_path, run_cli):
    # A practitioner's file with a few unreadable cells: the good rows are solved exactly as on
    # their own, each bad row is marked with its line, and one warning line counts them.
    template = Reading(0.5, "A", "photopic")
    d = [6.0, 11.0, 17.0]
    good = [f"{v:.9f}" for v in evaluate_condition(MIRROR, template, d)]
    src = tmp_path / "parts.csv"
    _write(src, [["part", "lux"], ["P0", good[0]], ["P1", "n/a"], ["P2", good[1]], ["P3", "1.3"],
                 ["P4", ""], ["P5", good[2]], ["P6"]])
    before = src.read_bytes()
    out = tmp_path / "out.csv"
    result = run_cli(["solve", MIRROR, "--readings", src, "--column", "lux", "--source", "A", "--out", out])
    assert result.exit_code == 0, result.stderr
    assert src.read_bytes() == before
    # Besides the note on how the file was read, one warning line.
    warning = [line for line in result.stderr.splitlines() if line.strip() and "note: read" not in line]
    assert len(warning) == 1 and "4 of 7 rows" in warning[0] and "line 3" in warning[0]
    with open(out, newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert [r["part"] for r in rows] == [f"P{i}" for i in range(7)]
    status = [r["status"] for r in rows]
    assert status[0] == status[2] == status[5] == "ok"
    assert status[1] == "bad reading (line 3: 'n/a')"
    assert status[3] == "bad reading (line 5: '1.3')"
    assert status[4] == "bad reading (line 6: '')"
    assert status[6].startswith("bad reading (line 8: 1 field")
    np.testing.assert_allclose([float(rows[i]["thickness_nm"]) for i in (0, 2, 5)], d, atol=1e-3)
    assert all(rows[i]["thickness_nm"] == "" for i in (1, 3, 4, 6))


def test_cli_batch_json_stays_clean_with_bad_rows(tmp_path, run_cli):
    import json

    src = tmp_path / "r.csv"
    value = float(evaluate_condition(MIRROR, Reading(0.5), [9.0])[0])
    src.write_text(f"reading\n{value:.9f}\nabc\n", encoding="utf-8")
    result = run_cli(["solve", MIRROR, "--readings", src, "--json"])
    assert result.exit_code == 0, result.stderr
    rows = json.loads(result.stdout)["rows"]
    assert rows[0]["status"] == "ok" and rows[0]["thickness_nm"] == pytest.approx(9.0, abs=1e-3)
    assert rows[1]["status"] == "bad reading" and rows[1]["thickness_nm"] is None
    assert "line 3" in rows[1]["problem"]
    warning = [line for line in result.stderr.splitlines() if "note: read" not in line]
    assert len(warning) == 1 and "1 of 2 rows has a bad reading" in result.stderr
