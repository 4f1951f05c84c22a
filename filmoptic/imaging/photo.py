"""Photos as measurements: reading, orienting, linearising, and reducing them to a grid of cells.

A camera is used here as a many-pixel light meter. For that its pixel values must be made
proportional to light again and be reduced to a modest number of cells whose means are far less
noisy than single pixels.

Reading
    JPEG, PNG and TIFF at 8 or 16 bits per channel through Pillow (imported when a file is read);
    camera RAW files (``.dng``, ``.cr2``, ``.nef``, …) through the optional ``rawpy`` package,
    demosaiced to linear 16-bit values in the sRGB primaries with the camera's white balance.
    Pillow hands 16-bit colour files over as 8-bit; :func:`read_photo` recovers all 16 bits by
    decoding the file's compressed data twice, once keeping each sample's high byte and once its
    low byte (both through Pillow's own decoders), which tests pin for PNG and TIFF.
Orientation
    The EXIF orientation tag (Exif 2.3, tag 0x0112) is applied, so that pixel coordinates given by
    the user are those of the picture as every viewer shows it.
Linearisation
    8-bit files are decoded with the sRGB transfer function (IEC 61966-2-1); a camera's own tone
    curve is only approximately sRGB, which ``--known`` calibration can correct for. 16-bit files
    and RAW are taken as linear (what raw converters and scientific cameras write); an explicit
    ``encoding`` overrides either choice. Relative luminance is ``Y = 0.2126 R + 0.7152 G +
    0.0722 B`` on linear values, the Y row of the standard's sRGB-to-XYZ matrix (IEC 61966-2-1).
Cells
    A rectangle of the photo is divided into ``nx × ny`` equal cells (the few pixels that do not
    fill a whole cell at the rectangle's edges are left out, evenly on both sides). Per cell:
    the mean of the per-pixel value (a ratio to a flat field, or the linear signal), the pixel
    noise, the number of usable pixels and the fractions of saturated and masked pixels. The photo
    is processed in bands of rows with numpy reductions (reshape and sum), never pixel by pixel,
    and only one band is held as floating point at a time, so memory stays bounded for photos of
    any size.
Noise
    The per-pixel noise is estimated from differences between pixels two apart along a row,
    ``σ² = ⟨(v[i+2] − v[i])²⟩ / 2``, which a smooth change of thickness within the cell hardly
    affects (unlike the plain standard deviation). Neighbouring pixels of a colour camera share
    samples through demosaicing, so each 2 × 2 block counts as one independent sample in the
    standard uncertainty of the cell's mean, ``σ / √(n / 4)`` (common practice for Bayer-pattern
    sensors).

References
----------
IEC 61966-2-1:1999, *Multimedia systems and equipment — Colour measurement and management —
Part 2-1: Default RGB colour space — sRGB* (transfer function, primaries, D65 white).
JEITA CP-3451C, *Exchangeable image file format for digital still cameras: Exif Version 2.3*
(2012), tag 0x0112 Orientation.
ISO/IEC 15948:2004, *Portable Network Graphics (PNG)*; Adobe, *TIFF Revision 6.0* (1992).
"""

from __future__ import annotations

import re
import sys
import warnings
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np

from ..cie.transforms import MATRIX_SRGB_TO_XYZ
from ..cie.transforms import srgb_decode  # noqa: F401 - part of this module's API (IEC 61966-2-1)
from ..cie.transforms import srgb_encode as _srgb_encode
from ..errors import FilmopticError
from ..units import parse_length_nm, parse_number

__all__ = [
    "MAX_PIXELS",
    "MAX_CELLS",
    "MIN_CELL_PX",
    "SATURATED_LEVEL",
    "DARK_LEVEL",
    "NOISE_BLOCK_AREA",
    "RAW_SUFFIXES",
    "SRGB_TO_XYZ",
    "LUMINANCE_WEIGHTS",
    "srgb_decode",
    "srgb_encode",
    "Photo",
    "read_photo",
    "read_mask",
    "orient",
    "parse_rectangle",
    "parse_cells",
    "parse_known",
    "CellGrid",
    "cell_grid",
    "CellStatistics",
    "cell_statistics",
]

# --------------------------------------------------------------------------------------------
# Limits and levels (one place; a central limits module may take them over)
# --------------------------------------------------------------------------------------------

