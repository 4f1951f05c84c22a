"""Design goals: the grammar (every form `filmoptic design --help` lists) and the scoring.

The scored values are checked against an independent calculation: spectra from the ``tmm``
package (S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720, 2016) and
luminous values and colours integrated by colour-science (its own ``sd_to_XYZ``,
``XYZ_to_Lab`` and CIEDE2000).
"""

from __future__ import annotations

import numpy as np
import pytest

import colour
from filmoptic.design import check_design, parse_goal, read_goals_file
from filmoptic.design.evaluate import Evaluator
from filmoptic.design.goals import DEFAULT_COLOUR_WITHIN, DEFAULT_WITHIN
from filmoptic.errors import FilmopticError
from filmoptic.stack import parse_stack
from reference_calculations import colour_science_XYZ_Lab, tmm_unpolarized

# ---------------------------------------------------------------------------------------------
# Grammar
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("text, expected", [
    ("R 420..680nm <= 0.5%",
     dict(kind="spectral", quantity="R", operator="<=", value=0.005, band_nm=(420.0, 680.0), mean=False)),
    ("mean R 420..680nm <= 0.5%",
     dict(kind="spectral", quantity="R", operator="<=", value=0.005, band_nm=(420.0, 680.0), mean=True)),
    ("T 550nm = 50%",
     dict(kind="spectral", quantity="T", operator="=", value=0.5, band_nm=(550.0, 550.0), within=DEFAULT_WITHIN)),
    ("R 1064nm >= 99%", dict(kind="spectral", quantity="R", operator=">=", value=0.99, band_nm=(1064.0, 1064.0))),
    ("luminous-T = 30%", dict(kind="luminous", quantity="T", operator="=", value=0.3, side="front")),
    ("luminous-R <= 8%", dict(kind="luminous", quantity="R", operator="<=", value=0.08, side="front")),
    ("luminous-R reverse <= 8%", dict(kind="luminous", quantity="R", side="reverse")),
    ("reflected Lab = 55,0,-25 within 2",
     dict(kind="colour", quantity="R", lab=(55.0, 0.0, -25.0), within=2.0)),
    ("transmitted hex = #8a9a7b within 3", dict(kind="colour", quantity="T", within=3.0)),
    ("mean R 420..680nm @0..40deg <= 1%",
     dict(mean=True, angle_range_deg=(0.0, 40.0), value=0.01, polarization="unpolarized")),
    ("R 1064nm @45deg s >= 99%", dict(angle_range_deg=(45.0, 45.0), polarization="s")),
    ("T 0.55um = 40% within 2% weight 3", dict(band_nm=(550.0, 550.0), within=0.02, weight=3.0)),
    ("luminous-T >= 70% under A", dict(illuminant="A", value=0.7)),
    ("reflected Lab = 60,0,0", dict(within=DEFAULT_COLOUR_WITHIN)),
    ("reflected Lab = 60,0,-10 @0..30deg within 3", dict(angle_range_deg=(0.0, 30.0), within=3.0)),
])
def test_the_listed_goal_forms_read(text, expected):
    goal = parse_goal(text)
    for key, value in expected.items():
        wanted = pytest.approx(value) if isinstance(value, float) else value
        assert getattr(goal, key) == wanted, key


def test_hex_goal_is_the_srgb_colour_in_cielab():
    # IEC 61966-2-1 (sRGB) decoded by colour-science, D65 white: the same CIELAB.
    goal = parse_goal("transmitted hex = #8a9a7b within 3")
    rgb = np.array([0x8a, 0x9a, 0x7b]) / 255
    xyz = colour.RGB_to_XYZ(rgb, "sRGB", apply_cctf_decoding=True)
    np.testing.assert_allclose(goal.lab, colour.XYZ_to_Lab(xyz), atol=0.02)


def test_angle_ranges_are_sampled_at_most_every_five_degrees():
    assert parse_goal("mean R 420..680nm @0..40deg <= 1%").angles_deg().tolist() == [0, 5, 10, 15, 20, 25, 30, 35, 40]
    assert parse_goal("R 500nm @0..12deg <= 1%").angles_deg().tolist() == [0.0, 4.0, 8.0, 12.0]


def test_bands_include_both_ends():
    goal = parse_goal("R 420..433nm <= 1%")
    assert goal.wavelengths_nm(5.0).tolist() == [420.0, 425.0, 430.0, 433.0]


@pytest.mark.parametrize("text, fragment", [
    ("R <= 0.5%", "a wavelength"),
    ("R 420..680 <= 0.5%", "needs a unit"),
    ("mean R 420..680nm 0.5%", "no comparison"),
    ("Q 550nm <= 1%", "cannot read 'Q'"),
    ("R 550nm <= 150%", "between 0 and 1"),
    ("R 550nm <= 50", "did you mean 50%"),
    ("Lab = 50,0,0", "reflection or transmission"),
    ("reflected Lab <= 50,0,0", "'=' and a ΔE00"),
    ("reflected hex = #12345 within 2", "#rrggbb"),
    ("luminous-T 550nm = 30%", "drop the wavelength"),
    ("R 550nm @95deg <= 1%", "under 90"),
    ("R 550nm <= 1% within 1%", "'within' belongs to an '=' goal"),
    ("T 550nm = 50% weight -1", "positive"),
    ("luminous-T = 30% under D66", "unknown illuminant"),
    ("R 550nm <= 1% <= 2%", "more than one comparison"),
    ("mean mean R 550nm <= 1%", "repeats"),
    ("R 420-680nm <= 1%", "'420..680nm'"),
])
def test_bad_goals_are_one_line_errors(text, fragment):
    with pytest.raises(FilmopticError) as info:
        parse_goal(text)
    message = str(info.value)
    assert "\n" not in message and fragment in message and text.split()[0] in message


