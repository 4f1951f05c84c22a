"""Documented limits on the size of work, so that every command answers within seconds or refuses at once.

A request past one of these limits is almost always a typo (a step of ``1e-9`` instead of ``1``, a
repeat count with an extra digit, the wrong file); it is refused at once with one line that names
the limit and the environment variable that raises it, instead of running for minutes or running
out of memory. Each limit can be raised (or lowered) for one run by setting its variable, e.g.::

    FILMOPTIC_MAX_WORK=1e9 filmoptic spectrum "…" --wl 200:2500:0.001

============================  ==========================  ===================================================
limit                         environment variable        what it bounds (default)
============================  ==========================  ===================================================
:data:`GRID_POINTS`           ``FILMOPTIC_MAX_POINTS``    points of one wavelength, thickness or angle grid
                                                          (1 000 000)
:data:`WORK`                  ``FILMOPTIC_MAX_WORK``      one calculation's grid points × interfaces:
                                                          wavelengths × thickness sets × angles × (layers + 1)
                                                          (200 000 000: about ten seconds on one core)
:data:`LAYERS`                ``FILMOPTIC_MAX_LAYERS``    layers a stack expands to, repeats included
                                                          (100 000; a repeat count alone at most 10 000)
:data:`STACK_CHARACTERS`      ``FILMOPTIC_MAX_STACK``     characters in a written stack (1 000 000)
:data:`FILE_ROWS`             ``FILMOPTIC_MAX_ROWS``      rows of an input table (2 000 000)
:data:`FILE_BYTES`            ``FILMOPTIC_MAX_FILE_MB``   size of an input file, MB (200)
:data:`JSON_DEPTH`            ``FILMOPTIC_MAX_DEPTH``     nesting of a JSON input (64; a solve file needs 4)
============================  ==========================  ===================================================

The work limit is applied twice: each calculation is checked before it starts (refused at once
when it alone is too large), and inside :func:`work_budget` (the command line runs every command
in one) the work of all calculations of the command is added up, so that a job made of many
small calculations (refining dozens of roots of a thousand-layer stack) stops with one line once
it has done the limit's worth of work, instead of running for minutes.

Numbers are also bounded where they are read: a number written with more than
:data:`NUMBER_CHARACTERS` characters is refused (no measured or designed value needs them, and
turning a 100 000-digit string into a number is slow).

Examples
--------
>>> WORK.value() >= 1
True
>>> WORK.check(10, "a tiny job")     # within the limit: nothing happens
"""

from __future__ import annotations

import contextvars
import math
import os
from contextlib import contextmanager
from dataclasses import dataclass

from .errors import FilmopticError

__all__ = [
    "Limit",
    "GRID_POINTS",
    "WORK",
    "LAYERS",
    "REPEAT_COUNT",
    "STACK_CHARACTERS",
    "FILE_ROWS",
    "FILE_BYTES",
    "JSON_DEPTH",
    "NUMBER_CHARACTERS",
    "check_number_text",
    "work_budget",
    "charge_work",
]


@dataclass(frozen=True)
class Limit:
    """One documented limit: a default, and the environment variable that changes it.

    Attributes
    ----------
    variable : str
        Environment variable that sets the limit for a run (a positive number; ``1e9`` is fine).
    default : float
        The limit when the variable is not set.
    what : str
        What is counted, for messages (``"grid points"``).
    scale : float
        The variable's unit in the counted unit (1e6 for a size given in MB).
    """

    variable: str
    default: float
    what: str
    scale: float = 1.0

    def value(self) -> float:
        """The limit in force: the environment variable when set, else the default."""
        text = os.environ.get(self.variable, "").strip()
        if not text:
            return self.default
        try:
            value = float(text) * self.scale
        except ValueError:
            value = math.nan
        if not (math.isfinite(value) and value >= 1):
            raise FilmopticError(f"{self.variable} must be a positive number, got {text!r}")
        return value

    def check(self, amount: float, request: str, fix: str = "", error=FilmopticError) -> None:
        """Refuse ``amount`` above the limit, naming the request, a fix and the variable.

        Parameters
        ----------
        amount : float
            What the request needs, counted as :attr:`what`.
        request : str
            The request in the user's terms, e.g. ``"--wl 400:700:1e-6"``.
        fix : str, optional
            How to ask for less (``"use a coarser step"``); the variable is always named.
        error : type, optional
            The :class:`~filmoptic.errors.FilmopticError` subclass to raise.
        """
        limit = self.value()
        if not amount <= limit:        # also refuses NaN
            amount_text = _count(amount)
            advice = f"{fix}, or set " if fix else "set "
            raise error(
                f"{request}: {amount_text} {self.what} is more than the limit of "
                f"{_count(limit / self.scale)}{' MB' if self.scale != 1 else ''} ({advice}"
                f"{self.variable} to raise it)"
            )


