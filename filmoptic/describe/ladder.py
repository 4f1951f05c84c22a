"""A colour ladder: the colours of one layer at thicknesses a coater can aim for.

A sweep gives a colour for every nanometre; at the chamber people aim for round thicknesses (or
round anodising voltages) and want to know three things at each: the colour, what it is called,
and how much it changes if the run comes out a few percent thin or thick. :func:`colour_ladder`
answers them for a stack with one free thickness, all in one :func:`filmoptic.colorimetry.colour_sweep`
call (the swept thicknesses, the rungs, the thin and thick neighbours of every rung, and the
thicknesses below the sweep that the interference order is counted over).

Interference order
------------------
The order of a colour counts the dark bands the film has passed while growing: order 1 up to the
first minimum of the luminous reflectance, order 2 up to the second, and so on. Each minimum is a
destructive interference of the green light the eye weighs most, and each comes about half a
wavelength of optical path (λ/(2n) of thickness, near 555 nm) after the one before (Macleod,
*Thin-Film Optical Filters*, ch. 2); the colour sequence repeats, paler, from one order to the
next. Orders are given only when the swept layer is a transparent film (k below
:data:`ORDER_MAX_K_RATIO` × n at 550 nm): in a metal the bands are damped out and the count means
nothing.

References
----------
H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press (2010), ch. 2.
CIE 15:2018, *Colorimetry* (CIELAB, ΔE00).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..errors import FilmopticError

__all__ = ["colour_ladder", "ColourLadder", "Rung", "rung_positions", "MAX_RUNGS", "order_edges_nm",
           "ORDER_MAX_K_RATIO", "parse_tolerance"]

#: At most this many rungs fit a sheet of paper with chips big enough to compare with parts.
MAX_RUNGS = 32
#: The swept layer counts as transparent (orders shown) when k/n at 550 nm is below this.
ORDER_MAX_K_RATIO = 0.05
#: A luminous-reflectance minimum counts as a dark band when it lies at least this far (a
#: fraction) below the lower of the maxima on its two sides.
DARK_BAND_DEPTH = 0.003
#: Finest thickness step used to find the dark bands, nm.
ORDER_STEP_NM = 0.5
_ORDER_POINTS = 20_000


@dataclass(frozen=True)
class Rung:
    """One rung of the ladder: a thickness to aim for and its neighbours within the tolerance.

    Attributes
    ----------
    position : float
        Where the rung sits on the ladder's axis (nm, or volts for an anodising ladder).
    thickness_nm, thinner_nm, thicker_nm : float
        The aim, and the aim less and plus the tolerance (not below 0).
    reflected, thinner, thicker : filmoptic.colorimetry.Colour
        The colour seen on the film side at the three thicknesses.
    delta_E00 : tuple of float
        ΔE00 of the thinner and the thicker colour from the aim's.
    transmitted : filmoptic.colorimetry.Colour or None
        The colour of light through the part at the aim (None when nothing comes through).
    word : str
        A plain word for the film-side colour (:func:`filmoptic.describe.colour_words.colour_word`).
    order : int or None
        Interference order (None when orders are not meaningful, see the module notes).
    luminous_R, luminous_T : float
        Luminous reflectance (film side) and transmittance at the aim, fractions.
    """

    position: float
    thickness_nm: float
    thinner_nm: float
    thicker_nm: float
    reflected: object
    thinner: object
    thicker: object
    delta_E00: tuple
    transmitted: object
    word: str
    order: int | None
    luminous_R: float
    luminous_T: float


@dataclass(frozen=True)
class ColourLadder:
    """Outcome of :func:`colour_ladder`.

    Attributes
    ----------
    sweep : filmoptic.colorimetry.ColourSweep
        Colours and luminous values at the thicknesses asked for.
    position : numpy.ndarray
        Those thicknesses on the ladder's axis (nm, or volts).
    unit : str
        ``"nm"`` or ``"V"``.
    axis_label : str
        What the axis shows, with its unit.
    rungs : tuple of Rung
    tolerance_text : str
        The tolerance as written on the chart (``"±5 %"``, ``"±2 nm"``).
    order_edges_nm : numpy.ndarray or None
        Thicknesses of the dark bands (where a new order begins); None when orders are not given.
    law : object or None
        The growth law that turns volts into thickness, for an anodising ladder.
    """

    sweep: object
    position: np.ndarray
    unit: str
    axis_label: str
    rungs: tuple
    tolerance_text: str
    order_edges_nm: np.ndarray | None
    law: object = None

    @property
    def orders_shown(self) -> bool:
        return self.order_edges_nm is not None

    def position_of(self, thickness_nm):
        """Thickness on the ladder's axis (itself, or volts through the growth law)."""
        return np.asarray(thickness_nm, dtype=float) if self.law is None else self.law.volts(thickness_nm)


