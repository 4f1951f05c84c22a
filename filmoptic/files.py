"""Files a command reads and writes: inputs are guarded, outputs written whole and never over an input.

Outputs
    Every table, report and plot filmoptic writes goes through :func:`write_atomically` (or
    :func:`temporary_sibling`, which :func:`filmoptic.plots.save_figure` uses): the content goes to
    a temporary file in the destination folder, which then replaces the destination in one rename.
    Files get the permissions an ordinary ``open()`` would give them (respecting the umask).

Inputs
    Every reader (n,k tables, the library folders, measured spectra, light and detector spectra,
    solve files, readings) calls :func:`guard_input` before it reads a file: the file's size is
    checked against :data:`filmoptic.limits.FILE_BYTES`, and inside an :func:`input_guard` (the
    command line runs every command in one) the file is recorded as an input of the run. A folder
    whose contents are read (the user library named by ``FILMOPTIC_NKDATA``) is recorded with
    :func:`note_input_folder`.

The one rule
    No output replaces an input of the same run, and no output becomes one of the files of a folder
    the run reads as a whole (a ``*.txt`` or ``*.nk`` file in a library folder). Files are compared by identity (device and inode, as
    :func:`os.path.samefile` does) and by resolved real path, so no spelling (``./x``, ``sub/../x``,
    another letter case on a case-insensitive disk, a symbolic or hard link) gets around it.
    :func:`check_not_input` applies the rule; :func:`write_atomically` and
    :func:`temporary_sibling` apply it to every output, and the command line also applies it to
    the file names on the command line before any work starts.

Examples
--------
>>> import pathlib, tempfile
>>> folder = pathlib.Path(tempfile.mkdtemp())
>>> table = folder / "film.txt"
>>> _ = table.write_text("400 1.5 0\\n800 1.5 0\\n")
>>> with input_guard():
...     _ = guard_input(table, "n,k file")
...     try:
...         write_csv(folder / "." / "film.txt", ["a"], [[1]])
...     except FilmopticError as exc:
...         print(exc)            # doctest: +ELLIPSIS
cannot write .../film.txt: it is an input of this run (.../film.txt); input files are never written, choose another name
>>> table.read_text()
'400 1.5 0\\n800 1.5 0\\n'
"""

from __future__ import annotations

import contextvars
import csv
import os
import tempfile
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

from .errors import DataFileError, FilmopticError

__all__ = [
    "write_atomically",
    "write_csv",
    "temporary_sibling",
    "input_guard",
    "guard_input",
    "note_input",
    "read_json_input",
    "numeric_rows",
    "check_row_count",
    "note_input_folder",
    "input_conflict",
    "check_not_input",
    "same_file",
]


# ----------------------------------------------------------------------------------------------
# Inputs
# ----------------------------------------------------------------------------------------------
@dataclass
class _Inputs:
    """What one run has read: files and whole folders, by identity and by real path."""

    files: dict = field(default_factory=dict)       # (st_dev, st_ino) or real path -> as written
    folders: dict = field(default_factory=dict)     # same keys -> (as written, suffixes read)


_CURRENT = contextvars.ContextVar("filmoptic_inputs", default=None)


@contextmanager
def input_guard():
    """Record every input read inside the block, and refuse any output that would replace one.

    The command line runs each command inside one; a Python program may use it the same way.
    Blocks may nest: an inner block adds to the outer one's record.
    """
    if _CURRENT.get() is not None:
        yield _CURRENT.get()
        return
    token = _CURRENT.set(_Inputs())
    try:
        yield _CURRENT.get()
    finally:
        _CURRENT.reset(token)


def _keys(path) -> list:
    """Identity keys of an existing path: (device, inode) and its resolved real path."""
    keys = [os.path.realpath(os.path.expanduser(str(path)))]
    try:
        st = os.stat(os.path.expanduser(str(path)))
    except (OSError, ValueError):
        return keys
    return [(st.st_dev, st.st_ino), *keys]