#: Largest photo read, in pixels (100 megapixels covers every common camera); ``max_pixels``
#: (``--max-megapixels``) raises it.
MAX_PIXELS = 100_000_000
#: Largest number of cells in a map.
MAX_CELLS = 100_000
#: Smallest cell side, in pixels: the noise estimate needs pixels two apart and 2 × 2 blocks.
MIN_CELL_PX = 4
#: A pixel whose linear value reaches this in any channel is taken as saturated (8-bit sRGB code
#: 252 and above; JPEG ringing keeps clipped areas from reading exactly 255).
SATURATED_LEVEL = 0.975
#: A cell whose mean linear luminance lies below this is too dark to measure: at 8 bits the sRGB
#: code steps there are over 5 % of the signal.
DARK_LEVEL = 0.004
#: A cell is flagged saturated when more than this fraction of its pixels is.
SATURATED_FRACTION = 0.01
#: A cell lies outside the mapped area when less than this fraction of its pixels is inside the
#: mask.
MIN_INSIDE_FRACTION = 0.5
#: Pixels counted as one independent sample (a 2 × 2 block, see the module notes).
NOISE_BLOCK_AREA = 4
#: Pixels of floating-point work held at once (a band of rows).
BAND_PIXELS = 2_000_000
#: A flat-field pixel must carry at least this linear signal (after the dark frame) to divide by.
FLAT_FLOOR = 1e-4
#: File name endings read as camera RAW (through rawpy).
RAW_SUFFIXES = (".dng", ".cr2", ".cr3", ".crw", ".nef", ".nrw", ".arw", ".srf", ".sr2", ".orf",
                ".rw2", ".raf", ".pef", ".srw", ".x3f", ".3fr", ".iiq", ".erf", ".kdc", ".mrw",
                ".raw", ".rwl")

# --------------------------------------------------------------------------------------------
# sRGB (IEC 61966-2-1)
# --------------------------------------------------------------------------------------------

#: Linear sRGB → CIE XYZ (Y = 1 for white) as IEC 61966-2-1:1999 prints it (four decimals; the
#: matrix computed from the standard's primaries and D65 white differs by less than 5e-5): the
#: colour module's :data:`filmoptic.cie.transforms.MATRIX_SRGB_TO_XYZ`, read-only.
SRGB_TO_XYZ = MATRIX_SRGB_TO_XYZ
#: Relative luminance of linear sRGB: the Y row of :data:`SRGB_TO_XYZ`.
LUMINANCE_WEIGHTS = SRGB_TO_XYZ[1].copy()
LUMINANCE_WEIGHTS.setflags(write=False)


def srgb_encode(linear):
    """sRGB-encoded values in 0–1 from linear values, clipped to 0–1 first (for pictures); the
    transfer function is :func:`filmoptic.cie.transforms.srgb_encode`.

    Examples
    --------
    >>> round(float(srgb_encode(srgb_decode(0.5))), 12)
    0.5
    """
    return _srgb_encode(np.clip(np.asarray(linear, dtype=float), 0.0, 1.0))


@lru_cache(maxsize=8)
def _lut(bits: int, encoding: str) -> np.ndarray:
    """Linear value of every code of a ``bits``-deep channel, as float32 (a look-up table)."""
    codes = np.arange(2 ** bits, dtype=float) / (2 ** bits - 1)
    table = (srgb_decode(codes) if encoding == "sRGB" else codes).astype(np.float32)
    table.setflags(write=False)
    return table


# --------------------------------------------------------------------------------------------
# Photos
# --------------------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Photo:
    """A decoded, upright photo: integer pixel values and how they map to light.

    Attributes
    ----------
    pixels : numpy.ndarray
        ``(height, width, 3)`` for colour or ``(height, width)`` for grey, ``uint8`` or
        ``uint16``, already turned upright by the EXIF orientation (possibly a view).
    encoding : {"sRGB", "linear"}
        How codes map to light: the sRGB transfer function, or proportionally.
    bits : {8, 16}
    path : str
    orientation : int
        The EXIF orientation that was applied (1 = none).
    source : str
        What decoded it (``"JPEG"``, ``"PNG"``, ``"TIFF"``, ``"RAW (rawpy)"``, ``"array"``).
    """

    pixels: np.ndarray
    encoding: str
    bits: int
    path: str = ""
    orientation: int = 1
    source: str = "array"

    @property
    def height(self) -> int:
        return int(self.pixels.shape[0])

    @property
    def width(self) -> int:
        return int(self.pixels.shape[1])

    @property
    def is_colour(self) -> bool:
        return self.pixels.ndim == 3

    @property
    def label(self) -> str:
        return self.path or "the photo"

    def linear(self, rows: slice = slice(None), cols: slice = slice(None)) -> np.ndarray:
        """Linear values (0–1, float32) of a block of the photo, through a look-up table."""
        return _lut(self.bits, self.encoding)[self.pixels[rows, cols]]

    @classmethod
    def from_array(cls, pixels, encoding: str = "auto", path: str = "") -> "Photo":
        """A photo from an integer array (``uint8`` or ``uint16``), e.g. a rendered one.

        Examples
        --------
        >>> p = Photo.from_array(np.full((2, 3, 3), 255, np.uint8))
        >>> p.width, p.height, p.encoding, float(p.linear()[0, 0, 0])
        (3, 2, 'sRGB', 1.0)
        """
        pixels = np.asarray(pixels)
        if pixels.dtype not in (np.uint8, np.uint16) or pixels.ndim not in (2, 3) or (
                pixels.ndim == 3 and pixels.shape[2] != 3):
            raise FilmopticError("a photo array must be uint8 or uint16, shaped (height, width) or (height, width, 3)")
        bits = 8 if pixels.dtype == np.uint8 else 16
        return cls(pixels, _encoding_for(encoding, bits, raw=False), bits, path)