def parse_tolerance(text, what: str = "--tolerance") -> tuple:
    """A run's thickness tolerance: ``5%`` (relative) or a length such as ``2nm``.

    Returns ``(fraction, None)`` or ``(None, nm)``.

    Examples
    --------
    >>> parse_tolerance("5%"), parse_tolerance("2nm"), parse_tolerance("0.03")
    ((0.05, None), (None, 2.0), (0.03, None))
    """
    from ..units import parse_fraction, parse_length_nm

    text = str(text).strip()
    if text.endswith("%") or not text[-1:].isalpha():
        value = parse_fraction(text, what, 0.0, 0.5)
        return value, None
    value = parse_length_nm(text, what)
    if value > 10_000:
        raise FilmopticError(f"{what} {text!r} is larger than any film a ladder shows (10 µm)")
    return None, value


def rung_positions(low: float, high: float, max_rungs: int = MAX_RUNGS) -> np.ndarray:
    """Round values from ``low`` to ``high``, as many as fit ``max_rungs``.

    The step is 1, 2, 2.5 or 5 × 10ⁿ: the marks of a coater's thickness monitor or the knob of a
    power supply.

    Examples
    --------
    >>> rung_positions(0, 250).tolist()[:4], len(rung_positions(0, 250))
    ([0.0, 10.0, 20.0, 30.0], 26)
    >>> rung_positions(10, 110).tolist()[:3]
    [10.0, 15.0, 20.0]
    """
    low, high = float(low), float(high)
    if not np.isfinite(low) or not np.isfinite(high) or high < low:
        raise FilmopticError(f"a ladder needs low <= high, got {low:g} and {high:g}")
    if high == low:
        return np.array([low])
    span = high - low
    magnitude = 10.0 ** np.floor(np.log10(span / max_rungs))
    for factor in (1, 2, 2.5, 5, 10, 20, 25, 50):
        step = factor * magnitude
        first = np.ceil(low / step - 1e-9) * step
        count = int(np.floor((high - first) / step + 1e-9)) + 1
        if count <= max_rungs:
            return np.round(first + step * np.arange(count), 10)
    raise AssertionError("unreachable: a step of 50 × the magnitude always fits")


def _unbounded(stack):
    """The stack with its free thickness written '?': the tolerance neighbours of a rung at the
    end of a LOW..HIGH range, and the order count from 0, may lie outside that range."""
    from ..params import Free, is_free

    def open_up(layer):
        return replace(layer, thickness_nm=Free()) if is_free(layer.thickness_nm) else layer

    return replace(stack, layers=tuple(open_up(layer) for layer in stack.layers))


def _free_layer(stack):
    columns = stack.thickness_columns()
    return next(layer for layer, column in zip(stack.layers, columns) if column is not None)


def _orders_meaningful(stack, extrapolate) -> bool:
    material = _free_layer(stack).material
    try:
        N = complex(np.asarray(material.nk(np.array([550.0]), extrapolate=extrapolate)).reshape(-1)[0])
    except FilmopticError:
        return False
    return N.real > 0 and N.imag < ORDER_MAX_K_RATIO * N.real


def order_edges_nm(thickness_nm, luminous_R, depth: float = DARK_BAND_DEPTH) -> np.ndarray:
    """Thicknesses of the dark bands: minima of the luminous reflectance at least ``depth`` below
    the lower of the maxima on either side (ends of the range count as maxima).

    Examples
    --------
    >>> d = np.linspace(0, 300, 601)
    >>> order_edges_nm(d, 0.2 + 0.1 * np.cos(2 * np.pi * d / 100)).tolist()
    [50.0, 150.0, 250.0]
    """
    d = np.asarray(thickness_nm, dtype=float)
    r = np.asarray(luminous_R, dtype=float)
    if r.size < 3:
        return np.empty(0)
    inner = np.flatnonzero((r[1:-1] < r[:-2]) & (r[1:-1] <= r[2:])) + 1
    edges = []
    bounds = np.concatenate(([0], inner, [r.size - 1]))
    for k, i in enumerate(inner, start=1):
        left = r[bounds[k - 1]:i + 1].max()
        right = r[i:bounds[k + 1] + 1].max()
        if min(left, right) - r[i] >= depth:
            edges.append(d[i])
    return np.asarray(edges, dtype=float)


