"""Notes for the user on how their input was read: files, units, defaults taken.

A reader of a user's file (a readings table, a measured spectrum, an illuminant, a detector
response, an n,k table) says how it read it — the separator, the decimal mark, the unit and scale
of each column, the rows it dropped and why — and a default that fills in something the user left
out (an LED's width) says what it took. They call :func:`note` or :func:`note_file`; the command
line collects the notes of one command (:func:`collecting`) and prints each once on stderr when
the command succeeds, so that stdout (tables, JSON) stays clean and an error stays one line.

A result that is right but easily misread (a half-space substrate in a transmittance solve) is a
warning: :func:`warn` records it the same way, printed as a warning.

Outside :func:`collecting` the calls do nothing, so the Python API stays quiet.

Examples
--------
>>> with collecting() as notes:
...     note_file("parts.csv", "comma-separated, 12 rows")
...     note_file("parts.csv", "comma-separated, 12 rows")
>>> notes
[('note', 'read parts.csv: comma-separated, 12 rows')]
"""

from __future__ import annotations

from contextlib import contextmanager
from contextvars import ContextVar

__all__ = ["note", "note_file", "warn", "collecting"]

_COLLECTED: ContextVar = ContextVar("filmoptic_notes", default=None)


def note(text: str) -> None:
    """Record one note (once, however often it is recorded) for the running command."""
    _record("note", text)


def warn(text: str) -> None:
    """Record one warning (once) for the running command: the result stands, but read it with care."""
    _record("warning", text)


def _record(kind: str, text: str) -> None:
    notes = _COLLECTED.get()
    line = " ".join(str(text).split())
    if notes is not None and (kind, line) not in notes:
        notes.append((kind, line))


def note_file(path, how: str) -> None:
    """Record how the file at ``path`` was read."""
    note(f"read {path}: {how}")


@contextmanager
def collecting():
    """Collect the notes recorded inside the block into the list it yields, as ``(kind, text)``
    with kind ``"note"`` or ``"warning"``."""
    notes: list = []
    token = _COLLECTED.set(notes)
    try:
        yield notes
    finally:
        _COLLECTED.reset(token)
