"""Benchmark: big grids in bounded memory, and one polarisation at normal incidence.

* A 500 × 500 map of luminous transmittance (ISO 9050, D65) over two layer thicknesses of
  ``SiO2 ? / Ti ? / glass 4mm`` (250 000 thickness pairs × 81 wavelengths):
  whole spectra from ``engine.compute`` then ``colorimetry.luminous``, against the same reduced
  inside the engine chunk by chunk (``engine.compute_weighted`` / ``colorimetry.colour_grid``).
  Peak memory is measured with tracemalloc in separate runs (tracemalloc slows allocation), wall
  time without it; the largest difference between the two maps is printed.
* The same for a colour sweep of 200 000 thicknesses (``colour_sweep``, XYZ and luminous values)
  and a 20 000-run Monte Carlo yield (``design.tolerance_analysis`` with a luminous and a colour
  goal): peak memory against what their spectra alone would take.
* Unpolarised light at normal incidence: the engine computes one polarisation (s and p are the
  same wave there); timed against computing s and p separately and averaging, as before.

Everything runs in this process; no thresholds are asserted.

    python benchmarks/bench_grid.py
"""

from __future__ import annotations

import tracemalloc

import numpy as np

from timing import time_calls

STACK = "SiO2 ? / Ti ? / glass 4mm"


def timed(fn, repeat=3):
    """Median time of ``repeat`` calls and the last result."""
    timing = time_calls(fn, repeat)
    return timing.median, timing.result


def peak_mib(fn):
    tracemalloc.start()
    try:
        fn()
        return tracemalloc.get_traced_memory()[1] / 2**20
    finally:
        tracemalloc.stop()


def main():
    from filmoptic.colorimetry import colour_grid, colour_sweep, default_wavelengths, luminous
    from filmoptic.engine import compute

    wl = default_wavelengths()
    sio2, ti = np.meshgrid(np.linspace(0.0, 200.0, 500), np.linspace(0.0, 20.0, 500), indexing="ij")
    X = np.stack([sio2, ti], axis=-1)
    colour_grid(STACK, X[:2, :2])                       # tables, weights, workspace: warm

    def whole():
        s = compute(STACK, wl, thickness_nm=X)
        return luminous(wl, s.T)

    def reduced():
        return colour_grid(STACK, X, colours=False).luminous.T

    t_whole, map_whole = timed(whole, repeat=2)
    t_reduced, map_reduced = timed(reduced, repeat=2)
    m_whole = peak_mib(whole)
    m_reduced = peak_mib(reduced)
    m_colours = peak_mib(lambda: colour_grid(STACK, X))
    diff = float(np.max(np.abs(map_whole - map_reduced)))
    print(f"500 × 500 map of luminous T over two thicknesses ({X.shape[0] * X.shape[1]:,} pairs × {wl.size} wavelengths)")
    print(f"  whole spectra, then luminous():   {t_whole:6.2f} s, peak {m_whole:7.1f} MiB")
    print(f"  reduced inside the engine:        {t_reduced:6.2f} s, peak {m_reduced:7.1f} MiB "
          f"({m_whole / m_reduced:.0f}x less memory, {t_whole / t_reduced:.2f}x the speed)")
    print(f"  with XYZ of R and T as well:                peak {m_colours:7.1f} MiB")
    print(f"  largest difference between the maps: {diff:.1e}")

    d = np.linspace(0.0, 250.0, 200_000)
    colour_sweep("TiO2 ? / Ti", d[:10])
    m_sweep = peak_mib(lambda: colour_sweep("TiO2 ? / Ti", d))
    spectra_mib = 5 * d.size * wl.size * 8 / 2**20
    print(f"colour sweep of {d.size:,} thicknesses: peak {m_sweep:.1f} MiB "
          f"(its five spectrum channels alone: {spectra_mib:.0f} MiB)")

    from filmoptic.design.tolerance import tolerance_analysis

    goals = ["luminous-T = 30% within 2%", "reflected Lab = 62,0,0 within 3"]
    design = "SiO2 171.7nm / Cr 7.86nm / TiO2 110.8nm / glass 4mm"
    tolerance_analysis(design, goals, samples=50)
    runs = 20_000
    t_mc, result = timed(lambda: tolerance_analysis(design, goals, samples=runs, seed=3), repeat=1)
    m_mc = peak_mib(lambda: tolerance_analysis(design, goals, samples=runs, seed=3))
    print(f"Monte Carlo yield, {runs:,} runs (luminous and colour goals): {t_mc:.2f} s, peak {m_mc:.1f} MiB "
          f"(R and T spectra of every run: {2 * runs * wl.size * 8 / 2**20:.0f} MiB); yield {result.yield_fraction:.3f}")

    thick = np.linspace(0.0, 300.0, 4000)[:, None]
    stack = "TiO2 ? / SiO2 90nm / TiO2 45nm / SiO2 110nm / glass 1mm"
    compute(stack, wl, thickness_nm=thick[:2])
    t_one, one = timed(lambda: compute(stack, wl, thickness_nm=thick), repeat=5)

    def both():
        s = compute(stack, wl, thickness_nm=thick, polarization="s")
        p = compute(stack, wl, thickness_nm=thick, polarization="p")
        return 0.5 * (s.R + p.R)

    t_both, avg = timed(both, repeat=5)
    print(f"normal incidence, unpolarised, {thick.shape[0]:,} thicknesses × {wl.size} wavelengths: "
          f"{t_one * 1e3:.1f} ms with one polarisation, {t_both * 1e3:.1f} ms with s and p "
          f"({t_both / t_one:.2f}x); largest difference in R {float(np.max(np.abs(one.R - avg))):.1e}")


if __name__ == "__main__":
    main()
