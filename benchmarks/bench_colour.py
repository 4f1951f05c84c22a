"""Benchmark: colour and luminous values over a thickness sweep, vectorised versus a loop.

A five-layer stack on glass, its first layer swept over 1001 thicknesses; 380–780 nm every 5 nm,
unpolarised light, normal incidence, D65 and the 2° observer. For every thickness: reflected and
transmitted CIELAB colour and luminous T and R (ISO 9050).

* filmoptic: one engine call for the whole grid (``colour_sweep``), colours as matrix products
  with cached weighting tables;
* reference: a loop over thicknesses, each spectrum from the independent ``tmm`` package (one
  wavelength at a time, as it works) and integrated by colour-science's ``sd_to_XYZ``.

Both run in this process, one after the other; the script prints the times, their ratio and the
largest differences (ΔE00 of the colours, luminous values), then a summary block for the README.
No thresholds are asserted: the numbers are what this machine measured.

    python benchmarks/bench_colour.py            # the full 1001-thickness reference loop
    python benchmarks/bench_colour.py --every 10 # reference on every 10th thickness (faster)
"""

from __future__ import annotations

import argparse
import platform
import time

import numpy as np

from timing import time_calls

STACK = "TiO2 ? / SiO2 90nm / TiO2 45nm / SiO2 110nm / TiO2 25nm / glass"
THICKNESS_NM = np.linspace(0.0, 250.0, 1001)
OBSERVER = "CIE 1931 2 Degree Standard Observer"


def filmoptic_sweep():
    from filmoptic.colorimetry import colour_sweep

    return colour_sweep(STACK, THICKNESS_NM, illuminant="D65", observer=2)


def reference_setup():
    import colour

    from filmoptic.colorimetry import default_wavelengths
    from filmoptic.stack import parse_stack

    wl = default_wavelengths()
    stack = parse_stack(STACK)
    media = [stack.ambient] + [layer.material for layer in stack.layers] + [stack.substrate.material]
    indices = np.array([np.broadcast_to(np.asarray(m.nk(wl), complex), wl.shape) for m in media])
    fixed = [layer.thickness_nm for layer in stack.layers[1:]]
    shape = colour.SpectralShape(380, 780, 5)
    cmfs = colour.MSDS_CMFS[OBSERVER].copy().align(shape)
    d65 = colour.SDS_ILLUMINANTS["D65"].copy().align(shape)
    white = colour.sd_to_XYZ(colour.SpectralDistribution(np.ones(wl.size), wl), cmfs, d65, method="Integration")
    return wl, indices, fixed, cmfs, d65, colour.XYZ_to_xy(white / 100)


def reference_loop(thicknesses, setup):
    """tmm spectra plus colour-science integration, one thickness at a time."""
    import colour
    import tmm

    wl, indices, fixed, cmfs, d65, white_xy = setup
    out = []
    for d in thicknesses:
        d_list = [np.inf, d, *fixed, np.inf]
        R = np.empty(wl.size)
        T = np.empty(wl.size)
        for i, lam in enumerate(wl):
            rt = tmm.unpolarized_RT(indices[:, i], d_list, 0.0, lam)
            R[i], T[i] = rt["R"], rt["T"]
        row = []
        for values in (R, T):
            XYZ = colour.sd_to_XYZ(colour.SpectralDistribution(values, wl), cmfs, d65, method="Integration")
            row.append((colour.XYZ_to_Lab(XYZ / 100, white_xy), XYZ[1] / 100))
        out.append(row)
    return out


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--every", type=int, default=1,
                        help="time the reference on every N-th thickness and scale to all 1001")
    args = parser.parse_args()

    from filmoptic.colorimetry import delta_e00

    filmoptic_sweep()  # warm up: imports, tables, weighting cache
    sweeps = time_calls(filmoptic_sweep, 3)
    ours, result = sweeps.best, sweeps.result

    setup = reference_setup()
    picked = np.arange(0, THICKNESS_NM.size, max(args.every, 1))
    reference_loop(THICKNESS_NM[:2], setup)  # warm up
    t0 = time.perf_counter()
    ref = reference_loop(THICKNESS_NM[picked], setup)
    loop = (time.perf_counter() - t0) * THICKNESS_NM.size / picked.size

    ref_R_lab = np.array([r[0][0] for r in ref])
    ref_T_lab = np.array([r[1][0] for r in ref])
    ref_R_lum = np.array([r[0][1] for r in ref])
    ref_T_lum = np.array([r[1][1] for r in ref])
    dE_R = np.max(delta_e00(result.reflected.Lab[picked], ref_R_lab))
    dE_T = np.max(delta_e00(result.transmitted.Lab[picked], ref_T_lab))
    d_lum = max(np.max(np.abs(result.luminous_R[picked] - ref_R_lum)),
                np.max(np.abs(result.luminous_T[picked] - ref_T_lum)))

    scaled = "" if picked.size == THICKNESS_NM.size else f" (timed on {picked.size}, scaled to 1001)"
    print(f"stack: {STACK}")
    print(f"grid: {THICKNESS_NM.size} thicknesses x 81 wavelengths (380-780 nm, 5 nm), unpolarised, D65, 2°")
    print(f"filmoptic colour_sweep (one engine call):     {ours * 1e3:10.1f} ms")
    print(f"tmm + colour-science, loop per thickness{scaled}: {loop * 1e3:10.1f} ms")
    print(f"  ratio loop / filmoptic: {loop / ours:,.0f}x")
    print(f"  largest ΔE00 reflected {dE_R:.2e}, transmitted {dE_T:.2e}; largest |Δ luminous| {d_lum:.1e}")
    print()
    print("Summary for the README")
    print("----------------------")
    print(f"Colour versus thickness, {THICKNESS_NM.size} thicknesses of a five-layer stack on glass "
          f"(81 wavelengths, unpolarised): filmoptic {ours * 1e3:.0f} ms, a loop of tmm plus colour-science "
          f"{loop:.1f} s — {loop / ours:,.0f}x faster, same colours to ΔE00 {max(dE_R, dE_T):.0e} and luminous "
          f"values to {d_lum:.0e} (measured in one run on {platform.machine()}, Python "
          f"{platform.python_version()}).")


if __name__ == "__main__":
    main()
