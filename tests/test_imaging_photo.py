"""Photos as measurements: decoding, orientation, 16-bit files, cell statistics, limits and errors."""

from __future__ import annotations

import sys
import types
import tracemalloc

import numpy as np
import pytest
from PIL import Image, ImageOps

from filmoptic.errors import FilmopticError
from filmoptic.imaging.photo import (
    LUMINANCE_WEIGHTS,
    SRGB_TO_XYZ,
    CellGrid,
    Photo,
    cell_grid,
    cell_statistics,
    orient,
    parse_cells,
    parse_known,
    parse_rectangle,
    read_mask,
    read_photo,
    srgb_decode,
    srgb_encode,
)
from filmoptic.imaging.render import stored_for_orientation, write_png


# ---------------------------------------------------------------------------------------------
# sRGB (IEC 61966-2-1)
# ---------------------------------------------------------------------------------------------


def test_srgb_transfer_function_matches_colour_science():
    import colour

    # colour-science's implementation of the IEC 61966-2-1 transfer function is the reference:
    # every 8-bit code, every 16th 16-bit code and values around the 0.04045 break point.
    codes = np.concatenate([np.arange(256) / 255.0, np.arange(0, 65536, 16) / 65535.0,
                            np.linspace(0.0400, 0.0410, 101)])
    # Exactly at the break point the two pieces differ by 2e-9 and colour-science takes the power
    # law; IEC 61966-2-1 writes "V <= 0.04045" for the linear piece, which is what we follow.
    at_break = codes == 0.04045
    assert at_break.any()
    assert srgb_decode(0.04045) == 0.04045 / 12.92
    codes = codes[~at_break]
    np.testing.assert_allclose(srgb_decode(codes), colour.cctf_decoding(codes, function="sRGB"), rtol=0, atol=1e-12)
    linear = np.linspace(0.0, 1.0, 10001)
    np.testing.assert_allclose(srgb_encode(linear), colour.cctf_encoding(linear, function="sRGB"), rtol=0, atol=1e-12)


def test_srgb_matrix_from_the_primaries():
    import colour

    # colour-science carries the matrix as IEC 61966-2-1:1999 prints it.
    np.testing.assert_allclose(SRGB_TO_XYZ, colour.RGB_COLOURSPACES["sRGB"].matrix_RGB_to_XYZ, rtol=0, atol=1e-12)
    # The normalised primary matrix of the standard's primaries and D65 white (SMPTE RP 177-1993,
    # computed by colour-science) agrees to the four printed decimals.
    primaries = np.array([[0.64, 0.33], [0.30, 0.60], [0.15, 0.06]])
    derived = colour.normalised_primary_matrix(primaries, np.array([0.3127, 0.3290]))
    np.testing.assert_allclose(SRGB_TO_XYZ, derived, rtol=0, atol=5e-5)
    # Relative luminance weights (IEC 61966-2-1; common practice): 0.2126, 0.7152, 0.0722.
    np.testing.assert_array_equal(LUMINANCE_WEIGHTS, [0.2126, 0.7152, 0.0722])


# ---------------------------------------------------------------------------------------------
# Reading files
# ---------------------------------------------------------------------------------------------


def _random_rgb(rng, shape, dtype):
    top = 256 if dtype == np.uint8 else 65536
    return rng.integers(1, top, size=shape).astype(dtype)


@pytest.mark.parametrize("filter_type", [0, 1, 2, 3, 4])
def test_sixteen_bit_png_is_read_in_full(tmp_path, filter_type):
    rng = np.random.default_rng(filter_type)
    pixels = _random_rgb(rng, (23, 37, 3), np.uint16)
    path = tmp_path / "p16.png"
    write_png(path, pixels, filter_type=filter_type)
    photo = read_photo(path)
    assert photo.bits == 16 and photo.encoding == "linear"
    np.testing.assert_array_equal(photo.pixels, pixels)
    # Pillow, an independent PNG decoder (ISO/IEC 15948), hands the same file over as 8-bit by
    # keeping each sample's high byte: our writer's file decodes to exactly that.
    with Image.open(path) as im:
        np.testing.assert_array_equal(np.asarray(im), (pixels >> 8).astype(np.uint8))


