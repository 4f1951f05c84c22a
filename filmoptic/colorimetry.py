"""Perceived colour and luminous values of spectra and coating stacks.

A reflectance or transmittance spectrum becomes a colour in four steps, all of them standard:

1. **Tristimulus values** CIE XYZ (Y on a 0–100 scale, so a perfect reflector has Y = 100) by
   summation over the wavelength grid, weighted by the illuminant's spectral power distribution and
   the observer's colour-matching functions (CIE 15:2018, §7; ASTM E308). The weights are built
   once per (illuminant, observer, wavelength grid) and cached, so that XYZ is a single matrix
   product ``values @ W`` over any leading axes — a sweep of a thousand thicknesses costs one
   product, not a thousand integrations.
2. **CIELAB and LCh** relative to the illuminant's own white (the perfect reflector under the same
   illuminant and observer), so that a neutral surface has a* = b* = 0 under any light.
3. **sRGB** (IEC 61966-2-1) for display: XYZ is adapted from the illuminant's white to D65 with the
   Bradford transform (linearised, von Kries form; the transform ICC profiles use), converted to
   linear sRGB and encoded with the sRGB transfer function.
4. **Gamut**: a colour whose linear sRGB lies outside [0, 1] by more than :data:`GAMUT_TOLERANCE`
   is flagged ``in_gamut = False`` and shown gamut-mapped — its chroma is reduced at constant L* and
   hue angle (CIELAB LCh) until it fits — never silently clipped.

Luminous transmittance and reflectance follow ISO 9050:2003 (D65 × V(λ), 380–780 nm), with any
other illuminant replacing D65 on request.

Method choice
-------------
The colour-matching functions, V(λ) and the illuminants offered by name are the CIE tables shipped
in :mod:`filmoptic.cie` (1 nm CMFs; illuminants at their tabulated steps), copied value for value
from colour-science by ``tools/build_ciedata.py``; other CIE illuminants known to colour-science
(D60, FL3.1, HP1, …) are taken from colour-science by name. The tables are *sampled* on the
wavelength grid (linear interpolation between tabulated values, which CIE 15:2018 recommends for
the daylight illuminants). With the default grid of 380–780 nm at 5 nm this is the plain summation of
CIE 15:2018 §7.1 using the 1 nm tables sampled every 5 nm, the practice ASTM E308 allows for 5 nm
data. Only grid points between 380 nm and 780 nm take part, so the colour does not depend on how far
a spectrum extends beyond the visible. Results agree with colour-science's own
``sd_to_XYZ(..., method="Integration")`` on the same range (the test suite checks this).

The transforms after XYZ (CIELAB, LCh, Bradford adaptation, sRGB, ΔE00) are the closed forms of
:mod:`filmoptic.cie.transforms`, equal to colour-science's to rounding. colour-science itself is
imported only for what goes beyond the shipped set: other illuminants by name, and the Munsell
notation and correlated colour temperature of :func:`describe` (the ``--munsell``/``--cct``
options of ``filmoptic color``).

References
----------
CIE 15:2018, *Colorimetry*, 4th ed., Commission Internationale de l'Éclairage (2018).
ASTM E308-18, *Standard Practice for Computing the Colors of Objects by Using the CIE System*.
ISO/CIE 11664-4:2019 (CIELAB); ISO/CIE 11664-6:2014 (CIEDE2000).
IEC 61966-2-1:1999, *Default RGB colour space — sRGB*.
ISO 9050:2003, *Glass in building — Determination of light transmittance, solar direct
transmittance, …*.
K. M. Lam, *Metamerism and colour constancy*, PhD thesis, University of Bradford (1985) (the
Bradford transform).

Examples
--------
>>> import numpy as np
>>> wl = np.arange(380.0, 781.0, 5.0)
>>> white = colour_of(wl, np.ones_like(wl))
>>> [round(float(v), 6) + 0.0 for v in white.Lab]
[100.0, 0.0, 0.0]
>>> round(float(luminous(wl, np.full_like(wl, 0.3))), 6)
0.3
"""

from __future__ import annotations

import difflib
import math
import os
import re
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path

import numpy as np

from .cie import tables as cie_tables
from .cie import transforms as cie
from .cie.tables import SHIPPED_ILLUMINANTS
from .errors import DataFileError, FilmopticError, WavelengthRangeError
from .materials.tables import check_wavelength_column
from .units import check_angles_deg

__all__ = [
    "VISIBLE_RANGE_NM",
    "DEFAULT_WAVELENGTHS_NM",
    "ILLUMINANT_NAMES",
    "GAMUT_TOLERANCE",
    "TabulatedSpectrum",
    "Colour",
    "Luminous",
    "Appearance",
    "default_wavelengths",
    "read_spectrum_file",
    "illuminant_spd",
    "illuminant_table",
    "illuminant_label",
    "check_illuminant",
    "check_observer",
    "photopic_efficiency",
    "interval_widths",
    "tristimulus_weights",
    "luminous_weights",
    "white_point",
    "spectrum_to_XYZ",
    "colour_from_XYZ",
    "colour_of",
    "luminous",
    "delta_e00",
    "appearance",
    "ColourSweep",
    "colour_sweep",
    "ColourGrid",
    "colour_grid",
    "sweep_bounds_nm",
    "transmission_exits",
]

#: The range over which colour and luminous values are summed (CIE 15:2018; ISO 9050:2003).
VISIBLE_RANGE_NM = (380.0, 780.0)
#: The default grid: 380–780 nm every 5 nm.
DEFAULT_WAVELENGTHS_NM = (380.0, 780.0, 5.0)
#: Largest grid step inside the visible range that still gives a trustworthy colour (ASTM E308
#: tabulates weights down to 10 nm; coarser sampling misses narrow features).
MAX_STEP_NM = 10.0
#: How far outside [0, 1] linear sRGB may stray and still count as inside the gamut. It absorbs
#: rounding of the published white points (D65 summed on 5 nm is x, y = 0.31272, 0.32903 against
#: sRGB's 0.3127, 0.3290, a difference of up to 3e-4 in linear sRGB) and stays below a quarter of an
#: 8-bit step near full scale.
GAMUT_TOLERANCE = 1e-3

#: The illuminants offered by name and shipped as tables (:mod:`filmoptic.cie.tables`). The CIE
#: F series is F1–F12 as in CIE 15:2018 (colour-science's FL1–FL12, also accepted).
ILLUMINANT_NAMES = SHIPPED_ILLUMINANTS
_ILLUMINANT_KEYS = {name.upper(): name for name in ILLUMINANT_NAMES}
_ILLUMINANT_KEYS.update({f"FL{i}": f"F{i}" for i in range(1, 13)})


def _colour():
    """colour-science, imported without keeping its change to numpy's global print options.

    colour-science switches numpy to legacy (1.13) array printing on import; filmoptic restores
    the caller's settings so that importing it has no such side effect.
    """
    import sys

    options = None if "colour" in sys.modules else np.get_printoptions()
    import colour

    if options is not None:
        np.set_printoptions(**options)
    return colour


def default_wavelengths() -> np.ndarray:
    """The default colour grid, 380–780 nm at 5 nm (81 points).

    Examples
    --------
    >>> default_wavelengths()[[0, -1]].tolist()
    [380.0, 780.0]
    """
    start, stop, step = DEFAULT_WAVELENGTHS_NM
    return start + step * np.arange(int(round((stop - start) / step)) + 1)


