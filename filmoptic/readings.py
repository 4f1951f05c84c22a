"""The model of a cheap transmittance reading: a light source, a detector and a reference.

A lux meter behind a coated glass lit by a desk lamp, a photodiode in a laser beam, a power meter
in front of an LED: each reads the band-weighted transmittance

    T̄ = ∫ S(λ) D(λ) T(λ) dλ / ∫ S(λ) D(λ) dλ

for the source's spectral power S and the detector's spectral response D, on the overlap of their
wavelength ranges and of the stack's optical-constant tables. The integrals are sums over a grid
weighted by :func:`filmoptic.colorimetry.interval_widths`, so that ``T̄ = T @ w`` for normalised
weights ``w`` (:func:`band_weights`): a whole thickness grid costs one matrix product.

Sources
    an illuminant name (``A`` for a halogen lamp, ``D65``, ``F11``, …, see
    :func:`filmoptic.colorimetry.illuminant_table`), ``laser:WL`` (one line at WL nm),
    ``led:WL/FWHM`` (an LED as a Gaussian of that full width at half maximum), or the path of a
    two-column spectrum file.
Detectors
    ``photopic`` (a lux meter: the CIE V(λ)), ``flat`` (a power meter or thermal sensor, equal
    response at every wavelength) or the path of a two-column response file.
References
    ``open``: the reading was divided by the open-beam reading (the value is T̄ itself);
    ``bare``: it was divided by the reading through an uncoated piece of the same substrate, so
    the substrate's own reflection and absorption losses divide out (``T̄_coated / T̄_bare``).

Only transmittance readings are modelled: a reflectance reading depends on the geometry of the
set-up far more than a transmittance one.

References
----------
CIE 15:2018, *Colorimetry*, 4th ed., Table 1 (V(λ)) and §7.1 (summation on a grid);
ISO 9050:2003 (a D65 source with a photopic detector reads the luminous transmittance);
E. F. Schubert, *Light-Emitting Diodes*, 2nd ed., Cambridge University Press (2006), ch. 5 (an LED's
emission line, here approximated by a Gaussian; from memory).
"""

from __future__ import annotations

import difflib
import math
import os
import re

import numpy as np

from .errors import FilmopticError
from .units import parse_fraction, parse_number

__all__ = [
    "BAND_STEP_NM",
    "REFERENCES",
    "parse_reading",
    "detector_response",
    "band_weights",
    "covered_range_nm",
    "reference_level",
]

#: Sampling step for broadband sources and detectors, nm (the CIE tables' own 5 nm spacing).
BAND_STEP_NM = 5.0
#: What a reading was divided by: the open beam, or an uncoated piece of the same substrate.
REFERENCES = ("open", "bare")
#: Range of the CIE 1924 V(λ) table (CIE 15:2018, Table 1).
PHOTOPIC_RANGE_NM = (360.0, 830.0)
#: Detectors known by name (anything else is the path of a response file).
DETECTORS = ("photopic", "flat")

_LASER = re.compile(r"^laser:\s*([0-9.eE+-]+)\s*(nm)?$", re.IGNORECASE)
_LED = re.compile(r"^led:\s*([0-9.eE+-]+)\s*(?:nm)?\s*/\s*([0-9.eE+-]+)\s*(nm)?$", re.IGNORECASE)


def parse_reading(text) -> float:
    """A reading as a fraction: ``0.304``, ``30.4%`` or the two raw numbers ``SAMPLE/REFERENCE``.

    Examples
    --------
    >>> round(parse_reading("318/1045"), 4)
    0.3043
    >>> parse_reading("30%")
    0.3
    """
    s = str(text).strip()
    if "/" in s:
        parts = s.split("/")
        if len(parts) != 2:
            raise FilmopticError(f"--reading: write SAMPLE/REFERENCE like 318/1045, got {text!r}")
        sample = parse_number(parts[0], "--reading sample")
        reference = parse_number(parts[1], "--reading reference")
        if reference <= 0 or sample < 0:
            raise FilmopticError(f"--reading {text!r}: both readings must be positive")
        value = sample / reference
        if value > 1:
            raise FilmopticError(
                f"--reading {text!r}: the sample ({sample:g}) reads more than the reference ({reference:g}); "
                "a transmittance reading must lie in [0, 1]"
            )
        return value
    return parse_fraction(s, what="--reading")


