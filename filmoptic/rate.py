"""Deposition rate and start-up offset from timed calibration runs.

A run of duration ``t`` that left a film of thickness ``d`` is one point of the straight line

    d = rate · t + offset

where ``offset`` (usually negative) is the thickness *not* deposited while the source comes up to
power, the shutter opens, and so on; ``-offset / rate`` is the corresponding dead time. Two or more
runs fit both numbers by least squares; a single run fixes the rate through the origin. The time for
the next run follows as ``(target - offset) / rate``.

A thickness read from a quartz-crystal monitor is the monitor's *indicated* thickness; the
*tooling factor* (measured ÷ indicated thickness, found once by measuring a film) converts it, and
the monitor end point for a target is ``target / tooling``.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import DataFileError, FilmopticError
from .units import parse_duration_s, parse_length_nm

__all__ = [
    "Run",
    "RateFit",
    "parse_run",
    "thickness_from_solve_file",
    "fit_rate",
]


@dataclass(frozen=True)
class Run:
    """One calibration run.

    Attributes
    ----------
    duration_s : float
        Deposition time in seconds.
    thickness_nm : float
        Film thickness in nm (after the tooling factor, for monitor readings).
    sigma_nm : float or None
        Standard uncertainty of the thickness, when known (from a ``solve`` interval).
    source : str
        Where the thickness came from, as the user wrote it.
    """

    duration_s: float
    thickness_nm: float
    sigma_nm: float | None = None
    source: str = ""


@dataclass(frozen=True)
class RateFit:
    """Result of :func:`fit_rate` (all uncertainties are one standard deviation, ``None`` when the
    data cannot give one).

    Attributes
    ----------
    rate_nm_per_s, rate_sigma_nm_per_s : float, float or None
        Deposition rate and its uncertainty.
    offset_nm, offset_sigma_nm : float, float or None
        Start-up offset (0 with no uncertainty when fitted through the origin).
    dead_time_s : float
        ``-offset / rate``: the time at the start of a run that deposits nothing.
    covariance : tuple
        2 × 2 covariance of (rate, offset) as nested tuples, or ``None``.
    through_origin : bool
        True when only the rate was fitted (a single run).
    weighted : bool
        True when every run carried an uncertainty and the fit was weighted by 1/σ².
    residual_rms_nm : float
        Root-mean-square misfit of the runs.
    target_nm, time_s, time_sigma_s : float or None
        The requested thickness, the run time it needs, and that time's uncertainty.
    tooling_factor, monitor_endpoint_nm : float or None
        The crystal-monitor tooling factor, and the thickness the monitor should indicate at the
        end of the run for the target.
    runs : tuple of Run
    """

    rate_nm_per_s: float
    rate_sigma_nm_per_s: float | None
    offset_nm: float
    offset_sigma_nm: float | None
    dead_time_s: float
    covariance: tuple | None
    through_origin: bool
    weighted: bool
    residual_rms_nm: float
    target_nm: float | None
    time_s: float | None
    time_sigma_s: float | None
    tooling_factor: float | None
    monitor_endpoint_nm: float | None
    runs: tuple


def thickness_from_solve_file(path) -> tuple[float, float | None]:
    """Read the first solution of a ``filmoptic solve --json`` output file.

    Returns the thickness and a standard uncertainty taken as half the reported interval
    (``(high_nm - low_nm) / 2``), or ``None`` when the interval is empty.
    """
    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        first = data["solutions"][0]
        thickness = float(first["thickness_nm"])
        low, high = first.get("low_nm"), first.get("high_nm")
    except FileNotFoundError:
        raise DataFileError(f"{path}: no such file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DataFileError(f"{path}: cannot read it ({exc.__class__.__name__})") from None
    except (json.JSONDecodeError, KeyError, IndexError, TypeError, ValueError):
        raise DataFileError(
            f"{path}: not a 'filmoptic solve --json' output with at least one solution"
        ) from None
    if not math.isfinite(thickness) or thickness < 0:
        raise DataFileError(f"{path}: the first solution's thickness_nm is not a valid thickness")
    sigma = None
    if low is not None and high is not None and float(high) > float(low):
        sigma = (float(high) - float(low)) / 2.0
    return thickness, sigma


def parse_run(text: str, tooling_factor: float | None = None) -> Run:
    """Parse a ``--run`` value: ``DURATION:THICKNESS``.

    THICKNESS is a length (``21.8nm``), ``monitor=LENGTH`` for a crystal-monitor reading (multiplied
    by the tooling factor, which must then be given), or the path of a ``filmoptic solve --json``
    output file whose first solution gives the thickness and its interval.

    Examples
    --------
    >>> parse_run("5min:12.5nm").duration_s
    300.0
    >>> parse_run("90s:monitor=10nm", tooling_factor=1.2).thickness_nm
    12.0
    """
    text = str(text).strip()
    if ":" not in text:
        raise FilmopticError(f"--run: expected DURATION:THICKNESS such as '5min:21.8nm', got {text!r}")
    duration_text, thickness_text = (part.strip() for part in text.split(":", 1))
    duration = parse_duration_s(duration_text, what=f"--run {text!r}: duration")
    sigma = None
    if thickness_text.lower().startswith("monitor="):
        if tooling_factor is None:
            raise FilmopticError(
                f"--run {text!r}: a monitor reading needs the tooling factor (--tooling)"
            )
        indicated = parse_length_nm(thickness_text.split("=", 1)[1], what=f"--run {text!r}: thickness")
        thickness = indicated * tooling_factor
    elif thickness_text.lower().endswith(".json"):
        thickness, sigma = thickness_from_solve_file(thickness_text)
    else:
        thickness = parse_length_nm(thickness_text, what=f"--run {text!r}: thickness")
    return Run(duration, thickness, sigma, thickness_text)


def _line_fit(t, d, sigma):
    """Least-squares straight line d = a·t + b; returns (a, b, covariance or None).

    With known σ the covariance is (AᵀWA)⁻¹; otherwise it is scaled by the residual variance
    s² = SSR/(n − 2), which needs at least three runs.
    """
    design = np.column_stack([t, np.ones_like(t)])
    weights = np.ones_like(t) if sigma is None else 1.0 / sigma**2
    normal = design.T @ (design * weights[:, None])
    if abs(np.linalg.det(normal)) <= 1e-12 * np.abs(normal).max() ** 2:
        raise FilmopticError("--run: the runs need at least two different durations to fit an offset")
    coeffs = np.linalg.solve(normal, design.T @ (weights * d))
    inverse = np.linalg.inv(normal)
    if sigma is not None:
        return coeffs[0], coeffs[1], inverse
    if len(t) > 2:
        residual = d - design @ coeffs
        return coeffs[0], coeffs[1], inverse * float(residual @ residual) / (len(t) - 2)
    return coeffs[0], coeffs[1], None


def fit_rate(runs, target_nm: float | None = None, tooling_factor: float | None = None,
             through_origin: bool | None = None) -> RateFit:
    """Fit the deposition rate (and start-up offset) to calibration runs.

    Parameters
    ----------
    runs : sequence of Run
    target_nm : float, optional
        Thickness wanted from the next run; the result then gives ``time_s``.
    tooling_factor : float, optional
        Crystal-monitor tooling factor (measured ÷ indicated); with a target, the result gives
        the monitor end point ``target / tooling``.
    through_origin : bool, optional
        Force (True) or forbid (False) a fit through the origin; by default a single run is
        fitted through the origin and two or more fit rate and offset.

    Returns
    -------
    RateFit

    Notes
    -----
    Ordinary least squares for a straight line with the usual standard errors
    s·√(1/Sxx) for the slope and s·√(1/n + x̄²/Sxx) for the intercept, s² = SSR/(n − 2);
    weighted by 1/σᵢ² when every run carries an uncertainty, with covariance (AᵀWA)⁻¹.

    References
    ----------
    N. R. Draper & H. Smith, *Applied Regression Analysis*, 3rd ed., Wiley (1998), ch. 1;
    P. R. Bevington & D. K. Robinson, *Data Reduction and Error Analysis for the Physical
    Sciences*, 3rd ed., McGraw-Hill (2003), ch. 6.

    Examples
    --------
    >>> fit = fit_rate([Run(240, 9.0), Run(600, 22.5)], target_nm=15.0)
    >>> round(fit.rate_nm_per_s, 6), round(fit.time_s, 1)
    (0.0375, 400.0)
    """
    runs = tuple(runs)
    if not runs:
        raise FilmopticError("rate: give at least one calibration run (--run DURATION:THICKNESS)")
    if tooling_factor is not None and not (math.isfinite(tooling_factor) and tooling_factor > 0):
        raise FilmopticError(f"--tooling must be a positive number, got {tooling_factor:g}")
    if target_nm is not None and not (math.isfinite(target_nm) and target_nm > 0):
        raise FilmopticError("--target must be a positive thickness")
    t = np.array([r.duration_s for r in runs], dtype=float)
    d = np.array([r.thickness_nm for r in runs], dtype=float)
    weighted = all(r.sigma_nm is not None and r.sigma_nm > 0 for r in runs)
    sigma = np.array([r.sigma_nm for r in runs], dtype=float) if weighted else None
    origin = len(runs) == 1 if through_origin is None else bool(through_origin)

    if origin:
        w = np.ones_like(t) if sigma is None else 1.0 / sigma**2
        rate = float(np.sum(w * t * d) / np.sum(w * t * t))
        offset = 0.0
        if sigma is not None:
            var_rate = 1.0 / float(np.sum(w * t * t))
        elif len(runs) > 1:
            residual = d - rate * t
            var_rate = float(residual @ residual) / (len(runs) - 1) / float(t @ t)
        else:
            var_rate = None
        cov = None if var_rate is None else np.array([[var_rate, 0.0], [0.0, 0.0]])
    else:
        if len(runs) < 2:
            raise FilmopticError("rate: fitting an offset needs at least two runs")
        rate, offset, cov = _line_fit(t, d, sigma)
        rate, offset = float(rate), float(offset)

    if not rate > 0:
        raise FilmopticError(
            f"rate: the runs give a rate of {rate:.4g} nm/s; longer runs must give thicker films"
        )
    residual = d - (rate * t + offset)
    time_s = time_sigma = endpoint = None
    if target_nm is not None:
        time_s = (target_nm - offset) / rate
        if time_s <= 0:
            raise FilmopticError(
                f"rate: {target_nm:g} nm lies below the start-up offset ({offset:.3g} nm); "
                "the runs cannot predict so thin a film"
            )
        if cov is not None:
            # t = (D - b)/a: ∂t/∂a = -t/a, ∂t/∂b = -1/a (first-order propagation).
            grad = np.array([-time_s / rate, -1.0 / rate])
            time_sigma = float(math.sqrt(max(grad @ cov @ grad, 0.0)))
        if tooling_factor is not None:
            endpoint = target_nm / tooling_factor
    return RateFit(
        rate_nm_per_s=rate,
        rate_sigma_nm_per_s=None if cov is None else float(math.sqrt(cov[0, 0])),
        offset_nm=offset,
        offset_sigma_nm=None if cov is None or origin else float(math.sqrt(cov[1, 1])),
        dead_time_s=-offset / rate,
        covariance=None if cov is None else tuple(map(tuple, cov.tolist())),
        through_origin=origin,
        weighted=weighted,
        residual_rms_nm=float(math.sqrt(np.mean(residual**2))),
        target_nm=target_nm,
        time_s=time_s,
        time_sigma_s=time_sigma,
        tooling_factor=tooling_factor,
        monitor_endpoint_nm=endpoint,
        runs=runs,
    )
