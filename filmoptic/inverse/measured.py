"""Reading measured spectra: a transmittance or reflectance curve from a spectrometer export.

A measured spectrum is a small text table with one row per wavelength:

- columns are separated by commas (CSV), semicolons, tabs (TSV) or runs of spaces;
- lines starting with ``#`` and blank lines are skipped;
- an optional header row names the columns (see *Header vocabulary* below); non-numeric lines
  before it (an instrument's preamble) are skipped and mentioned in the notes;
- column 1 is the wavelength, column 2 the measured value, and an optional column 3 the value's
  standard uncertainty (one standard deviation, in the same unit as column 2);
- rows need not be sorted (they are sorted); repeated wavelengths are averaged; rows that are not
  numbers, hold NaN, or have a wavelength that is not positive are skipped and reported by line
  number in :attr:`MeasuredSpectrum.notes`. A file with no usable row is a
  :class:`~filmoptic.errors.DataFileError`.

Header vocabulary (case-insensitive)
------------------------------------
Wavelength column (always the first; energies and wavenumbers are refused)
    ``wavelength``, ``wl``, ``lambda``, ``λ``, ``nm``, ``um``/``µm``/``micron`` — with the unit in
    brackets, parentheses, after an underscore or a space: ``wavelength (nm)``, ``lambda_um``,
    ``Wavelength [µm]``, ``wl nm``. Without a unit the magnitude decides: a largest wavelength
    below 50 means micrometres (no spectrometer reports 50 nm), otherwise nanometres.
Value column
    Transmittance: ``T``, ``Tr``, ``trans``, ``transmittance``, ``transmission``,
    ``transmissivity``. Reflectance: ``R``, ``refl``, ``reflectance``, ``reflection``,
    ``reflectivity``. Percent when the name carries ``%``, ``percent`` or ``pct`` (``%T``,
    ``T (%)``, ``R[%]``, ``T_percent``); a fraction when it says ``fraction``/``frac``. Without
    either, values above 1.5 anywhere mean percent (a fraction cannot exceed 1 beyond noise).
Uncertainty column
    ``sigma``, ``σ``, ``std``, ``stdev``, ``err``, ``error``, ``uncertainty``, ``unc``, ``u``,
    ``dT``/``dR``, ``u(T)``; it is in the value column's unit (percent points if the values are
    percent).

The quantity (T or R) comes from the header, else from the ``quantity`` argument; when both are
given they must agree.

Examples
--------
>>> import pathlib, tempfile
>>> path = pathlib.Path(tempfile.mkdtemp()) / "t.csv"
>>> _ = path.write_text("wavelength (nm),T (%)\\n500,91.5\\n400,90.0\\n")
>>> s = read_spectrum(path)
>>> s.quantity, s.wavelength_nm.tolist(), s.values.tolist()
('T', [400.0, 500.0], [0.9, 0.915])
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import DataFileError
from ..files import check_row_count, numeric_rows

__all__ = ["MeasuredSpectrum", "read_spectrum", "QUANTITIES", "split_row", "cell_number"]

#: Quantities a measured spectrum can hold.
QUANTITIES = ("T", "R")

# Largest wavelength (in the file's own numbers) still read as micrometres when no unit is given.
_MICROMETRE_LIMIT = 50.0
# Largest value still read as a fraction when neither % nor "fraction" is given.
_FRACTION_LIMIT = 1.5
# After conversion a reflectance/transmittance must lie (with generous room for noise) in here.
_PLAUSIBLE = (-0.5, 1.5)

_T_WORDS = {"t", "tr", "trans", "transmittance", "transmission", "transmissivity", "transmitance"}
_R_WORDS = {"r", "refl", "reflectance", "reflection", "reflectivity", "reflect"}
_WL_WORDS = {"wavelength", "wavelengths", "wl", "lambda", "λ", "lam", "wave", "wavelength_nm"}
_SIGMA_WORDS = {
    "sigma", "σ", "std", "stdev", "sd", "err", "error", "errors", "uncertainty", "unc", "u",
    "dt", "dr", "ut", "ur", "deltat", "deltar", "stderr",
}
_NM_WORDS = {"nm", "nanometre", "nanometres", "nanometer", "nanometers"}
_UM_WORDS = {"um", "µm", "μm", "micron", "microns", "micrometre", "micrometres", "micrometer",
             "micrometers"}


@dataclass(frozen=True)
class MeasuredSpectrum:
    """A measured reflectance or transmittance curve, ready for fitting.

    Attributes
    ----------
    wavelength_nm : numpy.ndarray
        Strictly increasing wavelengths in nm, shape ``(W,)``.
    values : numpy.ndarray
        Measured values as fractions (0–1), shape ``(W,)``.
    quantity : str
        ``"T"`` or ``"R"``.
    path : pathlib.Path or None
        The file it was read from (``None`` when built in memory).
    notes : tuple of str
        What the reader inferred or skipped (unit guesses, skipped lines, averaged duplicates).
    sigma : numpy.ndarray or None
        Per-point standard uncertainty as a fraction, when the file has a third column.
    how_read : str
        How the file was read, in one line: separator, decimal mark, the unit and scale of each
        column (and whether the header or the numbers said so), rows used and dropped.
    """

    wavelength_nm: np.ndarray
    values: np.ndarray
    quantity: str
    path: Path | None = None
    notes: tuple = ()
    sigma: np.ndarray | None = field(default=None)
    how_read: str = ""

    def __len__(self) -> int:
        return int(self.wavelength_nm.size)


def _words(text: str) -> list[str]:
    """Lower-case words of a header cell; ``%`` and ``λ`` are kept as words of their own."""
    text = text.lower().replace("%", " % ")
    return [w for w in re.split(r"[\s_\-\(\)\[\]\{\}/:,;=]+", text) if w]


def _read_lines(path: Path) -> list[str]:
    from ..files import guard_input

    guard_input(path, "measured spectrum")
    if not path.exists():
        raise DataFileError(f"measured spectrum {path}: no such file")
    if path.is_dir():
        raise DataFileError(f"measured spectrum {path} is a folder, not a file")
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise DataFileError(f"measured spectrum {path}: cannot read it ({exc.strerror or exc})") from None
    if b"\x00" in raw[:4096]:
        raise DataFileError(f"measured spectrum {path} is not a text file (export it as CSV or text)")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        # Instrument software on older systems writes Latin-1 ("µm" as a single byte 0xB5).
        text = raw.decode("latin-1")
    return text.splitlines()


def _delimiter(line: str) -> str | None:
    """The column separator of a line: ',' ';' or tab, else None for runs of whitespace."""
    for sep in ("\t", ";", ","):
        if sep in line:
            return sep
    return None


def _split(line: str, sep: str | None) -> list[str]:
    if sep is None:
        return line.split()
    return [cell.strip() for cell in line.split(sep)]


def _to_float(cell: str, decimal_comma: bool = False) -> float | None:
    """A number, NaN for 'nan', or None when the cell is not a number at all."""
    if decimal_comma and "," in cell and "." not in cell:
        cell = cell.replace(",", ".")
    try:
        return float(cell)
    except ValueError:
        return None


def _split_header(line: str, sep: str | None, n_columns: int) -> list[str] | None:
    """Header cells matching the data's column count, or None when they cannot be matched."""
    cells = _split(line, sep)
    if len(cells) == n_columns:
        return cells
    if sep is None:
        # "wavelength (nm)  T (%)": glue unit-only tokens such as "(nm)" or "[%]" to the word before.
        glued: list[str] = []
        for token in line.split():
            if glued and re.fullmatch(r"[\(\[\{].*[\)\]\}]|%", token):
                glued[-1] += " " + token
            else:
                glued.append(token)
        if len(glued) == n_columns:
            return glued
        wide = [c for c in re.split(r"\s{2,}|\t", line.strip()) if c]
        if len(wide) == n_columns:
            return wide
    return None