def note_input(path) -> None:
    """Record ``path`` as an input of the current run (if it exists; nothing outside a guard)."""
    inputs = _CURRENT.get()
    if inputs is not None and os.path.exists(os.path.expanduser(str(path))):
        for key in _keys(path):
            inputs.files.setdefault(key, str(path))


def guard_input(path, what: str = "input file") -> Path:
    """Check an input file before reading it, and record it as an input of the current run.

    The file's size must be within :data:`filmoptic.limits.FILE_BYTES` (a multi-gigabyte file
    given by mistake is refused at once instead of filling the memory). A path that does not
    exist or is a folder passes unchanged: the reader reports that in its own words.

    Parameters
    ----------
    path : str or os.PathLike
        The file about to be read.
    what : str
        What the file is, for the message (``"measured spectrum"``).

    Returns
    -------
    pathlib.Path
    """
    from .limits import FILE_BYTES

    path = Path(os.path.expanduser(str(path)))
    note_input(path)
    try:
        size = path.stat().st_size if path.is_file() else None
    except (OSError, ValueError):
        size = None
    if size is not None:
        FILE_BYTES.check(size, f"{what} {path}", error=DataFileError)
    return path


def read_json_input(path, what: str = "JSON file"):
    """Read a JSON input file, guarded: size (:func:`guard_input`) and nesting depth.

    The nesting is measured before parsing (:data:`filmoptic.limits.JSON_DEPTH`), so a file of a
    hundred thousand ``[`` is refused with one line instead of exhausting the parser's recursion.

    Raises
    ------
    DataFileError
        The file is missing, unreadable, not UTF-8, not JSON, or too large or too deep.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "deep.json"
    >>> _ = path.write_text("[" * 1000 + "]" * 1000)
    >>> read_json_input(path, "solve file")       # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    filmoptic.errors.DataFileError: solve file .../deep.json: 1 000 levels of nesting is more than the limit of 64 ...
    """
    import json
    import re

    import numpy as np

    from .limits import JSON_DEPTH

    path = guard_input(path, what)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise DataFileError(f"{what} {path}: no such file") from None
    except IsADirectoryError:
        raise DataFileError(f"{what} {path} is a folder, not a file") from None
    except UnicodeDecodeError:
        raise DataFileError(f"{what} {path} is not a UTF-8 text file") from None
    except OSError as exc:
        raise DataFileError(f"{what} {path}: cannot read it ({exc.strerror or exc})") from None
    # Depth without recursion: drop the strings, then a running sum of opening minus closing
    # brackets (vectorised, so a large file costs milliseconds).
    skeleton = re.sub(r'"(?:[^"\\]|\\.)*"', "", text).encode("utf-8", "replace")
    codes = np.frombuffer(skeleton, dtype=np.uint8)
    steps = np.isin(codes, (ord("["), ord("{"))).astype(np.int64)
    steps -= np.isin(codes, (ord("]"), ord("}")))
    depth = int(np.cumsum(steps).max(initial=0))
    JSON_DEPTH.check(depth, f"{what} {path}", error=DataFileError)
    try:
        return json.loads(text)
    except (ValueError, RecursionError) as exc:
        where = f" (line {exc.lineno})" if isinstance(exc, json.JSONDecodeError) else ""
        raise DataFileError(f"{what} {path} is not valid JSON{where}") from None


def check_row_count(count: int, what: str) -> None:
    """Refuse an input table with more rows than :data:`filmoptic.limits.FILE_ROWS`."""
    from .limits import FILE_ROWS

    FILE_ROWS.check(count, what, "give a shorter file", error=DataFileError)


def numeric_rows(lines, delimiter=None, comments=None):
    """Lines of plain numbers as a 2-D float array in one vectorised pass, or None.

    None means some line is not plain numbers in a constant number of columns (a title line, a
    word, a missing field): the caller then reads line by line to say which. Blank lines are
    skipped; ``delimiter`` None splits on white space; ``comments`` starts a comment (e.g. ``#``).
    Reading 100 000 rows this way takes milliseconds instead of the better part of a second.

    Examples
    --------
    >>> numeric_rows(["400, 1.5", "500, 1.4"], ",").tolist()
    [[400.0, 1.5], [500.0, 1.4]]
    >>> numeric_rows(["wavelength, n", "400, 1.5"], ",") is None
    True
    """
    import warnings

    import numpy as np

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")     # numpy warns about an empty input
            table = np.loadtxt(lines, delimiter=delimiter, comments=comments, ndmin=2, dtype=float)
    except (ValueError, IndexError, TypeError):
        return None
    return table if table.size else None


