"""Demo part "monitor": a replayed run of the cabinet semi-mirror, stopped by the light signal.

The run is synthetic: :func:`synthetic_run` makes it from the forward model (the band-weighted
transmittance of :mod:`filmoptic.inverse.readings`, evaluated by :func:`filmoptic.inverse.solve.evaluate_condition`)
with the invented imperfections of :mod:`filmoptic.demo.scenario` — noise, a drifting LED watched
by a reference photodiode, a spark and a dropout.
"""

from __future__ import annotations

import pathlib
from dataclasses import dataclass

import numpy as np

__all__ = ["SyntheticRun", "synthetic_run", "write_run", "run_rows", "run"]


@dataclass(frozen=True)
class SyntheticRun:
    """A made-up monitor recording and the truth behind it."""

    t_s: np.ndarray
    reading: np.ndarray
    reference_reading: np.ndarray | None
    thickness_nm: np.ndarray        # the true thickness at each reading


def synthetic_run(stack, source, detector, *, rate_nm_per_s, shutter_opens_s, interval_s, length_s, counts,
                  dark=0.0, noise=0.0, drift_per_min=0.0, reference_counts=None, outlier_at_s=None,
                  outlier_factor=1.0, dropout_s=None, seed=0) -> SyntheticRun:
    """A monitor recording of a layer growing at a steady rate, from the forward model.

    The reading is ``dark + counts · ratio(d) · drift(t) · (1 + noise·ε)``, with ``ratio`` the
    band-weighted transmittance relative to the uncoated part and ``drift(t) = 1 +
    drift_per_min · t/60``; a reference detector (``reference_counts``) sees the drift and its
    own noise. An outlier multiplies one reading; a dropout gives dark readings.

    Examples
    --------
    >>> r = synthetic_run("n=2 ? / n=1.5 1mm", "laser:600", "flat", rate_nm_per_s=1.0, shutter_opens_s=1.0,
    ...                   interval_s=0.5, length_s=3.0, counts=100.0)
    >>> r.thickness_nm.tolist()
    [0.0, 0.0, 0.0, 0.5, 1.0, 1.5]
    """
    from filmoptic.inverse.solve import Reading, evaluate_condition
    from filmoptic.stack import parse_stack

    rng = np.random.default_rng(seed)
    t = np.round(np.arange(0.0, length_s - 1e-9, interval_s), 9)
    d = np.clip((t - shutter_opens_s) * rate_nm_per_s, 0.0, None)
    ratio = evaluate_condition(parse_stack(stack), Reading(0.5, source, detector, "bare"), d)
    drift = 1.0 + drift_per_min * t / 60.0
    reading = dark + counts * ratio * drift * (1.0 + noise * rng.standard_normal(t.size))
    reference = None
    if reference_counts is not None:
        reference = reference_counts * drift * (1.0 + 0.5 * noise * rng.standard_normal(t.size))
    if outlier_at_s is not None:
        k = int(np.argmin(np.abs(t - outlier_at_s)))
        reading[k] = dark + (reading[k] - dark) * outlier_factor
    if dropout_s is not None:
        hit = (t >= dropout_s[0]) & (t < dropout_s[1])
        reading[hit] = dark + noise * counts * rng.standard_normal(int(hit.sum()))
    return SyntheticRun(t, reading, reference, d)


def write_run(path, recording: SyntheticRun) -> None:
    """Write a recording as ``t_s,reading[,reference]`` CSV (atomically)."""
    from filmoptic.files import write_csv

    names = ["t_s", "reading"] + (["reference"] if recording.reference_reading is not None else [])
    write_csv(path, names, run_rows(recording))


def run_rows(recording: SyntheticRun, start: int = 0, stop: int | None = None) -> list:
    """Rows ``start:stop`` of a recording as lists of text cells (time, reading[, reference])."""
    stop = recording.t_s.size if stop is None else stop
    out = []
    for i in range(start, stop):
        row = [f"{recording.t_s[i]:.3f}", f"{recording.reading[i]:.2f}"]
        if recording.reference_reading is not None:
            row.append(f"{recording.reference_reading[i]:.2f}")
        out.append(row)
    return out


