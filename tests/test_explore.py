"""``filmoptic explore``: the grids behind the page, the page itself, and the command.

Outside checks: the page's spectra against the independent ``tmm`` package (S. J. Byrnes,
"Multilayer optical calculations", arXiv:1603.02720, 2016) and its colours and luminous values
against colour-science's own integration (CIE 15:2018; ISO 9050:2003 weights S(λ)·V(λ), V being
ȳ of the CIE 1931 observer). The browser is exercised in ``test_explore_browser.py``.
"""

from __future__ import annotations

import base64
import json
import re

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic.colorimetry import appearance
from filmoptic.errors import FilmopticError
from filmoptic.explore import explore_grids, explore_page
from filmoptic.explore.page import FRACTION_SCALE, LAB_SCALE
from filmoptic.stack import parse_stack
from reference_calculations import colour_science_XYZ_Lab, tmm_unpolarized

WL = np.arange(380.0, 781.0, 5.0)


@pytest.fixture(scope="module")
def mirror():
    """A semi-mirror on float glass: all three views, two sides, light through."""
    return explore_grids("Ti 0..20nm / glass 4mm", angles_deg=[0, 30, 60])


def test_grid_spectra_agree_with_tmm(mirror):
    a, i, j = mirror.index([8.5], 30.0)
    R, T = tmm_unpolarized(parse_stack("Ti 8.5nm / glass 4mm"), WL, 30.0)
    np.testing.assert_allclose(mirror.R[a, i, j], R[::2], atol=1e-9)
    np.testing.assert_allclose(mirror.T[a, i, j], T[::2], atol=1e-9)
    np.testing.assert_array_equal(mirror.curve_wavelength_nm, WL[::2])


def test_grid_colours_agree_with_colour_science(mirror):
    a, i, j = mirror.index([12.0], 0.0)
    R, T = tmm_unpolarized(parse_stack("Ti 12nm / glass 4mm"), WL, 0.0)
    for values, key in ((R, "reflected"), (T, "transmitted")):
        _, lab = colour_science_XYZ_Lab(values, WL)
        np.testing.assert_allclose(mirror.views[key]["Lab"][a, i, j], lab, atol=1e-6)
    assert mirror.luminous["T"][a, i, j] == pytest.approx(colour_science_XYZ_Lab(T, WL)[0][1] / 100, abs=1e-9)


def test_grid_matches_the_color_command_everywhere_it_is_sampled(mirror):
    # The page's numbers are the colour command's numbers (the same functions, batched).
    for d, angle in [(0.0, 0.0), (3.5, 60.0), (20.0, 30.0)]:
        a, i, j = mirror.index([d], angle)
        one = appearance(f"Ti {d}nm / glass 4mm", angle_deg=angle)
        for key in ("reflected", "reflected_reverse", "transmitted"):
            np.testing.assert_allclose(mirror.views[key]["Lab"][a, i, j], getattr(one, key).Lab, atol=1e-9)
            assert mirror.views[key]["hex"][a, i, j] == getattr(one, key).hex
        for name in ("T", "R", "R_reverse", "A_layers", "A_substrate"):
            assert mirror.luminous[name][a, i, j] == pytest.approx(getattr(one.luminous, name), abs=1e-12)


def test_opaque_part_has_no_view_through():
    grids = explore_grids("TiO2 ? / Ti", ranges_nm=[(0, 50)], angles_deg=[0])
    assert set(grids.views) == {"reflected"} and grids.luminous["R_reverse"] is None
    assert np.all(grids.luminous["T"] == 0) and np.all(grids.T == 0)
    assert grids.free[0].step_nm == 0.5 and grids.free[0].values_nm.size == 101


def test_sensible_grids_within_the_page_budget():
    one = explore_grids("TiO2 0..250nm / Ti")
    assert one.free[0].step_nm == 0.5 and one.angle_deg.tolist() == list(range(0, 71, 5))
    # Two free thicknesses: angles every 10°, and the axis with more values is coarsened first.
    two = explore_grids("SiO2 20..200nm / Cr ? / glass 4mm")
    assert two.angle_deg.tolist() == list(range(0, 71, 10))
    counts = [f.values_nm.size for f in two.free]
    assert max(counts) / min(counts) < 2 and all(f.step_nm in (0.5, 1, 2, 2.5, 5, 10) for f in two.free)
    assert len(explore_page(two).encode()) <= 4e6
    with pytest.raises(FilmopticError, match="--max-mb"):
        explore_grids("SiO2 20..200nm / Cr ? / glass 4mm", step_nm=0.5)


def _decoded(text):
    blob = json.loads(re.search(r'<script type="application/json" id="grid-data">(.*?)</script>', text, re.S)
                      .group(1).replace("<\\/", "</"))
    data = {k: base64.b64decode(v) for k, v in blob["data"].items()}
    return blob["meta"], data


