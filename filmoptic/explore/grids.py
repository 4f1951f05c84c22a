"""The numbers behind an explore page: a stack's colours, luminous values and spectra on a grid of
its one or two free thicknesses and the viewing angle.

Everything the page shows is computed here, in Python, with the same functions as the ``color``
command (:func:`filmoptic.colorimetry.colour_of` and :func:`~filmoptic.colorimetry.luminous` on
the engine's spectra, 380–780 nm every 5 nm), so a value read off the page is the value ``filmoptic
color`` gives at that grid point. The engine runs once per block of thickness sets, for all
angles at once (one call from the film side, one from the glass side when the substrate is a
slab), with blocks small enough to bound memory.

Grid: the thickness step is 0.5 nm when the page stays within its size budget (``max_mb``); else
the axis with the most values is coarsened in turn through 1, 2, 2.5, 5, 10 … nm until it does (so
two free thicknesses keep about as many values each). Angles run every 5° from 0 to 70° for one
free thickness, every 10° for two (the budget then goes to the thicknesses), unless given. The
spectra drawn on the page are kept every 10 nm (every other point of the colour grid).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from filmoptic.errors import FilmopticError

__all__ = ["explore_grids", "ExploreGrids", "FreeThickness", "DEFAULT_ANGLES_DEG", "DEFAULT_ANGLES_TWO_DEG",
           "STEP_CHOICES_NM",
           "DEFAULT_MAX_MB", "bytes_per_point", "PAGE_OVERHEAD_BYTES", "LUMINOUS_NAMES"]

#: Angles of the page's angle slider unless given: for one free thickness, and for two.
DEFAULT_ANGLES_DEG = tuple(float(a) for a in range(0, 71, 5))
DEFAULT_ANGLES_TWO_DEG = tuple(float(a) for a in range(0, 71, 10))
#: Thickness steps tried in turn until the page fits its budget, nm.
STEP_CHOICES_NM = (0.5, 1.0, 2.0, 2.5, 5.0, 10.0, 20.0, 25.0, 50.0, 100.0)
#: Largest page, megabytes, unless the caller raises it.
DEFAULT_MAX_MB = 4.0
#: The page's own text (styles, script, labels), bytes, counted against the budget.
PAGE_OVERHEAD_BYTES = 40_000
#: Most values (thickness sets × angles × wavelengths) one engine call computes.
POINTS_PER_CALL = 600_000
#: Every this-many points of the 5 nm colour grid are kept for the spectra on the page.
CURVE_STRIDE = 2
#: The luminous values kept per grid point, as named in :class:`filmoptic.colorimetry.Luminous`.
LUMINOUS_NAMES = ("T", "R", "R_reverse", "A_layers", "A_substrate")
_VIEW_KEYS = ("reflected", "reflected_reverse", "transmitted")


@dataclass(frozen=True)
class FreeThickness:
    """One slider of the page: a free thickness and the values it takes.

    Attributes
    ----------
    name : str
        The parameter's name (``"TiO2 thickness (layer 1)"``).
    label : str
        The layer's material as written (``"TiO2"``).
    values_nm : numpy.ndarray
        The grid, nm (evenly spaced, both ends included).
    """

    name: str
    label: str
    values_nm: np.ndarray

    @property
    def step_nm(self) -> float:
        return float(self.values_nm[1] - self.values_nm[0]) if self.values_nm.size > 1 else 0.0


@dataclass(frozen=True)
class ExploreGrids:
    """Colours, luminous values and spectra of a stack on its grid (see :func:`explore_grids`).

    Arrays have the shape ``(angles, n1, n2)`` (``n2`` = 1 with one free thickness), and a last
    axis of 3 (Lab, sRGB) or of the spectrum's wavelengths.

    Attributes
    ----------
    stack, ambient, illuminant : str
    observer : int
    free : tuple of FreeThickness
    angle_deg : numpy.ndarray
    curve_wavelength_nm : numpy.ndarray
        Wavelengths of the spectra kept for the page.
    views : dict
        For each view present (``reflected``, ``reflected_reverse``, ``transmitted``) a dict with
        ``Lab`` (float), ``rgb8`` (uint8), ``hex`` (str), ``in_gamut`` (bool) and ``word`` (str).
    view_names : dict
        The coater's words for the views (film side, glass side, through).
    luminous : dict
        ``T``, ``R``, ``R_reverse`` (None without a back side), ``A_layers``, ``A_substrate``.
    R, T : numpy.ndarray
        Film-side reflectance and transmittance on ``curve_wavelength_nm``.
    transmission : str
        What T means (:attr:`filmoptic.engine.Spectrum.transmission`).
    """

    stack: str
    ambient: str
    illuminant: str
    observer: int
    free: tuple
    angle_deg: np.ndarray
    curve_wavelength_nm: np.ndarray
    views: dict
    view_names: dict
    luminous: dict
    R: np.ndarray
    T: np.ndarray
    transmission: str

    @property
    def shape(self) -> tuple:
        return self.R.shape[:3]

    @property
    def points(self) -> int:
        return int(np.prod(self.shape))

    def index(self, thickness_nm, angle_deg) -> tuple:
        """The grid point nearest to the given thicknesses (one per slider) and angle."""
        d = np.atleast_1d(np.asarray(thickness_nm, dtype=float))
        if d.size != len(self.free):
            raise FilmopticError(f"give {len(self.free)} thickness(es), got {d.size}")
        cells = [int(np.argmin(np.abs(f.values_nm - v))) for f, v in zip(self.free, d)]
        if len(cells) == 1:
            cells.append(0)
        return (int(np.argmin(np.abs(self.angle_deg - float(angle_deg)))), *cells)


def bytes_per_point(view_count: int, curve_points: int) -> int:
    """Page bytes per grid point before base64: per view Lab (3 × int16), sRGB (3 bytes), a flag
    and a word index; five luminous values (uint16); R and T spectra (uint16 each)."""
    return view_count * (6 + 3 + 1 + 1) + len(LUMINOUS_NAMES) * 2 + 2 * curve_points * 2


def _free_thicknesses(stack):
    params = stack.parameters
    others = [p.name for p in params if p.kind != "thickness"]
    if others:
        raise FilmopticError(f"explore varies layer thicknesses only; give numbers for {', '.join(others)}")
    if not 1 <= len(params) <= 2:
        raise FilmopticError(
            "explore needs one or two free thicknesses, written '?' or LOW..HIGH (e.g. "
            f"'TiO2 0..250nm / Ti'); this stack has {len(params)}"
        )
    return params


def _ranges(stack, params, ranges_nm):
    from filmoptic.inverse.solve import default_range_nm

    if ranges_nm is not None and len(ranges_nm) != len(params):
        raise FilmopticError(f"give one range per free thickness ({len(params)}), got {len(ranges_nm)}")
    out = []
    items = (*stack.layers, stack.substrate)
    for k, p in enumerate(params):
        if ranges_nm is not None and ranges_nm[k] is not None:
            low, high = (float(v) for v in ranges_nm[k])
            if p.free.bounded and (low < p.free.low - 1e-9 or high > p.free.high + 1e-9):
                raise FilmopticError(f"the range {low:g}–{high:g} nm reaches outside {p.free}, written in the "
                                     f"stack for {p.name}")
        elif p.free.bounded:
            low, high = float(p.free.low), float(p.free.high)
        else:
            low, high = default_range_nm(items[p.layer].material)
        if not 0 <= low < high:
            raise FilmopticError(f"{p.name}: need 0 <= LOW < HIGH, got {low:g}..{high:g}")
        out.append((low, high))
    return out


def _count(low, high, step) -> int:
    return int(np.floor((high - low) / step + 1e-9)) + 1


def _choose_steps(spans, step_nm, angle_count, per_point, budget_bytes) -> list:
    """One step per free thickness: ``step_nm`` for all when given (refused when the page would
    outgrow its budget), else 0.5 nm, coarsening the axis with the most values until it fits."""
    def size(steps):
        counts = [_count(lo, hi, st) for (lo, hi), st in zip(spans, steps)]
        return angle_count * int(np.prod(counts)) * per_point

    def megabytes(steps):
        return size(steps) * 4 / 3 / 1e6

    limit = budget_bytes * 4 / 3 / 1e6
    if step_nm is not None:
        if not np.isfinite(step_nm) or step_nm <= 0:
            raise FilmopticError(f"--step must be a positive length, got {step_nm:g} nm")
        steps = [float(step_nm)] * len(spans)
        if size(steps) > budget_bytes:
            raise FilmopticError(
                f"a {step_nm:g} nm step makes a page of about {megabytes(steps):.1f} MB, over its "
                f"{limit:.1f} MB limit; give a coarser --step, fewer --angles, or raise --max-mb"
            )
        return steps
    choice = [0] * len(spans)
    while True:
        steps = [STEP_CHOICES_NM[c] for c in choice]
        if size(steps) <= budget_bytes:
            return steps
        counts = [_count(lo, hi, st) if c + 1 < len(STEP_CHOICES_NM) else 0
                  for (lo, hi), st, c in zip(spans, steps, choice)]
        if max(counts) == 0:
            raise FilmopticError("the thickness ranges are too wide for a page even at 100 nm steps; narrow "
                                 "them, give fewer --angles or raise --max-mb")
        choice[int(np.argmax(counts))] += 1


def _thickness_sets(free):
    grids = np.meshgrid(*[f.values_nm for f in free], indexing="ij")
    return np.stack([g.reshape(-1) for g in grids], axis=1)       # (n1·n2, K)


def explore_grids(stack, *, step_nm: float | None = None, angles_deg=None, ranges_nm=None,
                  illuminant="D65", observer=2, ambient=None, extrapolate: bool = False,
                  max_mb: float = DEFAULT_MAX_MB, progress=None) -> ExploreGrids:
    """Compute everything an explore page shows, on a grid of free thicknesses × angles.

    Parameters
    ----------
    stack : filmoptic.stack.Stack or str
        A stack whose one or two unknowns are layer thicknesses (``?`` or ``LOW..HIGH``).
    step_nm : float, optional
        Thickness step; by default 0.5 nm, or coarser when the page would outgrow ``max_mb``.
    angles_deg : array_like, optional
        Viewing angles (default 0–70° every 5° for one free thickness, every 10° for two).
    ranges_nm : sequence of (low, high), optional
        One range per free thickness; by default the stack's ``LOW..HIGH``, or 0–100 nm for a
        metal and 0–500 nm otherwise.
    illuminant, observer, ambient, extrapolate
        As for :func:`filmoptic.colorimetry.appearance`.
    max_mb : float
        Largest page, MB (the grid's share of it is estimated from :func:`bytes_per_point`).
    progress : callable, optional
        ``progress(done, total)`` after every engine call.

    Returns
    -------
    ExploreGrids

    Examples
    --------
    >>> grids = explore_grids("TiO2 ? / Ti", ranges_nm=[(0, 100)], angles_deg=[0, 30])
    >>> grids.shape, grids.free[0].step_nm, sorted(grids.views)
    ((2, 201, 1), 0.5, ['reflected'])
    """
    from filmoptic.colorimetry import (check_illuminant, check_observer, colour_of, default_wavelengths,
                                       luminous)
    from filmoptic.describe.colour_words import colour_words
    from filmoptic.engine import compute
    from filmoptic.stack import parse_stack
    from filmoptic.units import inclusive_grid
    from filmoptic.describe.views import view_names

    if isinstance(stack, str):
        stack = parse_stack(stack, ambient=ambient or "air")
    elif ambient is not None:
        raise TypeError("ambient is given with the stack's notation; a parsed Stack already has one")
    obs = check_observer(observer)
    label = check_illuminant(illuminant)
    params = _free_thicknesses(stack)
    spans = _ranges(stack, params, ranges_nm)
    default_angles = DEFAULT_ANGLES_DEG if len(params) == 1 else DEFAULT_ANGLES_TWO_DEG
    angles = np.asarray(default_angles if angles_deg is None else angles_deg, dtype=float).reshape(-1)
    if angles.size == 0 or np.any(angles < 0) or np.any(angles >= 90):
        raise FilmopticError("angles of incidence must lie in [0, 90) degrees")
    angles = np.unique(angles)
    if not np.isfinite(max_mb) or max_mb <= 0:
        raise FilmopticError(f"--max-mb must be positive, got {max_mb:g}")

    wl = default_wavelengths()
    curve_wl = wl[::CURVE_STRIDE]
    has_back = stack.substrate.thickness_nm is not None
    exits = stack.substrate_passes_light(wl, extrapolate=extrapolate)
    keys = [k for k, present in zip(_VIEW_KEYS, (True, has_back, exits)) if present]
    per_point = bytes_per_point(len(keys), curve_wl.size)
    budget = max_mb * 1e6 * 3 / 4 - PAGE_OVERHEAD_BYTES
    steps = _choose_steps(spans, step_nm, angles.size, per_point, budget)
    items = (*stack.layers, stack.substrate)
    free = tuple(FreeThickness(p.name, str(items[p.layer].material.notation), inclusive_grid(lo, hi, st, p.name))
                 for p, (lo, hi), st in zip(params, spans, steps))
    sets = _thickness_sets(free)                                    # (S, K)
    S, A = sets.shape[0], angles.size
    block = max(1, POINTS_PER_CALL // (A * wl.size))
    starts = list(range(0, S, block))

    # Each block is reduced at once to what the page keeps (colours, luminous values, every other
    # wavelength of R and T), so memory follows the block, not the whole set of spectra.
    kept = {name: [] for name in ("curve R", "curve T", *LUMINOUS_NAMES, *(f"{k}:{part}" for k in keys
                                                               for part in ("Lab", "rgb8", "hex", "in_gamut")))}
    calls = len(starts) * (2 if has_back else 1)
    done = 0
    for start in starts:
        chunk = sets[start:start + block]
        front = compute(stack, wl, angle_deg=angles, polarization="unpolarized", thickness_nm=chunk,
                        extrapolate=extrapolate)                     # (chunk, A, W)
        done += 1
        back = None
        if has_back:
            back = compute(stack, wl, angle_deg=angles, polarization="unpolarized", reverse=True,
                           thickness_nm=chunk, extrapolate=extrapolate)
            done += 1
        spectra = {"reflected": front.R, "transmitted": front.T, "reflected_reverse": None if back is None else back.R,
                   "R": front.R, "T": front.T, "R_reverse": None if back is None else back.R,
                   "A_layers": front.A_layers, "A_substrate": front.A_substrate}
        for key in keys:
            colour = colour_of(wl, spectra[key], illuminant, obs)
            for part in ("Lab", "rgb8", "hex", "in_gamut"):
                kept[f"{key}:{part}"].append(np.asarray(getattr(colour, part)))
        for name in LUMINOUS_NAMES:
            if spectra[name] is not None:
                kept[name].append(luminous(wl, spectra[name], illuminant))
        kept["curve R"].append(front.R[..., ::CURVE_STRIDE])
        kept["curve T"].append(front.T[..., ::CURVE_STRIDE])
        meaning = front.transmission
        if progress is not None:
            progress(done, calls)
    shape = (A, *[f.values_nm.size for f in free], *([1] if len(free) == 1 else []))

    def grid(name):
        """Blocks of (chunk, A, …) → (A, n1, n2, …)."""
        values = np.concatenate(kept[name], axis=0)
        return np.moveaxis(values, 1, 0).reshape(*shape, *values.shape[2:])

    views = {}
    for key in keys:
        lab = grid(f"{key}:Lab").astype(float)
        views[key] = {
            "Lab": lab, "rgb8": grid(f"{key}:rgb8").astype(np.uint8), "hex": grid(f"{key}:hex"),
            "in_gamut": grid(f"{key}:in_gamut").astype(bool),
            "word": np.asarray(colour_words(lab), dtype=object).reshape(shape),
        }
    lum = {name: grid(name) if kept[name] else None for name in LUMINOUS_NAMES}
    return ExploreGrids(
        stack=getattr(stack, "text", str(stack)), ambient=str(getattr(stack.ambient, "name", "air")),
        illuminant=label, observer=obs, free=free, angle_deg=angles, curve_wavelength_nm=curve_wl,
        views=views, view_names=view_names(stack), luminous=lum, R=grid("curve R"), T=grid("curve T"),
        transmission=meaning,
    )
