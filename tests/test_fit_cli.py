"""The ``filmoptic fit`` command: output forms, plot, and one-line user errors.

The measured files are computed with the `tmm` package (S. J. Byrnes, arXiv:1603.02720, 2016)
from the library's TiO2 (Franta et al. 2015) and glass (Rubin 1985) constants, with seeded noise.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import tmm

from conftest import assert_user_error
from filmoptic.materials import get_material

# A half-wave TiO2 film at 550 nm (n ≈ 2.4) — common practice as a process test piece.
THICKNESS_NM = 550.0 / (2 * 2.4)
NOISE = 0.002   # spectrophotometer-like, 0.2 % absolute (common practice; from memory)


def _tmm_T_R(wl):
    nf, ns = get_material("TiO2").nk(wl), get_material("glass").nk(wl)
    out = [tmm.inc_tmm("s", [1.0, a, b, 1.0], [np.inf, THICKNESS_NM, 1e6, np.inf],
                       ["i", "c", "i", "i"], 0.0, w) for a, b, w in zip(nf, ns, wl)]
    return np.array([o["T"] for o in out]), np.array([o["R"] for o in out])


@pytest.fixture
def measured_files(tmp_path):
    wl = np.arange(400.0, 1000.0 + 1, 4.0)
    T, R = _tmm_T_R(wl)
    rng = np.random.default_rng(11)
    t_path, r_path = tmp_path / "piece_T.csv", tmp_path / "piece_R.txt"
    with open(t_path, "w") as fh:
        fh.write("# test piece\nwavelength (nm),T (%)\n")
        for w, v in zip(wl[::-1], T[::-1] + rng.normal(0, NOISE, wl.size)):   # unsorted on purpose
            fh.write(f"{w:g},{100 * v:.4f}\n")
    with open(r_path, "w") as fh:
        fh.write("lambda_um R sigma\n")
        for w, v in zip(wl, R + rng.normal(0, NOISE, wl.size)):
            fh.write(f"{w / 1000:g} {v:.5f} {NOISE}\n")
    return t_path, r_path


def test_table_report(run_cli, measured_files):
    t_path, _ = measured_files
    result = run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", t_path])
    assert result.exit_code == 0, result.stderr
    assert "TiO2 thickness (layer 1)" in result.stdout
    lines = result.stdout.splitlines()
    # A verdict first, then sections named by the question they answer.
    assert lines[0].startswith("Verdict: the model explains the data (RMS residual")
    assert lines[0].endswith("nothing flagged to distrust.")
    for question in ("What came out?", "How closely does the model follow the data?", "How did the search go?"):
        assert any(l.startswith(question) for l in lines), question
    assert "reduced χ²" in result.stdout and "rows sorted" in result.stdout
    line = next(l for l in lines if l.strip().startswith("TiO2 thickness"))
    value, err = float(line.split()[-4]), float(line.split()[-2])
    assert abs(value - THICKNESS_NM) < 3 * err


def test_json_with_T_and_R(run_cli, measured_files):
    t_path, r_path = measured_files
    result = run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", t_path, "--measured", r_path,
                      "--sigma", "0.2%", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)             # stdout holds JSON only
    # No progress bar off a terminal: stderr holds only the notes on how each file was read.
    assert all(line.startswith("filmoptic: note: read ") for line in result.stderr.splitlines())
    for key in ("parameters", "chi2_reduced", "rms", "correlation", "warnings", "n_points", "model",
                "converged", "stopped_because", "residual_autocorrelation"):
        assert key in data
    # Our own keys: the optimiser's result-object names are gone.
    assert "success" not in data and "message" not in data
    assert data["verdict"]["explained"] == "yes" and data["verdict"]["distrust"] == []
    assert data["verdict"]["text"].startswith("Verdict: the model explains the data")
    (p,) = data["parameters"]
    assert set(p) == {"name", "value", "stderr", "unit"} and p["unit"] == "nm"
    assert abs(p["value"] - THICKNESS_NM) < 3 * p["stderr"]
    assert data["n_points"] == 2 * 151
    assert [m["quantity"] for m in data["measured"]] == ["T", "R"]
    assert 0.7 < data["chi2_reduced"] < 1.3       # σ known: χ²_red ≈ 1 (Numerical Recipes ch. 15)
    assert 0 <= min(data["fitted"][0]["model"]) and max(data["fitted"][0]["model"]) <= 1


@pytest.mark.parametrize("suffix, magic", [(".png", b"\x89PNG"), (".svg", b"<?xml"), (".pdf", b"%PDF")])
def test_plot_written(run_cli, measured_files, tmp_path, suffix, magic):
    t_path, _ = measured_files
    plot = tmp_path / f"fit{suffix}"
    result = run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", t_path, "--plot", plot])
    assert result.exit_code == 0, result.stderr
    assert plot.read_bytes().startswith(magic)


def test_range_and_quantity_options(run_cli, tmp_path):
    wl = np.arange(400.0, 1000.0 + 1, 4.0)
    T, _ = _tmm_T_R(wl)
    path = tmp_path / "bare.txt"
    path.write_text("".join(f"{w:g} {v:.5f}\n" for w, v in zip(wl, T)))
    result = run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", path, "--quantity", "T",
                      "--range", "450:900", "--json"])
    assert result.exit_code == 0, result.stderr
    assert json.loads(result.stdout)["n_points"] == np.count_nonzero((wl >= 450) & (wl <= 900))


def test_input_files_untouched(run_cli, measured_files):
    t_path, r_path = measured_files
    before = t_path.read_bytes(), r_path.read_bytes()
    run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", t_path, "--measured", r_path])
    assert (t_path.read_bytes(), r_path.read_bytes()) == before


def test_user_errors(run_cli, measured_files, tmp_path):
    t_path, r_path = measured_files
    empty = tmp_path / "empty.csv"
    empty.write_text("")
    assert_user_error(run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", tmp_path / "nope.csv"]), "no such file")
    assert_user_error(run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", empty]), "empty")
    assert_user_error(run_cli(["fit", "TiO2 60nm / glass 1mm", "--measured", t_path]), "nothing to fit")
    assert_user_error(run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", t_path, "--plot", tmp_path / "x.jpg"]), ".png")
    assert_user_error(run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", t_path, "--measured", r_path,
                               "--quantity", "T", "--quantity", "R", "--quantity", "T"]), "--quantity")
    assert_user_error(run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", t_path, "--quantity", "R"]), "header says T")
    assert_user_error(run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", t_path, "--range", "5:1"]), "--range")
    assert_user_error(run_cli(["fit", "Unobtainium ? / glass 1mm", "--measured", t_path]), "unknown material",
                      "Unobtainium")
    assert_user_error(run_cli(["fit", "TiO2 ? / glass 1mm"]), "--measured")
    outside = tmp_path / "outside.csv"    # the library's glass table starts at 310 nm (Rubin 1985)
    outside.write_text("wavelength (nm),T\n250,0.5\n400,0.8\n500,0.8\n")
    assert_user_error(run_cli(["fit", "TiO2 ? / glass 1mm", "--measured", outside]), "outside", "--range")


def test_no_traceback_in_a_subprocess(run_cli_subprocess, tmp_path):
    junk = tmp_path / "junk.csv"
    junk.write_text("wavelength,T\nabc,def\n")
    result = run_cli_subprocess(["fit", "TiO2 ? / glass 1mm", "--measured", junk])
    assert_user_error(result, "no numeric rows")


def test_demo_part_writes_data_report_and_plot(tmp_path):
    from filmoptic.demo import fit as demo_fit
    from filmoptic.inverse.measured import read_spectrum

    said = []
    demo_fit.run(tmp_path, said.append)
    text = "\n".join(said)
    assert "SYNTHETIC" in text
    for name in (demo_fit.DATA_FILE, demo_fit.REPORT_FILE, demo_fit.PLOT_FILE):
        assert (tmp_path / name).stat().st_size > 0
    assert read_spectrum(tmp_path / demo_fit.DATA_FILE).quantity == "T"
    assert "reduced χ²" in (tmp_path / demo_fit.REPORT_FILE).read_text()
