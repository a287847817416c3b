"""The batch store: one SQLite database (WAL mode) in a batch's output folder. Part of the batch layer.

Only the batch driver writes it; ``elimscan status`` reads it (read-only) while a batch runs. A job
counts as finished only once its row is committed, together with the checksums of its files, in one
transaction; the files are written (and renamed into place) before that. A job being computed has no
row in ``jobs``, only in ``running``, which the next batch clears: partial work never counts.

Tables: ``jobs`` (one row per finished job key: status ok or failed, its records as JSON), ``files``
(path, SHA-256, size per job key), ``runs`` (one row per ``elimscan batch`` invocation) with
``run_jobs`` (the keys of that invocation's config, in order), ``events`` (job starts and finishes),
``running`` (jobs being computed and their current step), ``run_stops`` (why a run stopped on an error),
``meta`` (store format).

A store SQLite calls corrupt (or not a database) raises ``StoreDamagedError``, whose message says how to
rebuild it from the job files (``batch/recovery.py``); this module never deletes or replaces a store file.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path

from elimscan.errors import OutputError, StoreDamagedError

#: store file name inside a batch's output folder
STORE_FILE = "batch.sqlite"
#: bumped when the tables change shape; an older store is refused with a message (a table added beside the
#: others, as run_stops was, is created on the next batch and read as empty by status before that)
STORE_FORMAT = "1"
#: the batch option that rebuilds a damaged store (named in the damage message)
REBUILD_OPTION = "--rebuild-store"
#: SQLite's primary result codes for a damaged file: SQLITE_CORRUPT, SQLITE_NOTADB; and a full disk: SQLITE_FULL
_CORRUPT_CODES = frozenset({11, 26})
_FULL_CODE = 13

_TABLES = """
CREATE TABLE IF NOT EXISTS meta (name TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS jobs (
    job_key TEXT PRIMARY KEY,
    job_id TEXT NOT NULL,
    substrate TEXT NOT NULL,
    base TEXT NOT NULL,
    solvent TEXT NOT NULL,
    source TEXT NOT NULL,
    status TEXT NOT NULL CHECK (status IN ('ok', 'failed')),
    error_type TEXT,
    error_message TEXT,
    job_json TEXT NOT NULL,
    molecules_json TEXT NOT NULL,
    folder TEXT,
    started_utc TEXT,
    finished_utc TEXT NOT NULL,
    wall_seconds REAL,
    worker TEXT,
    run_id INTEGER
);
CREATE TABLE IF NOT EXISTS files (
    job_key TEXT NOT NULL REFERENCES jobs(job_key) ON DELETE CASCADE,
    path TEXT NOT NULL,
    sha256 TEXT NOT NULL,
    size_bytes INTEGER NOT NULL,
    PRIMARY KEY (job_key, path)
);
CREATE TABLE IF NOT EXISTS runs (
    run_id INTEGER PRIMARY KEY AUTOINCREMENT,
    started_utc TEXT NOT NULL,
    ended_utc TEXT,
    state TEXT NOT NULL CHECK (state IN ('running', 'finished', 'interrupted', 'stopped')),
    pid INTEGER NOT NULL,
    host TEXT NOT NULL,
    command_line TEXT NOT NULL,
    config_name TEXT NOT NULL,
    executor TEXT NOT NULL,
    parallel_jobs INTEGER NOT NULL
);
CREATE TABLE IF NOT EXISTS run_jobs (
    run_id INTEGER NOT NULL REFERENCES runs(run_id),
    position INTEGER NOT NULL,
    job_key TEXT NOT NULL,
    job_id TEXT NOT NULL,
    PRIMARY KEY (run_id, position)
);
CREATE TABLE IF NOT EXISTS events (
    event_id INTEGER PRIMARY KEY AUTOINCREMENT,
    run_id INTEGER NOT NULL,
    time_utc TEXT NOT NULL,
    job_key TEXT NOT NULL,
    job_id TEXT NOT NULL,
    kind TEXT NOT NULL CHECK (kind IN ('start', 'ok', 'failed')),
    worker TEXT,
    detail TEXT
);
CREATE INDEX IF NOT EXISTS events_by_key ON events (job_key, kind);
CREATE TABLE IF NOT EXISTS run_stops (
    run_id INTEGER PRIMARY KEY,
    kind TEXT NOT NULL,
    message TEXT NOT NULL
);
CREATE TABLE IF NOT EXISTS running (
    job_key TEXT PRIMARY KEY,
    run_id INTEGER NOT NULL,
    job_id TEXT NOT NULL,
    worker TEXT,
    started_utc TEXT NOT NULL,
    step TEXT,
    step_utc TEXT
);
"""


@dataclass(frozen=True)
class StoredJob:
    """A finished job's row: status, records (JSON text), where and when it ran, and its files' checksums."""

    job_key: str
    job_id: str
    substrate: str
    base: str
    solvent: str
    source: str
    status: str
    error_type: str | None
    error_message: str | None
    job_json: str
    molecules_json: str
    folder: str | None
    started_utc: str | None
    finished_utc: str
    wall_seconds: float | None
    worker: str | None
    run_id: int | None
    files: tuple[tuple[str, str, int], ...]  # (path, sha256, size_bytes)


@dataclass(frozen=True)
class RunRow:
    """One ``elimscan batch`` invocation as the store recorded it."""

    run_id: int
    started_utc: str
    ended_utc: str | None
    state: str
    pid: int
    host: str
    command_line: str
    config_name: str
    executor: str
    parallel_jobs: int


@dataclass(frozen=True)
class RunningRow:
    """A job being computed: its worker, start time and latest progress message."""

    job_key: str
    job_id: str
    worker: str | None
    started_utc: str
    step: str | None
    step_utc: str | None


_JOB_COLUMNS = ("job_key, job_id, substrate, base, solvent, source, status, error_type, error_message, job_json, "
                "molecules_json, folder, started_utc, finished_utc, wall_seconds, worker, run_id")


def damaged_store_error(path: Path, what: str) -> StoreDamagedError:
    """Return the error that says a store is damaged (``what``: how) and how to rebuild it; batch and status use it."""
    return StoreDamagedError(
        f"batch store '{path}' is damaged: {what}; nothing was changed. Rebuild it from batch.json and the job files "
        f"(every finished job whose files match their checksums is kept, the damaged store is moved aside): "
        f"elimscan batch CONFIG --out {path.parent} {REBUILD_OPTION}")


def _store_error(path: Path, err: sqlite3.Error, doing: str) -> OutputError:
    """Return the OutputError of a failed store operation: damaged, disk full, or another failure with a hint."""
    code = getattr(err, "sqlite_errorcode", 0) & 0xFF
    if code in _CORRUPT_CODES:
        return damaged_store_error(path, f"SQLite says '{err}'")
    if code == _FULL_CODE:
        error = OutputError(f"disk full while writing '{path}': {err}; every job committed before is kept")
        error.errno = 28  # ENOSPC
        return error
    return OutputError(f"cannot {doing} the batch store '{path}': {err}{_HINT}")


def _connect(path: Path, read_only: bool) -> sqlite3.Connection:
    """Return a connection in autocommit mode (transactions are explicit) with our pragmas."""
    try:
        if read_only:
            conn = sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro", uri=True, isolation_level=None, timeout=30)
        else:
            conn = sqlite3.connect(str(path), isolation_level=None, timeout=30)
            conn.execute("PRAGMA journal_mode=WAL")
            conn.execute("PRAGMA synchronous=FULL")  # a committed job survives a power loss
        conn.execute("PRAGMA foreign_keys=ON")
        conn.execute("PRAGMA busy_timeout=30000")
    except sqlite3.Error as err:
        raise _store_error(path, err, "open") from err
    return conn


class JobStore:
    """The SQLite store of one batch folder; write methods are for the batch driver only."""

    def __init__(self, path: str | Path, read_only: bool = False):
        self.path = Path(path)
        if read_only and not self.path.is_file():
            raise OutputError(f"no batch store '{self.path}': not a batch output folder (or no batch has started there)")
        self.read_only = read_only
        self._conn = _connect(self.path, read_only)
        try:
            self._check_integrity()
            if not read_only:
                self._create()
            self._check_format()
        except BaseException:
            self._conn.close()
            raise

    # --- plumbing ------------------------------------------------------------------------------------

    def _check_integrity(self) -> None:
        """Raise StoreDamagedError when SQLite finds the file damaged (PRAGMA quick_check reads every page once)."""
        problems = [r[0] for r in self._rows("PRAGMA quick_check(3)")]
        if problems != ["ok"]:
            raise damaged_store_error(self.path, f"SQLite's check found: {'; '.join(problems)}")

    def _create(self) -> None:
        try:
            self._conn.executescript("BEGIN IMMEDIATE;" + _TABLES + "COMMIT;")
            self._conn.execute("INSERT OR IGNORE INTO meta (name, value) VALUES ('store_format', ?)", (STORE_FORMAT,))
        except sqlite3.Error as err:
            raise _store_error(self.path, err, "create") from err

    def _check_format(self) -> None:
        try:
            row = self._conn.execute("SELECT value FROM meta WHERE name = 'store_format'").fetchone()
        except sqlite3.Error as err:
            if getattr(err, "sqlite_errorcode", 0) & 0xFF in _CORRUPT_CODES:
                raise _store_error(self.path, err, "read") from err
            raise OutputError(f"'{self.path}' is not an elimscan batch store: {err}") from err
        if row is None or row[0] != STORE_FORMAT:
            raise OutputError(f"batch store '{self.path}' has format {row[0] if row else 'unknown'}, this elimscan "
                              f"reads format {STORE_FORMAT}: use the elimscan version that made it, or a new --out")

    def _transaction(self):
        return _Transaction(self._conn, self.path)

    def _rows(self, sql: str, params: Sequence = ()) -> list[tuple]:
        """Return every row of a query; SQLite errors become OutputError (StoreDamagedError for a damaged file)."""
        try:
            return self._conn.execute(sql, params).fetchall()
        except sqlite3.Error as err:
            raise _store_error(self.path, err, "read") from err

    def close(self) -> None:
        """Close the connection (the WAL is checkpointed by SQLite when the last writer closes)."""
        self._conn.close()

    def __enter__(self) -> "JobStore":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    # --- runs ----------------------------------------------------------------------------------------

    def begin_run(self, started_utc: str, pid: int, host: str, command_line: str, config_name: str, executor: str,
                  parallel_jobs: int, jobs: Sequence[tuple[str, str]]) -> int:
        """Return the id of a new run row; ``jobs`` are the (job_key, job_id) of the current config in order."""
        with self._transaction():
            cursor = self._conn.execute(
                "INSERT INTO runs (started_utc, state, pid, host, command_line, config_name, executor, parallel_jobs) "
                "VALUES (?, 'running', ?, ?, ?, ?, ?, ?)",
                (started_utc, pid, host, command_line, config_name, executor, parallel_jobs))
            run_id = int(cursor.lastrowid)
            self._conn.executemany("INSERT INTO run_jobs (run_id, position, job_key, job_id) VALUES (?, ?, ?, ?)",
                                   [(run_id, i, key, job_id) for i, (key, job_id) in enumerate(jobs)])
        return run_id

    def end_run(self, run_id: int, state: str, ended_utc: str, stop: tuple[str, str] | None = None) -> None:
        """Mark a run finished, interrupted or stopped, and forget its running jobs; ``stop`` is (kind, message) of
        the error that stopped it (kind: write_error, error or internal_error)."""
        with self._transaction():
            self._conn.execute("UPDATE runs SET state = ?, ended_utc = ? WHERE run_id = ?", (state, ended_utc, run_id))
            self._conn.execute("DELETE FROM running WHERE run_id = ?", (run_id,))
            if stop is not None:
                self._conn.execute("INSERT OR REPLACE INTO run_stops (run_id, kind, message) VALUES (?, ?, ?)",
                                   (run_id, *stop))

    def run_stop(self, run_id: int) -> tuple[str, str] | None:
        """Return (kind, message) of the error that stopped a run, or None (finished, interrupted, killed)."""
        if not self._rows("SELECT 1 FROM sqlite_master WHERE name = 'run_stops'"):
            return None  # a store made before run_stops existed, read by status
        rows = self._rows("SELECT kind, message FROM run_stops WHERE run_id = ?", (run_id,))
        return (rows[0][0], rows[0][1]) if rows else None

    def close_stale_runs(self, ended_utc: str) -> int:
        """Mark runs left 'running' by a killed driver as 'stopped' and clear their running jobs; return how many."""
        with self._transaction():
            count = self._conn.execute("UPDATE runs SET state = 'stopped', ended_utc = ? WHERE state = 'running'",
                                       (ended_utc,)).rowcount
            self._conn.execute("DELETE FROM running")
        return count

    def last_run(self) -> RunRow | None:
        """Return the latest run row, or None when no batch has started here."""
        rows = self._rows("SELECT run_id, started_utc, ended_utc, state, pid, host, command_line, config_name, "
                          "executor, parallel_jobs FROM runs ORDER BY run_id DESC LIMIT 1")
        return RunRow(*rows[0]) if rows else None

    def run_job_keys(self, run_id: int) -> list[tuple[str, str]]:
        """Return the (job_key, job_id) of a run's config, in order."""
        return [tuple(r) for r in self._rows(
            "SELECT job_key, job_id FROM run_jobs WHERE run_id = ? ORDER BY position", (run_id,))]

    # --- jobs ----------------------------------------------------------------------------------------

    def record_start(self, run_id: int, job_key: str, job_id: str, worker: str | None, time_utc: str) -> None:
        """Record that a worker started a job (an event and a running row)."""
        with self._transaction():
            self._conn.execute("INSERT INTO events (run_id, time_utc, job_key, job_id, kind, worker) "
                               "VALUES (?, ?, ?, ?, 'start', ?)", (run_id, time_utc, job_key, job_id, worker))
            self._conn.execute("INSERT OR REPLACE INTO running (job_key, run_id, job_id, worker, started_utc) "
                               "VALUES (?, ?, ?, ?, ?)", (job_key, run_id, job_id, worker, time_utc))

    def record_step(self, job_key: str, step: str, time_utc: str) -> None:
        """Record the latest progress message of a running job."""
        with self._transaction():
            self._conn.execute("UPDATE running SET step = ?, step_utc = ? WHERE job_key = ?", (step, time_utc, job_key))

    def record_finished(self, job: StoredJob) -> None:
        """Commit a finished job (ok or failed) with its files' checksums in one transaction."""
        if job.status not in ("ok", "failed"):
            raise ValueError(f"status must be ok or failed, got {job.status!r}")
        with self._transaction():
            self._conn.execute("DELETE FROM files WHERE job_key = ?", (job.job_key,))
            self._conn.execute(f"INSERT OR REPLACE INTO jobs ({_JOB_COLUMNS}) VALUES ({', '.join('?' * 17)})",
                               (job.job_key, job.job_id, job.substrate, job.base, job.solvent, job.source, job.status,
                                job.error_type, job.error_message, job.job_json, job.molecules_json, job.folder,
                                job.started_utc, job.finished_utc, job.wall_seconds, job.worker, job.run_id))
            self._conn.executemany("INSERT INTO files (job_key, path, sha256, size_bytes) VALUES (?, ?, ?, ?)",
                                   [(job.job_key, p, s, n) for p, s, n in job.files])
            if job.run_id is not None:
                self._conn.execute("INSERT INTO events (run_id, time_utc, job_key, job_id, kind, worker, detail) "
                                   "VALUES (?, ?, ?, ?, ?, ?, ?)",
                                   (job.run_id, job.finished_utc, job.job_key, job.job_id, job.status, job.worker,
                                    job.error_type))
            self._conn.execute("DELETE FROM running WHERE job_key = ?", (job.job_key,))

    def finished(self, keys: Iterable[str] | None = None, with_records: bool = False) -> dict[str, StoredJob]:
        """Return {job_key: finished row} for the given keys (all rows when None).

        The records (``job_json``, ``molecules_json``) are read only ``with_records``; otherwise they are ''.
        """
        wanted = None if keys is None else set(keys)
        files: dict[str, list[tuple[str, str, int]]] = {}
        for key, path, sha, size in self._rows("SELECT job_key, path, sha256, size_bytes FROM files ORDER BY path"):
            if wanted is None or key in wanted:
                files.setdefault(key, []).append((path, sha, size))
        columns = _JOB_COLUMNS if with_records else _JOB_COLUMNS.replace("job_json, molecules_json", "'', ''")
        found = {}
        for row in self._rows(f"SELECT {columns} FROM jobs"):
            if wanted is None or row[0] in wanted:
                found[row[0]] = StoredJob(*row, files=tuple(files.get(row[0], ())))
        return found

    def running(self) -> list[RunningRow]:
        """Return the jobs being computed (as the driver last recorded them)."""
        return [RunningRow(*r) for r in self._rows(
            "SELECT job_key, job_id, worker, started_utc, step, step_utc FROM running ORDER BY started_utc")]

    def job_starts(self, run_id: int | None = None) -> list[str]:
        """Return the job keys of every recorded job start (of one run, or of all), oldest first."""
        if run_id is None:
            return [r[0] for r in self._rows("SELECT job_key FROM events WHERE kind = 'start' ORDER BY event_id")]
        return [r[0] for r in self._rows(
            "SELECT job_key FROM events WHERE kind = 'start' AND run_id = ? ORDER BY event_id", (run_id,))]

    def start_counts(self) -> dict[str, int]:
        """Return {job_key: number of recorded starts} over all runs."""
        return {k: n for k, n in self._rows(
            "SELECT job_key, COUNT(*) FROM events WHERE kind = 'start' GROUP BY job_key")}

    def record_earlier_starts(self, job_key: str, job_id: str, count: int, time_utc: str) -> None:
        """Record ``count`` job starts made before this store existed (a rebuilt store: run id 0, no worker)."""
        with self._transaction():
            self._conn.executemany("INSERT INTO events (run_id, time_utc, job_key, job_id, kind, detail) "
                                   "VALUES (0, ?, ?, ?, 'start', 'before the store was rebuilt')",
                                   [(time_utc, job_key, job_id)] * count)

    def finished_durations(self, keys: Iterable[str]) -> list[float]:
        """Return the wall times (s) of finished jobs among ``keys`` that a worker computed in one go (a job that
        started over from its replay log timed its last run only, and is left out)."""
        wanted = set(keys)
        return [s for k, s in self._rows("SELECT job_key, wall_seconds FROM jobs WHERE wall_seconds IS NOT NULL AND "
                                         "COALESCE(json_extract(job_json, '$.replayed_points'), 0) = 0")
                if k in wanted]


#: added to store write errors: what a user should check (SQLite says only "disk I/O error" for a full disk)
_HINT = " (disk full, file-size limit or folder not writable? every job committed before is kept)"


class _Transaction:
    """BEGIN IMMEDIATE ... COMMIT (ROLLBACK on an exception); SQLite errors become OutputError."""

    def __init__(self, conn: sqlite3.Connection, path: Path):
        self._conn, self._path = conn, path

    def __enter__(self) -> None:
        try:
            self._conn.execute("BEGIN IMMEDIATE")
        except sqlite3.Error as err:
            raise _store_error(self._path, err, "write") from err

    def __exit__(self, exc_type, exc, tb) -> bool:
        if exc_type is None:
            try:
                self._conn.execute("COMMIT")
            except sqlite3.Error as err:
                if self._conn.in_transaction:  # SQLite may have rolled back already (I/O error, disk full)
                    try:
                        self._conn.execute("ROLLBACK")
                    except sqlite3.Error:
                        pass
                raise _store_error(self._path, err, "commit to") from err
            return False
        try:
            self._conn.execute("ROLLBACK")
        except sqlite3.Error:
            pass
        if isinstance(exc, sqlite3.Error):
            raise _store_error(self._path, exc, "write") from exc
        return False
