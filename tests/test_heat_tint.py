"""Heat tint: temper colours of steel, heat tint of stainless steel and copper, against oxide thickness.

Outside checks: the order of temper colours and of weld heat tint (common practice of smiths,
toolmakers and welders), the forward colour against the independent ``tmm`` package and
colour-science, and the thickness ranges of the inverse against the forward model.
"""

from __future__ import annotations

import json

import colour
import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic.colorimetry import default_wavelengths
from filmoptic.colouring import heat_tint_colours, heat_tint_model, thickness_for_colour
from filmoptic.errors import FilmopticError
from filmoptic.stack import parse_stack
from reference_calculations import colour_science_XYZ_Lab, tmm_unpolarized

# Broad CIELAB hue-angle and lightness bands for the names the trade gives temper colours.
NAMES = {
    "straw": lambda L, C, h: 70 <= h <= 105 and L > 50 and C > 12,
    "brown": lambda L, C, h: 20 <= h <= 80 and L < 60 and C > 12,
    "purple": lambda L, C, h: (280 <= h <= 360 or h <= 10) and C > 12,
    "blue": lambda L, C, h: 235 <= h < 280 and C > 12,
}


def _first(colours, thickness, name):
    for d, (L, C, h) in zip(thickness, colours.LCh):
        if NAMES[name](L, C, h):
            return d
    raise AssertionError(f"no {name} in the sweep")


@pytest.mark.parametrize("model", ["steel", "stainless-steel"])
def test_temper_colours_come_in_the_order_of_the_trade(model):
    # Straw → brown → purple → blue as the oxide thickens: the temper colours of steel and the
    # heat-tint sequence of stainless steel welds (common practice of toolmakers, smiths and
    # welders).
    d = np.arange(0.0, 100.0, 0.5)
    colours = heat_tint_colours(model, d).colours
    first = [_first(colours, d, name) for name in ("straw", "brown", "purple", "blue")]
    assert first == sorted(first) and len(set(first)) == 4, first


def test_steel_colour_matches_tmm_and_colour_science():
    film = heat_tint_colours("steel", [45.0])
    R, _ = tmm_unpolarized(parse_stack("Fe3O4 45nm / Fe"), default_wavelengths())
    _, lab = colour_science_XYZ_Lab(R, default_wavelengths())
    # CIEDE2000 by colour-science (CIE 142-2001); spectra from tmm (Byrnes 2016). Agreement
    # reached is about 1e-13, so a changed table or interpolation shows.
    assert float(colour.delta_E(film.colours.Lab[0], lab, method="CIE 2000")) < 1e-9


def test_colour_gives_every_order_with_its_thickness_range():
    d = np.arange(0.0, 200.0, 0.5)
    film = heat_tint_colours("steel", d)
    seen = film.colours.Lab[int(np.searchsorted(d, 60.0))]
    found = thickness_for_colour("steel", seen, range_nm=(0, 200), tolerance=8)
    assert found.matches and found.closest is None
    assert found.matches[0].thickness_nm == pytest.approx(60.0, abs=0.05)
    for m in found.matches:
        assert m.low_nm <= m.thickness_nm <= m.high_nm
        assert m.delta_E00 <= 8
        # Inside the range the forward colour stays within the tolerance, just outside it does not
        # (CIEDE2000 by colour-science).
        inside = heat_tint_colours("steel", [m.low_nm + 1e-3, m.high_nm - 1e-3]).colours.Lab
        outside = heat_tint_colours("steel", [max(m.low_nm - 0.5, 0), m.high_nm + 0.5]).colours.Lab
        assert np.all(colour.delta_E(inside, seen, method="CIE 2000") <= 8 + 1e-6)
        edges = [m.low_nm > 0.5, True]
        assert np.all((colour.delta_E(outside, seen, method="CIE 2000") > 8)[edges])


def test_a_temper_blue_comes_back_in_the_next_order():
    # Blue follows purple at the end of the first order and returns, after the second-order
    # straw and purple, as the oxide thickens further: the colour alone cannot say which order it
    # is (common practice: smiths read the order from the sequence while heating).
    d = np.arange(0.0, 200.0, 0.5)
    film = heat_tint_colours("steel", d)
    seen = film.colours.Lab[int(np.searchsorted(d, 58.0))]
    found = thickness_for_colour("steel", seen, range_nm=(0, 200), tolerance=8)
    assert len(found.matches) >= 2
    assert [m.order for m in found.matches] == list(range(1, len(found.matches) + 1))
    assert found.matches[0].high_nm < found.matches[1].low_nm


def test_copper_says_plainly_what_is_missing_and_runs_with_your_oxide():
    with pytest.raises(FilmopticError, match="no citable visible-range optical constants of Cu2O"):
        heat_tint_model("copper")
    model = heat_tint_model("copper", oxide="n=2.7")   # a plainly illustrative constant index
    assert model.stack == "n=2.7 ? / Cu" and "your choice" in model.statement
    assert heat_tint_colours(model, [0.0, 50.0]).colours.hex.shape == (2,)


def test_unknown_model():
    with pytest.raises(FilmopticError, match="steel, stainless-steel or copper"):
        heat_tint_model("bronze")


def test_cli_forward_inverse_and_no_temperature(run_cli):
    data = json.loads(run_cli(["heat-tint", "steel", "--range", "0:60:20", "--json"]).stdout)
    assert {"model", "metal", "oxide", "statement", "rows"} <= set(data)
    assert [r["thickness_nm"] for r in data["rows"]] == [0.0, 20.0, 40.0, 60.0]
    assert not any("temperature" in key for row in data["rows"] for key in row)
    at = json.loads(run_cli(["heat-tint", "steel", "--at", "40nm", "--json"]).stdout)
    assert at["rows"][0]["hex"] == data["rows"][2]["hex"]
    inverse = json.loads(run_cli(["heat-tint", "steel", "--hex", data["rows"][3]["hex"], "--json"]).stdout)
    assert inverse["model"] == "steel" and inverse["solutions"][0]["thickness_nm"] == pytest.approx(60, abs=0.5)
    assert json.loads(run_cli(["heat-tint", "stainless", "--at", "20nm", "--json"]).stdout)["model"] == "stainless-steel"
    assert all({"thickness_nm", "low_nm", "high_nm", "delta_E00", "order"} <= set(s) for s in inverse["solutions"])
    table = run_cli(["heat-tint", "steel", "--range", "0:40:20"])
    assert "Only thickness is computed" in table.stdout
    assert table.stderr.count("CAUTION") == 1


@pytest.mark.parametrize("args, fragment", [
    (["heat-tint", "copper"], "Cu2O"),
    (["heat-tint", "brass"], "no heat-tint model"),
    (["heat-tint", "steel", "--at", "40nm", "--lab", "50,0,0"], "one of --at"),
    (["heat-tint", "steel", "--hex", "#00ff00", "--range", "0:30", "--max-delta-e", "1"], "closest"),
])
def test_cli_bad_input_is_one_line(run_cli, args, fragment):
    assert_user_error(run_cli(args), fragment)
