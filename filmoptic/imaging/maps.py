"""A thickness map from a photo: the one entry point of :mod:`filmoptic.imaging`.

:func:`map_thickness` reads the photo and its references, divides the mapped area into cells,
solves every cell (:mod:`~filmoptic.imaging.transmission` or :mod:`~filmoptic.imaging.colour_map`)
and adds statistics and fitted profiles (:mod:`~filmoptic.imaging.profile`).

Coordinates are those of the upright photo (EXIF orientation applied): x to the right and y
downwards from the top-left corner, in pixels, or in millimetres when a scale (pixels per mm) is
given. Cell positions are cell centres.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import FilmopticError
from .photo import CellGrid, Photo
from ._search import search_range_nm
from .profile import MapStats, Profile, fit_profile, map_stats

__all__ = ["SCALE_PX_PER_MM", "MODES", "FLAGS", "CSV_COLUMNS", "ThicknessMap", "map_thickness", "search_range_nm",
           "csv_header", "csv_rows", "map_json"]

#: Plausible photo scales in pixels per mm: from a kilometre per pixel to a nanometre per pixel.
SCALE_PX_PER_MM = (1e-6, 1e6)

#: Modes of :func:`map_thickness` (``"color"`` is accepted for ``"colour"``).
MODES = ("transmission", "colour")
#: Cell flags: solved (``ok``; ``several``: more than one thickness fits, the thinnest is given;
#: ``poor_match``: colour mode, ΔE00 above the limit), not solved (``saturated``, ``dark``,
#: ``unreachable``: no thickness in the range gives the reading), not mapped (``outside``).
FLAGS = ("ok", "several", "poor_match", "saturated", "dark", "unreachable", "outside")
#: The CSV grid's columns (the first two are ``x_px``, ``y_px`` without a scale).
CSV_COLUMNS = ("x_mm", "y_mm", "thickness_nm", "low_nm", "high_nm", "flag")
#: Cells along the longer side of the area when neither cells nor a cell size is given.
DEFAULT_CELLS_LONG_SIDE = 40


@dataclass(frozen=True)
class ThicknessMap:
    """A film-thickness map. Cell arrays have shape ``(ny, nx)``; row 0 is the top of the photo.

    Attributes
    ----------
    mode : {"transmission", "colour"}
    stack : str
    photo : str
        The photo's path.
    grid : CellGrid
        Where the cells lie in the upright photo, in pixels.
    unit : {"mm", "px"}
    scale_px_per_mm : float or None
    x, y : numpy.ndarray
        Cell-centre positions, (nx,) and (ny,), in ``unit`` from the photo's top-left corner.
    thickness_nm, low_nm, high_nm : numpy.ndarray
        The thickness and its interval (NaN where not solved).
    flag : numpy.ndarray of str
        One of :data:`FLAGS` per cell.
    ratio, ratio_sigma : numpy.ndarray or None
        Transmission mode: the luminance ratio to the reference (after the gain) and its standard
        uncertainty.
    Lab, delta_E00 : numpy.ndarray or None
        Colour mode: each cell's CIELAB (ny, nx, 3) and the ΔE00 of its match (the confidence).
    reference : str
        ``"bare"``, ``"open"`` (transmission); ``"white"``, ``"bare"``, ``"open"`` or ``"none"``
        (colour).
    gain : float or None
        Transmission mode with a known region: modelled / measured reading there.
    gains : tuple or None
        Colour mode with a white or bare reference: the gain applied to each of R, G, B.
    seed : str or None
        Colour mode: what fixed the interference order.
    illuminant : str
    range_nm : tuple
        Thicknesses searched.
    stats : MapStats
    profile : Profile
    notes : tuple of str
        What the user should know about this map (assumptions, missing references).
    """

    mode: str
    stack: str
    photo: str
    grid: CellGrid
    unit: str
    scale_px_per_mm: float | None
    x: np.ndarray
    y: np.ndarray
    thickness_nm: np.ndarray
    low_nm: np.ndarray
    high_nm: np.ndarray
    flag: np.ndarray
    ratio: np.ndarray | None
    ratio_sigma: np.ndarray | None
    Lab: np.ndarray | None
    delta_E00: np.ndarray | None
    reference: str
    gain: float | None
    gains: tuple | None
    seed: str | None
    illuminant: str
    range_nm: tuple
    stats: MapStats
    profile: Profile
    notes: tuple


def _photo(value, encoding, max_pixels, what):
    from .photo import read_photo

    if value is None or isinstance(value, Photo):
        return value
    return read_photo(value, encoding=encoding, max_pixels=max_pixels, what=what)


def _rect(value, photo, what):
    from .photo import parse_rectangle

    if value is None:
        return None
    return parse_rectangle(value, photo.width, photo.height, what=what)


def _known(value, photo):
    from .photo import parse_known, parse_rectangle
    from ..units import parse_length_nm

    if value is None:
        return None
    if isinstance(value, str):
        return parse_known(value, photo.width, photo.height)
    rect, thickness = value
    thickness = thickness if isinstance(thickness, (int, float)) else parse_length_nm(str(thickness), "--known thickness")
    return parse_rectangle(rect, photo.width, photo.height, what="--known"), float(thickness)


def _mode(mode: str) -> str:
    text = str(mode).strip().lower()
    if text == "color":
        return "colour"
    if text not in MODES:
        raise FilmopticError(f"--mode must be transmission or colour, got {mode!r}")
    return text


def map_thickness(stack, photo, *, mode="transmission", bare=None, flat=None, dark=None, white=None,
                  region=None, mask=None, cells=None, cell_mm=None, cell_px=None, scale_px_per_mm=None,
                  illuminant="D65", observer=2, known=None, encoding="auto", range_nm=None, angle_deg=0.0,
                  ambient="air", extrapolate=False, max_pixels=None, progress=None) -> ThicknessMap:
    """Thickness map of a film from a photo, with uniformity figures and a fitted profile.

    Parameters
    ----------
    stack : str or Stack
        The coating with its unknown thickness ``?`` (or ``LOW..HIGH``): ``"Ti ? / glass 4mm"``
        on a light box; ``"TiO2 ? / Ti"`` for an oxide colour.
    photo : str, Path or Photo
        JPEG, PNG or TIFF at 8 or 16 bits, or camera RAW (with ``rawpy``).
    mode : {"transmission", "colour"}
    bare : str or tuple, optional
        ``X0,Y0,X1,Y1`` (pixels, or fractions 0–1): bare substrate in the photo. Transmission:
        the reference; colour: calibrates each channel by the substrate's computed colour.
    flat : str, Path or Photo, optional
        The empty light box (transmission) or a white reference in place of the part (colour),
        taken with the same settings: a per-pixel flat field.
    dark : str, Path or Photo, optional
        A dark frame (lens covered, same settings).
    white : str or tuple, optional
        Colour mode: a white reference rectangle in the photo.
    region : str or tuple, optional
        The rectangle to map (default: the whole photo).
    mask : str, Path or bool array, optional
        An image of the photo's size, white where to map.
    cells : (nx, ny) or str, optional
        Number of cells (``"40x30"``); default 40 along the longer side, square cells.
    cell_mm : str or float, optional
        Square cells of this size (``"2mm"``); needs ``scale_px_per_mm``.
    cell_px : float, optional
        Square cells of this many pixels.
    scale_px_per_mm : float, optional
        Image scale: positions and profiles in mm.
    illuminant : str
        The light's spectrum: an illuminant name (D65 default) or a file.
    observer : {2, 10}
        Colour mode's CIE observer.
    known : str or ((x0, y0, x1, y1), thickness), optional
        ``X0,Y0,X1,Y1=9.5nm``: a region of known thickness. Transmission: calibrates a gain;
        colour: anchors the interference order.
    encoding : {"auto", "srgb", "linear"}
        How pixel codes map to light (auto: sRGB for 8-bit, linear for 16-bit and RAW).
    range_nm : (low, high), optional
        Thicknesses searched.
    angle_deg, ambient, extrapolate
        As everywhere in filmoptic.
    max_pixels : int, optional
        Largest photo read (default :data:`filmoptic.imaging.photo.MAX_PIXELS`).
    progress : callable, optional
        Called with the number of photo rows processed.

    Returns
    -------
    ThicknessMap

    Examples
    --------
    A synthetic 10 nm titanium film on glass, lit by a D65 light box, with a bare strip at the
    left as the reference:

    >>> from filmoptic.imaging.render import render_transmission, encode_linear16
    >>> field = np.full((60, 80), 10.0)
    >>> field[:, :16] = 0.0
    >>> rgb, _ = render_transmission("Ti ? / glass 4mm", field)
    >>> m = map_thickness("Ti ? / glass 4mm", Photo.from_array(encode_linear16(rgb)),
    ...                   bare="0,0,16,60", region="20,0,80,60", cells=(6, 6))
    >>> round(m.stats.mean_nm, 2), m.stats.cells_solved
    (10.0, 36)
    """
    from .photo import MAX_PIXELS, cell_grid, parse_cells, read_mask
    from ..units import parse_length_nm

    mode = _mode(mode)
    if max_pixels is not None and not 0 < max_pixels < np.inf:
        raise FilmopticError(f"the largest photo must be a positive number of pixels, got {max_pixels!r}")
    max_pixels = MAX_PIXELS if max_pixels is None else int(max_pixels)
    if scale_px_per_mm is not None and not (np.isfinite(scale_px_per_mm) and scale_px_per_mm > 0):
        raise FilmopticError(f"--scale must be a positive number of pixels per mm, got {scale_px_per_mm!r}")
    # A kilometre per pixel or a nanometre per pixel is a typo, not a photo; positions that far
    # out would also overflow the profile fits (r² of 1e300 mm).
    if scale_px_per_mm is not None and not SCALE_PX_PER_MM[0] <= scale_px_per_mm <= SCALE_PX_PER_MM[1]:
        raise FilmopticError(
            f"--scale {scale_px_per_mm:g}: a photo's scale lies between {SCALE_PX_PER_MM[0]:g} and "
            f"{SCALE_PX_PER_MM[1]:g} pixels per mm (a kilometre to a nanometre per pixel)"
        )
    if sum(v is not None for v in (cells, cell_mm, cell_px)) > 1:
        raise FilmopticError("give the cells as a count (--cells) or a size (--cell), not both")
    if cell_mm is not None and scale_px_per_mm is None:
        raise FilmopticError("--cell in mm needs --scale PX_PER_MM (pixels per millimetre in the photo)")
    photo = _photo(photo, encoding, max_pixels, "photo")
    flat = _photo(flat, encoding, max_pixels, "flat-field photo")
    dark = _photo(dark, encoding, max_pixels, "dark frame")
    if dark is not None and dark.is_colour != photo.is_colour and not photo.is_colour:
        raise FilmopticError("the dark frame is a colour image but the photo is grey; take both alike")
    area = _rect(region, photo, "--region") or (0, 0, photo.width, photo.height)
    bare_rect = _rect(bare, photo, "--bare")
    white_rect = _rect(white, photo, "--white")
    known_value = _known(known, photo)
    if mode == "transmission" and white_rect is not None:
        raise FilmopticError("--white is for colour mode; in transmission give --bare or --open")
    mask_array = None
    if mask is not None:
        mask_array = (np.asarray(mask, bool) if isinstance(mask, np.ndarray)
                      else read_mask(mask, (photo.height, photo.width), max_pixels=max_pixels))
        if mask_array.shape != (photo.height, photo.width):
            raise FilmopticError("the mask must have the photo's size")
        if region is None:
            ys, xs = np.nonzero(mask_array)
            area = (int(xs.min()), int(ys.min()), int(xs.max()) + 1, int(ys.max()) + 1)

    if cell_mm is not None:
        size_mm = (float(cell_mm) if isinstance(cell_mm, (int, float))
                   else parse_length_nm(str(cell_mm), "--cell", allow_zero=False) / 1e6)
        grid = cell_grid(area, cell_px=size_mm * float(scale_px_per_mm))
    elif cell_px is not None:
        grid = cell_grid(area, cell_px=float(cell_px))
    else:
        if cells is None:
            width, height = area[2] - area[0], area[3] - area[1]
            side = max(width, height) / DEFAULT_CELLS_LONG_SIDE
            cells = (max(1, int(round(width / side))), max(1, int(round(height / side))))
        elif isinstance(cells, str):
            cells = parse_cells(cells)
        grid = cell_grid(area, cells=tuple(int(v) for v in cells))

    stack = _parse_stack(stack, ambient)
    range_nm = search_range_nm(stack, range_nm)
    common = dict(flat=flat, dark=dark, mask=mask_array, illuminant=illuminant, known=known_value,
                  range_nm=range_nm, angle_deg=angle_deg, ambient=ambient, extrapolate=extrapolate,
                  progress=progress)
    if mode == "transmission":
        from .transmission import transmission_cells

        res = transmission_cells(stack, photo, grid, bare=bare_rect, **common)
        extra = dict(ratio=res.ratio, ratio_sigma=res.ratio_sigma, Lab=None, delta_E00=None, gain=res.gain,
                     gains=None, seed=None)
    else:
        from .colour_map import colour_cells

        res = colour_cells(stack, photo, grid, bare=bare_rect, white=white_rect, observer=observer, **common)
        extra = dict(ratio=None, ratio_sigma=None, Lab=res.Lab, delta_E00=res.delta_E00, gain=None,
                     gains=res.gains, seed=res.seed)

    unit = "mm" if scale_px_per_mm is not None else "px"
    to_unit = 1.0 / float(scale_px_per_mm) if scale_px_per_mm is not None else 1.0
    x = grid.x_centres_px() * to_unit
    y = grid.y_centres_px() * to_unit
    X, Y = np.meshgrid(x, y)
    stats = map_stats(res.thickness_nm, res.flag)
    profile = fit_profile(X, Y, res.thickness_nm, unit)
    stack_text = getattr(stack, "text", str(stack))
    from ..colorimetry import illuminant_label

    return ThicknessMap(
        mode=mode, stack=stack_text, photo=photo.path, grid=grid, unit=unit,
        scale_px_per_mm=None if scale_px_per_mm is None else float(scale_px_per_mm), x=x, y=y,
        thickness_nm=res.thickness_nm, low_nm=res.low_nm, high_nm=res.high_nm, flag=res.flag,
        reference=res.reference, illuminant=illuminant_label(illuminant), range_nm=tuple(res.range_nm),
        stats=stats, profile=profile, notes=res.notes, **extra,
    )


def _parse_stack(stack, ambient):
    from ..stack import parse_stack

    return parse_stack(stack, ambient=ambient) if isinstance(stack, str) else stack


# --------------------------------------------------------------------------------------------
# Tables
# --------------------------------------------------------------------------------------------


def csv_header(result: ThicknessMap) -> list:
    """The CSV grid's header: :data:`CSV_COLUMNS` (``x_px``/``y_px`` without a scale), and
    ``delta_E00`` after them in colour mode."""
    header = [f"x_{result.unit}", f"y_{result.unit}", *CSV_COLUMNS[2:]]
    return header + (["delta_E00"] if result.mode == "colour" else [])


def _number(value, digits):
    return "" if value is None or not np.isfinite(value) else f"{value:.{digits}f}"


def csv_rows(result: ThicknessMap) -> list:
    """One row per cell, row by row from the top-left (see :func:`csv_header`)."""
    digits = 3 if result.unit == "mm" else 1
    rows = []
    for i, yv in enumerate(result.y):
        for j, xv in enumerate(result.x):
            row = [f"{xv:.{digits}f}", f"{yv:.{digits}f}", _number(result.thickness_nm[i, j], 3),
                   _number(result.low_nm[i, j], 3), _number(result.high_nm[i, j], 3), str(result.flag[i, j])]
            if result.mode == "colour":
                row.append(_number(result.delta_E00[i, j], 2))
            rows.append(row)
    return rows


def _finite(value):
    return None if value is None or not np.isfinite(value) else float(value)


def map_json(result: ThicknessMap) -> dict:
    """The JSON form: ``cells``, ``stats`` (mean_nm, std_nm, min_nm, max_nm, uniformity_pct,
    cells_solved, cells_flagged), ``profile`` (plane, radial, better, unit) and what the map rests
    on (mode, reference, gain(s), notes…)."""
    from dataclasses import asdict

    cells = []
    for i, yv in enumerate(result.y):
        for j, xv in enumerate(result.x):
            cell = {
                "row": i, "col": j,
                f"x_{result.unit}": float(xv), f"y_{result.unit}": float(yv),
                "thickness_nm": _finite(result.thickness_nm[i, j]),
                "low_nm": _finite(result.low_nm[i, j]),
                "high_nm": _finite(result.high_nm[i, j]),
                "flag": str(result.flag[i, j]),
            }
            if result.ratio is not None:
                cell["ratio"] = _finite(result.ratio[i, j])
                cell["ratio_sigma"] = _finite(result.ratio_sigma[i, j])
            if result.Lab is not None:
                cell["Lab"] = None if not np.all(np.isfinite(result.Lab[i, j])) else [float(v) for v in result.Lab[i, j]]
                cell["delta_E00"] = _finite(result.delta_E00[i, j])
            cells.append(cell)
    profile = result.profile
    plane = None
    if profile.plane is not None:
        plane = {**asdict(profile.plane), "gradient_nm": profile.plane.gradient_nm,
                 "direction_deg": profile.plane.direction_deg}
    return {
        "cells": cells,
        "stats": asdict(result.stats),
        "profile": {"unit": profile.unit, "plane": plane,
                    "radial": None if profile.radial is None else asdict(profile.radial),
                    "better": profile.better},
        "uniformity_definition": "±(max − min)/(max + min) × 100 % over the solved cells",
        "mode": result.mode,
        "stack": result.stack,
        "photo": result.photo,
        "unit": result.unit,
        "cells_x": int(result.grid.nx), "cells_y": int(result.grid.ny),
        "cell_px": [int(result.grid.cell_w), int(result.grid.cell_h)],
        "reference": result.reference,
        "gain": result.gain,
        "gains": None if result.gains is None else list(result.gains),
        "seed": result.seed,
        "illuminant": result.illuminant,
        "range_nm": list(result.range_nm),
        "notes": list(result.notes),
    }
