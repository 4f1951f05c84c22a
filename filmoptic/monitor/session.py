"""A monitored run: readings in, thickness, rate and time to the target out; its log and resume.

:func:`prepare` turns the stack, the reading's source and detector and a target (a thickness, a
``solve`` condition, a signal value or a number of turning points) into a :class:`Plan`: the
modelled signal (:func:`filmoptic.monitor.signal.signal_model`) and the target's thickness and
expected ratio. A :class:`Monitor` then takes the readings one by one (:meth:`Monitor.feed`) and
returns an :class:`Estimate` for each:

1. **Reference.** Until ``baseline_s`` seconds have passed the readings are averaged (outliers
   beyond 5 robust standard deviations left out) into the reference: the signal through the
   uncoated part before the shutter opens (or the open beam, ``reference_kind="open"``). A
   reference value given up front skips this. The dark reading is subtracted from both. A
   second, reference detector's column divides out a drift of the source; without one a drift
   cannot be told from growth, and the run says so once.
2. **Filter.** The ratio passes a running median of :data:`MEDIAN_READINGS` readings (dated at its
   middle reading), which removes single outliers and short dropouts without bending a steady
   signal; readings far from it are marked ``outlier``. A reading with next to no light where the
   model expects plenty is a dropout and is left out.
3. **Thickness.** The filtered ratio is located on the modelled curve by the
   :class:`~filmoptic.monitor.signal.BranchTracker`, which follows the interference order from the
   start and predicts with the current rate which side of a turning point the film is on.
4. **Rate.** The Theil–Sen line through the last ``window_s`` seconds of thicknesses
   (:class:`~filmoptic.monitor.rate.RateWindow`) gives the rate and the smoothed thickness now;
   the time left is (target − thickness)/rate. Near a turning point (its *flat zone*, where a
   reading hardly tells the thickness) the readings stay out of the line, and the thickness is
   carried on by the rate of a window :data:`LONG_WINDOW_FACTOR` times longer that reaches back
   across the zone.
5. **Target.** Reached when the smoothed thickness reaches the target's thickness.

Everything else the chamber does — a gap in the data, a reading stuck at one value, a signal
that changes during the baseline, a ratio outside [0, 1], a reading the model cannot explain, a
signal moving the wrong way — becomes a message in the estimate, never an exception.

:class:`RunLog` appends every estimate to a CSV file, flushed and synced per line, and reads it
back so that a run interrupted by a crash can be resumed (:meth:`Monitor.restore`).
"""

from __future__ import annotations

import json
import math
import os
import statistics
import time
from collections import deque
from dataclasses import dataclass, field

import numpy as np

from filmoptic.errors import FilmopticError

from .rate import MAD_TO_SIGMA, MIN_POINTS, RateWindow
from .signal import BranchTracker, SignalModel, signal_model

__all__ = [
    "MEDIAN_READINGS",
    "TARGET_KINDS",
    "MonitorTarget",
    "Plan",
    "prepare",
    "Estimate",
    "Monitor",
    "RunLog",
    "LOG_COLUMNS",
    "read_log",
    "StreamRun",
]

#: Readings in the running median (an odd number: a single outlier or a dropout of two readings
#: never reaches the thickness).
MEDIAN_READINGS = 5
#: A reading this many robust standard deviations from the running median is an outlier.
OUTLIER_SIGMAS = 6.0
#: Smallest deviation from the running median called an outlier (fraction of the reference).
OUTLIER_FLOOR = 0.005
#: A reading below this fraction of what the model expects, where it expects at least
#: :data:`DROPOUT_EXPECTED`, is a dropout (no light: a lamp, shutter, cable or logger fault).
DROPOUT_FRACTION = 0.1
DROPOUT_EXPECTED = 0.05
#: A pause between readings longer than this many times the usual interval (and over a second)
#: is a gap in the data.
GAP_FACTOR = 5.0
GAP_MIN_S = 1.0
#: This many identical readings in a row, once the run is under way, is a stuck reading.
STUCK_READINGS = 10
#: Smallest change of the ratio during the baseline reported as a signal that started before the
#: reference was known (beyond the noise).
BASELINE_CHANGE_FLOOR = 0.003
#: A reading beyond what the model reaches by more than this (and 5 noise standard deviations)
#: is one the model cannot explain.
MODEL_TOLERANCE = 0.01
#: Baseline readings further than this many robust standard deviations from their median are
#: left out of the reference.
BASELINE_OUTLIER_SIGMAS = 5.0
#: Through the flat zone of a turning point the thickness is carried on by the rate of a window
#: this many times longer than ``window_s`` (the zone can last a minute; a short window's rate,
#: extrapolated that far, would carry its noise with it).
LONG_WINDOW_FACTOR = 6.0
#: Points the long window keeps however old they are, so that its line spans a flat zone.
LONG_WINDOW_KEEP = 256
#: Kinds of target.
TARGET_KINDS = ("thickness", "condition", "ratio", "turning_points")


