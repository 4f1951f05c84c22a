"""Every picture filmoptic draws, rendered and looked at: what must be on it, and that it reads.

Each test draws a figure the way its command does and uses ``figure_checks.look_at`` to see what
the renderer actually drew: the title, the units on every ruler, no two texts on top of each other,
nothing off the sheet, and for a printable page its paper size and no large empty band. Printable
pages are checked against the paper sizes of ISO 216 (A4, 210 × 297 mm = 595.28 × 841.89 pt) and
ANSI/ASME Y14.1 (US Letter, 8.5 × 11 in = 612 × 792 pt).
"""

from __future__ import annotations

import numpy as np
import pytest
from figure_checks import A4_IN, LETTER_IN, assert_reads_well, look_at, pdf_page_points

from filmoptic.colorimetry import appearance
from filmoptic.ladder import colour_ladder

A4_PT = (595.2756, 841.8898)
LETTER_PT = (612.0, 792.0)
# Dimensionless quantities written without a unit on their rulers.
UNITLESS = ("lightness L*", "n", "k")


# ---------------------------------------------------------------------------------------------
# The colour ladder (sweep --chart) and the a*b* view (sweep --ab-plot)
# ---------------------------------------------------------------------------------------------
@pytest.fixture(scope="module")
def oxide_on_titanium():
    return colour_ladder("TiO2 ? / Ti", np.arange(0.0, 251.0))


def test_ladder_page_is_a4_and_reads_well(oxide_on_titanium):
    from filmoptic.plots.chart import ladder_chart

    look = look_at(ladder_chart(oxide_on_titanium))
    assert look.size_in == pytest.approx(A4_IN, abs=1e-9)
    assert_reads_well(look, unitless=UNITLESS, max_gap=0.08)
    text = look.strings
    assert "Colour ladder: TiO2 ? / Ti" in text and "layer thickness (nm)" in text and "hue h (°)" in text
    # One rung per 10 nm, each with its colour word, order and ΔE00 pair.
    for rung in oxide_on_titanium.rungs:
        assert f"{rung.position:g}" in text.split("\n")
    assert text.count(" | ") >= len(oxide_on_titanium.rungs) + 1
    assert "purple" in text and "order" in text
    # Footnotes only when they apply: this sweep has colours outside sRGB and no light through.
    assert "outside the sRGB gamut" in text and "Nothing comes through" in text
    assert "light box" not in text


def test_ladder_of_a_see_through_part_shows_it_on_a_light_box():
    from filmoptic.plots.chart import ladder_chart

    ladder = colour_ladder("SiO2 ? / glass 1mm", np.arange(0.0, 201.0, 2.0))
    look = look_at(ladder_chart(ladder, paper="letter"))
    assert look.size_in == pytest.approx(LETTER_IN)
    assert_reads_well(look, unitless=UNITLESS, max_gap=0.08)
    text = look.strings
    assert "through\n(light box)" in text and "T, through" in text
    assert "Nothing comes through" not in text
    # No colour of this faint film leaves sRGB, so the footnote about it is left out.
    assert all(r.reflected.in_gamut and r.transmitted.in_gamut for r in ladder.rungs)
    assert "outside the sRGB gamut" not in text


def test_ladder_without_orders_leaves_out_their_note():
    from filmoptic.plots.chart import ladder_chart

    text = look_at(ladder_chart(colour_ladder("Ti ? / glass 4mm", np.arange(0.0, 41.0)))).strings
    assert "order" not in text.lower().replace("border", "")


@pytest.mark.parametrize("paper, points", [("a4", A4_PT), ("letter", LETTER_PT)])
def test_ladder_pdf_is_the_true_paper_size(run_cli, tmp_path, paper, points):
    path = tmp_path / "ladder.pdf"
    result = run_cli(["sweep", "TiO2 ? / Ti", "--range", "0:250:1", "--chart", path, "--paper", paper])
    assert result.exit_code == 0, result.stderr
    assert pdf_page_points(path) == pytest.approx(points, abs=0.01)


def test_anodising_ladder_in_volts(run_cli, tmp_path):
    from filmoptic.colouring.anodize import growth_law
    from filmoptic.plots.chart import ladder_chart

    law = growth_law("Ti")
    ladder = colour_ladder("TiO2 ? / Ti", law.thickness_nm(np.arange(0.0, 101.0)), law=law)
    look = look_at(ladder_chart(ladder))
    assert_reads_well(look, unitless=UNITLESS, max_gap=0.08)
    assert "anodising voltage (V)" in look.strings and "oxide" in look.strings and "nm" in look.strings
    result = run_cli(["sweep", "TiO2 ? / Ti", "--anodize", "Ti", "--volts", "0:100:1", "--chart", tmp_path / "v.png"])
    assert result.exit_code == 0, result.stderr


def test_ab_view_labels_never_overlap(oxide_on_titanium):
    from filmoptic.plots.chart import ab_chart

    look = look_at(ab_chart(oxide_on_titanium))
    assert_reads_well(look)
    assert "a* (CIELAB, green − / red +)" in look.strings and "TiO2 ? / Ti" in look.strings
    labels = [t.text for t in look.texts if t.text in {f"{r.position:g}" for r in oxide_on_titanium.rungs}]
    assert len(labels) >= 15      # most rungs keep their label; only colliding ones are left out


# ---------------------------------------------------------------------------------------------
# The colour sheet (color --swatch)
# ---------------------------------------------------------------------------------------------
def _sheet(stack, angles=(0.0, 20.0, 40.0, 60.0), **kwargs):
    from filmoptic.plots.swatch import swatch_figure
    from filmoptic.stack import parse_stack
    from filmoptic.views import back_side

    result = appearance(stack)
    by_angle = appearance(stack, angle_deg=list(angles)) if angles else None
    return result, swatch_figure(result, stack_text=stack, by_angle=by_angle, angles_deg=angles,
                                 back_side=back_side(parse_stack(stack)), **kwargs)


def test_colour_sheet_of_a_semi_mirror():
    result, fig = _sheet("Ti 12nm / glass 4mm")
    look = look_at(fig)
    assert look.size_in == pytest.approx(A4_IN)
    assert_reads_well(look, max_gap=0.12)
    text = look.strings
    assert "Colour sheet: Ti 12nm / glass 4mm" in text and "D65 light" in text
    assert "Film side: grey" in text and "Glass side: grey" in text and "Through: grey" in text
    assert f"luminous transmittance Tv {100 * result.luminous.T:.1f} % (ISO 9050)" in text
    assert f"Rv, glass side: {100 * result.luminous.R_reverse:.1f} %" in text
    assert f"absorbed in the glass: {100 * result.luminous.A_substrate:.1f} %" in text
    assert "Seen at an angle" in text and "60°" in text
    assert "outside the sRGB gamut" not in text


def test_colour_sheet_of_an_opaque_part_has_nothing_through():
    result, fig = _sheet("TiO2 180nm / Ti", angles=None, paper="letter")
    look = look_at(fig)
    assert look.size_in == pytest.approx(LETTER_IN)
    assert_reads_well(look, max_gap=0.2)
    text = look.strings
    assert "Through:" not in text and "Tv" not in text and "through: none" in text
    assert "Nothing comes through this part" in text
    assert not result.reflected.in_gamut and "outside the sRGB gamut" in text


def test_swatch_from_the_command_is_a_page(run_cli, tmp_path):
    path = tmp_path / "sheet.pdf"
    result = run_cli(["color", "Ti 12nm / glass 4mm", "--swatch", path])
    assert result.exit_code == 0, result.stderr
    assert pdf_page_points(path) == pytest.approx(A4_PT, abs=0.01)
