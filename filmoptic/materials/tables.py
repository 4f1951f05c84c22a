"""Tabulated optical constants: the nkdata file format and smooth interpolation.

File format (plain text, UTF-8). A header of ``# key: value`` lines, then rows of
``wavelength_nm n k`` (whitespace, comma or tab separated; wavelengths strictly increasing;
k ≥ 0). Known header keys:

``material``, ``dataset``, ``aliases`` (comma list), ``default`` (yes/no), ``kind``,
``reference``, ``sample``, ``range_nm`` (two numbers), ``licence``, ``source``, ``formula``,
``comments``. Every key is optional in a user's file: the material is then named after the file,
and the range is that of the rows. A file with only two columns (wavelength_nm, n) means k = 0.

Between rows, n and k are interpolated separately with a shape-preserving piecewise-cubic
Hermite interpolant (PCHIP), which is smooth (continuous first derivative) and never overshoots
the data, so a tabulated k ≥ 0 stays ≥ 0.
"""

from __future__ import annotations

import functools
import math
import re

import numpy as np

from filmoptic.errors import DataFileError

from .base import KINDS, MAX_INDEX, MIN_INDEX, Material

__all__ = ["TabulatedMaterial", "read_header", "read_nk_file", "load_nk_file", "write_nk_file"]

_HEADER_RE = re.compile(r"^#\s*([A-Za-z_]+)\s*:\s*(.*?)\s*$")


class TabulatedMaterial(Material):
    """Optical constants given as a table of (wavelength, n, k), interpolated with PCHIP.

    Parameters
    ----------
    wavelength_nm, n, k : array_like
        The rows; wavelengths strictly increasing, n > 0, k ≥ 0.
    name, dataset, reference, kind : str
        As in :class:`~filmoptic.materials.base.Material`.
    header : dict, optional
        The file header (sample, licence, …) for display.

    References
    ----------
    F. N. Fritsch & R. E. Carlson, "Monotone piecewise cubic interpolation", SIAM J. Numer.
    Anal. 17, 238 (1980) (the PCHIP interpolant).

    Examples
    --------
    >>> m = TabulatedMaterial([400, 500, 600], [1.5, 1.4, 1.3], [0.1, 0.0, 0.0], name="demo")
    >>> m.nk(500.0)
    array(1.4+0.j)
    """

    def __init__(self, wavelength_nm, n, k, *, name="table", dataset="table", reference="",
                 kind="dielectric", header=None):
        wl = np.asarray(wavelength_nm, dtype=float)
        n = np.asarray(n, dtype=float)
        k = np.asarray(k, dtype=float)
        label = f"{name}:{dataset}" if dataset not in ("", "table", "file") else name
        _check_rows(wl, n, k, label)
        self.name = name
        self.dataset = dataset
        self.reference = reference
        self.kind = kind
        self.header = dict(header or {})
        self.wavelength_range_nm = (float(wl[0]), float(wl[-1]))
        for array in (wl, n, k):
            array.flags.writeable = False  # tables are shared through the cache
        self.wavelength = wl
        self.n = n
        self.k = k
        self._interpolants = None
        self._gas = _gas_formula(self.header)
        if self._gas is not None:
            # A gas (air) serves every wavelength: its published formula beyond the table.
            self.wavelength_range_nm = (0.0, math.inf)
        #: False for a library dataset that is not its name's default (set by the library).
        self.is_default = True

    @property
    def notation(self):
        if self.dataset == "file" and self.header.get("path"):
            return f"file:{self.header['path']}"
        return self.name if self.is_default else f"{self.name}:{self.dataset}"

    def interpolants(self):
        """The (n, k) PCHIP interpolants, built on first use."""
        if self._interpolants is None:
            from filmoptic.numerics.interpolate import Pchip

            self._interpolants = (Pchip(self.wavelength, self.n), Pchip(self.wavelength, self.k))
        return self._interpolants

    def _nk(self, wl):
        # Fits, designs and monitors ask again and again for the same wavelengths: the last
        # answer is kept (the caller copies it; the table never changes).
        key = (wl.shape, wl.tobytes())
        last = getattr(self, "_last", None)
        if last is not None and last[0] == key:
            return last[1]
        if self.wavelength.size == 1:
            N = np.full(wl.shape, complex(self.n[0], self.k[0]))
        elif self._gas is not None:
            N = self._gas_nk(wl)
        else:
            n_of, k_of = self.interpolants()
            N = n_of(wl) + 1j * np.maximum(k_of(wl), 0.0)
        N = np.asarray(N, dtype=complex)
        N.flags.writeable = False
        self._last = (key, N)
        return N

    def _gas_nk(self, wl):
        """Inside the table as tabulated; above it the dispersion formula of its header, which
        tends to the long-wavelength limit (1.000273 for standard air, Ciddor 1996); below it the
        first row, since the formula's pole lies in the vacuum ultraviolet (where air absorbs and
        coating work happens in vacuum). Either way within 3e-4 of 1."""
        lo, hi = self.wavelength[0], self.wavelength[-1]
        n_of, _ = self.interpolants()
        inside = np.clip(wl, lo, hi)
        n = n_of(inside)
        above = wl > hi
        if np.any(above):
            n = np.where(above, self._gas(np.where(above, wl, hi)), n)
        return n + 0j


