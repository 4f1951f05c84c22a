"""Benchmark: the grids of an explore page, one engine call per block versus one call per grid point.

The tags' page of the demo: TiO2 10–200 nm on titanium every 0.5 nm, viewing angles 0–75° every 5°
(381 × 16 = 6096 grid points), colours, luminous values and spectra under D65, 2° observer.

* filmoptic: ``explore_grids`` — the engine runs once per block of thickness sets for all angles;
  colours and luminous values are matrix products over the whole grid;
* reference: the same numbers by a plain loop, one ``filmoptic.colorimetry.appearance`` call per
  thickness and angle, the way a script without a batch API would (timed on every N-th point,
  scaled to all).

Then the page: its size, the time to pack it, and — when Chromium and the playwright package are
at hand — how long a headless Chromium takes to open it and have every slider working (median of
five loads). The script prints times and ratios measured in this run; nothing is asserted.

    python benchmarks/bench_explore.py
    python benchmarks/bench_explore.py --every 20
"""

from __future__ import annotations

import argparse
import platform
import shutil
import statistics
import tempfile
import time
from pathlib import Path

import numpy as np

STACK = "TiO2 10..200nm / Ti"
ANGLES = np.arange(0.0, 75.0 + 1e-9, 5.0)


def _browser_load_ms(path: Path):
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        return None, "playwright is not installed"
    chromium = shutil.which("chromium") or shutil.which("chromium-browser")
    if chromium is None:
        return None, "no Chromium found"
    times = []
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=chromium, args=["--no-sandbox", "--disable-gpu"])
        page = browser.new_page()
        for _ in range(5):
            start = time.perf_counter()
            page.goto(path.resolve().as_uri())
            page.wait_for_function("document.body.dataset.ready === '1'")
            times.append((time.perf_counter() - start) * 1e3)
        browser.close()
    return statistics.median(times), "median of 5 loads, page ready"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--every", type=int, default=10, help="loop over every N-th grid point only")
    args = parser.parse_args()

    from filmoptic.colorimetry import appearance, delta_e00
    from filmoptic.explore import explore_grids, explore_page

    explore_grids(STACK, ranges_nm=[(10, 11)], angles_deg=[0])      # warm the caches for both
    appearance("TiO2 10nm / Ti")

    t0 = time.perf_counter()
    grids = explore_grids(STACK, angles_deg=ANGLES)
    t_grid = time.perf_counter() - t0

    thickness = grids.free[0].values_nm
    points = [(a, i) for a in range(ANGLES.size) for i in range(thickness.size)][::args.every]
    t0 = time.perf_counter()
    labs = [appearance(f"TiO2 {float(thickness[i])!r}nm / Ti", angle_deg=float(ANGLES[a])).reflected.Lab for a, i in points]
    t_loop = (time.perf_counter() - t0) * grids.points / len(points)
    ours = np.array([grids.views["reflected"]["Lab"][a, i, 0] for a, i in points])
    worst = float(np.max(delta_e00(np.array(labs), ours)))

    t0 = time.perf_counter()
    text = explore_page(grids)
    t_pack = time.perf_counter() - t0
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "page.html"
        path.write_text(text, encoding="utf-8")
        load_ms, how = _browser_load_ms(path)

    print(f"machine: {platform.machine()}, Python {platform.python_version()}")
    print(f"grid: {grids.shape[1]} thicknesses × {grids.shape[0]} angles = {grids.points} points "
          f"(loop measured on {len(points)}, scaled to all)")
    print(f"explore_grids (blocks of thickness sets, all angles per call): {t_grid * 1e3:9.1f} ms")
    print(f"one appearance() call per grid point:                          {t_loop * 1e3:9.1f} ms")
    print(f"ratio (loop / grid):                                           {t_loop / t_grid:9.1f} x")
    print(f"largest ΔE00 between them: {worst:.2e}")
    print(f"page: {len(text.encode()) / 1e6:.2f} MB, packed in {t_pack * 1e3:.0f} ms")
    print(f"browser load: {'–' if load_ms is None else f'{load_ms:.0f} ms'} ({how})")
    print(f"README: explore page, {grids.points} grid points | {t_grid * 1e3:.0f} ms | per-point appearance "
          f"loop: {t_loop:.1f} s | {t_loop / t_grid:.0f}×; page {len(text.encode()) / 1e6:.1f} MB, "
          f"opens in {'–' if load_ms is None else f'{load_ms:.0f} ms'}")


if __name__ == "__main__":
    main()
