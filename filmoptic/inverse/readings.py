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
    ``led:WL/FWHM`` (an LED as a Gaussian of that full width at half maximum; ``led:WL`` takes
    :data:`LED_DEFAULT_FWHM_NM` and says so), or the path of a two-column spectrum file.
Detectors
    ``photopic`` (a lux meter: the CIE V(λ)), ``flat`` (a power meter or thermal sensor, equal
    response at every wavelength), ``silicon`` (a silicon photodiode: a typical published
    spectral responsivity, see :data:`SILICON_RESPONSE`) or the path of a two-column response file.
Readings
    a ratio (``0.304``, ``30.4%``) or the raw numbers off the meter, ``SAMPLE/REFERENCE`` or
    ``SAMPLE/REFERENCE/DARK``, each with or without a unit (``2.3V/7.1V``, ``318lx/1045lx``,
    ``12.1uA/40.2uA/0.3uA``; see :data:`filmoptic.units.READING_UNITS`). A dark reading (the
    meter with the light blocked) is subtracted from both: (S − D)/(R − D).
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
A. Driesse and J. S. Stein, *Global Normal Spectral Irradiance in Albuquerque: a One-Year Open
Dataset for PV Research*, Sandia National Laboratories report (2020), doi:10.2172/1814068 (the
relative spectral response of a crystalline-silicon device behind ``silicon``).
"""

from __future__ import annotations

import difflib
import math
import os
import re
from dataclasses import dataclass

import numpy as np

from ..errors import FilmopticError
from ..units import parse_fraction, parse_meter_value, parse_number

__all__ = [
    "BAND_STEP_NM",
    "REFERENCES",
    "DETECTORS",
    "LED_DEFAULT_FWHM_NM",
    "SILICON_RESPONSE",
    "MeterReading",
    "parse_reading",
    "parse_dark",
    "dark_corrected_ratio",
    "resolve_source",
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
DETECTORS = ("photopic", "flat", "silicon")
#: Other names accepted for a built-in detector.
DETECTOR_ALIASES = {"si": "silicon", "si-photodiode": "silicon", "silicon-photodiode": "silicon"}
# Names people type for a detector, and the built-in one they mean (for the hint only: a bare
# "photodiode" could be germanium or InGaAs, so it is not taken silently).
_DETECTOR_HINTS = {
    "photodiode": "silicon", "diode": "silicon", "pd": "silicon", "bpw34": "silicon", "solar-cell": "silicon",
    "lux": "photopic", "luxmeter": "photopic", "lux-meter": "photopic", "eye": "photopic",
    "v-lambda": "photopic", "vlambda": "photopic", "human": "photopic",
    "power-meter": "flat", "powermeter": "flat", "thermal": "flat", "thermopile": "flat",
    "bolometer": "flat", "pyroelectric": "flat",
}
_DETECTOR_MEANING = {"photopic": "a lux meter", "flat": "a power meter or thermal sensor",
                     "silicon": "a silicon photodiode"}

#: Relative spectral response (per watt, peak 1) of a crystalline-silicon photodiode, as
#: (wavelength nm, response) knots of a cubic interpolating spline, zero outside 290–1190 nm:
#: A. Driesse and J. S. Stein (2020), doi:10.2172/1814068, the c-Si response they publish (a
#: c-Si cell is a large-area silicon photodiode; a small one differs by a few percent in the blue
#: and near the band edge). Use a response file for your own diode's datasheet curve.
SILICON_RESPONSE = (
    (290.0, 0.00), (350.0, 0.27), (400.0, 0.37), (500.0, 0.52), (650.0, 0.71), (800.0, 0.88),
    (900.0, 0.97), (950.0, 1.00), (1000.0, 0.93), (1050.0, 0.58), (1100.0, 0.21), (1150.0, 0.05),
    (1190.0, 0.00),
)
SILICON_RANGE_NM = (290.0, 1190.0)

#: Full width at half maximum taken for ``led:WL`` written without one, nm. Single-colour LEDs are
#: 20–40 nm wide (common practice, from memory); the command says which width it took.
LED_DEFAULT_FWHM_NM = 25.0

_LASER = re.compile(r"^laser:\s*([0-9.eE+-]+)\s*(nm)?$", re.IGNORECASE)
_LED = re.compile(r"^led:\s*([0-9.eE+-]+)\s*(?:nm)?\s*/\s*([0-9.eE+-]+)\s*(nm)?$", re.IGNORECASE)
_LED_NO_WIDTH = re.compile(r"^led:\s*([0-9.eE+-]+)\s*(?:nm)?$", re.IGNORECASE)


@dataclass(frozen=True)
class MeterReading:
    """A transmittance reading as it came off the meter.

    Attributes
    ----------
    ratio : float
        The reading as a fraction of the reference: ``(sample − dark)/(reference − dark)``, or the
        ratio as written (``0.304``, ``30.4%``).
    sample, reference, dark : float or None
        The raw numbers in the base unit of :attr:`unit` (None for a ratio; ``dark`` None when no
        dark reading was given).
    unit : str
        Base unit of the raw numbers (``"V"``, ``"A"``, ``"lx"``, ``"W"``, ``"counts"``), ``""``
        for bare numbers or a ratio.
    text : str
        The reading as written.
    """

    ratio: float
    sample: float | None = None
    reference: float | None = None
    dark: float | None = None
    unit: str = ""
    text: str = ""


def _unit_name(unit: str) -> str:
    return unit or "no unit"


def _same_unit(values, what: str, text) -> str:
    """The common base unit of ``[(role, value, unit)…]``; a mismatch is an error."""
    units = {unit for _, _, unit in values}
    if len(units) > 1:
        shown = ", ".join(f"{role} in {_unit_name(unit)}" for role, _, unit in values)
        raise FilmopticError(
            f"{what} {text!r}: the readings must share one kind of unit ({shown}); write the unit on "
            "every number or on none, e.g. 2.3V/7.1V"
        )
    return units.pop()


def parse_dark(text, what: str = "--dark") -> tuple[float, str]:
    """A dark reading (the meter with the light blocked): ``(value in the base unit, unit)``.

    Examples
    --------
    >>> parse_dark("20mV")
    (0.02, 'V')
    """
    return parse_meter_value(text, what)


def dark_corrected_ratio(sample: float, reference: float, dark: float = 0.0, what: str = "--reading") -> float:
    """``(sample − dark)/(reference − dark)``, checked: the reference must read above the dark
    reading, the sample not below it, and the sample not above the reference.

    Examples
    --------
    >>> round(dark_corrected_ratio(2.12, 7.02, 0.02), 12)
    0.3
    """
    s, r = sample - dark, reference - dark
    if not r > 0:
        extra = " above the dark reading" if dark else ""
        raise FilmopticError(f"{what}: the reference must read{extra} more than zero; got reference {reference:g}"
                             + (f", dark {dark:g}" if dark else ""))
    if s < 0:
        if dark:
            raise FilmopticError(
                f"{what}: the sample ({sample:g}) reads below the dark reading ({dark:g}); check the dark reading"
            )
        raise FilmopticError(f"{what}: the sample reading must not be negative, got {sample:g}")
    if s > r:
        raise FilmopticError(
            f"{what}: the sample ({sample:g}) reads more than the reference ({reference:g})"
            + (" after the dark reading is taken off" if dark else "")
            + "; a transmittance reading must lie in [0, 1]"
        )
    return s / r


def parse_reading(text, dark=None, what: str = "--reading") -> MeterReading:
    """A reading: a ratio (``0.304``, ``30.4%``) or the raw numbers ``SAMPLE/REFERENCE`` or
    ``SAMPLE/REFERENCE/DARK``, each with or without a unit (``2.3V/7.1V``, ``318lx/1045lx``,
    ``12.1uA/40.2uA/0.3uA``).

    Parameters
    ----------
    text : str
        The reading as written.
    dark : str or float, optional
        A dark reading given separately (``--dark 0.02V``), subtracted from sample and reference.
        Not with a third number in ``text``, nor with a ratio.
    what : str
        How the reading is named in messages.

    Returns
    -------
    MeterReading

    Raises
    ------
    FilmopticError
        Mismatched units (``2.3V/1045lx``, or a unit on some numbers only), a dark reading twice
        or with a ratio, a reference at or below the dark reading, a sample above the reference.

    Examples
    --------
    >>> round(parse_reading("318/1045").ratio, 4)
    0.3043
    >>> parse_reading("30%").ratio
    0.3
    >>> r = parse_reading("2.12V/7020mV", dark="20mV")
    >>> round(r.ratio, 12), r.unit, r.dark
    (0.3, 'V', 0.02)
    """
    s = str(text).strip()
    if "/" not in s:
        if dark is not None:
            raise FilmopticError(
                f"{what} {text!r} is already a ratio; a dark reading needs the raw numbers, SAMPLE/REFERENCE "
                "(e.g. 2.3V/7.1V with --dark 0.02V)"
            )
        return MeterReading(parse_fraction(s, what=what), text=s)
    parts = s.split("/")
    if len(parts) not in (2, 3):
        raise FilmopticError(
            f"{what}: write SAMPLE/REFERENCE or SAMPLE/REFERENCE/DARK like 318/1045 or 2.3V/7.1V/0.02V, got {text!r}"
        )
    read = [(role, *parse_meter_value(part, f"{what} {role}"))
            for role, part in zip(("sample", "reference", "dark"), parts)]
    if dark is not None:
        if len(parts) == 3:
            raise FilmopticError(f"{what} {text!r} already holds a dark reading (the third number); drop --dark")
        if isinstance(dark, (int, float)):
            read.append(("dark", float(dark), read[0][2]))
        else:
            read.append(("dark", *parse_dark(dark)))
    unit = _same_unit(read, what, s if dark is None else f"{s} with dark {dark}")
    values = {role: value for role, value, _ in read}
    ratio = dark_corrected_ratio(values["sample"], values["reference"], values.get("dark", 0.0), f"{what} {s!r}")
    return MeterReading(ratio, values["sample"], values["reference"], values.get("dark"), unit, s)


def resolve_source(source: str) -> tuple[str, str | None]:
    """A source as it will be modelled, and a note when a default filled something in.

    ``led:WL`` without a width becomes ``led:WL/FWHM`` with :data:`LED_DEFAULT_FWHM_NM`.

    Examples
    --------
    >>> resolve_source("led:530")[0], resolve_source("A")
    ('led:530/25', ('A', None))
    """
    src = str(source).strip()
    m = _LED_NO_WIDTH.match(src)
    if m is None:
        return src, None
    resolved = f"led:{m.group(1)}/{LED_DEFAULT_FWHM_NM:g}"
    return resolved, (f"--source {src}: no width given, so {resolved} (an LED {LED_DEFAULT_FWHM_NM:g} nm wide at "
                      "half maximum, typical of a single-colour LED); write led:WL/FWHM with your LED's width")


def _silicon_response():
    from scipy.interpolate import make_interp_spline

    knots = np.array(SILICON_RESPONSE)
    spline = make_interp_spline(knots[:, 0], knots[:, 1], k=3)

    def response(wavelength_nm):
        wl = np.asarray(wavelength_nm, dtype=float)
        values = np.clip(spline(wl), 0.0, None)
        return np.where((wl < SILICON_RANGE_NM[0]) | (wl > SILICON_RANGE_NM[1]), 0.0, values)

    return response


def _detector_hint(det: str) -> str:
    """A suggestion for an unknown detector name, or '' (never a wrong built-in)."""
    key = det.lower().replace(" ", "-").replace("_", "-")
    meant = _DETECTOR_HINTS.get(key)
    if meant is None:
        close = difflib.get_close_matches(key, [*DETECTORS, *DETECTOR_ALIASES], n=1, cutoff=0.75)
        meant = DETECTOR_ALIASES.get(close[0], close[0]) if close else None
    return f"; did you mean {meant} ({_DETECTOR_MEANING[meant]})?" if meant else ""


def detector_response(detector: str):
    """A detector's spectral response and the wavelengths it is defined on.

    Parameters
    ----------
    detector : str
        ``photopic``, ``flat``, ``silicon`` (also ``si``) or the path of a two-column response file.

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
    from ..colorimetry import photopic_efficiency, read_spectrum_file

    det = str(detector).strip()
    name = DETECTOR_ALIASES.get(det.lower(), det.lower())
    if name == "photopic":
        return photopic_efficiency, PHOTOPIC_RANGE_NM
    if name == "flat":
        return np.ones_like, (0.0, math.inf)
    if name == "silicon":
        return _silicon_response(), SILICON_RANGE_NM
    if not os.path.exists(os.path.expanduser(det)):
        raise FilmopticError(
            f"--detector {det!r}: use photopic (a lux meter), flat (a power meter or thermal sensor), "
            f"silicon (a silicon photodiode) or the path of a two-column response file "
            f"(no file {det!r} found){_detector_hint(det)}"
        )
    from ..notes import note_file

    table = read_spectrum_file(os.path.expanduser(det), what="detector response file")
    note_file(det, table.how_read)
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
            f"at half maximum in nm, e.g. led:530/30 (led:530 alone takes {LED_DEFAULT_FWHM_NM:g} nm)"
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
    from ..colorimetry import illuminant_table, interval_widths

    src = str(source).strip()
    det = str(detector).strip()
    response, det_range = detector_response(det)
    lo = max(float(material_range_nm[0]), det_range[0])
    hi = min(float(material_range_nm[1]), det_range[1])

    src = resolve_source(src)[0]
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
    from ..engine import compute

    bare_T = compute(stack.bare(), wavelength_nm, angle_deg=angle_deg, extrapolate=extrapolate).T
    level = float(np.asarray(bare_T) @ weights)
    if not level > 0:
        raise FilmopticError("the bare substrate transmits nothing in this band; use --reference open")
    return level
