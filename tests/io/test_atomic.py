"""Atomic writes: whole files, with the permissions the user's umask gives."""

from __future__ import annotations

import os
import stat

import pytest
from wakes.io.atomic import write_bytes, write_text


@pytest.fixture
def umask():
    """Set the process umask for one test; the old one comes back after it."""
    old = os.umask(0o022)
    os.umask(old)
    yield os.umask
    os.umask(old)


@pytest.mark.parametrize("mask, mode", [(0o022, 0o644), (0o027, 0o640), (0o002, 0o664), (0o077, 0o600)])
def test_files_get_the_mode_the_umask_gives(tmp_path, umask, mask, mode):
    umask(mask)
    new = write_text(tmp_path / "new.txt", "a")
    (tmp_path / "old.txt").write_text("x")
    os.chmod(tmp_path / "old.txt", 0o600)         # a replaced file takes the new mode, too
    replaced = write_bytes(tmp_path / "old.txt", b"b")
    assert stat.S_IMODE(new.stat().st_mode) == mode
    assert stat.S_IMODE(replaced.stat().st_mode) == mode
    assert replaced.read_bytes() == b"b"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["new.txt", "old.txt"]   # no temporary left


def test_a_failed_write_leaves_no_temporary_file(tmp_path):
    class Unwritable:
        def __bytes__(self):
            raise RuntimeError("no bytes")

    with pytest.raises(TypeError):
        write_bytes(tmp_path / "x.bin", Unwritable())
    assert list(tmp_path.iterdir()) == []
