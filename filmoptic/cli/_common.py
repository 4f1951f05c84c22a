"""Pieces shared by the sub-commands: option types, output, files, progress.

Kept free of heavy imports: numpy is imported by the functions that need it.
"""

from __future__ import annotations

import json
import math
import sys
from contextlib import contextmanager
from pathlib import Path

import click

from filmoptic.errors import FilmopticError
from filmoptic.files import write_atomically as _write_atomically

__all__ = [
    "user_errors",
    "AngleType",
    "json_option",
    "ambient_option",
    "angle_option",
    "extrapolate_option",
    "paper_option",
    "emit_json",
    "to_jsonable",
    "print_table",
    "percent",
    "write_atomically",
    "check_output_path",
    "save_plot",
    "progress",
    "late_progress",
    "echo_caution",
    "WavelengthsType",
    "FractionType",
    "FiniteFloatRange",
    "transmission_note",
    "echo_surface_oxides",
    "warn_thin_metal",
    "PolarizationType",
]


@contextmanager
def user_errors():
    """Turn a :class:`FilmopticError` into a click error (one line, exit code 2)."""
    try:
        yield
    except FilmopticError as exc:
        raise click.UsageError(str(exc)) from None


json_option = click.option(
    "--json", "as_json", is_flag=True, help="Print machine-readable JSON on stdout (and nothing else)."
)
ambient_option = click.option(
    "--ambient", default="air", show_default=True, metavar="MATERIAL",
    help="Medium the light comes from (and that lies behind a thick substrate).",
)


class AngleType(click.ParamType):
    """An angle of incidence in degrees, 0 to 89.999; ``45``, ``45°``, ``45deg`` and ``0.785rad``
    all read (a bare small number is degrees, with a warning; see
    :func:`filmoptic.units.parse_angle_deg`)."""

    name = "DEG"

    def convert(self, value, param, ctx):
        if isinstance(value, (int, float)):
            return float(value)
        from filmoptic.units import parse_angle_deg

        what = f"--{param.name}" if param else "angle"
        try:
            return parse_angle_deg(value, what)
        except FilmopticError as exc:
            raise click.UsageError(f"{exc} (degrees from the normal, e.g. 45, or radians written 0.785rad)") from None


angle_option = click.option(
    "--angle", type=AngleType(), default=0.0, show_default=True, metavar="DEG",
    help="Angle of incidence in the ambient, degrees from the normal (0 to 89.999); radians only "
         "when written so (0.785rad).",
)
extrapolate_option = click.option(
    "--extrapolate", is_flag=True,
    help="Allow wavelengths outside a table's range by holding its end values (with a warning).",
)


class PolarizationType(click.Choice):
    """s, p or unpolarized; both English spellings (unpolarised) and any case."""

    def __init__(self):
        super().__init__(["s", "p", "unpolarized", "unpolarised"], case_sensitive=False)

    def convert(self, value, param, ctx):
        chosen = super().convert(value, param, ctx)
        return "unpolarized" if str(chosen).lower().startswith("unpolari") else str(chosen).lower()


paper_option = click.option(
    "--paper", type=click.Choice(["a4", "letter"], case_sensitive=False), default="a4", show_default=True,
    help="Sheet size of a printable chart: ISO A4 or US Letter; the page is written at exactly that "
         "size, so it prints at true scale.",
)


class WavelengthsType(click.ParamType):
    """``start:stop:step`` in nm or a comma list of wavelengths."""

    name = "WL"

    def convert(self, value, param, ctx):
        if not isinstance(value, str):
            return value
        from filmoptic.units import parse_wavelengths_nm

        try:
            return parse_wavelengths_nm(value, what=f"--{param.name}" if param else "wavelengths")
        except FilmopticError as exc:
            # The message already names the option; click's "Invalid value for" would repeat it.
            raise click.UsageError(str(exc)) from None


class FractionType(click.ParamType):
    """A fraction written ``0.3`` or ``30%``."""

    name = "VALUE"

    def convert(self, value, param, ctx):
        if isinstance(value, float):
            return value
        from filmoptic.units import parse_fraction

        try:
            return parse_fraction(value, what=f"--{param.name}" if param else "value")
        except FilmopticError as exc:
            raise click.UsageError(str(exc)) from None


class FiniteFloatRange(click.FloatRange):
    """click's FloatRange that also refuses nan and ±inf: click compares the bounds only, and
    every comparison with nan is false, so ``--speed nan`` passed a ``x>0`` range."""

    def convert(self, value, param, ctx):
        rv = super().convert(value, param, ctx)
        if not math.isfinite(rv):
            self.fail(f"{rv} is not a finite number", param, ctx)
        return rv


def to_jsonable(obj):
    """Convert numpy arrays/scalars, dataclasses and paths into plain JSON values.

    Non-finite floats become ``null`` so the output is strict JSON.
    """
    import dataclasses

    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        return {f.name: to_jsonable(getattr(obj, f.name)) for f in dataclasses.fields(obj)}
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, Path):
        return str(obj)
    if hasattr(obj, "tolist"):  # numpy array or scalar
        return to_jsonable(obj.tolist())
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, complex):
        return {"re": obj.real, "im": obj.imag}
    return obj


def emit_json(obj) -> None:
    """Write ``obj`` as JSON on stdout."""
    click.echo(json.dumps(to_jsonable(obj), indent=2, allow_nan=False))