def _count(amount: float) -> str:
    if not math.isfinite(amount):
        return "infinitely many" if amount > 0 else str(amount)
    if amount < 1e15:
        return f"{int(round(amount)):,}".replace(",", " ")
    return f"{amount:.3g}"


#: Points of one wavelength, thickness or angle grid.
GRID_POINTS = Limit("FILMOPTIC_MAX_POINTS", 1_000_000, "grid points")
#: Grid points × interfaces of one calculation (wavelengths × thickness sets × angles × (layers + 1));
#: a sweep, a solve's grid and a fit's global search and refinement each count as one.
WORK = Limit("FILMOPTIC_MAX_WORK", 200_000_000, "grid points × interfaces")
#: Layers a stack may expand to, repeat groups included.
LAYERS = Limit("FILMOPTIC_MAX_LAYERS", 100_000, "layers")
#: Largest repeat count of one group (more is a typo, not a coating).
REPEAT_COUNT = 10_000
#: Characters of a written stack.
STACK_CHARACTERS = Limit("FILMOPTIC_MAX_STACK", 1_000_000, "characters")
#: Rows of an input table (n,k file, measured spectrum, readings, light or detector spectrum).
FILE_ROWS = Limit("FILMOPTIC_MAX_ROWS", 2_000_000, "rows")
#: Size of an input file, in bytes (the variable is in MB).
FILE_BYTES = Limit("FILMOPTIC_MAX_FILE_MB", 200e6, "bytes", scale=1e6)
#: Nesting depth of a JSON input.
JSON_DEPTH = Limit("FILMOPTIC_MAX_DEPTH", 64, "levels of nesting")
#: Characters in one written number (a thickness, an index, a repeat count).
NUMBER_CHARACTERS = 100

def check_number_text(text: str, what: str) -> None:
    """Refuse a number written with more than :data:`NUMBER_CHARACTERS` characters.

    Examples
    --------
    >>> check_number_text("55.5", "thickness")
    >>> check_number_text("1" * 200, "thickness")
    Traceback (most recent call last):
    ...
    filmoptic.errors.FilmopticError: thickness: a number written with 200 characters is not a measurement or a design value (at most 100)
    """
    if len(text) > NUMBER_CHARACTERS:
        raise FilmopticError(
            f"{what}: a number written with {len(text)} characters is not a measurement or a design "
            f"value (at most {NUMBER_CHARACTERS})"
        )


_SPENT = contextvars.ContextVar("filmoptic_work", default=None)


@contextmanager
def work_budget():
    """Add up the work of every calculation inside the block (:func:`charge_work`) and stop the
    block once it passes :data:`WORK`. Blocks may nest: an inner one shares the outer budget."""
    if _SPENT.get() is not None:
        yield
        return
    token = _SPENT.set([0.0])
    try:
        yield
    finally:
        _SPENT.reset(token)


def charge_work(amount: float) -> None:
    """Count ``amount`` of work (grid points × interfaces) against the current :func:`work_budget`.

    Raises
    ------
    FilmopticError
        When the block's total passes :data:`WORK`, naming the variable that raises it.
    """
    spent = _SPENT.get()
    if spent is None:
        return
    spent[0] += amount
    limit = WORK.value()
    if spent[0] > limit:
        raise FilmopticError(
            f"stopped after {_count(spent[0])} grid points × interfaces of work, the limit for one "
            f"command ({_count(limit)}): ask for less (fewer layers, wavelengths, thicknesses or "
            f"solutions), or set {WORK.variable} to raise it"
        )
