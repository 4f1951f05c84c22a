"""Speed of a thickness map from a 24-megapixel photo.

Run:  python benchmarks/bench_map.py

Renders a synthetic 6000 × 4000 light-box photo of a titanium film on glass (the forward model,
a radial fall-off with a tilt, vignetting, noise) and its empty-box photo, saves both as 8-bit
JPEG (quality 90) in a temporary folder, and times

* ``map_thickness`` from the two files into 40 × 30 cells after start-up (reading and decoding
  both JPEGs, linearising, flat-fielding, binning, solving every cell at once, statistics and
  profile fits) — goal: under 5 s;
* the obvious alternative for the solving step, a loop of ``solve_thickness`` per cell on the same
  cell values (timed on a subset of cells and scaled; it says so), plus the same binning.

It prints the ratio measured in the same run, the peak memory of the map (tracemalloc) against
the size of the decoded photo, and the largest difference between the two solutions.
Timings depend on the machine and its load; the ratios are what to compare.
"""

from __future__ import annotations

import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np

STACK = "Ti ? / glass 4mm"
WIDTH, HEIGHT = 6000, 4000
CELLS = (40, 30)
LOOP_SUBSET = 120


def _render(folder: Path):
    from filmoptic.imaging.render import add_noise, cos4_vignetting, encode_srgb8, render_transmission, write_jpeg

    y, x = np.mgrid[0:HEIGHT, 0:WIDTH].astype(np.float32)
    r2 = (x - 3300.0) ** 2 + (y - 1900.0) ** 2
    field = (11.0 / (1.0 + r2 / 5200.0 ** 2) ** 2 + 2e-4 * (x - 3000.0)).astype(float)
    del x, y, r2
    field[:, :500] = 0.0                      # bare strip: the reference
    photo, flat = render_transmission(STACK, field, vignetting=cos4_vignetting(HEIGHT, WIDTH, 0.7), exposure=0.8)
    del field
    rng = np.random.default_rng(7)
    write_jpeg(folder / "photo.jpg", encode_srgb8(add_noise(photo, rng, shot=0.01, read=0.002)), quality=90)
    del photo
    write_jpeg(folder / "open.jpg", encode_srgb8(add_noise(flat, rng, shot=0.01, read=0.002)), quality=90)


def main() -> int:
    from filmoptic.imaging.maps import map_thickness
    from filmoptic.imaging.photo import cell_grid, cell_statistics, read_photo, rectangle_statistics
    from filmoptic.inverse.solve import Reading, solve_thickness

    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        t0 = time.perf_counter()
        _render(folder)
        print(f"rendered and saved a {WIDTH}×{HEIGHT} synthetic photo and its open-box photo in "
              f"{time.perf_counter() - t0:.1f} s (not timed below)")
        options = dict(flat=folder / "open.jpg", bare="50,100,450,3900", region="600,100,5900,3900", cells=CELLS)

        # Start-up: imports, optical-constant tables, weight caches (a small photo).
        from filmoptic.imaging.photo import Photo
        from filmoptic.imaging.render import encode_linear16, render_transmission

        small, small_flat = render_transmission(STACK, np.full((64, 64), 5.0))
        map_thickness(STACK, Photo.from_array(encode_linear16(small)), flat=Photo.from_array(encode_linear16(small_flat)),
                      cells=(4, 4))

        tracemalloc.start()
        t0 = time.perf_counter()
        result = map_thickness(STACK, folder / "photo.jpg", **options)
        t_map = time.perf_counter() - t0
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        decoded = WIDTH * HEIGHT * 3
        print(f"map_thickness, {WIDTH * HEIGHT / 1e6:.0f} MP JPEG + open-box JPEG → {CELLS[0]}×{CELLS[1]} cells: "
              f"{t_map:.2f} s after start-up (goal < 5 s: {'met' if t_map < 5 else 'NOT met'}); "
              f"{result.stats.cells_solved} cells solved, uniformity ±{result.stats.uniformity_pct:.2f} %")
        print(f"  peak memory traced during the map: {peak / 1e6:.0f} MB (two decoded 8-bit photos: "
              f"{2 * decoded / 1e6:.0f} MB; one as float64 RGB would be {decoded * 8 / 1e6:.0f} MB)")

        # The alternative: the same reading and binning, then one solve per cell.
        t0 = time.perf_counter()
        photo = read_photo(folder / "photo.jpg")
        flat = read_photo(folder / "open.jpg")
        grid = cell_grid((600, 100, 5900, 3900), cells=CELLS)
        stats = cell_statistics(photo, grid, flat=flat)
        bare = rectangle_statistics(photo, (50, 100, 450, 3900), flat=flat).mean[0, 0]
        ratios = (stats.mean / bare).ravel()
        t_bin = time.perf_counter() - t0
        template = Reading(0.5, source="D65", detector="photopic", reference="bare")
        subset = ratios[:: max(1, ratios.size // LOOP_SUBSET)][:LOOP_SUBSET]
        t0 = time.perf_counter()
        loop = np.array([solve_thickness(STACK, template.with_value(float(min(v, 1.0))), companions=False)
                         .solutions[0].thickness_nm for v in subset])
        t_loop_subset = time.perf_counter() - t0
        t_loop = t_bin + t_loop_subset * ratios.size / subset.size
        mapped = result.thickness_nm.ravel()[:: max(1, ratios.size // LOOP_SUBSET)][:LOOP_SUBSET]
        print(f"per-cell loop: reading and binning {t_bin:.2f} s + solve_thickness per cell "
              f"{t_loop_subset:.2f} s for {subset.size} cells, scaled to {ratios.size}: {t_loop:.1f} s "
              "(timed on a subset and scaled)")
        print(f"  largest difference from the map on the subset: {np.nanmax(np.abs(loop - mapped)):.1e} nm")
        print(f"ratio per-cell loop / vectorised map: {t_loop / t_map:.1f}x")
    return 0


if __name__ == "__main__":
    sys.exit(main())
