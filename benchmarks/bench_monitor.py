"""Speed of the live monitor: time per reading after start-up, against re-solving every reading.

Run:  python benchmarks/bench_monitor.py

Prints
* the start-up (modelling the signal on the thickness grid, solving the luminous-T target),
* the time per reading of :class:`filmoptic.monitor.session.Monitor` on the demo scenario's
  synthetic semi-mirror run (goal: under 5 ms, so 100 readings a second are fine), with and without
  the run log (every line flushed and synced to disk),
* the same readings turned into thicknesses by re-solving each from scratch with ``solve``'s path
  (``solve_thickness`` with a ``Reading`` relative to the bare part), timed on a subset of readings
  and scaled (it says so), and the ratio of the two measured in this run.

Timings depend on the machine and its load; the ratio is what to compare.
"""

from __future__ import annotations

import os
import statistics
import sys
import tempfile
import time

SUBSET = 40


def main() -> int:
    import numpy as np

    from filmoptic.demo import scenario as sc
    from filmoptic.demo.monitor import _mirror_run
    from filmoptic.monitor.session import Monitor, RunLog, prepare
    from filmoptic.inverse.solve import Reading, Target, solve_thickness

    recording = _mirror_run()
    t0 = time.perf_counter()
    plan = prepare(sc.MONITOR_STACK, source=sc.MONITOR_SOURCE, detector=sc.MONITOR_DETECTOR,
                   conditions=[Target("luminous_T", sc.MONITOR_TARGET_LUMINOUS_T)])
    startup = time.perf_counter() - t0
    print(f"start-up (signal model on {plan.model.thickness_nm.size} thicknesses × {plan.model.wavelength_nm.size} "
          f"wavelengths, target solved): {startup * 1e3:.0f} ms")

    def replay(log=None):
        monitor = Monitor(plan, dark=sc.MONITOR_DARK_COUNTS)
        times = []
        for i in range(recording.t_s.size):
            start = time.perf_counter()
            e = monitor.feed(recording.t_s[i], recording.reading[i], recording.reference_reading[i])
            if log is not None:
                log.write(e, recording.t_s[i])
            times.append(time.perf_counter() - start)
        return monitor, np.array(times)

    replay()  # warm caches
    monitor, per_reading = replay()
    n = per_reading.size
    median, p99 = statistics.median(per_reading), float(np.quantile(per_reading, 0.99))
    print(f"monitor: {n} readings, median {median * 1e3:.3f} ms, mean {per_reading.mean() * 1e3:.3f} ms per reading "
          f"(goal < 5 ms: {'met' if median < 5e-3 else 'NOT met'}); 99th percentile {p99 * 1e3:.2f} ms "
          f"(a busy machine's scheduler shows there: load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores)")
    with tempfile.TemporaryDirectory() as folder:
        log = RunLog.open(os.path.join(folder, "log.csv"), {"bench": True}, resume=False)
        _, logged = replay(log)
        log.close()
    print(f"with the log (flushed and fsynced per line): median {statistics.median(logged) * 1e3:.3f} ms per reading")

    # The obvious alternative: solve every reading from scratch with solve's path.
    grown = np.flatnonzero(recording.thickness_nm > 0.5)
    pick = grown[np.linspace(0, grown.size - 1, SUBSET).round().astype(int)]
    ratios = np.clip([(recording.reading[i] - sc.MONITOR_DARK_COUNTS) / (monitor.reference - sc.MONITOR_DARK_COUNTS)
                      * (monitor._ref_detector_level / recording.reference_reading[i]) for i in pick], 0.0, 1.0)
    start = time.perf_counter()
    for value in ratios:
        solve_thickness(sc.MONITOR_STACK, Reading(float(value), sc.MONITOR_SOURCE, sc.MONITOR_DETECTOR, "bare"),
                        companions=False)
    per_solve = (time.perf_counter() - start) / SUBSET
    print(f"re-solving each reading with solve's path: {per_solve * 1e3:.1f} ms per reading "
          f"(timed on {SUBSET} readings; {n} readings would take {per_solve * n:.1f} s)")
    print(f"ratio re-solve / monitor per reading: {per_solve / median:.0f}x")
    return 0


if __name__ == "__main__":
    sys.exit(main())
