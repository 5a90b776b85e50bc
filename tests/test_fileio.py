"""Atomic output: a failed write keeps the old file and leaves no temporary file."""

from __future__ import annotations

import os
import stat

import pytest

from thist.fileio import write_text, write_with


def test_write_replaces_the_file_with_ordinary_permissions(tmp_path):
    target = tmp_path / "out.txt"
    write_text(target, "one")
    write_text(target, "two")
    assert target.read_text() == "two"
    mode = stat.S_IMODE(os.stat(target).st_mode)
    mask = os.umask(0)
    os.umask(mask)
    assert mode == 0o666 & ~mask
    assert [p.name for p in tmp_path.iterdir()] == ["out.txt"]


def test_failure_while_writing_keeps_the_previous_file(tmp_path):
    target = tmp_path / "report.pdf"
    write_text(target, "good")

    def broken(tmp: str) -> None:
        with open(tmp, "w") as fh:
            fh.write("half")
        raise RuntimeError("disk full")

    with pytest.raises(RuntimeError):
        write_with(target, broken)
    assert target.read_text() == "good"
    assert [p.name for p in tmp_path.iterdir()] == ["report.pdf"]
