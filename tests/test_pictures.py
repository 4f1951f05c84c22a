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
from filmoptic.describe.ladder import colour_ladder

A4_PT = (595.2756, 841.8898)
LETTER_PT = (612.0, 792.0)
# Dimensionless quantities written without a unit on their rulers.
UNITLESS = ("lightness L*", "n", "k")


@pytest.fixture(autouse=True)
def _close_figures():
    """Figures drawn here and only read (not saved) are closed after each test."""
    yield
    import matplotlib.pyplot as plt

    plt.close("all")


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
    from filmoptic.describe.views import back_side

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


# ---------------------------------------------------------------------------------------------
# Spectra, optical constants, fits
# ---------------------------------------------------------------------------------------------
def test_spectrum_plot_and_its_vertical_range():
    from filmoptic.engine import compute
    from filmoptic.plots.spectrum import plot_spectrum

    semi_mirror = compute("Ti 12nm / glass 4mm", np.arange(380.0, 781.0, 5.0))
    look = look_at(plot_spectrum(semi_mirror, title="Ti 12nm / glass 4mm"))
    assert_reads_well(look)
    assert "share of the incident light (%)" in look.strings and "wavelength (nm)" in look.strings
    fig = plot_spectrum(semi_mirror, percent_range="auto")
    # 'auto' runs from 0 to a round 5 % above the highest curve (A in the layers, about 40 %).
    top = 100 * max(semi_mirror.R.max(), semi_mirror.T.max(), semi_mirror.A_layers.max())
    assert fig.axes[0].get_ylim() == (0.0, 5.0 * np.ceil((top + 0.5) / 5.0)) and fig.axes[0].get_ylim()[1] <= 50
    assert plot_spectrum(semi_mirror, percent_range=(10, 30)).axes[0].get_ylim() == (10.0, 30.0)


def test_spectrum_percent_option(run_cli, tmp_path):
    from conftest import assert_user_error

    result = run_cli(["spectrum", "Ti 12nm / glass 4mm", "--plot", tmp_path / "s.png", "--plot-percent", "0:50"])
    assert result.exit_code == 0, result.stderr
    assert_user_error(run_cli(["spectrum", "Ti 12nm / glass 4mm", "--plot", tmp_path / "s.png",
                               "--plot-percent", "50:10"]), "--plot-percent")
    assert_user_error(run_cli(["spectrum", "Ti 12nm / glass 4mm", "--plot-percent", "auto"]), "--plot")


def test_nk_plot_marks_the_visible_band():
    from filmoptic.materials import get_material
    from filmoptic.plots.nk import plot_nk

    wl = np.linspace(300.0, 1900.0, 200)
    fig = plot_nk([("Johnson-1972", wl, get_material("Au").nk(wl))], title="Au")
    look = look_at(fig)
    assert_reads_well(look, unitless=("refractive index n", "extinction coefficient k"))
    assert "visible, 380–780 nm" in look.strings and "Au" in look.strings
    # The band is shaded behind both panels, from 380 to 780 nm.
    for ax in fig.axes:
        spans = [(p.get_x(), p.get_x() + p.get_width()) for p in ax.patches if hasattr(p, "get_width")]
        assert any(np.allclose(span, (380.0, 780.0)) for span in spans), spans


def test_fit_plot_names_its_axis_and_explains_the_residuals():
    from filmoptic.engine import compute
    from filmoptic.inverse.fit import fit_spectra
    from filmoptic.inverse.measured import MeasuredSpectrum
    from filmoptic.plots.fit import plot_fit

    wl = np.arange(400.0, 901.0, 5.0)
    noise = 0.002 * np.random.default_rng(3).standard_normal(wl.size)
    T = MeasuredSpectrum(wl, compute("n=2.2 300nm / n=1.5 1mm", wl).T + noise, "T")
    R = MeasuredSpectrum(wl, compute("n=2.2 300nm / n=1.5 1mm", wl).R - noise, "R")
    look = look_at(plot_fit(fit_spectra("n=2.2 100..500nm / n=1.5 1mm", T, sigma=0.002)))
    assert_reads_well(look)
    text = look.strings
    assert "transmittance T (%)" in text and "measured − fitted T" in text and "±σ per point (as given)" in text
    assert text.startswith("Verdict") or "Verdict: the model explains the data" in text
    both = look_at(plot_fit(fit_spectra("n=2.2 100..500nm / n=1.5 1mm", [T, R])))
    assert_reads_well(both)
    assert "transmittance T and reflectance R (%)" in both.strings
    assert "±σ per point (estimated from the residuals)" in both.strings


# ---------------------------------------------------------------------------------------------
# Tile sheets (anodize --chart, heat-tint --chart)
# ---------------------------------------------------------------------------------------------
def test_tile_sheet_fills_a_true_page():
    from filmoptic.colouring.anodize import anodize_colours
    from filmoptic.plots.tiles import tile_sheet

    chart = anodize_colours("Ti", np.arange(10.0, 111.0, 5.0))
    fig = tile_sheet(chart.film.colours, [f"{v:g} V" for v in chart.volts],
                     [f"{d:.0f} nm" for d in chart.film.thickness_nm], title="Anodised Ti: colour by voltage")
    look = look_at(fig)
    assert look.size_in == pytest.approx(A4_IN)
    assert_reads_well(look, max_gap=0.1)
    assert "Anodised Ti: colour by voltage" in look.strings and "110 V" in look.strings
    assert not np.all(chart.film.colours.in_gamut) and "white corner notch" in look.strings
    # A range with every colour inside sRGB leaves the notch note out.
    calm = anodize_colours("Ti", np.arange(30.0, 56.0, 5.0))
    assert np.all(calm.film.colours.in_gamut)
    text = look_at(tile_sheet(calm.film.colours, ["a"] * 6, ["b"] * 6, title="t", paper="letter")).strings
    assert "notch" not in text


