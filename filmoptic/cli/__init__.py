"""The ``filmoptic`` command line: a thin layer over the Python API.

Sub-commands live in their own modules and are imported only when they run, so that
``filmoptic --help`` stays fast (numpy, scipy, matplotlib and colour-science are imported inside the
commands that use them).
"""

from __future__ import annotations

import importlib
import os
import re
import sys
import warnings

import click

__all__ = ["cli", "main"]

# name -> (module, attribute, one-line summary shown by --help without importing the module)
COMMANDS = {
    "spectrum": ("filmoptic.cli.spectrum", "spectrum", "Reflectance, transmittance and absorptance of a stack."),
    "color": ("filmoptic.cli.color", "color", "Colour and luminous values seen in reflection and transmission."),
    "colour": ("filmoptic.cli.color", "color", "The same as color."),
    "sweep": ("filmoptic.cli.sweep", "sweep", "Colour and luminous values over a range of one layer's thickness."),
    "solve": ("filmoptic.cli.solve", "solve", "Find the thickness that meets a target or explains a reading."),
    "compare": ("filmoptic.cli.compare", "compare", "Compare candidate materials for the same target."),
    "rate": ("filmoptic.cli.rate", "rate", "Deposition rate from calibration runs, and time for the next run."),
    "fit": ("filmoptic.cli.fit", "fit", "Fit thickness and optical constants to measured spectra."),
    "anodize": ("filmoptic.cli.anodize", "anodize", "Colour of anodised Ti, Nb, Ta, Al, Zr against voltage, and back."),
    "anodise": ("filmoptic.cli.anodize", "anodize", "The same as anodize."),
    "heat-tint": ("filmoptic.cli.heat_tint", "heat_tint", "Temper and heat-tint colours of steel, stainless steel, copper."),
    "monitor": ("filmoptic.cli.monitor", "monitor", "Thickness, rate and time to stop from a live light signal."),
    "map": ("filmoptic.cli.map", "map_command", "Thickness and uniformity of a film from a photo of the part."),
    "design": ("filmoptic.cli.design", "design", "Design layers that meet goals, and the yield of a design."),
    "explore": ("filmoptic.cli.explore", "explore", "Write a page to play with a stack's thicknesses in a browser."),
    "materials": ("filmoptic.cli.materials", "materials", "List the optical-constant library, or show one material."),
    "demo": ("filmoptic.cli.demo", "demo", "Run the built-in worked example and write its tables and plots."),
}

CAUTION = (
    "Coating work involves high voltage, vacuum, process gases, hot sources and etchants: follow "
    "local codes and your equipment's instructions. Computed results are no substitute for certified "
    "measurement; never trust a computed filter for sun, welding or laser viewing."
)


# Options that name files the command writes. An output never replaces one of the command's inputs.
OUTPUT_OPTIONS = ("--csv", "--plot", "--swatch", "--chart", "--out", "--log", "--ab-plot")
# "file:" in a stack or material, in any letter case; the path runs to the next white space.
_FILE_IN_TEXT = re.compile(r"file:\s*(\S+)", re.IGNORECASE)


def _option_table(command):
    """Map every spelling of the command's options (``--wl``, ``--through-origin``) to the option."""
    return {
        opt: param
        for param in command.params if isinstance(param, click.Option)
        for opt in (*param.opts, *param.secondary_opts)
    }


def _input_candidates(text):
    """Paths a command-line value may name as an input: the value itself, any ``file:PATH`` (a
    path may hold brackets and parentheses, and inside a mix ends at ',' or ')'), and the part
    after a ``DURATION:`` (a solve file in ``--run 5min:run.json#2``)."""
    yield text
    for match in _FILE_IN_TEXT.finditer(text):
        path = match.group(1)
        yield path
        for end, ch in enumerate(path):
            if ch in ",)]":
                yield path[:end]
    head, colon, tail = text.partition(":")
    if colon and tail:
        yield tail
        yield tail.rsplit("#", 1)[0]


