"""One unknown thickness from a design target or from a cheap measurement.

A stack with one free thickness (``"Ti ? / glass 4mm"``) and one or more *conditions* — a luminous
transmittance to reach, a colour to match, a lux-meter reading to explain — give every thickness in
a range that meets them.

Conditions
----------
:class:`Target` (a luminous value, or T or R at one wavelength), :class:`ColourTarget` (CIELAB,
nearest by ΔE00) and :class:`Reading` (a band-weighted transmittance reading; its model of sources,
detectors and references is :mod:`filmoptic.inverse.readings`). Each is bound to the stack by its
``prepare`` method, which gives the forward model: the quantity at any array of thicknesses, in one
engine call.

Method
------
1. The quantity is evaluated on a dense thickness grid in **one** vectorised call of the
   transfer-matrix engine (:func:`filmoptic.engine.compute` with ``thickness_nm`` of shape
   ``(n, 1)``). The grid step is ``min(1 nm, λ_min / (32 · n_max))``, where λ_min is the shortest
   wavelength the condition looks at and n_max the largest real index of the free layer there:
   a transparent film's response repeats every λ/(2n) of thickness and is monotone over at most a
   quarter of that, λ/(4n), so the grid puts at least eight points on every monotone piece and no
   root of even a thick dielectric can hide between two grid points.
2. Every sign change of (quantity − target) brackets a root; all brackets are refined together by
   a vectorised Illinois (modified false-position) iteration on the forward model itself, and each
   root is verified with the forward model to :data:`ROOT_TOLERANCE`.
3. Colour targets, several conditions at once, and targets out of reach are minimisation problems:
   every local minimum of the residual on the grid (ΔE00, or the weighted sum of squares) is refined
   by a vectorised golden-section search bounded by its two grid neighbours.
4. ``--uncertainty U`` turns a solution into the interval of thicknesses around it (same branch)
   that satisfy the condition within U: for a scalar the connected set where
   ``|quantity − target| ≤ U`` (its ends are roots of quantity = target ± U, or the range ends);
   for a colour the connected set where ΔE00 ≤ U; for several conditions with uncertainties the
   connected set where χ² ≤ χ²_min + 1 (the usual one-parameter 68 % interval,
   Press et al., *Numerical Recipes*, 3rd ed., §15.6).

The grid machinery of steps 2–4 (brackets, root and minimum refinement, intervals) is generic and
lives in :mod:`filmoptic.numerics.roots`.

References
----------
H. A. Macleod, *Thin-Film Optical Filters*, 4th ed., CRC Press (2010), ch. 2 (characteristic
matrices) and ch. 3 (periodicity of a single layer's response, n·d = m·λ/4 extrema).
The Illinois method (Dowell & Jarratt 1971) and golden-section search (Kiefer 1953): see
:mod:`filmoptic.numerics.roots` for the full citations.
ISO 9050:2003 (luminous transmittance and reflectance); CIE 15:2018 (colour); ISO/CIE 11664-6
(ΔE00).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field, replace
from typing import Callable

import numpy as np

from ..errors import FilmopticError
from .readings import REFERENCES, band_weights, covered_range_nm, reference_level
from ..numerics.roots import (
    find_minima,
    find_roots,
    first_brackets,
    interval_around,
    refine_roots,
    touching_roots,
    unique_points,
)
from ..units import parse_number, parse_uncertainty_spec

__all__ = [
    "ROOT_TOLERANCE",
    "DEFAULT_RANGE_NM",
    "Target",
    "ColourTarget",
    "Reading",
    "Companions",
    "Solution",
    "SolveResult",
    "BatchResult",
    "parse_uncertainty",
    "parse_lab",
    "lab_from_hex",
    "default_range_nm",
    "grid_step_nm",
    "solve_thickness",
    "solve_batch",
    "evaluate_condition",
]

#: A root is accepted when the forward model reproduces the target to this (absolute, on 0–1
#: fractions) — far below any instrument's resolution.
ROOT_TOLERANCE = 1e-7
#: Default thickness ranges by the free layer's material kind (nm): a metal film is opaque well
#: before 100 nm; a dielectric shows several interference orders within 500 nm.
DEFAULT_RANGE_NM = {"metal": (0.0, 100.0), "other": (0.0, 500.0)}
#: Stages of :func:`solve_batch` reported to its ``advance`` callback.
BATCH_STEPS = 3
#: Thickness step for slopes (central differences on the forward model), nm.
SLOPE_STEP_NM = 0.01
# Default scales that make residuals of different kinds comparable when several conditions are
# given without uncertainties: 1 percentage point for fractions, 1 ΔE00 for colours.
_DEFAULT_SCALE = {"scalar": 0.01, "colour": 1.0}
_QUANTITIES = {
    "luminous_T": "luminous T",
    "luminous_R": "luminous R",
    "T": "T",
    "R": "R",
}


# --------------------------------------------------------------------------------------------
# Conditions
# --------------------------------------------------------------------------------------------


def _visible():
    from ..colorimetry import default_wavelengths

    return default_wavelengths()


def _lab(wl, values, illuminant="D65", observer=2) -> np.ndarray:
    """CIELAB of spectra (..., W), without the sRGB/gamut work of colour_of (not needed here)."""
    from ..cie.transforms import XYZ_to_Lab
    from ..colorimetry import _white_xy, spectrum_to_XYZ

    XYZ = spectrum_to_XYZ(wl, values, illuminant, observer)
    return XYZ_to_Lab(XYZ / 100.0, _white_xy(wl, illuminant, observer))


def _channel(stack, wl, channel, side, angle_deg, extrapolate):
    """The forward model of one channel ("R", "T" or "A") of the stack on ``wl``, seen from
    ``side``: thicknesses (n,) → values (n, W), one engine call."""

    def spectra(t):
        spectrum = _spectra(stack, wl, t, angle_deg, side == "reverse", extrapolate)
        return np.asarray(getattr(spectrum, channel), dtype=float)

    return spectra


class _ScalarCondition:
    """What the scalar conditions share: a copy with another value (a row of a batch)."""

    def with_value(self, value: float, uncertainty: float | None = None):
        return replace(self, value=value, uncertainty=self.uncertainty if uncertainty is None else uncertainty)


@dataclass(frozen=True)
class Target(_ScalarCondition):
    """A design target on a scalar quantity.

    Attributes
    ----------
    quantity : {"luminous_T", "luminous_R", "T", "R"}
        Luminous transmittance or reflectance (ISO 9050, under ``illuminant``), or the
        transmittance/reflectance at ``wavelength_nm``.
    value : float
        The target, a fraction 0–1.
    wavelength_nm : float, optional
        For ``"T"`` and ``"R"``.
    side : {"front", "reverse"}
        ``"reverse"`` looks from the substrate side (matters for reflectance).
    uncertainty : float
        Absolute tolerance on the value (0: an exact solution only).
    illuminant : str
        Illuminant for luminous values (default D65).
    """

    quantity: str
    value: float
    wavelength_nm: float | None = None
    side: str = "front"
    uncertainty: float = 0.0
    illuminant: str = "D65"
    kind: str = field(default="scalar", init=False)

    def __post_init__(self):
        if self.quantity not in _QUANTITIES:
            raise FilmopticError(f"unknown quantity {self.quantity!r}")
        if self.quantity in ("T", "R") and self.wavelength_nm is None:
            raise FilmopticError(f"a {self.quantity} target needs a wavelength")
        _check_side(self.side)
        _check_fraction(self.value, self.label())
        _check_uncertainty(self.uncertainty)

    def label(self) -> str:
        name = _QUANTITIES[self.quantity]
        if self.wavelength_nm is not None:
            name += f" at {self.wavelength_nm:g} nm"
        if self.side == "reverse":
            name += " (substrate side)"
        return name

    def prepare(self, stack, angle_deg=0.0, extrapolate=False):
        from ..colorimetry import luminous

        wl = _visible() if self.quantity.startswith("luminous") else np.array([float(self.wavelength_nm)])
        _check_light_path(stack, wl, extrapolate, self.label(), self.quantity.endswith("T"), self.side)
        if self.quantity.startswith("luminous"):
            spectra = _channel(stack, wl, self.quantity[-1], self.side, angle_deg, extrapolate)

            def evaluate(t):
                return np.asarray(luminous(wl, spectra(t), self.illuminant), dtype=float)
        else:
            spectra = _channel(stack, wl, self.quantity, self.side, angle_deg, extrapolate)

            def evaluate(t):
                return spectra(t)[..., 0]

        return _Prepared(self, evaluate, wl)


@dataclass(frozen=True)
class ColourTarget:
    """A colour to match, seen in reflection or transmission.

    Attributes
    ----------
    lab : tuple of float
        CIELAB L*, a*, b* under ``illuminant`` (2° observer).
    appearance : {"reflected", "transmitted"}
    side : {"front", "reverse"}
    uncertainty : float
        Largest acceptable ΔE00 (0: report the best matches whatever their ΔE00).
    illuminant : str
    text : str
        The colour as the user wrote it (``#c08040`` or ``L,a,b``).
    """

    lab: tuple
    appearance: str = "reflected"
    side: str = "front"
    uncertainty: float = 0.0
    illuminant: str = "D65"
    text: str = ""
    kind: str = field(default="colour", init=False)

    def __post_init__(self):
        if self.appearance not in ("reflected", "transmitted"):
            raise FilmopticError(f"appearance must be 'reflected' or 'transmitted', got {self.appearance!r}")
        _check_side(self.side)
        _check_uncertainty(self.uncertainty)
        if len(self.lab) != 3 or not all(math.isfinite(float(v)) for v in self.lab):
            raise FilmopticError("a colour target needs three finite numbers L*, a*, b*")
        object.__setattr__(self, "lab", tuple(float(v) for v in self.lab))

    def label(self) -> str:
        shown = self.text or "L*a*b* {:.1f}, {:.1f}, {:.1f}".format(*self.lab)
        side = " (substrate side)" if self.side == "reverse" else ""
        return f"{self.appearance} colour {shown}{side}"

    def prepare(self, stack, angle_deg=0.0, extrapolate=False):
        wl = _visible()
        _check_light_path(stack, wl, extrapolate, self.label(), self.appearance == "transmitted", self.side)
        channel = "R" if self.appearance == "reflected" else "T"
        spectra = _channel(stack, wl, channel, self.side, angle_deg, extrapolate)

        def evaluate(t):
            return _lab(wl, spectra(t), self.illuminant)

        return _Prepared(self, evaluate, wl)


@dataclass(frozen=True)
class Reading(_ScalarCondition):
    """A measured transmittance reading: a light source, a detector and a reference.

    The reading's model (band weighting, the bare-substrate reference) is
    :mod:`filmoptic.inverse.readings`.

    Attributes
    ----------
    value : float
        The reading as a fraction of the reference reading (0–1).
    source : str
        An illuminant name (``"A"`` for a halogen lamp, ``"D65"``…), ``"laser:WL"`` for a
        monochromatic line at WL nm, ``"led:WL/FWHM"`` for an LED modelled as a Gaussian of that
        full width at half maximum, or the path of a two-column spectrum file.
    detector : str
        ``"photopic"`` (a lux meter: V(λ)), ``"flat"`` (a power meter or thermal sensor) or the path
        of a two-column response file.
    reference : {"open", "bare"}
        The reading was divided by the open-beam reading, or by the reading through an uncoated
        piece of the same substrate.
    uncertainty : float
        Absolute uncertainty of the value.
    """

    value: float
    source: str = "D65"
    detector: str = "photopic"
    reference: str = "open"
    uncertainty: float = 0.0
    kind: str = field(default="scalar", init=False)

    def __post_init__(self):
        if self.reference not in REFERENCES:
            raise FilmopticError(f"--reference must be 'open' or 'bare', got {self.reference!r}")
        _check_fraction(self.value, "the reading")
        _check_uncertainty(self.uncertainty)

    def label(self) -> str:
        ref = "open beam" if self.reference == "open" else "bare substrate"
        return f"reading ({self.source} source, {self.detector} detector, relative to {ref})"

    def prepare(self, stack, angle_deg=0.0, extrapolate=False):
        wl, weights = band_weights(self.source, self.detector, covered_range_nm(stack, extrapolate))
        _check_light_path(stack, wl, extrapolate, "a transmittance reading", True, "front")
        level = reference_level(stack, self.reference, wl, weights, angle_deg=angle_deg, extrapolate=extrapolate)
        spectra = _channel(stack, wl, "T", "front", angle_deg, extrapolate)

        def evaluate(t):
            return (spectra(t) @ weights) / level

        return _Prepared(self, evaluate, wl)


@dataclass(frozen=True)
class _Prepared:
    """A condition bound to a stack: ``evaluate(t)`` gives the quantity for thicknesses of any shape
    (colours get a trailing axis of 3), in one engine call."""

    condition: object
    flat_evaluate: Callable
    wavelength_nm: np.ndarray

    def evaluate(self, t) -> np.ndarray:
        t = np.asarray(t, dtype=float)
        out = np.asarray(self.flat_evaluate(t.reshape(-1)), dtype=float)
        return out.reshape(t.shape + out.shape[1:])

    def offset_from(self, goal):
        """``t ↦ quantity(t) − goal``: the function whose roots meet a scalar goal (an array of
        goals works elementwise)."""
        return lambda t: self.evaluate(t) - goal

    @property
    def kind(self) -> str:
        return self.condition.kind

    def residual(self, values) -> np.ndarray:
        """Signed (quantity − target) for scalars, ΔE00 (≥ 0) for colours."""
        if self.kind == "colour":
            from ..colorimetry import delta_e00

            return np.asarray(delta_e00(values, np.asarray(self.condition.lab)), dtype=float)
        return values - self.condition.value

    def scale(self) -> float:
        u = self.condition.uncertainty
        return u if u > 0 else _DEFAULT_SCALE[self.kind]


def _check_side(side):
    if side not in ("front", "reverse"):
        raise FilmopticError(f"--side must be 'front' or 'reverse', got {side!r}")


def _check_fraction(value, what):
    if not (isinstance(value, (int, float, np.floating)) and math.isfinite(value) and 0.0 <= value <= 1.0):
        raise FilmopticError(f"{what} must lie between 0 and 1 (0 %–100 %), got {value!r}")


def _check_uncertainty(u):
    if not (math.isfinite(u) and u >= 0):
        raise FilmopticError(f"--uncertainty must be a non-negative number, got {u!r}")


def _check_light_path(stack, wl, extrapolate, what, transmitted, side):
    """Refuse a condition that needs light to cross an absorbing half-space substrate: a
    transmittance (nothing comes out behind it; "T" would be the light absorbed in it) or a view
    from the substrate side (no light arrives from behind it).

    The rule is judged at the condition's own wavelengths, not the visible range of
    :func:`filmoptic.colorimetry.transmission_exits`: a laser reading at 1300 nm into silicon is
    meaningful even though silicon absorbs in the visible."""
    if not (transmitted or side == "reverse"):
        return
    if stack.substrate_passes_light(wl, extrapolate=extrapolate):
        return
    name = stack.substrate.label
    if transmitted:
        raise FilmopticError(
            f"{what}: no light comes out behind the substrate {name!r}, an absorbing half-space (what "
            "enters it is absorbed); solve for a reflectance (--luminous-R, --R-at, --lab) instead, or "
            "give the substrate as a slab with its thickness (e.g. 'glass 4mm')"
        )
    raise FilmopticError(
        f"{what}: no light arrives from behind the substrate {name!r}, an absorbing half-space; the "
        "substrate side (--side reverse) needs a substrate slab with its thickness (e.g. 'glass 4mm') "
        "or a transparent half-space"
    )


def _spectra(stack, wl, t, angle_deg, reverse, extrapolate):
    from ..engine import compute

    t = np.asarray(t, dtype=float)
    return compute(stack, wl, angle_deg=angle_deg, reverse=reverse, thickness_nm=t.reshape(-1, 1),
                   extrapolate=extrapolate)


# --------------------------------------------------------------------------------------------
# Parsing of what people type
# --------------------------------------------------------------------------------------------


def parse_uncertainty(text, value: float | None = None, what: str = "--uncertainty") -> float:
    """An absolute uncertainty from ``U`` (in the quantity's own unit), ``N%`` (N percent *of the
    value*) or ``Npp`` (N percentage points, i.e. N/100 as an absolute fraction); see
    :func:`filmoptic.units.parse_uncertainty_spec`.

    Examples
    --------
    >>> parse_uncertainty("0.01")
    0.01
    >>> round(parse_uncertainty("2%", value=0.3), 6), parse_uncertainty("2pp", value=0.3)
    (0.006, 0.02)
    """
    amount, kind = parse_uncertainty_spec(text, what)
    if kind == "relative":
        if value is None:
            raise FilmopticError(f"{what}: a percentage needs a value to take it of")
        return amount * abs(value)
    return amount


def parse_lab(text) -> tuple:
    """``L,a,b`` → a tuple of three floats (L* in 0–100).

    Examples
    --------
    >>> parse_lab("62, 3.5, -20")
    (62.0, 3.5, -20.0)
    """
    parts = [p for p in re.split(r"[,\s]+", str(text).strip()) if p]
    if len(parts) != 3:
        raise FilmopticError(f"--lab: write three numbers L,a,b like 62,3.5,-20, got {text!r}")
    L, a, b = (parse_number(p, "--lab") for p in parts)
    if not 0 <= L <= 100:
        raise FilmopticError(f"--lab: L* must lie in 0–100, got {L:g}")
    return (L, a, b)


def lab_from_hex(text, illuminant="D65") -> tuple:
    """CIELAB of an sRGB colour ``#rrggbb`` (IEC 61966-2-1), relative to the illuminant's white.

    The sRGB colour is decoded, converted to XYZ and adapted (Bradford) from D65 to the
    illuminant's white, the inverse of how :mod:`filmoptic.colorimetry` displays colours.

    Examples
    --------
    >>> [round(v, 1) for v in lab_from_hex("#ffffff")] == [100.0, 0.0, 0.0]
    True
    """
    from ..cie.transforms import XYZ_to_Lab, srgb_decode, srgb_to_XYZ_matrix
    from ..colorimetry import _white_xy, default_wavelengths

    s = str(text).strip()
    if not re.fullmatch(r"#?[0-9a-fA-F]{6}", s):
        raise FilmopticError(f"--hex: write a colour as #rrggbb, got {text!r}")
    s = s.lstrip("#")
    rgb = np.array([int(s[i:i + 2], 16) for i in (0, 2, 4)], dtype=float) / 255.0
    white_xy = _white_xy(default_wavelengths(), illuminant, 2)
    XYZ = srgb_decode(rgb) @ srgb_to_XYZ_matrix(white_xy)
    Lab = XYZ_to_Lab(XYZ, white_xy)
    return tuple(float(v) for v in Lab)


# --------------------------------------------------------------------------------------------
# Results
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Companions:
    """What a buyer of a semi-mirror asks besides the target (ISO 9050 luminous values, D65).

    ``luminous_R_reverse`` and ``reflected_reverse_ab`` are None for a half-space substrate.
    When no light comes out behind the part (an absorbing half-space such as a metal or silicon,
    see :func:`filmoptic.colorimetry.transmission_exits`), ``luminous_T`` is 0,
    ``transmitted_ab`` is None and everything not reflected is absorbed. ``absorptance`` is
    ``absorptance_layers + absorptance_substrate``: in the coating, and in the substrate (inside
    a glass plate, or all that enters an absorbing half-space). Tints are CIELAB (a*, b*) under
    D65.
    """

    luminous_T: float | None
    luminous_R: float
    luminous_R_reverse: float | None
    absorptance: float
    reflected_ab: tuple
    reflected_reverse_ab: tuple | None
    transmitted_ab: tuple | None
    absorptance_layers: float = 0.0
    absorptance_substrate: float = 0.0


@dataclass(frozen=True)
class Solution:
    """One thickness that meets (or best approaches) the condition(s).

    Attributes
    ----------
    thickness_nm : float
    low_nm, high_nm : float
        Interval from the uncertainty (equal to the thickness without one).
    value : float or tuple
        Achieved value of the first condition (a fraction, or L*, a*, b* for a colour).
    slope_per_nm : float
        Change of that quantity per nm at the solution (for a colour: ΔE00 per nm).
    delta_E00 : float or None
        Colour difference from a colour target.
    exact : bool
        True when the condition is met (a root); False for a best match (a minimum).
    residual : float
        0 for a root; ΔE00 for a colour; root-mean-square of the scaled residuals for several
        conditions.
    values, slopes_per_nm : tuple
        Achieved value and slope for every condition, in the order given.
    companions : Companions or None
    """

    thickness_nm: float
    low_nm: float
    high_nm: float
    value: object
    slope_per_nm: float
    delta_E00: float | None
    exact: bool
    residual: float
    values: tuple
    slopes_per_nm: tuple
    companions: Companions | None = None


@dataclass(frozen=True)
class SolveResult:
    """All solutions of one solve, ranked.

    Attributes
    ----------
    conditions : tuple
        The conditions as given.
    solutions : tuple of Solution
        Ranked: exact roots thinnest first (first interference order first); best matches by
        residual, then thickness. Empty when the condition cannot be met.
    message : str
        A one-line summary (and, when unmet, the closest reachable value and where).
    closest : Solution or None
        When no solution exists: the thickness that comes closest.
    range_nm : tuple
        The thickness range searched.
    step_nm : float
        The grid step used.
    stack : str
        The stack notation.
    layer : str
        The free layer as written.
    """

    conditions: tuple
    solutions: tuple
    message: str
    closest: Solution | None
    range_nm: tuple
    step_nm: float
    stack: str
    layer: str

    @property
    def met(self) -> bool:
        return bool(self.solutions)


@dataclass(frozen=True)
class BatchResult:
    """Per-row thickness for a column of readings (arrays of length N).

    ``thickness_nm`` is the thinnest solution (NaN when none); ``solutions`` counts them;
    ``status`` is ``"ok"``, ``"several"`` (the thinnest is given; narrow the range) or
    ``"unreachable"``; ``closest_value``/``closest_nm`` say what comes nearest for those.
    """

    thickness_nm: np.ndarray
    low_nm: np.ndarray
    high_nm: np.ndarray
    value: np.ndarray
    slope_per_nm: np.ndarray
    solutions: np.ndarray
    status: np.ndarray
    closest_value: np.ndarray
    closest_nm: np.ndarray
    range_nm: tuple
    step_nm: float


# --------------------------------------------------------------------------------------------
# Solving
# --------------------------------------------------------------------------------------------


def _as_stack(stack, ambient="air"):
    from ..stack import parse_stack

    return parse_stack(stack, ambient=ambient) if isinstance(stack, str) else stack


def _free_layer(stack):
    """The one free thickness: (its layer, its Free); anything else free is an error."""
    params = tuple(stack.parameters)
    thick = tuple(stack.thickness_parameters)
    if len(thick) != 1:
        raise FilmopticError(
            f"the stack needs exactly one unknown thickness written '?', found {len(thick)} "
            "(e.g. \"Ti ? / glass 4mm\")"
        )
    if len(params) != 1:
        others = ", ".join(p.name for i, p in enumerate(params) if i not in thick)
        raise FilmopticError(f"solve finds one thickness; give numbers for the other unknowns ({others})")
    param = params[thick[0]]
    layer = stack.layers[param.layer] if param.layer < len(stack.layers) else None
    if layer is None:
        raise FilmopticError("the unknown thickness must belong to a coating layer, not the substrate")
    return layer, param.free


def default_range_nm(material) -> tuple:
    """Thickness range searched when none is given: 0–100 nm for a metal, else 0–500 nm.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> default_range_nm(SimpleNamespace(kind="metal"))
    (0.0, 100.0)
    """
    return DEFAULT_RANGE_NM["metal" if getattr(material, "kind", "") == "metal" else "other"]


def grid_step_nm(wavelength_min_nm: float, n_max: float) -> float:
    """Grid step that cannot miss a root: ``min(1 nm, λ_min / (32 · n_max))``.

    A transparent layer of index n repeats its response every λ/(2n) of thickness and is monotone
    over at most λ/(4n) (Macleod, *Thin-Film Optical Filters*, ch. 3); the step puts at least
    eight grid points on every monotone piece.

    Examples
    --------
    >>> grid_step_nm(380.0, 2.6) < 380.0 / (4 * 2.6) / 8 + 1e-12
    True
    """
    return min(1.0, float(wavelength_min_nm) / (32.0 * max(float(n_max), 1.0)))



def _max_index(material, wl, extrapolate) -> float:
    n = np.real(np.asarray(material.nk(np.asarray(wl, dtype=float), extrapolate=extrapolate)))
    return float(np.max(n)) if n.size else 1.0


def _thickness_grid(lo, hi, step):
    from ..limits import GRID_POINTS

    count = math.ceil((hi - lo) / step - 1e-9) + 1 if math.isfinite((hi - lo) / step) else math.inf
    GRID_POINTS.check(count, f"--range {lo:g}:{hi:g} nm at a step of {step:.3g} nm",
                      "use a larger --step or narrow the --range")
    return np.linspace(lo, hi, max(int(count), 3))


def _setup(stack, conditions, range_nm, step_nm, angle_deg, extrapolate, ambient):
    stack = _as_stack(stack, ambient)
    layer, free = _free_layer(stack)
    conditions = tuple(conditions)
    if not conditions:
        raise FilmopticError("give a condition to solve for (a target, a colour or a reading)")
    if range_nm is None:
        range_nm = (free.low, free.high) if free.bounded else default_range_nm(layer.material)
    lo, hi = float(range_nm[0]), float(range_nm[1])
    if not (0 <= lo < hi and math.isfinite(hi)):
        raise FilmopticError(f"--range: need 0 <= START < STOP, got {lo:g}:{hi:g}")
    prepared = tuple(c.prepare(stack, angle_deg=angle_deg, extrapolate=extrapolate) for c in conditions)
    wl_all = np.concatenate([p.wavelength_nm for p in prepared])
    if step_nm is None:
        step_nm = grid_step_nm(wl_all.min(), _max_index(layer.material, wl_all, extrapolate))
    grid = _thickness_grid(lo, hi, float(step_nm))
    return stack, layer, prepared, grid, (lo, hi)


def _fmt_value(prep, value) -> str:
    if prep.kind == "colour":
        return "L*a*b* {:.1f}, {:.1f}, {:.1f}".format(*np.asarray(value).tolist())
    return f"{100 * float(value):.2f} %"


def evaluate_condition(stack, condition, thickness_nm, *, angle_deg=0.0, extrapolate=False, ambient="air"):
    """The condition's quantity (fraction, or L*a*b* for a colour) at the given thicknesses of the
    stack's free layer — the forward model the solver inverts.

    Examples
    --------
    >>> evaluate_condition("n=1.5 ? / n=1.5", Target("R", 0.04, wavelength_nm=500.0), [0.0, 100.0],
    ...                    ambient="n=1").round(6).tolist()
    [0.04, 0.04]
    """
    stack = _as_stack(stack, ambient)
    _free_layer(stack)
    prep = condition.prepare(stack, angle_deg=angle_deg, extrapolate=extrapolate)
    return prep.evaluate(np.asarray(thickness_nm, dtype=float))


def _slopes(prepared, x, lo, hi):
    """Achieved values and slopes (central differences on the forward model) at thicknesses x."""
    h = SLOPE_STEP_NM
    left = np.maximum(x - h, lo)
    right = np.minimum(x + h, hi)
    k = x.size
    values, slopes = [], []
    for prep in prepared:
        both = prep.evaluate(np.concatenate([x, left, right]))
        v, vl, vr = both[:k], both[k:2 * k], both[2 * k:]
        width = np.where(right > left, right - left, np.nan)
        if prep.kind == "colour":
            from ..colorimetry import delta_e00

            slope = np.asarray(delta_e00(vl, vr), dtype=float) / width
        else:
            slope = (vr - vl) / width
        values.append(v)
        slopes.append(slope)
    return values, slopes


def _companions(stack, x, angle_deg, extrapolate):
    from ..colorimetry import luminous

    if x.size == 0:
        return []
    wl = _visible()
    front = _spectra(stack, wl, x, angle_deg, False, extrapolate)
    has_back = stack.substrate.thickness_nm is not None
    back = _spectra(stack, wl, x, angle_deg, True, extrapolate) if has_back else None
    Tv = np.atleast_1d(luminous(wl, front.T))
    Rv = np.atleast_1d(luminous(wl, front.R))
    Av = np.atleast_1d(luminous(wl, front.A))
    A_layers = np.atleast_1d(luminous(wl, front.A_layers))
    A_substrate = np.atleast_1d(luminous(wl, front.A_substrate))
    Rb = np.atleast_1d(luminous(wl, back.R)) if has_back else None
    lab_r = _lab(wl, front.R)
    exits = front.transmission != "opaque"
    lab_t = _lab(wl, front.T) if exits else None
    lab_b = _lab(wl, back.R) if has_back else None
    out = []
    for i in range(x.size):
        out.append(Companions(
            luminous_T=float(Tv[i]),
            luminous_R=float(Rv[i]),
            luminous_R_reverse=None if Rb is None else float(Rb[i]),
            absorptance=float(Av[i]),
            reflected_ab=(float(lab_r[i, 1]), float(lab_r[i, 2])),
            reflected_reverse_ab=None if lab_b is None else (float(lab_b[i, 1]), float(lab_b[i, 2])),
            transmitted_ab=(float(lab_t[i, 1]), float(lab_t[i, 2])) if exits else None,
            absorptance_layers=float(A_layers[i]),
            absorptance_substrate=float(A_substrate[i]),
        ))
    return out


def solve_thickness(stack, conditions, *, range_nm=None, step_nm=None, angle_deg=0.0,
                    extrapolate=False, ambient="air", companions=True) -> SolveResult:
    """Every thickness of the stack's one free layer that meets the condition(s).

    Parameters
    ----------
    stack : str or filmoptic.stack.Stack
        With exactly one free thickness (``?``, or ``LOW..HIGH nm`` which also sets the range).
    conditions : Target, ColourTarget or Reading, or a sequence of them
        One scalar condition is solved exactly (every root); one colour, or several conditions,
        in the least-squares sense (every local minimum).
    range_nm : (float, float), optional
        Thicknesses searched; default from the free layer (see :func:`default_range_nm`).
    step_nm : float, optional
        Grid step; default :func:`grid_step_nm` (documented in the module).
    angle_deg : float
        Angle of incidence (unpolarised light).
    extrapolate : bool
        Allow optical constants beyond their tables (held end values, with a warning).
    ambient : str
        Incident medium when ``stack`` is notation.
    companions : bool
        Also compute luminous R from both sides, absorptance and tints at every solution.

    Returns
    -------
    SolveResult
        With ``solutions=()`` and ``closest`` filled when the condition cannot be met.

    References
    ----------
    H. A. Macleod, *Thin-Film Optical Filters*, 4th ed. (2010), ch. 2–3; M. Dowell & R. Jarratt,
    BIT 11, 168 (1971); J. Kiefer, Proc. Amer. Math. Soc. 4, 502 (1953); ISO 9050:2003.

    Examples
    --------
    A layer of index 2.0 on index 1.5, in vacuum: R = 5 % at 600 nm is met at d and λ/(2n) − d
    (the response is symmetric about the quarter wave, 75 nm) and again a half wave later.

    >>> result = solve_thickness("n=2.0 ? / n=1.5", Target("R", 0.05, wavelength_nm=600.0),
    ...                          range_nm=(0, 200), ambient="n=1")
    >>> [round(s.thickness_nm, 2) for s in result.solutions]
    [10.78, 139.22, 160.78]
    """
    if isinstance(conditions, (Target, ColourTarget, Reading)):
        conditions = (conditions,)
    conditions = tuple(conditions)
    stack, layer, prepared, grid, (lo, hi) = _setup(
        stack, conditions, range_nm, step_nm, angle_deg, extrapolate, ambient)
    step = float(grid[1] - grid[0])
    single_scalar = len(prepared) == 1 and prepared[0].kind == "scalar"
    on_grid = [p.evaluate(grid) for p in prepared]

    closest = None
    if single_scalar:
        prep = prepared[0]
        target, u = prep.condition.value, prep.condition.uncertainty
        g = on_grid[0] - target
        offset = prep.offset_from(target)
        x = find_roots(offset, grid, g)
        x = unique_points(np.concatenate([x, touching_roots(offset, grid, g, x, ROOT_TOLERANCE)]))
        exact = np.ones(x.size, bool)
        residual = np.zeros(x.size)
        if x.size:
            if u > 0:
                low, high = interval_around(lambda t: np.abs(offset(t)) - u, grid, np.abs(g), x, u)
            else:
                low, high = x.copy(), x.copy()
        else:
            # Unmet: the nearest approach is a minimum of |g|; a tangent touch within tolerance counts.
            mx, mf = find_minima(lambda t: np.abs(offset(t)), grid, np.abs(g))
            best = int(np.argmin(mf))
            if mf[best] <= ROOT_TOLERANCE:
                x, exact, residual = mx[best:best + 1], np.ones(1, bool), np.zeros(1)
                low, high = x.copy(), x.copy()
            else:
                closest_x = mx[best:best + 1]
                low = high = closest_x
                x = np.zeros(0)
    else:
        scales = np.array([p.scale() for p in prepared])

        def chi2_from(values_list):
            total = 0.0
            for p, v, s in zip(prepared, values_list, scales):
                total = total + (np.asarray(p.residual(v), float) / s) ** 2
            return total

        def chi2(t):
            return chi2_from([p.evaluate(t) for p in prepared])

        c_grid = chi2_from(on_grid)
        mx, mf = find_minima(chi2, grid, c_grid)
        # A minimum on a range end is only the range's edge: keep it only when nothing inside does better.
        at_end = (mx <= lo + 1e-9) | (mx >= hi - 1e-9)
        if np.any(~at_end):
            worse = at_end & (mf > np.min(mf[~at_end]))
            mx, mf = mx[~worse], mf[~worse]
        order = np.lexsort((mx, mf))
        mx, mf = mx[order], mf[order]
        exact = np.zeros(mx.size, bool)
        residual = np.sqrt(mf / len(prepared))
        single_colour = len(prepared) == 1
        if single_colour:
            residual = np.sqrt(mf) * scales[0]          # ΔE00 itself
            u = prepared[0].condition.uncertainty
            if u > 0:
                ok = residual <= u
                if not np.any(ok):
                    closest_x = mx[:1]
                    x = np.zeros(0)
                else:
                    x, residual = mx[ok], residual[ok]
                    low, high = interval_around(
                        lambda t: np.asarray(prepared[0].residual(prepared[0].evaluate(t))) - u,
                        grid, np.sqrt(c_grid) * scales[0], x, u)
            else:
                x = mx
                low, high = x.copy(), x.copy()
        else:
            x = mx
            if all(p.condition.uncertainty > 0 for p in prepared):
                low, high = interval_around(lambda t: chi2(t) - (mf + 1.0), grid, c_grid, x, mf + 1.0)
            else:
                low, high = x.copy(), x.copy()

    if x.size == 0:
        # Describe the nearest approach.
        values, slopes = _slopes(prepared, closest_x, lo, hi)
        closest = _make_solutions(prepared, closest_x, closest_x, closest_x, values, slopes,
                                  np.zeros(1, bool), np.zeros(1), [None])[0]
        message = _unmet(prepared[0], closest, stack, layer, (lo, hi))
        return SolveResult(conditions, (), message, closest, (lo, hi), step, stack.text, layer.text)

    values, slopes = _slopes(prepared, x, lo, hi)
    comps = _companions(stack, x, angle_deg, extrapolate) if companions else [None] * x.size
    sols = _make_solutions(prepared, x, low, high, values, slopes, exact, residual, comps)
    if single_scalar:
        sols = sorted(sols, key=lambda s: s.thickness_nm)
    message = f"{len(sols)} solution{'s' if len(sols) != 1 else ''} in {lo:g}–{hi:g} nm"
    return SolveResult(conditions, tuple(sols), message, None, (lo, hi), step, stack.text, layer.text)


def _make_solutions(prepared, x, low, high, values, slopes, exact, residual, comps):
    sols = []
    for i in range(x.size):
        per_value = tuple(
            tuple(float(v) for v in np.asarray(vals[i])) if p.kind == "colour" else float(vals[i])
            for p, vals in zip(prepared, values)
        )
        per_slope = tuple(float(s[i]) for s in slopes)
        first = prepared[0]
        de = None
        if first.kind == "colour":
            de = float(first.residual(np.asarray(values[0][i])))
        sols.append(Solution(
            thickness_nm=float(x[i]),
            low_nm=float(min(low[i], x[i])),
            high_nm=float(max(high[i], x[i])),
            value=per_value[0],
            slope_per_nm=per_slope[0],
            delta_E00=de,
            exact=bool(exact[i]),
            residual=float(residual[i]),
            values=per_value,
            slopes_per_nm=per_slope,
            companions=comps[i],
        ))
    return sols


def _unmet(prep, closest, stack, layer, rng) -> str:
    cond = prep.condition
    where = f"at {closest.thickness_nm:.1f} nm"
    if prep.kind == "colour":
        return (f"{cond.label()} is not matched within ΔE00 {cond.uncertainty:g} by {layer.text} in "
                f"{rng[0]:g}–{rng[1]:g} nm: the closest is ΔE00 {closest.delta_E00:.2f} {where} "
                f"({_fmt_value(prep, closest.value)})")
    return (f"{cond.label()} = {100 * cond.value:.2f} % cannot be reached with {layer.text} in "
            f"{rng[0]:g}–{rng[1]:g} nm: the closest reachable is {_fmt_value(prep, closest.value)} {where}; "
            "change the target, the range (--range) or the material")


# --------------------------------------------------------------------------------------------
# Batch: a column of readings
# --------------------------------------------------------------------------------------------


def _polish(prep, x0, goal, dspline, lo, hi):
    """One Newton step on the forward model from interpolant roots, then verification.

    Rows whose forward value still misses ``goal`` by more than :data:`ROOT_TOLERANCE` (rare: a
    poor interpolant near an extremum) are re-solved by the Illinois iteration on the forward
    model, bracketed ±1 grid step around the estimate.
    """
    q0 = prep.evaluate(x0)
    d = dspline(x0)
    with np.errstate(divide="ignore", invalid="ignore"):
        x1 = np.where(np.abs(d) > 0, x0 - (q0 - goal) / d, x0)
    x1 = np.clip(np.where(np.isfinite(x1), x1, x0), lo, hi)
    q1 = prep.evaluate(x1)
    better = np.abs(q1 - goal) <= np.abs(q0 - goal)
    x, qx = np.where(better, x1, x0), np.where(better, q1, q0)
    bad = np.abs(qx - goal) > ROOT_TOLERANCE
    if np.any(bad):
        width = 1.0
        a, b = np.clip(x[bad] - width, lo, hi), np.clip(x[bad] + width, lo, hi)
        fa, fb = prep.evaluate(a) - goal[bad], prep.evaluate(b) - goal[bad]
        crossing = fa * fb < 0
        if np.any(crossing):
            sub = np.flatnonzero(bad)[crossing]
            g = goal[sub]
            fixed = refine_roots(prep.offset_from(g), a[crossing], b[crossing], fa[crossing], fb[crossing])
            x[sub] = fixed
            qx[sub] = prep.evaluate(fixed)
    return x, qx


def solve_batch(stack, condition, values, *, uncertainty=0.0, relative_uncertainty=False,
                range_nm=None, step_nm=None, angle_deg=0.0, extrapolate=False, ambient="air",
                chunk=2048, advance=None) -> BatchResult:
    """Thickness for each of many values of one scalar condition (a column of readings).

    The quantity is evaluated once on the thickness grid; every row's first sign change is found
    with numpy (a rows × grid sign mask); all rows are refined together on a cubic spline through
    the grid values (vectorised Illinois iteration), then by one Newton step on the forward model
    and verified with it to :data:`ROOT_TOLERANCE` (rows that miss are re-solved on the forward
    model). Interval ends are found the same way. No per-row root-finding loop; the slope is the
    spline's derivative.

    Parameters
    ----------
    stack : str or Stack
    condition : Target or Reading
        The template; its ``value`` is replaced by each row's value.
    values : array_like, shape (N,)
        Fractions 0–1.
    uncertainty : float
        Absolute uncertainty, or a fraction of each value when ``relative_uncertainty``.
    advance : callable, optional
        Called with 1 after each of the :data:`BATCH_STEPS` stages (for a progress bar).

    Returns
    -------
    BatchResult
        The thinnest solution per row, its interval and the number of solutions in the range.
    """
    if getattr(condition, "kind", None) != "scalar":
        raise FilmopticError("a column of values needs a scalar condition (a reading or a T/R target)")
    values = np.asarray(values, dtype=float).ravel()
    if values.size and (not np.all(np.isfinite(values)) or values.min() < 0 or values.max() > 1):
        bad = int(np.flatnonzero(~np.isfinite(values) | (values < 0) | (values > 1))[0])
        raise FilmopticError(f"row {bad + 1}: the value {values[bad]:g} is not a fraction in [0, 1]")
    stack, layer, prepared, grid, (lo, hi) = _setup(
        stack, (condition,), range_nm, step_nm, angle_deg, extrapolate, ambient)
    step_done = advance or (lambda n=1: None)
    prep = prepared[0]
    q = prep.evaluate(grid)
    step_done(1)
    u = np.abs(values) * uncertainty if relative_uncertainty else np.full(values.size, float(uncertainty))
    N = values.size
    # Each row's first bracket; exact grid hits and unreachable rows get a zero-width one.
    a, b, fa, fb, ok, count = first_brackets(grid, q, values, chunk=chunk)
    # Roots of the cubic interpolant of the grid values first (cheap), then a Newton step on the
    # forward model and a verification with it (two engine calls for all rows together).
    from ..numerics.interpolate import CubicSpline

    spline = CubicSpline(grid, q)
    dspline = spline.derivative()
    x = refine_roots(lambda t: spline(t) - values, a, b, fa, fb, xtol=1e-12)
    x = np.where(ok, x, np.nan)
    achieved = np.full(N, np.nan)
    if np.any(ok):
        x[ok], achieved[ok] = _polish(prep, x[ok], values[ok], dspline, lo, hi)
    step_done(1)

    low, high = x.copy(), x.copy()
    if np.any(u > 0) and np.any(ok):
        rows = np.flatnonzero(ok & (u > 0))
        vr, ur, xr = values[rows], u[rows], x[rows]
        ends_lo, ends_hi = [], []
        for start in range(0, rows.size, chunk):
            sl = slice(start, start + chunk)
            v, uu = vr[sl], ur[sl]
            r = np.abs(q[None, :] - v[:, None])
            lo_i, hi_i = interval_around(lambda t, v=v, uu=uu: np.abs(spline(t) - v) - uu, grid, r, xr[sl], uu,
                                         xtol=1e-12)
            ends_lo.append(lo_i)
            ends_hi.append(hi_i)
        ends = np.stack([np.concatenate(ends_lo), np.concatenate(ends_hi)])
        # Polish the ends that are roots of q = v ± U (not those clipped at the range ends).
        side = np.sign(spline(ends) - vr)
        inner = (ends > lo) & (ends < hi) & (side != 0)
        if np.any(inner):
            goal = (vr + side * ur)[inner]
            ends[inner], _ = _polish(prep, ends[inner], goal, dspline, lo, hi)
        low[rows], high[rows] = ends[0], ends[1]
    step_done(1)

    slope = np.full(N, np.nan)
    slope[ok] = dspline(x[ok])
    # For unreachable rows, the nearest approach on the grid is an end of q's range.
    i_max, i_min = int(np.argmax(q)), int(np.argmin(q))
    above = values > q[i_max]
    closest_nm = np.where(ok, np.nan, np.where(above, grid[i_max], grid[i_min]))
    closest_value = np.where(ok, np.nan, np.where(above, q[i_max], q[i_min]))
    status = np.where(~ok, "unreachable", np.where(count > 1, "several", "ok"))
    return BatchResult(x, low, high, achieved, slope, count, status, closest_value, closest_nm,
                       (lo, hi), float(grid[1] - grid[0]))