def test_goals_file_skips_comments_but_keeps_hex_colours(tmp_path):
    path = tmp_path / "goals.txt"
    path.write_text("# antireflection for the display\nmean R 420..680nm <= 0.5%   # the main one\n\n"
                    "transmitted hex = #8a9a7b within 3\n", encoding="utf-8")
    goals = read_goals_file(path)
    assert [g.text for g in goals] == ["mean R 420..680nm <= 0.5%", "transmitted hex = #8a9a7b within 3"]


def test_goals_file_errors_name_the_line(tmp_path):
    path = tmp_path / "goals.txt"
    path.write_text("R 550nm <= 1%\nR 550 <= 1%\n", encoding="utf-8")
    with pytest.raises(FilmopticError, match=r"goals\.txt, line 2: .*needs a unit"):
        read_goals_file(path)


# ---------------------------------------------------------------------------------------------
# Scoring against tmm and colour-science
# ---------------------------------------------------------------------------------------------


STACK = "TiO2 62nm / SiO2 95nm / TiO2 30nm / glass 2mm"


def test_band_goals_worst_and_mean_match_tmm():
    stack = parse_stack(STACK)
    wl = np.arange(420.0, 681.0, 5.0)
    R, _ = tmm_unpolarized(stack, wl)
    result = check_design(STACK, ["R 420..680nm <= 5%", "mean R 420..680nm <= 5%", "R 420..680nm >= 1%"])
    assert result.goals[0].achieved == pytest.approx(R.max(), abs=1e-9)
    assert result.goals[1].achieved == pytest.approx(R.mean(), abs=1e-9)
    assert result.goals[2].achieved == pytest.approx(R.min(), abs=1e-9)
    assert [g.met for g in result.goals] == [R.max() <= 0.05, R.mean() <= 0.05, R.min() >= 0.01]


def test_angle_range_goal_takes_the_worst_angle_from_tmm():
    stack = parse_stack(STACK)
    worst = max(tmm_unpolarized(stack, [550.0], angle)[0][0] for angle in np.arange(0.0, 61.0, 5.0))
    result = check_design(STACK, ["R 550nm @0..60deg <= 50%"])
    assert result.goals[0].achieved == pytest.approx(worst, abs=1e-9)


def test_reverse_goal_matches_tmm_from_the_back():
    stack = parse_stack(STACK)
    R_back, _ = tmm_unpolarized(stack, [600.0], reverse=True)
    assert check_design(STACK, ["R 600nm reverse <= 50%"]).goals[0].achieved == pytest.approx(R_back[0], abs=1e-9)


def test_luminous_and_colour_goals_match_colour_science():
    # ISO 9050:2003: luminous T is Y/100 of the CIE 1931 observer under D65; ΔE00 by
    # colour-science's CIE 2000 formula (Sharma, Wu & Dalal, Color Res. Appl. 30, 21, 2005).
    stack = parse_stack("SiO2 80nm / Cr 8nm / glass 4mm")
    wl = np.arange(380.0, 781.0, 5.0)
    R, T = tmm_unpolarized(stack, wl)
    _, lab_R = colour_science_XYZ_Lab(R, wl)
    XYZ_T, _ = colour_science_XYZ_Lab(T, wl)
    target = (62.0, 1.0, -2.0)
    result = check_design(stack, ["luminous-T = 30%", "reflected Lab = 62,1,-2 within 3"])
    assert result.goals[0].achieved == pytest.approx(XYZ_T[1] / 100, abs=1e-9)
    expected_de = colour.delta_E(lab_R, np.array(target), method="CIE 2000")
    assert result.goals[1].achieved == pytest.approx(expected_de, abs=1e-6)
    np.testing.assert_allclose(result.goals[1].lab, lab_R, atol=1e-6)


def test_merit_is_the_weighted_rms_shortfall():
    # The definition in filmoptic.design.goals: sqrt(Σ w·mean(shortfall²) / Σ w), in percentage
    # points; here one goal is met (no shortfall) and one misses by a known amount.
    stack = parse_stack("n=1.38 99.6377nm / n=1.52", ambient="n=1")
    R = ((1.52 - 1.38**2) / (1.52 + 1.38**2)) ** 2      # quarter-wave layer (Macleod, ch. 3)
    result = check_design(stack, ["R 550nm <= 5%", "R 550nm <= 0.5% weight 3"])
    shortfall = (R - (0.005 - 1e-5)) / 0.01
    assert result.merit == pytest.approx(np.sqrt(3 * shortfall**2 / 4), rel=1e-6)
    assert [g.met for g in result.goals] == [True, False]


def test_transmitted_goals_refuse_an_opaque_half_space():
    with pytest.raises(FilmopticError, match="absorbing half-space"):
        Evaluator(parse_stack("TiO2 ? / Ti"), [parse_goal("T 550nm <= 1%")])
