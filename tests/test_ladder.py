"""The colour ladder (rungs, tolerance chips, interference orders) and the plain colour words.

Outside checks: the dark bands of a transparent film fall where the half-wave and quarter-wave
closed forms put the reflectance minima of the light the eye weighs most; ΔE00 between the chips
is recomputed with colour-science; the colour words of the CSS named colours.
"""

from __future__ import annotations

import colour
import numpy as np
import pytest

from filmoptic.colorimetry import colour_sweep
from filmoptic.describe.colour_words import colour_word
from filmoptic.errors import FilmopticError
from filmoptic.describe.ladder import colour_ladder, parse_tolerance, rung_positions
from filmoptic.inverse.solve import lab_from_hex

# The photopic luminosity function peaks at 555 nm (CIE 1924 V(λ), tabulated in CIE 15:2018 and
# ISO 23539:2005): the luminous reflectance is lowest where the reflectance is lowest near there.
V_PEAK_NM = 555.0


def test_dark_bands_of_a_high_index_film_are_its_half_waves():
    # A film of higher index than its substrate reflects least at the half-wave thicknesses
    # n·d = m·λ/2, where it is an absentee layer and R equals the bare substrate's (H. A. Macleod,
    # Thin-Film Optical Filters, 4th ed., 2010, ch. 2). Non-dispersive indices keep it exact.
    ladder = colour_ladder("n=2.0 ? / n=1.5", np.arange(0.0, 701.0), ambient="n=1")
    expected = V_PEAK_NM * np.arange(1, 6) / (2 * 2.0)
    np.testing.assert_allclose(ladder.order_edges_nm, expected, atol=1.5)
    orders = {r.thickness_nm: r.order for r in ladder.rungs}
    assert orders[0.0] == 1 and orders[125.0] == 1 and orders[150.0] == 2 and orders[700.0] == 6


def test_dark_bands_of_oxide_on_silicon_are_its_quarter_waves():
    # A film of lower index than its substrate reflects least at the odd quarter waves
    # n·d = (2m − 1)·λ/4 (Macleod, ch. 2); thermal SiO2 has n ≈ 1.46 at 555 nm (I. H. Malitson,
    # J. Opt. Soc. Am. 55, 1205 (1965), the shipped fused-silica table). Silicon's absorption shifts
    # the minima by a few percent, hence the 4 % allowance.
    ladder = colour_ladder("SiO2 ? / Si", np.arange(0.0, 601.0, 2.0))
    expected = V_PEAK_NM * np.array([1, 3, 5]) / (4 * 1.46)
    np.testing.assert_allclose(ladder.order_edges_nm, expected, rtol=0.04)


def test_no_orders_for_a_metal_layer():
    # Light dies out within tens of nm in a metal: there are no interference orders to count.
    ladder = colour_ladder("Ti ? / glass 4mm", np.arange(0.0, 41.0))
    assert ladder.order_edges_nm is None and all(r.order is None for r in ladder.rungs)


def test_tolerance_chips_and_their_colour_shift():
    d = np.arange(0.0, 251.0)
    ladder = colour_ladder("TiO2 ? / Ti", d, tolerance=0.05)
    assert ladder.tolerance_text == "±5 %"
    rung = next(r for r in ladder.rungs if r.thickness_nm == 120.0)
    assert (rung.thinner_nm, rung.thicker_nm) == pytest.approx((114.0, 126.0), abs=1e-12)
    # The chips are the sweep's own colours at those thicknesses ...
    again = colour_sweep("TiO2 ? / Ti", [114.0, 120.0, 126.0])
    np.testing.assert_allclose([rung.thinner.Lab, rung.reflected.Lab, rung.thicker.Lab], again.reflected.Lab,
                               atol=1e-9)
    # ... and their distance from the aim is CIEDE2000 as colour-science computes it (CIE 142:2001).
    expected = [colour.delta_E(rung.reflected.Lab, c.Lab, method="CIE 2000") for c in (rung.thinner, rung.thicker)]
    assert rung.delta_E00 == pytest.approx(expected, abs=1e-9)
    absolute = colour_ladder("TiO2 ? / Ti", d, tolerance_nm=3.0)
    first = absolute.rungs[0]
    assert absolute.tolerance_text == "±3 nm" and (first.thinner_nm, first.thicker_nm) == (0.0, 3.0)


