"""The wall-time log of long computations in a work folder that outlive no machine: one JSON line per invocation.

A computation spread over several machine sessions is killed (SIGKILL) at the end of each and paused (SIGSTOP)
while other work runs. ``RunClock`` holds an OS lock (fcntl.flock, which the kernel drops when the process dies and
keeps while it is paused) for the whole invocation and rewrites a running file every ``HEARTBEAT_S`` seconds with
the time it has run, pauses left out. The next invocation that finds the running file with nobody holding the lock
logs it as interrupted, with the time of its last rewrite, and removes it. Used by validation/validate.py.
"""

from __future__ import annotations

import datetime as dt
import fcntl
import json
import os
import socket
import sys
import threading
import time
from pathlib import Path

from elimscan.atomicio import write_text_atomic
from elimscan.batch.lock import read_if_held
from elimscan.errors import OutputError

#: seconds between two rewrites of the running file: a killed invocation loses at most this much of its logged time
HEARTBEAT_S = 60.0
#: a gap between two heartbeats longer than this many heartbeats is a pause (SIGSTOP): counted as this many only
PAUSE_HEARTBEATS = 2.0


def _now_utc() -> str:
    """Return the time now in UTC, ISO 8601 to the second."""
    return dt.datetime.now(dt.timezone.utc).isoformat(timespec="seconds")


def read_run_log(log_file: Path) -> list[dict]:
    """Return the entries of a run log (one per invocation, oldest first; a torn last line is left out)."""
    if not log_file.is_file():
        return []
    entries = []
    for line in log_file.read_text(encoding="utf-8").splitlines():
        try:
            entries.append(json.loads(line))
        except ValueError:
            print(f"warning: {log_file}: an unreadable line left out: {line[:80]!r}", file=sys.stderr)
    return entries


def _append(log_file: Path, entry: dict) -> None:
    """Append one entry to a run log, on a line of its own after a torn last line."""
    with open(log_file, "a+b") as log:
        torn = log.tell() > 0 and os.pread(log.fileno(), 1, log.tell() - 1) != b"\n"
        log.write((("\n" if torn else "") + json.dumps(entry) + "\n").encode("utf-8"))


#: seconds a computing invocation waits for the lock before it refuses: a look by ``running_entry`` holds it briefly
LOCK_WAIT_S = 2.0


def _try_lock(lock_file: Path, wait_s: float = 0.0) -> int | None:
    """Return an open descriptor holding the exclusive lock of ``lock_file``, or None when another process holds it
    for longer than ``wait_s`` seconds."""
    fd = os.open(lock_file, os.O_RDWR | os.O_CREAT, 0o644)
    deadline = time.monotonic() + wait_s
    while True:
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            return fd
        except BlockingIOError:
            if time.monotonic() >= deadline:
                os.close(fd)
                return None
            time.sleep(0.05)


def _unlock(fd: int) -> None:
    """Release a lock taken by ``_try_lock``."""
    fcntl.flock(fd, fcntl.LOCK_UN)
    os.close(fd)


def _settle_locked(running: Path, log_file: Path) -> bool:
    """Log a running file whose invocation is gone as interrupted and remove it (the caller holds the lock); return
    whether there was one. A file of older code without a logged time is marked so (``time_unknown``)."""
    try:
        entry = json.loads(running.read_text(encoding="utf-8"))
    except FileNotFoundError:
        return False
    except ValueError:
        entry = {}
    logged = {key: value for key, value in entry.items() if key not in ("pid", "process", "host", "updated_utc")}
    seconds = entry.get("wall_seconds")
    _append(log_file, {**logged, "wall_seconds": float(seconds or 0.0), "interrupted": True,
                       "last_seen_utc": entry.get("updated_utc"), **({"time_unknown": True} if seconds is None else {})})
    running.unlink(missing_ok=True)
    return True


def settle_stale_run(running: Path, log_file: Path, lock_file: Path) -> bool:
    """Log and remove the running file of an invocation that no longer holds the lock (killed); return whether there
    was one. A running invocation, paused or not, is left alone."""
    if not running.exists():  # nothing to settle (and no lock file made in a folder that holds none)
        return False
    fd = _try_lock(lock_file)
    if fd is None:
        return False
    try:
        return _settle_locked(running, log_file)
    finally:
        _unlock(fd)


def running_entry(running: Path, lock_file: Path) -> dict | None:
    """Return the running file's entry of the invocation computing (or paused) in the folder now, with its time so
    far (``wall_seconds``, s, pauses counted as PAUSE_HEARTBEATS heartbeats) and last rewrite (``updated_utc``); None
    when nobody holds the lock. Read-only: creates nothing, takes only a shared lock for an instant (a computing
    invocation starting then waits LOCK_WAIT_S for it), and leaves a killed invocation's file to the next one."""
    if not running.exists():
        return None
    return read_if_held(lock_file, lambda _fd: _entry_now(running))


def _entry_now(running: Path) -> dict | None:
    """Return the running file's entry, or None when it ended or is being rewritten just now."""
    try:
        return json.loads(running.read_text(encoding="utf-8"))
    except (FileNotFoundError, ValueError):
        return None


class RunClock:
    """Hold the work folder's lock for one computing invocation: settle a killed predecessor's running file, rewrite
    our own every HEARTBEAT_S seconds with the time run so far (s, pauses counted as PAUSE_HEARTBEATS heartbeats),
    and log it when the invocation ends (``interrupted`` when it ends by an exception or Ctrl-C). A second computing
    invocation in the same folder is refused (OutputError naming the folder)."""

    def __init__(self, running: Path, log_file: Path, lock_file: Path, entry: dict, started: float):
        self.running, self.log_file, self.lock_file, self.entry = running, log_file, lock_file, entry
        self._active_s = time.perf_counter() - started
        self._last = time.perf_counter()
        self._fd: int | None = None
        self._guard = threading.Lock()
        self._stop = threading.Event()
        self._beat = threading.Thread(target=self._beating, name="run-clock", daemon=True)

    def seconds(self) -> float:
        """Return the time this invocation has run (s), a pause longer than PAUSE_HEARTBEATS heartbeats cut short."""
        with self._guard:
            now = time.perf_counter()
            self._active_s += min(now - self._last, PAUSE_HEARTBEATS * HEARTBEAT_S)
            self._last = now
            return round(self._active_s, 1)

    def _write(self) -> None:
        """Rewrite the running file with the time run so far."""
        write_text_atomic(self.running, json.dumps({**self.entry, "pid": os.getpid(), "host": socket.gethostname(),
                                                    "updated_utc": _now_utc(), "wall_seconds": self.seconds()}))

    def _beating(self) -> None:
        """Rewrite the running file every HEARTBEAT_S seconds until stopped."""
        while not self._stop.wait(HEARTBEAT_S):
            self._write()

    def __enter__(self) -> RunClock:
        self._fd = _try_lock(self.lock_file, LOCK_WAIT_S)
        if self._fd is None:
            raise OutputError(f"another invocation computes in '{self.running.parent}' (it holds "
                              f"'{self.lock_file.name}'): wait for it to end, or use another work folder")
        _settle_locked(self.running, self.log_file)
        self._write()
        self._beat.start()
        return self

    def __exit__(self, exc_type, exc, tb) -> None:
        self._stop.set()
        self._beat.join()
        try:
            _append(self.log_file, {**self.entry, "wall_seconds": self.seconds(),
                                    **({"interrupted": True} if exc_type is not None else {})})
            self.running.unlink(missing_ok=True)
        finally:
            _unlock(self._fd)
            self._fd = None
