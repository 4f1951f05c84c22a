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

Uncertainties
-------------
Each calibration thickness is known only to some error: a profilometer step, a solved reading, a
monitor's resolution. When every run carries a standard uncertainty σᵢ (written
``21.8nm+-0.4nm``, or taken from a ``filmoptic solve --json`` interval), the line is fitted by
weighted least squares (weights 1/σᵢ²) and the σᵢ are propagated: the covariance of (rate, offset)
is (AᵀWA)⁻¹, and the time for a target, ``t = (D − offset)/rate``, gets

    σ_t² = (t/rate)² σ_rate² + (1/rate)² σ_offset² + 2 (t/rate²) cov(rate, offset)

— the covariance term matters: rate and offset fitted to runs at positive times are negatively
correlated, and leaving it out overstates σ_t. Two runs with uncertainties fix the line exactly
but still carry their uncertainties into it. With three or more runs, χ² of the fit says whether
the scatter agrees with the stated uncertainties. Without uncertainties the usual residual-based
standard errors are given (three runs or more; none for two).

References
----------
P. R. Bevington & D. K. Robinson, *Data Reduction and Error Analysis for the Physical Sciences*,
3rd ed., McGraw-Hill (2003), ch. 3 (propagation of errors with covariance, eq. 3.13), ch. 6 (the
weighted straight-line fit and its variances) and ch. 7 (the covariance of fitted coefficients),
from memory; N. R. Draper & H. Smith, *Applied Regression Analysis*, 3rd ed., Wiley (1998), ch. 1.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import DataFileError, FilmopticError
from ..units import MAX_LENGTH_NM as MAX_THICKNESS_NM
from ..units import parse_duration_s, parse_length_nm, parse_number