def percent(value, digits: int = 2) -> str:
    """Format a fraction as percent for people (``0.3 -> '30.00'``)."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "–"
    return f"{100.0 * float(value):.{digits}f}"


def print_table(headers, rows, title: str | None = None) -> None:
    """Print a plain aligned text table on stdout (right-aligned numbers, left-aligned text)."""
    rows = [["" if c is None else str(c) for c in row] for row in rows]
    headers = [str(h) for h in headers]
    widths = [max([len(h)] + [len(r[i]) for r in rows]) for i, h in enumerate(headers)]

    def is_numeric(text):
        try:
            float(text.replace("%", "").replace("+", ""))
            return True
        except ValueError:
            return False

    def fmt(row):
        cells = [c.rjust(w) if is_numeric(c) else c.ljust(w) for c, w in zip(row, widths)]
        return "  ".join(cells).rstrip()

    if title:
        click.echo(title)
    click.echo(fmt(headers))
    click.echo("  ".join("-" * w for w in widths))
    for row in rows:
        click.echo(fmt(row))


PLOT_SUFFIXES = {".png", ".svg", ".pdf"}


def check_output_path(path, what: str = "output file") -> Path:
    """Check that an output file can be written whole: a name, not a folder, in an existing folder.

    Raises :class:`FilmopticError` (one line) before any work is done, so that a typo in an output
    name never costs a long computation or ends in a traceback.
    """
    if path is None or not str(path).strip():
        raise FilmopticError(f"{what}: the file name is empty")
    path = Path(path)
    if path.is_dir():
        raise FilmopticError(f"cannot write {what} {path}: it is a folder; name a file inside it")
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise FilmopticError(f"cannot write {path}: folder {path.parent} does not exist")
    return path


def write_atomically(path, write, mode: str = "w") -> Path:
    """Write an output file whole (see :func:`filmoptic.files.write_atomically`), after
    :func:`check_output_path`."""
    path = check_output_path(path)
    try:
        return _write_atomically(path, write, mode)
    except OSError as exc:
        # Name the file the user asked for, not the temporary file beside it.
        raise FilmopticError(f"cannot write {path}: {exc.strerror or exc}") from None


def check_plot_path(path) -> Path:
    """Check that a plot file name ends in .png, .svg or .pdf and its folder exists."""
    if path is None or not str(path).strip():
        raise FilmopticError("plot file: the file name is empty")
    path = Path(path)
    if path.suffix.lower() not in PLOT_SUFFIXES:
        raise FilmopticError(f"plot file {path} must end in .png, .svg or .pdf")
    return check_output_path(path, "plot file")


def save_plot(fig, path) -> Path:
    """Save a matplotlib figure to ``path`` (format from the extension), atomically."""
    from filmoptic.plots import save_figure

    path = check_plot_path(path)
    try:
        return save_figure(fig, path)
    except OSError as exc:
        raise FilmopticError(f"cannot write {path}: {exc.strerror or exc}") from None


@contextmanager
def progress(length: int, label: str):
    """A progress bar on an interactive terminal; silent otherwise (pipes, --json, CI).

    Yields a callable ``advance(n)``.
    """
    if sys.stderr.isatty():
        with click.progressbar(length=length, label=label, file=sys.stderr) as bar:
            yield bar.update
    else:
        yield lambda n=1: None


# Work shorter than this finishes before a progress bar would be worth drawing.
_PROGRESS_AFTER_S = 1.0


@contextmanager
def late_progress(label: str):
    """A progress bar that appears on a terminal only once the work has taken over a second.

    Yields a callable ``report(done, total)``.
    """
    import time

    state = {"bar": None, "done": 0, "start": time.monotonic()}

    def report(done: int, total: int) -> None:
        if not sys.stderr.isatty():
            return
        if state["bar"] is None:
            if time.monotonic() - state["start"] < _PROGRESS_AFTER_S or done >= total:
                state["done"] = done
                return
            state["bar"] = click.progressbar(length=total, label=label, file=sys.stderr)
            state["bar"].__enter__()
        state["bar"].update(max(done - state["done"], 0))
        state["done"] = done

    try:
        yield report
    finally:
        if state["bar"] is not None:
            state["bar"].__exit__(None, None, None)


def echo_caution(text: str, as_json: bool = False) -> None:
    """Print a safety caution on stderr (so that --json output stays clean)."""
    click.secho(f"CAUTION: {text}", err=True, fg="yellow")

def transmission_note(meaning: str) -> str | None:
    """The one line said under a table about what T means, for a half-space substrate (shared
    with spectrum, sweep and solve); None for a slab, where T is plainly what comes out."""
    from filmoptic.engine import TRANSMISSION_MEANINGS

    if meaning == "exits":
        return None
    return "note: " + TRANSMISSION_MEANINGS[meaning] + "."


def echo_surface_oxides(stack) -> None:
    """Say under a title what '… + Xnm oxide' expanded to, one line each (stdout)."""
    for note in stack.surface_oxides():
        click.echo(f"expanded: {note}")


def warn_thin_metal(stack, deposited_nm=None) -> None:
    """One plain warning line (stderr) when a metal layer, or the solved one at ``deposited_nm``
    (a number or several solutions), is thinner than continuous-film constants allow."""
    values = deposited_nm if isinstance(deposited_nm, (list, tuple)) else [deposited_nm]
    for value in sorted(v for v in values if v is not None) or [None]:
        message = stack.thin_metal_warning(value)
        if message:
            from filmoptic.notes import warn

            warn(message)
            return
