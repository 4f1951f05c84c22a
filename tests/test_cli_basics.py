"""The command line as a whole: fast help, lazy imports, one-line errors, packaging."""

from __future__ import annotations

import ast
import subprocess
import sys

import pytest

from conftest import assert_user_error

HEAVY = ("numpy", "scipy", "matplotlib", "colour")


def test_help_imports_no_heavy_library():
    # `filmoptic --help` must answer well under a second: it may not import the numerical stack.
    code = (
        "import sys, io, contextlib\n"
        "from filmoptic.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        "    main(['--help'])\n"
        f"print(sorted({{m.split('.')[0] for m in sys.modules}} & set({HEAVY!r})))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]", out.stdout


def _libraries_loaded(args) -> set:
    """The heavy libraries (top-level names) a command has imported by the time it ends."""
    code = (
        "import sys, io, contextlib\n"
        "from filmoptic.cli import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        f"    code = main({[str(a) for a in args]!r})\n"
        "assert code == 0, code\n"
        f"print(sorted({{m.split('.')[0] for m in sys.modules}} & set({HEAVY + ('PIL',)!r})))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return set(ast.literal_eval(out.stdout.strip().splitlines()[-1]))


@pytest.mark.parametrize("args", [
    ["spectrum", "Ti 12nm / glass 4mm", "--json"],
    ["spectrum", "[TiO2 55nm / SiO2 92nm]x4 / glass 1mm", "--angle", "30"],
    ["materials", "Ti", "--json"],
])
def test_spectra_need_neither_colour_science_nor_scipy(args):
    # Start-up in a blink: the n,k interpolation and the engine are plain numpy.
    assert _libraries_loaded(args) == {"numpy"}


@pytest.mark.parametrize("args", [
    ["color", "Cr 8nm / glass 4mm", "--json"],
    ["color", "Ti 12nm / glass 4mm", "--illuminant", "F11", "--observer", "10", "--angles", "0:60:30"],
    ["sweep", "TiO2 ? / Ti", "--range", "0:250:1", "--json"],
    ["solve", "Ti ? / glass 4mm", "--luminous-T", "30%", "--json"],
    ["solve", "TiO2 ? / Ti", "--hex", "#3d64ab", "--json"],
    ["compare", "Ti", "Cr", "--on", "glass 4mm", "--luminous-T", "30%", "--json"],
    ["anodize", "Ti", "--json"],
    ["heat-tint", "steel", "--json"],
    ["monitor", "Ti ? / glass 4mm", "--source", "led:530/30", "--detector", "flat", "--luminous-T", "30%",
     "--plan", "--json"],
    ["design", "Cr 8.1nm / glass 4mm", "--check-only", "--goal", "luminous-T = 30% within 2%",
     "--tolerance", "1nm", "--samples", "200", "--json"],
])
def test_colour_commands_do_not_import_colour_science(args):
    # The CIE tables are shipped and the transforms written out (filmoptic.cie); colour-science,
    # matplotlib and scipy stay out of a command that needs none of them.
    assert _libraries_loaded(args) == {"numpy"}


def test_colour_science_is_imported_when_a_feature_needs_it():
    # A Munsell notation comes from colour-science, and so does an illuminant beyond the shipped set.
    assert "colour" in _libraries_loaded(["color", "Cr 8nm / glass 4mm", "--munsell", "--json"])
    assert "colour" in _libraries_loaded(["color", "Cr 8nm / glass 4mm", "--illuminant", "D60", "--json"])


@pytest.mark.parametrize("command", ["spectrum", "color", "sweep", "solve", "compare", "rate", "fit", "map", "materials", "demo",
                                     "anodize", "anodise", "heat-tint", "monitor", "design"])
def test_every_command_has_help(run_cli, command):
    result = run_cli([command, "--help"])
    assert result.exit_code == 0, result.stderr
    assert "Usage:" in result.stdout
    # Commands that compute say how to get machine-readable output.
    if command not in ("demo",):
        assert "--json" in result.stdout


def test_unknown_command_is_one_line(run_cli):
    assert_user_error(run_cli(["specturm"]), "specturm")


def test_unknown_option_is_one_line(run_cli):
    assert_user_error(run_cli(["spectrum", "Ti 10nm / glass", "--frobnicate"]), "--frobnicate")


def test_version(run_cli):
    from importlib.metadata import version

    result = run_cli(["--version"])
    assert result.exit_code == 0
    assert "filmoptic" in result.stdout and version("filmoptic") in result.stdout


def test_demo_runs_from_another_folder(tmp_path, run_cli_subprocess):
    # The installed package must find its data from anywhere (a non-editable install in CI).
    result = run_cli_subprocess(["demo", "--out", tmp_path / "out"], cwd=tmp_path, timeout=600)
    assert result.exit_code == 0, result.stderr
    assert "Traceback" not in result.stderr
    written = sorted(p.suffix for p in (tmp_path / "out").iterdir())
    assert ".png" in written and ".csv" in written
    assert "invented" in result.stdout.lower()
    assert "caution" in result.stdout.lower()
