"""Hostile input to the newer commands (monitor, map, design, explore, anodize, heat-tint) and the
newer options of the older ones: one test for every failure a fuzz run (``tools/fuzz.py``) found.

Each case ends either in an answer or in exit code 2 with one line that names the problem, with no
traceback, no numpy warning text and no changed input. ``FILMOPTIC_DEBUG=1`` is set where a test
checks for numpy's warnings, since that is what makes them visible. These are facts of the tool's
contract, not of physics.
"""

from __future__ import annotations

import numpy as np
import pytest

from conftest import assert_user_error


@pytest.fixture
def in_tmp(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    return tmp_path


# --- a NUL character ------------------------------------------------------------------------------
@pytest.mark.parametrize("args", [
    ["spectrum", "Ti 5nm / glass", "--plot", "ou\x00t.png"],
    ["monitor", "Ti ? / glass 4mm", "--plan", "--target", "5nm", "--plot", "plan\x00.png"],
    ["spectrum", "file:a\x00b.txt 5nm / glass"],
])
def test_a_nul_character_in_any_value_is_one_line(run_cli, in_tmp, args):
    # No shell can pass one (argv entries end at NUL); through the Python entry point it reached
    # the operating system's path calls and ended in a ValueError.
    assert_user_error(run_cli(args), "NUL character")
    assert list(in_tmp.iterdir()) == []
