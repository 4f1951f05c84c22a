"""The ``filmoptic`` command line: a thin layer over the Python API.

Sub-commands live in their own modules and are imported only when they run, so that
``filmoptic --help`` stays fast (numpy, scipy, matplotlib and colour-science are imported inside the
commands that use them).
"""

from __future__ import annotations

import importlib
import os
import sys

import click

__all__ = ["cli", "main"]

# name -> (module, attribute, one-line summary shown by --help without importing the module)
COMMANDS = {
    "spectrum": ("filmoptic.cli.spectrum", "spectrum", "Reflectance, transmittance and absorptance of a stack."),
    "color": ("filmoptic.cli.color", "color", "Colour and luminous values seen in reflection and transmission."),
    "sweep": ("filmoptic.cli.sweep", "sweep", "Colour and luminous values over a range of one layer's thickness."),
    "solve": ("filmoptic.cli.solve", "solve", "Find the thickness that meets a target or explains a reading."),
    "compare": ("filmoptic.cli.compare", "compare", "Compare candidate materials for the same target."),
    "rate": ("filmoptic.cli.rate", "rate", "Deposition rate from calibration runs, and time for the next run."),
    "fit": ("filmoptic.cli.fit", "fit", "Fit thickness and optical constants to measured spectra."),
    "materials": ("filmoptic.cli.materials", "materials", "List the optical-constant library, or show one material."),
    "demo": ("filmoptic.cli.demo", "demo", "Run the built-in worked example and write its tables and plots."),
}

CAUTION = (
    "Coating work involves high voltage, vacuum, process gases, hot sources and etchants: follow "
    "local codes and your equipment's instructions. Computed results are no substitute for certified "
    "measurement; never trust a computed filter for sun, welding or laser viewing."
)


class LazyGroup(click.Group):
    """A click group whose sub-commands are imported on first use."""

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
    args = sys.argv[1:] if argv is None else list(argv)
    try:
        rv = cli.main(args=args, prog_name="filmoptic", standalone_mode=False)
        return rv if isinstance(rv, int) else 0
    except click.exceptions.Exit as exc:
        return exc.exit_code
    except (click.exceptions.Abort, KeyboardInterrupt):
        click.echo("filmoptic: aborted", err=True)
        return 130
    except click.ClickException as exc:
        click.echo(f"filmoptic: error: {_one_line(exc.format_message())}", err=True)
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
