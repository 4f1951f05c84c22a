"""Synthetic photos made by the forward model: for tests, benchmarks and the demo.

A thickness field (one value per pixel, NaN where there is no part) becomes the linear RGB a
colorimetric camera would record:

Transmission (:func:`render_transmission`)
    A coated glass on a light box. Each pixel's luminance is the part's band transmittance under
    the light box's illuminant seen by a photopic detector, relative to the open light box (the
    reading model of :class:`filmoptic.inverse.solve.Reading`); its chromaticity is that of the
    transmitted colour (CIE 15:2018 through :mod:`filmoptic.colorimetry`). The open light box is
    white at ``exposure``; the flat-field photo is the same scene without the part.
Reflection (:func:`render_reflection`)
    An oxide-coloured part seen in reflection of a white diffuse source: linear sRGB of the
    reflected colour (clipped to the sRGB gamut, as a camera clips).

Colours under an illuminant other than D65 are shown as a white-balanced camera records them:
XYZ is scaled by the ratio of the D65 white to the illuminant's white before conversion to sRGB
(the normalisation CIELAB itself makes).

Camera effects: :func:`cos4_vignetting` (natural vignetting, the cos⁴ law of illumination off
the axis; common practice), :func:`add_noise` (shot noise growing as the square root of the
signal, plus read noise), and encoders to 8-bit sRGB (:func:`encode_srgb8`) and 16-bit linear
(:func:`encode_linear16`). :func:`write_png` is a small PNG encoder (ISO/IEC 15948) for 8- and
16-bit files with any of the five row filters — Pillow writes 16-bit colour PNG only at 8 bits —
and :func:`write_jpeg` saves through Pillow, optionally with an EXIF orientation.

Every function is vectorised over pixels: the forward model runs once on a fine thickness grid
and the pixels are interpolated on it.
"""

from __future__ import annotations

import struct
import zlib
from pathlib import Path

import numpy as np

from ..errors import FilmopticError
from .photo import SRGB_TO_XYZ, orient, srgb_encode

__all__ = [
    "render_transmission",
    "render_reflection",
    "cos4_vignetting",
    "add_noise",
    "encode_srgb8",
    "encode_linear16",
    "stored_for_orientation",
    "write_png",
    "write_jpeg",
]

#: Points of the thickness grid the forward model runs on before pixels are interpolated.
RENDER_GRID_POINTS = 4001
#: Rows converted at once by the encoders (bounded memory for large photos).
_ENCODE_ROWS = 256


def _grid_for(field: np.ndarray) -> np.ndarray:
    finite = field[np.isfinite(field)]
    if finite.size == 0:
        return np.array([0.0, 1.0])
    lo, hi = float(finite.min()), float(finite.max())
    if hi <= lo:
        hi = lo + 1e-6
    return np.linspace(lo, hi, RENDER_GRID_POINTS)


def _white_scaled_rgb(XYZ: np.ndarray, wl, illuminant, observer) -> np.ndarray:
    """Linear sRGB (white = 1) of XYZ (white Y = 100) seen under ``illuminant`` by a
    white-balanced camera."""
    from ..colorimetry import white_point

    scale = white_point(wl, "D65", observer) / white_point(wl, illuminant, observer)
    xyz_d65 = np.asarray(XYZ) * scale / 100.0
    # sRGB white from the IEC matrix; D65 summed on the grid differs from it by ~1e-4.
    white = SRGB_TO_XYZ @ np.ones(3)
    xyz_d65 = xyz_d65 * white / (white_point(wl, "D65", observer) / 100.0)
    return xyz_d65 @ np.linalg.inv(SRGB_TO_XYZ).T


def _interp_channels(field, grid, table) -> np.ndarray:
    """Per-pixel interpolation of a (G, C) table on the thickness grid: (H, W, C) float32."""
    flat = field.reshape(-1)
    out = np.empty((flat.size, table.shape[1]), dtype=np.float32)
    for c in range(table.shape[1]):
        out[:, c] = np.interp(flat, grid, table[:, c])
    return out.reshape(*field.shape, table.shape[1])