__all__ = [
    "Run",
    "RateFit",
    "parse_run",
    "parse_thickness",
    "thickness_from_solve_file",
    "is_solve_file",
    "chi2_survival",
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
        Standard uncertainty (one standard deviation) of the thickness, when known: written with
        the run (``21.8nm+-0.4nm``) or half a ``solve`` interval.
    source : str
        Where the thickness came from, as the user wrote it.
    text : str
        The whole ``--run`` value as written (for messages), or ``""``.
    """

    duration_s: float
    thickness_nm: float
    sigma_nm: float | None = None
    source: str = ""
    text: str = ""


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
    dead_time_s, dead_time_sigma_s : float, float or None
        ``-offset / rate``: the time at the start of a run that deposits nothing, and its
        uncertainty (None through the origin).
    covariance : tuple
        2 × 2 covariance of (rate, offset) as nested tuples, or ``None``.
    through_origin : bool
        True when only the rate was fitted (a single run).
    weighted : bool
        True when every run carried an uncertainty and the fit was weighted by 1/σ²; the
        uncertainties are then those of the runs, propagated.
    residual_rms_nm : float
        Root-mean-square misfit of the runs.
    chi2, degrees_of_freedom, chi2_probability : float, int, float or None
        For a weighted fit: χ² = Σ((dᵢ − fitᵢ)/σᵢ)², the number of runs less the fitted
        parameters, and the probability of a χ² at least this large if the stated σᵢ are right
        (None without degrees of freedom). A small probability means the runs scatter more than
        their uncertainties allow.
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
    dead_time_sigma_s: float | None
    covariance: tuple | None
    through_origin: bool
    weighted: bool
    residual_rms_nm: float
    chi2: float | None
    degrees_of_freedom: int
    chi2_probability: float | None
    target_nm: float | None
    time_s: float | None
    time_sigma_s: float | None
    tooling_factor: float | None
    monitor_endpoint_nm: float | None
    runs: tuple


#: ``FILE.json`` or ``FILE.json#N``: the N-th solution (1-based, as numbered in the solve table).
_SOLVE_FILE = re.compile(r"^(?P<path>.+\.json)(?:#(?P<index>[^#]*))?$", re.IGNORECASE)


def is_solve_file(text: str) -> bool:
    """Whether a run's thickness names a solve output (``FILE.json`` or ``FILE.json#N``)."""
    return _SOLVE_FILE.match(str(text).strip()) is not None


def thickness_from_solve_file(path, index: int | None = None) -> tuple[float, float | None]:
    """Read one solution of a ``filmoptic solve --json`` output file.

    Parameters
    ----------
    path : str or os.PathLike
        The file; ``FILE.json#N`` picks the N-th solution (1-based, the ``#`` column of the solve
        table) when ``index`` is not given.
    index : int, optional
        Which solution (1-based). Without it the file must hold exactly one solution: several
        (interference orders, or colour matches) are different thicknesses, and taking one of
        them silently would put a wrong point on the rate line.

    Returns
    -------
    thickness_nm, sigma_nm
        The thickness and a standard uncertainty taken as half the reported interval
        (``(high_nm - low_nm) / 2``), or ``None`` when the interval is empty.
    """
    from ..files import read_json_input

    path, index = _split_solve_reference(path, index)
    data = read_json_input(path, "solve file")
    not_solve = f"{path}: not a 'filmoptic solve --json' output with at least one solution"
    solutions = data.get("solutions") if isinstance(data, dict) else None
    if (not isinstance(solutions, list) or not solutions
            or not all(isinstance(s, dict) and "thickness_nm" in s for s in solutions)):
        raise DataFileError(not_solve)
    count = len(solutions)
    if index is None and count > 1:
        raise FilmopticError(
            f"{path} holds {count} solutions (several thicknesses meet the condition): add the number "
            f"of the one to use, as in the '#' column of the solve table, e.g. {path}#2 (1 to {count})"
        )
    if index is not None and not 1 <= index <= count:
        choice = f"pick one of {path}#1 … {path}#{count}" if count > 1 else f"write {path} (or {path}#1)"
        raise FilmopticError(
            f"{path}#{index}: the file holds {count} solution{'s' if count != 1 else ''}; {choice}"
        )
    chosen = solutions[(index or 1) - 1]
    thickness = _solve_file_number(chosen["thickness_nm"], "thickness_nm", path)
    if thickness is None or thickness > MAX_THICKNESS_NM:
        raise DataFileError(f"{path}: the chosen solution's thickness_nm is not a valid thickness")
    low = _solve_file_number(chosen.get("low_nm"), "low_nm", path)
    high = _solve_file_number(chosen.get("high_nm"), "high_nm", path)
    sigma = None
    if low is not None and high is not None and high > low:
        if not low <= thickness <= high or high > MAX_THICKNESS_NM:
            raise DataFileError(
                f"{path}: the chosen solution's interval {low:g}–{high:g} nm does not hold its "
                f"thickness {thickness:g} nm"
            )
        sigma = (high - low) / 2.0
    return thickness, sigma


def _solve_file_number(value, key: str, path) -> float | None:
    """A non-negative finite number from a solve file (None for null or a missing key)."""
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value) or value < 0:
        raise DataFileError(f"{path}: {key} must be a thickness in nm (a number >= 0), got {value!r:.40}")
    return float(value)


def _split_solve_reference(path, index):
    """``FILE.json#N`` → (Path(FILE.json), N); a plain path keeps ``index``."""
    text = str(path).strip()
    match = _SOLVE_FILE.match(text)
    if match is None or match.group("index") is None:
        return Path(text), index
    index_text = match.group("index").strip()
    if not index_text.isdigit() or len(index_text) > 9 or int(index_text) < 1:
        raise FilmopticError(
            f"{text}: after '#' write the solution's number (1 for the first), e.g. {match.group('path')}#2"
        )
    if index is not None and index != int(index_text):
        raise FilmopticError(f"{text}: two different solution numbers given")
    return Path(match.group("path")), int(index_text)


_PLUS_MINUS = re.compile(r"\s*(?:±|\+/?-)\s*")


