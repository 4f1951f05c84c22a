"""Rows of a live monitor stream: a reading, or a time and a reading (and a reference detector).

Lines are split as the measured-spectrum reader splits them (:func:`filmoptic.inverse.measured.split_row`:
commas, semicolons, tabs or spaces; a decimal comma in semicolon- and tab-separated rows; ``#``
comments and blank lines skipped). A row holds

* one number: the reading (its time is when it arrived, or ``--interval`` apart);
* two: a time and the reading;
* three: a time, the reading and the reading of a second, *reference* detector that watches the
  source alone (so that a drift of the source divides out).

Times are seconds (from any origin), a clock time ``HH:MM:SS[.fff]`` (rolling over at midnight),
or a date and time ``YYYY-MM-DD HH:MM:SS[.fff]`` (also with ``T``). A header line names the
columns; ``t_s,reading`` (seconds from the start and the raw signal) is always understood, and so
are ``time``, ``t``, ``seconds``, ``clock``; ``reading``, ``signal``, ``value``, ``sample``,
``counts``, ``photodiode``, ``detector``; ``reference``, ``ref``, ``lamp``, ``source``.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from datetime import datetime

from filmoptic.errors import FilmopticError
from filmoptic.inverse.measured import cell_number, split_row

__all__ = ["Row", "RowReader", "parse_time_s"]

_TIME_WORDS = {"t", "t_s", "ts", "time", "time_s", "times", "seconds", "second", "sec", "secs", "s",
               "clock", "timestamp", "elapsed", "elapsed_s", "t(s)", "time(s)"}
_READING_WORDS = {"reading", "readings", "signal", "value", "values", "sample", "counts", "count",
                  "photodiode", "pd", "detector", "intensity", "raw", "v", "volts", "mv", "ma", "na",
                  "current", "voltage", "lux", "lx"}
_REFERENCE_WORDS = {"reference", "ref", "reference_reading", "ref_reading", "lamp", "source", "monitor",
                    "reference_detector", "ref_detector"}
_CLOCK = re.compile(r"^(\d{1,2}):(\d{2}):(\d{2}(?:\.\d*)?)$")
_DATE_TIME = re.compile(r"(\d{4}-\d{2}-\d{2})[ T](\d{1,2}:\d{2}:\d{2}(?:\.\d*)?)")
#: A clock that goes back by more than this has passed midnight (seconds).
_MIDNIGHT_JUMP_S = 12 * 3600.0


def _key(cell: str) -> str:
    return re.sub(r"[\s\[\]()]+", "", cell.strip().lower()).replace("-", "_")


def parse_time_s(cell: str, decimal_comma: bool = False) -> tuple:
    """A time cell as seconds, and its kind: ``"seconds"``, ``"clock"`` (seconds of the day) or
    ``"datetime"`` (seconds since 1970, local time).

    Examples
    --------
    >>> parse_time_s("12.5")
    (12.5, 'seconds')
    >>> parse_time_s("10:02:03.5")
    (36123.5, 'clock')
    >>> parse_time_s("2024-05-01T00:00:10")[1]
    'datetime'
    """
    text = cell.strip()
    number = cell_number(text, decimal_comma)
    if number is not None:
        if not math.isfinite(number):
            raise FilmopticError(f"the time {cell!r} is not a number")
        return float(number), "seconds"
    m = _CLOCK.match(text)
    if m:
        h, mnt, sec = int(m.group(1)), int(m.group(2)), float(m.group(3))
        if h > 23 or mnt > 59 or sec >= 61:
            raise FilmopticError(f"the clock time {cell!r} is not a time of day")
        return h * 3600.0 + mnt * 60.0 + sec, "clock"
    try:
        stamp = datetime.fromisoformat(text.replace("Z", "+00:00"))
    except ValueError:
        raise FilmopticError(
            f"cannot read the time {cell!r}: write seconds (12.5), a clock time (10:02:03.5) or a date "
            "and time (2024-05-01 10:02:03)"
        ) from None
    return stamp.timestamp(), "datetime"


@dataclass(frozen=True)
class Row:
    """One data row of a monitor stream.

    ``t_s`` is None when the row carries no time; ``reading`` is None for a row that cannot be
    read (then ``problem`` says why); ``reference_reading`` is the second detector's reading when
    the stream has one.
    """

    line: int
    t_s: float | None
    reading: float | None
    reference_reading: float | None = None
    problem: str | None = None


class RowReader:
    """Turns the lines of a stream into :class:`Row` objects, learning the layout as it goes.

    Examples
    --------
    >>> reader = RowReader()
    >>> reader.parse("t_s,reading", 1) is None
    True
    >>> reader.parse("0.5,812", 2)
    Row(line=2, t_s=0.5, reading=812.0, reference_reading=None, problem=None)
    >>> reader.parse("1.0,oops", 3).problem
    "line 3: the reading 'oops' is not a number"
    """

    def __init__(self):
        self.columns = None           # {"time": i, "reading": j, "reference": k} from a header
        self.header = None
        self.has_time = None          # learnt from the first data row
        self._time_kind = None
        self._clock_days = 0.0
        self._last_clock = None

    def _header(self, cells):
        keys = [_key(c) for c in cells]
        columns = {}
        for i, k in enumerate(keys):
            word = k.split("(")[0]
            if k in _TIME_WORDS or word in _TIME_WORDS or k.startswith("time"):
                columns.setdefault("time", i)
            elif k in _REFERENCE_WORDS or word in _REFERENCE_WORDS or k.startswith("ref"):
                columns.setdefault("reference", i)
            elif k in _READING_WORDS or word in _READING_WORDS or k.startswith(("reading", "signal")):
                columns.setdefault("reading", i)
        if "reading" not in columns:
            # Unnamed columns: the layout by position (reading; time, reading; time, reading, reference).
            positional = {1: ("reading",), 2: ("time", "reading"), 3: ("time", "reading", "reference")}
            if len(cells) not in positional:
                raise FilmopticError(
                    f"cannot tell which column holds the reading in the header {', '.join(cells)!r}; "
                    "name it 'reading' (e.g. t_s,reading)"
                )
            columns = {name: i for i, name in enumerate(positional[len(cells)])}
        return columns

    def _clock(self, seconds: float, kind: str) -> float:
        if self._time_kind is None:
            self._time_kind = kind
        elif kind != self._time_kind:
            raise FilmopticError(f"the times change from {self._time_kind} to {kind}")
        if kind == "clock":
            if self._last_clock is not None and seconds + self._clock_days < self._last_clock - _MIDNIGHT_JUMP_S:
                self._clock_days += 86400.0
            seconds += self._clock_days
            self._last_clock = seconds
        return seconds

    def parse(self, text: str, line: int) -> Row | None:
        """A row, or None for a blank, comment or header line."""
        stripped = text.strip().lstrip("\ufeff")
        if not stripped or stripped.startswith("#"):
            return None
        stripped = _DATE_TIME.sub(r"\1T\2", stripped)
        cells, decimal_comma = split_row(stripped)
        first_is_value = cell_number(cells[0], decimal_comma) is not None or _CLOCK.match(cells[0]) \
            or _DATE_TIME.match(cells[0].replace("T", " ", 1))
        if not first_is_value:
            if self.header is not None and [_key(c) for c in cells] == self.header:
                return None       # the same header again (a logger that restarted)
            if self.has_time is not None or self.header is not None:
                return Row(line, None, None, None, f"line {line}: {stripped[:40]!r} is not a row of numbers")
            try:
                self.columns = self._header(cells)
            except FilmopticError as exc:
                raise FilmopticError(f"line {line}: {exc}") from None
            self.header = [_key(c) for c in cells]
            self.has_time = "time" in self.columns
            return None
        positional = {1: {"reading": 0}, 2: {"time": 0, "reading": 1}, 3: {"time": 0, "reading": 1, "reference": 2}}
        if self.columns is None:
            if len(cells) not in positional:
                return Row(line, None, None, None,
                           f"line {line}: {len(cells)} columns; expected a reading, or a time and a reading "
                           "(and a reference detector's reading)")
            self.columns = positional[len(cells)]
            self.has_time = "time" in self.columns
        columns = self.columns
        if self.header is None and len(cells) != len(columns):
            return Row(line, None, None, None,
                       f"line {line}: {len(cells)} columns where earlier rows had {len(columns)}")
        width = max(columns.values()) + 1
        if len(cells) < width:
            return Row(line, None, None, None, f"line {line}: {len(cells)} columns, the header names {width}")
        t = None
        if "time" in columns:
            try:
                t = self._clock(*parse_time_s(cells[columns["time"]], decimal_comma))
            except FilmopticError as exc:
                return Row(line, None, None, None, f"line {line}: {exc}")
        value = cell_number(cells[columns["reading"]], decimal_comma)
        if value is None or not math.isfinite(value):
            return Row(line, t, None, None, f"line {line}: the reading {cells[columns['reading']]!r} is not a number")
        reference = None
        if "reference" in columns:
            reference = cell_number(cells[columns["reference"]], decimal_comma)
            if reference is None or not math.isfinite(reference):
                return Row(line, t, None, None,
                           f"line {line}: the reference detector's reading {cells[columns['reference']]!r} "
                           "is not a number")
        return Row(line, t, float(value), None if reference is None else float(reference))