@pytest.mark.parametrize("command, points", [
    (["anodize", "Ti", "--volts", "10:110:5"], A4_PT),
    (["heat-tint", "steel", "--range", "0:80:2", "--paper", "letter"], LETTER_PT),
])
def test_tile_sheet_pdf_sizes(run_cli, tmp_path, command, points):
    path = tmp_path / "sheet.pdf"
    result = run_cli([*command, "--chart", path])
    assert result.exit_code == 0, result.stderr
    assert pdf_page_points(path) == pytest.approx(points, abs=0.01)


# ---------------------------------------------------------------------------------------------
# Monitor, design and map figures
# ---------------------------------------------------------------------------------------------
def test_monitor_plan_and_run_figures():
    from filmoptic.monitor.plan import plan_table
    from filmoptic.monitor.session import Monitor, prepare
    from filmoptic.plots.monitor import plot_plan, plot_run

    plan = prepare("Ti ? / glass 4mm", source="led:530/30", detector="flat", target_nm=8.77)
    look = look_at(plot_plan(plan_table(plan, rate_nm_per_s=0.075), title="Ti ? / glass 4mm — plan"))
    assert_reads_well(look)
    assert "reading (% of the uncoated part)" in look.strings and "time at 0.075 nm/s (s)" in look.strings
    monitor = Monitor(plan, reference=1.0)
    run = [monitor.feed(t, float(plan.model.ratio_at(0.075 * t))) for t in np.arange(0.0, 160.0, 0.5)]
    look = look_at(plot_run(run, title="replayed run"))
    assert_reads_well(look)
    assert "reading (% of the reference)" in look.strings and "stop: " in look.strings


def test_design_figure():
    from filmoptic.design import check_design, parse_goals
    from filmoptic.plots.design import plot_design

    goals = parse_goals(["luminous-T = 30%", "reflected Lab = 62,0,0 within 2"])
    result = check_design("SiO2 171.681nm / Cr 7.858nm / TiO2 110.828nm / glass 4mm", goals)
    look = look_at(plot_design(result, goals))
    assert_reads_well(look, unitless=("refractive index n\nat 580 nm",))
    assert "share of the incident light (%)" in look.strings and "1. luminous-T = 30%" in look.strings


def test_map_figure():
    from filmoptic.imaging import map_thickness
    from filmoptic.imaging.photo import Photo
    from filmoptic.imaging.render import encode_srgb8, render_transmission
    from filmoptic.plots.map import plot_thickness_map

    y, x = np.mgrid[0:120, 0:160].astype(float)
    field = 8.0 + 0.02 * x
    field[:, :20] = 0.0
    photo, flat = render_transmission("Ti ? / glass 4mm", field, exposure=0.8)
    photo, flat = Photo.from_array(encode_srgb8(photo)), Photo.from_array(encode_srgb8(flat))
    result = map_thickness("Ti ? / glass 4mm", photo, flat=flat, bare=(2, 2, 18, 118), region=(24, 0, 160, 120),
                           cells=(16, 12))
    look = look_at(plot_thickness_map(result, photo, bare=(2, 2, 18, 118)))
    assert_reads_well(look)
    assert "thickness (nm)" in look.strings and "uniformity ±" in look.strings and "x (px)" in look.strings


# ---------------------------------------------------------------------------------------------
# Every picture the demo writes
# ---------------------------------------------------------------------------------------------
def test_every_demo_picture_reads_well(tmp_path, monkeypatch):
    import filmoptic.plots as plots
    from filmoptic.demo import colour, spectra, thickness

    seen = {}
    save = plots.save_figure

    def inspect_then_save(fig, path, *args, **kwargs):
        look = look_at(fig)
        seen[path.name] = look
        return save(fig, path, *args, **kwargs)

    monkeypatch.setattr(plots, "save_figure", inspect_then_save)
    for part in (spectra, colour, thickness):
        part.run(tmp_path, lambda line: None)
    assert {"spectra.png", "colour_oxide_on_titanium.pdf", "colour_semi_mirror_swatch.png", "thickness_lux.png"} <= set(seen)
    for name, look in seen.items():
        page = look.size_in == pytest.approx(A4_IN)
        assert_reads_well(look, unitless=UNITLESS, max_gap=0.12 if page else None)
        assert page == (name.startswith("colour_oxide") or name.startswith("colour_semi")), name


def test_tile_sheet_refuses_more_tiles_than_it_can_label(run_cli, tmp_path):
    from conftest import assert_user_error

    result = run_cli(["anodize", "Ti", "--volts", "0:120:0.5", "--chart", tmp_path / "sheet.png"])
    assert_user_error(result, "at most 120 tiles", "coarser step")
    assert not (tmp_path / "sheet.png").exists()


def test_long_stacks_keep_their_heading_on_the_page():
    from filmoptic.plots.chart import ladder_chart

    stack = "[TiO2 55nm / SiO2 92nm]x4 / Al2O3 ? / [TiO2 55nm / SiO2 92nm]x4 / glass 1mm"
    look = look_at(ladder_chart(colour_ladder(stack, np.arange(0.0, 201.0, 2.0))))
    assert_reads_well(look, unitless=UNITLESS, max_gap=0.08)
    assert f"Colour ladder: {stack}" in look.strings
    _, sheet = _sheet(stack.replace("?", "80nm"))
    assert_reads_well(look_at(sheet), max_gap=0.12)