def parse_thickness(text: str, what: str = "thickness") -> tuple[float, float | None]:
    """A thickness with an optional standard uncertainty: ``21.8nm``, ``21.8nm+-0.4nm``,
    ``21.8nm±0.4nm`` or ``21.8nm+-2%`` (percent of the thickness). Returns ``(nm, sigma_nm or None)``.

    The uncertainty is one standard deviation and must be positive (a zero one would give the run
    infinite weight).

    Examples
    --------
    >>> parse_thickness("21.8nm+-0.4nm")
    (21.8, 0.4)
    >>> parse_thickness("0.2um ± 5%")
    (200.0, 10.0)
    >>> parse_thickness("12nm")
    (12.0, None)
    """
    parts = _PLUS_MINUS.split(str(text).strip())
    if len(parts) > 2:
        raise FilmopticError(f"{what}: write one uncertainty, like 21.8nm+-0.4nm, got {text!r}")
    thickness = parse_length_nm(parts[0], what=what)
    if len(parts) == 1:
        return thickness, None
    u_text = parts[1].strip()
    if u_text.endswith("%"):
        sigma = parse_number(u_text[:-1], f"{what} uncertainty") / 100.0 * thickness
    else:
        sigma = parse_length_nm(u_text, what=f"{what} uncertainty")
    if not sigma > 0:
        raise FilmopticError(
            f"{what}: the uncertainty after ± must be positive, got {u_text!r} (leave it out if unknown)"
        )
    return thickness, sigma


def parse_run(text: str, tooling_factor: float | None = None) -> Run:
    """Parse a ``--run`` value: ``DURATION:THICKNESS``.

    THICKNESS is a length (``21.8nm``), optionally with its standard uncertainty (``21.8nm+-0.4nm``,
    ``21.8nm±2%``, see :func:`parse_thickness`); ``monitor=LENGTH`` (with the same optional
    uncertainty) for a crystal-monitor reading, multiplied by the tooling factor, which must then be
    given; or the path of a ``filmoptic solve --json`` output file whose solution gives the
    thickness and, from its interval, the uncertainty (a file with several solutions needs
    ``FILE.json#N`` to pick the N-th, see :func:`thickness_from_solve_file`).

    DURATION is as :func:`filmoptic.units.parse_duration_s` reads it, a stopwatch time included
    (``5:30:21.8nm`` is 5 min 30 s); a thickness may be in Å as a crystal monitor shows it.

    Examples
    --------
    >>> parse_run("5min:12.5nm").duration_s
    300.0
    >>> parse_run("90s:monitor=10nm", tooling_factor=1.2).thickness_nm
    12.0
    >>> run = parse_run("5:30:218A")
    >>> run.duration_s, run.thickness_nm
    (330.0, 21.8)
    >>> parse_run("10min:21.8nm+-0.4nm").sigma_nm
    0.4
    """
    text = str(text).strip()
    if ":" not in text:
        raise FilmopticError(f"--run: expected DURATION:THICKNESS such as '5min:21.8nm', got {text!r}")
    # Digits joined by colons before the last colon: a stopwatch time (checked by parse_duration_s).
    clock = re.match(r"^(\d+(?::\d+(?:\.\d+)?)+)\s*:(?=.)", text)
    if clock:
        # A stopwatch time (5:30, 1:05:00) before the thickness: '5:30:21.8nm'.
        duration_text, thickness_text = clock.group(1), text[clock.end():].strip()
    else:
        duration_text, thickness_text = (part.strip() for part in text.split(":", 1))
    duration = parse_duration_s(duration_text, what=f"--run {text!r}: duration")
    what = f"--run {text!r}: thickness"
    if thickness_text.lower().startswith("monitor="):
        if tooling_factor is None:
            raise FilmopticError(
                f"--run {text!r}: a monitor reading needs the tooling factor (--tooling)"
            )
        _check_tooling(tooling_factor)
        indicated, sigma = parse_thickness(thickness_text.split("=", 1)[1], what=what)
        thickness = indicated * tooling_factor
        sigma = None if sigma is None else sigma * tooling_factor
    elif is_solve_file(thickness_text):
        thickness, sigma = thickness_from_solve_file(thickness_text)
    else:
        thickness, sigma = parse_thickness(thickness_text, what=what)
    return Run(duration, thickness, sigma, thickness_text, text)


def _check_tooling(tooling_factor) -> None:
    """A tooling factor is a ratio of thicknesses near 1 (the crystal sits near the substrates)."""
    if tooling_factor is None:
        return
    low, high = TOOLING_RANGE
    if not (math.isfinite(tooling_factor) and tooling_factor > 0):
        raise FilmopticError(f"--tooling must be a positive number, got {tooling_factor:g}")
    if not low <= tooling_factor <= high:
        raise FilmopticError(
            f"--tooling {tooling_factor:g} is not a tooling factor (measured ÷ indicated thickness, "
            f"{low:g} to {high:g}; usually near 1)"
        )