def _wavelength_unit(cell: str) -> str | None:
    words = set(_words(cell))
    if words & _UM_WORDS or re.search(r"(?<![a-z])(um|µm|μm)(?![a-z])", cell.lower()):
        return "um"
    if words & _NM_WORDS or re.search(r"(?<![a-z])nm(?![a-z])", cell.lower()):
        return "nm"
    return None


def _value_column(cell: str) -> tuple[str | None, str | None]:
    """(quantity, scale) named by a header cell; scale is 'percent', 'fraction' or None."""
    words = _words(cell)
    compact = re.sub(r"[^a-z%]", "", cell.lower())
    quantity = None
    if any(w in _T_WORDS for w in words) or compact in {"%t", "t%"}:
        quantity = "T"
    if any(w in _R_WORDS for w in words) or compact in {"%r", "r%"}:
        quantity = "R" if quantity is None else "ambiguous"
    scale = None
    if "%" in cell or any(w in ("percent", "pct", "per", "cent") for w in words):
        scale = "percent"
    elif any(w in ("fraction", "frac", "fractional") for w in words):
        scale = "fraction"
    return quantity, scale


def _is_sigma_column(cell: str) -> bool:
    words = _words(cell)
    compact = re.sub(r"[^a-zσ]", "", cell.lower())
    return bool(set(words) & _SIGMA_WORDS) or compact in _SIGMA_WORDS