def check_arguments(command, args) -> None:
    """Refuse what click would let through silently: an option given twice (the first value
    would be dropped), both sides of an on/off switch, an empty output name, and an output
    file that is one of the command's own inputs (or another output) or would become a table of
    the user library folder.

    Existing files named on the command line are recorded as inputs of the run
    (:func:`filmoptic.files.note_input`), so the same rule is applied again when an output is
    written, together with every file the command actually read."""
    from filmoptic.files import input_conflict, input_guard, note_input, note_input_folder, same_file

    if "--help" in args or "-h" in args:
        return
    for token in args:
        if "\x00" in token:
            # No shell passes one (argv entries end at NUL), and no file name may hold one; the
            # operating system's calls would fail on it deep inside a command.
            shown = token.replace("\x00", "\\0")
            raise click.UsageError(f"'{shown[:60]}': a NUL character cannot be part of a value or a file name")
    table = _option_table(command)
    seen = {}          # option name -> how it was written
    outputs = []       # (option, path)
    inputs = []        # every other value on the line
    i = 0
    while i < len(args):
        token = args[i]
        if token == "--":
            inputs.extend(args[i + 1:])
            break
        name, eq, value = token.partition("=") if token.startswith("--") else (token, "", "")
        if name not in table:
            inputs.append(token)
            i += 1
            continue
        param = table[name]
        takes_value = not param.is_flag and not param.count
        if takes_value and not eq:
            value = args[i + 1] if i + 1 < len(args) else None
            i += 1
        i += 1
        if param.multiple:
            if takes_value and value is not None:
                if not value.strip():
                    raise click.UsageError(f"{name}: the value is empty")
                inputs.append(value)
            continue
        if param.name in seen:
            first = seen[param.name]
            if takes_value:
                raise click.UsageError(
                    f"{name} is given twice ({first} and {name} {value}); give it once"
                )
            if first.split()[0] != name:
                raise click.UsageError(f"{first} and {name} contradict each other; give one of them")
        seen[param.name] = f"{name} {value}" if takes_value else name
        if not takes_value or value is None:
            continue
        if not value.strip():
            # An empty value is an unset shell variable or a stray quote, never a request
            # (an empty path would even mean the current folder).
            what = "the file name" if name in OUTPUT_OPTIONS else "the value"
            raise click.UsageError(f"{name}: {what} is empty")
        if name in OUTPUT_OPTIONS:
            outputs.append((name, value))
        else:
            inputs.append(value)
    with input_guard():
        for text in inputs:
            for candidate in _input_candidates(text):
                candidate = os.path.expanduser(candidate)
                if candidate and os.path.isfile(candidate):
                    note_input(candidate)
        library = os.environ.get("FILMOPTIC_NKDATA", "").strip()
        if library:
            note_input_folder(library)      # the library reads its *.txt and *.nk files
        for index, (option, path) in enumerate(outputs):
            for other_option, other in outputs[:index]:
                if same_file(path, other) or os.path.abspath(path) == os.path.abspath(other):
                    raise click.UsageError(
                        f"{other_option} and {option} name the same file {path}; give each its own"
                    )
            reason = input_conflict(path)
            if reason:
                raise click.UsageError(
                    f"{option} {path}: {reason}; input files are never written, choose another file name"
                )


class LazyGroup(click.Group):
    """A click group whose sub-commands are imported on first use."""

    def resolve_command(self, ctx, args):
        if args and args[0] not in COMMANDS and not args[0].startswith("-"):
            import difflib

            close = difflib.get_close_matches(args[0].lower(), list(COMMANDS), n=1, cutoff=0.6)
            hint = f"; did you mean '{close[0]}'?" if close else f"; commands: {', '.join(COMMANDS)}"
            raise click.UsageError(f"no command '{args[0]}'{hint}")
        name, command, rest = super().resolve_command(ctx, args)
        if command is not None:
            check_arguments(command, list(rest))
        return name, command, rest

    def list_commands(self, ctx):
        return list(COMMANDS)

    def get_command(self, ctx, name):
        if name not in COMMANDS:
            return None
        module_name, attribute, _ = COMMANDS[name]
        return getattr(importlib.import_module(module_name), attribute)

    def format_commands(self, ctx, formatter):
        # Summaries come from the table above so that --help imports nothing.
        rows = [(name, summary) for name, (_, _, summary) in COMMANDS.items()]
        with formatter.section("Commands"):
            formatter.write_dl(rows)


