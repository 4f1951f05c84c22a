"""Speed of design and yield: a broadband antireflection coating from nothing, and a 10 000-run
yield of a six-layer design.

Run:  python benchmarks/bench_design.py

Prints, measured in the same run:

* ``design_coating`` designing a broadband AR coating (TiO2 and SiO2 on glass, R ≤ 0.25 % at
  every wavelength of 420–680 nm, up to 10 layers) from nothing — global search, batched
  refinement and needle growth — with the number of designs it scored (goal: under 30 s);
* the plain alternative for the same search: every one of those designs scored by its own
  per-wavelength ``tmm.coh_tmm`` loop (timed on a sample of designs, scaled to the count), and,
  for a feel of a plain local step, one ``scipy.optimize.minimize`` (L-BFGS-B, its own finite
  differences) over that tmm merit from one start of the search, timed in full;
* ``tolerance_analysis`` of a six-layer design (designed for the same goal, its runs judged by
  R ≤ 1 %) with 10 000 simulated runs (goal: under 5 s),
  against a per-run tmm loop (timed on 100 runs, scaled).

Timings depend on the machine and its load; the ratios are what to compare.
"""

from __future__ import annotations

import time

import numpy as np

GOAL = "R 420..680nm <= 0.25%"
BOUND = 0.0025
YIELD_GOAL = "R 420..680nm <= 1%"      # what the runs of the six-layer design are judged by
STEP_NM = 5.0
SAMPLES = 10_000


def _tmm_merit(n_lists, wavelengths, thicknesses):
    """The design's merit for one thickness set, one tmm call per wavelength (s = p at normal
    incidence): sqrt(mean(shortfall²)) in percentage points, as filmoptic.design.goals defines it."""
    import tmm

    d = [np.inf, *thicknesses, np.inf]
    R = np.array([tmm.coh_tmm("s", n, d, 0.0, lam)["R"] for n, lam in zip(n_lists, wavelengths)])
    shortfall = np.maximum(R - (BOUND - 1e-5), 0.0) / 0.01
    return float(np.sqrt(np.mean(shortfall**2)))


def _indices(stack, wavelengths):
    media = [stack.ambient, *(layer.material for layer in stack.layers), stack.substrate.material]
    table = np.array([np.broadcast_to(np.asarray(m.nk(wavelengths), complex), wavelengths.shape) for m in media])
    return [table[:, i] for i in range(wavelengths.size)]


def main() -> int:
    t0 = time.perf_counter()
    from scipy.optimize import minimize

    from filmoptic.design import design_coating
    from filmoptic.design.tolerance import tolerance_analysis
    from filmoptic.stack import parse_stack

    imports = time.perf_counter() - t0
    wl = np.arange(420.0, 680.0 + 1e-9, STEP_NM)

    # --- 1. a broadband AR coating from nothing ----------------------------------------------
    t = time.perf_counter()
    result = design_coating([GOAL], materials=["TiO2", "SiO2"], on="glass", max_layers=10, step_nm=STEP_NM)
    design_time = time.perf_counter() - t
    print(f"filmoptic design from nothing ({GOAL}, TiO2/SiO2 on glass, ≤ 10 layers): "
          f"{design_time:.1f} s after {imports:.1f} s of imports; {result.designs_evaluated} designs scored")
    print(f"    {result.stack}")
    print(f"    achieved {100 * result.goals[0].achieved:.3f} % ({'met' if result.goals[0].met else 'not met'}), "
          f"merit {result.merit:.3g}")

    stack = parse_stack(result.stack)
    n_lists = _indices(stack, wl)
    thicknesses = [layer.thickness_nm for layer in stack.layers]
    rng = np.random.default_rng(1)
    sample = [np.array(thicknesses) * rng.uniform(0.8, 1.2, len(thicknesses)) for _ in range(100)]
    t = time.perf_counter()
    for x in sample:
        _tmm_merit(n_lists, wl, x)
    per_design = (time.perf_counter() - t) / len(sample)
    plain = per_design * result.designs_evaluated
    print(f"plain: one tmm loop per design, {per_design * 1e3:.2f} ms each × {result.designs_evaluated} designs "
          f"= {plain:.0f} s (timed on {len(sample)} designs, scaled)")
    print(f"ratio: the same search scored design by design with tmm takes {plain / design_time:.0f}× as long")

    start = np.array(thicknesses) * 1.1
    t = time.perf_counter()
    plain_fit = minimize(lambda x: _tmm_merit(n_lists, wl, x) ** 2, start, method="L-BFGS-B",
                         bounds=[(0.0, 500.0)] * start.size)
    one_plain = time.perf_counter() - t
    print(f"    one plain local refinement (scipy L-BFGS-B over the tmm merit, from the design +10 %): "
          f"{one_plain:.1f} s, {plain_fit.nfev} merit calls; the whole filmoptic design above: {design_time:.1f} s")

    # --- 2. the yield of a six-layer design, 10 000 simulated runs --------------------------
    six = design_coating([GOAL], "SiO2 ? / TiO2 ? / SiO2 ? / TiO2 ? / SiO2 ? / TiO2 ? / glass", step_nm=STEP_NM)
    t = time.perf_counter()
    tol = tolerance_analysis(six.stack, [YIELD_GOAL], random="2%", systematic="1%", samples=SAMPLES,
                             step_nm=STEP_NM)
    yield_time = time.perf_counter() - t
    print(f"filmoptic yield of a six-layer design ({six.stack}), {SAMPLES} runs, 2 % random + 1 % "
          f"systematic, judged by {YIELD_GOAL}: {yield_time:.2f} s; yield {100 * tol.yield_fraction:.1f} %, critical layer "
          f"{tol.critical_layer}")
    stack6 = parse_stack(six.stack)
    n6 = _indices(stack6, wl)
    d6 = np.array([layer.thickness_nm for layer in stack6.layers])
    runs = [d6 * (1 + rng.normal(0, 0.02, d6.size)) for _ in range(100)]
    t = time.perf_counter()
    for x in runs:
        _tmm_merit(n6, wl, x)
    per_run = (time.perf_counter() - t) / len(runs)
    print(f"plain: a tmm loop per run, {per_run * 1e3:.2f} ms each × {SAMPLES} = {per_run * SAMPLES:.0f} s "
          f"(timed on {len(runs)} runs, scaled)")
    print(f"ratio: {per_run * SAMPLES / yield_time:.0f}× faster than the per-run loop")
    print("goals: design under 30 s:", "met" if design_time < 30 else "NOT met",
          "| yield under 5 s:", "met" if yield_time < 5 else "NOT met")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
