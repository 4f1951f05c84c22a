"""Parsing of the quantities people type: lengths, wavelength grids, fractions, durations,
angles, uncertainties and meter readings.

All functions are pure, accept strings exactly as a user writes them, return floats or numpy
arrays in filmoptic's internal units (nanometres, seconds, degrees, fractions 0–1; readings in the
base unit of what the meter shows: V, A, lx, W or counts) and raise
:class:`~filmoptic.errors.FilmopticError` with a one-line message on bad input.

Units the trade writes are accepted where they mean something: Ångström for thicknesses (``120A``,
``120Å``, ``120 angstrom``: crystal monitors show Å), clock-style durations (``5:30``, ``1:05:00``),
radians for an angle only when written (``0.785rad``), ``%`` of a value and ``pp`` (percentage
points) for uncertainties, and V, mV, µA, lx, W… on meter readings.
"""

from __future__ import annotations

import math
import re

import numpy as np

from .errors import FilmopticError
from .limits import GRID_POINTS, check_number_text

__all__ = [
    "LENGTH_UNITS_NM",
    "LENGTH_UNIT_PATTERN",
    "length_unit_nm",
    "parse_number",
    "parse_length_nm",
    "parse_wavelengths_nm",
    "parse_range_nm",
    "parse_fraction",
    "parse_duration_s",
    "parse_angles_deg",
    "parse_volts",
    "parse_volts_range",
    "parse_angle_deg",
    "parse_uncertainty_spec",
    "parse_meter_value",
    "READING_UNITS",
    "SMALL_BARE_ANGLE",
    "MAX_LENGTH_NM",
    "WAVELENGTH_RANGE_NM",
    "MIN_DURATION_S",
    "MAX_DURATION_S",
    "MAX_ANGLE_DEG",
    "check_angles_deg",
]

#: Length units accepted everywhere, in nanometres. Ångström (0.1 nm) is written ``A``, ``Å`` (either
#: code point) or ``angstrom``; crystal monitors show thickness in Å and rate in Å/s.
LENGTH_UNITS_NM = {"nm": 1.0, "um": 1e3, "µm": 1e3, "μm": 1e3, "mm": 1e6, "m": 1e9,
                   "A": 0.1, "\u00c5": 0.1, "\u212b": 0.1, "angstrom": 0.1, "angstroms": 0.1}
#: The length units of a written thickness, as a regular-expression alternation (longest first).
LENGTH_UNIT_PATTERN = "nm|um|µm|μm|mm|[Aa]ngstroms?|\u00c5|\u212b|A"

_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_LENGTH_RE = re.compile(rf"^\s*({_NUMBER})\s*({LENGTH_UNIT_PATTERN})\s*$")
_DURATION_UNITS_S = {
    "s": 1.0, "sec": 1.0, "secs": 1.0, "second": 1.0, "seconds": 1.0,
    "min": 60.0, "mins": 60.0, "minute": 60.0, "minutes": 60.0, "m": 60.0,
    "h": 3600.0, "hr": 3600.0, "hrs": 3600.0, "hour": 3600.0, "hours": 3600.0,
}
#: A length above this (1 m) is a typo, not a coating or a substrate.
MAX_LENGTH_NM = 1e9
#: Wavelengths filmoptic computes with, nm: from soft X-rays (1 nm) to the far infrared (1 mm).
WAVELENGTH_RANGE_NM = (1.0, 1e6)
#: A deposition or measurement longer than this (about 4 months) is a typo, not a request.
MAX_DURATION_S = 1e7
#: … or shorter than a millisecond (no shutter opens and closes that fast).
MIN_DURATION_S = 1e-3
#: Largest angle of incidence, degrees from the normal. Closer to grazing than 0.001° is no
#: measurement (a beam diverges more than that), and there the intensity sums of a thick slab
#: meet 1 − R·R' = 0 in floating point.
MAX_ANGLE_DEG = 89.999
# Units a wavelength may carry in a grid or list (the bare number means nm).
_WAVELENGTH_UNIT_RE = re.compile(r"^(.*?)\s*(nm|um|µm|μm)$")


