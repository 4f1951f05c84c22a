"""Richer descriptions of a coating's colour and light: a Munsell notation, a colour temperature.

Two descriptions people in colour trades ask for beyond CIELAB, both computed by colour-science
(imported here only, and only when one is asked for):

* the **Munsell notation** of a reflected colour (hue value/chroma, e.g. ``5.2PB 4.1/8.3``, or
  ``N5.0`` for a grey), the colour-order system of paint and ceramics catalogues. The Munsell
  renotation is defined for illuminant C and the CIE 1931 2° observer, so the reflectance is
  integrated under C whatever light the rest of the report uses; the notation describes the
  reflected colour as if it were a matte surface of that colour. Colours outside the renotation
  data (very dark, or more saturated than any Munsell sample) have none.
* the **correlated colour temperature** (CCT) of the light — the illuminant, and the light that
  comes through the part — with its distance Duv from the Planckian locus in the CIE 1960 (u, v)
  diagram (Ohno's method). A CCT is only meaningful near the locus: beyond |Duv| = 0.05 none is
  given (CIE 015:2018 §9.5). CCT is always computed with the 2° observer.

References
----------
S. M. Newhall, D. Nickerson & D. B. Judd, "Final report of the O.S.A. subcommittee on the spacing
of the Munsell colors", J. Opt. Soc. Am. 33, 385 (1943) (the renotation). ASTM D1535-14,
*Standard Practice for Specifying Color by the Munsell System*. Y. Ohno, "Practical use and
calculation of CCT and Duv", LEUKOS 10, 47 (2014). CIE 015:2018, *Colorimetry*, 4th ed., §9.5.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from ..errors import FilmopticError

__all__ = ["LightTemperature", "Description", "MAX_DUV", "CCT_RANGE_K", "munsell_notation", "light_temperature",
           "light_chromaticity", "describe"]

#: Largest distance from the Planckian locus for which a CCT is given (CIE 015:2018 §9.5).
MAX_DUV = 0.05
#: Temperatures the method searches (kelvin): a light whose nearest point of the locus lies
#: outside, such as a deep-red band, has no CCT rather than an extrapolated one.
CCT_RANGE_K = (1000.0, 100000.0)
#: The illuminant and observer of the Munsell renotation.
MUNSELL_ILLUMINANT = "C"


@dataclass(frozen=True)
class LightTemperature:
    """Correlated colour temperature of a light.

    Attributes
    ----------
    cct_K : float or None
        CCT in kelvin; None when the light lies more than :data:`MAX_DUV` from the Planckian locus,
        or nearest to it outside :data:`CCT_RANGE_K`.
    duv : float
        Signed distance from the locus in the CIE 1960 (u, v) diagram (positive above it, towards
        green; negative below, towards magenta).
    xy : tuple of float
        The light's chromaticity (CIE 1931 2° observer).
    """

    cct_K: float | None
    duv: float
    xy: tuple


@dataclass(frozen=True)
class Description:
    """Munsell notations of the reflected colours and colour temperatures of the light.

    Attributes
    ----------
    munsell, munsell_reverse : str or None
        Munsell notation of the colour reflected from the coated side and from the substrate side
        (None when not asked for, when there is no substrate side, or outside the renotation data;
        ``munsell_notes`` says which).
    light, transmitted : LightTemperature or None
        CCT of the illuminant and of the light through the part (None when not asked for, or
        when nothing comes through).
    illuminant : str
        The light the temperatures are of.
    notes : tuple of str
        Why a description is missing.
    """

    munsell: str | None = None
    munsell_reverse: str | None = None
    light: LightTemperature | None = None
    transmitted: LightTemperature | None = None
    illuminant: str = "D65"
    notes: tuple = ()


def _quiet_colour():
    from ..colorimetry import _colour

    return _colour()


def munsell_notation(wavelength_nm, reflectance, *, decimals: int = 1) -> str | None:
    """Munsell notation of a reflectance spectrum, seen under illuminant C by the 2° observer.

    Parameters
    ----------
    wavelength_nm : array_like, shape (W,)
        A colour grid (380–780 nm, steps of at most 10 nm; see :func:`filmoptic.colorimetry.colour_of`).
    reflectance : array_like, shape (W,)
        Fractions 0–1.
    decimals : int
        Decimals of hue, value and chroma.

    Returns
    -------
    str or None
        ``"HUE VALUE/CHROMA"`` (``"N VALUE"`` for a neutral); None outside the renotation data.

    References
    ----------
    Newhall, Nickerson & Judd, J. Opt. Soc. Am. 33, 385 (1943); ASTM D1535-14.
    """
    from ..colorimetry import spectrum_to_XYZ

    values = np.asarray(reflectance, dtype=float)
    if values.ndim != 1:
        raise FilmopticError("a Munsell notation is of one spectrum at a time")
    XYZ = spectrum_to_XYZ(wavelength_nm, values, MUNSELL_ILLUMINANT, 2) / 100.0
    total = float(XYZ.sum())
    if not total > 0:
        return None
    xyY = np.array([XYZ[0] / total, XYZ[1] / total, XYZ[1]])
    colour = _quiet_colour()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            notation = colour.xyY_to_munsell_colour(xyY, hue_decimals=decimals, value_decimals=decimals,
                                                    chroma_decimals=decimals)
        except (AssertionError, ValueError, RuntimeError, ArithmeticError, KeyError, IndexError):
            # colour-science's ways of saying the colour lies outside the renotation data.
            return None
    return str(notation)


def light_chromaticity(wavelength_nm, illuminant="D65", transmittance=None) -> np.ndarray:
    """Chromaticity x, y (2° observer) of a light, or of the part of it a transmittance passes."""
    from ..cie.transforms import XYZ_to_xy
    from ..colorimetry import spectrum_to_XYZ, tristimulus_weights

    wl = np.asarray(wavelength_nm, dtype=float)
    if transmittance is None:
        XYZ = tristimulus_weights(wl, illuminant, 2).sum(axis=0)
    else:
        XYZ = spectrum_to_XYZ(wl, transmittance, illuminant, 2)
    return XYZ_to_xy(XYZ, (1 / 3, 1 / 3))


def light_temperature(xy) -> LightTemperature:
    """Correlated colour temperature and Duv of a chromaticity (CIE 1931 2°), by Ohno's method.

    References
    ----------
    Ohno, LEUKOS 10, 47 (2014); CIE 015:2018 §9.5.

    Examples
    --------
    >>> t = light_temperature((0.44757, 0.40745))        # CIE illuminant A
    >>> round(t.cct_K), abs(t.duv) < 1e-4
    (2856, True)
    """
    xy = np.asarray(xy, dtype=float)
    colour = _quiet_colour()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cct, duv = colour.temperature.uv_to_CCT_Ohno2013(colour.xy_to_UCS_uv(xy))
    cct, duv = float(cct), float(duv)
    low, high = CCT_RANGE_K
    usable = bool(np.isfinite(cct) and np.isfinite(duv) and abs(duv) <= MAX_DUV and low <= cct <= high)
    return LightTemperature(cct if usable else None, duv, (float(xy[0]), float(xy[1])))


def describe(stack, *, illuminant="D65", angle_deg=0.0, ambient=None, wavelength_nm=None,
             extrapolate=False, munsell=True, cct=True) -> Description:
    """Munsell notations of a stack's reflected colours and the colour temperature of its light.

    Parameters
    ----------
    stack : filmoptic.stack.Stack or str
        A stack without unknowns (notation is parsed with ``ambient``).
    illuminant : str, os.PathLike or TabulatedSpectrum
        The light (as for :func:`filmoptic.colorimetry.appearance`); its CCT, and that of what the
        part passes of it. The Munsell notation always uses illuminant C.
    angle_deg : float
        One angle of incidence, degrees.
    munsell, cct : bool
        Which descriptions to compute.

    Returns
    -------
    Description
    """
    from ..colorimetry import _as_grid, _stack_from, check_illuminant, default_wavelengths
    from ..engine import compute

    stack = _stack_from(stack, ambient)
    if stack.parameters:
        names = ", ".join(p.name for p in stack.parameters)
        raise FilmopticError(f"the stack has unknown values ({names}); give numbers to describe its colour")
    label = check_illuminant(illuminant)
    wl = default_wavelengths() if wavelength_nm is None else _as_grid(wavelength_nm)
    angle = float(angle_deg)
    front = compute(stack, wl, angle_deg=angle, extrapolate=extrapolate)
    has_back = stack.substrate.thickness_nm is not None
    notes = []
    result = {}
    if munsell:
        result["munsell"] = munsell_notation(wl, front.R)
        if result["munsell"] is None:
            notes.append("the colour reflected from the coated side lies outside the Munsell renotation data")
        if has_back:
            back = compute(stack, wl, angle_deg=angle, reverse=True, extrapolate=extrapolate)
            result["munsell_reverse"] = munsell_notation(wl, back.R)
            if result["munsell_reverse"] is None:
                notes.append("the colour reflected from the substrate side lies outside the Munsell renotation data")
    if cct:
        result["light"] = light_temperature(light_chromaticity(wl, illuminant))
        if result["light"].cct_K is None:
            notes.append(f"the light ({label}) has no correlated colour temperature (it lies more than "
                         f"{MAX_DUV:g} from the black-body line, or beyond {CCT_RANGE_K[0]:g}–{CCT_RANGE_K[1]:g} K)")
        if front.transmission != "opaque" and float(np.max(front.T)) > 0:
            passed = light_temperature(light_chromaticity(wl, illuminant, front.T))
            result["transmitted"] = passed
            if passed.cct_K is None:
                notes.append(f"the light through the part has no correlated colour temperature (it lies "
                             f"more than {MAX_DUV:g} from the black-body line, or beyond "
                             f"{CCT_RANGE_K[0]:g}–{CCT_RANGE_K[1]:g} K)")
    return Description(illuminant=label, notes=tuple(notes), **result)
