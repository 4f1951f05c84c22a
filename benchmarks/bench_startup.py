"""Benchmark: how long each computing command takes from start to answer, as a fresh process.

An interactive command is mostly start-up: the interpreter, the libraries it imports, the tables
it reads, then a few milliseconds of work. This script runs every computing command of
``filmoptic`` as a new process (``python -m filmoptic …``, exactly what a user's shell does),
several times each, round-robin so that a busy moment of the machine spreads over all of them, and
prints for each the median wall time and its ratio to a bare ``python -c "import numpy"`` measured
in the same run — the floor of any numpy program on this machine.

Inputs that the commands read (a measured spectrum, a recorded monitor run, a small photo) are
made first in a temporary folder from the demo's fictional scenario (:mod:`filmoptic.demo.scenario`)
by the forward model; they are not measurements.

Every command runs once first, unmeasured, with Python's bytecode cache allowed (even where the
environment sets PYTHONDONTWRITEBYTECODE): an installed package has its compiled modules, and
compiling filmoptic's sources on every start would be measured otherwise.

No thresholds are asserted: the numbers are what this machine measured. The goals column repeats
the targets set for start-up (seconds of wall time on the development machine).

    python benchmarks/bench_startup.py              # 7 runs of every command
    python benchmarks/bench_startup.py --runs 15    # more runs, steadier medians
    python benchmarks/bench_startup.py --only spectrum,color
    python benchmarks/bench_startup.py --imports    # also list the heavy libraries each command loads
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

# Goals for the wall time, seconds (None: no stated goal, measured so it stays fast).
GOALS = {
    "spectrum": 0.25, "materials NAME": 0.25,
    "color": 0.35, "solve": 0.35, "sweep": 0.35, "compare": 0.35,
    "fit": 0.7,
}

HEAVY = ("scipy", "colour", "matplotlib", "PIL")


def make_inputs(folder: Path) -> dict:
    """Write the files the commands read; returns their paths and the map's rectangles."""
    from filmoptic.demo import scenario as sc
    from filmoptic.demo.map import true_field
    from filmoptic.demo.monitor import synthetic_run, write_run
    from filmoptic.engine import compute
    from filmoptic.files import write_csv
    from filmoptic.imaging.render import encode_srgb8, render_transmission, write_png

    start, stop, step = sc.FIT_WAVELENGTHS_NM
    wl = np.arange(start, stop + step / 2, step)
    T = compute(sc.FIT_TRUE_STACK, wl).T
    rng = np.random.default_rng(sc.FIT_SEED)
    T = T + sc.FIT_NOISE_ABS * rng.standard_normal(T.shape)
    spectrum = folder / "oxide_T.csv"
    write_csv(spectrum, ["wavelength_nm", "T"], [[f"{w:g}", f"{t:.5f}"] for w, t in zip(wl, T)])

    run = synthetic_run(
        sc.MONITOR_STACK, sc.MONITOR_SOURCE, sc.MONITOR_DETECTOR, rate_nm_per_s=sc.MONITOR_RATE_NM_PER_S,
        shutter_opens_s=sc.MONITOR_SHUTTER_OPENS_S, interval_s=sc.MONITOR_INTERVAL_S,
        length_s=sc.MONITOR_LENGTH_S, counts=sc.MONITOR_COUNTS, dark=sc.MONITOR_DARK_COUNTS,
        noise=sc.MONITOR_NOISE, seed=sc.MONITOR_SEED)
    recording = folder / "run.csv"
    write_run(recording, run)

    # The scenario's door glass at one pixel per mm: a small photo (320 × 240 px).
    scale = 1.0
    width, height = (int(v / sc.MAP_SCALE_PX_PER_MM) for v in sc.MAP_PHOTO_PX)
    y_px, x_px = np.mgrid[0:height, 0:width].astype(float) + 0.5
    field = true_field(x_px / scale, y_px / scale)
    photo_rgb, _ = render_transmission(sc.MAP_STACK, field, illuminant=sc.MAP_LIGHT_BOX,
                                       exposure=sc.MAP_EXPOSURE)
    photo = folder / "small_photo.png"
    write_png(photo, encode_srgb8(photo_rgb))
    gx0, gy0, gx1, gy1 = sc.MAP_GLASS_MM
    strip = sc.MAP_BARE_STRIP_MM
    bare = f"{gx0 + 2:g},{gy0 + 2:g},{gx0 + strip - 2:g},{gy1 - 2:g}"
    region = f"{gx0 + strip + 2:g},{gy0 + 2:g},{gx1 - 2:g},{gy1 - 2:g}"
    return {"spectrum": spectrum, "run": recording, "photo": photo, "bare": bare, "region": region}