def parse_number(text: str, what: str = "number") -> float:
    """Parse a finite real number; ``what`` names it in the error message.

    Examples
    --------
    >>> parse_number("1.5e2")
    150.0
    """
    s = str(text).strip()
    check_number_text(s, what)
    if not re.fullmatch(_NUMBER, s):
        if re.fullmatch(r"[+-]?\d+,\d+", s):
            # A decimal comma (common on European instruments and keyboards).
            raise FilmopticError(
                f"{what}: expected a number, got {text!r}; write the decimal point as '.', "
                f"e.g. {s.replace(',', '.')!r}"
            )
        raise FilmopticError(f"{what}: expected a number, got {text!r}")
    value = float(s)
    if not math.isfinite(value):
        raise FilmopticError(f"{what}: {text!r} is not a finite number")
    return value


def length_unit_nm(unit: str) -> float:
    """Nanometres in one of :data:`LENGTH_UNITS_NM` (``angstrom`` in any case).

    Examples
    --------
    >>> length_unit_nm("Å"), length_unit_nm("Angstrom")
    (0.1, 0.1)
    """
    key = unit.lower() if unit.lower().startswith("angstrom") else unit
    return LENGTH_UNITS_NM[key]


def parse_length_nm(text: str, what: str = "thickness", allow_zero: bool = True) -> float:
    """Parse a length that carries a unit (``55nm``, ``1.2 um``, ``3mm``, ``120A``) into nanometres.

    ``A``, ``Å`` and ``angstrom`` are Ångström (0.1 nm), as crystal monitors show thickness.

    Examples
    --------
    >>> parse_length_nm("1.2um")
    1200.0
    >>> parse_length_nm("3 mm")
    3000000.0
    >>> parse_length_nm("218Å")
    21.8
    """
    check_number_text(str(text).strip(), what)
    m = _LENGTH_RE.match(str(text))
    if not m:
        if re.fullmatch(rf"\s*{_NUMBER}\s*", str(text)):
            raise FilmopticError(
                f"{what} {text!r} has no unit: write it as e.g. '{str(text).strip()}nm', "
                f"'{str(text).strip()}um' or '{str(text).strip()}mm'"
            )
        raise FilmopticError(f"{what}: expected a length with a unit like '55nm', got {text!r}")
    value = float(m.group(1)) * length_unit_nm(m.group(2))
    if not math.isfinite(value) or value < 0 or (value == 0 and not allow_zero):
        raise FilmopticError(f"{what} must be a positive length, got {text!r}")
    if value > MAX_LENGTH_NM:
        raise FilmopticError(f"{what} {text!r} is absurdly large (over 1 m)")
    return value


def _grid(start: float, stop: float, step: float, what: str) -> np.ndarray:
    if step <= 0:
        raise FilmopticError(f"{what}: the step must be positive, got {step:g}")
    if stop < start:
        raise FilmopticError(f"{what}: the stop ({stop:g}) is below the start ({start:g})")
    count = math.floor((stop - start) / step + 1e-9) + 1 if math.isfinite((stop - start) / step) else math.inf
    GRID_POINTS.check(count, f"{what} {start:g}:{stop:g}:{step:g}", "use a larger step or a shorter range")
    count = int(count)
    if count > 1 and start + step == start:
        raise FilmopticError(f"{what}: the step {step:g} is too small to change {start:g}")
    # Built from integers so that 380:780:5 ends exactly on 780.
    return start + step * np.arange(count, dtype=float)


def parse_wavelengths_nm(text: str, what: str = "--wl") -> np.ndarray:
    """Parse a wavelength grid: ``start:stop:step`` (inclusive) or a comma list, in nm.

    Examples
    --------
    >>> parse_wavelengths_nm("400:420:10")
    array([400., 410., 420.])
    >>> parse_wavelengths_nm("633, 532")
    array([633., 532.])
    """
    s = str(text).strip()
    if not s:
        raise FilmopticError(f"{what}: no wavelengths given")
    if ":" in s:
        parts = s.split(":")
        if len(parts) != 3:
            raise FilmopticError(f"{what}: write a grid as START:STOP:STEP in nm, got {text!r}")
        start, stop, step = (_wavelength_nm(p, what, text) for p in parts)
        values = _grid(start, stop, step, what)
    else:
        values = np.array([_wavelength_nm(p, what, text) for p in s.split(",")], dtype=float)
    if np.any(values <= 0):
        raise FilmopticError(f"{what}: wavelengths must be positive (nm), got {text!r}")
    if np.any(values > WAVELENGTH_RANGE_NM[1]):
        raise FilmopticError(f"{what}: {text!r} is beyond 1 mm; wavelengths are in nm")
    if np.any(values < WAVELENGTH_RANGE_NM[0]):
        raise FilmopticError(
            f"{what}: {text!r} reaches below {WAVELENGTH_RANGE_NM[0]:g} nm; wavelengths are in nm "
            f"(filmoptic works from {WAVELENGTH_RANGE_NM[0]:g} nm to 1 mm)"
        )
    GRID_POINTS.check(values.size, what, "give fewer wavelengths")
    return values