@pytest.mark.parametrize("filter_type", [0, 4])
def test_grey_and_eight_bit_png_round_trip_through_pillow(tmp_path, filter_type):
    rng = np.random.default_rng(10 + filter_type)
    grey16 = _random_rgb(rng, (19, 31), np.uint16)
    write_png(tmp_path / "g16.png", grey16, filter_type=filter_type)
    with Image.open(tmp_path / "g16.png") as im:     # Pillow reads 16-bit grey in full
        np.testing.assert_array_equal(np.asarray(im).astype(np.uint16), grey16)
    np.testing.assert_array_equal(read_photo(tmp_path / "g16.png").pixels, grey16)
    rgb8 = _random_rgb(rng, (19, 31, 3), np.uint8)
    write_png(tmp_path / "c8.png", rgb8, filter_type=filter_type)
    with Image.open(tmp_path / "c8.png") as im:
        np.testing.assert_array_equal(np.asarray(im), rgb8)
    photo = read_photo(tmp_path / "c8.png")
    assert photo.bits == 8 and photo.encoding == "sRGB"
    np.testing.assert_array_equal(photo.pixels, rgb8)


@pytest.mark.parametrize("options", [
    dict(),
    dict(compression="zlib"),
    dict(compression="zlib", predictor=2),
    dict(byteorder=">"),
])
def test_sixteen_bit_tiff_is_read_in_full(tmp_path, options):
    tifffile = pytest.importorskip("tifffile")
    pixels = _random_rgb(np.random.default_rng(3), (29, 41, 3), np.uint16)
    # tifffile (an independent TIFF 6.0 writer) makes the file.
    tifffile.imwrite(tmp_path / "p.tif", pixels, photometric="rgb", **options)
    photo = read_photo(tmp_path / "p.tif")
    assert photo.bits == 16 and photo.encoding == "linear" and photo.source == "TIFF"
    np.testing.assert_array_equal(photo.pixels, pixels)


@pytest.mark.parametrize("orientation", range(1, 9))
def test_exif_orientation_is_honoured(tmp_path, orientation):
    upright = _random_rgb(np.random.default_rng(orientation), (12, 20, 3), np.uint8)
    stored = stored_for_orientation(upright, orientation)
    exif = Image.Exif()
    exif[0x0112] = orientation
    path = tmp_path / "o.png"
    Image.fromarray(stored).save(path, exif=exif)
    photo = read_photo(path)
    assert photo.orientation == orientation
    np.testing.assert_array_equal(photo.pixels, upright)
    # Pillow's own reading of the Exif 2.3 orientation tag (JEITA CP-3451C) agrees.
    with Image.open(path) as im:
        np.testing.assert_array_equal(np.asarray(ImageOps.exif_transpose(im)), photo.pixels)


def test_orient_inverts_what_stored_for_orientation_does():
    a = np.arange(12).reshape(3, 4)
    for o in range(1, 9):
        np.testing.assert_array_equal(orient(stored_for_orientation(a, o), o), a)


def test_rawpy_is_asked_for_linear_sixteen_bit_srgb(tmp_path, monkeypatch):
    calls = {}

    class FakeRaw:
        sizes = types.SimpleNamespace(width=4, height=3)

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            return False

        def postprocess(self, **kwargs):
            calls.update(kwargs)
            return np.full((3, 4, 3), 30000, np.uint16)

    fake = types.SimpleNamespace(imread=lambda path: FakeRaw(), ColorSpace=types.SimpleNamespace(sRGB="sRGB"))
    monkeypatch.setitem(sys.modules, "rawpy", fake)
    path = tmp_path / "shot.dng"
    path.write_bytes(b"not really raw")
    photo = read_photo(path)
    # Linear output (gamma 1, no brightening) at 16 bits in the sRGB primaries: what a
    # measurement needs from LibRaw's demosaicing.
    assert calls["gamma"] == (1, 1) and calls["no_auto_bright"] is True and calls["output_bps"] == 16
    assert calls["output_color"] == "sRGB"
    assert photo.encoding == "linear" and photo.bits == 16
    assert float(photo.linear()[0, 0, 0]) == pytest.approx(30000 / 65535, abs=1e-7)