def _run_sigmas(runs) -> np.ndarray | None:
    """Each run's thickness uncertainty, or None when no run has one; a mix is an error (a
    weighted fit needs every weight, and dropping the uncertainties given would hide them)."""
    missing = [(i + 1, r) for i, r in enumerate(runs) if r.sigma_nm is None]
    if len(missing) == len(runs):
        return None
    if missing:
        lacking = "; ".join(f"run {i} ({_how_to_add_sigma(r)})" for i, r in missing)
        raise FilmopticError(
            f"rate: the other runs carry a thickness uncertainty but {lacking} "
            f"{'has' if len(missing) == 1 else 'have'} none; give every run one or none "
            "(a weighted fit needs them all)"
        )
    sigma = np.array([r.sigma_nm for r in runs], dtype=float)
    if not np.all(np.isfinite(sigma) & (sigma > 0)):
        raise FilmopticError("rate: a thickness uncertainty must be a positive number of nm")
    if np.any(sigma < MIN_SIGMA_NM):
        i = int(np.argmin(sigma))
        raise FilmopticError(
            f"rate: run {i + 1}'s thickness uncertainty ({sigma[i]:.3g} nm) is below "
            f"{MIN_SIGMA_NM:g} nm, far below what any thickness measurement resolves; check its unit"
        )
    return sigma


def _how_to_add_sigma(run: Run) -> str:
    """The run as written, and how to give it an uncertainty."""
    if run.text:
        written = f"--run {run.text}"
    else:
        written = f"{run.duration_s:g}s:{run.thickness_nm:g}nm"
    if is_solve_file(run.source):
        return f"{written}: its solve file has no interval; re-run solve with --uncertainty"
    if run.text and ":" in run.text:
        example = f"{run.text}+-0.4nm"
    else:
        example = f"{run.duration_s:g}s:{run.thickness_nm:g}nm+-0.4nm"
    return f"{written}: write it with its uncertainty, e.g. {example}"