def _wavelength_nm(part: str, what: str, text: str) -> float:
    """One number of a wavelength grid or list, in nm; ``550nm`` and ``0.55um`` are accepted."""
    part = part.strip()
    scale = 1.0
    m = _WAVELENGTH_UNIT_RE.match(part)
    if m:
        part, scale = m.group(1), LENGTH_UNITS_NM[m.group(2)]
    try:
        return parse_number(part, what) * scale
    except FilmopticError as exc:
        if "decimal point" in str(exc):
            raise
        raise FilmopticError(
            f"{what}: cannot read {text!r} as wavelengths; write START:STOP:STEP in nm "
            "(e.g. 380:780:5) or a comma list (e.g. 532,633)"
        ) from None


def parse_range_nm(text: str, what: str = "--range", need_step: bool = False) -> tuple:
    """Parse ``START:STOP`` or ``START:STOP:STEP`` (nm) into a tuple of floats in nm.

    A bare number is nm; each part may carry its own length unit (``0:2000A:10A`` in Ångström).

    Examples
    --------
    >>> parse_range_nm("0:200:2")
    (0.0, 200.0, 2.0)
    >>> parse_range_nm("5:80")
    (5.0, 80.0)
    >>> parse_range_nm("0A:500A:10A")
    (0.0, 50.0, 1.0)
    """
    parts = [p.strip() for p in str(text).split(":")]
    if len(parts) not in ((3,) if need_step else (2, 3)):
        form = "START:STOP:STEP" if need_step else "START:STOP[:STEP]"
        raise FilmopticError(f"{what}: expected {form} in nm, got {text!r}")
    values = tuple(parse_length_nm(p, what) if _LENGTH_RE.match(p) else parse_number(p, what) for p in parts)
    if values[0] < 0 or values[1] <= values[0]:
        raise FilmopticError(f"{what}: need 0 <= START < STOP, got {text!r}")
    if values[1] > MAX_LENGTH_NM:
        raise FilmopticError(f"{what}: {text!r} reaches beyond 1 m; the values are in nm")
    if len(values) == 3:
        _grid(*values, what)  # validates step and size
    return values


def parse_fraction(text, what: str = "value", lo: float = 0.0, hi: float = 1.0) -> float:
    """Parse ``0.3`` or ``30%`` into a fraction and check it lies in ``[lo, hi]``.

    Examples
    --------
    >>> parse_fraction("30%")
    0.3
    >>> parse_fraction("0.3")
    0.3
    """
    s = str(text).strip()
    scale = 1.0
    if s.endswith("%"):
        s, scale = s[:-1].strip(), 0.01
    value = parse_number(s, what) * scale
    if not lo <= value <= hi:
        shown = f"{value * 100:g} %" if scale != 1 else f"{value:g}"
        # "30" for 30 % is the commonest slip: the percent sign was left out.
        hint = f"; did you mean {value:g}%?" if scale == 1 and lo <= value / 100 <= hi else ""
        raise FilmopticError(
            f"{what} must lie between {lo:g} and {hi:g} (or {lo * 100:g}%–{hi * 100:g}%), "
            f"got {shown}{hint}"
        )
    return value


