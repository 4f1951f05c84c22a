"""Parsing of the quantities people type: lengths, wavelength grids, fractions, durations.

All functions are pure, accept strings exactly as a user writes them, return floats or numpy
arrays in filmoptic's internal units (nanometres, seconds, fractions 0–1) and raise
:class:`~filmoptic.errors.FilmopticError` with a one-line message on bad input.
"""

from __future__ import annotations

import math
import re

import numpy as np

from .errors import FilmopticError
from .limits import GRID_POINTS, check_number_text

__all__ = [
    "LENGTH_UNITS_NM",
    "parse_number",
    "parse_length_nm",
    "parse_wavelengths_nm",
    "parse_range_nm",
    "parse_fraction",
    "parse_duration_s",
    "parse_angles_deg",
    "MAX_LENGTH_NM",
    "WAVELENGTH_RANGE_NM",
    "MIN_DURATION_S",
    "MAX_DURATION_S",
    "MAX_ANGLE_DEG",
    "check_angles_deg",
]

#: Length units accepted everywhere, in nanometres.
LENGTH_UNITS_NM = {"nm": 1.0, "um": 1e3, "µm": 1e3, "μm": 1e3, "mm": 1e6, "m": 1e9}

_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_LENGTH_RE = re.compile(rf"^\s*({_NUMBER})\s*(nm|um|µm|μm|mm)\s*$")
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


def parse_length_nm(text: str, what: str = "thickness", allow_zero: bool = True) -> float:
    """Parse a length that carries a unit (``55nm``, ``1.2 um``, ``3mm``) into nanometres.

    Examples
    --------
    >>> parse_length_nm("1.2um")
    1200.0
    >>> parse_length_nm("3 mm")
    3000000.0
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
    value = float(m.group(1)) * LENGTH_UNITS_NM[m.group(2)]
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
    """Parse ``START:STOP`` or ``START:STOP:STEP`` (nm) into a tuple of floats.

    Examples
    --------
    >>> parse_range_nm("0:200:2")
    (0.0, 200.0, 2.0)
    >>> parse_range_nm("5:80")
    (5.0, 80.0)
    """
    parts = [p.strip().removesuffix("nm").strip() for p in str(text).split(":")]
    if len(parts) not in ((3,) if need_step else (2, 3)):
        form = "START:STOP:STEP" if need_step else "START:STOP[:STEP]"
        raise FilmopticError(f"{what}: expected {form} in nm, got {text!r}")
    values = tuple(parse_number(p, what) for p in parts)
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
    """Parse ``300s``, ``5min``, ``1h``, ``1h30min`` or a bare number of seconds.

    Examples
    --------
    >>> parse_duration_s("5min")
    300.0
    >>> parse_duration_s("1h30min")
    5400.0
    """
    s = str(text).strip().lower().replace(" ", "")
    check_number_text(s, what)
    if re.fullmatch(_NUMBER, s):
        value = float(s)
    else:
        pieces = re.findall(rf"({_NUMBER})([a-z]+)", s)
        if not pieces or "".join(a + b for a, b in pieces) != s:
            raise FilmopticError(f"{what}: expected e.g. '300s', '5min' or '1h', got {text!r}")
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


def parse_angles_deg(text: str, what: str = "--angles") -> np.ndarray:
    """Parse angles of incidence in degrees: one value, a comma list or ``start:stop:step``.

    Examples
    --------
    >>> parse_angles_deg("0:60:15")
    array([ 0., 15., 30., 45., 60.])
    """
    s = str(text).strip()

    def degrees(part):
        # "45°" and "45deg" are how angles are written on drawings; the unit is degrees anyway.
        return parse_number(re.sub(r"\s*(°|deg|degrees?)$", "", part.strip(), flags=re.IGNORECASE), what)

    if ":" in s:
        parts = s.split(":")
        if len(parts) != 3:
            raise FilmopticError(f"{what}: write angles as START:STOP:STEP in degrees, got {text!r}")
        values = _grid(*(degrees(p) for p in parts), what)
    else:
        values = np.array([degrees(p) for p in s.split(",")], dtype=float)
    check_angles_deg(values, what, text)
    return values


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