def render_transmission(stack, thickness_nm, *, illuminant="D65", exposure=0.85, vignetting=None,
                        angle_deg=0.0, ambient="air", extrapolate=False):
    """Linear RGB of a coated part on a light box, and of the empty light box (the flat field).

    Parameters
    ----------
    stack : str or Stack
        One free thickness, e.g. ``"Ti ? / glass 4mm"``.
    thickness_nm : numpy.ndarray, shape (H, W)
        Film thickness per pixel; 0 for bare glass; NaN where no glass covers the light box.
    illuminant : str
        The light box's spectrum.
    exposure : float
        Linear level of the open light box on the optical axis (0–1).
    vignetting : numpy.ndarray, shape (H, W), optional
        Relative illumination of the lens (1 on the axis).

    Returns
    -------
    photo, flat : numpy.ndarray, shape (H, W, 3), float32
        Linear RGB (0–1) of the part on the light box, and of the light box alone.

    Examples
    --------
    Bare glass passes about 92 % of the light; a 10 nm titanium film much less.

    >>> field = np.array([[np.nan, 0.0, 10.0]])
    >>> photo, flat = render_transmission("Ti ? / glass 4mm", field, exposure=1.0)
    >>> from filmoptic.imaging.photo import LUMINANCE_WEIGHTS
    >>> (photo[0] @ LUMINANCE_WEIGHTS).round(3).tolist()
    [1.0, 0.894, 0.266]
    """
    from ..colorimetry import colour_sweep, default_wavelengths
    from ..inverse.solve import Reading, evaluate_condition

    field = np.asarray(thickness_nm, dtype=float)
    if field.ndim != 2:
        raise FilmopticError("the thickness field must be a 2-D array (rows × columns of pixels)")
    grid = _grid_for(field)
    q = evaluate_condition(stack, Reading(0.5, source=illuminant, detector="photopic", reference="open"),
                           grid, angle_deg=angle_deg, extrapolate=extrapolate, ambient=ambient)
    wl = default_wavelengths()
    sweep = colour_sweep(stack, grid, illuminant=illuminant, angle_deg=angle_deg, ambient=ambient,
                         extrapolate=extrapolate)
    rgb = _white_scaled_rgb(sweep.transmitted.XYZ, wl, illuminant, 2)
    rgb = np.clip(rgb, 0.0, None)
    y = rgb @ SRGB_TO_XYZ[1]
    rgb = rgb * (q / np.where(y > 0, y, 1.0))[:, None]       # luminance = the reading model exactly
    open_box = ~np.isfinite(field)
    photo = _interp_channels(np.where(open_box, grid[0], field), grid, rgb)
    photo[open_box] = 1.0
    level = np.float32(exposure) * (np.ones(field.shape, np.float32) if vignetting is None
                                    else np.asarray(vignetting, np.float32))
    photo *= level[..., None]
    flat = np.repeat(level[..., None], 3, axis=2)
    return photo, flat


def render_reflection(stack, thickness_nm, *, illuminant="D65", observer=2, exposure=1.0, background=0.18,
                      angle_deg=0.0, ambient="air", extrapolate=False):
    """Linear RGB of a film seen in reflection of a white diffuse source (white = ``exposure``).

    NaN pixels show a neutral ``background`` (a linear grey). Colours outside the sRGB gamut are
    clipped, as a camera clips them.

    Examples
    --------
    >>> rgb = render_reflection("TiO2 ? / Ti", np.array([[0.0, np.nan]]))
    >>> rgb.shape, [round(float(v), 2) for v in rgb[0, 1]]
    ((1, 2, 3), [0.18, 0.18, 0.18])
    """
    from ..colorimetry import colour_sweep, default_wavelengths

    field = np.asarray(thickness_nm, dtype=float)
    if field.ndim != 2:
        raise FilmopticError("the thickness field must be a 2-D array (rows × columns of pixels)")
    grid = _grid_for(field)
    sweep = colour_sweep(stack, grid, illuminant=illuminant, observer=observer, angle_deg=angle_deg,
                         ambient=ambient, extrapolate=extrapolate)
    rgb = np.clip(_white_scaled_rgb(sweep.reflected.XYZ, default_wavelengths(), illuminant, observer), 0.0, 1.0)
    empty = ~np.isfinite(field)
    photo = _interp_channels(np.where(empty, grid[0], field), grid, rgb)
    photo[empty] = background
    photo *= np.float32(exposure)
    return photo


def cos4_vignetting(height: int, width: int, corner: float = 0.7) -> np.ndarray:
    """Relative illumination ``cos⁴ θ`` of a lens, scaled so that the corners get ``corner``.

    Examples
    --------
    >>> v = cos4_vignetting(3, 5, corner=0.5)
    >>> round(float(v[1, 2]), 6), round(float(v[0, 0]), 6)
    (1.0, 0.5)
    """
    if not 0 < corner <= 1:
        raise FilmopticError("the corner illumination must lie in (0, 1]")
    y, x = np.mgrid[0:height, 0:width].astype(float)
    r2 = (x - (width - 1) / 2) ** 2 + (y - (height - 1) / 2) ** 2
    r2_corner = max(r2.max(), 1e-12)
    # cos⁴θ = 1 / (1 + r²/f²)²; f from the corner's value.
    f2 = r2_corner / (corner ** -0.5 - 1.0) if corner < 1 else np.inf
    return (1.0 / (1.0 + r2 / f2) ** 2).astype(np.float32)


