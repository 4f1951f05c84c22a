"""Thickness maps from synthetic photos rendered by the forward model.

The photos are made by :mod:`filmoptic.imaging.render` from a known thickness field: a small
source's radial fall-off with a tilt, a bare strip as the reference, a light box seen through a
lens with cos⁴ vignetting (common practice), saved as an 8-bit sRGB JPEG at Pillow's normal
quality or as a 16-bit PNG, with and without camera noise. The forward model itself (the engine)
is checked against ``tmm`` in test_engine_tmm.py; these tests check the imaging chain around it.

The expected thickness of a cell is what an ideal light meter over the cell would give: the
thickness whose modelled reading equals the mean of the modelled readings of the cell's pixels,
inverted here by plain interpolation of the forward model on a fine grid (independent of the
solver).
"""

from __future__ import annotations

import numpy as np
import pytest

from filmoptic.errors import FilmopticError
from filmoptic.imaging.maps import map_thickness
from filmoptic.imaging.photo import Photo
from filmoptic.imaging.render import (
    add_noise,
    cos4_vignetting,
    encode_linear16,
    encode_srgb8,
    render_reflection,
    render_transmission,
    stored_for_orientation,
    write_jpeg,
    write_png,
)
from filmoptic.inverse.solve import Reading, evaluate_condition

STACK = "Ti ? / glass 4mm"
H, W = 240, 320
BARE = "6,8,34,232"
REGION = (56, 8, 312, 232)      # 16 × 14 cells of 16 px
CELLS = (16, 14)


def field_fn(x, y):
    r2 = (x - 180.0) ** 2 + (y - 110.0) ** 2
    return 11.0 / (1.0 + r2 / 400.0 ** 2) ** 2 + 0.003 * (x - 160.0)


def _scene():
    y, x = np.mgrid[0:H, 0:W].astype(float)
    field = field_fn(x, y)
    field[:, :40] = 0.0            # bare strip under a clamp
    field[:, 316:] = np.nan        # the light box beside the glass
    return field


FIELD = _scene()