def test_page_holds_the_grid_within_its_quantisation(mirror):
    text = explore_page(mirror)
    meta, data = _decoded(text)
    assert meta["shape"] == list(mirror.shape) and [v["name"] for v in meta["views"]] == [
        "film side", "glass side", "through"]
    lab = np.frombuffer(data["reflected_lab"], "<i2").reshape(*mirror.shape, 3) / LAB_SCALE
    assert np.max(np.abs(lab - mirror.views["reflected"]["Lab"])) <= 0.5 / LAB_SCALE + 1e-12
    T = np.frombuffer(data["lum_T"], "<u2").reshape(mirror.shape) / FRACTION_SCALE
    assert np.max(np.abs(T - mirror.luminous["T"])) <= 0.5 / FRACTION_SCALE + 1e-12
    R = np.frombuffer(data["curve_R"], "<u2").reshape(mirror.R.shape) / FRACTION_SCALE
    assert np.max(np.abs(R - mirror.R)) <= 0.5 / FRACTION_SCALE + 1e-12
    rgb = np.frombuffer(data["transmitted_rgb"], "u1").reshape(*mirror.shape, 3)
    np.testing.assert_array_equal(rgb, mirror.views["transmitted"]["rgb8"])
    words = np.array(meta["words"])[np.frombuffer(data["reflected_word"], "u1")].reshape(mirror.shape)
    np.testing.assert_array_equal(words, mirror.views["reflected"]["word"])


def test_page_is_self_contained(mirror):
    text = explore_page(mirror, title="A <b>bold</b> & odd title")
    # No address of anything outside the file: no links, sources, imports or fetches (the data
    # block is base64 and JSON, read with JSON.parse, and left out of the search).
    code = re.sub(r'<script type="application/json" id="grid-data">.*?</script>', "", text, flags=re.S)
    assert not re.search(r"(src|href)\s*=|https?:|[a-z]+://|fetch\(|import\s|XMLHttpRequest|<link", code, re.I)
    assert "A &lt;b&gt;bold&lt;/b&gt; &amp; odd title" in text and "<b>bold</b>" not in text


def test_command_table_json_and_file(run_cli, tmp_path):
    out = tmp_path / "page.html"
    result = run_cli(["explore", "TiO2 0..100nm / Ti", "--out", out, "--angles", "0:60:30"])
    assert result.exit_code == 0, result.stderr
    assert "TiO2 thickness" in result.stdout and "nothing comes through" in result.stdout
    assert out.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert "Caution:" not in out.read_text(encoding="utf-8")       # nothing comes through: no filter to misuse
    result = run_cli(["explore", "Ti ? / glass 4mm", "--out", out, "--step", "1nm", "--json"])
    # 100 nm of titanium passes almost nothing: the eye caution, once on stderr and once on the page.
    assert result.stderr.count("CAUTION") == 1 and out.read_text(encoding="utf-8").count("Caution:") == 1
    data = json.loads(result.stdout)
    assert set(data) == {"out", "bytes", "stack", "sliders", "angles_deg", "points", "views", "curve_wavelength_nm",
                         "illuminant", "observer", "ambient", "transmission"}
    assert data["sliders"] == [{"name": "Ti thickness (layer 1)", "label": "Ti", "low_nm": 0.0, "high_nm": 100.0,
                                "step_nm": 1.0, "count": 101}]
    assert data["views"] == ["film side", "glass side", "through"] and data["bytes"] == out.stat().st_size
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]     # no temporary left over


@pytest.mark.parametrize("args, fragment", [
    (["explore", "Ti 5nm / glass", "--out", "p.html"], "one or two free thicknesses"),
    (["explore", "Ti ? / Cr ? / TiO2 ? / glass", "--out", "p.html"], "one or two"),
    (["explore", "cauchy(?,0,0) 10nm / glass", "--out", "p.html"], "thicknesses only"),
    (["explore", "Ti ? / glass", "--out", "p.png"], ".html"),
    (["explore", "Ti ? / glass"], "--out"),
    (["explore", "Ti ? / glass", "--out", "p.html", "--step", "0.01nm"], "--max-mb"),
    (["explore", "Ti ? / glass", "--out", "p.html", "--range", "0:10", "--range", "0:5"], "once per free"),
    (["explore", "Ti 0..10nm / glass", "--out", "p.html", "--range", "0:50"], "outside"),
    (["explore", "Ti ? / glass", "--out", "p.html", "--angles", "0:95:5"], "angles"),
    (["explore", "Ti ? / glass", "--out", "no-such-folder/p.html"], "does not exist"),
])
def test_user_errors(run_cli, tmp_path, monkeypatch, args, fragment):
    monkeypatch.chdir(tmp_path)
    assert_user_error(run_cli(args), fragment)
    assert not list(tmp_path.iterdir())


def test_page_never_replaces_an_input(run_cli, tmp_path):
    table = tmp_path / "film.html"        # an n,k table that happens to end in .html
    table.write_text("wavelength_nm n k\n300 2.0 0\n900 2.0 0\n")
    before = table.read_bytes()
    assert_user_error(run_cli(["explore", f"file:{table} ? / glass", "--out", table]), "input")
    assert table.read_bytes() == before


def test_demo_part_writes_the_tags_page(tmp_path):
    from filmoptic.demo import explore as demo_explore
    from filmoptic.demo import scenario as sc

    said = []
    demo_explore.run(tmp_path, said.append)
    page = tmp_path / demo_explore.PAGE_FILE
    meta, data = _decoded(page.read_text(encoding="utf-8"))
    assert page.stat().st_size < 4e6 and meta["stack"] == sc.EXPLORE_STACK
    assert meta["free"][0]["step"] == 0.5 and meta["angles"][-1] == sc.EXPLORE_ANGLES_DEG[1]
    # The colour it quotes is the colour command's at that thickness.
    quoted = appearance(sc.EXPLORE_STACK.replace("10..200nm", f"{sc.EXPLORE_SHOWN_NM:g}nm"))
    assert quoted.reflected.hex in "\n".join(said)