@dataclass(frozen=True)
class MonitorTarget:
    """What the run aims at.

    Attributes
    ----------
    kind : {"thickness", "condition", "ratio", "turning_points"}
    label : str
        How it is shown (``"9 nm"``, ``"luminous T = 30.00 %"``, ``"ratio 0.6"``,
        ``"turning point 2"``).
    thickness_nm : float
        Thickness of the layer at the target.
    ratio : float
        The monitor's modelled ratio there.
    value : float or None
        The value given (nm, the condition's value, the ratio, or the number of turning points).
    """

    kind: str
    label: str
    thickness_nm: float
    ratio: float
    value: float | None = None


@dataclass(frozen=True)
class Plan:
    """The modelled signal and the target, ready for a run (see :func:`prepare`)."""

    model: SignalModel
    target: MonitorTarget
    settings: dict = field(default_factory=dict)

    def nm_per_percent(self) -> float:
        """Thickness that one percentage point of signal is worth at the target (inf at a
        turning point, where the signal stands still)."""
        if self.target.kind == "turning_points":
            return math.inf
        slope = abs(float(self.model.slope_at(self.target.thickness_nm)))
        return math.inf if slope == 0 else 0.01 / slope


def _solve_target(stack, conditions, solution, model_kwargs):
    from filmoptic.errors import TargetError
    from filmoptic.inverse.solve import solve_thickness

    result = solve_thickness(stack, conditions, companions=False, angle_deg=model_kwargs["angle_deg"],
                             extrapolate=model_kwargs["extrapolate"], ambient=model_kwargs["ambient"],
                             range_nm=model_kwargs.get("range_nm"))
    if not result.met:
        raise TargetError(result.message)
    exact = [s for s in result.solutions if s.exact] or list(result.solutions)
    exact.sort(key=lambda s: s.thickness_nm)
    if solution > len(exact):
        listed = ", ".join(f"{s.thickness_nm:.2f} nm" for s in exact)
        raise FilmopticError(f"--solution {solution}: the target is met at {len(exact)} thickness"
                             f"{'es' if len(exact) != 1 else ''} only ({listed})")
    label = "; ".join(f"{c.label()} = {100 * c.value:.2f} %" if c.kind == "scalar" else c.label()
                      for c in conditions)
    return exact[solution - 1].thickness_nm, label


def prepare(stack, *, source: str = "D65", detector: str = "photopic", reference_kind: str = "bare",
            target_nm: float | None = None, conditions=(), stop_ratio: float | None = None,
            turning_points: int | None = None, solution: int = 1, range_nm=None, step_nm=None,
            angle_deg: float = 0.0, extrapolate: bool = False, ambient: str = "air") -> Plan:
    """Model the run's signal and place its target on it. Give exactly one target.

    Parameters
    ----------
    stack : str
        With one ``?``: the layer being deposited.
    source, detector, reference_kind : str
        The monitor's light, its detector and what its reference reading saw (``"bare"``: the
        uncoated part before the shutter opened; ``"open"``: the open beam).
    target_nm : float, optional
        Stop at this thickness.
    conditions : sequence of solve conditions, optional
        Stop where :func:`filmoptic.inverse.solve.solve_thickness` meets them (``solution``: which of
        its thicknesses, thinnest first).
    stop_ratio : float, optional
        Stop where the monitor's ratio first reaches this value.
    turning_points : int, optional
        Stop at the N-th turning point of the monitor's signal (turning-point monitoring: a
        layer of N quarter waves at a single line).

    Examples
    --------
    >>> plan = prepare("n=2 ? / n=1.5 1mm", source="laser:600", detector="flat", turning_points=2,
    ...                ambient="n=1")
    >>> round(plan.target.thickness_nm, 2), plan.target.label
    (150.0, 'turning point 2')
    """
    from filmoptic.stack import parse_stack

    given = [name for name, v in (("--target", target_nm), ("a solve condition", conditions or None),
                                  ("--stop-at", stop_ratio), ("--turning-points", turning_points))
             if v is not None]
    if len(given) != 1:
        if not given:
            raise FilmopticError(
                "say where to stop: --target THICKNESS, --luminous-T/--luminous-R/--T-at/--R-at, "
                "--stop-at RATIO or --turning-points N"
            )
        raise FilmopticError(f"give one target, not {' and '.join(given)}")
    if isinstance(stack, str):
        stack = parse_stack(stack, ambient=ambient)
    model_kwargs = dict(range_nm=range_nm, step_nm=step_nm, angle_deg=angle_deg, extrapolate=extrapolate,
                        ambient=ambient)
    if solution < 1:
        raise FilmopticError(f"--solution counts from 1, got {solution}")
    if target_nm is not None:
        target_nm = float(target_nm)
        if not (target_nm > 0 and math.isfinite(target_nm)):
            raise FilmopticError(f"--target must be a positive thickness, got {target_nm:g} nm")
        model = signal_model(stack, source, detector, reference_kind, target_nm=target_nm, **model_kwargs)
        kind, label, value = "thickness", f"{target_nm:g} nm", target_nm
    elif conditions:
        target_nm, label = _solve_target(stack, tuple(conditions), solution, model_kwargs)
        model = signal_model(stack, source, detector, reference_kind, target_nm=target_nm, **model_kwargs)
        kind, value = "condition", float(getattr(conditions[0], "value", math.nan))
    elif stop_ratio is not None:
        model = signal_model(stack, source, detector, reference_kind, **model_kwargs)
        found = model.first_thickness_at(float(stop_ratio))
        if found is None:
            lo, hi = float(model.ratio.min()), float(model.ratio.max())
            raise FilmopticError(
                f"--stop-at {stop_ratio:g}: the modelled ratio only spans {lo:.4g}–{hi:.4g} over "
                f"0–{model.range_nm[1]:g} nm; give a value in it, or a longer --range"
            )
        for _ in range(solution - 1):
            later = model.first_thickness_at(float(stop_ratio), found + 10 * model.step_nm)
            if later is None:
                raise FilmopticError(f"--solution {solution}: the ratio {stop_ratio:g} is met fewer times "
                                     f"in 0–{model.range_nm[1]:g} nm (give a longer --range)")
            found = later
        target_nm, kind, label, value = found, "ratio", f"ratio {stop_ratio:g}", float(stop_ratio)
    else:
        n = int(turning_points)
        if n < 1:
            raise FilmopticError(f"--turning-points must be 1 or more, got {n}")
        model = signal_model(stack, source, detector, reference_kind, min_turning_points=n, **model_kwargs)
        if model.turning_nm.size < n:
            raise FilmopticError(
                f"--turning-points {n}: the modelled signal has {model.turning_nm.size} turning point(s) in "
                f"0–{model.range_nm[1]:g} nm; give a longer --range"
            )
        target_nm, kind, label, value = float(model.turning_nm[n - 1]), "turning_points", f"turning point {n}", n
    if target_nm > model.range_nm[1]:
        raise FilmopticError(f"the target ({target_nm:.2f} nm) lies beyond --range 0:{model.range_nm[1]:g}")
    target = MonitorTarget(kind, label, float(target_nm), float(model.ratio_at(target_nm)), value)
    return Plan(model, target)


