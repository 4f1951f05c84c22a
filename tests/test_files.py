"""Outputs are written whole and with ordinary permissions; nothing half-written is left behind."""

from __future__ import annotations

import os
import stat

import pytest

from filmoptic.errors import FilmopticError
from filmoptic.files import write_atomically, write_csv


def test_written_file_has_ordinary_permissions(tmp_path):
    # Common practice: a new file gets 0666 less the umask, as open() would give it.
    old = os.umask(0o022)
    try:
        path = write_csv(tmp_path / "t.csv", ["a", "b"], [[1, 2]])
    finally:
        os.umask(old)
    assert stat.S_IMODE(path.stat().st_mode) == 0o644
    assert path.read_text() == "a,b\n1,2\n"


def test_interrupted_write_keeps_the_old_file_and_leaves_no_temporary(tmp_path):
    path = tmp_path / "keep.txt"
    path.write_text("precious")

    def fail(fh):
        fh.write("partial")
        raise RuntimeError("disk on fire")

    with pytest.raises(RuntimeError):
        write_atomically(path, fail)
    assert path.read_text() == "precious"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.txt"]


def test_missing_folder_is_a_user_error(tmp_path):
    with pytest.raises(FilmopticError, match="does not exist"):
        write_csv(tmp_path / "nope" / "t.csv", ["a"], [])
