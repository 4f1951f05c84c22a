"""Colour mode: film thickness per cell from the interference colour of an oxide seen in reflection.

A camera is not a colorimeter: its spectral sensitivities are not the CIE colour-matching
functions, its white balance and tone curve are its own, and the lighting of a shiny part is hard
to control. The colours it records are approximate and so is the thickness read from them; the map
is *relative* — its interference order assumed from continuity — unless a region of known
thickness anchors it.

Method
------
1. Per cell, the mean linear RGB (dark frame subtracted; divided pixel by pixel by a flat field of
   a white reference when one is given) is normalised to a reflectance factor: by a white
   rectangle in the photo (``white``), or by a rectangle of the bare substrate (``bare``), whose
   computed colour then sets each channel's gain (exposure and white balance at once), or taken as
   it is (full scale = a perfect white).
2. Linear sRGB → XYZ by the matrix of the sRGB primaries (IEC 61966-2-1) → CIELAB relative to
   the photo's white (CIE 15:2018). A white-balanced camera renders a white as white under any
   light, so the computed colours of the film under ``illuminant`` are compared relative to that
   illuminant's own white (the normalisation CIELAB makes).
3. The film's reflected colour is computed on a thickness grid in one pass
   (:func:`filmoptic.colorimetry.colour_sweep`), and the CIEDE2000 difference of every cell to
   every grid colour in a vectorised product (:func:`filmoptic.colorimetry.delta_e00`). Every
   local minimum along the grid is a candidate thickness: interference colours repeat with each
   order, paler each time.
4. The order is chosen for spatial continuity. A seed cell takes its best match: the cells of a
   ``known`` region take the candidate nearest the known thickness; otherwise the most saturated
   region (highest chroma C*ab averaged over a 3 × 3 neighbourhood), because higher orders are
   paler and the most saturated colour is the least ambiguous. From the seeds a front grows over
   the grid: each cell on it takes, among its candidates within :data:`ORDER_MARGIN_DE00` of its
   best match, the one nearest the mean thickness of its already-decided neighbours. Two passes
   then let every cell reconsider against the median of all its neighbours. Cells cut off from
   every seed get a seed of their own.
5. The chosen candidate is refined by golden-section search on ΔE00 between its grid neighbours
   (:func:`filmoptic.numerics.roots.refine_minima`); the cell's ΔE00 there is its confidence. The interval
   is the connected set of thicknesses within ΔE00 + max(the cell's colour noise,
   :data:`INTERVAL_FLOOR_DE00`) of that match.

References
----------
CIE 15:2018 (CIELAB); ISO/CIE 11664-6:2014 and G. Sharma, W. Wu, E. N. Dalal, Color Res. Appl. 30,
21 (2005) (CIEDE2000); IEC 61966-2-1:1999 (sRGB); J. Kiefer, Proc. Amer. Math. Soc. 4, 502 (1953)
(golden-section search).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from ..errors import FilmopticError
from .photo import (
    DARK_LEVEL,
    MIN_INSIDE_FRACTION,
    SATURATED_FRACTION,
    SRGB_TO_XYZ,
    cell_statistics,
    rectangle_statistics,
)

__all__ = ["ORDER_MARGIN_DE00", "INTERVAL_FLOOR_DE00", "POOR_MATCH_DE00", "COLORIMETER_NOTE", "ColourCells",
           "colour_cells"]

#: Candidates this much worse than a cell's best match may still be chosen for continuity.
ORDER_MARGIN_DE00 = 5.0
#: Smallest colour tolerance of an interval: about one just-noticeable difference (common practice).
INTERVAL_FLOOR_DE00 = 1.0
#: A best match worse than this is flagged ``poor_match`` (wrong stack, lighting or white).
POOR_MATCH_DE00 = 10.0
#: Candidates kept per cell (the best local minima).
MAX_CANDIDATES = 8
#: Passes in which every cell reconsiders its order against all its neighbours.
SMOOTHING_PASSES = 2
#: Cells compared with the whole thickness grid at once (bounded memory).
_CELL_CHUNK = 512

COLORIMETER_NOTE = ("a camera is not a colorimeter: colours from a photo are approximate, and the map is "
                    "relative (its interference order taken from continuity) unless a --known region anchors it")


@dataclass(frozen=True)
class ColourCells:
    """Per-cell results of colour mode, arrays of shape (ny, nx) (Lab: (ny, nx, 3))."""

    thickness_nm: np.ndarray
    low_nm: np.ndarray
    high_nm: np.ndarray
    flag: np.ndarray
    Lab: np.ndarray
    delta_E00: np.ndarray
    reference: str
    gains: tuple | None
    seed: str
    range_nm: tuple
    notes: tuple


class _ColourModel:
    """The film's reflected CIELAB at any thicknesses, relative to the illuminant's white."""

    def __init__(self, stack, illuminant, observer, angle_deg, extrapolate):
        from ..colorimetry import default_wavelengths, white_point

        self.stack, self.illuminant, self.observer = stack, illuminant, observer
        self.angle_deg, self.extrapolate = angle_deg, extrapolate
        wl = default_wavelengths()
        # XYZ under the illuminant, rescaled to the D65 white: Lab relative to the photo's white.
        self.scale = white_point(wl, "D65", observer) / white_point(wl, illuminant, observer)

    def XYZ(self, t) -> np.ndarray:
        from ..colorimetry import colour_sweep

        t = np.asarray(t, dtype=float)
        sweep = colour_sweep(self.stack, t.reshape(-1), illuminant=self.illuminant, observer=self.observer,
                             angle_deg=self.angle_deg, extrapolate=self.extrapolate)
        return (sweep.reflected.XYZ * self.scale).reshape(*t.shape, 3)

    def Lab(self, t) -> np.ndarray:
        return lab_d65(self.XYZ(t), self.observer)

    def bare_XYZ(self) -> np.ndarray:
        """The uncoated substrate's reflected XYZ (rescaled like :meth:`XYZ`)."""
        from ..colorimetry import appearance

        look = appearance(self.stack.bare(), illuminant=self.illuminant, observer=self.observer,
                          angle_deg=self.angle_deg, extrapolate=self.extrapolate)
        return np.asarray(look.reflected.XYZ) * self.scale


