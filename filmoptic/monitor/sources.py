"""Where a monitor's readings come from: a file being written, standard input, a serial port.

:func:`parse_input` reads what the user wrote (``run.csv``, ``-``, ``serial:/dev/ttyUSB0@9600``);
:func:`open_lines` gives an iterator of :class:`Line` objects (the text and when it arrived) and
``None`` whenever :data:`POLL_S` passes without a new line, so that the caller can keep its
display alive and give up after a timeout. Only complete lines are passed on: a line the writer
has not finished yet waits for its newline (the last line of a file read whole, with
``follow=False``, is passed on as it is).

The serial port needs the optional ``pyserial`` package (``pip install 'filmoptic[serial]'``),
the usual way to talk to serial devices from Python.
"""

from __future__ import annotations

import os
import re
import select
import sys
import time
from dataclasses import dataclass
from pathlib import Path

from filmoptic.errors import FilmopticError

__all__ = ["POLL_S", "InputSpec", "Line", "parse_input", "open_lines", "follow_file", "read_fd_lines",
           "serial_lines"]

#: How often a quiet source is checked again, seconds.
POLL_S = 0.05
#: Baud rates a serial port accepts here (the standard ones).
BAUD_RATES = (300, 600, 1200, 2400, 4800, 9600, 14400, 19200, 28800, 38400, 57600, 115200, 230400,
              460800, 921600)
_SERIAL = re.compile(r"^serial:(?P<port>[^@]+?)(?:@(?P<baud>\d+))?$", re.IGNORECASE)
#: Largest line accepted (a binary stream or a wrong baud rate gives endless garbage).
MAX_LINE = 4096


@dataclass(frozen=True)
class InputSpec:
    """An input as the user named it: ``kind`` is ``"file"``, ``"stdin"`` or ``"serial"``."""

    kind: str
    path: str | None = None
    port: str | None = None
    baud: int = 9600

    @property
    def label(self) -> str:
        if self.kind == "stdin":
            return "standard input"
        if self.kind == "serial":
            return f"serial port {self.port} at {self.baud} baud"
        return str(self.path)


@dataclass(frozen=True)
class Line:
    """A line of text (without its newline) and when it arrived (``time.monotonic()``)."""

    text: str
    arrived: float


def parse_input(text: str) -> InputSpec:
    """``-`` for standard input, ``serial:PORT@BAUD`` for a serial port, else a file path.

    Examples
    --------
    >>> parse_input("serial:/dev/ttyUSB0@115200")
    InputSpec(kind='serial', path=None, port='/dev/ttyUSB0', baud=115200)
    >>> parse_input("-").label
    'standard input'
    """
    s = str(text).strip()
    if not s:
        raise FilmopticError("INPUT is empty: give a file, - for standard input, or serial:PORT@BAUD")
    if s == "-":
        return InputSpec("stdin")
    if s.lower().startswith("serial:"):
        m = _SERIAL.match(s)
        if not m or not m.group("port").strip():
            raise FilmopticError(f"{s!r}: write a serial port as serial:PORT@BAUD, e.g. serial:/dev/ttyUSB0@9600 or serial:COM3@9600")
        baud = int(m.group("baud") or 9600)
        if baud not in BAUD_RATES:
            raise FilmopticError(f"{s!r}: {baud} is not a standard baud rate ({', '.join(map(str, BAUD_RATES))})")
        return InputSpec("serial", port=m.group("port").strip(), baud=baud)
    return InputSpec("file", path=os.path.expanduser(s))


def _decode(raw: bytes) -> str:
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        return raw.decode("latin-1")


