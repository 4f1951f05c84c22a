"""Writing output files whole, so that an interrupted run never leaves a half-written file.

Every table, report and plot filmoptic writes goes through :func:`write_atomically`: the content
goes to a temporary file in the destination folder, which then replaces the destination in one
rename. Files get the permissions an ordinary ``open()`` would give them (respecting the umask).
Input files are never opened for writing.
"""

from __future__ import annotations

import csv
import os
import tempfile
from pathlib import Path

from .errors import FilmopticError

__all__ = ["write_atomically", "write_csv", "temporary_sibling"]


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def temporary_sibling(path, suffix: str = ".tmp") -> Path:
    """Create an empty temporary file next to ``path`` (same folder, so the rename is atomic).

    The file is created with ordinary permissions (0666 less the umask), not the owner-only
    permissions :func:`tempfile.mkstemp` uses, so the final file is readable as users expect.
    """
    path = Path(path)
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