def _gas_formula(header):
    """n(λ_nm) of a gas dispersion formula in a file header (n − 1 = C1 + Σ C2i/(C2i+1 − λ⁻²),
    λ in µm; Ciddor 1996 for air), or None for any other table."""
    formula = header.get("formula", "")
    if "(gases)" not in formula or header.get("kind", "") != "ambient":
        return None
    try:
        c = [float(x) for x in header.get("coefficients", "").split("=", 1)[1].split()]
    except (IndexError, ValueError):
        return None

    def n_of(wl_nm):
        inv2 = (np.asarray(wl_nm, dtype=float) / 1000.0) ** -2.0
        return 1.0 + c[0] + sum(c[i] / (c[i + 1] - inv2) for i in range(1, len(c) - 1, 2))

    return n_of


def check_wavelength_column(wl, label) -> None:
    """Refuse a wavelength column (nm) that does not increase strictly or is not positive.

    Shared by every reader of user tables (n,k files, illuminant and detector spectra).
    """
    if np.any(np.diff(wl) <= 0):
        i = int(np.argmax(np.diff(wl) <= 0)) + 1
        raise DataFileError(
            f"{label}: wavelengths must increase strictly from row to row "
            f"(row {i + 1}: {wl[i]:g} nm after {wl[i - 1]:g} nm)"
        )
    if wl[0] <= 0:
        raise DataFileError(f"{label}: wavelengths must be positive (nm)")


def _check_rows(wl, n, k, label):
    if wl.ndim != 1 or not (wl.shape == n.shape == k.shape) or wl.size == 0:
        raise DataFileError(f"{label}: the table needs rows of wavelength_nm, n and k")
    if not (np.all(np.isfinite(wl)) and np.all(np.isfinite(n)) and np.all(np.isfinite(k))):
        raise DataFileError(f"{label}: the table contains values that are not finite numbers")
    check_wavelength_column(wl, label)
    if np.any(n <= 0):
        raise DataFileError(f"{label}: n must be positive (found {n.min():g})")
    small = np.hypot(n, k) < MIN_INDEX
    if np.any(small):
        i = int(np.argmax(small))
        raise DataFileError(
            f"{label}: row {i + 1} (n = {n[i]:.3g}, k = {k[i]:.3g} at {wl[i]:g} nm) is not an optical "
            f"constant: |N| = √(n² + k²) must be at least {MIN_INDEX:g}"
        )
    if np.any(n > MAX_INDEX) or np.any(k > MAX_INDEX):
        i = int(np.argmax((n > MAX_INDEX) | (k > MAX_INDEX)))
        raise DataFileError(
            f"{label}: row {i + 1} (n = {n[i]:.3g}, k = {k[i]:.3g}) is not an optical constant "
            f"(n and k at most {MAX_INDEX:g})"
        )
    if np.any(k < 0):
        raise DataFileError(
            f"{label}: k must be >= 0 (found {k.min():g}); filmoptic writes N = n + i·k, so a table "
            "from a source using n − i·k needs its k column negated"
        )