def _encoding_for(encoding: str, bits: int, raw: bool) -> str:
    text = str(encoding).strip().lower()
    if text == "auto":
        return "linear" if raw or bits == 16 else "sRGB"
    if text == "srgb":
        return "sRGB"
    if text == "linear":
        return "linear"
    raise FilmopticError(f"--encoding must be auto, srgb or linear, got {encoding!r}")


def orient(pixels: np.ndarray, orientation: int) -> np.ndarray:
    """Turn an image array upright by its EXIF orientation (1–8; Exif 2.3, tag 0x0112).

    Returns a view where it can. Orientation 6 (stored turned 90° anticlockwise, "the top is on
    the right") is rotated 90° clockwise, and so on for the others.

    Examples
    --------
    >>> a = np.arange(6).reshape(2, 3)
    >>> orient(a, 6).tolist()
    [[3, 0], [4, 1], [5, 2]]
    """
    transforms = {
        1: lambda a: a,
        2: lambda a: a[:, ::-1],
        3: lambda a: a[::-1, ::-1],
        4: lambda a: a[::-1, :],
        5: lambda a: a.swapaxes(0, 1),
        6: lambda a: a.swapaxes(0, 1)[:, ::-1],
        7: lambda a: a.swapaxes(0, 1)[::-1, ::-1],
        8: lambda a: a.swapaxes(0, 1)[::-1, :],
    }
    return transforms.get(int(orientation), transforms[1])(pixels)


def _check_size(width: int, height: int, max_pixels: int, what: str, path) -> None:
    if width * height > max_pixels:
        raise FilmopticError(
            f"{what} {path} has {width * height / 1e6:.0f} megapixels, more than the limit of "
            f"{max_pixels / 1e6:.0f}; raise it with --max-megapixels if the machine has the memory"
        )
    if width < 1 or height < 1:
        raise FilmopticError(f"{what} {path} has no pixels")


_SWAPPED_BYTE = {"B": "L", "L": "B", "N": "B" if sys.byteorder == "little" else "L"}


def _sixteen_bit_rawmode(tile) -> str | None:
    """The rawmode of a 16-bit-per-channel colour tile (``RGB;16B``…), which Pillow keeps at 8 bits.

    A tile is ``(codec, extents, offset, args)`` (a named tuple in recent Pillow, a plain one
    before); ``args`` is the rawmode or a tuple that starts with it.
    """
    args = tuple(tile)[3]
    rawmode = args if isinstance(args, str) else (args[0] if args else None)
    if isinstance(rawmode, str) and re.fullmatch(r"RGBA?;16[BLN]", rawmode):
        return rawmode
    return None


def _with_rawmode(tile, rawmode):
    codec, extents, offset, args = tuple(tile)
    args = rawmode if isinstance(args, str) else (rawmode, *tuple(args)[1:])
    return tile._replace(args=args) if hasattr(tile, "_replace") else (codec, extents, offset, args)


