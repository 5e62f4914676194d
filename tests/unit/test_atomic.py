"""Atomic writes: a file is either the whole new content or exactly what was there before.

Checked by behaviour (no outside reference needed): a writer that fails half-way leaves
the old file byte for byte and no temporary file behind; a replaced file keeps its mode;
an operating-system failure becomes a heatstack error naming the file.
"""

from __future__ import annotations

import os
import stat

import pytest

from heatstack.atomic import write_file_atomically
from heatstack.errors import ResultFileError


def test_new_file_is_written(tmp_path):
    target = tmp_path / "report.md"
    assert write_file_atomically(target, lambda t: t.write_text("peak 420 K")) == target
    assert target.read_text() == "peak 420 K"
    assert [p.name for p in tmp_path.iterdir()] == ["report.md"]


def test_a_failing_writer_leaves_the_old_file_and_no_temporary(tmp_path):
    target = tmp_path / "report.md"
    target.write_text("old report")

    def half_then_fail(temp):
        temp.write_text("half of the new rep")
        raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        write_file_atomically(target, half_then_fail)
    assert target.read_text() == "old report"
    assert [p.name for p in tmp_path.iterdir()] == ["report.md"]


def test_a_replaced_file_keeps_its_mode(tmp_path):
    target = tmp_path / "figure.png"
    target.write_bytes(b"old")
    os.chmod(target, 0o600)
    write_file_atomically(target, lambda t: t.write_bytes(b"new"))
    assert target.read_bytes() == b"new"
    assert stat.S_IMODE(target.stat().st_mode) == 0o600


def test_an_os_error_names_the_file_and_what_it_is(tmp_path):
    target = tmp_path / "no such folder" / "report.md"
    with pytest.raises(ResultFileError, match=r"report file .*report\.md.* cannot be written"):
        write_file_atomically(target, lambda t: t.write_text("x"), "report file")

    def disk_full(temp):
        raise OSError(28, "No space left on device")

    ok = tmp_path / "kept.md"
    ok.write_text("kept")
    with pytest.raises(ResultFileError, match="No space left on device"):
        write_file_atomically(ok, disk_full, "report file")
    assert ok.read_text() == "kept"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["kept.md"]