_NOT_TEXT = "n,k file {path} is not a UTF-8 text file; save it as plain text with rows of wavelength_nm n k"


def read_header(path) -> dict:
    """Read only the ``# key: value`` header of an nkdata file (fast, for listings)."""
    header = {}
    try:
        with open(path, encoding="utf-8") as fh:
            for line in fh:
                stripped = line.strip()
                if not stripped:
                    continue
                if not stripped.startswith("#"):
                    break
                m = _HEADER_RE.match(stripped)
                if m:
                    key = m.group(1).lower()
                    # A key may continue over several lines ("reference" often does).
                    header[key] = f"{header[key]} {m.group(2)}".strip() if key in header else m.group(2)
    except UnicodeDecodeError:
        raise DataFileError(_NOT_TEXT.format(path=path)) from None
    except OSError as exc:
        raise DataFileError(f"cannot read {path}: {exc.strerror or exc}") from None
    return header


def _parse_rows(path) -> np.ndarray:
    from filmoptic.files import check_row_count

    try:
        with open(path, encoding="utf-8") as fh:
            lines = fh.read().splitlines()
    except FileNotFoundError:
        raise DataFileError(f"n,k file {path} does not exist") from None
    except IsADirectoryError:
        raise DataFileError(f"n,k file {path} is a folder, not a file") from None
    except UnicodeDecodeError:
        raise DataFileError(_NOT_TEXT.format(path=path)) from None
    except OSError as exc:
        raise DataFileError(f"cannot read n,k file {path}: {exc.strerror or exc}") from None
    check_row_count(len(lines), f"n,k file {path}")
    table = _fast_table(lines)
    if table is None:
        table = _careful_table(lines, path)
    if table.shape[1] == 2:
        table = np.column_stack([table, np.zeros(len(table))])
    return table


def _fast_table(lines):
    """The rows in one vectorised pass (after any title lines), or None to read them carefully."""
    from filmoptic.files import numeric_rows

    start = 0
    while start < len(lines) and start < 50:
        first = re.split(r"[,\s;]+", lines[start].split("#", 1)[0].strip())[0]
        try:
            float(first)
            break
        except ValueError:
            start += 1
    table = numeric_rows([line.replace(",", " ").replace(";", " ") for line in lines[start:]], comments="#")
    return table if table is not None and table.shape[1] in (2, 3) else None


def _careful_table(lines, path) -> np.ndarray:
    """Line by line, saying which line is wrong (the fast reading found something irregular)."""
    rows = []
    for lineno, line in enumerate(lines, 1):
        stripped = line.split("#", 1)[0].strip()
        if not stripped:
            continue
        parts = [p for p in re.split(r"[,\s;]+", stripped) if p]
        try:
            values = [float(p) for p in parts]
        except ValueError:
            if not rows:  # a column-title line before the data is fine
                continue
            raise DataFileError(f"{path}, line {lineno}: expected numbers, got {stripped[:80]!r}") from None
        if len(values) not in (2, 3):
            # "1,5" as a decimal comma splits into two columns.
            comma = "; write decimals with '.', not ','" if "," in stripped else ""
            raise DataFileError(
                f"{path}, line {lineno}: expected 2 or 3 columns (wavelength_nm n [k]), "
                f"got {len(values)}{comma}"
            )
        if rows and len(values) != len(rows[0]):
            raise DataFileError(f"{path}, line {lineno}: every row needs the same number of columns")
        rows.append(values)
    if not rows:
        raise DataFileError(f"n,k file {path} has no rows of wavelength_nm n k")
    return np.array(rows, dtype=float)


