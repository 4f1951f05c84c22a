"""Independent calculations that tests compare filmoptic against.

* Spectra of a filmoptic stack from the ``tmm`` package (S. J. Byrnes, "Multilayer optical
  calculations", arXiv:1603.02720, 2016): ``tmm.inc_tmm`` one wavelength at a time, thin layers
  coherent, thick slabs, the ambient and the exit medium incoherent; unpolarised light as the mean
  of s and p.
* XYZ and CIELAB of a spectrum by colour-science alone: its ``sd_to_XYZ`` ("Integration") with its
  own observer and illuminant tables, and its ``XYZ_to_Lab`` with the white it integrates itself.
"""

from __future__ import annotations

import colour
import numpy as np
import tmm

OBSERVER_NAMES = {2: "CIE 1931 2 Degree Standard Observer", 10: "CIE 1964 10 Degree Standard Observer"}


def tmm_unpolarized(stack, wavelengths, angle_deg=0.0, reverse=False):
    """R and T of a parsed stack per wavelength from tmm (``reverse``: light from the substrate side)."""
    media = [stack.ambient] + [layer.material for layer in stack.layers] + [stack.substrate.material]
    thickness = [np.inf] + [layer.thickness_nm for layer in stack.layers]
    coherence = ["i"] + ["i" if layer.thick else "c" for layer in stack.layers]
    if stack.substrate.thickness_nm is not None:
        media.append(stack.exit_medium)
        thickness += [stack.substrate.thickness_nm, np.inf]
        coherence += ["i", "i"]
    else:
        thickness.append(np.inf)
        coherence.append("i")
    wl = np.atleast_1d(np.asarray(wavelengths, float))
    indices = np.array([np.broadcast_to(np.asarray(m.nk(wl), complex), wl.shape) for m in media])
    if reverse:
        indices, thickness, coherence = indices[::-1], thickness[::-1], coherence[::-1]
    theta = np.radians(angle_deg)
    R, T = np.empty(wl.size), np.empty(wl.size)
    for i, lam in enumerate(wl):
        s = tmm.inc_tmm("s", indices[:, i], thickness, coherence, theta, lam)
        p = tmm.inc_tmm("p", indices[:, i], thickness, coherence, theta, lam)
        R[i], T[i] = (s["R"] + p["R"]) / 2, (s["T"] + p["T"]) / 2
    return R, T


def colour_science_XYZ_Lab(values, wavelengths, illuminant="D65", observer=2):
    """XYZ (white Y = 100) and CIELAB of a spectrum on an even wavelength grid, by colour-science
    alone. ``illuminant`` is a key of colour-science's ``SDS_ILLUMINANTS``."""
    wl = np.asarray(wavelengths, float)
    shape = colour.SpectralShape(wl[0], wl[-1], wl[1] - wl[0])
    cmfs = colour.MSDS_CMFS[OBSERVER_NAMES[observer]].copy().align(shape)
    spd = colour.SDS_ILLUMINANTS[illuminant].copy().align(shape)
    XYZ = colour.sd_to_XYZ(colour.SpectralDistribution(values, wl), cmfs, spd, method="Integration")
    white = colour.sd_to_XYZ(colour.SpectralDistribution(np.ones(wl.size), wl), cmfs, spd, method="Integration")
    return XYZ, colour.XYZ_to_Lab(XYZ / 100, colour.XYZ_to_xy(white / 100))