def colour_ladder(stack, thickness_nm, *, tolerance: float = 0.05, tolerance_nm: float | None = None,
                  law=None, max_rungs: int = MAX_RUNGS, illuminant="D65", observer=2, angle_deg=0.0,
                  ambient=None, extrapolate=False, progress=None) -> ColourLadder:
    """Colours of a stack's one free thickness at round aims, with their tolerance neighbours.

    Parameters
    ----------
    stack : filmoptic.stack.Stack or str
        A stack with one unknown thickness (``?`` or ``LOW..HIGH``).
    thickness_nm : array_like
        The thicknesses of the sweep (as for :func:`filmoptic.colorimetry.colour_sweep`); the rungs
        are round values between its ends.
    tolerance : float
        The run's relative thickness tolerance (0.05 for ±5 %), used when ``tolerance_nm`` is None.
    tolerance_nm : float, optional
        An absolute tolerance instead, nm.
    law : filmoptic.colouring.anodize.GrowthLaw, optional
        Lay the ladder out in anodising volts: rungs at round voltages.
    max_rungs : int
    illuminant, observer, angle_deg, ambient, extrapolate, progress
        As for :func:`filmoptic.colorimetry.colour_sweep`.

    Returns
    -------
    ColourLadder

    Examples
    --------
    >>> ladder = colour_ladder("n=2.0 ? / n=1.5", np.arange(0.0, 301.0, 1.0), ambient="n=1")
    >>> [r.thickness_nm for r in ladder.rungs][:3], ladder.tolerance_text
    ([0.0, 10.0, 20.0], '±5 %')
    >>> [r.order for r in ladder.rungs if r.thickness_nm in (130.0, 140.0)]
    [1, 2]
    """
    from ..colorimetry import colour_sweep, delta_e00, sweep_bounds_nm
    from .colour_words import colour_words
    from ..stack import parse_stack

    if isinstance(stack, str):
        stack = parse_stack(stack, ambient=ambient or "air")
    elif ambient is not None:
        raise TypeError("ambient is given with the stack's notation; a parsed Stack already has one")
    d = np.asarray(thickness_nm, dtype=float).reshape(-1)
    if d.size == 0:
        raise FilmopticError("the ladder has no thicknesses")
    if tolerance_nm is None:
        if not np.isfinite(tolerance) or not 0 <= tolerance < 1:
            raise FilmopticError(f"the tolerance must lie in 0 to under 100 %, got {100 * tolerance:g} %")
        tolerance_text = f"±{100 * tolerance:g} %"
    else:
        if not np.isfinite(tolerance_nm) or tolerance_nm < 0:
            raise FilmopticError(f"the tolerance must be a thickness of 0 nm or more, got {tolerance_nm:g}")
        tolerance_text = f"±{tolerance_nm:g} nm"
    if not isinstance(max_rungs, (int, np.integer)) or not 2 <= max_rungs <= 200:
        raise FilmopticError(f"max_rungs must be a whole number from 2 to 200, got {max_rungs!r}")
    sweep_bounds_nm(stack)    # exactly one unknown, a thickness: the sweep's own message otherwise
    if law is None:
        aims = rung_positions(d.min(), d.max(), max_rungs)
        positions = aims
    else:
        positions = rung_positions(float(law.volts(d.min())), float(law.volts(d.max())), max_rungs)
        aims = np.asarray(law.thickness_nm(positions), dtype=float)
    if tolerance_nm is None:
        thinner, thicker = aims * (1 - tolerance), aims * (1 + tolerance)
    else:
        thinner, thicker = np.maximum(aims - tolerance_nm, 0.0), aims + tolerance_nm
    orders = _orders_meaningful(stack, extrapolate)
    top = float(thicker.max())
    count = int(min(_ORDER_POINTS, np.ceil(top / ORDER_STEP_NM) + 1)) if orders else 0
    below = np.linspace(0.0, top, max(count, 2)) if orders else np.empty(0)

    sweep = colour_sweep(stack, d, illuminant=illuminant, observer=observer, angle_deg=angle_deg,
                         extrapolate=extrapolate, progress=progress)
    extra = colour_sweep(_unbounded(stack), np.concatenate([aims, thinner, thicker, below]),
                         illuminant=illuminant, observer=observer, angle_deg=angle_deg,
                         extrapolate=extrapolate)
    n = aims.size
    at, lo, hi = extra.reflected[:n], extra.reflected[n:2 * n], extra.reflected[2 * n:3 * n]
    edges = order_edges_nm(below, extra.luminous_R[3 * n:]) if orders else None
    shift_lo = delta_e00(at.Lab, lo.Lab)
    shift_hi = delta_e00(at.Lab, hi.Lab)
    words = colour_words(at.Lab)
    rungs = tuple(
        Rung(
            position=float(positions[i]), thickness_nm=float(aims[i]), thinner_nm=float(thinner[i]),
            thicker_nm=float(thicker[i]), reflected=at[i], thinner=lo[i], thicker=hi[i],
            delta_E00=(float(shift_lo[i]), float(shift_hi[i])),
            transmitted=None if extra.transmitted is None else extra.transmitted[i],
            word=words[i],
            order=None if edges is None else int(1 + np.count_nonzero(edges < aims[i] - 1e-9)),
            luminous_R=float(extra.luminous_R[i]), luminous_T=float(extra.luminous_T[i]),
        )
        for i in range(n)
    )
    if law is None:
        position, unit, label = d, "nm", "layer thickness (nm)"
    else:
        position, unit = np.asarray(law.volts(d), dtype=float), "V"
        label = f"anodising voltage (V), {law.describe()}"
    return ColourLadder(sweep=sweep, position=position, unit=unit, axis_label=label, rungs=rungs,
                        tolerance_text=tolerance_text, order_edges_nm=edges, law=law)
