"""Atomic result files: write a temporary file beside the target, fsync it, rename it over the target.

A reader (or a resumed batch) sees either the old file or the complete new one, never a half-written
file, whatever instant the process dies at. Used by every writer of result files (``cli``, ``batch``).
Write errors become ``OutputError`` naming the file ("disk full while writing PATH: ..." when the disk, the
quota or a file-size limit is full; "cannot write PATH: ..." otherwise), and the temporary file is removed.
"""

from __future__ import annotations

import errno
import os
from collections.abc import Callable
from pathlib import Path

from elimscan.errors import OutputError

#: prefix and suffix of temporary files; a leftover of a killed process is ignored and cleaned up later
TMP_PREFIX = "."
TMP_SUFFIX = ".tmp"
#: errors that mean the disk (or the allowed file size or quota) is full
FULL_DISK_ERRNOS = frozenset({errno.EFBIG, errno.ENOSPC, errno.EDQUOT})


def write_error(path: str | Path, err: OSError) -> OutputError:
    """Return the OutputError of a failed write of ``path`` (its ``errno`` set): the disk-full wording for a full
    disk, quota or file-size limit, else 'cannot write PATH: reason'."""
    reason = err.strerror or str(err)
    if err.errno in FULL_DISK_ERRNOS:
        limit = " (a file-size limit)" if err.errno == errno.EFBIG else ""
        error = OutputError(f"disk full while writing '{path}': {reason}{limit}")
    else:
        error = OutputError(f"cannot write '{path}': {reason}")
    error.errno = err.errno
    return error


def temporary_name(path: Path) -> Path:
    """Return the temporary file used while writing ``path`` (same folder, hidden, with this process id)."""
    return path.with_name(f"{TMP_PREFIX}{path.name}.{os.getpid()}{TMP_SUFFIX}")


def fsync_folder(folder: Path) -> None:
    """Flush a folder's entries (the renames in it) to disk; silently skipped where folders cannot be opened."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def write_bytes_atomic(path: str | Path, content: bytes,
                       before_rename: Callable[[Path], None] | None = None) -> None:
    """Write ``content`` to ``path`` through a fsync'd temporary file and a rename; raise OutputError naming the file.

    ``before_rename`` (tests only) is called with the temporary file's path once it is complete.
    """
    path = Path(path)
    tmp = temporary_name(path)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        with open(tmp, "wb") as handle:
            handle.write(content)
            handle.flush()
            os.fsync(handle.fileno())
        if before_rename is not None:
            before_rename(tmp)
        os.replace(tmp, path)
    except OSError as err:
        try:
            tmp.unlink(missing_ok=True)
        except OSError:
            pass
        raise write_error(path, err) from err
    fsync_folder(path.parent)


def write_text_atomic(path: str | Path, text: str) -> None:
    """Write UTF-8 text to ``path`` atomically (see write_bytes_atomic)."""
    write_bytes_atomic(path, text.encode("utf-8"))


def remove_stale_temporaries(folder: Path) -> int:
    """Remove temporary files left in ``folder`` by a killed writer; return how many were removed."""
    removed = 0
    try:
        stale_files = list(folder.glob(f"{TMP_PREFIX}*{TMP_SUFFIX}")) if folder.is_dir() else []
    except OSError:  # a folder name too long, a folder that cannot be read: nothing to clean up there
        return 0
    for stale in stale_files:
        try:
            stale.unlink()
            removed += 1
        except OSError:
            pass
    return removed