def parse_duration_s(text: str, what: str = "duration") -> float:
    """Parse ``300s``, ``5min``, ``1h``, ``1h30min``, ``5min30s``, ``1h 5min``, a clock-style
    ``M:SS`` or ``H:MM:SS`` (``5:30`` is five and a half minutes), or a bare number of seconds.

    Examples
    --------
    >>> parse_duration_s("5min")
    300.0
    >>> parse_duration_s("1h30min")
    5400.0
    >>> parse_duration_s("5:30"), parse_duration_s("1:05:00"), parse_duration_s("1h 5min")
    (330.0, 3900.0, 3900.0)
    """
    s = str(text).strip().lower().replace(" ", "")
    check_number_text(s, what)
    if ":" in s:
        value = _clock_duration_s(s, what, text)
    elif re.fullmatch(_NUMBER, s):
        value = float(s)
    else:
        pieces = re.findall(rf"({_NUMBER})([a-z]+)", s)
        if not pieces or "".join(a + b for a, b in pieces) != s:
            raise FilmopticError(
                f"{what}: expected e.g. '300s', '5min', '5min30s', '5:30' or '1h', got {text!r}"
            )
        value = 0.0
        for number, unit in pieces:
            if unit not in _DURATION_UNITS_S:
                raise FilmopticError(f"{what}: unknown time unit {unit!r} in {text!r} (use s, min or h)")
            value += float(number) * _DURATION_UNITS_S[unit]
    if not math.isfinite(value) or value <= 0:
        raise FilmopticError(f"{what} must be positive, got {text!r}")
    if value < MIN_DURATION_S:
        raise FilmopticError(f"{what} {text!r} is absurdly short (under a millisecond)")
    if value > MAX_DURATION_S:
        raise FilmopticError(f"{what} {text!r} is absurdly long (over {MAX_DURATION_S / 86400:.0f} days)")
    return value


#: ``M:SS`` or ``H:MM:SS`` (seconds may carry a fraction), as a stopwatch shows a time.
CLOCK_DURATION = r"\d+(?::[0-5]\d){1,2}(?:\.\d+)?"


def _clock_duration_s(s: str, what: str, text) -> float:
    if not re.fullmatch(CLOCK_DURATION, s):
        raise FilmopticError(
            f"{what}: write a clock time as M:SS or H:MM:SS with two-digit minutes and seconds "
            f"below 60 (e.g. 5:30 or 1:05:00), got {text!r}"
        )
    parts = [float(p) for p in s.split(":")]
    seconds = 0.0
    for part in parts:
        seconds = seconds * 60.0 + part
    return seconds


#: A bare angle below this (about π/2) that is not zero looks like radians: it is still read as
#: degrees, with a warning that says how to write radians.
SMALL_BARE_ANGLE = 1.6
_DEGREE_SUFFIX = re.compile(r"\s*(°|deg|degrees?)$", re.IGNORECASE)
_RADIAN_SUFFIX = re.compile(r"\s*(rad|radians?)$", re.IGNORECASE)


def _angle_part(part: str, what: str) -> tuple[float, bool]:
    """One written angle → (degrees, whether it was a bare number)."""
    part = part.strip()
    if _RADIAN_SUFFIX.search(part):
        return math.degrees(parse_number(_RADIAN_SUFFIX.sub("", part), what)), False
    if _DEGREE_SUFFIX.search(part):
        return parse_number(_DEGREE_SUFFIX.sub("", part), what), False
    return parse_number(part, what), True


def _warn_small_bare(values_deg, bare_flags, what: str, text) -> None:
    """Warn once when every non-zero angle was a bare number below :data:`SMALL_BARE_ANGLE`."""
    nonzero = [(v, b) for v, b in zip(values_deg, bare_flags) if v != 0]
    if nonzero and all(b and abs(v) < SMALL_BARE_ANGLE for v, b in nonzero):
        import warnings

        shown = str(text).strip()
        warnings.warn(
            f"{what} {shown} is read as degrees (angles are degrees from the normal); if you meant "
            f"radians, write e.g. {nonzero[0][0]:g}rad; write {nonzero[0][0]:g}deg to say degrees",
            UserWarning,
            stacklevel=3,
        )