def lab_d65(XYZ, observer=2) -> np.ndarray:
    """CIELAB of XYZ (white Y = 100) relative to D65 (CIE 15:2018), through filmoptic.colorimetry."""
    from ..colorimetry import colour_from_XYZ

    XYZ = np.asarray(XYZ, dtype=float)
    return np.asarray(colour_from_XYZ(XYZ.reshape(-1, 3), None, "D65", observer).Lab).reshape(XYZ.shape)


def rgb_to_XYZ(rgb, observer=2) -> np.ndarray:
    """XYZ (white Y = 100, the D65 white of :mod:`filmoptic.colorimetry`) of linear sRGB (white = 1)."""
    from ..colorimetry import default_wavelengths, white_point

    xyz = np.asarray(rgb, dtype=float) @ SRGB_TO_XYZ.T
    # The sRGB white maps exactly onto CIELAB's white (they differ by ~1e-4 from rounding of D65).
    return xyz * (white_point(default_wavelengths(), "D65", observer) / (SRGB_TO_XYZ @ np.ones(3)))


def XYZ_to_rgb(XYZ, observer=2) -> np.ndarray:
    """The inverse of :func:`rgb_to_XYZ`."""
    from ..colorimetry import default_wavelengths, white_point

    xyz = np.asarray(XYZ, dtype=float) / (white_point(default_wavelengths(), "D65", observer) / (SRGB_TO_XYZ @ np.ones(3)))
    return xyz @ np.linalg.inv(SRGB_TO_XYZ).T


def _delta_matrix(cell_lab, model_lab) -> np.ndarray:
    """ΔE00 of every cell (C, 3) to every grid colour (G, 3): (C, G), in chunks of cells."""
    from ..colorimetry import delta_e00

    out = np.empty((cell_lab.shape[0], model_lab.shape[0]))
    for start in range(0, cell_lab.shape[0], _CELL_CHUNK):
        block = cell_lab[start:start + _CELL_CHUNK]
        out[start:start + _CELL_CHUNK] = delta_e00(block[:, None, :], model_lab[None, :, :])
    return out