def header_range(header, fallback=None):
    """The ``range_nm`` of a header as two floats (or ``fallback``)."""
    text = header.get("range_nm", "")
    numbers = re.findall(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?", text)
    if len(numbers) >= 2:
        return float(numbers[0]), float(numbers[1])
    return fallback


def read_nk_file(path, *, name=None) -> TabulatedMaterial:
    """Read an nkdata-format file into a :class:`TabulatedMaterial` (uncached)."""
    from filmoptic.files import guard_input

    path = guard_input(path, "n,k file")
    header = read_header(path)
    table = _parse_rows(path)
    wl, n, k = table.T
    name = header.get("material") or name or path.stem.split("__")[0]
    dataset = header.get("dataset") or "file"
    kind = header.get("kind", "dielectric").strip().lower() or "dielectric"
    if kind not in KINDS:
        raise DataFileError(f"{path}: kind must be one of {', '.join(KINDS)}, got {kind!r}")
    # A header that states its range knows its unit; a bare table ending below 50 "nm" is far
    # more likely a table in micrometres than extreme-ultraviolet data.
    if wl[-1] < 50 and "range_nm" not in header:
        raise DataFileError(
            f"{path}: the wavelengths end at {wl[-1]:g}, which looks like micrometres; "
            "the first column must be in nm"
        )
    material = TabulatedMaterial(
        wl, n, k, name=name, dataset=dataset, reference=header.get("reference", ""), kind=kind,
        header=header,
    )
    material.how_read = _how_read(path, table, header)
    return material


def _how_read(path, table, header) -> str:
    """How an n,k file was read, in a line for the user (separator, columns, units, header)."""
    separator, title = "spaces", False
    with open(path, encoding="utf-8") as fh:
        for line in fh:
            stripped = line.split("#", 1)[0].strip()
            if not stripped:
                continue
            try:
                [float(p) for p in re.split(r"[,\s;]+", stripped) if p]
            except ValueError:
                title = True
                continue
            separator = next((name for mark, name in ((";", "semicolons"), (",", "commas"), ("\t", "tabs"))
                              if mark in line), "spaces")
            break
    two = bool(np.all(table[:, 2] == 0)) and "k" not in header
    columns = "wavelength (nm), n" + (", k" if not two else " (k taken as 0: no third column)")
    extra = f"; header keys {', '.join(sorted(header))}" if header else ""
    return (f"{separator} between fields, decimal point; columns {columns}; {len(table)} rows"
            + ("; a column-title line skipped" if title else "") + extra)


@functools.lru_cache(maxsize=256)
def _cached(path_text: str, mtime_ns: int, size: int) -> TabulatedMaterial:
    return read_nk_file(path_text)


def load_nk_file(path) -> TabulatedMaterial:
    """Load a user's n,k file (``file:PATH``); parsed once and cached while unchanged.

    Parameters
    ----------
    path : str or path-like
        A file of rows ``wavelength_nm n k`` (or ``wavelength_nm n``), optionally with the
        ``# key: value`` header of the shipped tables.

    Returns
    -------
    TabulatedMaterial
    """
    from filmoptic.files import guard_input

    path = guard_input(path, "n,k file")
    try:
        st = path.stat()
    except FileNotFoundError:
        raise DataFileError(f"n,k file {path} does not exist") from None
    except OSError as exc:
        raise DataFileError(f"cannot read n,k file {path}: {exc}") from None
    if path.is_dir():
        raise DataFileError(f"n,k file {path} is a folder, not a file")
    return _cached(str(path.resolve()), st.st_mtime_ns, st.st_size)


def _format_value(x: float) -> str:
    return f"{x:.10g}"


def write_nk_file(fh, header: dict, wavelength_nm, n, k) -> None:
    """Write an nkdata file: ``# key: value`` header lines, then ``wavelength_nm n k`` rows."""
    fh.write("# filmoptic optical constants (N = n + i k, k >= 0; wavelengths in nm)\n")
    for key, value in header.items():
        fh.write(f"# {key}: {value}\n")
    fh.write("# columns: wavelength_nm n k\n")
    for w, nn, kk in zip(wavelength_nm, n, k):
        fh.write(f"{_format_value(w)} {_format_value(nn)} {_format_value(kk)}\n")