def detector_response(detector: str):
    """A detector's spectral response and the wavelengths it is defined on.

    Parameters
    ----------
    detector : str
        ``photopic``, ``flat`` or the path of a two-column response file.

    Returns
    -------
    response : callable
        Relative response at an array of wavelengths (nm).
    range_nm : (float, float)

    Examples
    --------
    >>> response, range_nm = detector_response("photopic")
    >>> float(response(np.array([555.0]))[0]), range_nm
    (1.0, (360.0, 830.0))
    """
    from .colorimetry import photopic_efficiency, read_spectrum_file

    det = str(detector).strip()
    if det.lower() == "photopic":
        return photopic_efficiency, PHOTOPIC_RANGE_NM
    if det.lower() == "flat":
        return np.ones_like, (0.0, math.inf)
    if not os.path.exists(os.path.expanduser(det)):
        # Most likely a misspelt name rather than a missing file: say what the names are.
        close = difflib.get_close_matches(det.lower(), DETECTORS, n=1, cutoff=0.6)
        hint = f"; did you mean {close[0]}?" if close else ""
        raise FilmopticError(
            f"--detector {det!r}: use photopic (a lux meter), flat (a power meter or thermal sensor) "
            f"or the path of a two-column response file (no file {det!r} found){hint}"
        )
    table = read_spectrum_file(os.path.expanduser(det), what="detector response file")
    return table.at, table.range_nm


def _grid(lo: float, hi: float, step: float) -> np.ndarray:
    """Multiples of ``step`` within [lo, hi] (the two ends when none or one falls inside)."""
    start = math.ceil(lo / step - 1e-9) * step
    wl = start + step * np.arange(int(math.floor((hi - start) / step + 1e-9)) + 1)
    return wl if wl.size >= 2 else np.array([lo, hi])


def _check_line_source(src: str, laser, led) -> None:
    """A source that starts like a laser or an LED but does not parse gets the notation, not an
    'unknown illuminant' message."""
    head = src.lower().split(":", 1)[0].strip()
    if head == "laser" and not laser:
        raise FilmopticError(
            f"--source {src!r}: write laser:WL with the laser line in nm, e.g. laser:633"
        )
    if head == "led" and not led:
        raise FilmopticError(
            f"--source {src!r}: write led:CENTRE/FWHM with the LED's peak wavelength and full width "
            "at half maximum in nm, e.g. led:530/30"
        )


def band_weights(source: str, detector: str, material_range_nm=(0.0, math.inf)):
    """Wavelength grid and normalised weights ``w`` (summing to 1) of a reading.

    A band-weighted transmittance is then ``T @ w``, i.e. ``Σ S D T Δλ / Σ S D Δλ`` on the overlap of
    the source's, the detector's and the optical-constant tables' ranges. A broadband source is
    sampled every :data:`BAND_STEP_NM`; an LED over ±4σ of its Gaussian (all but 6·10⁻⁵ of its
    power) with at least 40 points; a laser is its one line.

    Parameters
    ----------
    source : str
        Illuminant name, ``laser:WL``, ``led:WL/FWHM`` or a spectrum file.
    detector : str
        ``photopic``, ``flat`` or a response file.
    material_range_nm : tuple
        Wavelength range the stack's optical constants cover (see :func:`covered_range_nm`).

    Returns
    -------
    wavelength_nm, weights : numpy.ndarray

    Raises
    ------
    FilmopticError
        Unknown source or unreadable file, no common wavelengths, or a detector blind to the source.

    References
    ----------
    CIE 15:2018, §7.1 (weighted summation); ISO 9050:2003, §3.3.

    Examples
    --------
    >>> wl, w = band_weights("laser:633", "flat")
    >>> wl.tolist(), w.tolist()
    ([633.0], [1.0])
    """
    from .colorimetry import illuminant_table, interval_widths

    src = str(source).strip()
    det = str(detector).strip()
    response, det_range = detector_response(det)
    lo = max(float(material_range_nm[0]), det_range[0])
    hi = min(float(material_range_nm[1]), det_range[1])

    laser = _LASER.match(src)
    led = _LED.match(src)
    _check_line_source(src, laser, led)
    if laser:
        wl0 = parse_number(laser.group(1), "--source laser wavelength")
        if wl0 <= 0:
            raise FilmopticError(f"--source {src!r}: the wavelength must be positive (nm)")
        if not lo <= wl0 <= hi:
            raise FilmopticError(
                f"--source {src!r}: {wl0:g} nm lies outside what the detector and the optical constants "
                f"cover ({lo:g}–{hi:g} nm)"
            )
        wl = np.array([wl0])
        if not np.asarray(response(wl), dtype=float)[0] > 0:
            raise FilmopticError(f"--source {src!r}: the detector does not respond at {wl0:g} nm")
        return wl, np.ones(1)
    if led:
        centre = parse_number(led.group(1), "--source LED wavelength")
        fwhm = parse_number(led.group(2), "--source LED width")
        if centre <= 0 or fwhm <= 0:
            raise FilmopticError(f"--source {src!r}: write led:CENTRE/FWHM with positive numbers in nm")
        sigma = fwhm / (2.0 * math.sqrt(2.0 * math.log(2.0)))
        lo, hi = max(lo, centre - 4 * sigma), min(hi, centre + 4 * sigma)
        step = min(BAND_STEP_NM, 8 * sigma / 40)

        def power(w):
            return np.exp(-0.5 * ((w - centre) / sigma) ** 2)
    else:
        table = illuminant_table(src)
        lo, hi = max(lo, table.range_nm[0]), min(hi, table.range_nm[1])
        step = BAND_STEP_NM
        power = table.at
    if not hi > lo:
        raise FilmopticError(
            f"--source {src!r} and --detector {det!r} share no wavelengths with each other and the "
            "optical-constant tables"
        )
    wl = _grid(lo, hi, step)
    weights = power(wl) * np.asarray(response(wl), dtype=float) * interval_widths(wl)
    total = weights.sum()
    if not total > 0:
        raise FilmopticError(f"--source {src!r} and --detector {det!r}: the detector sees none of the source's light")
    return wl, weights / total


