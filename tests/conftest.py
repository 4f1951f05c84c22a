"""Shared test fixtures.

The tests exercise the *installed* filmoptic (CI installs it non-editable and runs pytest from the
repository root); nothing here adds the source tree to ``sys.path``.
"""

from __future__ import annotations

import io
import subprocess
import sys
from contextlib import redirect_stderr, redirect_stdout
from dataclasses import dataclass

import pytest


@dataclass
class CliResult:
    exit_code: int
    stdout: str
    stderr: str


def _run_in_process(args) -> CliResult:
    from filmoptic.cli import main

    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main([str(a) for a in args])
    return CliResult(code, out.getvalue(), err.getvalue())


@pytest.fixture
def run_cli():
    """Run ``filmoptic ARGS…`` in-process through the real entry point; returns a CliResult."""
    return _run_in_process


@pytest.fixture
def run_cli_subprocess():
    """Run ``python -m filmoptic ARGS…`` in a separate process (for start-up and traceback checks)."""

    def run(args, cwd=None, env=None, timeout=120) -> CliResult:
        proc = subprocess.run(
            [sys.executable, "-m", "filmoptic", *map(str, args)],
            capture_output=True, text=True, cwd=cwd, env=env, timeout=timeout,
        )
        return CliResult(proc.returncode, proc.stdout, proc.stderr)

    return run


@pytest.fixture
def in_tmp(tmp_path, monkeypatch):
    """Run the test in its own empty folder (for commands that write beside their inputs)."""
    monkeypatch.chdir(tmp_path)
    return tmp_path


def assert_user_error(result: CliResult, *fragments: str) -> None:
    """A user mistake: exit code 2, exactly one line on stderr, no traceback, nothing on stdout."""
    assert result.exit_code == 2, (result.exit_code, result.stdout, result.stderr)
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(lines) == 1, result.stderr
    assert "Traceback" not in result.stderr
    for fragment in fragments:
        assert fragment.lower() in lines[0].lower(), (fragment, lines[0])


@pytest.fixture(autouse=True)
def _numpy_default_printing():
    """Run every test with numpy's own array printing.

    colour-science switches numpy to legacy (1.13) array printing when it is first imported (by a
    test module or inside a command), which would make docstring examples depend on test order.
    """
    import numpy as np

    with np.printoptions(legacy=False):
        yield