@dataclass(frozen=True)
class Estimate:
    """What one reading says about the run (the JSON line of ``filmoptic monitor --json``).

    Attributes
    ----------
    t_s : float
        Time of the reading, seconds from the first reading.
    reading : float or None
        The raw reading (None for a row that could not be read).
    ratio : float or None
        Reading over reference (dark subtracted, drift divided out); None during the baseline.
    thickness_nm : float
        Smoothed thickness of the growing layer now.
    rate_nm_per_s : float or None
        Growth rate over the recent window.
    time_left_s : float or None
        Until the target at that rate (0 once reached; None when the film is not growing).
    target_reached : bool
    target_nm, target_ratio : float
        The target's thickness and the ratio expected there.
    target_reading : float or None
        The raw reading expected at the target (known once the reference is).
    status : str
        ``baseline``, ``ok``, ``outlier``, ``dropout``, ``bad row``, ``beyond model``,
        ``stuck`` or ``reached``.
    turning_points : int
        Turning points of the modelled signal the run has passed (the interference order followed
        from the start).
    messages : tuple of str
        What happened at this reading that the operator should know (said once per episode).
    reference_reading : float or None
        The reference detector's reading, when the stream has one.
    line : int or None
        Line of the input the reading came from.
    """

    t_s: float
    reading: float | None
    ratio: float | None
    thickness_nm: float
    rate_nm_per_s: float | None
    time_left_s: float | None
    target_reached: bool
    target_nm: float
    target_ratio: float
    target_reading: float | None
    status: str
    turning_points: int
    messages: tuple = ()
    reference_reading: float | None = None
    line: int | None = None

    def as_json(self) -> dict:
        """The estimate as a plain dict with JSON-safe numbers (NaN and inf become None)."""
        out = {}
        for key in ("t_s", "reading", "ratio", "thickness_nm", "rate_nm_per_s", "time_left_s", "target_reached",
                    "target_nm", "target_ratio", "target_reading", "reference_reading", "status",
                    "turning_points", "messages", "line"):
            value = getattr(self, key)
            if isinstance(value, float) and not math.isfinite(value):
                value = None
            out[key] = list(value) if isinstance(value, tuple) else value
        return out


def _robust_mean(values) -> tuple:
    """Mean of the values within :data:`BASELINE_OUTLIER_SIGMAS` robust standard deviations of
    their median, and that robust standard deviation."""
    v = np.asarray(values, dtype=float)
    median = float(np.median(v))
    sigma = MAD_TO_SIGMA * float(np.median(np.abs(v - median)))
    keep = np.abs(v - median) <= BASELINE_OUTLIER_SIGMAS * sigma if sigma > 0 else np.ones(v.size, bool)
    return float(np.mean(v[keep])), sigma