def _candidates(de: np.ndarray):
    """Indices (C, K) and ΔE00 (C, K) of each row's best local minima along the grid (inf-padded)."""
    left = np.concatenate([np.full((de.shape[0], 1), np.inf), de[:, :-1]], axis=1)
    right = np.concatenate([de[:, 1:], np.full((de.shape[0], 1), np.inf)], axis=1)
    is_min = (de <= left) & (de < right)
    scored = np.where(is_min, de, np.inf)
    k = min(MAX_CANDIDATES, de.shape[1])
    idx = np.argsort(scored, axis=1)[:, :k]
    return idx, np.take_along_axis(scored, idx, axis=1)


def _choose(cand_t, cand_de, reference):
    """Per row: the candidate within the margin of the best nearest ``reference`` (its index)."""
    best = cand_de[:, :1]
    acceptable = cand_de <= best + ORDER_MARGIN_DE00
    distance = np.where(acceptable, np.abs(cand_t - reference[:, None]), np.inf)
    return np.argmin(distance, axis=1)


def _neighbours(values: np.ndarray) -> np.ndarray:
    """The 4-neighbours of every cell of a (ny, nx) array, stacked (4, ny, nx), NaN off the edge."""
    padded = np.pad(values, 1, constant_values=np.nan)
    return np.stack([padded[:-2, 1:-1], padded[2:, 1:-1], padded[1:-1, :-2], padded[1:-1, 2:]])


def _box_mean(values: np.ndarray) -> np.ndarray:
    """Mean over each cell's 3 × 3 neighbourhood, ignoring NaN."""
    padded = np.pad(values, 1, constant_values=np.nan)
    ny, nx = values.shape
    stack = np.stack([padded[i:i + ny, j:j + nx] for i in range(3) for j in range(3)])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)   # all-NaN neighbourhoods give NaN
        return np.nanmean(stack, axis=0)


def choose_orders(cand_t, cand_de, active, chroma, known_cells=None, known_nm=None):
    """The candidate (index per cell, (ny, nx)) chosen for continuity (see the module notes).

    ``cand_t`` and ``cand_de`` are (ny, nx, K); ``active`` marks cells to decide; ``chroma`` is
    C*ab per cell; ``known_cells`` marks cells of known thickness ``known_nm``.
    """
    ny, nx, K = cand_t.shape
    choice = np.zeros((ny, nx), dtype=int)
    thickness = np.full((ny, nx), np.nan)
    decided = np.zeros((ny, nx), bool)
    flat_t, flat_de = cand_t.reshape(-1, K), cand_de.reshape(-1, K)

    def decide(cells, reference):
        rows = np.flatnonzero(cells.ravel())
        picked = _choose(flat_t[rows], flat_de[rows], reference)
        choice.ravel()[rows] = picked
        thickness.ravel()[rows] = flat_t[rows, picked]
        decided.ravel()[rows] = True

    if known_cells is not None and np.any(known_cells & active):
        seeds = known_cells & active
        decide(seeds, np.full(np.count_nonzero(seeds), float(known_nm)))
    smoothed_chroma = _box_mean(np.where(active, chroma, np.nan))
    while True:
        todo = active & ~decided
        if not todo.any():
            break
        near = _neighbours(np.where(decided, thickness, np.nan))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            reference = np.nanmean(near, axis=0)
        front = todo & np.isfinite(reference)
        if not front.any():
            # A part of the map no seed reaches: seed it at its most saturated cell, best match.
            score = np.where(todo, smoothed_chroma, -np.inf)
            seed = np.unravel_index(int(np.argmax(score)), score.shape)
            cells = np.zeros_like(todo)
            cells[seed] = True
            decide(cells, flat_t[np.ravel_multi_index(seed, (ny, nx)), :1])
            continue
        decide(front, reference[front])
    fixed = known_cells & active if known_cells is not None else np.zeros_like(active)
    for _ in range(SMOOTHING_PASSES):
        near = _neighbours(np.where(decided, thickness, np.nan))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            reference = np.nanmedian(near, axis=0)
        cells = active & ~fixed & np.isfinite(reference)
        if cells.any():
            decide(cells, reference[cells])
    return choice


