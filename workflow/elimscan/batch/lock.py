"""The output folder's lock: one ``elimscan batch`` or ``elimscan run`` at a time per output folder (an OS lock the
kernel drops when its process dies). The holder writes who it is (pid, host, start, command) into the lock file.

Also the folder's preparation: a batch refuses a folder that holds the result of ``elimscan run``, and an
input file that is one of the files the batch writes there (it would be overwritten).
"""

from __future__ import annotations

import errno
import fcntl
import os
import socket
from collections.abc import Callable, Iterable
from pathlib import Path
from typing import TypeVar

from elimscan.errors import ConfigError, OutputError
from elimscan.pipeline.document import utc_now
from elimscan.batch.documents import INDEX_FILE, RESULTS_FILE
from elimscan.batch.store import STORE_FILE

LOCK_FILE = "batch.lock"
T = TypeVar("T")
#: folders of a batch's output folder that only the batch writes into
OUTPUT_FOLDERS = ("jobs", "plots")


#: the commands that take the lock, as the holder's line names them
LOCKING_COMMANDS = ("batch", "run")


def _holder_text(fd: int) -> str:
    """Return the holder's line of a lock file ('pid N on HOST, started T, by elimscan batch')."""
    return os.pread(fd, 4096, 0).decode("utf-8", "replace").strip() or "unknown process"


class FolderLock:
    """An exclusive OS lock (fcntl.flock) on OUT/batch.lock, held while a batch or a run computes into OUT; the OS
    drops it when the process dies. ``command`` ('batch' or 'run') names the holder for the others."""

    def __init__(self, out: Path, command: str = "batch"):
        if command not in LOCKING_COMMANDS:
            raise ValueError(f"command must be one of {LOCKING_COMMANDS}, got {command!r}")
        self.path = Path(out) / LOCK_FILE
        self.command = command
        self._fd: int | None = None

    def acquire(self) -> "FolderLock":
        """Take the lock or raise OutputError naming the command and process that hold it; return self."""
        try:
            fd = os.open(self.path, os.O_RDWR | os.O_CREAT, 0o644)
        except OSError as err:
            raise OutputError(f"cannot create the lock file '{self.path}': {err.strerror or err}") from err
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            holder = _holder_text(fd)
            os.close(fd)
            command = "run" if holder.endswith("by elimscan run") else "batch"
            follow = (f"or follow it with: elimscan status {self.path.parent}" if command == "batch"
                      else "or give this command another --out")
            raise OutputError(f"output folder '{self.path.parent}' is in use by another elimscan {command} ({holder}); "
                              f"wait for it to finish, {follow}") from None
        try:
            os.ftruncate(fd, 0)
            os.pwrite(fd, f"pid {os.getpid()} on {socket.gethostname()}, started {utc_now()}, by elimscan "
                          f"{self.command}\n".encode(), 0)
        except OSError as err:  # a full disk: the lock holds all the same, only its note is missing
            if err.errno not in (errno.ENOSPC, errno.EDQUOT, errno.EFBIG):
                os.close(fd)
                raise OutputError(f"cannot write the lock file '{self.path}': {err.strerror or err}") from err
        self._fd = fd
        return self

    def release(self) -> None:
        """Release the lock (the file stays; a stale file without a lock means nothing)."""
        if self._fd is not None:
            fcntl.flock(self._fd, fcntl.LOCK_UN)
            os.close(self._fd)
            self._fd = None

    def __enter__(self) -> "FolderLock":
        return self.acquire()

    def __exit__(self, *exc) -> None:
        self.release()


def read_if_held(path: Path, read: Callable[[int], T]) -> T | None:
    """Return ``read(fd)`` of the lock file ``path`` while another process holds its lock (computing or paused), or
    None when nobody holds it or it does not exist. Read-only: creates nothing, takes a shared lock for an instant."""
    try:
        fd = os.open(path, os.O_RDONLY)
    except OSError:
        return None
    try:
        fcntl.flock(fd, fcntl.LOCK_SH | fcntl.LOCK_NB)
    except BlockingIOError:
        return read(fd)
    else:
        fcntl.flock(fd, fcntl.LOCK_UN)
        return None
    finally:
        os.close(fd)


def lock_holder(out: Path) -> str | None:
    """Return who holds the lock of ``out`` (pid, host, start, command), or None when no batch or run computes there."""
    return read_if_held(Path(out) / LOCK_FILE, _holder_text)


def output_files() -> tuple[str, ...]:
    """Return the names of the files a batch writes at the top of its output folder (store side files too)."""
    from elimscan.output.files import CSV_FILE, HTML_FILE, SERIES_CSV_FILE
    from elimscan.batch.worker import LOG_FILE, WORKER_LOG_FILE

    return (RESULTS_FILE, INDEX_FILE, STORE_FILE, f"{STORE_FILE}-wal", f"{STORE_FILE}-shm", LOCK_FILE, LOG_FILE,
            WORKER_LOG_FILE, CSV_FILE, SERIES_CSV_FILE, HTML_FILE)


def refuse_inputs_among_outputs(out: Path, inputs: Iterable[tuple[str, Path]]) -> None:
    """Raise ConfigError naming both paths when an input file (what, path) is a file the batch writes in ``out``."""
    root = Path(out).resolve()
    names = output_files()
    for what, path in inputs:
        resolved = Path(path).resolve()
        if not resolved.is_relative_to(root) or resolved == root:
            continue
        rel = resolved.relative_to(root)
        if rel.as_posix() in names or rel.parts[0] in OUTPUT_FOLDERS:
            raise ConfigError(
                f"the {what} '{path}' is '{Path(out) / rel}', a file this batch writes into its output folder "
                f"'{out}': it would be overwritten. Move it out of the output folder, or choose another --out",
                key_path="substrates_file" if what == "substrates file" else None)


def prepare_batch_folder(out: Path, inputs: Iterable[tuple[str, Path]] = ()) -> None:
    """Create the output folder; refuse one that holds the result of ``elimscan run`` (raise OutputError) and input
    files (what, path) that the batch would overwrite there (raise ConfigError), before anything is written."""
    refuse_inputs_among_outputs(out, inputs)
    batch_traces = [out / STORE_FILE, out / f"{STORE_FILE}-wal", out / INDEX_FILE]
    if (out / RESULTS_FILE).exists() and not any(p.exists() for p in batch_traces):
        raise OutputError(f"output folder '{out}' holds the result of 'elimscan run' ({RESULTS_FILE} without a batch "
                          f"store): a batch needs a folder of its own; choose another --out")
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as err:
        raise OutputError(f"cannot create output folder '{out}': {err.strerror or err}") from err