def commands(inputs: dict) -> dict:
    """Label -> arguments after ``python -m filmoptic`` (each asks for JSON: no plot is drawn)."""
    from filmoptic.demo import scenario as sc

    target = f"{100 * sc.MIRROR_TARGET_LUMINOUS_T:g}%"
    monitor = [sc.MONITOR_STACK, "--source", sc.MONITOR_SOURCE, "--detector", sc.MONITOR_DETECTOR,
               "--luminous-T", target]
    return {
        "spectrum": ["spectrum", "Ti 12nm / glass 4mm", "--json"],
        "materials NAME": ["materials", "Ti", "--json"],
        "color": ["color", sc.MIRROR_EXAMPLE_STACK, "--json"],
        "solve": ["solve", sc.LUX_STACK, "--luminous-T", target, "--json"],
        "sweep": ["sweep", sc.OXIDE_ON_METAL_STACK, "--range", "0:250:1", "--json"],
        "compare": ["compare", *sc.MIRROR_CANDIDATES, "--on", sc.MIRROR_SUBSTRATE, "--luminous-T", target,
                    "--json"],
        "fit": ["fit", sc.FIT_MODEL_STACK, "--measured", str(inputs["spectrum"]), "--json"],
        "anodize": ["anodize", sc.ANODIZE_METAL, "--json"],
        "heat-tint": ["heat-tint", "steel", "--json"],
        "monitor --plan": ["monitor", *monitor, "--plan", "--rate", "4.5nm/min", "--json"],
        "monitor --replay": ["monitor", sc.MONITOR_STACK, str(inputs["run"]), "--replay", "--source",
                             sc.MONITOR_SOURCE, "--detector", sc.MONITOR_DETECTOR, "--luminous-T", target,
                             "--dark", f"{sc.MONITOR_DARK_COUNTS:g}", "--json"],
        "design --check-only": ["design", "Cr 8.1nm / glass 4mm", "--check-only", "--goal",
                                f"luminous-T = {target} within 2%", "--tolerance", "1nm", "--json"],
        "rate (3 runs)": ["rate", "--run", "4min:9.1nm+-0.3nm", "--run", "10min:21.8nm+-0.4nm", "--run",
                          "7min:15.6nm+-0.3nm", "--target", "15nm", "--json"],
        "map (320 × 240 photo)": ["map", sc.MAP_STACK, "--photo", str(inputs["photo"]), "--bare",
                                  inputs["bare"], "--region", inputs["region"], "--scale", "1",
                                  "--cell", "10mm", "--illuminant", sc.MAP_LIGHT_BOX, "--json"],
    }


#: The children's environment: as the caller's, but free to use and write the bytecode cache.
CHILD_ENV = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}


def run_once(argv, cwd) -> float:
    start = time.perf_counter()
    proc = subprocess.run(argv, cwd=cwd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True,
                          env=CHILD_ENV)
    elapsed = time.perf_counter() - start
    if proc.returncode not in (0, 3):      # monitor --replay ends with 0 (target) or 3 (input ended)
        raise SystemExit(f"{' '.join(argv[3:])} failed (exit {proc.returncode}): {proc.stderr.strip()[:300]}")
    return elapsed


def heavy_imports(args, cwd) -> list:
    """The heavy libraries a command has loaded by the time it ends."""
    code = ("import sys, io, contextlib\n"
            "from filmoptic.cli import main\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            f"    main({list(args)!r})\n"
            f"print(' '.join(sorted({{m.split('.')[0] for m in sys.modules}} & set({HEAVY!r}))))\n")
    out = subprocess.run([sys.executable, "-c", code], cwd=cwd, capture_output=True, text=True, env=CHILD_ENV)
    if out.returncode != 0:
        return ["(failed)"]
    lines = out.stdout.splitlines()
    return lines[-1].split() if lines else []


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7, help="runs of every command (median reported)")
    parser.add_argument("--only", default="", help="comma-separated labels (e.g. spectrum,color)")
    parser.add_argument("--imports", action="store_true", help="also list the heavy libraries each loads")
    options = parser.parse_args()

    with tempfile.TemporaryDirectory(prefix="filmoptic-startup-") as tmp:
        folder = Path(tmp)
        inputs = make_inputs(folder)
        table = commands(inputs)
        if options.only:
            wanted = [w.strip() for w in options.only.split(",")]
            table = {k: v for k, v in table.items() if any(k.startswith(w) for w in wanted)}
        runs = {
            "python -c pass": [sys.executable, "-c", "pass"],
            'python -c "import numpy"': [sys.executable, "-c", "import numpy"],
        }
        runs.update({label: [sys.executable, "-m", "filmoptic", *args] for label, args in table.items()})
        env_note = os.environ.get("FILMOPTIC_NKDATA")
        times = {label: [] for label in runs}
        for label, argv in runs.items():          # one warm-up each: disk caches, .pyc files
            run_once(argv, folder)
        for _ in range(options.runs):
            for label, argv in runs.items():
                times[label].append(run_once(argv, folder))
        loaded = {label: heavy_imports(args, folder) for label, args in table.items()} if options.imports else {}

    medians = {label: statistics.median(t) for label, t in times.items()}
    floor = medians['python -c "import numpy"']
    print(f"filmoptic start-up, {options.runs} runs each (median wall time of a fresh process); "
          f"Python {platform.python_version()}, numpy {np.__version__}, {platform.machine()}, "
          f"{os.cpu_count()} CPUs" + (f"; FILMOPTIC_NKDATA={env_note}" if env_note else ""))
    print()
    header = f"{'command':<26} {'median':>8} {'min':>8} {'× numpy import':>15} {'goal':>7}"
    if options.imports:
        header += "  heavy libraries loaded"
    print(header)
    print("-" * len(header))
    for label in runs:
        goal = GOALS.get(label)
        ratio = medians[label] / floor
        line = (f"{label:<26} {medians[label]:>7.3f}s {min(times[label]):>7.3f}s {ratio:>14.2f}× "
                f"{'' if goal is None else f'{goal:.2f}s':>7}")
        if label in loaded:
            line += "  " + (" ".join(loaded[label]) or "-")
        print(line)
    print()
    print("Summary (README speed table):")
    for label in table:
        print(f"  {label}: {medians[label]:.2f} s, {medians[label] / floor:.1f}× a bare numpy import "
              f"({floor:.2f} s)")


if __name__ == "__main__":
    main()