def _expected_cells(field=FIELD, illuminant="D65"):
    """Per cell: the thickness an ideal light meter over the cell gives, relative to bare glass."""
    grid = np.linspace(0.0, 20.0, 20001)
    q = evaluate_condition(STACK, Reading(0.5, illuminant, "photopic", "open"), grid)
    x0, y0, x1, y1 = REGION
    block = np.interp(field[y0:y1, x0:x1], grid, q)
    nx, ny = CELLS
    mean_q = block.reshape(ny, (y1 - y0) // ny, nx, (x1 - x0) // nx).mean(axis=(1, 3))
    ratio = mean_q / q[0]
    return np.interp(ratio[..., None], (q / q[0])[::-1], grid[::-1])[..., 0]


EXPECTED = _expected_cells()


def _truth_uniformity(t):
    return 100 * (t.max() - t.min()) / (t.max() + t.min())


@pytest.fixture(scope="module")
def rendered():
    photo, flat = render_transmission(STACK, FIELD, vignetting=cos4_vignetting(H, W, corner=0.7), exposure=0.8)
    return photo, flat


def _map(photo, flat=None, **options):
    options.setdefault("bare", BARE)
    return map_thickness(STACK, photo, flat=flat, region=REGION, cells=CELLS, **options)


def test_sixteen_bit_png_with_vignetting_and_flat_field(tmp_path, rendered):
    photo, flat = rendered
    write_png(tmp_path / "p.png", encode_linear16(photo))
    write_png(tmp_path / "o.png", encode_linear16(flat))
    result = _map(tmp_path / "p.png", tmp_path / "o.png")
    assert set(result.flag.ravel()) == {"ok"}
    # 16-bit quantisation alone: about 1e-5 of the reading, a few 1e-5 nm.
    np.testing.assert_allclose(result.thickness_nm, EXPECTED, rtol=0, atol=1e-4)
    assert result.stats.uniformity_pct == pytest.approx(_truth_uniformity(EXPECTED), abs=5e-4)
    assert result.reference == "bare" and result.gain is None


def test_eight_bit_jpeg_normal_quality(tmp_path, rendered):
    photo, flat = rendered
    # Pillow's default JPEG quality (75, 4:2:0 chroma subsampling): what most cameras call normal.
    write_jpeg(tmp_path / "p.jpg", encode_srgb8(photo), quality=75)
    write_jpeg(tmp_path / "o.jpg", encode_srgb8(flat), quality=75)
    result = _map(tmp_path / "p.jpg", tmp_path / "o.jpg")
    error = result.thickness_nm - EXPECTED
    # 8-bit codes on a smooth field do not average out (half a code step is about 0.1 nm here),
    # and JPEG adds its block errors.
    assert np.max(np.abs(error)) < 0.15
    assert abs(np.mean(error)) < 0.05
    assert result.stats.uniformity_pct == pytest.approx(_truth_uniformity(EXPECTED), abs=0.4)
    assert any("approximately sRGB" in note for note in result.notes)


def test_noise_gives_honest_intervals(rendered):
    photo, flat = rendered
    rng = np.random.default_rng(12)
    noisy = Photo.from_array(encode_linear16(add_noise(photo, rng, shot=0.02, read=0.002)))
    noisy_flat = Photo.from_array(encode_linear16(add_noise(flat, rng, shot=0.02, read=0.002)))
    result = _map(noisy, noisy_flat)
    error = result.thickness_nm - EXPECTED
    half = (result.high_nm - result.low_nm) / 2
    assert np.all(half > 0)
    # The interval is the 1σ of the cell's mean (2 × 2 pixel blocks as independent samples, so
    # about twice as wide as white noise needs): well over 68 % of cells must contain the truth,
    # and none may miss it by more than four half-widths.
    assert np.mean(np.abs(error) <= half) > 0.8
    assert np.all(np.abs(error) <= 4 * half)
    # Noise can only move the extremes by their errors: the uniformity stays within what four
    # half-widths at the thinnest and thickest cells allow.
    t = result.thickness_nm
    bound = 100 * 4 * (half.flat[np.argmax(t)] + half.flat[np.argmin(t)]) / (t.max() + t.min())
    assert abs(result.stats.uniformity_pct - _truth_uniformity(EXPECTED)) <= bound


def test_without_flat_field_vignetting_biases_the_map(rendered):
    photo, _ = rendered
    result = _map(Photo.from_array(encode_linear16(photo)))
    # cos⁴ vignetting to 70 % in the corners reads as film: the map is far off, and says why.
    assert np.max(np.abs(result.thickness_nm - EXPECTED)) > 1.0
    assert any("vignetting" in note for note in result.notes)


def test_flat_field_alone_maps_relative_to_the_open_box(rendered):
    photo, flat = rendered
    result = _map(Photo.from_array(encode_linear16(photo)), Photo.from_array(encode_linear16(flat)), bare=None)
    assert result.reference == "open"
    np.testing.assert_allclose(result.thickness_nm, EXPECTED, rtol=0, atol=1e-4)


def test_known_region_calibrates_a_gain(rendered):
    photo, flat = rendered
    # The light box dimmed by 10 % between the two photos: every ratio reads 0.9 of the truth.
    # A region of known thickness gives back the gain 1/0.9 and the true map.
    dimmed = Photo.from_array(encode_linear16(photo * 0.9))
    flat16 = Photo.from_array(encode_linear16(flat))
    plain = _map(dimmed, flat16, bare=None)
    assert np.nanmax(np.abs(plain.thickness_nm - EXPECTED)) > 1.0
    known_cell = EXPECTED[7, 8]
    x0 = REGION[0] + 8 * 16
    y0 = REGION[1] + 7 * 16
    result = _map(dimmed, flat16, bare=None, known=((x0, y0, x0 + 16, y0 + 16), known_cell))
    assert result.gain == pytest.approx(1 / 0.9, rel=2e-5)
    np.testing.assert_allclose(result.thickness_nm, EXPECTED, rtol=0, atol=2e-4)


@pytest.mark.parametrize("orientation", [6, 3, 8])
def test_exif_orientation_gives_the_same_map(tmp_path, rendered, orientation):
    from PIL import Image

    photo, flat = rendered
    # A camera held on its side stores the picture turned and says so in EXIF (lossless PNG here,
    # so the turned and the straight photo hold the same pixels).
    exif = Image.Exif()
    exif[0x0112] = orientation
    for name, rgb in (("p", photo), ("o", flat)):
        upright = encode_srgb8(rgb)
        Image.fromarray(stored_for_orientation(upright, orientation)).save(tmp_path / f"{name}_turned.png", exif=exif)
        Image.fromarray(upright).save(tmp_path / f"{name}.png")
    turned = _map(tmp_path / "p_turned.png", tmp_path / "o_turned.png")
    straight = _map(tmp_path / "p.png", tmp_path / "o.png")
    assert turned.grid == straight.grid
    # Pixels are linearised in float32 (bounded memory); the turned photo's pixels are summed in
    # another order, which moves the cell means by float32 rounding only.
    np.testing.assert_allclose(turned.thickness_nm, straight.thickness_nm, rtol=0, atol=1e-5)
    # 8-bit codes on a smooth, noiseless field: half a code step is about 0.1 nm here.
    np.testing.assert_allclose(turned.thickness_nm, EXPECTED, rtol=0, atol=0.12)


def test_saturated_dark_and_outside_cells_are_flagged(rendered):
    photo, flat = rendered
    burnt = photo.copy()
    x0, y0 = REGION[0], REGION[1]
    burnt[y0:y0 + 16, x0:x0 + 16] = 1.0                       # one cell clipped to white
    burnt[y0 + 16:y0 + 32, x0:x0 + 16] = 0.0005               # one cell nearly black
    mask = np.ones((H, W), bool)
    mask[y0 + 200:y0 + 224, x0 + 224:x0 + 256] = False        # cells off the mapped area
    result = _map(Photo.from_array(encode_linear16(burnt)), Photo.from_array(encode_linear16(flat)), mask=mask)
    assert result.flag[0, 0] == "saturated"
    assert result.flag[1, 0] == "dark"
    assert result.flag[13, 14] == "outside" and result.flag[13, 15] == "outside"
    assert np.isnan(result.thickness_nm[0, 0]) and np.isnan(result.thickness_nm[13, 14])
    assert result.stats.cells_flagged == 2
    assert result.stats.cells_solved == 16 * 14 - 4


def test_profile_fits_recover_the_source_geometry():
    from filmoptic.imaging.profile import fit_profile

    x, y = np.meshgrid(np.linspace(0, 300, 16), np.linspace(0, 220, 12))
    radial = 11.0 / (1 + ((x - 180) ** 2 + (y - 110) ** 2) / 400.0 ** 2) ** 2
    profile = fit_profile(x, y, radial, "mm")
    assert profile.better == "radial"
    r = profile.radial
    assert (r.peak_nm, r.x_centre, r.y_centre, r.distance) == pytest.approx((11.0, 180.0, 110.0, 400.0), rel=1e-6)
    plane = fit_profile(x, y, 5 + 0.01 * x - 0.02 * y, "mm").plane
    assert (plane.slope_x_nm, plane.slope_y_nm) == pytest.approx((0.01, -0.02), abs=1e-12)
    assert plane.direction_deg == pytest.approx(np.degrees(np.arctan2(-0.02, 0.01)) % 360, abs=1e-9)


def test_uniformity_is_half_range_over_mid_range():
    from filmoptic.imaging.profile import map_stats

    # ±(max − min)/(max + min): 9 to 11 nm is ±10 % (common practice in coating shops).
    stats = map_stats(np.array([[9.0, 10.0], [11.0, np.nan]]), np.array([["ok", "ok"], ["ok", "dark"]]))
    assert stats.uniformity_pct == pytest.approx(10.0, abs=1e-12)
    assert (stats.cells_solved, stats.cells_flagged) == (3, 1)


def test_transmission_needs_a_reference(rendered):
    photo, _ = rendered
    with pytest.raises(FilmopticError, match="reference"):
        map_thickness(STACK, Photo.from_array(encode_linear16(photo)), cells=CELLS)


# ---------------------------------------------------------------------------------------------
# Colour mode
# ---------------------------------------------------------------------------------------------

OXIDE = "TiO2 ? / Ti"


def oxide_field(x, y):
    r2 = (x - 170.0) ** 2 + (y - 120.0) ** 2
    return 100.0 + 150.0 / (1.0 + r2 / 260.0 ** 2) ** 2


def _oxide_photo(exposure, bare_strip=False):
    y, x = np.mgrid[0:H, 0:W].astype(float)
    field = oxide_field(x, y)
    if bare_strip:
        field[:, :40] = 0.0
    rgb = render_reflection(OXIDE, field, exposure=exposure)
    rgb = add_noise(rgb, np.random.default_rng(3), shot=0.01, read=0.003)
    return Photo.from_array(encode_srgb8(rgb))


def _oxide_truth(result):
    X, Y = np.meshgrid(result.x, result.y)
    return oxide_field(X, Y)


def test_colour_mode_recovers_the_interference_order(monkeypatch):
    import filmoptic.imaging.colour_map as colour_map

    # Under-exposed by 15 % and no colour reference: many cells' best single match lies in the
    # wrong order; continuity from the most saturated region recovers every cell's order.
    photo = _oxide_photo(0.85)
    result = map_thickness(OXIDE, photo, mode="colour", cells=(16, 12))
    truth = _oxide_truth(result)
    assert np.all(np.abs(result.thickness_nm - truth) < 12.0)
    assert result.seed == "most saturated region"
    assert np.all(result.delta_E00 < 5.0)
    assert any("not a colorimeter" in note for note in result.notes)
    # Without continuity (each cell's best ΔE00 alone) the same photo gives wrong orders.
    monkeypatch.setattr(colour_map, "ORDER_MARGIN_DE00", 0.0)
    naive = map_thickness(OXIDE, photo, mode="colour", cells=(16, 12))
    assert np.count_nonzero(np.abs(naive.thickness_nm - truth) > 40.0) > 10


def test_colour_mode_with_a_bare_metal_reference():
    # 30 % under-exposed, but a strip of bare titanium fixes exposure and white balance.
    photo = _oxide_photo(0.7, bare_strip=True)
    result = map_thickness(OXIDE, photo, mode="colour", bare="4,10,36,230", region="48,0,320,240", cells=(17, 15))
    truth = _oxide_truth(result)
    assert result.reference == "bare"
    assert result.gains == pytest.approx((1 / 0.7,) * 3, rel=0.03)
    assert np.max(np.abs(result.thickness_nm - truth)) < 3.0
    assert np.median(np.abs(result.thickness_nm - truth)) < 1.0


def test_colour_mode_known_region_anchors_the_order():
    photo = _oxide_photo(1.0)
    # The known region sits at the edge (about 150 nm); the order follows from it.
    result = map_thickness(OXIDE, photo, mode="colour", cells=(16, 12), known="0,0,40,40=150nm")
    truth = _oxide_truth(result)
    assert result.seed == "known region"
    assert np.max(np.abs(result.thickness_nm - truth)) < 3.0
    # Intervals contain the match and widen with the colour tolerance.
    assert np.all(result.low_nm <= result.thickness_nm) and np.all(result.high_nm >= result.thickness_nm)


def test_colour_mode_needs_a_colour_photo():
    grey = Photo.from_array(np.full((40, 40), 120, np.uint8))
    with pytest.raises(FilmopticError, match="colour photo"):
        map_thickness(OXIDE, grey, mode="colour", cells=(4, 4))