def parse_angle_deg(text, what: str = "--angle") -> float:
    """One angle of incidence in degrees, 0 to 89.999: ``45``, ``45°``, ``45deg`` or ``0.785rad``.

    A bare number is degrees. A bare non-zero number below :data:`SMALL_BARE_ANGLE` looks like
    radians, so it is read as degrees with a :class:`UserWarning` that says how to write radians.

    Examples
    --------
    >>> parse_angle_deg("45°"), round(parse_angle_deg("0.5236rad"), 3)
    (45.0, 30.0)
    """
    if isinstance(text, (int, float)):
        value, bare = float(text), False
    else:
        value, bare = _angle_part(str(text), what)
    check_angles_deg(value, what, text)
    _warn_small_bare([value], [bare], what, text)
    return value


def parse_angles_deg(text: str, what: str = "--angles") -> np.ndarray:
    """Parse angles of incidence in degrees: one value, a comma list or ``start:stop:step``.

    Each value may carry ``°``, ``deg`` or ``rad``; a list of bare non-zero numbers all below
    :data:`SMALL_BARE_ANGLE` is read as degrees with a warning (see :func:`parse_angle_deg`).

    Examples
    --------
    >>> parse_angles_deg("0:60:15")
    array([ 0., 15., 30., 45., 60.])
    """
    s = str(text).strip()
    if ":" in s:
        parts = s.split(":")
        if len(parts) != 3:
            raise FilmopticError(f"{what}: write angles as START:STOP:STEP in degrees, got {text!r}")
        read = [_angle_part(p, what) for p in parts]
        values = _grid(*(v for v, _ in read), what)
        bare = [all(b for _, b in read)] * values.size
    else:
        read = [_angle_part(p, what) for p in s.split(",")]
        values = np.array([v for v, _ in read], dtype=float)
        bare = [b for _, b in read]
    check_angles_deg(values, what, text)
    _warn_small_bare(values.tolist(), bare, what, text)
    return values


def parse_uncertainty_spec(text, what: str = "--uncertainty") -> tuple[float, str]:
    """An uncertainty as written: ``(amount, kind)``.

    ``kind`` is ``"relative"`` for ``N%`` (N percent *of the value*; amount N/100),
    ``"points"`` for ``Npp`` (N percentage points; amount N/100 as an absolute fraction) and
    ``"absolute"`` for a bare number (in the quantity's own unit: a fraction, or ΔE00 for a
    colour). A leading ``±`` or ``+-`` is allowed.

    Examples
    --------
    >>> parse_uncertainty_spec("2%"), parse_uncertainty_spec("±0.5pp"), parse_uncertainty_spec("0.01")
    ((0.02, 'relative'), (0.005, 'points'), (0.01, 'absolute'))
    """
    s = re.sub(r"^(±|\+/?-)\s*", "", str(text).strip())
    kind, scale = "absolute", 1.0
    if s.endswith("%"):
        s, kind, scale = s[:-1].strip(), "relative", 0.01
    elif s.lower().endswith("pp"):
        s, kind, scale = s[:-2].strip(), "points", 0.01
    amount = parse_number(s, what) * scale
    if amount < 0:
        raise FilmopticError(f"{what} must not be negative, got {text!r}")
    return amount, kind


#: Units a meter reading may carry: symbol → (power of ten to the base unit, base unit). Only readings
#: of the same base unit can be divided; a bare number goes only with bare numbers.
READING_UNITS = {
    "V": (0, "V"), "mV": (-3, "V"), "uV": (-6, "V"), "µV": (-6, "V"), "μV": (-6, "V"),
    "A": (0, "A"), "mA": (-3, "A"), "uA": (-6, "A"), "µA": (-6, "A"), "μA": (-6, "A"),
    "nA": (-9, "A"), "pA": (-12, "A"),
    "lx": (0, "lx"), "lux": (0, "lx"), "klx": (3, "lx"),
    "W": (0, "W"), "mW": (-3, "W"), "uW": (-6, "W"), "µW": (-6, "W"), "μW": (-6, "W"),
    "nW": (-9, "W"),
    "counts": (0, "counts"), "count": (0, "counts"), "cts": (0, "counts"),
}
_METER_RE = re.compile(rf"^\s*({_NUMBER})\s*([A-Za-zµμ]*)\s*$")


