"""The ``filmoptic sweep`` command and its chart."""

from __future__ import annotations

import json

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic import colorimetry as cm

SWEEP_KEYS = {
    "thickness_nm", "luminous_T", "luminous_R", "luminous_A_layers", "luminous_A_substrate",
    "reflected_Lab", "reflected_hex", "reflected_in_gamut",
    "transmitted_Lab", "transmitted_hex", "transmitted_in_gamut",
}


def test_json_lists(run_cli):
    result = run_cli(["sweep", "TiO2 ? / glass 2mm", "--range", "0:200:5", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert set(data) == SWEEP_KEYS | {"transmission"}
    assert data["transmission"] == "exits"
    assert data["thickness_nm"] == [float(d) for d in range(0, 201, 5)]
    assert all(len(data[k]) == 41 for k in SWEEP_KEYS)
    assert all(len(lab) == 3 for lab in data["reflected_Lab"])
    api = cm.colour_sweep("TiO2 ? / glass 2mm", np.arange(0.0, 201.0, 5.0))
    # JSON carries floats exactly (shortest round-trip repr): the command equals the API.
    assert data["reflected_Lab"] == api.reflected.Lab.tolist()
    assert data["transmitted_hex"] == api.transmitted.hex.tolist()
    assert data["luminous_T"] == api.luminous_T.tolist()
    assert data["luminous_A_substrate"] == api.luminous_A_substrate.tolist()
    # R + T + A_layers + A_substrate = 1 survives the (linear) luminous weighting.
    total = np.sum([data[k] for k in ("luminous_T", "luminous_R", "luminous_A_layers",
                                      "luminous_A_substrate")], axis=0)
    np.testing.assert_allclose(total, 1.0, atol=1e-12)


def test_first_entry_is_the_bare_substrate(run_cli):
    data = json.loads(run_cli(["sweep", "SiO2 ? / Si", "--range", "0:50:10", "--json"]).stdout)
    bare = cm.appearance("Si")
    assert data["reflected_hex"][0] == bare.reflected.hex
    assert data["luminous_R"][0] == pytest.approx(bare.luminous.R, abs=1e-12)


def test_whole_grid_in_one_engine_call(run_cli, monkeypatch):
    # The sweep is vectorised: 1001 thicknesses cost one call of the engine.
    import filmoptic.engine as engine

    calls = []

    def counting(original):
        def count(*args, **kwargs):
            calls.append(np.shape(kwargs.get("thickness_nm")))
            return original(*args, **kwargs)
        return count

    # Either entry point of the engine (whole spectra, or reduced inside it) counts as a call.
    monkeypatch.setattr(engine, "compute", counting(engine.compute))
    monkeypatch.setattr(engine, "compute_weighted", counting(engine.compute_weighted))
    result = run_cli(["sweep", "[TiO2 20nm / SiO2 ?]x2 / glass 1mm", "--range", "0:1000:1", "--json"])
    assert result.exit_code == 0, result.stderr
    assert calls == [(1001, 1)]


def test_table_in_percent(run_cli):
    result = run_cli(["sweep", "Ti ? / glass 4mm", "--range", "0:20:10"])
    assert result.exit_code == 0, result.stderr
    api = cm.colour_sweep("Ti ? / glass 4mm", [0.0, 10.0, 20.0])
    for t in api.luminous_T:
        assert f"{100 * t:.2f}" in result.stdout
    assert "T lum %" in result.stdout


def test_opaque_substrate_has_no_transmitted_colour(run_cli):
    out = run_cli(["sweep", "TiO2 ? / Ti", "--range", "0:20:10"]).stdout
    assert out.count("no light comes through") == 1 and "T L*" not in out
    data = json.loads(run_cli(["sweep", "TiO2 ? / Ti", "--range", "0:20:10", "--json"]).stdout)
    assert data["transmitted_hex"] is None and data["luminous_T"] == [0.0, 0.0, 0.0]
    # R + T + A = 1 with T = 0: all unreflected light is absorbed, nearly all in the titanium.
    total = np.sum([data["luminous_R"], data["luminous_A_layers"], data["luminous_A_substrate"]], axis=0)
    np.testing.assert_allclose(total, 1.0, atol=1e-12)
    assert max(data["luminous_A_layers"]) < 1e-5 < min(data["luminous_A_substrate"])


@pytest.mark.parametrize("suffix, magic", [(".png", b"\x89PNG"), (".pdf", b"%PDF"), (".svg", b"<?xml")])
def test_chart_files(run_cli, tmp_path, suffix, magic):
    path = tmp_path / f"chart{suffix}"
    result = run_cli(["sweep", "TiO2 ? / Ti", "--range", "0:250:2", "--chart", path, "--json"])
    assert result.exit_code == 0, result.stderr
    json.loads(result.stdout)  # --json keeps stdout pure even with a chart
    assert path.read_bytes().startswith(magic)


@pytest.mark.parametrize("args, fragments", [
    (["sweep", "TiO2 60nm / Ti", "--range", "0:100:1"], ["?"]),
    (["sweep", "TiO2 ? / SiO2 ? / Si", "--range", "0:100:1"], ["exactly one"]),
    (["sweep", "cauchy(?,0.01,0) ? / glass", "--range", "0:100:1"], ["exactly one"]),
    (["sweep", "TiO2 ? / Ti", "--range", "0:100"], ["--range"]),
    (["sweep", "TiO2 ? / Ti", "--range", "100:0:1"], ["--range"]),
    (["sweep", "TiO2 ? / Ti", "--range", "0:100:0"], ["step"]),
    (["sweep", "TiO2 ? / Ti"], ["--range"]),
    (["sweep", "TiO2 ? / Ti", "--range", "0:100:1", "--chart", "chart.bmp"], [".png"]),
    (["sweep", "TiO2 ? / Ti", "--range", "0:100:1", "--illuminant", "F13"], ["illuminant"]),
    # A range written in the stack and a --range that leaves it: neither silently wins.
    (["sweep", "TiO2 10..50nm / Ti", "--range", "0:250:1"],
     ["--range 0:250:1", "10..50 nm", "TiO2 thickness (layer 1)", "leave out --range"]),
    (["sweep", "TiO2 10..50nm / Ti", "--range", "20:60:1"], ["outside 10..50 nm"]),
])
def test_user_errors(run_cli, args, fragments):
    assert_user_error(run_cli(args), *fragments)


def test_a_bounded_layer_sweeps_its_own_range(run_cli):
    # What a coater who wrote 'TiO2 10..50nm' expects: exactly that range, both ends, 1 nm steps.
    data = json.loads(run_cli(["sweep", "TiO2 10..50nm / Ti", "--json"]).stdout)
    assert data["thickness_nm"] == [float(d) for d in range(10, 51)]
    # The same colours as an explicit --range over a '?' layer.
    same = json.loads(run_cli(["sweep", "TiO2 ? / Ti", "--range", "10:50:1", "--json"]).stdout)
    assert data["reflected_Lab"] == same["reflected_Lab"]
    # A --range inside the written range narrows the sweep.
    inside = json.loads(run_cli(["sweep", "TiO2 10..50nm / Ti", "--range", "20:40:10", "--json"]).stdout)
    assert inside["thickness_nm"] == [20.0, 30.0, 40.0]
    # An end that is not on the 1 nm grid is still included.
    odd = json.loads(run_cli(["sweep", "TiO2 10..12.5nm / Ti", "--json"]).stdout)
    assert odd["thickness_nm"] == [10.0, 11.0, 12.0, 12.5]


def test_a_wide_bounded_range_uses_coarser_round_steps(run_cli):
    data = json.loads(run_cli(["sweep", "SiO2 0..5000nm / Si", "--json"]).stdout)
    assert data["thickness_nm"][:3] == [0.0, 5.0, 10.0] and data["thickness_nm"][-1] == 5000.0
    assert len(data["thickness_nm"]) == 1001


def test_api_refuses_thicknesses_outside_the_written_range():
    from filmoptic.errors import FilmopticError

    assert cm.sweep_bounds_nm(cm_stack("TiO2 10..50nm / Ti")) == (10.0, 50.0)
    assert cm.sweep_bounds_nm(cm_stack("TiO2 ? / Ti")) is None
    with pytest.raises(FilmopticError, match="outside 10..50 nm"):
        cm.colour_sweep("TiO2 10..50nm / Ti", np.arange(0.0, 100.0))
    assert cm.colour_sweep("TiO2 10..50nm / Ti", [10.0, 50.0]).thickness_nm.tolist() == [10.0, 50.0]


def cm_stack(text):
    from filmoptic.stack import parse_stack

    return parse_stack(text)


def test_transmission_exits_only_where_light_leaves():
    assert cm.colour_sweep("TiO2 ? / Ti", [10.0]).transmission_exits is False
    assert cm.colour_sweep("TiO2 ? / glass", [10.0]).transmission_exits is True
    assert cm.colour_sweep("TiO2 ? / Si 0.5mm", [10.0]).transmission_exits is True