def chi2_survival(chi2: float, dof: int) -> float:
    """P(χ² ≥ ``chi2``) for ``dof`` degrees of freedom: how often chance alone scatters as much.

    For a whole number of degrees of freedom the χ² tail has a closed form: with ν = 2m,
    Q = e^(−x/2) Σ_{k<m} (x/2)^k / k!, and with ν = 2m + 1,
    Q = erfc(√(x/2)) + e^(−x/2) Σ_{k=1..m} (x/2)^(k−½) / Γ(k + ½).

    References
    ----------
    M. Abramowitz & I. A. Stegun, *Handbook of Mathematical Functions* (1964), 26.4.4–26.4.5
    (from memory).

    Examples
    --------
    >>> round(chi2_survival(2.0, 2), 12)         # e^(−1)
    0.367879441171
    """
    x = float(chi2)
    nu = int(dof)
    if nu < 1 or nu != dof:
        raise FilmopticError(f"degrees of freedom must be a whole number >= 1, got {dof!r}")
    if x <= 0:
        return 1.0
    half = x / 2.0
    log_half = math.log(half)
    # Each term as the exponential of its logarithm: no overflow of (x/2)^k, no 0·inf.
    if nu % 2 == 0:
        total = sum(math.exp(k * log_half - half - math.lgamma(k + 1)) for k in range(nu // 2))
        return min(1.0, total)
    total = sum(math.exp((k - 0.5) * log_half - half - math.lgamma(k + 0.5)) for k in range(1, (nu - 1) // 2 + 1))
    return min(1.0, math.erfc(math.sqrt(half)) + total)


#: Smallest thickness uncertainty a run may carry (a femtometre: far below any measurement).
MIN_SIGMA_NM = 1e-6

#: Plausible tooling factors (measured ÷ indicated thickness); real ones lie near 1 (common practice).
TOOLING_RANGE = (0.01, 100.0)

#: Slowest rate worth reporting, nm/s (a nanometre in about 30 years: no deposition is slower).
MIN_RATE_NM_PER_S = 1e-9

#: Largest condition number of the (scaled) normal equations that still fixes the fitted line.
_MAX_CONDITION = 1e10


def _least_squares(design, d, weights, runs):
    """Weighted linear least squares: coefficients and (AᵀWA)⁻¹ for design matrix A, W = diag(w).

    (AᵀWA)⁻¹ is the covariance of the coefficients when the weights are 1/σ² of known σ
    (Bevington & Robinson, ch. 7); otherwise it still needs the residual variance as a factor.
    The columns and the weights are scaled to order one first, so durations of milliseconds or
    months and uncertainties of picometres or millimetres neither overflow nor underflow; a
    problem whose scaled normal equations are (nearly) singular is refused, saying what makes it
    so.
    """
    columns = np.max(np.abs(design), axis=0)
    columns[columns == 0] = 1.0
    top = float(np.max(weights))
    scaled = design / columns
    w = weights / top
    with np.errstate(all="ignore"):
        normal = scaled.T @ (scaled * w[:, None])
        condition = np.linalg.cond(normal) if np.all(np.isfinite(normal)) else math.inf
    if not condition <= _MAX_CONDITION:
        raise FilmopticError(_degenerate_runs(design, weights, runs))
    coefficients = np.linalg.solve(normal, scaled.T @ (w * d)) / columns
    inverse = np.linalg.inv(normal) / np.outer(columns, columns) / top
    return coefficients, inverse


def _degenerate_runs(design, weights, runs) -> str:
    """Why the runs cannot fix the line (the fit is degenerate), in the user's terms."""
    t = design[:, 0]
    if design.shape[1] == 1:
        return "rate: the runs' durations are all zero or too short to fix a rate"
    effective = weights / np.max(weights) > 1.0 / _MAX_CONDITION
    if np.ptp(t[effective]) <= 1e-9 * np.max(np.abs(t)):
        if np.all(effective):
            return (f"rate: every run lasted {t[0]:g} s; fitting a rate and an offset needs runs of "
                    "at least two different durations (or fit through the origin: --through-origin)")
        sigmas = [r.sigma_nm for r in runs]
        tight, loose = int(np.argmin(sigmas)), int(np.argmax(sigmas))
        return (f"rate: the thickness uncertainties differ too much to fit together (run {tight + 1} "
                f"± {sigmas[tight]:.3g} nm, run {loose + 1} ± {sigmas[loose]:.3g} nm): the tightest "
                "run(s) alone fix the line; check the uncertainties and their units")
    return (f"rate: the runs' durations ({t.min():.10g} to {t.max():.10g} s) are too close together to "
            "separate a rate from an offset; add a run of clearly different length")


def _propagate(grad, cov) -> float:
    """First-order standard deviation of a function with gradient ``grad`` of parameters with
    covariance ``cov``: √(gᵀ C g) (Bevington & Robinson, eq. 3.13, covariance term included)."""
    return float(math.sqrt(max(float(grad @ cov @ grad), 0.0)))


def fit_rate(runs, target_nm: float | None = None, tooling_factor: float | None = None,
             through_origin: bool | None = None) -> RateFit:
    """Fit the deposition rate (and start-up offset) to calibration runs.

    Parameters
    ----------
    runs : sequence of Run
        Either every run carries a thickness uncertainty (``sigma_nm``) or none does.
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
    With uncertainties σᵢ on every run: weighted least squares (weights 1/σᵢ²); the covariance of
    (rate, offset) is (AᵀWA)⁻¹ whatever the number of runs, χ² = Σ(rᵢ/σᵢ)² is reported with
    n − p degrees of freedom. Without: ordinary least squares with the usual standard errors
    s·√(1/Sxx) for the slope and s·√(1/n + x̄²/Sxx) for the intercept, s² = SSR/(n − p), which
    needs more runs than fitted parameters. The time for a target, t = (D − b)/a, and the dead time
    −b/a get first-order uncertainties √(gᵀCg) with the full covariance C.

    References
    ----------
    P. R. Bevington & D. K. Robinson, *Data Reduction and Error Analysis for the Physical
    Sciences*, 3rd ed., McGraw-Hill (2003), ch. 3 (eq. 3.13), ch. 6 and ch. 7 (from memory);
    N. R. Draper & H. Smith, *Applied Regression Analysis*, 3rd ed., Wiley (1998), ch. 1.

    Examples
    --------
    >>> fit = fit_rate([Run(240, 9.0), Run(600, 22.5)], target_nm=15.0)
    >>> round(fit.rate_nm_per_s, 6), round(fit.time_s, 1), fit.time_sigma_s
    (0.0375, 400.0, None)

    The same two runs, each thickness known to ±0.3 nm, give the time an error bar:

    >>> fit = fit_rate([Run(240, 9.0, 0.3), Run(600, 22.5, 0.3)], target_nm=15.0)
    >>> round(fit.time_s, 1), round(fit.time_sigma_s, 1)
    (400.0, 5.7)
    """
    runs = tuple(runs)
    if not runs:
        raise FilmopticError("rate: give at least one calibration run (--run DURATION:THICKNESS)")
    _check_tooling(tooling_factor)
    if target_nm is not None and not (math.isfinite(target_nm) and target_nm > 0):
        raise FilmopticError("--target must be a positive thickness")
    t = np.array([r.duration_s for r in runs], dtype=float)
    d = np.array([r.thickness_nm for r in runs], dtype=float)
    sigma = _run_sigmas(runs)
    weighted = sigma is not None
    origin = len(runs) == 1 if through_origin is None else bool(through_origin)
    if not origin and len(runs) < 2:
        raise FilmopticError("rate: fitting an offset needs at least two runs")

    design = t[:, None] if origin else np.column_stack([t, np.ones_like(t)])
    weights = np.ones_like(t) if sigma is None else 1.0 / sigma**2
    coeffs, inverse = _least_squares(design, d, weights, runs)
    residual = d - design @ coeffs
    dof = len(runs) - design.shape[1]
    chi2 = chi2_probability = None
    if weighted:
        cov = inverse
        chi2 = float(np.sum(weights * residual**2))
        if dof > 0:
            chi2_probability = chi2_survival(chi2, dof)
    elif dof > 0:
        cov = inverse * float(residual @ residual) / dof
    else:
        cov = None
    if cov is not None and origin:
        cov = np.array([[cov[0, 0], 0.0], [0.0, 0.0]])
    rate = float(coeffs[0])
    offset = 0.0 if origin else float(coeffs[1])

    if not rate > 0:
        raise FilmopticError(
            f"rate: the runs give a rate of {rate:.4g} nm/s; longer runs must give thicker films"
        )
    if rate < MIN_RATE_NM_PER_S:
        raise FilmopticError(
            f"rate: the runs give a rate of {rate:.3g} nm/s, below {MIN_RATE_NM_PER_S:g} nm/s (a "
            "nanometre in 30 years): check the thickness and time units of the runs"
        )
    time_s = time_sigma = endpoint = None
    if target_nm is not None:
        time_s = (target_nm - offset) / rate
        if time_s <= 0:
            raise FilmopticError(
                f"rate: {target_nm:g} nm lies below the start-up offset ({offset:.3g} nm); "
                "the runs cannot predict so thin a film"
            )
        if cov is not None:
            # t = (D − b)/a: ∂t/∂a = −t/a, ∂t/∂b = −1/a.
            time_sigma = _propagate(np.array([-time_s / rate, -1.0 / rate]), cov)
        if tooling_factor is not None:
            endpoint = target_nm / tooling_factor
    dead_sigma = None
    if cov is not None and not origin:
        # t₀ = −b/a: ∂t₀/∂a = b/a², ∂t₀/∂b = −1/a.
        dead_sigma = _propagate(np.array([offset / rate**2, -1.0 / rate]), cov)
    return RateFit(
        rate_nm_per_s=rate,
        rate_sigma_nm_per_s=None if cov is None else float(math.sqrt(cov[0, 0])),
        offset_nm=offset,
        offset_sigma_nm=None if cov is None or origin else float(math.sqrt(cov[1, 1])),
        dead_time_s=-offset / rate,
        dead_time_sigma_s=dead_sigma,
        covariance=None if cov is None else tuple(map(tuple, cov.tolist())),
        through_origin=origin,
        weighted=weighted,
        residual_rms_nm=float(math.sqrt(np.mean(residual**2))),
        chi2=chi2,
        degrees_of_freedom=dof,
        chi2_probability=chi2_probability,
        target_nm=target_nm,
        time_s=time_s,
        time_sigma_s=time_sigma,
        tooling_factor=tooling_factor,
        monitor_endpoint_nm=endpoint,
        runs=runs,
    )