class _Splitter:
    """Bytes in, complete lines out (``\\n``, ``\\r\\n`` or a lone ``\\r`` end a line, as
    instruments send them)."""

    def __init__(self):
        self.buffer = b""

    def feed(self, data: bytes) -> list:
        self.buffer += data
        parts = re.split(rb"\r\n|\n|\r(?!$)", self.buffer)
        self.buffer = parts.pop()
        if len(self.buffer) > MAX_LINE:
            # No line end in sight: pass the garbage on as a (bad) line rather than grow forever.
            parts.append(self.buffer)
            self.buffer = b""
        return [_decode(p) for p in parts]

    def rest(self) -> list:
        rest, self.buffer = self.buffer, b""
        text = _decode(rest).rstrip("\r")
        return [text] if text.strip() else []


def follow_file(path, *, follow: bool = True, poll_s: float = POLL_S, wait_for_file: bool = True):
    """Lines of a file, and then (``follow=True``) the lines appended to it as they are written.

    Yields :class:`Line` objects, and ``None`` after each quiet poll interval (also while the
    file does not exist yet). A file that shrinks (a logger that started over) is followed from
    its new beginning; a line saying so is not invented: the caller sees the rows start again.
    """
    path = Path(path)
    if path.is_dir():
        raise FilmopticError(f"{path} is a folder, not a file of readings")
    if not follow:
        try:
            data = path.read_bytes()
        except FileNotFoundError:
            raise FilmopticError(f"{path}: no such file") from None
        splitter = _Splitter()
        for text in splitter.feed(data) + splitter.rest():
            yield Line(text, time.monotonic())
        return
    while not path.exists():
        if not wait_for_file:
            raise FilmopticError(f"{path}: no such file")
        yield None
        time.sleep(poll_s)
    splitter = _Splitter()
    with open(path, "rb") as fh:
        position = 0
        while True:
            data = fh.read(65536)
            if data:
                position += len(data)
                for text in splitter.feed(data):
                    yield Line(text, time.monotonic())
                continue
            try:
                size = os.stat(path).st_size
            except FileNotFoundError:
                size = position
            if size < position:
                fh.seek(0)
                position = 0
                splitter = _Splitter()
                continue
            yield None
            time.sleep(poll_s)


def read_fd_lines(fd: int, *, poll_s: float = POLL_S):
    """Lines from a file descriptor (a pipe, a terminal) until it ends, with ``None`` after each
    quiet poll interval."""
    splitter = _Splitter()
    while True:
        ready, _, _ = select.select([fd], [], [], poll_s)
        if not ready:
            yield None
            continue
        data = os.read(fd, 65536)
        if not data:
            for text in splitter.rest():
                yield Line(text, time.monotonic())
            return
        for text in splitter.feed(data):
            yield Line(text, time.monotonic())


def _pyserial():
    try:
        import serial
    except ImportError:
        raise FilmopticError(
            "reading a serial port needs the pyserial package: pip install 'filmoptic[serial]'"
        ) from None
    return serial


def serial_lines(port: str, baud: int, *, poll_s: float = POLL_S):
    """Lines from a serial port (8 data bits, no parity, 1 stop bit), with ``None`` after each
    quiet poll interval. Needs pyserial."""
    serial = _pyserial()
    try:
        connection = serial.serial_for_url(port, baudrate=baud, timeout=poll_s)
    except (serial.SerialException, OSError, ValueError) as exc:
        raise FilmopticError(f"cannot open the serial port {port}: {exc}") from None
    splitter = _Splitter()
    with connection:
        while True:
            try:
                data = connection.read(connection.in_waiting or 1)
            except (serial.SerialException, OSError) as exc:
                raise FilmopticError(f"the serial port {port} failed: {exc}") from None
            if not data:
                yield None
                continue
            for text in splitter.feed(data):
                yield Line(text, time.monotonic())


def open_lines(spec: InputSpec, *, follow: bool = True, poll_s: float = POLL_S):
    """The line iterator for an input (see the module documentation)."""
    if spec.kind == "stdin":
        return read_fd_lines(sys.stdin.fileno(), poll_s=poll_s)
    if spec.kind == "serial":
        return serial_lines(spec.port, spec.baud, poll_s=poll_s)
    return follow_file(spec.path, follow=follow, poll_s=poll_s)