class Monitor:
    """Turns a run's readings into thickness, rate and time to the target (see the module
    documentation for the steps).

    Parameters
    ----------
    plan : Plan
        From :func:`prepare`.
    baseline_s : float
        Seconds of readings averaged into the reference (when ``reference`` is not given).
    reference : float, optional
        The raw reference reading, given up front.
    dark : float
        The raw reading with the light blocked; subtracted from every reading and the reference.
    reference_dark : float
        The same for the reference detector's column.
    window_s : float
        Span of the rate estimate, seconds.
    warn_before_s : float, optional
        Say so once when the time left first falls to this.

    Examples
    --------
    A steady 0.5 nm/s run of a lossless layer of index 2 at a 600 nm line, aimed at its first
    turning point (75 nm), read every half second with a reference known up front:

    >>> plan = prepare("n=2 ? / n=1.5 1mm", source="laser:600", detector="flat", turning_points=1,
    ...                ambient="n=1")
    >>> monitor = Monitor(plan, reference=1000.0)
    >>> for k in range(400):
    ...     t = 0.5 * k
    ...     e = monitor.feed(t, 1000.0 * float(plan.model.ratio_at(0.5 * t)))
    ...     if e.target_reached:
    ...         break
    >>> e.t_s, round(e.thickness_nm, 2), round(e.rate_nm_per_s, 4)
    (150.0, 75.0, 0.5)
    """

    def __init__(self, plan: Plan, *, baseline_s: float = 5.0, reference: float | None = None, dark: float = 0.0,
                 reference_dark: float = 0.0, window_s: float = 10.0, warn_before_s: float | None = None):
        if not (math.isfinite(baseline_s) and baseline_s >= 0):
            raise FilmopticError(f"--baseline must be 0 s or more, got {baseline_s:g}")
        if not (math.isfinite(window_s) and window_s > 0):
            raise FilmopticError(f"--window must be positive, got {window_s:g}")
        if not math.isfinite(dark):
            raise FilmopticError("--dark must be a finite number")
        if reference is not None and not (math.isfinite(reference) and reference > dark):
            raise FilmopticError(
                f"--reference {reference:g} must be above the dark reading ({dark:g}): it is the signal with "
                "the light on"
            )
        self.plan = plan
        self.model = plan.model
        self.target = plan.target
        self.baseline_s = float(baseline_s)
        self.reference = None if reference is None else float(reference)
        self.dark = float(dark)
        self.reference_dark = float(reference_dark)
        self.window_s = float(window_s)
        self.warn_before_s = warn_before_s
        self.tracker = BranchTracker(self.model)
        self.window = RateWindow(self.window_s)
        self.long_window = RateWindow(LONG_WINDOW_FACTOR * self.window_s, min_keep=LONG_WINDOW_KEEP)
        self._in_flat_zone = False
        self._baseline = []              # (t, reading, reference_reading)
        self._ref_detector_level = None  # reference detector's reading that goes with the reference
        self._recent = deque(maxlen=MEDIAN_READINGS)
        self._deviations = deque(maxlen=50)
        self._intervals = deque(maxlen=21)
        self._t0 = None
        self._t_last = None
        self._last_raw = None
        self._same_raw = 0
        self._active = set()             # conditions already reported (said once per episode)
        self._notes = []                 # every message, for the summary
        self._baseline_noise = 0.0       # relative noise of the baseline readings
        self.warned = False
        self.reached_at = None           # the estimate at which the target was reached
        self.last = None
        self.counts = {"readings": 0, "outliers": 0, "dropouts": 0, "bad rows": 0}
        self.has_reference_detector = None

    # -- messages -------------------------------------------------------------------------------

    def _say(self, messages, key, text, active=True):
        """Report ``text`` when condition ``key`` starts (once per episode)."""
        if active and key not in self._active:
            self._active.add(key)
            messages.append(text)
            self._notes.append(text)
        elif not active:
            self._active.discard(key)

    @property
    def notes(self) -> tuple:
        """Every message of the run so far, in order."""
        return tuple(self._notes)

    # -- the reference --------------------------------------------------------------------------

    def _finish_baseline(self, messages):
        readings = np.array([r for _, r, _ in self._baseline], dtype=float)
        mean, sigma = _robust_mean(readings)
        if self.has_reference_detector:
            refs = np.array([q for _, _, q in self._baseline], dtype=float)
            # A reference reading at or below its dark level (a loose cable, a blocked detector) says
            # nothing about the source: it is left out, as a dropout is later in the run.
            lit = np.isfinite(refs) & (refs > self.reference_dark)
            if not lit.any():
                raise FilmopticError(
                    f"the reference detector reads nothing above its dark reading ({self.reference_dark:g}) "
                    "during the baseline: is it connected and does it see the source? (check its column, "
                    "or the second number of --dark)"
                )
            self._ref_detector_level, _ = _robust_mean(refs[lit])
            normalised = (readings[lit] - self.dark) / (refs[lit] - self.reference_dark)
        else:
            normalised = readings - self.dark
        self.reference = mean
        self._baseline_noise = sigma / (mean - self.dark) if mean > self.dark else 0.0
        if not mean > self.dark:
            raise FilmopticError(
                f"the baseline reads {mean:g}, not above the dark reading ({self.dark:g}): is the light on? "
                "(give --reference VALUE or fix --dark)"
            )
        half = max(len(normalised) // 2, 1)
        if len(normalised) >= 4:
            scale = float(np.median(normalised))
            change = (float(np.median(normalised[half:])) - float(np.median(normalised[:half]))) / scale
            noise = MAD_TO_SIGMA * float(np.median(np.abs(normalised - np.median(normalised)))) / scale
            if abs(change) > max(BASELINE_CHANGE_FLOOR, 5 * noise / math.sqrt(half)):
                self._say(messages, "baseline changed",
                          f"the signal changed by {100 * change:+.2f} % during the {self.baseline_s:g} s baseline: "
                          "it may have started before the reference was known (shutter opened early, or a "
                          "drifting source); give --reference VALUE or a shorter --baseline if so")
        self._say(messages, "reference",
                  f"reference {mean:.6g} from {len(readings)} readings over the first {self.baseline_s:g} s"
                  + (f" (noise {100 * sigma / (mean - self.dark):.2f} %)" if sigma > 0 else ""))

    def _ratio(self, reading, reference_reading):
        ratio = (reading - self.dark) / (self.reference - self.dark)
        if self.has_reference_detector and reference_reading is not None:
            level = self._ref_detector_level
            if level is None:
                self._ref_detector_level = level = reference_reading
            denominator = reference_reading - self.reference_dark
            if denominator <= 0:
                return math.nan
            ratio *= (level - self.reference_dark) / denominator
        return ratio

    # -- one reading ----------------------------------------------------------------------------

    def _rate_estimate(self, t):
        """The rate line at time ``t``: of the recent window, or of the long one while the film is
        in a flat zone (near a turning point)."""
        short = self.window
        # Just after a flat zone the recent window holds too few points for a rate: the long one
        # reaches back across the zone.
        settled = len(short) >= 2 * MIN_POINTS and short.span_s >= short.window_s / 2
        window = self.long_window if (self._in_flat_zone or not settled) and len(self.long_window) else short
        return window.estimate(t) if len(window) else None

    def _estimate(self, t, reading, ratio, status, messages, reference_reading, line):
        tgt = self.target
        est = self._rate_estimate(t)
        if est is None:
            thickness = self.tracker.thickness_nm
            rate = None
        else:
            thickness, rate = est.thickness_nm, est.rate_nm_per_s
        thickness = max(thickness, 0.0)
        reached = self.reached_at is not None or (self.reference is not None and thickness >= tgt.thickness_nm)
        if reached:
            time_left = 0.0
        elif rate is not None and rate > 0:
            time_left = (tgt.thickness_nm - thickness) / rate
        else:
            time_left = None
        target_reading = None
        if self.reference is not None:
            target_reading = self.dark + tgt.ratio * (self.reference - self.dark)
        if (self.warn_before_s is not None and not self.warned and not reached and time_left is not None
                and time_left <= self.warn_before_s):
            self.warned = True
            messages.append(f"about {time_left:.0f} s to the target ({tgt.label})")
            self._notes.append(messages[-1])
        if est is not None and rate < 0 and est.span_s > 0:
            fall = -rate * est.span_s
            self._say(messages, "backwards",
                      f"the thickness would be shrinking ({rate:.3g} nm/s over the last {est.span_s:.0f} s): the "
                      "signal moves the way the model says it cannot (check the stack, source, detector and "
                      "reference kind, or a drifting source)",
                      active=fall > max(0.2, 3 * est.spread_nm))
        if reached and self.reached_at is None:
            status = "reached"
            messages.append(f"TARGET REACHED ({tgt.label}): {thickness:.2f} nm at t = {t:.1f} s")
            self._notes.append(messages[-1])
        estimate = Estimate(
            t_s=t, reading=reading, ratio=ratio, thickness_nm=thickness, rate_nm_per_s=rate,
            time_left_s=time_left, target_reached=reached, target_nm=tgt.thickness_nm, target_ratio=tgt.ratio,
            target_reading=target_reading, status=status, turning_points=self.tracker.branch,
            messages=tuple(messages), reference_reading=reference_reading, line=line,
        )
        if reached and self.reached_at is None:
            self.reached_at = estimate
        self.last = estimate
        return estimate

    def _hold(self, t, reading, status, messages, reference_reading, line, ratio=None):
        """An estimate that leaves the run's state as it was (a bad row, a dropout)."""
        return self._estimate(t, reading, ratio, status, messages, reference_reading, line)

    def feed(self, t_s: float, reading: float | None, reference_reading: float | None = None, *,
             line: int | None = None, problem: str | None = None) -> Estimate:
        """Take one reading (raw, in the detector's own units) at time ``t_s`` (seconds, any
        origin) and return the estimate. ``reading=None`` is a row that could not be read
        (``problem`` says why)."""
        messages = []
        t_s = float(t_s)
        if self._t0 is None:
            self._t0 = t_s
        t = t_s - self._t0
        self.counts["readings"] += 1
        if reading is None or not math.isfinite(reading):
            self.counts["bad rows"] += 1
            messages.append(f"bad row skipped ({problem or 'not a number'})")
            self._notes.append(messages[-1])
            return self._hold(t, None, "bad row", messages, reference_reading, line)
        if self._t_last is not None:
            dt = t - self._t_last
            if dt <= 0:
                self.counts["bad rows"] += 1
                messages.append(f"bad row skipped (line {line}: its time {t:.3f} s does not follow "
                                f"{self._t_last:.3f} s)" if line else "bad row skipped (time does not advance)")
                self._notes.append(messages[-1])
                return self._hold(t, reading, "bad row", messages, reference_reading, line)
            if len(self._intervals) >= 5:
                usual = statistics.median(self._intervals)
                self._say(messages, "gap", f"gap of {dt:.1f} s in the data (readings usually {usual:.2g} s apart): "
                          "the rate carries the thickness across it",
                          active=dt > max(GAP_MIN_S, GAP_FACTOR * usual))
            self._intervals.append(dt)
        self._t_last = t
        if self.has_reference_detector is None:
            self.has_reference_detector = reference_reading is not None
            if not self.has_reference_detector:
                self._say(messages, "no drift check",
                          "no reference detector column: a slow drift of the source cannot be told from "
                          "growth (add a third column with a detector that sees the source alone)")
        if self.has_reference_detector and reference_reading is None:
            self.counts["bad rows"] += 1
            return self._hold(t, reading, "bad row", ["bad row skipped (no reference detector reading)"],
                              reference_reading, line)

        # A stuck reading: the same raw value again and again once the run is under way.
        self._same_raw = self._same_raw + 1 if reading == self._last_raw else 1
        self._last_raw = reading
        if self.reference is not None and self.tracker.thickness_nm > 0.05 * self.target.thickness_nm:
            self._say(messages, "stuck",
                      f"the reading has stayed at {reading:g} for {self._same_raw} readings: a saturated detector, "
                      "a frozen logger, or a stopped source?", active=self._same_raw >= STUCK_READINGS)

        if self.reference is None:
            if t < self.baseline_s or not self._baseline:
                self._baseline.append((t, reading, reference_reading))
                if t < self.baseline_s:
                    return self._hold(t, reading, "baseline", messages, reference_reading, line)
            self._finish_baseline(messages)
        elif self._ref_detector_level is None and self.has_reference_detector:
            self._ref_detector_level = reference_reading

        ratio = self._ratio(reading, reference_reading)
        if not math.isfinite(ratio):
            self.counts["bad rows"] += 1
            messages.append("bad row skipped (the reference detector reads no light)")
            return self._hold(t, reading, "bad row", messages, reference_reading, line)
        est = self._rate_estimate(t)
        predicted = self.tracker.thickness_nm if est is None else max(est.thickness_nm, 0.0)
        expected = float(self.model.ratio_at(predicted))

        if ratio < DROPOUT_FRACTION * expected and expected > DROPOUT_EXPECTED:
            self.counts["dropouts"] += 1
            self._say(messages, "dropout",
                      f"dropout: the reading ({reading:g}) shows next to no light where about "
                      f"{100 * expected:.0f} % of the reference is expected; left out")
            return self._hold(t, reading, "dropout", messages, reference_reading, line, ratio)
        self._active.discard("dropout")

        status = "ok"
        noise = (MAD_TO_SIGMA * statistics.median(self._deviations) if len(self._deviations) >= 5
                 else self._baseline_noise)
        tolerance = max(MODEL_TOLERANCE, 5 * noise)
        low, high = self.tracker.reachable_limits()
        self._say(messages, "outside 0-1",
                  f"the reading is {100 * ratio:.2f} % of the reference after normalisation, outside [0, 1]: "
                  + ("below the dark reading (check --dark)" if ratio < 0 else "above the reference (check "
                     "--reference and --reference-kind, or a drifting source)"),
                  active=(ratio < -tolerance) or (ratio > 1 + tolerance and ratio > high + tolerance))
        beyond = ratio < low - tolerance or ratio > high + tolerance
        self._say(messages, "beyond model",
                  f"the model cannot explain this reading: {100 * ratio:.2f} % of the reference, where "
                  f"{self.model.layer} on this fringe gives {100 * low:.2f}–{100 * high:.2f} % (check the stack, "
                  "source, detector and reference kind)", active=beyond)
        if beyond:
            status = "beyond model"

        self._recent.append((t, ratio))
        filtered = statistics.median(r for _, r in self._recent)
        t_mid = self._recent[len(self._recent) // 2][0]
        deviation = abs(ratio - filtered)
        if deviation > max(OUTLIER_SIGMAS * noise, OUTLIER_FLOOR) and len(self._recent) == MEDIAN_READINGS:
            self.counts["outliers"] += 1
            status = "outlier" if status == "ok" else status
        else:
            self._deviations.append(deviation)
        if self._same_raw >= STUCK_READINGS:
            status = "stuck" if status == "ok" else status

        est_mid = self._rate_estimate(t_mid)
        predicted_mid = self.tracker.thickness_nm if est_mid is None else max(est_mid.thickness_nm, 0.0)
        found = self.tracker.update(filtered, predicted_mid)
        # Near a turning point (or a flat start) a reading hardly tells the thickness: the rate
        # line then carries on from the steep parts on either side.
        self._in_flat_zone = self.model.in_flat_zone(found.thickness_nm)
        if not self._in_flat_zone:
            self.window.add(t_mid, found.thickness_nm)
            self.long_window.add(t_mid, found.thickness_nm)
        return self._estimate(t, reading, ratio, status, messages, reference_reading, line)

    def restore(self, rows) -> int:
        """Feed logged rows ``(t_s, reading, reference_reading, line)`` back in, silently, to
        continue an interrupted run exactly where it stood. Returns the number of rows."""
        count = 0
        for t_s, reading, reference_reading, line in rows:
            self.feed(t_s, reading, reference_reading, line=line, problem="as logged")
            count += 1
        return count

    @property
    def t0(self):
        """Time of the run's first reading, in the stream's own clock."""
        return self._t0

    def summary(self, ended: str) -> dict:
        """The final JSON object of a run (``"final": true``)."""
        last, hit = self.last, self.reached_at
        tgt = self.target

        def clean(x):
            return None if isinstance(x, float) and not math.isfinite(x) else x

        return {
            "final": True,
            "ended": ended,
            "target_reached": hit is not None,
            "target": tgt.label,
            "target_kind": tgt.kind,
            "target_nm": tgt.thickness_nm,
            "target_ratio": tgt.ratio,
            "target_reading": None if last is None else last.target_reading,
            "stop_t_s": None if hit is None else hit.t_s,
            "stop_thickness_nm": None if hit is None else hit.thickness_nm,
            "t_s": None if last is None else last.t_s,
            "thickness_nm": None if last is None else last.thickness_nm,
            "rate_nm_per_s": None if last is None else clean(last.rate_nm_per_s),
            "reference": self.reference,
            "reference_kind": self.model.reference_kind,
            "dark": self.dark,
            "turning_points": self.tracker.branch,
            **self.counts,
            "notes": list(self._notes),
        }


# ------------------------------------------------------------------------------------------------
# The log
# ------------------------------------------------------------------------------------------------

#: Columns of the run log (CSV), after its ``#`` header lines.
LOG_COLUMNS = ("t_s", "reading", "reference_reading", "ratio", "thickness_nm", "rate_nm_per_s", "time_left_s",
               "target_reached", "status", "line", "clock_s")
_LOG_MAGIC = "# filmoptic monitor log"


def _cell(value) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "1" if value else "0"
    if isinstance(value, float):
        return "" if not math.isfinite(value) else repr(value)
    return str(value)


def read_log(path) -> tuple:
    """A run log's settings and its rows ``(clock_s, reading, reference_reading, line)``: what
    :meth:`Monitor.restore` feeds back in (``clock_s`` is the time in the stream's own clock).

    A last line cut short by a crash (no newline) is left out. Raises
    :class:`~filmoptic.errors.FilmopticError` for a file that is not a monitor log.
    """
    try:
        with open(path, encoding="utf-8") as fh:
            text = fh.read()
    except FileNotFoundError:
        raise FilmopticError(f"--resume: no log {path} to continue (start the run without --resume)") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise FilmopticError(f"--log {path}: cannot read it ({exc})") from None
    lines = text.split("\n")
    complete = lines[:-1]          # the piece after the last newline is an unfinished line
    if not complete or complete[0] != _LOG_MAGIC:
        raise FilmopticError(f"--log {path} exists but is not a filmoptic monitor log; name a new file")
    settings = None
    rows = []
    for i, raw in enumerate(complete[1:], start=2):
        if raw.startswith("# settings: "):
            try:
                settings = json.loads(raw[len("# settings: "):])
            except ValueError:
                raise FilmopticError(f"--log {path}, line {i}: the settings line is damaged") from None
            continue
        if not raw or raw.startswith("#") or raw.startswith("t_s,"):
            continue
        cells = raw.split(",")
        if len(cells) != len(LOG_COLUMNS):
            continue
        try:
            t = float(cells[0])
            reading = float(cells[1]) if cells[1] else None
            reference = float(cells[2]) if cells[2] else None
            line = int(cells[9]) if cells[9] else None
            clock = float(cells[10]) if cells[10] else None
        except ValueError:
            continue
        rows.append((t if clock is None else clock, reading, reference, line))
    if settings is None:
        raise FilmopticError(f"--log {path} has no settings line; it cannot be resumed")
    return settings, rows


class RunLog:
    """The run's CSV log: opened for appending only, every line flushed and synced to disk.

    A new log starts with ``#`` lines (what was monitored, when it started, the settings as JSON)
    and a header; :meth:`open` with ``resume=True`` checks that an existing log was written with
    the same settings and continues it. A log is never truncated or rewritten.
    """

    def __init__(self, path, handle):
        self.path = path
        self._fh = handle

    @classmethod
    def open(cls, path, settings: dict, *, resume: bool, started: float | None = None):
        path = os.fspath(path)
        exists = os.path.exists(path) and os.path.getsize(path) > 0
        if exists and not resume:
            raise FilmopticError(
                f"--log {path} already exists: add --resume to continue that run, or name a new log "
                "(a log is never overwritten)"
            )
        if resume and not exists:
            raise FilmopticError(f"--resume: no log {path} to continue (start the run without --resume)")
        if exists:
            logged, _ = read_log(path)
            differ = sorted(k for k in set(logged) | set(settings)
                            if k not in ("started",) and logged.get(k) != settings.get(k))
            if differ:
                shown = ", ".join(f"{k} {logged.get(k)!r} → {settings.get(k)!r}" for k in differ[:3])
                raise FilmopticError(f"--resume: the log {path} was written for another run ({shown}); "
                                     "give the same settings, or a new --log")
        try:
            handle = open(path, "a", encoding="utf-8", newline="")
        except OSError as exc:
            raise FilmopticError(f"--log {path}: cannot open it for appending ({exc.strerror or exc})") from None
        log = cls(path, handle)
        if exists:
            with open(path, "rb") as fh:
                fh.seek(-1, os.SEEK_END)
                cut = fh.read(1) != b"\n"
            if cut:
                log._write("")          # end the line a crash cut short; the reader skips it
            log._write(f"# resumed {time.strftime('%Y-%m-%d %H:%M:%S')}")
        else:
            log._write(_LOG_MAGIC)
            log._write(f"# started {time.strftime('%Y-%m-%d %H:%M:%S', time.localtime(started or time.time()))}")
            log._write("# settings: " + json.dumps({**settings, "started": started}, sort_keys=True))
            log._write(",".join(LOG_COLUMNS))
        return log

    def _write(self, text: str) -> None:
        self._fh.write(text + "\n")
        self._fh.flush()
        os.fsync(self._fh.fileno())

    def write(self, estimate: Estimate, clock_s: float | None = None) -> None:
        """Append one estimate (and the stream's own time of it), synced to disk."""
        e = estimate
        self._write(",".join(_cell(v) for v in (
            e.t_s, e.reading, e.reference_reading, e.ratio, e.thickness_nm,
            e.rate_nm_per_s, e.time_left_s, e.target_reached, e.status, e.line, clock_s)))

    def close(self) -> None:
        self._fh.close()


# ------------------------------------------------------------------------------------------------
# A stream of lines → estimates
# ------------------------------------------------------------------------------------------------


class StreamRun:
    """The rows of a line source (:func:`filmoptic.monitor.sources.open_lines`) fed to a
    :class:`Monitor`, one estimate per data row.

    Iterating yields an :class:`Estimate` per data row and ``None`` while the source is quiet
    (so that a display can stay alive). Iteration ends with the source (``ended = "end of
    input"``) or after ``timeout_s`` seconds without a line (``ended = "timeout"``).

    Parameters
    ----------
    monitor : Monitor
    lines : iterator
        Of :class:`~filmoptic.monitor.sources.Line` or ``None``.
    interval_s : float, optional
        Seconds between rows that carry no time (default: when they arrive, for a live source).
    live : bool
        The rows arrive as they are measured (a followed file, a pipe, a serial port); a recorded
        file replayed with ``live=False`` needs times in its rows or ``interval_s``.
    speed : float, optional
        Replay in simulated real time, this many times faster.
    timeout_s : float, optional
    skip_through_line : int
        Rows up to this line were handled before (a resumed run reading the same file).
    skip_through_clock : float, optional
        Rows at or before this time were handled before (a resumed run on a live stream).
    log : RunLog, optional
        Every estimate is appended to it.
    """

    def __init__(self, monitor: Monitor, lines, *, interval_s=None, live=True, speed=None, timeout_s=None,
                 skip_through_line: int = 0, skip_through_clock=None, log: RunLog | None = None):
        from .rows import RowReader

        self.monitor = monitor
        self.lines = lines
        self.interval_s = interval_s
        self.live = live
        self.speed = speed
        self.timeout_s = timeout_s
        self.skip_through_line = int(skip_through_line or 0)
        self.skip_through_clock = skip_through_clock
        self.log = log
        self.reader = RowReader()
        self.ended = None
        self.skipped = 0
        self.clock = None          # stream time of the latest row
        self._rows = 0
        self._replay_start = None

    def _clock_of(self, row, arrived):
        if row.t_s is not None:
            return row.t_s
        if self.reader.has_time:
            return None            # a row of a timed stream whose time could not be read
        if self.interval_s is not None:
            return (self._rows - 1) * self.interval_s
        if self.live:
            return time.time() - (time.monotonic() - arrived)
        raise FilmopticError(
            "the rows carry no time: give --interval SECONDS (the time between readings) to replay them"
        )

    def _pace(self, clock):
        if not self.speed or clock is None:
            return
        if self._replay_start is None:
            self._replay_start = (time.monotonic(), clock)
            return
        wall0, clock0 = self._replay_start
        delay = wall0 + (clock - clock0) / self.speed - time.monotonic()
        if delay > 0:
            time.sleep(delay)

    def __iter__(self):
        number = 0
        quiet_since = time.monotonic()
        for item in self.lines:
            if item is None:
                if self.timeout_s is not None and time.monotonic() - quiet_since >= self.timeout_s:
                    self.ended = "timeout"
                    return
                yield None
                continue
            quiet_since = time.monotonic()
            number += 1
            row = self.reader.parse(item.text, number)
            if row is None:
                continue
            self._rows += 1
            clock = self._clock_of(row, item.arrived)
            if number <= self.skip_through_line or (
                    self.skip_through_clock is not None and clock is not None and clock <= self.skip_through_clock):
                self.skipped += 1
                continue
            if clock is None:
                clock = self.clock if self.clock is not None else 0.0
            self._pace(clock)
            self.clock = clock
            estimate = self.monitor.feed(clock, row.reading, row.reference_reading, line=number, problem=row.problem)
            if self.log is not None:
                self.log.write(estimate, clock)
            yield estimate
        self.ended = "end of input"
