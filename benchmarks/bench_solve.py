"""Speed of thickness solving: one solve, and a 10 000-row column of readings.

Run:  python benchmarks/bench_solve.py

Prints
* the time of one in-process solve after start-up (goal: under 50 ms), and
* the vectorised batch (``solve_batch``) against the obvious alternative, a per-row
  ``scipy.optimize.brentq`` loop over the forward model. The loop is timed on a subset of rows
  and scaled to 10 000 (it says so); the ratio comes from the same run.

Timings depend on the machine and its load; the ratios are what to compare.
"""

from __future__ import annotations

import sys
import time

import numpy as np

from timing import time_calls

STACK = "Ti ? / glass 4mm"
ROWS = 10_000
LOOP_SUBSET = 200


def main() -> int:
    from scipy.optimize import brentq

    from filmoptic.inverse.solve import Reading, Target, evaluate_condition, solve_batch, solve_thickness
    from filmoptic.stack import parse_stack

    stack = parse_stack(STACK)
    target = Target("luminous_T", 0.30)
    solve_thickness(stack, target)  # start-up: imports, table loading, weight caches
    one = time_calls(lambda: solve_thickness(stack, target), 15)
    best, median = one.best, one.median
    print(f"one solve ({STACK}, luminous T 30 %, with companions): best {best * 1e3:.1f} ms, "
          f"median {median * 1e3:.1f} ms  (goal < 50 ms: {'met' if median < 0.05 else 'NOT met'})")
    plain = time_calls(lambda: solve_thickness(stack, target, companions=False), 15)
    best_c, median_c = plain.best, plain.median
    print(f"one solve without companions: best {best_c * 1e3:.1f} ms, median {median_c * 1e3:.1f} ms")

    rng = np.random.default_rng(1)
    thickness = rng.uniform(0.5, 60.0, ROWS)
    template = Reading(0.5, "A", "photopic")
    values = evaluate_condition(stack, template, thickness)

    t0 = time.perf_counter()
    batch = solve_batch(stack, template, values)
    t_batch = time.perf_counter() - t0
    t0 = time.perf_counter()
    solve_batch(stack, template, values, uncertainty=0.02, relative_uncertainty=True)
    t_batch_u = time.perf_counter() - t0
    err = np.nanmax(np.abs(batch.thickness_nm - thickness))
    print(f"batch of {ROWS} readings: {t_batch:.2f} s ({t_batch_u:.2f} s with intervals); "
          f"largest thickness error {err:.1e} nm")

    # The per-row alternative: brentq on the forward model, one row at a time.
    prep = template.prepare(stack)

    def one_row(v):
        return brentq(lambda t: float(prep.evaluate(np.array([t]))[0]) - v, 0.0, 100.0, xtol=1e-9)

    subset = values[:LOOP_SUBSET]
    t0 = time.perf_counter()
    loop = np.array([one_row(v) for v in subset])
    t_loop_subset = time.perf_counter() - t0
    t_loop = t_loop_subset * ROWS / LOOP_SUBSET
    print(f"per-row brentq loop: {t_loop_subset:.2f} s for {LOOP_SUBSET} rows, scaled to {ROWS} rows: "
          f"{t_loop:.1f} s (timed on a subset and scaled)")
    print(f"  agreement with the batch on the subset: {np.max(np.abs(loop - batch.thickness_nm[:LOOP_SUBSET])):.1e} nm")
    print(f"ratio per-row loop / vectorised batch: {t_loop / t_batch:.0f}x")
    return 0


if __name__ == "__main__":
    sys.exit(main())
