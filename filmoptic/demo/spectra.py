"""Demo part "spectra": what the cabinet semi-mirror and an oxide film reflect, pass and absorb.

Both stacks come from the fictional scenario in :mod:`filmoptic.demo.scenario`. Writes one CSV
table (fractions) and one figure into the output folder.
"""

from __future__ import annotations

import pathlib

__all__ = ["run"]


def _band_means(spectrum, lo: float, hi: float):
    import numpy as np

    inside = (spectrum.wavelength_nm >= lo) & (spectrum.wavelength_nm <= hi)
    return tuple(float(np.mean(x[inside]))
                 for x in (spectrum.R, spectrum.T, spectrum.A_layers, spectrum.A_substrate))


def run(outdir: pathlib.Path, say) -> None:
    """Compute the two spectra, write ``spectra.csv`` and ``spectra.png``, and say what was done."""
    import numpy as np

    from filmoptic.files import write_atomically
    from filmoptic.demo.scenario import (
        MIRROR_EXAMPLE_STACK,
        OXIDE_EXAMPLE_STACK,
        SPECTRA_WAVELENGTHS_NM,
    )
    from filmoptic.engine import compute
    from filmoptic.plots import save_figure
    from filmoptic.plots.spectrum import plot_spectra
    from filmoptic.stack import parse_stack

    outdir = pathlib.Path(outdir)
    start, stop, step = SPECTRA_WAVELENGTHS_NM
    wl = start + step * np.arange(int(round((stop - start) / step)) + 1)
    mirror_stack = parse_stack(MIRROR_EXAMPLE_STACK)
    oxide_stack = parse_stack(OXIDE_EXAMPLE_STACK)
    mirror = compute(mirror_stack, wl)
    mirror_back = compute(mirror_stack, wl, reverse=True)
    oxide = compute(oxide_stack, wl)

    def write(fh):
        fh.write("wavelength_nm,mirror_R,mirror_T,mirror_A_layers,mirror_A_substrate,mirror_R_glass_side,"
                 "oxide_R,oxide_A_layers,oxide_A_substrate\n")
        for i, w in enumerate(wl):
            values = (mirror.R[i], mirror.T[i], mirror.A_layers[i], mirror.A_substrate[i], mirror_back.R[i],
                      oxide.R[i], oxide.A_layers[i], oxide.A_substrate[i])
            fh.write(f"{w:g}," + ",".join(f"{v:.6f}" for v in values) + "\n")

    write_atomically(outdir / "spectra.csv", write)
    save_figure(plot_spectra([
        (f"semi-mirror: {mirror_stack.text}", mirror),
        (f"oxide film: {oxide_stack.text}  (no light comes through the bulk metal)", oxide),
    ]), outdir / "spectra.png")

    R, T, A_film, A_glass = _band_means(mirror, 450.0, 650.0)
    R_back = float(np.mean(mirror_back.R[(wl >= 450) & (wl <= 650)]))
    say(f"Semi-mirror {mirror_stack.text}, light from the coated side, 450–650 nm on average:")
    say(f"  R {100 * R:.1f} %, T {100 * T:.1f} %, absorbed {100 * A_film:.1f} % in the film and "
        f"{100 * A_glass:.1f} % in the glass (its iron); seen from the glass side R {100 * R_back:.1f} % "
        "(same T, different R: the metal absorbs)")
    R, T, A_film, A_metal = _band_means(oxide, 450.0, 650.0)
    low = wl[int(np.argmin(oxide.R))]
    say(f"Oxide film {oxide_stack.text}: R {100 * R:.1f} % on average over 450–650 nm, "
        f"lowest at {low:g} nm ({100 * float(oxide.R.min()):.1f} %) — that dip sets its colour;")
    say(f"  nothing comes through: the rest ({100 * A_metal:.1f} % on average) enters the bulk titanium "
        "and is absorbed there")
    say("  → spectra.csv (fractions), spectra.png (R, T, A against wavelength)")

    # The display case: a quarter-wave antireflection layer, written in quarter waves.
    from filmoptic.colorimetry import default_wavelengths, luminous
    from filmoptic.demo.scenario import DISPLAY_AR_STACK

    case = parse_stack(DISPLAY_AR_STACK)
    layer = case.layers[0]
    visible = default_wavelengths()
    coated = float(luminous(visible, compute(case, visible).R))
    bare = float(luminous(visible, compute(case.bare(), visible).R))
    count, design_nm = layer.quarter_waves
    say(f"Display case {DISPLAY_AR_STACK}: {count:g} quarter wave of {layer.material} at {design_nm:g} nm "
        f"is {layer.thickness_nm:.2f} nm; luminous R {100 * bare:.1f} % bare, {100 * coated:.1f} % coated "
        "(one face coated; the uncoated back face still reflects)")
