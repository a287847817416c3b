"""A job's replay log: every single point it finished, kept on disk so that a job stopped half-way (a killed
batch, a machine switched off) is served them again instead of computing them anew when it starts over.

A job repeats itself on one machine (fixed seeds, the same threads), so a restarted job asks for the same
geometries in the same order; the engine looks each up here (by its own key: atoms, positions, charge, spin and
every setting that changes the number) before it computes. A geometry that is not found, because the job took
another turn or runs on another CPU, is simply computed: a served point is always the number that geometry gave.
Past the last served point the job goes on from a fresh wavefunction guess, so its numbers may differ from an
uninterrupted run's in the SCF tolerance's last digits, as between any two machines.

Format: one file per job, a header line (``MAGIC``) and a sequence of records, each ``<length:u32><crc32:u32>
<payload>`` with the payload a UTF-8 JSON header, a zero byte and the raw float64 bytes of its array. A record cut
short by a kill (or whose checksum does not match) ends the log: it and anything after it are dropped and
overwritten. Each record is one unbuffered append (a killed process loses nothing the kernel has; a machine crash
may lose the last few). The file is held under an exclusive lock while open, so a worker left over from a killed
batch and the new run's worker never write one log at once (the second waits ``LOCK_WAIT_S``, then goes without).
A file at the log's place that is not a log (a header destroyed by a crash) is moved aside (``DAMAGED_SUFFIX``;
the batch removes it with the job's log) and a new log begun.
The log is an aid, never a reason to stop a job: a log that cannot be written (a full disk) is logged once and
the job goes on without it.
"""

from __future__ import annotations

import datetime as _dt
import fcntl
import json
import logging
import os
import struct
import time
import zlib
from pathlib import Path

import numpy as np

log = logging.getLogger("elimscan.batch")

_FRAME = struct.Struct("<II")
#: the log's first bytes: a file without them is not a replay log
MAGIC = b"elimscan-replay 1\n"
#: what a file that is not a log is renamed to: ``<name>`` + this + a UTC time stamp
DAMAGED_SUFFIX = ".damaged-"


#: how long a new log waits for the lock of a process that still holds it (a worker left over from a killed batch
#: exits within about a second), in seconds
LOCK_WAIT_S = 3.0


def _open_locked(path: Path) -> int:
    """Return a descriptor of ``path`` (opened for appending, created if missing) under an exclusive lock; raise
    BlockingIOError when another process still holds the lock after ``LOCK_WAIT_S``."""
    fd = os.open(path, os.O_RDWR | os.O_CREAT | os.O_APPEND, 0o644)
    waited = 0.0
    try:
        while True:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                return fd
            except BlockingIOError:
                if waited >= LOCK_WAIT_S:
                    raise
                time.sleep(0.1)
                waited += 0.1
    except OSError:  # no lock (held, or a file system without locks): no log
        os.close(fd)
        raise


def remove_log(path: Path) -> None:
    """Remove the replay log at ``path`` with any file it moved aside; a failure is only logged (it costs disk
    space, nothing else)."""
    path = Path(path)
    for found in path.parent.glob(path.name + "*") if path.parent.is_dir() else ():
        try:
            found.unlink(missing_ok=True)
        except OSError as err:
            log.warning("could not remove the replay log %s: %s", found, err)


def drop_empty_folder(folder: Path) -> None:
    """Remove the folder of replay logs when none is left in it; a failure is only logged."""
    try:
        if Path(folder).is_dir() and not any(Path(folder).iterdir()):
            Path(folder).rmdir()
    except OSError as err:
        log.warning("could not remove the empty folder %s: %s", folder, err)