# --------------------------------------------------------------------------------------------
# User spectra (illuminants, light sources, detector responses)
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class TabulatedSpectrum:
    """A spectrum read from a user's two-column file: wavelength (nm) and a relative value.

    Attributes
    ----------
    wavelength_nm : numpy.ndarray
        Strictly increasing wavelengths, nm.
    values : numpy.ndarray
        Non-negative values (relative spectral power, or relative response), same length.
    source : str
        Where the table came from (the file path), used in messages.
    how_read : str
        How a file was read (separator, columns, rows), for the user; ``""`` for built-in tables.
    """

    wavelength_nm: np.ndarray
    values: np.ndarray
    source: str
    how_read: str = ""

    @property
    def range_nm(self) -> tuple[float, float]:
        return float(self.wavelength_nm[0]), float(self.wavelength_nm[-1])

    def at(self, wavelength_nm) -> np.ndarray:
        """Values linearly interpolated at ``wavelength_nm``; outside the table is an error.

        Raises
        ------
        WavelengthRangeError
            When a requested wavelength lies outside the tabulated range.
        """
        wl = np.asarray(wavelength_nm, dtype=float)
        lo, hi = self.range_nm
        if wl.size and (wl.min() < lo - 1e-9 or wl.max() > hi + 1e-9):
            raise WavelengthRangeError(
                f"{self.source} covers {lo:g}–{hi:g} nm but {wl.min():g}–{wl.max():g} nm is needed; "
                "extend the file's table"
            )
        return np.interp(wl, self.wavelength_nm, self.values)


_SEPARATORS = re.compile(r"[\s,;]+")


# A number written with a decimal comma ('1,5'), which the column separators split in two.
_DECIMAL_COMMA = re.compile(r"[-+]?\d+,\d+")


def _decimal_comma_hint(line: str) -> str:
    """'; '1,5' looks like a decimal comma …' when a comma sits between digits, else ''."""
    m = _DECIMAL_COMMA.search(line)
    if not m:
        return ""
    return (f"; {m.group()!r} looks like a decimal comma: write {m.group().replace(',', '.')!r} "
            "(the decimal point is '.')")


def _fast_two_columns(lines):
    """(wavelengths, values) of a plain two-column file in one vectorised pass, or (None, None)
    when some line needs the careful reading below (a word, a third column, a decimal comma)."""
    from .files import numeric_rows

    kept = [line for line in lines if line.strip() and not line.strip().startswith("#")]
    if kept:
        try:
            float(_SEPARATORS.split(kept[0].strip())[0])
        except ValueError:
            kept = kept[1:]                       # the one column-title line allowed
    table = numeric_rows([line.replace(",", " ").replace(";", " ") for line in kept])
    if table is None or table.shape[1] != 2 or not np.all(np.isfinite(table)):
        return None, None
    return table[:, 0], table[:, 1]


