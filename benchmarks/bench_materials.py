"""Benchmark: optical constants are evaluated in one vectorised call, and listing reads headers only.

Prints timings and ratios measured in this run (no absolute thresholds):

* ``nk`` of a shipped table on a whole wavelength grid at once versus one wavelength per call
  (what a Python loop over wavelengths would cost);
* listing the library (headers only) versus parsing every table;
* a Bruggeman mix of two tables on the same grid.

    python benchmarks/bench_materials.py
"""

from __future__ import annotations

import time

import numpy as np


def best_of(fn, repeat=5):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main():
    from filmoptic.materials import get_material, list_materials, parse_material
    from filmoptic.materials.library import _build_index
    from filmoptic.materials.tables import read_nk_file

    ti = get_material("Ti")
    ti.nk(500.0)  # build the interpolants once
    grid = np.linspace(300.0, 1000.0, 20_000)
    loop_points = grid[::20]

    vectorised = best_of(lambda: ti.nk(grid))
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
    mixed = best_of(lambda: mix.nk(grid))
    print(f"Bruggeman mix of two tables, {grid.size} wavelengths: {mixed * 1e3:8.2f} ms "
          f"({mixed / vectorised:.1f}x one table)")


if __name__ == "__main__":
    main()