def _mirror_run():
    from filmoptic.demo import scenario as sc

    return synthetic_run(
        sc.MONITOR_STACK, sc.MONITOR_SOURCE, sc.MONITOR_DETECTOR, rate_nm_per_s=sc.MONITOR_RATE_NM_PER_S,
        shutter_opens_s=sc.MONITOR_SHUTTER_OPENS_S, interval_s=sc.MONITOR_INTERVAL_S, length_s=sc.MONITOR_LENGTH_S,
        counts=sc.MONITOR_COUNTS, dark=sc.MONITOR_DARK_COUNTS, noise=sc.MONITOR_NOISE,
        drift_per_min=sc.MONITOR_DRIFT_PER_MIN, reference_counts=sc.MONITOR_REFERENCE_COUNTS,
        outlier_at_s=sc.MONITOR_OUTLIER_AT_S, outlier_factor=sc.MONITOR_OUTLIER_FACTOR,
        dropout_s=sc.MONITOR_DROPOUT_S, seed=sc.MONITOR_SEED,
    )


def run(outdir: pathlib.Path, say) -> None:
    """Run the monitor part of the demo, writing its recording, estimates and plots into ``outdir``."""
    from filmoptic.demo import scenario as sc
    from filmoptic.files import write_csv
    from filmoptic.monitor.plan import plan_table
    from filmoptic.monitor.session import Monitor, prepare
    from filmoptic.plots import save_figure
    from filmoptic.plots.monitor import plot_plan, plot_run
    from filmoptic.inverse.solve import Target

    outdir = pathlib.Path(outdir)
    plan = prepare(sc.MONITOR_STACK, source=sc.MONITOR_SOURCE, detector=sc.MONITOR_DETECTOR,
                   conditions=[Target("luminous_T", sc.MONITOR_TARGET_LUMINOUS_T)])
    table = plan_table(plan, sc.MONITOR_RATE_NM_PER_S)
    say(f"Semi-mirror run watched by an LED ({sc.MONITOR_SOURCE}) and a photodiode ({sc.MONITOR_DETECTOR} "
        f"detector) through the door glass; target luminous T = {100 * sc.MONITOR_TARGET_LUMINOUS_T:.0f} %:")
    say(f"  stop at {plan.target.thickness_nm:.2f} nm, where the photodiode reads "
        f"{100 * plan.target.ratio:.2f} % of the uncoated glass (one percentage point of it is "
        f"{table.nm_per_percent:.2f} nm there); about {table.time_to_target_s:.0f} s at "
        f"{60 * sc.MONITOR_RATE_NM_PER_S:.1f} nm/min")
    save_figure(plot_plan(table, title=f"{sc.MONITOR_STACK} — plan"), outdir / "monitor_plan.png")

    recording = _mirror_run()
    write_run(outdir / "monitor_run.csv", recording)
    monitor = Monitor(plan, baseline_s=5.0, dark=sc.MONITOR_DARK_COUNTS)
    estimates = []
    for i in range(recording.t_s.size):
        e = monitor.feed(recording.t_s[i], recording.reading[i], recording.reference_reading[i], line=i + 2)
        estimates.append(e)
    stop = monitor.reached_at
    for note in monitor.notes:
        say(f"  » {note}")
    if stop is not None:
        k = int(np.argmin(np.abs(recording.t_s - stop.t_s)))
        say(f"  the monitor called the stop at t = {stop.t_s:.1f} s with {stop.thickness_nm:.2f} nm; the synthetic "
            f"film was then {recording.thickness_nm[k]:.2f} nm thick")
    write_csv(outdir / "monitor_estimates.csv",
              ["t_s", "reading", "ratio", "thickness_nm", "rate_nm_per_s", "time_left_s", "target_reached", "status"],
              [[f"{e.t_s:.3f}", "" if e.reading is None else f"{e.reading:.2f}",
                "" if e.ratio is None else f"{e.ratio:.5f}", f"{e.thickness_nm:.4f}",
                "" if e.rate_nm_per_s is None else f"{e.rate_nm_per_s:.5f}",
                "" if e.time_left_s is None else f"{e.time_left_s:.1f}", int(e.target_reached), e.status]
               for e in estimates])
    save_figure(plot_run(estimates, title=f"{sc.MONITOR_STACK}: replayed run (synthetic, fictional scenario)"),
                outdir / "monitor_run.png")
    say("  → monitor_run.csv (the recording), monitor_estimates.csv, monitor_plan.png, monitor_run.png")
    say(f"  The same from the command line: filmoptic monitor \"{sc.MONITOR_STACK}\" monitor_run.csv --replay "
        f"--source {sc.MONITOR_SOURCE} --detector {sc.MONITOR_DETECTOR} --luminous-T "
        f"{100 * sc.MONITOR_TARGET_LUMINOUS_T:.0f}% --dark {sc.MONITOR_DARK_COUNTS:g}")