def add_noise(linear, rng, *, shot=0.0, read=0.0) -> np.ndarray:
    """Linear values with camera noise: Gaussian of variance ``shot² · v + read²`` per pixel
    (shot noise grows as the square root of the signal), clipped to [0, 1]."""
    v = np.asarray(linear, dtype=np.float32)
    sigma = np.sqrt(np.float32(shot) ** 2 * np.clip(v, 0, None) + np.float32(read) ** 2)
    noisy = v + sigma * rng.standard_normal(v.shape, dtype=np.float32)
    return np.clip(noisy, 0.0, 1.0)


def encode_srgb8(linear) -> np.ndarray:
    """8-bit sRGB codes (IEC 61966-2-1) of linear values, rounded, in bands of rows."""
    v = np.asarray(linear)
    out = np.empty(v.shape, dtype=np.uint8)
    for r0 in range(0, v.shape[0], _ENCODE_ROWS):
        out[r0:r0 + _ENCODE_ROWS] = np.rint(srgb_encode(v[r0:r0 + _ENCODE_ROWS]) * 255.0)
    return out


def encode_linear16(linear) -> np.ndarray:
    """16-bit linear codes of linear values (0–1), rounded."""
    return np.rint(np.clip(np.asarray(linear, dtype=float), 0.0, 1.0) * 65535.0).astype(np.uint16)


def stored_for_orientation(upright: np.ndarray, orientation: int) -> np.ndarray:
    """The pixels a camera stores so that EXIF ``orientation`` turns them into ``upright``."""
    inverse = {6: 8, 8: 6}.get(int(orientation), int(orientation))
    return np.ascontiguousarray(orient(upright, inverse))


def _paeth(a, b, c):
    p = a + b - c
    pa, pb, pc = np.abs(p - a), np.abs(p - b), np.abs(p - c)
    return np.where((pa <= pb) & (pa <= pc), a, np.where(pb <= pc, b, c))


def _filtered_rows(data: np.ndarray, bpp: int, filter_type: int) -> np.ndarray:
    """PNG scanlines (filter byte first) of ``data``, rows × bytes, all rows with one filter type."""
    x = data.astype(np.int16)
    a = np.zeros_like(x)
    a[:, bpp:] = x[:, :-bpp]
    b = np.zeros_like(x)
    b[1:] = x[:-1]
    c = np.zeros_like(x)
    c[1:, bpp:] = x[:-1, :-bpp]
    predictor = {0: 0, 1: a, 2: b, 3: (a + b) // 2, 4: _paeth(a, b, c) if filter_type == 4 else 0}[filter_type]
    out = ((x - predictor) % 256).astype(np.uint8)
    return np.concatenate([np.full((x.shape[0], 1), filter_type, np.uint8), out], axis=1)


def write_png(path, pixels, *, filter_type: int = 1) -> Path:
    """Write an 8- or 16-bit PNG (grey or RGB) with one row filter throughout (ISO/IEC 15948).

    Parameters
    ----------
    pixels : numpy.ndarray
        ``uint8`` or ``uint16``, shape (H, W) or (H, W, 3).
    filter_type : {0, 1, 2, 3, 4}
        None, Sub, Up, Average or Paeth.
    """
    from ..files import write_atomically

    a = np.asarray(pixels)
    if a.dtype not in (np.uint8, np.uint16) or a.ndim not in (2, 3) or (a.ndim == 3 and a.shape[2] != 3):
        raise FilmopticError("write_png needs uint8 or uint16 pixels shaped (H, W) or (H, W, 3)")
    if filter_type not in range(5):
        raise FilmopticError("PNG filter types are 0–4")
    height, width = a.shape[:2]
    depth = 8 if a.dtype == np.uint8 else 16
    channels = 1 if a.ndim == 2 else 3
    data = a.astype(">u2" if depth == 16 else np.uint8).reshape(height, -1).view(np.uint8)
    rows = _filtered_rows(data, channels * depth // 8, filter_type)

    def chunk(kind: bytes, body: bytes) -> bytes:
        return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body) & 0xFFFFFFFF)

    header = struct.pack(">IIBBBBB", width, height, depth, 2 if channels == 3 else 0, 0, 0, 0)
    content = (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", header)
               + chunk(b"IDAT", zlib.compress(rows.tobytes(), 6)) + chunk(b"IEND", b""))
    return write_atomically(path, lambda fh: fh.write(content), mode="wb")


def write_jpeg(path, rgb8, *, quality: int = 75, orientation: int | None = None) -> Path:
    """Save 8-bit sRGB pixels as a JPEG through Pillow (quality 75 is Pillow's and most cameras'
    "normal"), optionally tagged with an EXIF orientation."""
    import io

    from PIL import Image

    from ..files import write_atomically

    image = Image.fromarray(np.asarray(rgb8, dtype=np.uint8))
    options = {"quality": int(quality)}
    if orientation is not None:
        exif = Image.Exif()
        exif[0x0112] = int(orientation)
        options["exif"] = exif
    buffer = io.BytesIO()
    image.save(buffer, format="JPEG", **options)
    return write_atomically(path, lambda fh: fh.write(buffer.getvalue()), mode="wb")