def test_raw_without_rawpy_names_the_extra(tmp_path, monkeypatch):
    monkeypatch.setitem(sys.modules, "rawpy", None)
    path = tmp_path / "shot.CR2"
    path.write_bytes(b"x")
    with pytest.raises(FilmopticError, match=r"filmoptic\[raw\]"):
        read_photo(path)


@pytest.mark.parametrize("kind", ["text", "truncated-jpeg", "truncated-png", "black", "missing"])
def test_unreadable_photos_are_one_line_errors(tmp_path, kind):
    path = tmp_path / ("p.png" if kind in ("truncated-png", "black") else "p.jpg")
    rgb = _random_rgb(np.random.default_rng(1), (64, 64, 3), np.uint8)
    if kind == "text":
        path.write_text("this is not a photo\n")
        expected = "not an image"
    elif kind == "truncated-jpeg":
        Image.fromarray(rgb).save(path, quality=90)
        path.write_bytes(path.read_bytes()[: path.stat().st_size // 2])
        expected = "truncated"
    elif kind == "truncated-png":
        write_png(path, rgb)
        path.write_bytes(path.read_bytes()[: path.stat().st_size // 2])
        expected = "truncated"
    elif kind == "black":
        write_png(path, np.zeros((8, 8, 3), np.uint8))
        expected = "black"
    else:
        expected = "no such file"
    with pytest.raises(FilmopticError, match=expected) as info:
        read_photo(path)
    assert "\n" not in str(info.value)


def test_too_many_pixels_is_refused_before_decoding(tmp_path):
    write_png(tmp_path / "big.png", np.ones((100, 200, 3), np.uint8))
    with pytest.raises(FilmopticError, match="--max-megapixels"):
        read_photo(tmp_path / "big.png", max_pixels=10_000)


# ---------------------------------------------------------------------------------------------
# Rectangles, cells, statistics
# ---------------------------------------------------------------------------------------------


def test_rectangles_cells_and_known_regions_parse():
    assert parse_rectangle("0.5,0.5,1,1", 200, 100) == (100, 50, 200, 100)
    assert parse_cells("40x30") == (40, 30)
    assert parse_known("1,2,30,40=2.5nm", 100, 100) == ((1, 2, 30, 40), 2.5)
    for bad in ("1,2,3", "10,10,5,20", "0,0,300,10", "1.5,2,30,40"):
        with pytest.raises(FilmopticError):
            parse_rectangle(bad, 200, 100)
    with pytest.raises(FilmopticError, match="fewer cells"):
        cell_grid((0, 0, 30, 30), cells=(10, 10))


def test_cell_statistics_agree_with_direct_slicing():
    rng = np.random.default_rng(4)
    photo = Photo.from_array(_random_rgb(rng, (60, 90, 3), np.uint16) // 2 + 1000)
    flat = Photo.from_array(_random_rgb(rng, (60, 90, 3), np.uint16) // 2 + 30000)
    dark = Photo.from_array(rng.integers(0, 500, (60, 90, 3)).astype(np.uint16))
    mask = rng.random((60, 90)) > 0.2
    grid = CellGrid(3, 2, 7, 5, 12, 11)
    stats = cell_statistics(photo, grid, flat=flat, dark=dark, mask=mask)

    w = LUMINANCE_WEIGHTS
    P = (photo.pixels / 65535.0) @ w - (dark.pixels / 65535.0) @ w
    F = (flat.pixels / 65535.0) @ w - (dark.pixels / 65535.0) @ w
    V = P / F
    for i in range(grid.ny):
        for j in range(grid.nx):
            rows = slice(grid.y0 + i * 11, grid.y0 + (i + 1) * 11)
            cols = slice(grid.x0 + j * 12, grid.x0 + (j + 1) * 12)
            m = mask[rows, cols]
            assert stats.count[i, j] == m.sum()
            assert stats.mean[i, j] == pytest.approx(V[rows, cols][m].mean(), rel=2e-6)
            assert stats.level[i, j] == pytest.approx(P[rows, cols][m].mean(), rel=2e-6)
            v = V[rows, cols]
            ok = m[:, 2:] & m[:, :-2]
            d = (v[:, 2:] - v[:, :-2])[ok]
            # lag-2 pairs that start in this cell (the last two columns reach into the next one)
            nxt = V[rows, cols.stop:cols.stop + 2] if cols.stop + 2 <= V.shape[1] else None
            if j < grid.nx - 1 and nxt is not None:
                m2 = np.concatenate([m, mask[rows, cols.stop:cols.stop + 2]], axis=1)
                v2 = np.concatenate([v, nxt], axis=1)
                ok2 = m2[:, 2:] & m2[:, :-2]
                d = (v2[:, 2:] - v2[:, :-2])[ok2[:, :12]]
            assert stats.noise[i, j] == pytest.approx(np.sqrt(np.mean(d ** 2) / 2), rel=1e-4)


def test_noise_estimate_recovers_white_noise_and_ignores_gradients():
    rng = np.random.default_rng(8)
    height, width = 400, 400
    sigma = 0.01
    # A steep linear gradient (0.2 to 0.8 across the photo) plus white Gaussian noise of known σ.
    ramp = np.linspace(0.2, 0.8, width)[None, :] + np.zeros((height, 1))
    values = np.clip(ramp + rng.normal(0, sigma, (height, width)), 0, 1)
    photo = Photo.from_array((values * 65535).round().astype(np.uint16), encoding="linear")
    stats = cell_statistics(photo, cell_grid((0, 0, width, height), cells=(2, 2)))
    # 40 000 pixels per cell: the estimate's relative standard error is about 1/√(2·19 800) ≈ 0.5 %.
    np.testing.assert_allclose(stats.noise, sigma, rtol=0.03)
    # The plain standard deviation would be dominated by the gradient (≈ 0.087 over half the ramp).
    np.testing.assert_allclose(stats.sem, stats.noise / np.sqrt(stats.count / 4), rtol=1e-12)


def test_saturation_and_masks():
    pixels = np.full((40, 40, 3), 100, np.uint8)
    pixels[:20, :20] = 255
    photo = Photo.from_array(pixels)
    stats = cell_statistics(photo, cell_grid((0, 0, 40, 40), cells=(2, 2)))
    np.testing.assert_array_equal(stats.saturated, [[1.0, 0.0], [0.0, 0.0]])


def test_mask_file_must_match_the_photo(tmp_path):
    write_png(tmp_path / "m.png", np.full((10, 12), 255, np.uint8))
    assert read_mask(tmp_path / "m.png", (10, 12)).all()
    with pytest.raises(FilmopticError, match="mask"):
        read_mask(tmp_path / "m.png", (12, 10))


def test_twenty_four_megapixels_bin_in_bounded_memory():
    # A 6000 × 4000 8-bit photo (72 MB as bytes) into 40 × 30 cells: the statistics are computed
    # band by band, so far less than one float64 copy of the photo (576 MB) is ever held.
    height, width = 4000, 6000
    rng = np.random.default_rng(2)
    pixels = np.empty((height, width, 3), np.uint8)
    for r0 in range(0, height, 500):
        pixels[r0:r0 + 500] = rng.integers(0, 256, (min(500, height - r0), width, 3), dtype=np.uint8)
    photo = Photo.from_array(pixels)
    grid = cell_grid((0, 0, width, height), cells=(40, 30))
    tracemalloc.start()
    stats = cell_statistics(photo, grid)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    assert peak < 150e6, peak
    assert (grid.cell_w, grid.cell_h, grid.y0) == (150, 133, 5)   # 10 leftover rows split evenly
    # Two cells against a direct float64 computation on their slices.
    for i, j in ((0, 0), (17, 33)):
        y0, x0 = grid.y0 + i * grid.cell_h, grid.x0 + j * grid.cell_w
        block = pixels[y0:y0 + grid.cell_h, x0:x0 + grid.cell_w]
        expected = (srgb_decode(block / 255.0) @ LUMINANCE_WEIGHTS).mean()
        assert stats.mean[i, j] == pytest.approx(expected, rel=1e-6)
