"""The modelled monitor signal against the thickness of the growing layer, and branch tracking.

A light source and a photodiode looking through the part while the top layer grows read the
band-weighted transmittance of the stack (:mod:`filmoptic.inverse.readings`), divided by what they read
before the layer started: the uncoated part (``"bare"``) or the open beam (``"open"``). That
ratio is computed **once**, on a fine grid of the layer's thickness, in one call of the
transfer-matrix engine with a batch of thicknesses (:func:`signal_model`); every reading is then
turned into a thickness by a look-up on that curve, which costs microseconds.

A transparent layer's signal goes up and down (it repeats every half wave, λ/(2n), of
thickness; its extrema, the *turning points*, lie at n·d = m·λ/4 for a single line), so one
reading fits many thicknesses. The curve is split at its turning points into monotone pieces
(*branches*). :class:`BranchTracker` follows the run from the start: it knows which branch the
film is on and only ever moves on to the next one, choosing between "still on this branch" and
"past the turning point" by the thickness the recent growth rate predicts. It never jumps to the
nearest root of another order.

References
----------
H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press (2010), ch. 3 (a single layer's
response repeats every half wave; extrema at quarter waves) and the chapter on production methods
(turning-point monitoring of quarter-wave layers).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from filmoptic.errors import FilmopticError

__all__ = [
    "MODEL_STEP_NM",
    "MAX_MODEL_POINTS",
    "TURN_MIN_SWING",
    "SignalModel",
    "signal_model",
    "turning_indices",
    "flat_zones",
    "Branch",
    "BranchTracker",
]

#: Largest step of the thickness grid the signal is modelled on, nm. Linear interpolation on it
#: errs by at most h²·|S''|/8, below 1e-6 of the reference for the steepest metal films.
MODEL_STEP_NM = 0.02
#: Largest number of grid points of a signal model (a longer range needs a coarser --step).
MAX_MODEL_POINTS = 400_000
#: Smallest swing of the modelled signal (fraction of the reference) between two turning points
#: that counts: below it an "extremum" is rounding in the far tail of an opaque film.
TURN_MIN_SWING = 1e-4
#: Around a turning point (and at the start of a layer whose signal starts flat) the signal hardly
#: moves with thickness, so a reading there says little about the thickness: the *flat zone* is
#: where the slope is below this fraction of the steepest slope on the neighbouring branches.
FLAT_FRACTION = 0.25
#: How far the monitor models beyond the target, as a multiple of the target thickness (room for
#: an overshoot, and for following the run past the target with --keep-going).
RANGE_BEYOND_TARGET = 1.6
#: References a monitor signal can be divided by (see :func:`filmoptic.inverse.readings.reference_level`).
REFERENCE_KINDS = ("bare", "open")


def turning_indices(values, min_swing: float = TURN_MIN_SWING) -> np.ndarray:
    """Grid indices of the turning points (extrema) of a sampled curve, ends excluded.

    Extrema whose swing to a neighbouring extremum (or to an end of the curve) is below
    ``min_swing`` are dropped in pairs, so numerical ripples never split a branch.

    Examples
    --------
    >>> turning_indices(np.cos(np.linspace(0.0, 4 * np.pi, 81))).tolist()
    [20, 40, 60]
    >>> turning_indices(np.array([1.0, 0.5, 0.25, 0.25 + 1e-9, 0.1])).tolist()
    []
    """
    v = np.asarray(values, dtype=float)
    if v.size < 3:
        return np.zeros(0, dtype=int)
    step = np.diff(v)
    direction = np.sign(step)
    # A flat step belongs to the piece before it (fill zeros forward; a flat start takes the
    # first direction that follows).
    nonzero = np.flatnonzero(direction)
    if nonzero.size == 0:
        return np.zeros(0, dtype=int)
    filled = direction[nonzero][np.maximum(np.searchsorted(nonzero, np.arange(direction.size), side="right") - 1, 0)]
    turns = list(np.flatnonzero(filled[1:] != filled[:-1]) + 1)
    # Drop pairs of extrema closer in value than min_swing (a ripple), then an end extremum that is
    # no real swing from the curve's end.
    changed = True
    while changed and turns:
        changed = False
        points = [0, *turns, v.size - 1]
        swings = np.abs(np.diff(v[points]))
        small = np.flatnonzero(swings[1:-1] < min_swing)
        if small.size:
            j = int(small[0])          # the swing between turns[j] and turns[j + 1]
            del turns[j:j + 2]
            changed = True
        elif swings[0] < min_swing:
            del turns[0]
            changed = True
        elif swings[-1] < min_swing:
            del turns[-1]
            changed = True
    return np.asarray(turns, dtype=int)


@dataclass(frozen=True)
class SignalModel:
    """The modelled monitor ratio on a fine grid of the growing layer's thickness.

    Attributes
    ----------
    thickness_nm : numpy.ndarray
        Grid from 0 (the start of the run) to the end of the range, shape ``(G,)``.
    ratio : numpy.ndarray
        The reading divided by the reference reading, as the model has it, shape ``(G,)``.
    turning_nm, turning_ratio : numpy.ndarray
        Thickness and ratio of each turning point (extremum) in the range, in growth order.
    bounds : numpy.ndarray
        Grid indices where the branches start and end: branch ``j`` runs over
        ``bounds[j] .. bounds[j + 1]`` (inclusive), monotone throughout.
    reference_level : float
        The modelled band transmittance of what the reference saw (1 for the open beam).
    stack, layer, source, detector, reference_kind : str
        What was modelled (the stack as written, the growing layer as written).
    wavelength_nm, weights : numpy.ndarray
        The reading's band (:func:`filmoptic.inverse.readings.band_weights`).
    step_nm : float
        Grid step.
    flat_zones_nm : numpy.ndarray
        ``(Z, 2)`` thickness intervals around the turning points (and a flat start) where the
        slope is below :data:`FLAT_FRACTION` of the steepest slope nearby (see :func:`flat_zones`).
    """

    thickness_nm: np.ndarray
    ratio: np.ndarray
    turning_nm: np.ndarray
    turning_ratio: np.ndarray
    bounds: np.ndarray
    reference_level: float
    stack: str
    layer: str
    source: str
    detector: str
    reference_kind: str
    wavelength_nm: np.ndarray
    weights: np.ndarray
    step_nm: float
    flat_zones_nm: np.ndarray

    @property
    def range_nm(self) -> tuple:
        return float(self.thickness_nm[0]), float(self.thickness_nm[-1])

    @property
    def branches(self) -> int:
        """Number of monotone branches (turning points + 1)."""
        return int(self.bounds.size - 1)

    @cached_property
    def _slope(self) -> np.ndarray:
        return np.gradient(self.ratio, self.thickness_nm)

    @cached_property
    def _branch_tables(self):
        """Per branch: its ratios in increasing order and the matching thicknesses (a look-up
        table for :meth:`invert`)."""
        tables = []
        for j in range(self.branches):
            a, b = int(self.bounds[j]), int(self.bounds[j + 1])
            r, d = self.ratio[a:b + 1], self.thickness_nm[a:b + 1]
            if r[-1] < r[0]:
                r, d = r[::-1], d[::-1]
            # A flat run (an opaque tail) keeps the thinnest thickness of each value.
            keep = np.concatenate([[True], np.diff(r) > 0])
            tables.append((np.ascontiguousarray(r[keep]), np.ascontiguousarray(d[keep])))
        return tuple(tables)

    def ratio_at(self, thickness_nm):
        """Modelled ratio at any thicknesses (linear on the grid; held at the range ends).

        Examples
        --------
        >>> model = signal_model("n=2 ? / n=1.5 1mm", "laser:600", "flat", "bare", range_nm=(0, 200),
        ...                      ambient="n=1")
        >>> round(float(model.ratio_at(0.0)), 12)   # nothing grown yet: the bare part itself
        1.0
        """
        return np.interp(thickness_nm, self.thickness_nm, self.ratio)

    def slope_at(self, thickness_nm):
        """Change of the modelled ratio per nm of growth."""
        return np.interp(thickness_nm, self.thickness_nm, self._slope)

    def in_flat_zone(self, thickness_nm: float) -> bool:
        """Whether a thickness lies where the signal hardly changes with thickness (near a
        turning point, or a flat start)."""
        d = float(thickness_nm)
        zones = self.flat_zones_nm
        return bool(np.any((zones[:, 0] <= d) & (d <= zones[:, 1]))) if zones.size else False

    def branch_of(self, thickness_nm: float) -> int:
        """The branch a thickness lies on (a turning point belongs to the branch it ends)."""
        return int(np.searchsorted(self.turning_nm, float(thickness_nm), side="left"))

    def branch_limits(self, branch: int) -> tuple:
        """(lowest, highest) ratio the model allows on a branch."""
        r, _ = self._branch_tables[branch]
        return float(r[0]), float(r[-1])

    def invert(self, ratio: float, branch: int) -> tuple:
        """The thickness on ``branch`` where the modelled ratio equals ``ratio``.

        Returns ``(thickness_nm, inside)``; a ratio beyond what the branch reaches gives the end
        of the branch nearest in value and ``inside=False``.

        Examples
        --------
        Turning points of a lossless layer of index 2 at a 600 nm line lie at quarter waves,
        75 nm apart (Macleod, ch. 3); a ratio on the second branch is found between them:

        >>> model = signal_model("n=2 ? / n=1.5 1mm", "laser:600", "flat", "bare", range_nm=(0, 200),
        ...                      ambient="n=1")
        >>> model.turning_nm.round(2).tolist()
        [75.0, 150.0]
        >>> d, inside = model.invert(float(model.ratio_at(100.0)), 1)
        >>> round(d, 3), inside
        (100.0, True)
        """
        r, d = self._branch_tables[branch]
        x = float(ratio)
        if not math.isfinite(x):
            raise FilmopticError("a monitor reading must be a finite number")
        if x <= r[0]:
            return float(d[0]), x == r[0]
        if x >= r[-1]:
            return float(d[-1]), x == r[-1]
        i = int(np.searchsorted(r, x))
        f = (x - r[i - 1]) / (r[i] - r[i - 1])
        return float(d[i - 1] + f * (d[i] - d[i - 1])), True

    def first_thickness_at(self, ratio: float, from_nm: float = 0.0) -> float | None:
        """The first thickness at or beyond ``from_nm`` where the modelled ratio reaches
        ``ratio`` (None when it never does in the range): the stop point of a run aimed at a
        signal value."""
        start = self.branch_of(from_nm)
        for j in range(start, self.branches):
            lo, hi = self.branch_limits(j)
            if lo <= ratio <= hi:
                d, _ = self.invert(ratio, j)
                if d >= from_nm - 1e-9:
                    return d
        return None


def flat_zones(thickness_nm, ratio, bounds, fraction: float = FLAT_FRACTION) -> np.ndarray:
    """Thickness intervals around each turning point, and at the start when the curve starts
    flat, where the slope is below ``fraction`` of the steepest slope of the neighbouring branches.

    A transparent layer's signal starts flat and is flat at every quarter wave (Macleod, ch. 3);
    a metal's starts steep and has no zones.

    Examples
    --------
    For cos(πd) the slope π·|sin(πd)| is below a quarter of its peak within asin(0.25)/π = 0.080
    of each extremum:

    >>> d = np.linspace(0.0, 2.0, 2001)
    >>> flat_zones(d, np.cos(np.pi * d), np.array([0, 1000, 2000])).round(2).tolist()
    [[0.0, 0.08], [0.92, 1.08]]
    """
    slope = np.abs(np.gradient(ratio, thickness_nm))
    zones = []
    last = bounds.size - 1
    for j in range(last):                      # the start, then every turning point
        at = int(bounds[j])
        if j == 0 and at != 0:
            continue
        lo_branch = int(bounds[j - 1]) if j > 0 else at
        hi_branch = int(bounds[j + 1])
        steepest = float(slope[lo_branch:hi_branch + 1].max())
        if not steepest > 0:
            continue
        steep = slope >= fraction * steepest
        left = np.flatnonzero(steep[lo_branch:at + 1])
        right = np.flatnonzero(steep[at:hi_branch + 1])
        if j == 0 and right.size and right[0] == 0:
            continue                           # a steep start (a metal): no zone
        lo = thickness_nm[lo_branch + left[-1]] if (j > 0 and left.size) else thickness_nm[lo_branch]
        hi = thickness_nm[at + right[0]] if right.size else thickness_nm[hi_branch]
        zones.append((float(lo), float(hi)))
    return np.asarray(zones, dtype=float).reshape(-1, 2)


def _model_range(stack, layer, range_nm, target_nm):
    from filmoptic.inverse.solve import default_range_nm

    if range_nm is not None:
        lo, hi = float(range_nm[0]), float(range_nm[1])
        if lo != 0.0:
            raise FilmopticError("--range of a monitored layer starts at 0 nm (the start of the run): write 0:STOP")
        if not (hi > 0 and math.isfinite(hi)):
            raise FilmopticError(f"--range: the end must be a positive thickness, got {hi:g}")
        return hi
    free = stack.parameters[stack.thickness_parameters[0]].free
    hi = float(free.high) if free.bounded else default_range_nm(layer.material)[1]
    if target_nm is not None:
        hi = max(hi, RANGE_BEYOND_TARGET * float(target_nm) + 5.0)
    return hi


def signal_model(stack, source: str = "D65", detector: str = "photopic", reference: str = "bare", *,
                 range_nm=None, step_nm=None, target_nm=None, min_turning_points: int = 0,
                 angle_deg: float = 0.0, extrapolate: bool = False, ambient: str = "air") -> SignalModel:
    """Model a monitor's ratio against the growing layer's thickness, in one engine call.

    Parameters
    ----------
    stack : str or filmoptic.stack.Stack
        The part with one unknown thickness ``?``: the layer being deposited (any layers under
        it, any substrate).
    source, detector : str
        As in :func:`filmoptic.inverse.readings.band_weights` (``led:530/30``, ``laser:633``, ``A``, …;
        ``flat``, ``photopic`` or a response file).
    reference : {"bare", "open"}
        What the reference reading saw: the uncoated part (the signal before the shutter
        opened) or the open beam.
    range_nm : (0, float), optional
        Thicknesses to model; default the solve range of the layer's material, stretched to
        :data:`RANGE_BEYOND_TARGET` times ``target_nm``.
    step_nm : float, optional
        Grid step; default the smaller of :data:`MODEL_STEP_NM` and a quarter of
        :func:`filmoptic.inverse.solve.grid_step_nm`.
    min_turning_points : int
        Extend the range (doubling it) until it holds at least this many turning points.

    Returns
    -------
    SignalModel

    Examples
    --------
    A lossless quarter wave of index 2 on a slab of index 1.5 at 600 nm: the ratio to the bare
    slab is the film's T over the bare surface's, (1 − R_qw)/(1 − R_s) at the first turning point
    with R_qw = ((1.5 − 4)/(1.5 + 4))² and R_s = (0.5/2.5)² (Macleod, ch. 3; the back surface
    adds the same factor to both, for a lossless film):

    >>> model = signal_model("n=2 ? / n=1.5 1mm", "laser:600", "flat", "bare", range_nm=(0, 200),
    ...                      ambient="n=1")
    >>> r_qw, r_s = ((1.5 - 4) / 5.5) ** 2, 0.04
    >>> round(float(model.turning_ratio[0]), 6) == round((1 - r_qw) / (1 - r_s) * (1 - r_s**2)
    ...     / (1 - r_qw * r_s), 6)
    True
    """
    from filmoptic.engine import compute
    from filmoptic.inverse.readings import band_weights, covered_range_nm, reference_level
    from filmoptic.inverse.solve import _free_layer, _max_index, grid_step_nm
    from filmoptic.stack import parse_stack

    if reference not in REFERENCE_KINDS:
        raise FilmopticError(f"--reference-kind must be 'bare' or 'open', got {reference!r}")
    if isinstance(stack, str):
        stack = parse_stack(stack, ambient=ambient)
    layer, _ = _free_layer(stack)
    wl, weights = band_weights(source, detector, covered_range_nm(stack, extrapolate))
    if not stack.substrate_passes_light(wl, extrapolate=extrapolate):
        raise FilmopticError(
            f"a monitor reads light through the part, but the substrate {stack.substrate.label!r} is an "
            "absorbing half-space (nothing comes out behind it); give it as a slab with its thickness "
            "(e.g. 'glass 1mm')"
        )
    level = reference_level(stack, reference, wl, weights, angle_deg=angle_deg, extrapolate=extrapolate)
    if step_nm is None:
        step_nm = min(MODEL_STEP_NM, grid_step_nm(wl.min(), _max_index(layer.material, wl, extrapolate)) / 4)
    step_nm = float(step_nm)
    if not step_nm > 0:
        raise FilmopticError(f"--step must be positive, got {step_nm:g}")
    hi = _model_range(stack, layer, range_nm, target_nm)
    while True:
        count = int(math.ceil(hi / step_nm - 1e-9)) + 1
        if count > MAX_MODEL_POINTS:
            raise FilmopticError(
                f"modelling 0–{hi:g} nm at {step_nm:.3g} nm needs {count} points (at most {MAX_MODEL_POINTS}); "
                "give a coarser --step or a shorter --range"
            )
        grid = np.linspace(0.0, hi, max(count, 3))
        T = compute(stack, wl, angle_deg=angle_deg, thickness_nm=grid[:, None], extrapolate=extrapolate).T
        ratio = np.asarray(T, dtype=float) @ weights / level
        turns = turning_indices(ratio)
        if turns.size >= min_turning_points or range_nm is not None:
            break
        hi *= 2.0
    bounds = np.concatenate([[0], turns, [grid.size - 1]]).astype(int)
    return SignalModel(
        thickness_nm=grid, ratio=ratio, turning_nm=grid[turns], turning_ratio=ratio[turns], bounds=bounds,
        reference_level=float(level), stack=stack.text, layer=layer.text, source=str(source),
        detector=str(detector), reference_kind=reference, wavelength_nm=wl, weights=weights,
        step_nm=float(grid[1] - grid[0]), flat_zones_nm=flat_zones(grid, ratio, bounds),
    )


@dataclass(frozen=True)
class Branch:
    """Where a reading puts the film: a thickness on a branch, and whether the model reaches the
    reading there (``inside``; False means the reading lies beyond the branch's end value and the
    thickness is that end)."""

    thickness_nm: float
    branch: int
    inside: bool


class BranchTracker:
    """Follow a run along the modelled curve, branch by branch, from the start.

    The film only grows, so a reading can lie on the branch the film is on or, once the signal
    has passed a turning point, on the next one. Of those two candidates the tracker takes the
    one nearer the thickness predicted from the recent growth (the last thickness when no rate is
    known yet) and then stays on that branch or later ones.

    Examples
    --------
    A layer of index 2 at a 600 nm line: the same ratio is met at 30 nm and at 120 nm (either side
    of the first turning point, 75 nm). Followed from the start, growth past the turning point
    is recognised:

    >>> model = signal_model("n=2 ? / n=1.5 1mm", "laser:600", "flat", "bare", range_nm=(0, 200),
    ...                      ambient="n=1")
    >>> tracker = BranchTracker(model)
    >>> [round(tracker.update(float(model.ratio_at(d)), d).thickness_nm, 3) for d in (30.0, 70.0, 80.0, 120.0)]
    [30.0, 70.0, 80.0, 120.0]
    >>> tracker.branch
    1
    """

    def __init__(self, model: SignalModel, start_nm: float = 0.0):
        self.model = model
        self.branch = model.branch_of(start_nm)
        self.thickness_nm = float(start_nm)

    def candidates(self, ratio: float) -> list:
        """The reading's thickness on the current branch and on the next one."""
        found = []
        for j in range(self.branch, min(self.branch + 2, self.model.branches)):
            thickness, inside = self.model.invert(ratio, j)
            found.append(Branch(thickness, j, inside))
        return found

    def locate(self, ratio: float, predicted_nm: float | None = None) -> Branch:
        """Where the reading puts the film, without moving the tracker."""
        expected = self.thickness_nm if predicted_nm is None else max(float(predicted_nm), 0.0)
        options = self.candidates(ratio)
        # Prefer a thickness the model explains exactly; among those, the one nearest the prediction.
        exact = [c for c in options if c.inside] or options
        return min(exact, key=lambda c: (abs(c.thickness_nm - expected), c.branch))

    def update(self, ratio: float, predicted_nm: float | None = None) -> Branch:
        """Locate the reading and move the tracker there."""
        found = self.locate(ratio, predicted_nm)
        self.branch, self.thickness_nm = found.branch, found.thickness_nm
        return found

    def reachable_limits(self) -> tuple:
        """(lowest, highest) ratio the model allows on the current branch and the next."""
        limits = [self.model.branch_limits(j) for j in range(self.branch, min(self.branch + 2, self.model.branches))]
        return min(a for a, _ in limits), max(b for _, b in limits)
