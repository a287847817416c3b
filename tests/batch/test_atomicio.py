"""Atomic writes: a write that fails leaves the old file and no temporary file behind."""

from __future__ import annotations

import errno
import os

import pytest

from elimscan import atomicio
from elimscan.atomicio import remove_stale_temporaries, temporary_name, write_bytes_atomic, write_text_atomic
from elimscan.errors import OutputError


def leftovers(folder):
    """Return the names of temporary files in ``folder``."""
    return sorted(p.name for p in folder.glob(f"{atomicio.TMP_PREFIX}*{atomicio.TMP_SUFFIX}"))


def test_a_write_replaces_the_file_and_leaves_no_temporary(tmp_path):
    target = tmp_path / "sub" / "results.json"
    write_text_atomic(target, "old")
    write_bytes_atomic(target, b"new")
    assert target.read_bytes() == b"new" and leftovers(target.parent) == []


@pytest.mark.parametrize("code, first_words", [(errno.ENOSPC, "disk full while writing"), (errno.EDQUOT, "disk full while writing"),
                                              (errno.EFBIG, "disk full while writing"), (errno.EACCES, "cannot write")])
def test_a_failing_rename_keeps_the_old_file(tmp_path, monkeypatch, code, first_words):
    target = tmp_path / "results.json"
    target.write_text("old")

    def refuse(src, dst):
        raise OSError(code, os.strerror(code))

    monkeypatch.setattr(atomicio.os, "replace", refuse)
    with pytest.raises(OutputError, match=f"^{first_words} '.*results.json': {os.strerror(code)}") as info:
        write_bytes_atomic(target, b"new")
    assert target.read_text() == "old"
    assert leftovers(tmp_path) == []
    assert isinstance(info.value.__cause__, OSError) and info.value.errno == code


def test_a_failing_fsync_keeps_the_old_file(tmp_path, monkeypatch):
    target = tmp_path / "batch.json"
    target.write_text("old")
    seen = []

    def fail(fd):
        seen.append(fd)
        raise OSError(errno.EIO, "I/O error")

    monkeypatch.setattr(atomicio.os, "fsync", fail)
    with pytest.raises(OutputError, match="I/O error"):
        write_bytes_atomic(target, b"new")
    assert seen, "the temporary file was not fsync'd"
    assert target.read_text() == "old" and leftovers(tmp_path) == []


def test_an_exception_before_the_rename_leaves_the_temporary_for_the_cleanup(tmp_path):
    # what a killed writer leaves (the kill test's hook): the old file intact, a temporary that the cleanup removes
    target = tmp_path / "batch.json"
    target.write_text("old")

    def die(tmp):
        assert tmp == temporary_name(target) and tmp.read_bytes() == b"new"
        raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        write_bytes_atomic(target, b"new", die)
    assert target.read_text() == "old" and leftovers(tmp_path) == [temporary_name(target).name]
    assert remove_stale_temporaries(tmp_path) == 1 and leftovers(tmp_path) == []