def note_input_folder(path, suffixes=(".txt", ".nk")) -> None:
    """Record a folder whose files named ``*.SUFFIX`` (any letter case, not hidden) the current
    run reads as a whole, as the library reads its folders: no output of such a name may be
    written into it, since the next run would read it as one of the folder's files."""
    inputs = _CURRENT.get()
    if inputs is not None and os.path.isdir(os.path.expanduser(str(path))):
        for key in _keys(path):
            inputs.folders.setdefault(key, (str(path), tuple(s.lower() for s in suffixes)))


def same_file(a, b) -> bool:
    """Whether two paths name the same existing file (:func:`os.path.samefile`, never raising)."""
    try:
        return os.path.samefile(a, b)
    except (OSError, ValueError):
        return False


def input_conflict(path) -> str | None:
    """Why writing ``path`` would replace an input of the current run, or None.

    An output conflicts when it is one of the run's input files (same device and inode, or the
    same resolved real path) or would be one of the files of a folder the run reads as a whole.
    """
    inputs = _CURRENT.get()
    if inputs is None:
        return None
    for key in _keys(path):
        if key in inputs.files:
            return f"it is an input of this run ({inputs.files[key]})"
    full = os.path.abspath(os.path.expanduser(str(path)))
    name = os.path.basename(full)
    for key in _keys(os.path.dirname(full)):
        if key in inputs.folders:
            folder, suffixes = inputs.folders[key]
            if name.lower().endswith(suffixes) and not name.startswith("."):
                return (f"it would become one of the tables of {folder}, a library folder this run "
                        f"reads (every {'/'.join(suffixes)} file there is read)")
    return None


def check_not_input(path) -> None:
    """Refuse (:class:`~filmoptic.errors.FilmopticError`) an output that would replace an input."""
    reason = input_conflict(path)
    if reason:
        raise FilmopticError(
            f"cannot write {path}: {reason}; input files are never written, choose another name"
        )


# ----------------------------------------------------------------------------------------------
# Outputs
# ----------------------------------------------------------------------------------------------


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def temporary_sibling(path, suffix: str = ".tmp") -> Path:
    """Create an empty temporary file next to ``path`` (same folder, so the rename is atomic).

    ``path`` is first checked against the run's inputs (:func:`check_not_input`): every output
    passes here. The file is created with ordinary permissions (0666 less the umask), not the
    owner-only permissions :func:`tempfile.mkstemp` uses, so the final file is readable as users
    expect.
    """
    path = Path(path)
    check_not_input(path)
    directory = path.parent if str(path.parent) else Path(".")
    if not directory.is_dir():
        raise FilmopticError(f"cannot write {path}: folder {directory} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=suffix, dir=directory)
    os.close(fd)
    os.chmod(tmp, 0o666 & ~_umask())
    return Path(tmp)


def write_atomically(path, write, mode: str = "w") -> Path:
    """Write a whole file through ``write(fileobj)``: to a temporary file first, then rename.

    Parameters
    ----------
    path : str or Path
        Destination; its folder must exist.
    write : callable
        Called with the open temporary file.
    mode : str
        ``"w"`` (text, UTF-8) or ``"wb"``.
    """
    path = Path(path)
    tmp = temporary_sibling(path)
    try:
        kwargs = {} if "b" in mode else {"encoding": "utf-8", "newline": ""}
        with open(tmp, mode, **kwargs) as fh:
            write(fh)
        os.replace(tmp, path)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    return path


def write_csv(path, header, rows) -> Path:
    """Write a CSV table (a header row, then ``rows``) atomically."""

    def write(fh):
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(rows)

    return write_atomically(path, write)