def _decode_16bit_colour(path, image_open) -> np.ndarray:
    """All 16 bits of a 16-bit colour PNG or TIFF, which Pillow would hand over as 8-bit.

    Pillow's decoders undo the file's compression and filtering byte by byte and then keep one
    byte of each 16-bit sample. Decoding once keeping the high byte (the file's own rawmode) and
    once with the byte order swapped (which keeps the low byte) gives both halves exactly.
    """
    halves = []
    for swap in (False, True):
        with image_open(path) as im:
            tiles = list(im.tile)
            if not tiles or any(_sixteen_bit_rawmode(t) is None for t in tiles):
                raise FilmopticError(f"{path}: unexpected 16-bit layout; save the photo as 8-bit or 16-bit PNG/TIFF")
            if swap:
                swapped = []
                for t in tiles:
                    rawmode = _sixteen_bit_rawmode(t)
                    swapped.append(_with_rawmode(t, rawmode[:-1] + _SWAPPED_BYTE[rawmode[-1]]))
                im.tile = swapped
            im.load()
            halves.append(np.asarray(im)[..., :3])
    return (halves[0].astype(np.uint16) << 8) | halves[1].astype(np.uint16)


def _pillow_pixels(im, path, image_open):
    """(pixels, bits) of an opened Pillow image, keeping 16-bit samples."""
    mode = im.mode
    if mode in ("RGB", "RGBA", "RGBX") and im.tile and all(_sixteen_bit_rawmode(t) for t in im.tile):
        return _decode_16bit_colour(path, image_open), 16
    im.load()
    if mode in ("I;16", "I;16B", "I;16L", "I;16N"):
        return np.asarray(im).astype(np.uint16), 16
    if mode == "I":
        a = np.asarray(im)
        if a.size and (a.min() < 0 or a.max() > 65535):
            raise FilmopticError(f"{path}: 32-bit integer pixels are not supported; save the photo at 8 or 16 bits")
        return a.astype(np.uint16), 16
    if mode == "F":
        raise FilmopticError(f"{path}: floating-point pixels are not supported; save the photo at 8 or 16 bits")
    if mode == "L":
        return np.asarray(im), 8
    if mode == "LA":
        return np.asarray(im.convert("L")), 8
    if mode in ("RGB", "RGBA", "RGBX"):
        a = np.asarray(im)
        return (a[..., :3] if a.shape[-1] != 3 else a), 8
    return np.asarray(im.convert("RGB")), 8


def _read_raw(path: Path, encoding: str, max_pixels: int, what: str) -> Photo:
    try:
        import rawpy
    except ImportError:
        raise FilmopticError(
            f"{what} {path} is a camera RAW file, which needs the optional rawpy package: "
            "pip install 'filmoptic[raw]' (or save the photo as a 16-bit TIFF)"
        ) from None
    try:
        with rawpy.imread(str(path)) as raw:
            sizes = raw.sizes
            _check_size(int(sizes.width), int(sizes.height), max_pixels, what, path)
            # Linear output (gamma 1), no automatic brightening, 16 bits, sRGB primaries, the
            # camera's white balance; LibRaw turns the image upright itself.
            pixels = raw.postprocess(gamma=(1, 1), no_auto_bright=True, output_bps=16,
                                     use_camera_wb=True, output_color=rawpy.ColorSpace.sRGB)
    except FilmopticError:
        raise
    except Exception as exc:  # rawpy raises its own LibRaw errors for damaged or unknown files
        raise FilmopticError(f"cannot read {what} {path} as camera RAW: {exc}") from None
    pixels = np.asarray(pixels, dtype=np.uint16)
    photo = Photo(pixels, _encoding_for(encoding, 16, raw=True), 16, str(path), 1, "RAW (rawpy)")
    _check_not_black(photo, what)
    return photo


def _check_not_black(photo: Photo, what: str) -> None:
    if not np.any(photo.pixels):
        raise FilmopticError(
            f"{what} {photo.label} is completely black (every pixel is 0): check the exposure, "
            "the lens cap and the file"
        )