def parse_meter_value(text, what: str = "reading") -> tuple[float, str]:
    """One number off a meter, with or without a unit: ``(value in the base unit, base unit)``.

    The units are those of :data:`READING_UNITS` (V, mV, µA/uA, nA, lx, klx, W, mW, counts …);
    the base unit is ``""`` for a bare number.

    Examples
    --------
    >>> parse_meter_value("12.1uA"), parse_meter_value("318 lx"), parse_meter_value("0.5")
    ((1.21e-05, 'A'), (318.0, 'lx'), (0.5, ''))
    """
    m = _METER_RE.match(str(text))
    if m is None:
        parse_number(str(text).strip(), what)  # the decimal-comma hint, or a plain message
        raise FilmopticError(f"{what}: expected a number with an optional unit, got {text!r}")
    number = parse_number(m.group(1), what)
    unit = m.group(2)
    if not unit:
        return number, ""
    if unit not in READING_UNITS:
        known = ", ".join(sorted({u for u in READING_UNITS if u.isascii()}, key=str.lower))
        raise FilmopticError(f"{what}: unknown unit {unit!r} in {text!r} (known: {known})")
    power, base = READING_UNITS[unit]
    # Division by an exact power of ten keeps 7100mV at exactly 7.1 V.
    return (number * 10**power if power >= 0 else number / 10**-power), base


_VOLT_SUFFIX_RE = re.compile(r"\s*(v|volts?)$", re.IGNORECASE)
#: Anodising voltages above this are a typo, not a bath (valve-metal films break down far below).
MAX_VOLTS = 1000.0


def parse_volts(text, what: str = "voltage") -> float:
    """Parse an anodising voltage: ``25``, ``25V``, ``25 V`` or ``25 volts`` (0 to 1000 V).

    Examples
    --------
    >>> parse_volts("25 V"), parse_volts("7.5")
    (25.0, 7.5)
    """
    value = parse_number(_VOLT_SUFFIX_RE.sub("", str(text).strip()), what)
    if not 0 <= value <= MAX_VOLTS:
        raise FilmopticError(f"{what}: a voltage must lie in 0–{MAX_VOLTS:g} V, got {text!r}")
    return value


def parse_volts_range(text, what: str = "--volts", need_step: bool = True) -> tuple:
    """Parse ``START:STOP:STEP`` (or ``START:STOP`` without ``need_step``) in volts.

    Examples
    --------
    >>> parse_volts_range("10:100:5")
    (10.0, 100.0, 5.0)
    >>> parse_volts_range("10V:60V", need_step=False)
    (10.0, 60.0)
    """
    parts = str(text).split(":")
    if len(parts) not in ((3,) if need_step else (2, 3)):
        form = "START:STOP:STEP" if need_step else "START:STOP[:STEP]"
        raise FilmopticError(f"{what}: expected {form} in volts (e.g. 10:100:5), got {text!r}")
    values = tuple(parse_volts(p, what) for p in parts)
    if values[1] <= values[0]:
        raise FilmopticError(f"{what}: need START < STOP, got {text!r}")
    if len(values) == 3:
        if values[2] <= 0:
            raise FilmopticError(f"{what}: the step must be positive, got {text!r}")
        _grid(*values, what)  # validates the size
    return values


def inclusive_grid(start: float, stop: float, step: float, what: str = "range") -> np.ndarray:
    """``start`` to ``stop`` in ``step``s (both ends included when the step divides the span)."""
    return _grid(start, stop, step, what)


def check_angles_deg(values, what: str = "angle of incidence", text=None) -> None:
    """Refuse angles of incidence outside 0 to :data:`MAX_ANGLE_DEG` degrees (or not finite).

    Examples
    --------
    >>> check_angles_deg([0.0, 45.0, 89.999])
    >>> check_angles_deg(90.0)
    Traceback (most recent call last):
    ...
    filmoptic.errors.FilmopticError: angle of incidence: angles of incidence must lie between 0 and 89.999 degrees from the normal, got 90
    """
    values = np.asarray(values, dtype=float)
    if not np.all(np.isfinite(values)) or np.any(values < 0) or np.any(values > MAX_ANGLE_DEG):
        shown = text if text is not None else ", ".join(f"{v:g}" for v in np.ravel(values)[:5])
        raise FilmopticError(
            f"{what}: angles of incidence must lie between 0 and {MAX_ANGLE_DEG:g} degrees from the "
            f"normal, got {shown}"
        )
