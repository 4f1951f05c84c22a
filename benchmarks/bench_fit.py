"""Speed of spectrum fitting: a three-parameter fit of a 400-point transmittance curve.

Run:  python benchmarks/bench_fit.py

Prints, measured in the same run:

* ``fit_spectra`` on the demo's synthetic oxide curve (Cauchy A, B and the thickness free),
  *including* its global search over the thickness range (goal: under one second once the
  libraries are imported; the first call's import time is printed separately);
* the plain alternative: ``scipy.optimize.least_squares`` on a model that calls ``tmm.inc_tmm``
  once per wavelength, started from the middle of the same ranges — one local fit, no global
  search — and whether it found the true minimum;
* the cost of one model evaluation both ways, and the ratios.

Timings depend on the machine and its load; the ratios are what to compare.
"""

from __future__ import annotations

import time

import numpy as np

from timing import time_calls

POINTS = 400


def main() -> int:
    t0 = time.perf_counter()
    import tmm
    from scipy.optimize import least_squares

    from filmoptic.demo import scenario as sc
    from filmoptic.engine import compute
    from filmoptic.inverse.fit import fit_spectra, parameter_bounds
    from filmoptic.materials import get_material
    from filmoptic.inverse.measured import MeasuredSpectrum
    from filmoptic.stack import parse_stack

    wl = np.linspace(sc.FIT_WAVELENGTHS_NM[0], sc.FIT_WAVELENGTHS_NM[1], POINTS)
    truth = compute(sc.FIT_TRUE_STACK, wl).T
    data = MeasuredSpectrum(wl, truth + np.random.default_rng(sc.FIT_SEED).normal(0, sc.FIT_NOISE_ABS, POINTS), "T")
    model = parse_stack(sc.FIT_MODEL_STACK)
    t_first = time.perf_counter()
    fit_spectra(model, data)
    first = time.perf_counter() - t_first
    imports = t_first - t0

    fits = time_calls(lambda: fit_spectra(model, data), repeat=5)
    best, median, result = fits.best, fits.median, fits.result
    print(f"filmoptic fit, {POINTS} points, {len(result.parameters)} parameters "
          f"(global search + refinement): best {best * 1e3:.0f} ms, median {median * 1e3:.0f} ms "
          f"(first call {first * 1e3:.0f} ms after {imports * 1e3:.0f} ms of imports)")
    for p in result.parameters:
        print(f"    {p.name}: {p.value:.5g} ± {p.stderr:.2g} {p.unit}")
    print(f"    {result.notes[0]}")

    # --- the plain alternative: per-wavelength tmm inside scipy's least squares ------------------
    n_glass = get_material("glass").nk(wl)
    lo, hi, _ = parameter_bounds(model)

    def tmm_T(x):
        A, B, d = x
        n_film = A + B / (wl / 1000.0) ** 2
        return np.array([
            tmm.inc_tmm("s", [1.0, nf, ns, 1.0], [np.inf, d, 1e6, np.inf], ["i", "c", "i", "i"], 0.0, w)["T"]
            for nf, ns, w in zip(n_film, n_glass, wl)
        ])

    x0 = (lo + hi) / 2
    t_plain = time.perf_counter()
    plain = least_squares(lambda x: tmm_T(x) - data.values, x0, bounds=(lo, hi), x_scale=(hi - lo) / 10)
    plain_time = time.perf_counter() - t_plain
    chi_plain = float(np.sum(plain.fun**2))
    chi_ours = float(np.sum((result.fitted[0].model - data.values) ** 2))
    found = "the same minimum" if abs(chi_plain - chi_ours) < 1e-3 * chi_ours + 1e-12 else "a different (worse) minimum"
    print(f"plain scipy least_squares + per-wavelength tmm, one start at the range centre: "
          f"{plain_time * 1e3:.0f} ms, {plain.nfev} model calls; found {found} "
          f"(A {plain.x[0]:.4g}, B {plain.x[1]:.3g}, d {plain.x[2]:.4g} nm; "
          f"sum of squares {chi_plain:.3g} vs {chi_ours:.3g})")

    # --- one model evaluation ---------------------------------------------------------------------
    x_true = result.stack
    one_ours = time_calls(lambda: compute(x_true, wl), repeat=20).best
    one_tmm = time_calls(lambda: tmm_T(plain.x), repeat=3).best
    print(f"one model spectrum: filmoptic {one_ours * 1e3:.2f} ms, tmm loop {one_tmm * 1e3:.1f} ms "
          f"(ratio {one_tmm / one_ours:.0f}×)")
    print(f"ratio: the plain local fit takes {plain_time / best:.1f}× as long as filmoptic's whole "
          f"fit with its global search (grid search and {result.starts} local refinements included)")
    print("goal: filmoptic fit under 1 s:", "met" if best < 1.0 else "NOT met")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