def read_photo(path, *, encoding: str = "auto", max_pixels: int = MAX_PIXELS, what: str = "photo") -> Photo:
    """Read an image file as an upright :class:`Photo`.

    Parameters
    ----------
    path : str or Path
        JPEG, PNG or TIFF (8 or 16 bits per channel, colour or grey), or a camera RAW file
        (needs ``rawpy``).
    encoding : {"auto", "srgb", "linear"}
        How codes map to light; ``auto``: sRGB for 8-bit files, linear for 16-bit and RAW.
    max_pixels : int
        Refuse larger images at once (before decoding).
    what : str
        Names the file in messages ("photo", "flat-field photo", …).

    Raises
    ------
    FilmopticError
        No such file, not an image, a damaged or truncated file, too many pixels, an all-black
        image, or a pixel format that is not supported.
    """
    path = Path(path).expanduser()
    if not path.is_file():
        raise FilmopticError(f"{what} {path}: no such file")
    if path.suffix.lower() in RAW_SUFFIXES:
        return _read_raw(path, encoding, max_pixels, what)

    from PIL import Image, UnidentifiedImageError

    def image_open(p):
        # The size is checked against our own limit below; Pillow's bomb guard would only
        # second-guess it with a different number.
        limit = Image.MAX_IMAGE_PIXELS
        try:
            Image.MAX_IMAGE_PIXELS = None
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                return Image.open(p)
        finally:
            Image.MAX_IMAGE_PIXELS = limit

    try:
        im = image_open(path)
    except UnidentifiedImageError:
        raise FilmopticError(
            f"cannot read {what} {path}: not an image file filmoptic reads (JPEG, PNG or TIFF; "
            "camera RAW with the raw extra)"
        ) from None
    except OSError as exc:
        raise FilmopticError(f"cannot read {what} {path}: {exc.strerror or exc}") from None
    with im:
        width, height = im.size
        _check_size(width, height, max_pixels, what, path)
        # Pixels first: reading the EXIF block of a PNG loads the image, which would lose the
        # information needed to keep 16-bit samples.
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                pixels, bits = _pillow_pixels(im, path, image_open)
        except FilmopticError:
            raise
        except (OSError, SyntaxError, ValueError, EOFError) as exc:
            raise FilmopticError(f"cannot read {what} {path}: the file is damaged or truncated ({exc})") from None
        try:
            orientation = int(im.getexif().get(0x0112, 1) or 1)
        except Exception:  # a damaged EXIF block: the picture itself may still be fine
            orientation = 1
        source = im.format or "image"
    if orientation not in range(1, 9):
        orientation = 1
    photo = Photo(orient(pixels, orientation), _encoding_for(encoding, bits, raw=False), bits, str(path),
                  orientation, source)
    _check_not_black(photo, what)
    return photo


def read_mask(path, shape, *, max_pixels: int = MAX_PIXELS) -> np.ndarray:
    """A mask image as a boolean array: True where the image is light (above half of full scale).

    The mask must have the photo's size (after both are turned upright); white marks what to map.
    """
    mask_photo = read_photo(path, encoding="linear", max_pixels=max_pixels, what="mask")
    pixels = mask_photo.pixels
    if pixels.shape[:2] != tuple(shape):
        raise FilmopticError(
            f"mask {path} is {pixels.shape[1]}×{pixels.shape[0]} pixels but the photo is "
            f"{shape[1]}×{shape[0]}; draw the mask on the photo itself"
        )
    half = (2 ** mask_photo.bits - 1) / 2
    grey = pixels if pixels.ndim == 2 else pixels.max(axis=2)
    mask = grey > half
    if not mask.any():
        raise FilmopticError(f"mask {path} is dark everywhere: paint the area to map white")
    return mask


# --------------------------------------------------------------------------------------------
# Rectangles and cells
# --------------------------------------------------------------------------------------------


def parse_rectangle(text, width: int, height: int, what: str = "--region") -> tuple:
    """``X0,Y0,X1,Y1`` in pixels, or as fractions of the width and height when all four are at most 1.

    Returns integer pixel bounds ``(x0, y0, x1, y1)``, x1 and y1 exclusive, x to the right and
    y downwards from the top-left corner of the upright photo.

    Examples
    --------
    >>> parse_rectangle("100,50,300,250", 400, 300)
    (100, 50, 300, 250)
    >>> parse_rectangle("0.25,0,0.75,0.5", 400, 300)
    (100, 0, 300, 150)
    """
    if isinstance(text, (tuple, list)):
        parts = list(text)
    else:
        parts = [p for p in re.split(r"\s*,\s*", str(text).strip()) if p != ""]
    if len(parts) != 4:
        raise FilmopticError(
            f"{what}: write a rectangle as X0,Y0,X1,Y1 in pixels (or fractions 0–1 of the photo), got {text!r}"
        )
    values = [float(p) if isinstance(p, (int, float)) else parse_number(p, what) for p in parts]
    if all(0.0 <= v <= 1.0 for v in values):
        x0, x1 = (round(values[i] * width) for i in (0, 2))
        y0, y1 = (round(values[i] * height) for i in (1, 3))
    else:
        if any(v != round(v) for v in values):
            raise FilmopticError(f"{what}: pixel positions are whole numbers (or give all four as fractions 0–1), got {text!r}")
        x0, y0, x1, y1 = (int(round(v)) for v in values)
    if not (0 <= x0 < x1 <= width and 0 <= y0 < y1 <= height):
        raise FilmopticError(
            f"{what} {text}: need 0 <= X0 < X1 <= {width} and 0 <= Y0 < Y1 <= {height} "
            "(pixels of the upright photo)"
        )
    return int(x0), int(y0), int(x1), int(y1)