def _fast_rows(data_lines, sep, n_columns, decimal_comma):
    """(rows, line numbers, []) read in one vectorised pass, or (None, None, None) when some row
    needs the careful line-by-line reading (a word, NaN, a decimal comma, a wavelength <= 0)."""
    if decimal_comma and any("," in line for _, line in data_lines):
        return None, None, None
    table = numeric_rows([line for _, line in data_lines], sep)
    if (table is None or table.shape != (len(data_lines), n_columns)
            or not np.all(np.isfinite(table)) or np.any(table[:, 0] <= 0)):
        return None, None, None
    return table, [lineno for lineno, _ in data_lines], []


def _line_list(numbers: list[int], limit: int = 8) -> str:
    shown = ", ".join(str(n) for n in numbers[:limit])
    return shown + (f" and {len(numbers) - limit} more" if len(numbers) > limit else "")


def read_spectrum(path, quantity: str | None = None) -> MeasuredSpectrum:
    """Read a measured transmittance or reflectance spectrum from a text file.

    Parameters
    ----------
    path : str or pathlib.Path
        CSV, TSV, semicolon- or whitespace-separated text (see the module documentation for the
        layout and the header vocabulary).
    quantity : {"T", "R"}, optional
        What the file holds, when its header does not say. When the header says, the two must
        agree.

    Returns
    -------
    MeasuredSpectrum
        Sorted, de-duplicated wavelengths (nm) and values as fractions; ``notes`` lists every
        inference made and every line skipped.

    Raises
    ------
    DataFileError
        The file is missing, unreadable or holds no usable row; the columns cannot be understood;
        the quantity is unknown or contradicts ``quantity``; values are not reflectances or
        transmittances. The message names the file and, where it can, the line.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "r.txt"
    >>> _ = path.write_text("# sample 7\\nlambda_um  R\\n0.5  0.04\\n0.6  0.05\\n")
    >>> read_spectrum(path).wavelength_nm.tolist()
    [500.0, 600.0]
    """
    path = Path(path)
    if quantity is not None:
        quantity = str(quantity).strip().upper()
        if quantity not in QUANTITIES:
            raise DataFileError(f"quantity must be T or R, got {quantity!r}")
    lines = _read_lines(path)
    notes: list[str] = []

    # Rows that are not comments or blank, with their 1-based line numbers.
    content = [(i + 1, line.strip()) for i, line in enumerate(lines)
               if line.strip() and not line.lstrip().startswith("#")]
    if not content:
        raise DataFileError(f"measured spectrum {path} is empty (no data rows)")

    # The first row whose first two cells are numbers starts the data; the row just before it
    # (if any) is the header; anything earlier is an instrument preamble.
    first_data = None
    for index, (lineno, line) in enumerate(content):
        line_sep = _delimiter(line)
        cells = _split(line, line_sep)
        if len(cells) >= 2 and all(_to_float(c, line_sep in (";", "\t")) is not None for c in cells[:2]):
            first_data = index
            break
    if first_data is None:
        raise DataFileError(
            f"measured spectrum {path} has no numeric rows (expected 'wavelength, value' rows "
            f"after an optional header; line {content[0][0]} reads {content[0][1][:40]!r})"
        )
    sep = _delimiter(content[first_data][1])
    # Semicolon- and tab-separated exports from European locales write "91,5" for 91.5.
    decimal_comma = sep in (";", "\t")
    n_columns = len(_split(content[first_data][1], sep))
    if n_columns > 3:
        raise DataFileError(
            f"measured spectrum {path}, line {content[first_data][0]}: {n_columns} columns; "
            "expected 2 (wavelength, value) or 3 (wavelength, value, uncertainty)"
        )
    header_lineno, header = None, None
    if first_data > 0:
        header_lineno, header_line = content[first_data - 1]
        header = _split_header(header_line, sep, n_columns)
        if header is None:
            raise DataFileError(
                f"measured spectrum {path}, line {header_lineno}: the header names "
                f"{len(_split(header_line, sep))} columns but the data has {n_columns}; "
                "separate the names like the numbers"
            )
        if first_data > 1:
            skipped = [ln for ln, _ in content[: first_data - 1]]
            notes.append(f"skipped preamble line(s) {_line_list(skipped)}")

    # --- what the columns mean -------------------------------------------------------------
    wl_unit = _wavelength_unit(header[0]) if header else None
    file_quantity, scale = _value_column(header[1]) if header else (None, None)
    if header:
        first_words = set(_words(header[0]))
        if first_words & {"ev", "energy", "wavenumber", "wavenumbers", "cm", "cm-1", "1/cm"}:
            raise DataFileError(
                f"measured spectrum {path}, line {header_lineno}: column 1 ({header[0]!r}) is an "
                "energy or wavenumber; convert it to wavelength in nm or µm"
            )
        if _value_column(header[0])[0] in QUANTITIES and _wavelength_unit(header[1]) is not None:
            raise DataFileError(
                f"measured spectrum {path}, line {header_lineno}: the value comes before the "
                "wavelength; put the wavelength in column 1"
            )
        if not (first_words & (_WL_WORDS | _NM_WORDS | _UM_WORDS)) and wl_unit is None:
            notes.append(f"column 1 ({header[0]!r}) taken as the wavelength")
        if file_quantity == "ambiguous":
            raise DataFileError(
                f"measured spectrum {path}, line {header_lineno}: column 2 ({header[1]!r}) names "
                "both T and R; name it after one of them"
            )
        if n_columns == 3 and not _is_sigma_column(header[2]):
            raise DataFileError(
                f"measured spectrum {path}, line {header_lineno}: column 3 ({header[2]!r}) is not "
                "an uncertainty; a third column must be the value's standard uncertainty "
                "(name it e.g. 'sigma')"
            )
    if file_quantity and quantity and file_quantity != quantity:
        raise DataFileError(
            f"measured spectrum {path}: the header says {file_quantity} ({header[1]!r}) but "
            f"{quantity} was asked for"
        )
    quantity = file_quantity or quantity
    if quantity is None:
        raise DataFileError(
            f"measured spectrum {path}: cannot tell whether it holds T or R; name column 2 "
            "'T' or 'R' in a header row, or say which (--quantity)"
        )

    # --- the numbers -------------------------------------------------------------------------
    data_lines = content[first_data:]
    check_row_count(len(data_lines), f"measured spectrum {path}")
    rows, row_lines, bad = _fast_rows(data_lines, sep, n_columns, decimal_comma)
    if rows is None:
        rows, row_lines, bad = [], [], []
        for lineno, line in data_lines:
            cells = _split(line, sep)
            numbers = [_to_float(c, decimal_comma) for c in cells]
            if (len(cells) != n_columns or any(v is None for v in numbers)
                    or not all(math.isfinite(v) for v in numbers) or numbers[0] <= 0):
                bad.append(lineno)
                continue
            rows.append(tuple(numbers))
            row_lines.append(lineno)
    if not len(rows):
        raise DataFileError(
            f"measured spectrum {path} has no usable row (lines {_line_list(bad)} are not "
            f"{n_columns} finite numbers with a positive wavelength)"
        )
    if bad:
        notes.append(f"skipped line(s) {_line_list(bad)}: not numbers, NaN or a wavelength <= 0")
    data = np.array(rows, dtype=float)
    wl, values = data[:, 0], data[:, 1]
    sigma = data[:, 2] if n_columns == 3 else None

    wl_from = "header" if wl_unit is not None else "size"
    scale_from = "header" if scale is not None else "size"
    if wl_unit is None:
        wl_unit = "um" if wl.max() < _MICROMETRE_LIMIT else "nm"
        notes.append(f"wavelengths read as {'µm' if wl_unit == 'um' else 'nm'} from their size "
                     "(put the unit in the header to say so)")
    if wl_unit == "um":
        wl = wl * 1000.0
    if scale is None:
        scale = "percent" if np.nanmax(np.abs(values)) > _FRACTION_LIMIT else "fraction"
        if header is None or scale == "percent":
            notes.append(f"values read as {'percent' if scale == 'percent' else 'fractions'} from "
                         "their size (write e.g. 'T (%)' in the header to say so)")
    if scale == "percent":
        values = values / 100.0
        if sigma is not None:
            sigma = sigma / 100.0
    if values.min() < _PLAUSIBLE[0] or values.max() > _PLAUSIBLE[1]:
        where = "above" if values.max() > _PLAUSIBLE[1] else "below"
        raise DataFileError(
            f"measured spectrum {path}: values run from {values.min():g} to {values.max():g} "
            f"({where} any {quantity}); check the % in the header"
        )
    if sigma is not None and np.any(sigma <= 0):
        first_bad = row_lines[int(np.argmax(sigma <= 0))]
        raise DataFileError(
            f"measured spectrum {path}, line {first_bad}: the uncertainty (column 3) must be positive"
        )

    # --- order and duplicates ----------------------------------------------------------------
    if np.any(np.diff(wl) < 0):
        notes.append("rows sorted by wavelength")
    order = np.argsort(wl, kind="stable")
    wl, values = wl[order], values[order]
    sigma = sigma[order] if sigma is not None else None
    unique, inverse, counts = np.unique(wl, return_inverse=True, return_counts=True)
    separators = {",": "commas", ";": "semicolons", "\t": "tabs", None: "spaces"}
    columns = [f"wavelength in {'µm' if wl_unit == 'um' else 'nm'} (from the {wl_from})",
               f"{quantity} in {'percent' if scale == 'percent' else 'fractions'} (from the {scale_from})"]
    if sigma is not None:
        columns.append("its standard uncertainty, same scale")
    how = (f"{separators.get(sep, repr(sep))} between fields, decimal {'comma' if decimal_comma else 'point'}; "
           + (f"header on line {header_lineno}; " if header_lineno else "no header; ")
           + f"columns: {', '.join(columns)}; {len(rows)} rows used"
           + (f", lines {_line_list(bad)} dropped (not numbers, NaN or a wavelength <= 0)" if bad else "")
           + (f"; {wl.size - unique.size} repeated wavelength(s) averaged" if unique.size < wl.size else "")
           + ("; rows sorted by wavelength" if "rows sorted by wavelength" in notes else ""))
    from ..notes import note_file

    note_file(path, how)
    if unique.size < wl.size:
        notes.append(f"{wl.size - unique.size} repeated wavelength(s) averaged")
        values = np.bincount(inverse, weights=values) / counts
        if sigma is not None:
            # Mean of m readings: sigma of the mean is sqrt(sum sigma_i^2) / m.
            sigma = np.sqrt(np.bincount(inverse, weights=sigma**2)) / counts
    return MeasuredSpectrum(
        wavelength_nm=unique, values=np.asarray(values, float), quantity=quantity,
        path=path, notes=tuple(notes), sigma=None if sigma is None else np.asarray(sigma, float),
        how_read=how,
    )


def split_row(line: str) -> tuple[list[str], bool]:
    """The cells of one text row, split as the spectrum reader splits its rows, and whether a
    decimal comma may be meant (semicolon- and tab-separated rows, as European instruments
    write them). Other readers of instrument rows (e.g. a live monitor's readings) use it so
    that every table filmoptic reads follows the same layout rules.

    Examples
    --------
    >>> split_row("12.5;0,815")
    (['12.5', '0,815'], True)
    >>> split_row("12.5  0.815")
    (['12.5', '0.815'], False)
    """
    sep = _delimiter(line.strip())
    return _split(line.strip(), sep), sep in (";", "\t")


def cell_number(cell: str, decimal_comma: bool = False) -> float | None:
    """A cell as a number (``nan`` for 'nan'), or None when it is not a number at all.

    Examples
    --------
    >>> cell_number("0,815", decimal_comma=True), cell_number("lamp")
    (0.815, None)
    """
    return _to_float(cell.strip(), decimal_comma)
