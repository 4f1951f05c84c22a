"""Transmission mode: film thickness per cell from the light a coated glass passes on a light box.

Per pixel the camera's relative luminance (:mod:`filmoptic.imaging.photo`) is divided by the
reference: a flat-field photo of the empty light box taken with the same settings (which also
removes the lens's vignetting and the box's unevenness), and/or the mean of a rectangle of bare
glass in the same photo. The cell means are then luminous transmittances relative to the open
light box or to the bare glass — exactly what a lux meter with a photopic detector would read in
their place — and every cell is inverted at once by :func:`filmoptic.inverse.solve.solve_batch` with the
reading model of :class:`filmoptic.inverse.solve.Reading` (light box spectrum = ``illuminant``,
detector = V(λ), reference = ``open`` or ``bare``).

The camera's relative luminance from the sRGB primaries stands in for the photopic detector; a
camera's spectral sensitivities only approximate the colour-matching functions and its tone curve
only approximates sRGB (8-bit files), which is why a region of known thickness can calibrate a
gain: the ratio of the modelled to the measured reading there, applied to every cell.

Intervals come from the pixel noise of each cell and of the reference (their relative standard
uncertainties added in quadrature), solved as the thicknesses that read the cell's value ± that
uncertainty.

References
----------
IEC 61966-2-1:1999 (sRGB); ISO 9050:2003 (luminous transmittance); CIE 15:2018 (V(λ)).
Flat-field correction: common practice in imaging photometry.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import FilmopticError
from .photo import DARK_LEVEL, MIN_INSIDE_FRACTION, SATURATED_FRACTION, cell_statistics, rectangle_statistics

__all__ = ["NEAR_REFERENCE_SIGMAS", "TransmissionCells", "transmission_cells"]

#: A cell that reads a little above what the thinnest film can give (noise about bare glass) is
#: taken as that thinnest film when it lies within this many standard uncertainties of it.
NEAR_REFERENCE_SIGMAS = 3.0
#: A calibration gain outside this range means the known region or the reference is wrong.
PLAUSIBLE_GAIN = (0.5, 2.0)


@dataclass(frozen=True)
class TransmissionCells:
    """Per-cell results of transmission mode, arrays of shape (ny, nx)."""

    thickness_nm: np.ndarray
    low_nm: np.ndarray
    high_nm: np.ndarray
    flag: np.ndarray
    ratio: np.ndarray
    ratio_sigma: np.ndarray
    reference: str
    gain: float | None
    known_measured: float | None
    known_modelled: float | None
    range_nm: tuple
    notes: tuple


def _region_value(photo, rect, flat, dark, what):
    """Mean luminance (ratio to the flat field, if any) of a rectangle, and its standard uncertainty."""
    stats = rectangle_statistics(photo, rect, flat=flat, dark=dark)
    if stats.saturated[0, 0] > SATURATED_FRACTION:
        raise FilmopticError(
            f"the {what} {rect[0]},{rect[1]},{rect[2]},{rect[3]} is saturated in "
            f"{100 * stats.saturated[0, 0]:.0f} % of its pixels: take the photo with a shorter exposure"
        )
    if not stats.level[0, 0] >= DARK_LEVEL:
        raise FilmopticError(
            f"the {what} {rect[0]},{rect[1]},{rect[2]},{rect[3]} is too dark to measure: expose longer "
            "or check the rectangle"
        )
    return float(stats.mean[0, 0]), float(stats.sem[0, 0])


def transmission_cells(stack, photo, grid, *, bare=None, flat=None, dark=None, mask=None, illuminant="D65",
                       known=None, range_nm=None, angle_deg=0.0, ambient="air", extrapolate=False,
                       progress=None) -> TransmissionCells:
    """Thickness per cell from a transmission photo (see the module notes).

    Parameters
    ----------
    stack : Stack or str
        With the film's thickness written ``?`` (or ``LOW..HIGH``), e.g. ``"Ti ? / glass 4mm"``.
    photo : Photo
    grid : CellGrid
    bare : (x0, y0, x1, y1), optional
        Bare glass in the same photo: the reference (the map is relative to bare glass).
    flat : Photo, optional
        The empty light box, same settings: a per-pixel flat field (without ``bare``, the map is
        relative to the open light box).
    dark : Photo, optional
        Lens covered, same settings: subtracted from the photo and the flat field.
    mask : bool array, optional
    illuminant : str
        The light box's spectrum (an illuminant name or file).
    known : ((x0, y0, x1, y1), thickness_nm), optional
        A region of known thickness: calibrates a gain.
    range_nm, angle_deg, ambient, extrapolate
        As for :func:`filmoptic.inverse.solve.solve_batch`.
    progress : callable, optional
        Called with the number of photo rows done.
    """
    from ..inverse.solve import Reading, evaluate_condition
    from ..stack import parse_stack

    if bare is None and flat is None:
        raise FilmopticError(
            "transmission mode needs a reference: --bare X0,Y0,X1,Y1 (a rectangle of bare glass in the "
            "photo) and/or --open FILE (a photo of the empty light box with the same settings)"
        )
    stack = parse_stack(stack, ambient=ambient) if isinstance(stack, str) else stack
    from ..colorimetry import default_wavelengths

    if not stack.substrate_passes_light(default_wavelengths(), extrapolate=extrapolate):
        raise FilmopticError(
            f"transmission mode: no light comes out behind the substrate {stack.substrate.label!r}, an "
            "absorbing half-space; map the part in reflection with --mode colour, or give the substrate "
            "as a slab with its thickness (e.g. 'glass 4mm')"
        )
    reference = "bare" if bare is not None else "open"
    template = Reading(0.5, source=illuminant, detector="photopic", reference=reference)
    # Refuses an opaque substrate or a stack without one unknown before any pixel is read.
    evaluate_condition(stack, template, [0.0] if range_nm is None else [float(range_nm[0])],
                       angle_deg=angle_deg, extrapolate=extrapolate)

    stats = cell_statistics(photo, grid, flat=flat, dark=dark, mask=mask, channels="luminance", progress=progress)
    ratio = stats.mean.copy()
    rel_u = np.divide(stats.sem, stats.mean, out=np.full_like(stats.mean, np.nan), where=stats.mean > 0)
    if bare is not None:
        ref, ref_u = _region_value(photo, bare, flat, dark, "bare-glass rectangle")
        if not ref > 0:
            raise FilmopticError("the bare-glass rectangle has no signal")
        ratio = ratio / ref
        rel_u = np.sqrt(rel_u ** 2 + (ref_u / ref) ** 2)

    notes = []
    gain = known_measured = known_modelled = None
    if known is not None:
        rect, thickness = known
        measured, _ = _region_value(photo, rect, flat, dark, "known region")
        if bare is not None:
            measured /= ref
        modelled = float(evaluate_condition(stack, template, [thickness], angle_deg=angle_deg,
                                            extrapolate=extrapolate)[0])
        if not measured > 0:
            raise FilmopticError("the known region has no signal")
        gain = modelled / measured
        known_measured, known_modelled = measured, modelled
        if not PLAUSIBLE_GAIN[0] <= gain <= PLAUSIBLE_GAIN[1]:
            raise FilmopticError(
                f"--known: the region reads {100 * measured:.1f} % but {thickness:g} nm should read "
                f"{100 * modelled:.1f} % (a gain of {gain:.2f}); check the region, its thickness and the reference"
            )
        ratio = ratio * gain
    sigma = np.abs(ratio) * rel_u

    flag = np.full(ratio.shape, "ok", dtype=object)
    flag[stats.level < DARK_LEVEL] = "dark"
    if stats.flat_level is not None:
        flag[~(stats.flat_level >= DARK_LEVEL)] = "dark"
    flag[stats.saturated > SATURATED_FRACTION] = "saturated"
    flag[~np.isfinite(ratio)] = "dark"
    flag[stats.inside < MIN_INSIDE_FRACTION] = "outside"
    solve_rows = np.flatnonzero((flag == "ok").ravel())

    shape = ratio.shape
    thickness = np.full(shape, np.nan)
    low = np.full(shape, np.nan)
    high = np.full(shape, np.nan)
    options = dict(range_nm=range_nm, angle_deg=angle_deg, extrapolate=extrapolate)
    solved_range = range_nm
    if solved_range is None:
        from ._search import search_range_nm

        solved_range = search_range_nm(stack)
    if solve_rows.size:
        values = ratio.ravel()[solve_rows]
        u = sigma.ravel()[solve_rows]
        clipped = np.clip(values, 0.0, 1.0)
        batch = _solve(stack, template, clipped, u, options)
        solved_range = batch.range_nm
        t, lo, hi = batch.thickness_nm.copy(), batch.low_nm.copy(), batch.high_nm.copy()
        status = batch.status.astype(object)
        # Cells a little beyond the reachable end (noise about bare glass): the end itself.
        near = (status == "unreachable") & (np.abs(values - batch.closest_value) <= NEAR_REFERENCE_SIGMAS * u)
        if np.any(near):
            again = _solve(stack, template, np.clip(batch.closest_value[near], 0.0, 1.0), u[near], options)
            t[near], lo[near], hi[near] = again.thickness_nm, again.low_nm, again.high_nm
            status[near] = again.status
        flat_flag = flag.ravel()
        flat_flag[solve_rows] = status
        flag = flat_flag.reshape(shape)
        for target, source in ((thickness, t), (low, lo), (high, hi)):
            target.ravel()[solve_rows] = np.where(status == "unreachable", np.nan, source)
    unreachable = int(np.count_nonzero(flag == "unreachable"))
    if unreachable:
        notes.append(f"{unreachable} cells read outside what the film gives in {solved_range[0]:g}–{solved_range[1]:g} nm "
                     "(brighter than the reference, or darker than the thickest film): check the reference "
                     "rectangle, the photos' exposure and --range")
    if photo.encoding == "sRGB":
        notes.append("8-bit photo decoded as sRGB: a camera's own tone curve is only approximately sRGB "
                     + ("(corrected here by the known region's gain)" if gain is not None
                        else "(a --known region calibrates it)"))
    if flat is None:
        notes.append("no flat field (--open): the lens's vignetting and an uneven light box are not removed")
    return TransmissionCells(thickness, low, high, flag.astype(str), ratio, sigma, reference, gain,
                             known_measured, known_modelled, tuple(solved_range or ()), tuple(notes))


def _solve(stack, template, values, u, options):
    from ..inverse.solve import solve_batch

    relative = np.divide(u, values, out=np.zeros_like(u), where=values > 0)
    return solve_batch(stack, template, values, uncertainty=relative, relative_uncertainty=True, **options)
