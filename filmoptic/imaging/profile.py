"""Uniformity figures and fitted thickness profiles of a map.

Statistics
    Mean, standard deviation, minimum and maximum over the solved cells, and the uniformity
    ``±(max − min) / (max + min)`` in percent — the half-range about the mid-range value, the
    figure coating shops quote as "± x %" (common practice; other definitions, such as the
    standard deviation over the mean, give smaller numbers, so the definition is always stated).
Tilted plane
    ``t = t̄ + a·(x − x̄) + b·(y − ȳ)`` by linear least squares: a film thicker on one side, as a
    source off to one side or a tilted holder gives.
Radial fall-off of a small source
    ``t = t₀ / (1 + r²/h²)²`` with ``r`` the distance from a centre ``(xc, yc)``: the thickness
    a small surface (cosine-law) source at distance ``h`` deposits on a parallel plane facing it
    (M. Ohring, *Materials Science of Thin Films*, 2nd ed., Academic Press (2002), §3.5, the
    thickness distribution of evaporated films; from memory). Fitted by
    :func:`scipy.optimize.least_squares` over t₀, xc, yc and h; ``h`` is the equivalent source
    distance in the map's units, a handle on the geometry even for sources that are not small.

Both profiles are fitted to every solved cell; the one with the smaller residual per degree of
freedom is reported as the better description.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["MapStats", "PlaneFit", "RadialFit", "Profile", "uniformity_pct", "map_stats", "fit_plane",
           "fit_radial", "fit_profile"]


@dataclass(frozen=True)
class MapStats:
    """Statistics over the solved cells (thicknesses in nm; None when no cell is solved)."""

    mean_nm: float | None
    std_nm: float | None
    min_nm: float | None
    max_nm: float | None
    uniformity_pct: float | None
    cells_solved: int
    cells_flagged: int


@dataclass(frozen=True)
class PlaneFit:
    """``t = centre_nm + slope_x·(x − x_centre) + slope_y·(y − y_centre)`` (slopes in nm per map unit)."""

    centre_nm: float
    x_centre: float
    y_centre: float
    slope_x_nm: float
    slope_y_nm: float
    rms_nm: float

    @property
    def gradient_nm(self) -> float:
        """Steepest change, nm per map unit."""
        return math.hypot(self.slope_x_nm, self.slope_y_nm)

    @property
    def direction_deg(self) -> float:
        """Direction of steepest thickening: 0° = +x (right), 90° = +y (down the photo)."""
        return math.degrees(math.atan2(self.slope_y_nm, self.slope_x_nm)) % 360.0


@dataclass(frozen=True)
class RadialFit:
    """``t = peak_nm / (1 + r²/distance²)²`` about ``(x_centre, y_centre)``.

    ``converged`` is False when the optimiser stopped without meeting its tolerances.
    """

    peak_nm: float
    x_centre: float
    y_centre: float
    distance: float
    rms_nm: float
    converged: bool


@dataclass(frozen=True)
class Profile:
    """Fitted profiles; ``unit`` is ``"mm"`` or ``"px"`` (positions and slopes are per unit)."""

    unit: str
    plane: PlaneFit | None
    radial: RadialFit | None
    better: str | None


def uniformity_pct(thickness_nm) -> float | None:
    """``±(max − min) / (max + min)`` in percent over the finite values (None if none).

    Examples
    --------
    >>> uniformity_pct([9.0, 10.0, 11.0])
    10.0
    """
    t = np.asarray(thickness_nm, dtype=float)
    t = t[np.isfinite(t)]
    if t.size == 0:
        return None
    total = float(t.max() + t.min())
    return 100.0 * float(t.max() - t.min()) / total if total > 0 else None


def map_stats(thickness_nm, flags) -> MapStats:
    """Statistics of a map: over the cells with a thickness; flagged = cells in the mapped area
    whose flag is not ``"ok"`` (cells ``"outside"`` the area are neither solved nor flagged).

    Examples
    --------
    >>> s = map_stats([[10.0, 12.0], [np.nan, 11.0]], [["ok", "ok"], ["dark", "several"]])
    >>> s.mean_nm, s.uniformity_pct, s.cells_solved, s.cells_flagged
    (11.0, 9.090909090909092, 3, 2)
    """
    t = np.asarray(thickness_nm, dtype=float)
    flags = np.asarray(flags)
    solved = np.isfinite(t)
    flagged = int(np.count_nonzero((flags != "ok") & (flags != "outside")))
    if not solved.any():
        return MapStats(None, None, None, None, None, 0, flagged)
    v = t[solved]
    return MapStats(float(v.mean()), float(v.std(ddof=1)) if v.size > 1 else 0.0, float(v.min()),
                    float(v.max()), uniformity_pct(v), int(v.size), flagged)


def fit_plane(x, y, t) -> PlaneFit | None:
    """Least-squares tilted plane through points (x, y, t); None for fewer than 3 points or
    points on one line.

    Examples
    --------
    >>> x, y = np.meshgrid(np.arange(4.0), np.arange(3.0))
    >>> p = fit_plane(x.ravel(), y.ravel(), (10 + 0.5 * x - 0.25 * y).ravel())
    >>> round(p.slope_x_nm, 9), round(p.slope_y_nm, 9), round(p.centre_nm, 9)
    (0.5, -0.25, 10.5)
    """
    x, y, t = (np.asarray(v, dtype=float).ravel() for v in (x, y, t))
    if t.size < 3:
        return None
    xc, yc = float(x.mean()), float(y.mean())
    A = np.stack([np.ones_like(x), x - xc, y - yc], axis=1)
    coef, _, rank, _ = np.linalg.lstsq(A, t, rcond=None)
    if rank < 3:
        return None
    residual = t - A @ coef
    rms = float(np.sqrt(np.mean(residual ** 2)))
    return PlaneFit(float(coef[0]), xc, yc, float(coef[1]), float(coef[2]), rms)


def _radial(params, x, y):
    t0, xc, yc, h = params
    return t0 / (1.0 + ((x - xc) ** 2 + (y - yc) ** 2) / (h * h)) ** 2


def fit_radial(x, y, t) -> RadialFit | None:
    """Least-squares fit of the small-source fall-off ``t₀ / (1 + r²/h²)²`` (see the module notes).

    Starts from the thickest cells' centroid and the fall-off to the farthest cell; the centre may
    lie outside the mapped area (a source off to one side). None for fewer than 5 points.

    Examples
    --------
    >>> x, y = np.meshgrid(np.linspace(-40, 40, 9), np.linspace(-30, 30, 7))
    >>> t = _radial((20.0, 5.0, -3.0, 120.0), x, y)
    >>> r = fit_radial(x.ravel(), y.ravel(), t.ravel())
    >>> [round(v, 6) for v in (r.peak_nm, r.x_centre, r.y_centre, r.distance)]
    [20.0, 5.0, -3.0, 120.0]
    """
    from scipy.optimize import least_squares

    x, y, t = (np.asarray(v, dtype=float).ravel() for v in (x, y, t))
    if np.count_nonzero(t > 0) < 5:
        return None
    extent = float(max(np.ptp(x), np.ptp(y), 1e-9))
    top = t >= np.quantile(t, 0.9)
    xc, yc = float(x[top].mean()), float(y[top].mean())
    t0 = float(t.max())
    r = np.hypot(x - xc, y - yc)
    far = int(np.argmax(r))
    ratio = float(np.clip(t[far] / t0, 0.05, 0.999))
    h0 = float(r[far] / math.sqrt(1.0 / math.sqrt(ratio) - 1.0)) if r[far] > 0 else extent
    h0 = float(np.clip(h0, 0.05 * extent, 100.0 * extent))
    lower = [0.0, x.min() - 10 * extent, y.min() - 10 * extent, 0.01 * extent]
    upper = [10.0 * t0 + 1.0, x.max() + 10 * extent, y.max() + 10 * extent, 1000.0 * extent]
    start = np.clip([t0, xc, yc, h0], np.array(lower) + 1e-12, np.array(upper) - 1e-12)
    fit = least_squares(lambda p: _radial(p, x, y) - t, start, bounds=(lower, upper),
                        x_scale=[t0 or 1.0, extent, extent, extent], xtol=1e-12, ftol=1e-12, gtol=1e-12)
    rms = float(np.sqrt(np.mean(fit.fun ** 2)))
    return RadialFit(float(fit.x[0]), float(fit.x[1]), float(fit.x[2]), float(fit.x[3]), rms, bool(fit.success))


def fit_profile(x, y, t, unit: str) -> Profile:
    """Both profiles fitted to the finite cells; ``better`` names the one with the smaller residual
    per degree of freedom (None when neither could be fitted)."""
    x, y, t = (np.asarray(v, dtype=float).ravel() for v in (x, y, t))
    ok = np.isfinite(t)
    x, y, t = x[ok], y[ok], t[ok]
    plane = fit_plane(x, y, t)
    radial = fit_radial(x, y, t)
    scores = {}
    if plane is not None and t.size > 3:
        scores["plane"] = plane.rms_nm ** 2 * t.size / (t.size - 3)
    if radial is not None and t.size > 4:
        scores["radial"] = radial.rms_nm ** 2 * t.size / (t.size - 4)
    better = min(scores, key=scores.get) if scores else None
    return Profile(unit, plane, radial, better)