def parse_cells(text) -> tuple:
    """``NXxNY`` (columns × rows of cells), e.g. ``40x30``.

    Examples
    --------
    >>> parse_cells("40x30"), parse_cells("12 × 8")
    ((40, 30), (12, 8))
    """
    match = re.fullmatch(r"\s*(\d+)\s*[x×X*]\s*(\d+)\s*", str(text))
    if not match:
        raise FilmopticError(f"--cells: write columns x rows like 40x30, got {text!r}")
    nx, ny = int(match.group(1)), int(match.group(2))
    if nx < 1 or ny < 1:
        raise FilmopticError(f"--cells {text}: need at least one column and one row")
    return nx, ny


def parse_known(text, width: int, height: int) -> tuple:
    """``X0,Y0,X1,Y1=THICKNESS`` → (rectangle, thickness in nm).

    Examples
    --------
    >>> parse_known("10,10,50,40=9.5nm", 400, 300)
    ((10, 10, 50, 40), 9.5)
    """
    rect_text, eq, thickness_text = str(text).partition("=")
    if not eq:
        raise FilmopticError(f"--known: write X0,Y0,X1,Y1=THICKNESS like 10,10,50,40=9.5nm, got {text!r}")
    thickness = parse_length_nm(thickness_text.strip(), what="--known thickness")
    return parse_rectangle(rect_text, width, height, what="--known"), thickness


@dataclass(frozen=True)
class CellGrid:
    """Equal cells tiling a rectangle of the photo: ``nx × ny`` cells of ``cell_w × cell_h`` pixels
    whose top-left corner is pixel ``(x0, y0)``."""

    x0: int
    y0: int
    nx: int
    ny: int
    cell_w: int
    cell_h: int

    @property
    def x1(self) -> int:
        return self.x0 + self.nx * self.cell_w

    @property
    def y1(self) -> int:
        return self.y0 + self.ny * self.cell_h

    def x_centres_px(self) -> np.ndarray:
        """Centres of the cell columns, in pixels from the photo's left edge."""
        return self.x0 + (np.arange(self.nx) + 0.5) * self.cell_w

    def y_centres_px(self) -> np.ndarray:
        """Centres of the cell rows, in pixels from the photo's top edge."""
        return self.y0 + (np.arange(self.ny) + 0.5) * self.cell_h


