"""Demo part "fit": thickness and index of an oxide test piece from its transmittance curve.

The curve is *synthetic*: the demo computes it for the fictional scenario's oxide film
(:data:`filmoptic.demo.scenario.FIT_TRUE_STACK`), adds seeded noise, writes it as a spectrometer
would, reads it back and fits it — so the answer can be compared with the truth it was made from.
"""

from __future__ import annotations

import pathlib

__all__ = ["run"]

DATA_FILE = "fit_oxide_T.csv"
REPORT_FILE = "fit_report.txt"
PLOT_FILE = "fit_plot.png"


def _write_spectrum(path: pathlib.Path, wavelength_nm, values, header_lines) -> None:
    from filmoptic.files import write_atomically

    def write(fh):
        for line in header_lines:
            fh.write(f"# {line}\n")
        fh.write("wavelength (nm),T (%)\n")
        for wl, value in zip(wavelength_nm, values):
            fh.write(f"{wl:g},{100 * value:.3f}\n")

    write_atomically(path, write)


def run(outdir: pathlib.Path, say) -> None:
    """Make the synthetic curve, fit it, and write data, report and plot into ``outdir``."""
    import numpy as np

    from filmoptic.files import write_atomically
    from filmoptic.demo import scenario as sc
    from filmoptic.engine import compute
    from filmoptic.inverse.fit import fit_spectra, format_report
    from filmoptic.inverse.measured import read_spectrum
    from filmoptic.plots import save_figure
    from filmoptic.plots.fit import plot_fit
    from filmoptic.units import parse_wavelengths_nm

    outdir = pathlib.Path(outdir)
    start, stop, step = sc.FIT_WAVELENGTHS_NM
    wl = parse_wavelengths_nm(f"{start:g}:{stop:g}:{step:g}")
    clean = compute(sc.FIT_TRUE_STACK, wl).T
    noisy = clean + np.random.default_rng(sc.FIT_SEED).normal(0.0, sc.FIT_NOISE_ABS, wl.size)

    say(f"A SYNTHETIC transmittance curve of the oxide test piece (not a measurement): "
        f"'{sc.FIT_TRUE_STACK}' computed at {wl.size} wavelengths, "
        f"plus noise of {100 * sc.FIT_NOISE_ABS:g} % (seed {sc.FIT_SEED}).")
    data_path = outdir / DATA_FILE
    _write_spectrum(data_path, wl, noisy, [
        f"SYNTHETIC data made by 'filmoptic demo' for {sc.SCENARIO_NAME}; not a measurement",
        f"made from: {sc.FIT_TRUE_STACK}; noise {sc.FIT_NOISE_ABS:g} (fraction), seed {sc.FIT_SEED}",
    ])
    say(f"  → {DATA_FILE}")

    spectrum = read_spectrum(data_path)
    result = fit_spectra(sc.FIT_MODEL_STACK, spectrum)
    report = format_report(result, [spectrum])
    write_atomically(outdir / REPORT_FILE, lambda fh: fh.write(
        "SYNTHETIC data (filmoptic demo, fictional scenario)\n"
        f"command: filmoptic fit \"{sc.FIT_MODEL_STACK}\" --measured {DATA_FILE}\n\n{report}\n"))
    save_figure(plot_fit(result), outdir / PLOT_FILE)

    say(f"Fitted with the model '{sc.FIT_MODEL_STACK}':")
    lines = report.splitlines()
    start = lines.index(next(line for line in lines if line.startswith("What came out?")))
    for line in [lines[0], *lines[start:lines.index("", start)]]:
        say(f"  {line}")
    true_A, true_B, true_d = _true_values(sc.FIT_TRUE_STACK)
    for p, true in zip(result.parameters, (true_A, true_B, true_d)):
        deviation = (p.value - true) / p.stderr if p.stderr > 0 else float("nan")
        say(f"  {p.name}: made with {true:g}, fitted {p.value:.4g} ± {p.stderr:.2g} "
            f"({deviation:+.1f} standard errors)")
    say(f"  σ estimated from the residuals: {100 * result.sigma:.2f} % "
        f"(the noise added was {100 * sc.FIT_NOISE_ABS:g} %)")
    for warning in result.warnings:
        say(f"  ! {warning}")
    say(f"  → {REPORT_FILE}, {PLOT_FILE}")
    say(f"  The same from the command line: filmoptic fit \"{sc.FIT_MODEL_STACK}\" "
        f"--measured {DATA_FILE} --plot {PLOT_FILE}")


def _true_values(stack_text: str):
    """Cauchy A, B and the thickness of the stack the synthetic curve was made from."""
    import re

    from filmoptic.stack import parse_stack

    layer = parse_stack(stack_text).layers[0]
    A, B = (float(v) for v in re.findall(r"[-+0-9.eE]+", layer.material.name)[:2])
    return A, B, float(layer.thickness_nm)
