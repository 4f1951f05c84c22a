"""Benchmark: an anodising colour chart, all voltages in one engine call versus one call per voltage.

Titanium anodised from 0 to 120 V every 0.1 V (1201 voltages, 2.0 nm/V), reflected colour and
luminous reflectance under D65 and the 2° observer, 380–780 nm every 5 nm.

* filmoptic: ``anodize_colours`` — the growth law turns the voltages into thicknesses and one
  vectorised engine call computes every spectrum; colours are matrix products;
* reference: the same answers by a plain loop, one ``filmoptic.colorimetry.appearance`` call (one
  engine call and one colour conversion) per voltage, the way a script without a batch API would.

Both run in this process; the script prints the times, their ratio and the largest colour
difference (ΔE00), then a summary line for the README. No thresholds are asserted.

    python benchmarks/bench_anodize.py
    python benchmarks/bench_anodize.py --every 5   # the loop on every 5th voltage (faster)
"""

from __future__ import annotations

import argparse
import platform
import time

import numpy as np

VOLTS = np.round(np.arange(0.0, 120.0 + 1e-9, 0.1), 10)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--every", type=int, default=1, help="loop over every N-th voltage only")
    args = parser.parse_args()

    from filmoptic.colorimetry import appearance, delta_e00
    from filmoptic.colouring.anodize import anodize_colours, growth_law

    law = growth_law("Ti")
    anodize_colours("Ti", VOLTS[:3])           # warm the caches (tables, weights) for both
    appearance("TiO2 10nm / Ti")

    t0 = time.perf_counter()
    chart = anodize_colours("Ti", VOLTS)
    t_batch = time.perf_counter() - t0

    picked = np.arange(0, VOLTS.size, args.every)
    t0 = time.perf_counter()
    labs = [appearance(f"TiO2 {float(law.thickness_nm(VOLTS[i]))!r}nm / Ti").reflected.Lab for i in picked]
    t_loop = (time.perf_counter() - t0) * VOLTS.size / picked.size

    worst = float(np.max(delta_e00(np.array(labs), chart.film.colours.Lab[picked])))
    print(f"machine: {platform.machine()}, Python {platform.python_version()}")
    print(f"voltages: {VOLTS.size} (loop measured on {picked.size}, scaled to all)")
    print(f"one call for all voltages: {t_batch * 1e3:9.1f} ms")
    print(f"one call per voltage:      {t_loop * 1e3:9.1f} ms")
    print(f"ratio (loop / batch):      {t_loop / t_batch:9.1f} x")
    print(f"largest ΔE00 between them: {worst:.2e}")
    print(f"README: anodising chart, {VOLTS.size} voltages | {t_batch * 1e3:.0f} ms | "
          f"{t_loop / t_batch:.0f}× faster than a per-voltage loop")


if __name__ == "__main__":
    main()