def test_a_written_range_does_not_stop_the_side_chips_or_the_order_count():
    # 'TiO2 40..60nm': the rung at 40 nm still shows the run 5 % thin, and orders count from 0 nm.
    ladder = colour_ladder("TiO2 40..60nm / Ti", np.arange(40.0, 61.0))
    assert ladder.rungs[0].thinner_nm == pytest.approx(38.0) and ladder.rungs[0].order is not None
    whole = colour_ladder("TiO2 ? / Ti", np.arange(0.0, 61.0))
    assert ladder.order_edges_nm[0] == pytest.approx(whole.order_edges_nm[0], abs=0.5)
    edge = ladder.order_edges_nm[0]
    assert all(r.order == (1 if r.thickness_nm <= edge else 2) for r in ladder.rungs)


def test_anodising_ladder_runs_in_round_volts():
    from filmoptic.colouring.anodize import growth_law

    law = growth_law("Ti", 2.0, 3.0)
    ladder = colour_ladder("TiO2 ? / Ti", law.thickness_nm(np.arange(10.0, 111.0)), law=law)
    assert ladder.unit == "V" and [r.position for r in ladder.rungs][:3] == [10.0, 15.0, 20.0]
    assert ladder.rungs[1].thickness_nm == pytest.approx(33.0)
    np.testing.assert_allclose(ladder.position, np.arange(10.0, 111.0), atol=1e-9)


def test_opaque_part_has_no_colour_through():
    ladder = colour_ladder("TiO2 ? / Ti", np.arange(0.0, 101.0))
    assert all(r.transmitted is None for r in ladder.rungs)
    assert all(r.transmitted is not None for r in colour_ladder("TiO2 ? / glass 1mm", np.arange(0.0, 101.0)).rungs)


def test_rungs_are_round_and_few():
    for low, high in [(0, 250), (0, 600), (10, 12.5), (3, 997), (0, 5000)]:
        p = rung_positions(low, high)
        step = np.diff(p)
        assert 2 <= p.size <= 32 and np.allclose(step, step[0])
        mantissa = step[0] / 10 ** np.floor(np.log10(step[0]) + 1e-9)
        assert round(mantissa, 6) in (1.0, 2.0, 2.5, 5.0)
        assert low <= p[0] < low + step[0] and high - step[0] < p[-1] <= high


@pytest.mark.parametrize("text, error", [("60%", "50%"), ("abc", "length"), ("-2nm", "positive"), ("2", "2%")])
def test_tolerance_errors(text, error):
    with pytest.raises(FilmopticError, match=error):
        parse_tolerance(text)
    with pytest.raises(FilmopticError):
        colour_ladder("TiO2 ? / Ti", [0.0, 10.0], tolerance=1.5)


# Named colours of W3C CSS Color Module Level 4 (§6.1; the hex values from memory) and the word a
# coater would use for them. Only names whose plain meaning is not in doubt are listed.
CSS_COLOURS = {
    "#ff0000": "red", "#ffa500": "orange", "#ffd700": "gold", "#ffff00": "yellow", "#808000": "olive",
    "#008000": "green", "#008080": "teal", "#0000ff": "blue", "#000080": "dark blue", "#800080": "purple",
    "#ff00ff": "magenta", "#ffc0cb": "pink", "#ff69b4": "pink", "#a52a2a": "brown", "#800000": "dark red",
    "#808080": "grey", "#c0c0c0": "silver", "#ffffff": "white", "#000000": "black", "#87ceeb": "sky blue",
}


@pytest.mark.parametrize("hex_code, word", sorted(CSS_COLOURS.items()))
def test_colour_words_of_named_colours(hex_code, word):
    assert colour_word(lab_from_hex(hex_code)) == word


def test_colour_words_of_anodised_titanium():
    # The trade's sequence on titanium (common practice, from memory): bronze/gold, brown, purple,
    # blue, light blue, pale yellow, gold, pink, magenta, violet, teal, green as the oxide thickens.
    ladder = colour_ladder("TiO2 ? / Ti", np.arange(0.0, 251.0))
    words = {r.thickness_nm: r.word for r in ladder.rungs}
    assert words[30.0] == "gold" and words[40.0] == "purple" and words[50.0] == "blue"
    assert words[110.0] == "yellow" and words[150.0] == "magenta" and words[200.0].endswith("green")
