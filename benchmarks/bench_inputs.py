"""Benchmark: large input files are read in one vectorised pass, and refusals come at once.

Prints timings and ratios measured in this run (no absolute thresholds):

* a 100 000-row spectrometer export (``wavelength (nm),T (%)``), an n,k table, a light-source
  spectrum and a column of readings of the same length, each read by filmoptic's reader, against
  ``numpy.loadtxt`` on the same numbers (the floor for reading text) and, where the reader has one,
  against its careful line-by-line path (forced by one irregular but acceptable row at the end of
  the file: a NaN reading in the export, a reading written as a percentage);
* how long a request past a documented limit takes to be refused (a wavelength grid of a
  billion points, a 100 000-digit thickness, a JSON file nested 100 000 deep), against computing
  an ordinary 81-wavelength spectrum of the same stack.

    python benchmarks/bench_inputs.py
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np

from timing import best_of

ROWS = 100_000


def write_files(folder: Path) -> dict:
    wl = 300.0 + 0.007 * np.arange(ROWS)
    T = 90.0 + 5.0 * np.sin(wl / 7.0)
    files = {
        "measured": ("wavelength (nm),T (%)\n", [f"{w:.4f},{t:.4f}" for w, t in zip(wl, T)]),
        "nk": ("# material: bench\n", [f"{w:.4f} 1.5 0.01" for w in wl]),
        "light": ("nm, power\n", [f"{w:.4f}, 1.0" for w in wl]),
        "readings": ("part,reading\n", [f"P{i},0.{i % 9 + 1}" for i in range(ROWS)]),
    }
    paths = {}
    for name, (head, rows) in files.items():
        paths[name, "fast"] = folder / f"{name}_fast.txt"
        paths[name, "fast"].write_text(head + "\n".join(rows) + "\n", encoding="utf-8")
        if name in IRREGULAR:
            paths[name, "careful"] = folder / f"{name}_careful.txt"
            paths[name, "careful"].write_text(head + "\n".join(rows) + "\n" + IRREGULAR[name] + "\n",
                                              encoding="utf-8")
    return paths


# One last row that the vectorised pass cannot take but the reader accepts (n,k and light files
# have no such row: whatever the fast pass refuses, the careful one refuses too).
IRREGULAR = {"measured": "1000.5,nan", "readings": "Pz,30%"}


def main():
    from filmoptic.cli.solve import _read_column
    from filmoptic.colorimetry import read_spectrum_file
    from filmoptic.inverse.measured import read_spectrum
    from filmoptic.materials.tables import read_nk_file

    readers = {
        "measured": ("spectrometer export (read_spectrum)", lambda p: read_spectrum(p)),
        "nk": ("n,k table (read_nk_file)", read_nk_file),
        "light": ("light-source spectrum (read_spectrum_file)", read_spectrum_file),
        "readings": ("column of readings (solve --readings)", lambda p: _read_column(p, None)),
    }
    with tempfile.TemporaryDirectory() as tmp:
        paths = write_files(Path(tmp))
        print(f"Reading {ROWS:,} rows:".replace(",", " "))
        for name, (label, read) in readers.items():
            fast = best_of(lambda: read(paths[name, "fast"]))
            delimiter = "," if name in ("measured", "readings", "light") else None
            floor = best_of(lambda: np.loadtxt(paths[name, "fast"], delimiter=delimiter, skiprows=1,
                                               usecols=(1,) if name == "readings" else None,
                                               dtype=float if name != "readings" else str))
            line = f"  {label:44s} {fast * 1e3:7.1f} ms   numpy.loadtxt {floor * 1e3:6.1f} ms ({fast / floor:.1f}x)"
            if (name, "careful") in paths:
                careful = best_of(lambda: read(paths[name, "careful"]), repeat=3)
                line += f"   line by line {careful * 1e3:6.1f} ms ({careful / fast:.1f}x slower)"
            print(line)

        from filmoptic.engine import compute
        from filmoptic.errors import FilmopticError
        from filmoptic.files import read_json_input
        from filmoptic.stack import parse_stack
        from filmoptic.units import parse_wavelengths_nm

        deep = Path(tmp) / "deep.json"
        deep.write_text("[" * 100_000 + "]" * 100_000, encoding="utf-8")
        stack = parse_stack("[TiO2 55nm / SiO2 92nm]x4 / glass 1mm")
        ordinary = best_of(lambda: compute(stack, np.arange(380.0, 781.0, 5.0)))
        refusals = {
            "--wl 380:780:4e-7 (a billion points)": lambda: parse_wavelengths_nm("380:780:4e-7"),
            "a thickness of 100 000 digits": lambda: parse_stack("TiO2 " + "1" * 100_000 + "nm / glass"),
            "a solve file nested 100 000 deep": lambda: read_json_input(deep, "solve file"),
        }
        print(f"Refusals, against one 81-wavelength spectrum of a 9-layer stack ({ordinary * 1e3:.2f} ms):")
        for label, request in refusals.items():
            def refused():
                try:
                    request()
                except FilmopticError:
                    return
                raise AssertionError(f"{label} was not refused")

            taken = best_of(refused, repeat=3)
            print(f"  {label:44s} {taken * 1e3:7.2f} ms ({taken / ordinary:.1f}x the spectrum)")


if __name__ == "__main__":
    main()
