"""A job's replay log: every single point it finished, kept on disk so that a job stopped half-way (a killed
batch, a machine switched off) is served them again instead of computing them anew when it starts over.

A job is deterministic on one machine (fixed seeds, one thread per library), so a restarted job asks for the
same geometries in the same order; the engine looks each up here (by its own key: atoms, positions, charge,
spin and every setting that changes the number) before it computes. A geometry that is not found, because the
job took another turn or runs on another CPU, is simply computed: a served point is always the number that
geometry gave. Past the last served point the job goes on from a fresh wavefunction guess, so its numbers may
differ from an uninterrupted run's in the SCF tolerance's last digits, as between any two machines.

Format: one file per job, a sequence of records, each ``<length:u32><crc32:u32><payload>`` with the payload a
UTF-8 JSON header, a zero byte and the raw float64 bytes of its array. A record cut short by a kill (or whose
checksum does not match) ends the log: it and anything after it are dropped and overwritten. Written with a
flush after every record (a killed process loses nothing the kernel has; a machine crash may lose the last few).
The log is an aid, never a reason to stop a job: a log that cannot be written (a full disk) is logged once and
the job goes on without it.
"""

from __future__ import annotations

import json
import logging
import struct
import zlib
from pathlib import Path

import numpy as np

log = logging.getLogger("elimscan.engines")

_FRAME = struct.Struct("<II")
#: the log's first bytes: a file without them is not a replay log, and is left alone
MAGIC = b"elimscan-replay 1\n"


class ReplayLog:
    """The finished single points of one job, read from ``path`` when it exists, each new one appended to it."""

    def __init__(self, path: Path | str):
        self.path = Path(path)
        self._points: dict[str, tuple[dict, np.ndarray]] = {}
        self.dropped_bytes = 0
        self.served = 0
        self._file = None
        try:
            end = self._read()
            self.path.parent.mkdir(parents=True, exist_ok=True)
            self._file = open(self.path, "r+b" if end else "wb")
            if end:
                self._file.seek(end)
                self._file.truncate()
            else:
                self._file.write(MAGIC)
                self._file.flush()
        except (OSError, ValueError) as err:
            self._give_up(err)

    def _give_up(self, err: Exception) -> None:
        """Stop writing (and log why, once): the job goes on without its replay log."""
        log.warning("replay log %s not written, the job goes on without it: %s", self.path, err)
        if self._file is not None:
            self._file.close()
        self._file = None

    def _read(self) -> int:
        """Read every whole record; return the byte offset after the last one (0: no usable log)."""
        try:
            data = self.path.read_bytes()
        except FileNotFoundError:
            return 0
        if not data.startswith(MAGIC):
            if data:
                raise ValueError("the file exists but is not an elimscan replay log; it is left as it is")
            return 0
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
            except (ValueError, KeyError, TypeError):
                break
            self._points[key] = (fields, np.frombuffer(raw, dtype="<f8").copy())
            offset += _FRAME.size + length
        self.dropped_bytes = len(data) - offset
        if self.dropped_bytes:
            log.info("replay log %s: %d byte(s) of a record cut short dropped", self.path, self.dropped_bytes)
        return offset

    def __len__(self) -> int:
        return len(self._points)

    def get(self, key: str) -> tuple[dict, np.ndarray] | None:
        """Return (fields, float64 array) stored under ``key``, or None; counts what it serves in ``served``."""
        found = self._points.get(key)
        if found is not None:
            self.served += 1
        return found

    def put(self, key: str, fields: dict, array: np.ndarray | None = None) -> None:
        """Append one finished point: JSON-able ``fields`` (floats round-trip exactly) and an optional array."""
        raw = b"" if array is None else np.ascontiguousarray(array, dtype="<f8").tobytes()
        payload = json.dumps({"key": key, **fields}, separators=(",", ":")).encode() + b"\0" + raw
        if self._file is not None:
            try:
                self._file.write(_FRAME.pack(len(payload), zlib.crc32(payload)) + payload)
                self._file.flush()
            except OSError as err:
                self._give_up(err)
        self._points[key] = (fields, np.frombuffer(raw, dtype="<f8").copy())

    def close(self) -> None:
        """Close the file (the log stays on disk until its job's result is kept)."""
        if self._file is not None:
            self._file.close()
            self._file = None
