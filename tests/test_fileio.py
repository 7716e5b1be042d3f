"""The one atomic writer (lowenergy.fileio): all-or-nothing files."""

from __future__ import annotations

import os

import pytest

from lowenergy.fileio import atomic_path, write_atomic


def test_replaces_whole_file(tmp_path):
    p = tmp_path / "t.json"
    p.write_text("old")
    write_atomic(p, b"\x00new bytes")
    assert p.read_bytes() == b"\x00new bytes"
    write_atomic(p, "ζ(3)\n")
    assert p.read_text(encoding="utf-8") == "ζ(3)\n"
    assert sorted(x.name for x in tmp_path.iterdir()) == ["t.json"]


def test_failure_keeps_old_file_and_leaves_no_temporary(tmp_path, monkeypatch):
    p = tmp_path / "t.csv"
    p.write_text("old")

    def broken(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", broken)
    with pytest.raises(OSError, match="No space"):
        write_atomic(p, "new")
    monkeypatch.undo()
    with pytest.raises(ZeroDivisionError):
        with atomic_path(p) as tmp:
            with open(tmp, "w") as fh:
                fh.write("half")
            1 / 0
    assert p.read_text() == "old"
    assert sorted(x.name for x in tmp_path.iterdir()) == ["t.csv"]


def test_missing_directory_is_an_oserror(tmp_path):
    with pytest.raises(FileNotFoundError):
        write_atomic(tmp_path / "no" / "dir" / "x.txt", "a")


def test_permissions_follow_umask(tmp_path):
    old = os.umask(0o027)
    try:
        p = write_atomic(tmp_path / "m.txt", "a")
    finally:
        os.umask(old)
    assert (p.stat().st_mode & 0o777) == 0o640
