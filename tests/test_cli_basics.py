"""The command line as a whole: fast help, lazy imports, one-line errors, packaging."""

from __future__ import annotations

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