def covered_range_nm(stack, extrapolate=False) -> tuple[float, float]:
    """Wavelengths that every optical-constant table of the stack covers (all of them with
    ``extrapolate``).

    Examples
    --------
    Here the glass table (Vogt et al. 2016, clear float) sets both ends; air (Ciddor 1996) serves
    every wavelength and constant indices set none.

    >>> from filmoptic.stack import parse_stack
    >>> covered_range_nm(parse_stack("Ti ? / glass 4mm"))
    (300.0, 1690.0)
    >>> covered_range_nm(parse_stack("n=2 ? / n=1.5", ambient="n=1"))
    (0.0, inf)
    """
    if extrapolate:
        return 0.0, math.inf
    lo, hi = 0.0, math.inf
    materials = (stack.ambient, stack.exit_medium, stack.substrate.material,
                 *(layer.material for layer in stack.layers))
    for material in materials:
        a, b = material.wavelength_range_nm
        lo, hi = max(lo, float(a)), min(hi, float(b))
    return lo, hi


def reference_level(stack, reference: str, wavelength_nm, weights, *, angle_deg=0.0, extrapolate=False) -> float:
    """What the reference reading is, as a band transmittance: 1 for the open beam, or the
    uncoated substrate's ``T̄_bare`` for ``bare``.

    A reading ``T̄_coated / T̄_bare`` is then modelled as the coated stack's band transmittance
    divided by this level.

    Parameters
    ----------
    stack : filmoptic.stack.Stack
        The coated stack; ``stack.bare()`` is the reference piece.
    reference : {"open", "bare"}
    wavelength_nm, weights : numpy.ndarray
        The reading's band (:func:`band_weights`).

    Examples
    --------
    A bare slab of index 1.5 in air passes (1 − R)² / (1 − R²) = 2n/(n² + 1) of the light (two
    surfaces, multiple reflections added in intensity; common practice):

    >>> from filmoptic.stack import parse_stack
    >>> slab = parse_stack("n=2 ? / n=1.5 1mm", ambient="n=1")
    >>> level = reference_level(slab, "bare", np.array([600.0]), np.ones(1))
    >>> round(level, 6), round(2 * 1.5 / (1.5**2 + 1), 6)
    (0.923077, 0.923077)
    """
    if reference not in REFERENCES:
        raise FilmopticError(f"--reference must be 'open' or 'bare', got {reference!r}")
    if reference == "open":
        return 1.0
    from .engine import compute

    bare_T = compute(stack.bare(), wavelength_nm, angle_deg=angle_deg, extrapolate=extrapolate).T
    level = float(np.asarray(bare_T) @ weights)
    if not level > 0:
        raise FilmopticError("the bare substrate transmits nothing in this band; use --reference open")
    return level