def read_spectrum_file(path, *, what: str = "spectrum file") -> TabulatedSpectrum:
    """Read a two-column text file: wavelength in nm, then a relative value.

    Columns are separated by spaces, tabs, commas or semicolons. Lines starting with ``#`` and
    blank lines are skipped, and so is one leading header line of text (``wavelength,power``).
    Wavelengths must increase strictly (a table written from long to short wavelengths is
    accepted and reversed); values must be finite and non-negative and not all zero. The file is
    only read, never written.

    Parameters
    ----------
    path : str or os.PathLike
        The file.
    what : str
        What the file is for, used in error messages ("illuminant file", "detector response").

    Returns
    -------
    TabulatedSpectrum

    Raises
    ------
    DataFileError
        With one line naming the file, the line number and the problem.

    Examples
    --------
    >>> import tempfile, os
    >>> with tempfile.NamedTemporaryFile("w", suffix=".txt", delete=False) as fh:
    ...     _ = fh.write("# my lamp\\nnm, power\\n380, 1\\n780, 2\\n")
    >>> spd = read_spectrum_file(fh.name)
    >>> spd.at([580.0]).tolist()
    [1.5]
    >>> os.unlink(fh.name)
    """
    from .files import check_row_count, guard_input

    p = guard_input(path, what)
    name = str(path)
    if not p.exists():
        raise DataFileError(f"{what} {name}: no such file")
    if p.is_dir():
        raise DataFileError(f"{what} {name} is a folder, not a file")
    try:
        text = p.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise DataFileError(f"{what} {name} is not a UTF-8 text file") from None
    except OSError as exc:
        raise DataFileError(f"{what} {name} cannot be read: {exc.strerror or exc}") from None

    lines = text.splitlines()
    check_row_count(len(lines), f"{what} {name}")
    wavelengths, values = _fast_two_columns(lines)
    header_seen = False
    separator = None
    if wavelengths is None:
        wavelengths, values = [], []
        careful = lines
    else:
        careful = ()
        # For the note on how the file was read: the vectorised pass reads every separator alike.
        data = [line for line in lines if line.strip() and not line.strip().startswith("#")]
        header_seen = _is_title([f for f in _SEPARATORS.split(data[0].strip()) if f])
        separator = _separator_name(data[1 if header_seen else 0])
    for number, raw in enumerate(careful, start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        fields = [f for f in _SEPARATORS.split(line) if f]
        if separator is None and wavelengths == [] and not _is_title(fields):
            separator = _separator_name(raw)
        try:
            numbers = [float(f) for f in fields]
        except ValueError:
            if not wavelengths and not header_seen:
                header_seen = True  # one column-title line is allowed before the data
                continue
            raise DataFileError(
                f"{what} {name}, line {number}: expected two numbers (wavelength nm, value), got {line[:40]!r}"
            ) from None
        if len(numbers) != 2:
            raise DataFileError(
                f"{what} {name}, line {number}: expected 2 columns (wavelength nm, value), found "
                f"{len(numbers)}{_decimal_comma_hint(line)}"
            )
        if not all(math.isfinite(v) for v in numbers):
            raise DataFileError(f"{what} {name}, line {number}: values must be finite numbers")
        wavelengths.append(numbers[0])
        values.append(numbers[1])

    if len(wavelengths) < 2:
        raise DataFileError(f"{what} {name}: needs at least two rows of 'wavelength value'")
    wl = np.asarray(wavelengths, dtype=float)
    val = np.asarray(values, dtype=float)
    descending = bool(wl[0] > wl[-1])
    if descending:
        wl, val = wl[::-1].copy(), val[::-1].copy()
    check_wavelength_column(wl, f"{what} {name}")
    if wl[-1] < 50:
        raise DataFileError(f"{what} {name}: wavelengths look like µm (largest {wl[-1]:g}); write them in nm")
    if np.any(val < 0):
        raise DataFileError(
            f"{what} {name}: negative value at {wl[np.argmax(val < 0)]:g} nm; a spectrum must be >= 0 "
            "(set measurement noise below zero to 0)"
        )
    if not np.any(val > 0):
        raise DataFileError(f"{what} {name}: all values are zero")
    wl.setflags(write=False)
    val.setflags(write=False)
    how = (f"{separator or 'spaces'} between fields, decimal point; columns wavelength (nm), relative value "
           f"(the scale does not matter); {wl.size} rows, {wl[0]:g}–{wl[-1]:g} nm"
           + ("; a column-title line skipped" if header_seen else "")
           + ("; rows given from long to short wavelengths, reversed" if descending else ""))
    return TabulatedSpectrum(wl, val, name, how)


def _separator_name(line: str) -> str:
    return next((name for mark, name in ((";", "semicolons"), (",", "commas"), ("\t", "tabs"))
                 if mark in line), "spaces")


def _is_title(fields) -> bool:
    try:
        [float(f) for f in fields]
        return False
    except ValueError:
        return True


# --------------------------------------------------------------------------------------------
# Illuminants, observers, V(λ)
# --------------------------------------------------------------------------------------------


def _looks_like_path(name: str) -> bool:
    return os.sep in name or "/" in name or bool(Path(name).suffix) or Path(name).exists()


def check_observer(observer) -> int:
    """Validate an observer given as 2 or 10 (int or text, ``"10°"`` accepted); returns 2 or 10.

    Examples
    --------
    >>> check_observer("10")
    10
    """
    text = str(observer).strip().rstrip("°").removesuffix("deg").strip()
    if text in ("2", "10"):
        return int(text)
    raise FilmopticError(
        f"observer must be 2 (CIE 1931 2°) or 10 (CIE 1964 10°), got {observer!r}"
    )


@lru_cache(maxsize=1)
def _other_cie_names() -> dict:
    """colour-science's illuminants beyond the shipped ones: upper-case name -> its key."""
    names = {key.upper(): key for key in _colour().SDS_ILLUMINANTS.keys()}
    for key in list(names):
        if key in _ILLUMINANT_KEYS:
            del names[key]
    return names


def _illuminant_key(illuminant) -> tuple[str, str]:
    """Classify an illuminant: ("cie", shipped name), ("colour", colour-science key) or
    ("file", path). colour-science is imported only for a name that is neither shipped nor a file."""
    if isinstance(illuminant, TabulatedSpectrum):
        raise TypeError("a TabulatedSpectrum is handled by the caller")
    if isinstance(illuminant, os.PathLike):
        return "file", str(illuminant)
    name = str(illuminant).strip()
    key = _ILLUMINANT_KEYS.get(name.upper())
    if key is not None:
        return "cie", key
    if os.sep in name or "/" in name or Path(name).exists():
        return "file", name
    other = _other_cie_names()
    if name.upper() in other:
        return "colour", other[name.upper()]
    if _looks_like_path(name):
        return "file", name
    choices = list(_ILLUMINANT_KEYS) + list(other)
    close = difflib.get_close_matches(name.upper(), choices, n=3, cutoff=0.5)
    hint = f"; did you mean {', '.join(other.get(c, c) for c in close)}?" if close else ""
    raise FilmopticError(
        f"unknown illuminant {name!r}: use D65, D50, A, C, E, F1–F12, LED-B1…LED-V2, another CIE "
        f"illuminant colour-science knows (D60, FL3.1…FL3.15, HP1…HP5, ID65, …) or a file path{hint}"
    )


def check_illuminant(illuminant) -> str:
    """Validate an illuminant name or file early (the file is read); returns its display label.

    Examples
    --------
    >>> check_illuminant("f11")
    'F11'
    """
    if isinstance(illuminant, TabulatedSpectrum):
        return illuminant.source
    kind, key = _illuminant_key(illuminant)
    if kind == "file":
        _illuminant_file(key)
        return key
    return illuminant_label(illuminant)


def illuminant_label(illuminant) -> str:
    """The name shown in tables and on charts: ``"D65"``, ``"F11"`` or the file path."""
    if isinstance(illuminant, TabulatedSpectrum):
        return illuminant.source
    kind, key = _illuminant_key(illuminant)
    return key


def _mtime(path: str) -> float:
    try:
        return os.stat(path).st_mtime
    except OSError:
        return -1.0


def _illuminant_file(path: str) -> TabulatedSpectrum:
    """An illuminant file's table, cached while the file is unchanged (recorded as an input of
    the run, and noted with how it was read, on every use, cached or not)."""
    from .files import guard_input
    from .notes import note_file

    guard_input(path, "illuminant file")
    table = _file_spectrum(path, _mtime(path))
    note_file(path, table.how_read)
    return table


@lru_cache(maxsize=32)
def _file_spectrum(path: str, mtime: float) -> TabulatedSpectrum:  # mtime keys the cache
    return read_spectrum_file(path, what="illuminant file")


@lru_cache(maxsize=64)
def _cie_table(kind: str, key: str) -> tuple[np.ndarray, np.ndarray]:
    if kind == "cie":
        return cie_tables.illuminant_table(key)
    sd = _colour().SDS_ILLUMINANTS[key]
    return np.asarray(sd.wavelengths, dtype=float), np.asarray(sd.values, dtype=float)


def illuminant_table(illuminant) -> TabulatedSpectrum:
    """An illuminant's own table: a CIE illuminant by name, a user's file, or a table as given.

    The table keeps the illuminant's tabulated wavelengths and range, so a caller can see what it
    covers (``.range_nm``) before sampling it (``.at(wavelength_nm)``, linear interpolation, an
    error outside the range). Files are read once and cached until they change.

    Parameters
    ----------
    illuminant : str, os.PathLike or TabulatedSpectrum
        A name as for :func:`illuminant_spd` (any case), the path of a two-column file (see
        :func:`read_spectrum_file`), or a :class:`TabulatedSpectrum`, returned unchanged.

    Returns
    -------
    TabulatedSpectrum

    Raises
    ------
    FilmopticError
        Unknown name (with close matches), or an unusable file
        (:class:`~filmoptic.errors.DataFileError`).

    References
    ----------
    CIE 15:2018, *Colorimetry*, 4th ed., Tables 5–10 (illuminant data, through colour-science).

    Examples
    --------
    >>> table = illuminant_table("a")
    >>> table.source, table.range_nm
    ('CIE illuminant A', (300.0, 780.0))
    """
    if isinstance(illuminant, TabulatedSpectrum):
        return illuminant
    kind, key = _illuminant_key(illuminant)
    if kind == "file":
        return _illuminant_file(key)
    wl, values = _cie_table(kind, key)
    return TabulatedSpectrum(wl, values, f"CIE illuminant {key}")


def illuminant_spd(name, wavelength_nm) -> np.ndarray:
    """Relative spectral power of an illuminant on a wavelength grid.

    Parameters
    ----------
    name : str, os.PathLike or TabulatedSpectrum
        ``"D65"``, ``"D50"``, ``"A"``, ``"C"``, ``"E"``, ``"F1"``…``"F12"``, the CIE LED series
        (``"LED-B1"``…``"LED-B5"``, ``"LED-BH1"``, ``"LED-RGB1"``, ``"LED-V1"``, ``"LED-V2"``;
        case does not matter), or the path of a two-column file (see :func:`read_spectrum_file`).
    wavelength_nm : array_like
        Wavelengths in nm.

    Returns
    -------
    numpy.ndarray
        Relative power (as tabulated: D65 is 100 at 560 nm), linearly interpolated.

    Raises
    ------
    FilmopticError
        Unknown name, or an unusable file (:class:`~filmoptic.errors.DataFileError`).
    WavelengthRangeError
        When a wavelength lies outside the illuminant's table (CIE D65 as shipped by colour-science
        runs 300–780 nm, the F and LED series 380–780 nm).

    References
    ----------
    CIE 15:2018, *Colorimetry*, 4th ed., Tables 5–10 (illuminant data), and CIE 15:2018 §3.1 for
    linear interpolation of daylight illuminants.

    Examples
    --------
    >>> float(illuminant_spd("D65", [560.0])[0])
    100.0
    >>> float(illuminant_spd("A", [560.0])[0])
    100.0
    """
    return illuminant_table(name).at(wavelength_nm)


def photopic_efficiency(wavelength_nm) -> np.ndarray:
    """The CIE 1924 photopic luminous efficiency V(λ), linearly interpolated (0 beyond 360–830 nm).

    References
    ----------
    CIE 15:2018, Table 1 (V(λ) equals ȳ(λ) of the CIE 1931 standard observer); ISO/CIE 23539:2023.

    Examples
    --------
    >>> float(photopic_efficiency([555.0])[0])
    1.0
    """
    wl, v = cie_tables.photopic_table()
    return np.interp(np.asarray(wavelength_nm, dtype=float), wl, v, left=0.0, right=0.0)


def _cmfs(observer: int, wavelength_nm: np.ndarray) -> np.ndarray:
    wl, values = cie_tables.cmf_table(observer)
    return np.stack([np.interp(wavelength_nm, wl, values[:, i], left=0.0, right=0.0) for i in range(3)], axis=-1)


# --------------------------------------------------------------------------------------------
# Weighting tables
# --------------------------------------------------------------------------------------------


def _as_grid(wavelength_nm) -> np.ndarray:
    wl = np.asarray(wavelength_nm, dtype=float)
    if wl.ndim != 1 or wl.size < 2:
        raise FilmopticError("colour needs a 1-D wavelength grid (e.g. 380:780:5 nm)")
    if not np.all(np.isfinite(wl)) or np.any(np.diff(wl) <= 0):
        raise FilmopticError("the wavelength grid must increase strictly")
    lo, hi = VISIBLE_RANGE_NM
    if wl[0] > lo + 1e-6 or wl[-1] < hi - 1e-6:
        raise FilmopticError(
            f"colour and luminous values need the whole visible range {lo:g}–{hi:g} nm; "
            f"the grid covers {wl[0]:g}–{wl[-1]:g} nm"
        )
    inside = wl[_visible_mask(wl)]
    if inside.size < 2 or np.max(np.diff(inside)) > MAX_STEP_NM + 1e-9:
        raise FilmopticError(
            f"the wavelength grid is too coarse for colour: use a step of at most {MAX_STEP_NM:g} nm in 380–780 nm"
        )
    return wl


def interval_widths(wavelength_nm) -> np.ndarray:
    """Δλ of each grid point: half the distance to each neighbour (the full step at the ends).

    Weighting a sum over a grid by these widths makes it the midpoint-rule integral, on uniform and
    uneven grids alike; on a uniform grid every Δλ equals the step, which is CIE 15:2018's plain
    summation.

    Parameters
    ----------
    wavelength_nm : array_like, shape (W,)
        Strictly increasing wavelengths, at least two.

    Returns
    -------
    numpy.ndarray, shape (W,)
        The widths; they add up to the grid's span plus half its first and half its last step.

    References
    ----------
    CIE 15:2018, *Colorimetry*, 4th ed., §7.1 (summation in place of integration).

    Examples
    --------
    >>> interval_widths([400.0, 405.0, 410.0]).tolist()
    [5.0, 5.0, 5.0]
    >>> interval_widths([400.0, 402.0, 410.0]).tolist()
    [2.0, 5.0, 8.0]
    """
    wl = np.asarray(wavelength_nm, dtype=float)
    edges = np.concatenate(([wl[0] - (wl[1] - wl[0]) / 2], (wl[1:] + wl[:-1]) / 2, [wl[-1] + (wl[-1] - wl[-2]) / 2]))
    return np.diff(edges)


def _visible_mask(wl: np.ndarray) -> np.ndarray:
    lo, hi = VISIBLE_RANGE_NM
    return (wl >= lo - 1e-9) & (wl <= hi + 1e-9)


def _illuminant_cache_key(illuminant):
    if isinstance(illuminant, TabulatedSpectrum):
        # By content, not id(): a freed table's id can be reused by another one.
        return ("table", np.asarray(illuminant.wavelength_nm, float).tobytes(),
                np.asarray(illuminant.values, float).tobytes())
    kind, key = _illuminant_key(illuminant)
    return (kind, key, _mtime(key) if kind == "file" else 0.0)


_WEIGHTS_CACHE: dict = {}
_CACHE_LIMIT = 64


def _cached(key, build):
    table = _WEIGHTS_CACHE.get(key)
    if table is None:
        table = build()
        table.setflags(write=False)
        if len(_WEIGHTS_CACHE) >= _CACHE_LIMIT:
            _WEIGHTS_CACHE.pop(next(iter(_WEIGHTS_CACHE)))
        _WEIGHTS_CACHE[key] = table
    return table


def _illuminant_on_visible(illuminant, wl: np.ndarray) -> np.ndarray:
    """SPD on the grid, zero outside 380–780 nm (which takes no part in the sums)."""
    mask = _visible_mask(wl)
    spd = np.zeros_like(wl)
    spd[mask] = illuminant_table(illuminant).at(wl[mask])
    return spd


def tristimulus_weights(wavelength_nm, illuminant="D65", observer=2) -> np.ndarray:
    """Weights ``W`` (shape ``(W, 3)``) such that ``XYZ = values @ W``, with Y = 100 for a perfect reflector.

    ``W[λ] = k · S(λ) · (x̄, ȳ, z̄)(λ) · Δλ`` on the grid points within 380–780 nm (zero elsewhere),
    with ``k = 100 / Σ S ȳ Δλ``. Built once per (illuminant, observer, grid) and cached; the
    returned array is read-only.

    References
    ----------
    CIE 15:2018, *Colorimetry*, §7.1 (equations 7.1–7.3); ASTM E308-18.

    Examples
    --------
    >>> W = tristimulus_weights(default_wavelengths())
    >>> round(float(W[:, 1].sum()), 9)
    100.0
    """
    wl = _as_grid(wavelength_nm)
    obs = check_observer(observer)
    key = ("xyz", _illuminant_cache_key(illuminant), obs, wl.tobytes())

    def build():
        spd = _illuminant_on_visible(illuminant, wl)
        weights = spd[:, None] * _cmfs(obs, wl) * interval_widths(wl)[:, None]
        norm = weights[:, 1].sum()
        if not norm > 0:
            raise FilmopticError(f"illuminant {illuminant_label(illuminant)} has no power in 380–780 nm")
        return weights * (100.0 / norm)

    return _cached(key, build)


def luminous_weights(wavelength_nm, illuminant="D65") -> np.ndarray:
    """Weights (shape ``(W,)``, summing to 1) such that a luminous value is ``values @ w``.

    ``w[λ] = S(λ) V(λ) Δλ / Σ S V Δλ`` over 380–780 nm; with D65 this is ISO 9050:2003's light
    transmittance weighting. Cached and read-only.

    References
    ----------
    ISO 9050:2003, §3.3 (light transmittance τ_v) and §3.4 (light reflectance ρ_v).
    """
    wl = _as_grid(wavelength_nm)
    key = ("lum", _illuminant_cache_key(illuminant), wl.tobytes())

    def build():
        weights = _illuminant_on_visible(illuminant, wl) * photopic_efficiency(wl) * interval_widths(wl)
        total = weights.sum()
        if not total > 0:
            raise FilmopticError(f"illuminant {illuminant_label(illuminant)} has no visible power in 380–780 nm")
        return weights / total

    return _cached(key, build)


def white_point(wavelength_nm=None, illuminant="D65", observer=2) -> np.ndarray:
    """XYZ (Y = 100) of the perfect reflecting diffuser under the illuminant: the CIELAB white.

    Examples
    --------
    >>> np.round(white_point(), 2).tolist()
    [95.04, 100.0, 108.88]
    """
    wl = default_wavelengths() if wavelength_nm is None else wavelength_nm
    return tristimulus_weights(wl, illuminant, observer).sum(axis=0)


def _values_on(wl: np.ndarray, values) -> np.ndarray:
    vals = np.asarray(values, dtype=float)
    if vals.ndim == 0 or vals.shape[-1] != wl.size:
        raise FilmopticError(
            f"spectrum has {vals.shape[-1] if vals.ndim else 1} values but the grid has {wl.size} wavelengths"
        )
    return vals


def spectrum_to_XYZ(wavelength_nm, values, illuminant="D65", observer=2) -> np.ndarray:
    """CIE XYZ (0–100 scale) of reflectance or transmittance ``values`` (fractions, last axis = λ).

    Broadcasts over leading axes: ``values`` of shape ``(..., W)`` gives ``(..., 3)``.
    """
    wl = _as_grid(wavelength_nm)
    return _values_on(wl, values) @ tristimulus_weights(wl, illuminant, observer)


# --------------------------------------------------------------------------------------------
# Colour
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Colour:
    """The colour of a reflectance or transmittance spectrum.

    All arrays broadcast over the spectrum's leading axes (e.g. thicknesses, angles); for a single
    spectrum ``hex`` is a ``str`` and ``in_gamut`` a ``bool``, otherwise numpy arrays of them.

    Attributes
    ----------
    XYZ : numpy.ndarray
        CIE tristimulus values, Y on 0–100 (Y = 100 for a perfect reflector), shape ``(..., 3)``.
    xy : numpy.ndarray
        Chromaticity coordinates, shape ``(..., 2)`` (the illuminant's own for black, Y = 0).
    Lab : numpy.ndarray
        CIELAB L*, a*, b* relative to the illuminant's white, shape ``(..., 3)``.
    LCh : numpy.ndarray
        L*, chroma C*ab and hue angle h_ab in degrees [0, 360), shape ``(..., 3)``.
    rgb8 : numpy.ndarray
        sRGB (IEC 61966-2-1) 8-bit values of the displayed (gamut-mapped when needed) colour,
        shape ``(..., 3)``, integers 0–255.
    hex : str or numpy.ndarray
        The same as ``#rrggbb``.
    in_gamut : bool or numpy.ndarray
        False when the colour lies outside the sRGB gamut and ``rgb8``/``hex`` show it
        chroma-reduced at constant L* and hue.
    """

    XYZ: np.ndarray
    xy: np.ndarray
    Lab: np.ndarray
    LCh: np.ndarray
    rgb8: np.ndarray
    hex: object
    in_gamut: object

    def __getitem__(self, index) -> "Colour":
        """The colour of one entry (or a slice) of a batch, e.g. ``colours[3]``."""
        hexes = np.asarray(self.hex)[index]
        gamut = np.asarray(self.in_gamut)[index]
        return Colour(
            self.XYZ[index], self.xy[index], self.Lab[index], self.LCh[index], self.rgb8[index],
            str(hexes) if np.ndim(hexes) == 0 else hexes,
            bool(gamut) if np.ndim(gamut) == 0 else gamut,
        )


def _white_xy(wl, illuminant, observer) -> np.ndarray:
    """Chromaticity x, y of the illuminant's white: the reference white of CIELAB and of sRGB adaptation."""
    white = white_point(wl, illuminant, observer)
    return white[:2] / white.sum()


@lru_cache(maxsize=64)
def _srgb_matrix(white_key: tuple) -> np.ndarray:
    """Rows: linear sRGB of unit X, Y, Z seen under ``white`` (Bradford adaptation to D65, then
    IEC 61966-2-1); every conversion is then one matrix product (fast over sweeps)."""
    matrix = cie.XYZ_to_srgb_matrix(np.asarray(white_key))
    matrix.setflags(write=False)
    return matrix


def _in_gamut(rgb: np.ndarray) -> np.ndarray:
    """Per colour, whether linear sRGB lies within [0, 1] up to :data:`GAMUT_TOLERANCE`."""
    return np.all((rgb >= -GAMUT_TOLERANCE) & (rgb <= 1 + GAMUT_TOLERANCE), axis=-1)


def _linear_srgb(XYZ100: np.ndarray, white_xy: np.ndarray) -> np.ndarray:
    return (np.asarray(XYZ100) / 100.0) @ _srgb_matrix(tuple(float(v) for v in white_xy))


def _gamut_map(Lab: np.ndarray, white_xy: np.ndarray, iterations: int = 30) -> np.ndarray:
    """Linear sRGB of ``Lab`` (shape (n, 3)) with chroma reduced at constant L* and hue until inside.

    Bisection on the chroma scale factor, vectorised over all colours. L* is first held to
    [0, 100], where the neutral axis (scale 0) is inside the gamut.
    """
    L = np.clip(Lab[:, 0], 0.0, 100.0)
    lo = np.zeros_like(L)   # a scale known to fit
    hi = np.ones_like(L)    # a scale that does not

    def rgb_at(scale):
        lab = np.stack([L, Lab[:, 1] * scale, Lab[:, 2] * scale], axis=-1)
        return _linear_srgb(cie.Lab_to_XYZ(lab, white_xy) * 100.0, white_xy)

    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        rgb = rgb_at(mid)
        fits = _in_gamut(rgb)
        lo = np.where(fits, mid, lo)
        hi = np.where(fits, hi, mid)
    return rgb_at(lo)


_HEX_BYTES = np.array([f"{i:02x}" for i in range(256)])


def _hex(rgb8: np.ndarray):
    """``#rrggbb`` for 8-bit sRGB triples (a str for one colour, an array of str otherwise)."""
    if rgb8.ndim == 1:
        return "#" + "".join(f"{int(v):02x}" for v in rgb8)
    pairs = _HEX_BYTES[rgb8]
    return np.char.add(np.char.add(np.char.add("#", pairs[..., 0]), pairs[..., 1]), pairs[..., 2])


def colour_from_XYZ(XYZ, wavelength_nm=None, illuminant="D65", observer=2) -> Colour:
    """Build a :class:`Colour` from XYZ (0–100) seen under ``illuminant`` by ``observer``.

    The white for CIELAB is the illuminant's own (computed on ``wavelength_nm``, default 380–780 nm
    at 5 nm); sRGB uses Bradford adaptation from that white to D65.
    """
    wl = default_wavelengths() if wavelength_nm is None else wavelength_nm
    XYZ = np.asarray(XYZ, dtype=float)
    white_xy = _white_xy(wl, illuminant, observer)
    xy = cie.XYZ_to_xy(XYZ, white_xy)
    Lab = cie.XYZ_to_Lab(XYZ / 100.0, white_xy)
    LCh = cie.Lab_to_LCh(Lab)
    rgb = _linear_srgb(XYZ, white_xy)
    inside = _in_gamut(rgb)
    if not np.all(inside):
        rgb = np.array(rgb, dtype=float, copy=True)
        outside = ~inside
        rgb[outside] = _gamut_map(np.reshape(Lab[outside], (-1, 3)), white_xy)
    encoded = cie.srgb_encode(np.clip(rgb, 0.0, 1.0))
    rgb8 = np.rint(encoded * 255.0).astype(int)
    in_gamut = bool(inside) if inside.ndim == 0 else inside
    return Colour(XYZ, xy, Lab, LCh, rgb8, _hex(rgb8), in_gamut)


def colour_of(wavelength_nm, values, illuminant="D65", observer=2) -> Colour:
    """Colour of a reflectance or transmittance spectrum under an illuminant.

    Parameters
    ----------
    wavelength_nm : array_like, shape (W,)
        Strictly increasing grid covering 380–780 nm with steps of at most 10 nm there.
    values : array_like, shape (..., W)
        Reflectance or transmittance as fractions 0–1; leading axes are kept.
    illuminant : str, os.PathLike or TabulatedSpectrum
        See :func:`illuminant_spd`. Default D65.
    observer : {2, 10}
        CIE 1931 2° (default) or CIE 1964 10° standard observer.

    Returns
    -------
    Colour

    References
    ----------
    CIE 15:2018 §7 (tristimulus values, chromaticity), §8.2.1 (CIELAB); IEC 61966-2-1 (sRGB).

    Examples
    --------
    >>> wl = default_wavelengths()
    >>> grey = colour_of(wl, np.full(wl.size, 0.18), illuminant="A")
    >>> [round(float(v), 4) + 0.0 for v in grey.Lab[1:]]
    [0.0, 0.0]
    >>> colour_of(wl, np.ones(wl.size)).hex
    '#ffffff'
    """
    wl = _as_grid(wavelength_nm)
    XYZ = spectrum_to_XYZ(wl, values, illuminant, observer)
    return colour_from_XYZ(XYZ, wl, illuminant, observer)


def luminous(wavelength_nm, values, illuminant="D65"):
    """Luminous transmittance or reflectance (ISO 9050:2003), broadcasting over leading axes.

    ``τ_v = Σ S(λ) V(λ) τ(λ) Δλ / Σ S(λ) V(λ) Δλ`` over 380–780 nm, with S = D65 by default or the
    chosen illuminant (e.g. ``"A"`` for a tungsten-halogen lamp, or a lamp's measured spectrum).

    Parameters
    ----------
    wavelength_nm : array_like, shape (W,)
    values : array_like, shape (..., W)
        Transmittance or reflectance as fractions 0–1.
    illuminant : str, os.PathLike or TabulatedSpectrum

    Returns
    -------
    float or numpy.ndarray
        Shape ``values.shape[:-1]`` (a float for one spectrum).

    References
    ----------
    ISO 9050:2003, *Glass in building — Determination of light transmittance, solar direct
    transmittance, total solar energy transmittance, ultraviolet transmittance and related glazing
    factors*, §3.3–3.4; EN 410:2011.

    Examples
    --------
    >>> wl = default_wavelengths()
    >>> values = np.stack([np.full(wl.size, 0.3), np.ones(wl.size)])
    >>> luminous(wl, values, illuminant="A").round(6).tolist()
    [0.3, 1.0]
    """
    wl = _as_grid(wavelength_nm)
    result = _values_on(wl, values) @ luminous_weights(wl, illuminant)
    return float(result) if np.ndim(result) == 0 else result


def delta_e00(lab1, lab2) -> np.ndarray:
    """CIEDE2000 colour difference ΔE00 between two CIELAB colours (or :class:`Colour` results).

    Broadcasts over leading axes; returns a float for single colours.

    References
    ----------
    ISO/CIE 11664-6:2014; G. Sharma, W. Wu, E. N. Dalal, "The CIEDE2000 color-difference
    formula", Color Res. Appl. 30, 21 (2005).

    Examples
    --------
    >>> round(float(delta_e00([50, 2.6772, -79.7751], [50, 0, -82.7485])), 4)
    2.0425
    """
    a = lab1.Lab if isinstance(lab1, Colour) else np.asarray(lab1, dtype=float)
    b = lab2.Lab if isinstance(lab2, Colour) else np.asarray(lab2, dtype=float)
    if np.shape(a)[-1:] != (3,) or np.shape(b)[-1:] != (3,):
        raise FilmopticError("ΔE00 needs CIELAB colours as three numbers L*, a*, b*")
    result = cie.delta_e00(a, b)
    return float(result) if np.ndim(result) == 0 else result


# --------------------------------------------------------------------------------------------
# Appearance of a stack
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Luminous:
    """Luminous values (fractions 0–1) under the chosen illuminant (ISO 9050 with D65).

    ``R_reverse`` is None when the substrate is a half-space (there is no back side to look at).
    ``A_layers`` and ``A_substrate`` split the light absorbed, weighted the same way
    (T + R + A_layers + A_substrate = 1): in the coating, and in the substrate (inside a slab,
    or everything that enters an absorbing half-space; ``T`` is then 0).
    """

    T: object
    R: object
    R_reverse: object = None
    A_layers: object = None
    A_substrate: object = None


@dataclass(frozen=True)
class Appearance:
    """What a coated part looks like: colours seen from each side and in transmission.

    Attributes
    ----------
    reflected : Colour
        Reflected from the coated side (light from the ambient).
    reflected_reverse : Colour or None
        Reflected from the substrate side; None when the substrate is a half-space.
    transmitted : Colour or None
        Transmitted (the same from either side); None when no light comes through (the
        substrate is an absorbing half-space: a metal, silicon).
    luminous : Luminous
        Luminous T, R, R_reverse and the absorbed light, split between layers and substrate.
    angle_deg : float or numpy.ndarray
        The viewing angle(s); arrays above carry a leading angle axis when this is an array.
    illuminant : str
        Display name of the illuminant.
    observer : int
        2 or 10.
    transmission_exits : bool
        False when the substrate is an absorbing half-space (a metal, silicon): no light comes
        through, ``transmitted`` is None and luminous T is 0.
    transmission : str
        What T means, as :attr:`filmoptic.engine.Spectrum.transmission`: ``"exits"``,
        ``"enters substrate"`` or ``"opaque"``.
    """

    reflected: Colour
    reflected_reverse: Colour | None
    transmitted: Colour | None
    luminous: Luminous
    angle_deg: object = 0.0
    illuminant: str = "D65"
    observer: int = 2
    transmission_exits: bool = True
    transmission: str = "exits"


def _stack_from(stack, ambient):
    """A parsed stack from notation (in ``ambient``, default air) or a Stack as given.

    ``ambient`` belongs to the notation: with a parsed Stack it would be silently ignored, so it is
    refused instead.
    """
    from .stack import parse_stack

    if isinstance(stack, str):
        return parse_stack(stack, ambient=ambient or "air")
    if ambient is not None:
        raise TypeError("ambient is given with the stack's notation; a parsed Stack already has one")
    return stack


def appearance(stack, *, illuminant="D65", observer=2, angle_deg=0.0, ambient=None,
               wavelength_nm=None, extrapolate=False) -> Appearance:
    """Colours and luminous values of a coating stack, seen from both sides and in transmission.

    Parameters
    ----------
    stack : filmoptic.stack.Stack or str
        A stack without free values, or its notation (parsed with ``ambient``).
    illuminant, observer
        See :func:`colour_of`.
    angle_deg : float or array_like
        Angle(s) of incidence in degrees; light is unpolarised. An array gives results with a
        leading angle axis.
    ambient : str, optional
        Incident medium, only when ``stack`` is notation (default air).
    wavelength_nm : array_like, optional
        Grid for the spectra (default 380–780 nm at 5 nm).
    extrapolate : bool
        Passed to the engine (hold table end values beyond their range, with a warning).

    Returns
    -------
    Appearance

    References
    ----------
    CIE 15:2018; ISO 9050:2003 (luminous values); IEC 61966-2-1 (sRGB).
    """
    from .engine import compute

    stack = _stack_from(stack, ambient)
    if stack.parameters:
        names = ", ".join(p.name for p in stack.parameters)
        raise FilmopticError(f"the stack has unknown values ({names}); give numbers to see its colour")
    obs = check_observer(observer)
    label = check_illuminant(illuminant)
    wl = default_wavelengths() if wavelength_nm is None else _as_grid(wavelength_nm)
    angles = np.asarray(angle_deg, dtype=float)
    check_angles_deg(angles)
    angle_arg = float(angles) if angles.ndim == 0 else angles

    front = compute(stack, wl, angle_deg=angle_arg, polarization="unpolarized", extrapolate=extrapolate)
    has_back = stack.substrate.thickness_nm is not None
    back = (compute(stack, wl, angle_deg=angle_arg, polarization="unpolarized", reverse=True,
                    extrapolate=extrapolate) if has_back else None)

    def col(values):
        return colour_of(wl, values, illuminant, obs)

    opaque = front.transmission == "opaque"
    return Appearance(
        reflected=col(front.R),
        reflected_reverse=col(back.R) if has_back else None,
        transmitted=None if opaque else col(front.T),
        luminous=Luminous(
            T=luminous(wl, front.T, illuminant),
            R=luminous(wl, front.R, illuminant),
            R_reverse=luminous(wl, back.R, illuminant) if has_back else None,
            A_layers=luminous(wl, front.A_layers, illuminant),
            A_substrate=luminous(wl, front.A_substrate, illuminant),
        ),
        angle_deg=angle_arg,
        illuminant=label,
        observer=obs,
        transmission_exits=not opaque,
        transmission=front.transmission,
    )


def transmission_exits(stack, wavelength_nm=None, *, extrapolate=False) -> bool:
    """Whether transmitted light can reach an observer behind the part.

    True for a substrate slab (``glass 4mm``: light leaves through its back) and for a
    non-absorbing half-space (light travels on inside it); False for an absorbing half-space such
    as a metal or silicon, where what enters is absorbed in the substrate. This is
    :meth:`filmoptic.stack.Stack.substrate_passes_light` judged over the visible part of the grid,
    the light a colour is made of.
    """
    wl = default_wavelengths() if wavelength_nm is None else np.asarray(wavelength_nm, dtype=float)
    return stack.substrate_passes_light(wl[_visible_mask(wl)], extrapolate=extrapolate)


# --------------------------------------------------------------------------------------------
# Luminous values and XYZ over a grid, without spectra
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ColourGrid:
    """Luminous values and CIE XYZ of a stack over a grid of thickness sets (and angles).

    Computed by :func:`colour_grid` without ever holding the spectra: every chunk of the engine's
    grid is reduced to these numbers as soon as it is solved.

    Attributes
    ----------
    luminous : Luminous
        ``T``, ``R``, ``A_layers``, ``A_substrate`` (fractions), each of shape
        ``(*batch, *numpy.shape(angle_deg))``; ``R_reverse`` is None (ask with ``reverse=True``
        for light from the substrate side).
    XYZ_R, XYZ_T : numpy.ndarray
        Tristimulus values (Y = 100 for a perfect reflector) of the reflected and transmitted
        light, shape ``(…, 3)``; None when ``colours=False`` (``XYZ_T`` also when nothing comes
        through).
    wavelength_nm, illuminant, observer, angle_deg, transmission
        What was computed (``illuminant`` is the display name).
    """

    luminous: Luminous
    XYZ_R: np.ndarray | None
    XYZ_T: np.ndarray | None
    wavelength_nm: np.ndarray
    illuminant: str
    observer: int
    angle_deg: object
    transmission: str
    light: object = field(default="D65", repr=False)   # the illuminant as given (name, file or table)

    def reflected(self) -> "Colour":
        """The reflected colours (CIELAB, sRGB, …) from ``XYZ_R``."""
        return colour_from_XYZ(self.XYZ_R, self.wavelength_nm, self.light, self.observer)

    def transmitted(self) -> "Colour | None":
        """The transmitted colours from ``XYZ_T`` (None when nothing comes through)."""
        if self.XYZ_T is None:
            return None
        return colour_from_XYZ(self.XYZ_T, self.wavelength_nm, self.light, self.observer)


def colour_grid(stack, thickness_nm=None, *, illuminant="D65", observer=2, angle_deg=0.0, reverse=False,
                ambient=None, wavelength_nm=None, extrapolate=False, colours=True) -> ColourGrid:
    """Luminous values (ISO 9050) and CIE XYZ of a stack over a grid, in memory bounded by chunks.

    The engine reduces each chunk of its grid to luminous values and XYZ as soon as it has solved
    it (:func:`filmoptic.engine.compute_weighted` with the weights of :func:`luminous_weights` and
    :func:`tristimulus_weights`), so a 500 × 500 map over two layer thicknesses takes a few
    megabytes, not the gigabytes its spectra would. The values equal those of
    :func:`luminous` and :func:`spectrum_to_XYZ` applied to :func:`filmoptic.engine.compute`'s
    spectra, to rounding.

    Parameters
    ----------
    stack : filmoptic.stack.Stack or str
        The stack; its free thicknesses are supplied by ``thickness_nm``.
    thickness_nm : array_like, optional
        Shape ``(*batch, K)`` for the stack's K free thicknesses (as for
        :func:`filmoptic.engine.compute`); None for a stack without unknowns.
    illuminant, observer, ambient, wavelength_nm, extrapolate
        As for :func:`appearance`.
    angle_deg : float or array_like
        Angle(s) of incidence; an array adds its axes after the batch's.
    reverse : bool
        Light from the substrate side.
    colours : bool
        Also the XYZ of the reflected and transmitted light (default True).

    Returns
    -------
    ColourGrid

    Examples
    --------
    Luminous transmittance of a titanium semi-mirror for a 3 × 2 grid of titanium and silica
    thicknesses (the map a designer scans for 30 %):

    >>> import numpy as np
    >>> ti, sio2 = np.meshgrid([6.0, 8.0, 10.0], [0.0, 100.0], indexing="ij")
    >>> grid = colour_grid("SiO2 ? / Ti ? / glass 4mm", np.stack([sio2, ti], axis=-1))
    >>> grid.luminous.T.shape, grid.XYZ_R.shape
    ((3, 2), (3, 2, 3))
    >>> from filmoptic.engine import compute
    >>> full = compute("SiO2 100nm / Ti 8nm / glass 4mm", default_wavelengths())
    >>> bool(abs(luminous(default_wavelengths(), full.T) - grid.luminous.T[1, 1]) < 1e-15)
    True
    """
    from .engine import compute_weighted

    stack = _stack_from(stack, ambient)
    obs = check_observer(observer)
    label = check_illuminant(illuminant)
    wl = default_wavelengths() if wavelength_nm is None else _as_grid(wavelength_nm)
    lum_w = luminous_weights(wl, illuminant)
    weights = np.column_stack([lum_w, tristimulus_weights(wl, illuminant, obs)]) if colours else lum_w[:, None]
    sums = compute_weighted(stack, wl, weights, angle_deg=angle_deg, reverse=reverse, thickness_nm=thickness_nm,
                            extrapolate=extrapolate, channels=("R", "T", "A_layers", "A_substrate"))
    opaque = sums.transmission == "opaque"
    return ColourGrid(
        luminous=Luminous(T=sums.T[..., 0], R=sums.R[..., 0], A_layers=sums.A_layers[..., 0],
                          A_substrate=sums.A_substrate[..., 0]),
        XYZ_R=sums.R[..., 1:] if colours else None,
        XYZ_T=sums.T[..., 1:] if colours and not opaque else None,
        wavelength_nm=wl, illuminant=label, observer=obs, angle_deg=sums.angle_deg,
        transmission=sums.transmission, light=illuminant,
    )


# --------------------------------------------------------------------------------------------
# Colour versus thickness
# --------------------------------------------------------------------------------------------

#: Thicknesses per engine call in :func:`colour_sweep`; typical sweeps run in a single call and
#: longer ones in blocks, so that a progress bar can move (memory is bounded by the engine's
#: chunks either way: no spectrum is held).
SWEEP_BLOCK = 4096


@dataclass(frozen=True)
class ColourSweep:
    """Colour and luminous values of a stack over a range of its one free thickness.

    Attributes
    ----------
    thickness_nm : numpy.ndarray
        The thicknesses, shape ``(n,)``.
    reflected, transmitted : Colour
        Batches of ``n`` colours (reflected from the coated side; transmitted). ``transmitted``
        is None when no light comes through (an absorbing half-space substrate).
    luminous_T, luminous_R : numpy.ndarray
        Luminous transmittance and reflectance, fractions, shape ``(n,)``.
    luminous_A_layers, luminous_A_substrate : numpy.ndarray
        The light absorbed in the layers and in the substrate, weighted the same way.
    stack_text, illuminant, observer, angle_deg, ambient
        What was computed, for labels.
    transmission_exits : bool
        False when the substrate is an absorbing half-space (luminous T is then 0).
    transmission : str
        What T means, as :attr:`filmoptic.engine.Spectrum.transmission`.
    """

    thickness_nm: np.ndarray
    reflected: Colour
    transmitted: Colour | None
    luminous_T: np.ndarray
    luminous_R: np.ndarray
    stack_text: str = ""
    illuminant: str = "D65"
    observer: int = 2
    angle_deg: float = 0.0
    ambient: str = "air"
    transmission_exits: bool = True
    luminous_A_layers: np.ndarray | None = None
    luminous_A_substrate: np.ndarray | None = None
    transmission: str = "exits"


def _free_thickness_index(stack) -> int:
    params = stack.parameters
    thickness = list(stack.thickness_parameters)
    if len(params) != 1 or len(thickness) != 1:
        if not thickness:
            raise FilmopticError(
                "the stack has no unknown thickness: write '?' for the layer to sweep, e.g. 'TiO2 ? / Ti'"
            )
        names = ", ".join(p.name for p in params)
        raise FilmopticError(
            f"a sweep needs exactly one unknown, a layer thickness written '?' or LOW..HIGH; this "
            f"stack has {len(params)} ({names})"
        )
    return thickness[0]


def sweep_bounds_nm(stack) -> tuple | None:
    """The (low, high) nm written for a sweep's unknown thickness (``10..50nm``), or None for ``?``.

    Examples
    --------
    >>> from filmoptic.stack import parse_stack
    >>> sweep_bounds_nm(parse_stack("TiO2 10..50nm / Ti")), sweep_bounds_nm(parse_stack("TiO2 ? / Ti"))
    ((10.0, 50.0), None)
    """
    free = stack.parameters[_free_thickness_index(stack)].free
    return (float(free.low), float(free.high)) if free.bounded else None


def _check_inside_bounds(stack, d) -> None:
    bounds = sweep_bounds_nm(stack)
    if bounds is None:
        return
    low, high = bounds
    tol = 1e-9 * max(1.0, high)
    if d.min() < low - tol or d.max() > high + tol:
        layer = stack.parameters[_free_thickness_index(stack)]
        raise FilmopticError(
            f"the sweep {d.min():g}–{d.max():g} nm reaches outside {low:g}..{high:g} nm, the range "
            f"written for {layer.name}; sweep inside it, or widen it in the stack"
        )


def colour_sweep(stack, thickness_nm, *, illuminant="D65", observer=2, angle_deg=0.0, ambient=None,
                 wavelength_nm=None, extrapolate=False, progress=None) -> ColourSweep:
    """Colour and luminous values over a range of the stack's one free thickness, in one pass.

    The engine computes every thickness's spectrum in one vectorised call (``thickness_nm`` of
    shape ``(n, 1)``) and the colours follow as matrix products with the cached weighting tables.

    Parameters
    ----------
    stack : filmoptic.stack.Stack or str
        A stack with exactly one unknown, a thickness written ``?`` or ``LOW..HIGH``.
    thickness_nm : array_like, shape (n,)
        The thicknesses to evaluate, nm (>= 0); inside ``LOW..HIGH`` when the stack bounds the
        unknown (see :func:`sweep_bounds_nm`).
    illuminant, observer, angle_deg, ambient, wavelength_nm, extrapolate
        As for :func:`appearance` (one angle).
    progress : callable, optional
        Called with the number of thicknesses done after each block.

    Returns
    -------
    ColourSweep

    References
    ----------
    CIE 15:2018; ISO 9050:2003; Macleod, *Thin-Film Optical Filters*, ch. 2 (the engine).
    """
    from .engine import check_work, compute_weighted, interface_count

    stack = _stack_from(stack, ambient)
    _free_thickness_index(stack)
    obs = check_observer(observer)
    label = check_illuminant(illuminant)
    wl = default_wavelengths() if wavelength_nm is None else _as_grid(wavelength_nm)
    d = np.asarray(thickness_nm, dtype=float).reshape(-1)
    if d.size == 0:
        raise FilmopticError("the sweep has no thicknesses")
    if not np.all(np.isfinite(d)) or np.any(d < 0):
        raise FilmopticError("sweep thicknesses must be finite and not negative")
    _check_inside_bounds(stack, d)
    check_work(d.size * wl.size, interface_count(stack),
               f"sweeping {d.size} thicknesses × {wl.size} wavelengths × {interface_count(stack)} interfaces",
               "use a larger step or a shorter range")
    angle = float(angle_deg)
    check_angles_deg(angle)

    # Luminous weights and XYZ weights side by side: each block of thicknesses is reduced to
    # these sums inside the engine, chunk by chunk, and no spectrum is ever held.
    weights = np.column_stack([luminous_weights(wl, illuminant), tristimulus_weights(wl, illuminant, obs)])
    R_xyz, T_xyz, R_lum, T_lum, AL_lum, AS_lum = [], [], [], [], [], []
    meaning = "exits"
    for start in range(0, d.size, SWEEP_BLOCK):
        block = d[start:start + SWEEP_BLOCK]
        sums = compute_weighted(stack, wl, weights, angle_deg=angle, polarization="unpolarized",
                                thickness_nm=block[:, None], extrapolate=extrapolate,
                                channels=("R", "T", "A_layers", "A_substrate"))
        meaning = sums.transmission
        R_xyz.append(sums.R[:, 1:])
        T_xyz.append(sums.T[:, 1:])
        R_lum.append(sums.R[:, 0])
        T_lum.append(sums.T[:, 0])
        AL_lum.append(sums.A_layers[:, 0])
        AS_lum.append(sums.A_substrate[:, 0])
        if progress is not None:
            progress(block.size)
    ambient_name = getattr(stack.ambient, "name", "air")
    opaque = meaning == "opaque"
    return ColourSweep(
        thickness_nm=d,
        reflected=colour_from_XYZ(np.concatenate(R_xyz), wl, illuminant, obs),
        transmitted=None if opaque else colour_from_XYZ(np.concatenate(T_xyz), wl, illuminant, obs),
        luminous_T=np.concatenate(T_lum),
        luminous_R=np.concatenate(R_lum),
        luminous_A_layers=np.concatenate(AL_lum),
        luminous_A_substrate=np.concatenate(AS_lum),
        transmission=meaning,
        stack_text=getattr(stack, "text", ""),
        illuminant=label,
        observer=obs,
        angle_deg=angle,
        ambient=ambient_name,
        transmission_exits=not opaque,
    )