class ReplayLog:
    """The finished single points of one job, read from ``path`` when it exists, each new one appended to it."""

    def __init__(self, path: Path | str):
        self.path = Path(path)
        self._points: dict[str, tuple[dict, np.ndarray]] = {}
        self.dropped_bytes = 0
        self.served = 0
        self._fd: int | None = None
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            self._fd = _open_locked(self.path)
            data = self._read_all()
            if data and not data.startswith(MAGIC):
                self._move_aside()
                data = b""
            if not data:
                os.ftruncate(self._fd, 0)
                if os.write(self._fd, MAGIC) != len(MAGIC):
                    raise OSError("short write")
            else:
                os.ftruncate(self._fd, self._parse(data))
        except (OSError, ValueError) as err:
            self._give_up(err)

    def _read_all(self) -> bytes:
        """Return the whole file's bytes, read through the open descriptor (in pieces: one read stops at 2 GiB)."""
        size, pieces, offset = os.fstat(self._fd).st_size, [], 0
        while offset < size:
            piece = os.pread(self._fd, min(size - offset, 1 << 30), offset)
            if not piece:
                break
            pieces.append(piece)
            offset += len(piece)
        return b"".join(pieces)

    def _move_aside(self) -> None:
        """Rename the file at the log's place, which is no log, out of the way and open a new one there."""
        stamp = _dt.datetime.now(_dt.timezone.utc).strftime("%Y%m%dT%H%M%SZ")
        aside = self.path.with_name(self.path.name + DAMAGED_SUFFIX + stamp)
        os.replace(self.path, aside)
        log.warning("replay log %s: the file there was no replay log; moved to %s, a new log begun", self.path, aside)
        os.close(self._fd)
        self._fd = None
        self._fd = _open_locked(self.path)

    def _parse(self, data: bytes) -> int:
        """Keep every whole record of ``data``; return the byte offset after the last one."""
        offset = len(MAGIC)
        while offset + _FRAME.size <= len(data):
            length, crc = _FRAME.unpack_from(data, offset)
            payload = data[offset + _FRAME.size:offset + _FRAME.size + length]
            if len(payload) < length or zlib.crc32(payload) != crc:
                break
            header, _, raw = payload.partition(b"\0")
            try:
                fields = json.loads(header)
                key = fields.pop("key")
            except (ValueError, KeyError, TypeError, AttributeError):
                break
            self._points[key] = (fields, np.frombuffer(raw, dtype="<f8").copy())
            offset += _FRAME.size + length
        self.dropped_bytes = len(data) - offset
        if self.dropped_bytes:
            log.info("replay log %s: %d byte(s) of a record cut short dropped", self.path, self.dropped_bytes)
        return offset

    def _give_up(self, err: Exception) -> None:
        """Stop writing (and log why, once): the job goes on without its replay log."""
        log.warning("replay log %s not written, the job goes on without it: %s", self.path, err)
        self.close()

    def __len__(self) -> int:
        return len(self._points)

    def get(self, key: str) -> tuple[dict, np.ndarray] | None:
        """Return (fields, float64 array) of a point an earlier run finished, or None; counts it in ``served``."""
        found = self._points.get(key)
        if found is not None:
            self.served += 1
        return found

    def put(self, key: str, fields: dict, array: np.ndarray | None = None) -> None:
        """Append one finished point: JSON-able ``fields`` (floats round-trip exactly) and an optional array.

        Only points read from the file are served (``get``): a point of this run is the engine's to cache."""
        if self._fd is None:
            return
        try:
            raw = b"" if array is None else np.ascontiguousarray(array, dtype="<f8").tobytes()
            payload = json.dumps({"key": key, **fields}, separators=(",", ":")).encode() + b"\0" + raw
            frame = _FRAME.pack(len(payload), zlib.crc32(payload)) + payload
            if os.write(self._fd, frame) != len(frame):
                raise OSError("short write")
        except (OSError, ValueError, TypeError) as err:
            self._give_up(err)

    def close(self) -> None:
        """Close the file and release its lock (the log stays on disk until its job's result is kept)."""
        if self._fd is not None:
            try:
                os.close(self._fd)
            except OSError:
                pass
            self._fd = None