def cell_grid(rect, *, cells=None, cell_px=None) -> CellGrid:
    """Cells tiling the rectangle ``(x0, y0, x1, y1)``: ``cells=(nx, ny)`` or square cells of
    ``cell_px`` pixels. Pixels left over at the edges are split evenly between both sides.

    Examples
    --------
    >>> cell_grid((0, 0, 103, 50), cells=(10, 5))
    CellGrid(x0=1, y0=0, nx=10, ny=5, cell_w=10, cell_h=10)
    """
    x0, y0, x1, y1 = rect
    width, height = x1 - x0, y1 - y0
    if cell_px is not None:
        size = int(round(float(cell_px)))
        if size < MIN_CELL_PX:
            raise FilmopticError(
                f"--cell: a cell of {float(cell_px):.2g} pixels is too small; cells need at least "
                f"{MIN_CELL_PX} × {MIN_CELL_PX} pixels"
            )
        nx, ny, cw, ch = width // size, height // size, size, size
        if nx < 1 or ny < 1:
            raise FilmopticError(
                f"--cell: a cell of {size} pixels does not fit in the {width}×{height}-pixel area; choose smaller cells"
            )
    else:
        nx, ny = cells
        cw, ch = width // nx, height // ny
        if cw < MIN_CELL_PX or ch < MIN_CELL_PX:
            raise FilmopticError(
                f"--cells {nx}x{ny}: the {width}×{height}-pixel area gives cells of {cw}×{ch} pixels; "
                f"cells need at least {MIN_CELL_PX}×{MIN_CELL_PX}, so choose fewer cells"
            )
    if nx * ny > MAX_CELLS:
        raise FilmopticError(f"{nx}×{ny} cells are more than the limit of {MAX_CELLS}; choose fewer or larger cells")
    return CellGrid(x0 + (width - nx * cw) // 2, y0 + (height - ny * ch) // 2, nx, ny, cw, ch)


# --------------------------------------------------------------------------------------------
# Per-cell statistics
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class CellStatistics:
    """What each cell of a photo holds, arrays of shape ``(ny, nx)`` (``(ny, nx, 3)`` for colour
    values).

    Attributes
    ----------
    mean : numpy.ndarray
        Mean per-pixel value of the usable pixels: the linear luminance or RGB (dark frame
        subtracted), divided pixel by pixel by the flat field when there is one. NaN where a cell
        has no usable pixel.
    noise : numpy.ndarray
        Per-pixel noise standard deviation (from pixels two apart).
    sem : numpy.ndarray
        Standard uncertainty of ``mean`` from that noise (2 × 2 blocks as independent samples).
    count : numpy.ndarray
        Usable pixels.
    inside : numpy.ndarray
        Fraction of the cell's pixels inside the mask (1 without one).
    saturated : numpy.ndarray
        Fraction of the inside pixels saturated in the photo or the flat field.
    level : numpy.ndarray
        Mean linear luminance of the photo itself (dark frame subtracted), before any division.
    flat_level : numpy.ndarray or None
        The same for the flat field.
    """

    mean: np.ndarray
    noise: np.ndarray
    sem: np.ndarray
    count: np.ndarray
    inside: np.ndarray
    saturated: np.ndarray
    level: np.ndarray
    flat_level: np.ndarray | None


def _check_same_size(photo: Photo, other: Photo | None, what: str) -> None:
    if other is not None and (other.height, other.width) != (photo.height, photo.width):
        raise FilmopticError(
            f"{what} {other.label} is {other.width}×{other.height} pixels but the photo is "
            f"{photo.width}×{photo.height}; take both with the same camera settings and orientation"
        )


def _as_channels(values: np.ndarray, channels: str) -> np.ndarray:
    """(h, w, C): luminance (C = 1) or RGB (C = 3) of a block of linear values."""
    if channels == "luminance":
        y = values if values.ndim == 2 else values @ LUMINANCE_WEIGHTS.astype(np.float32)
        return y[..., None]
    if values.ndim == 2:
        return np.repeat(values[..., None], 3, axis=2)
    return values


def _saturated(values: np.ndarray) -> np.ndarray:
    high = values >= SATURATED_LEVEL
    return high if high.ndim == 2 else high.any(axis=2)


def cell_statistics(photo: Photo, grid: CellGrid, *, flat: Photo | None = None, dark: Photo | None = None,
                    mask=None, channels: str = "luminance", progress=None) -> CellStatistics:
    """Per-cell mean, noise and flags of a photo, optionally flat-fielded and dark-subtracted.

    Per pixel the value is ``P − D`` or, with a flat field, ``(P − D) / (F − D)`` (flat-field
    correction, common practice in imaging photometry), where P, F and D are the linear luminance
    (or each linear RGB channel) of the photo, the flat field and the dark frame. Flat-field
    pixels without signal are left out. The work runs over bands of rows; each band is reduced
    to the cells with numpy reshapes and sums.

    Parameters
    ----------
    photo, flat, dark : Photo
        Same size, upright.
    grid : CellGrid
    mask : numpy.ndarray of bool, optional
        The photo's shape; False pixels are left out.
    channels : {"luminance", "rgb"}
    progress : callable, optional
        Called with the number of rows done after each band.

    Examples
    --------
    A flat grey photo: every cell reads the grey's linear value with no noise.

    >>> p = Photo.from_array(np.full((8, 8, 3), 128, np.uint8))
    >>> s = cell_statistics(p, cell_grid((0, 0, 8, 8), cells=(2, 2)))
    >>> round(float(s.mean[0, 0]), 6), float(s.noise[0, 0]), int(s.count[0, 0])
    (0.215861, 0.0, 16)
    """
    if channels not in ("luminance", "rgb"):
        raise FilmopticError(f"channels must be 'luminance' or 'rgb', got {channels!r}")
    _check_same_size(photo, flat, "flat-field photo")
    _check_same_size(photo, dark, "dark frame")
    if mask is not None and np.shape(mask) != (photo.height, photo.width):
        raise FilmopticError("the mask must have the photo's size")
    if grid.x1 > photo.width or grid.y1 > photo.height or grid.x0 < 0 or grid.y0 < 0:
        raise FilmopticError("the cells reach outside the photo")
    C = 1 if channels == "luminance" else 3
    ny, nx, cw, ch = grid.ny, grid.nx, grid.cell_w, grid.cell_h
    n = np.zeros((ny, nx))
    inside_n = np.zeros((ny, nx))
    sat_n = np.zeros((ny, nx))
    s1 = np.zeros((ny, nx, C))
    d2 = np.zeros((ny, nx, C))
    nd = np.zeros((ny, nx))
    level = np.zeros((ny, nx))
    flat_level = np.zeros((ny, nx)) if flat is not None else None
    cols = slice(grid.x0, grid.x1)
    band_rows = max(1, BAND_PIXELS // max(1, grid.x1 - grid.x0))

    for r0 in range(grid.y0, grid.y1, band_rows):
        r1 = min(r0 + band_rows, grid.y1)
        rows = slice(r0, r1)
        bh = r1 - r0
        raw = photo.linear(rows, cols)
        saturated = _saturated(raw)
        P = _as_channels(raw, channels)
        del raw
        if dark is not None:
            P -= _as_channels(dark.linear(rows, cols), channels)
        signal = P[..., 0] if C == 1 else P @ LUMINANCE_WEIGHTS.astype(np.float32)
        inside = np.ones((bh, P.shape[1]), bool) if mask is None else np.asarray(mask[rows, cols], bool)
        usable = inside.copy()
        if flat is not None:
            raw_flat = flat.linear(rows, cols)
            saturated |= _saturated(raw_flat)
            F = _as_channels(raw_flat, channels)
            del raw_flat
            if dark is not None:
                F -= _as_channels(dark.linear(rows, cols), channels)
            flat_signal = F[..., 0] if C == 1 else F @ LUMINANCE_WEIGHTS.astype(np.float32)
            has_signal = np.all(F > FLAT_FLOOR, axis=2)
            usable &= has_signal
            V = P / np.where(has_signal[..., None], F, np.float32(1.0))
            del F
        else:
            V = P
        V[~usable] = 0.0
        # Lag-2 differences along rows, kept with the left pixel's cell.
        dV = np.zeros_like(V)
        dV[:, :-2] = V[:, 2:] - V[:, :-2]
        d_ok = np.zeros_like(usable)
        d_ok[:, :-2] = usable[:, 2:] & usable[:, :-2]
        dV[~d_ok] = 0.0

        # Rows of cells this band touches, and where each starts within the band.
        cell_rows = (np.arange(r0, r1) - grid.y0) // ch
        starts = np.flatnonzero(np.r_[True, np.diff(cell_rows) != 0])
        target = cell_rows[starts]

        def into_cells(x):
            # (bh, nx*cw, ...) → per band row and cell column → per cell row.
            per_row = x.reshape(bh, nx, cw, *x.shape[2:]).sum(axis=2, dtype=np.float64)
            return np.add.reduceat(per_row, starts, axis=0)

        n[target] += into_cells(usable)
        inside_n[target] += into_cells(inside)
        sat_n[target] += into_cells(saturated & inside)
        s1[target] += into_cells(V)
        d2[target] += into_cells(dV * dV)
        nd[target] += into_cells(d_ok)
        level[target] += into_cells(np.where(usable, signal, 0.0))
        if flat is not None:
            flat_level[target] += into_cells(np.where(usable, flat_signal, 0.0))
        if progress is not None:
            progress(bh)

    with np.errstate(invalid="ignore", divide="ignore"):
        mean = s1 / n[..., None]
        noise = np.sqrt(d2 / (2.0 * nd[..., None]))
        sem = noise / np.sqrt(np.maximum(n, 1.0) / NOISE_BLOCK_AREA)[..., None]
        level = level / n
        if flat_level is not None:
            flat_level = flat_level / n
        saturated_fraction = np.where(inside_n > 0, sat_n / np.maximum(inside_n, 1.0), 0.0)
    mean[n == 0] = np.nan
    noise = np.where(nd[..., None] > 0, noise, 0.0)
    sem = np.where(n[..., None] > 0, sem, np.nan)
    if C == 1:
        mean, noise, sem = mean[..., 0], noise[..., 0], sem[..., 0]
    return CellStatistics(mean, noise, sem, n, inside_n / (cw * ch), saturated_fraction, level, flat_level)


def rectangle_statistics(photo: Photo, rect, **options) -> CellStatistics:
    """:func:`cell_statistics` of one rectangle taken as a single cell (a bare or known region)."""
    x0, y0, x1, y1 = rect
    if x1 - x0 < MIN_CELL_PX or y1 - y0 < MIN_CELL_PX:
        raise FilmopticError(f"the rectangle {x0},{y0},{x1},{y1} is smaller than {MIN_CELL_PX}×{MIN_CELL_PX} pixels")
    return cell_statistics(photo, CellGrid(x0, y0, 1, 1, x1 - x0, y1 - y0), **options)
