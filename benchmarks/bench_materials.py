"""Benchmark: optical constants are evaluated in one vectorised call, and listing reads headers only.

Prints timings and ratios measured in this run (no absolute thresholds):

* ``nk`` of a shipped table on a whole wavelength grid at once versus one wavelength per call
  (what a Python loop over wavelengths would cost);
* listing the library (headers only) versus parsing every table;
* a Bruggeman mix of two tables on the same grid;
* filmoptic's numpy PCHIP (``filmoptic.numerics.interpolate.Pchip``) against scipy's
  ``PchipInterpolator`` on the same table: building the interpolant and evaluating it, and the
  import each needs (scipy.interpolate is what commands no longer import at start-up).

Tables keep their last answer (the same grid asked again costs nothing); the timings below
alternate between two grids so that every call interpolates.

    python benchmarks/bench_materials.py
"""

from __future__ import annotations

import numpy as np

from timing import best_of


def main():
    from filmoptic.materials import get_material, list_materials, parse_material
    from filmoptic.materials.library import _build_index
    from filmoptic.materials.tables import read_nk_file

    ti = get_material("Ti")
    ti.nk(500.0)  # build the interpolants once
    grid = np.linspace(300.0, 1000.0, 20_000)
    loop_points = grid[::20]

    grids = [grid, grid + 1e-9]

    def alternating(fn):
        state = {"k": 0}

        def call():
            state["k"] ^= 1
            return fn(grids[state["k"]])
        return call

    vectorised = best_of(alternating(ti.nk))
    looped = best_of(lambda: [ti.nk(w) for w in loop_points], repeat=3) * (grid.size / loop_points.size)
    print(f"nk, {grid.size} wavelengths in one call:     {vectorised * 1e3:8.2f} ms")
    print(f"nk, one wavelength per call (extrapolated): {looped * 1e3:8.2f} ms")
    print(f"  ratio loop / vectorised: {looped / vectorised:,.0f}x")

    infos = list_materials()

    def fresh_listing():
        _build_index.cache_clear()
        list_materials()

    headers = best_of(fresh_listing, repeat=3)
    full = best_of(lambda: [read_nk_file(i.path) for i in infos], repeat=3)
    print(f"list {len(infos)} datasets from headers:       {headers * 1e3:8.2f} ms")
    print(f"parse all {len(infos)} tables:                  {full * 1e3:8.2f} ms")
    print(f"  ratio full parse / headers: {full / headers:.1f}x")

    mix = parse_material("mix(Ti,TiO2,0.3)")
    mix.nk(500.0)
    mixed = best_of(alternating(mix.nk))
    print(f"Bruggeman mix of two tables, {grid.size} wavelengths: {mixed * 1e3:8.2f} ms "
          f"({mixed / vectorised:.1f}x one table)")

    import subprocess
    import sys

    from filmoptic.numerics.interpolate import Pchip

    def import_time(module):
        code = f"import time; t = time.perf_counter(); import {module}; print(time.perf_counter() - t)"
        runs = [float(subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                                     check=True).stdout) for _ in range(5)]
        return sorted(runs)[2]

    ours_import = import_time("filmoptic.numerics.interpolate")
    scipy_import = import_time("scipy.interpolate")
    from scipy.interpolate import PchipInterpolator

    wl, n = ti.wavelength, ti.n
    ours_build = best_of(lambda: Pchip(wl, n), repeat=20)
    scipy_build = best_of(lambda: PchipInterpolator(wl, n, extrapolate=False), repeat=20)
    ours_f, scipy_f = Pchip(wl, n), PchipInterpolator(wl, n, extrapolate=False)
    ours_eval = best_of(lambda: ours_f(grid), repeat=20)
    scipy_eval = best_of(lambda: scipy_f(grid), repeat=20)
    same = bool(np.array_equal(ours_f(grid), scipy_f(grid)))
    print(f"PCHIP of Ti's n ({wl.size} rows), build:  numpy {ours_build * 1e6:7.1f} µs, "
          f"scipy {scipy_build * 1e6:7.1f} µs ({scipy_build / ours_build:.1f}x)")
    print(f"  evaluate on {grid.size} wavelengths:     numpy {ours_eval * 1e3:7.2f} ms, "
          f"scipy {scipy_eval * 1e3:7.2f} ms ({scipy_eval / ours_eval:.2f}x); identical: {same}")
    print(f"  import (median of 5 fresh processes): filmoptic.numerics.interpolate {ours_import * 1e3:.1f} ms, "
          f"scipy.interpolate {scipy_import * 1e3:.0f} ms")


if __name__ == "__main__":
    main()