@click.group(cls=LazyGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="filmoptic", prog_name="filmoptic")
def cli():
    """Thin-film optics for coaters.

    Compute what a coating stack reflects, transmits and absorbs; what colour it shows; how thick
    to make it to meet a target; how thick it came out from a cheap measurement; and how long to
    run next time. Stacks are written in the order light meets them, for example

        filmoptic spectrum "Ti 12nm / glass 3mm"

    Wavelengths and thicknesses are in nanometres unless a unit says otherwise; every command has
    --json for machine-readable output.

    \b
    Caution: coating work involves high voltage, vacuum, process gases, hot sources and
    etchants; follow local codes and your equipment's instructions. Results are computed, not
    measured: never trust a computed filter for sun, welding or laser viewing.
    """


def _one_line(message: str) -> str:
    return " ".join(str(message).split())


def main(argv=None) -> int:
    """Entry point of the ``filmoptic`` console script.

    User mistakes (click usage errors and :class:`filmoptic.errors.FilmopticError`) end with a
    single line on stderr and exit code 2, never a traceback. Set ``FILMOPTIC_DEBUG=1`` to see the
    traceback of an unexpected error.
    """
    from filmoptic.files import input_guard
    from filmoptic.limits import work_budget
    from filmoptic.notes import collecting

    args = sys.argv[1:] if argv is None else list(argv)
    with warnings.catch_warnings(), input_guard(), work_budget(), collecting() as notes:
        warnings.showwarning = _show_warning
        code = _run(args)
    if code == 0:
        # How files were read and which defaults were taken: after the output, on stderr.
        for kind, line in notes:
            click.echo(f"filmoptic: {kind}: {line}", err=True)
    return code


def _show_warning(message, category, filename, lineno, file=None, line=None) -> None:
    """Warnings meant for the user (e.g. held end values with --extrapolate) as one line each.

    numpy's floating-point warnings ("overflow encountered in …") are not for the user: every
    input is validated and every result checked before it is shown, so they carry no news, and
    their text would read as a failure. ``FILMOPTIC_DEBUG=1`` shows them for developers.
    """
    if issubclass(category, RuntimeWarning) and not os.environ.get("FILMOPTIC_DEBUG"):
        return
    from filmoptic.notes import warn

    # Printed after the command's output, and only when it succeeds: a mistake stays one line.
    warn(_one_line(message))


def _run(args) -> int:
    try:
        rv = cli.main(args=args, prog_name="filmoptic", standalone_mode=False)
        return rv if isinstance(rv, int) else 0
    except click.exceptions.Exit as exc:
        return exc.exit_code
    except (click.exceptions.Abort, KeyboardInterrupt):
        click.echo("filmoptic: aborted", err=True)
        return 130
    except click.exceptions.NoArgsIsHelpError as exc:
        # 'filmoptic' alone: show the overview as --help does, not squeezed into an error line.
        click.echo(exc.ctx.get_help() if exc.ctx is not None else exc.format_message())
        return 0
    except click.ClickException as exc:
        click.echo(f"filmoptic: error: {_one_line(exc.format_message())}", err=True)
        return 2
    except OSError as exc:
        # A file or folder the system refuses (permissions, a full disk, a folder where a file
        # was expected): something the user can fix, so one line and exit code 2.
        where = f"{exc.filename}: " if exc.filename else ""
        click.echo(f"filmoptic: error: {where}{_one_line(exc.strerror or exc)}", err=True)
        return 2
    except Exception as exc:  # noqa: BLE001 - the one place that turns errors into exit codes
        from filmoptic.errors import FilmopticError

        if isinstance(exc, FilmopticError):
            click.echo(f"filmoptic: error: {_one_line(exc)}", err=True)
            return 2
        if os.environ.get("FILMOPTIC_DEBUG"):
            raise
        click.echo(
            f"filmoptic: internal error: {type(exc).__name__}: {_one_line(exc)} "
            "(please report it; FILMOPTIC_DEBUG=1 shows the details)",
            err=True,
        )
        return 1


def _entry():  # pragma: no cover - exercised through the console script
    sys.exit(main())


if __name__ == "__main__":  # pragma: no cover
    _entry()