def colour_cells(stack, photo, grid, *, flat=None, dark=None, mask=None, white=None, bare=None,
                 illuminant="D65", observer=2, known=None, range_nm=None, step_nm=1.0, angle_deg=0.0,
                 ambient="air", extrapolate=False, progress=None) -> ColourCells:
    """Thickness per cell from the reflected colour of a film (see the module notes).

    Parameters
    ----------
    stack : Stack or str
        With one unknown thickness, e.g. ``"TiO2 ? / Ti"``.
    photo : Photo
        A colour photo.
    grid : CellGrid
    flat, dark : Photo, optional
        A white reference photographed in place of the part with the same settings (per-pixel
        flat field), and a dark frame.
    mask : bool array, optional
    white : (x0, y0, x1, y1), optional
        A white reference in the photo (a white card): its colour is taken as reflectance 1.
    bare : (x0, y0, x1, y1), optional
        The bare substrate in the photo: its computed colour calibrates each channel.
    illuminant : str
    observer : {2, 10}
    known : ((x0, y0, x1, y1), thickness_nm), optional
        Anchors the interference order.
    range_nm : (low, high), optional
        Thicknesses considered (default: the layer's LOW..HIGH, or 0–500 nm; 0–100 nm for a metal).
    step_nm : float
        Grid step of the computed colours before refinement.
    """
    from ..colorimetry import check_illuminant, check_observer
    from ..numerics.roots import interval_around, refine_minima
    from ..stack import parse_stack

    if not photo.is_colour:
        raise FilmopticError(f"colour mode needs a colour photo; {photo.label} is grey")
    if white is not None and bare is not None:
        raise FilmopticError("give --white or --bare as the colour reference, not both")
    observer = check_observer(observer)
    check_illuminant(illuminant)
    stack = parse_stack(stack, ambient=ambient) if isinstance(stack, str) else stack
    from ._search import search_range_nm

    lo, hi = search_range_nm(stack, range_nm)
    if not step_nm > 0:
        raise FilmopticError("the thickness step must be positive")
    from ..limits import GRID_POINTS

    # Counted before the grid exists: a range of a metre at 1 nm would fill the memory first.
    points = (hi - lo) / step_nm + 1
    GRID_POINTS.check(points, f"--range {lo:g}:{hi:g} nm searched every {step_nm:g} nm", "narrow the --range")
    model = _ColourModel(stack, illuminant, observer, angle_deg, extrapolate)
    grid_nm = np.linspace(lo, hi, int(np.ceil((hi - lo) / step_nm)) + 1)
    model_lab = model.Lab(grid_nm)       # checks the stack and illuminant before pixels are read

    stats = cell_statistics(photo, grid, flat=flat, dark=dark, mask=mask, channels="rgb", progress=progress)
    rgb, rgb_sem = stats.mean, stats.sem
    gains = None
    notes = [COLORIMETER_NOTE]
    if white is not None:
        ref = rectangle_statistics(photo, white, flat=flat, dark=dark, channels="rgb").mean[0, 0]
        if not np.all(ref > 0):
            raise FilmopticError("the white rectangle has no signal in some colour channel")
        gains = tuple(float(v) for v in 1.0 / ref)
        reference = "white"
    elif bare is not None:
        ref = rectangle_statistics(photo, bare, flat=flat, dark=dark, channels="rgb").mean[0, 0]
        if not np.all(ref > 0):
            raise FilmopticError("the bare rectangle has no signal in some colour channel")
        expected = XYZ_to_rgb(model.bare_XYZ(), observer)
        if not np.all(expected > 0):
            raise FilmopticError("the bare substrate's computed colour lies outside the sRGB gamut; use --white")
        gains = tuple(float(v) for v in expected / ref)
        reference = "bare"
    elif flat is not None:
        reference = "open"
    else:
        reference = "none"
        notes.append("no colour reference (--white, --bare or --open): the photo's full scale is taken as white, "
                     "so exposure shifts lightness and the match")
    if gains is not None:
        rgb = rgb * np.asarray(gains)
        rgb_sem = rgb_sem * np.asarray(gains)

    ny, nx = grid.ny, grid.nx
    flag = np.full((ny, nx), "ok", dtype=object)
    flag[stats.level < DARK_LEVEL] = "dark"
    flag[stats.saturated > SATURATED_FRACTION] = "saturated"
    flag[~np.all(np.isfinite(rgb), axis=2)] = "dark"
    flag[stats.inside < MIN_INSIDE_FRACTION] = "outside"
    active = flag == "ok"

    cell_lab = np.full((ny, nx, 3), np.nan)
    thickness = np.full((ny, nx), np.nan)
    low = np.full((ny, nx), np.nan)
    high = np.full((ny, nx), np.nan)
    de_cell = np.full((ny, nx), np.nan)
    seed = "known region" if known is not None else "most saturated region"
    if active.any():
        rows = np.flatnonzero(active.ravel())
        cell_rgb = np.clip(rgb.reshape(-1, 3)[rows], 0.0, None)
        lab = lab_d65(rgb_to_XYZ(cell_rgb, observer), observer)
        cell_lab.reshape(-1, 3)[rows] = lab
        de = _delta_matrix(lab, model_lab)
        idx, cand_de = _candidates(de)
        K = idx.shape[1]
        full_t = np.full((ny * nx, K), np.nan)
        full_de = np.full((ny * nx, K), np.inf)
        full_t[rows] = grid_nm[idx]
        full_de[rows] = cand_de
        chroma = np.hypot(cell_lab[..., 1], cell_lab[..., 2])
        known_cells = None
        known_nm = None
        if known is not None:
            (kx0, ky0, kx1, ky1), known_nm = known
            xc, yc = grid.x_centres_px(), grid.y_centres_px()
            known_cells = ((yc[:, None] >= ky0) & (yc[:, None] < ky1) & (xc[None, :] >= kx0) & (xc[None, :] < kx1))
            if not np.any(known_cells & active):
                raise FilmopticError("--known: no usable cell has its centre inside the known region; enlarge it")
        choice = choose_orders(full_t.reshape(ny, nx, K), full_de.reshape(ny, nx, K), active, chroma,
                               known_cells, known_nm)
        picked = idx[np.arange(rows.size), choice.ravel()[rows]]

        def de_at(t, targets):
            return np.asarray(_de(model.Lab(t), targets), dtype=float)

        a = grid_nm[np.maximum(picked - 1, 0)]
        b = grid_nm[np.minimum(picked + 1, grid_nm.size - 1)]
        t_best, de_best = refine_minima(lambda t: de_at(t, lab), a, b, xtol=1e-4)

        # Colour noise of each cell in ΔE00: one standard uncertainty per channel, in quadrature.
        sem = rgb_sem.reshape(-1, 3)[rows]
        shifted = np.clip(cell_rgb[:, None, :] + np.eye(3)[None] * sem[:, None, :], 0.0, None)
        lab_shifted = lab_d65(rgb_to_XYZ(shifted, observer), observer)
        noise_de = np.sqrt(np.sum(np.asarray(_de(lab_shifted, lab[:, None, :])) ** 2, axis=1))
        threshold = de_best + np.maximum(np.nan_to_num(noise_de), INTERVAL_FLOOR_DE00)

        def excess(t):
            return de_at(t, lab) - threshold

        i_lo, i_hi = interval_around(excess, grid_nm, de, t_best, threshold, xtol=1e-4)
        thickness.ravel()[rows] = t_best
        low.ravel()[rows] = np.minimum(i_lo, t_best)
        high.ravel()[rows] = np.maximum(i_hi, t_best)
        de_cell.ravel()[rows] = de_best
        flat_flag = flag.ravel()
        flat_flag[rows[de_best > POOR_MATCH_DE00]] = "poor_match"
        flag = flat_flag.reshape(ny, nx)
    if photo.encoding == "sRGB":
        notes.append("8-bit photo decoded as sRGB (a camera's tone curve is only approximately sRGB)")
    return ColourCells(thickness, low, high, flag.astype(str), cell_lab, de_cell, reference, gains, seed,
                       (lo, hi), tuple(notes))


def _de(lab1, lab2):
    from ..colorimetry import delta_e00

    return delta_e00(lab1, lab2)
