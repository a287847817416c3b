"""A damaged or lost batch store: found before SQLite opens it, and rebuilt from batch.json and the job files.

SQLite discards a write-ahead log (``batch.sqlite-wal``, which holds the latest commits until a checkpoint)
when it opens an empty or missing database beside it, so ``store_damage`` looks at the files first; a store
SQLite itself finds damaged raises ``StoreDamagedError`` from ``store.py``. Both say what happened in the same
words (``store.damaged_store_error``) and name the rebuild. ``rebuild_store`` moves every file of the old
store aside under a timestamped name (never deleted, never overwritten), then builds a new store from each job
folder's ``job.json`` whose files match their checksums, cross-checked with batch.json where it lists the job.
"""

from __future__ import annotations

import datetime as _dt
import logging
import os
from dataclasses import dataclass, field
from pathlib import Path

from pydantic import ValidationError

from elimscan.errors import OutputError
from elimscan.results.documents import BatchIndex, BatchJobEntry
from elimscan.pipeline.document import utc_now
from elimscan.batch.documents import INDEX_FILE
from elimscan.batch.jobfiles import JOB_COPY_FILE, row_from_copy
from elimscan.batch.store import STORE_FILE, JobStore, StoredJob, damaged_store_error

log = logging.getLogger("elimscan.batch")

#: the files SQLite keeps beside a store in WAL mode (moved aside with it)
_SIDE_FILES = ("-wal", "-shm")


def _size(path: Path) -> int:
    try:
        return path.stat().st_size
    except OSError:
        return 0


def _finished_folders(out: Path) -> int:
    """Return how many job folders hold a job copy (or, written by an older elimscan, any file)."""
    copies = sum(1 for _ in out.glob(f"jobs/*/*/{JOB_COPY_FILE}"))
    return copies or sum(1 for p in out.glob("jobs/*/*") if p.is_dir())


def store_damage(out: Path) -> str | None:
    """Return what is wrong with the store of a batch folder before SQLite may open it, or None.

    Damaged: empty (0 bytes) or missing while its write-ahead log, batch.json or finished job folders show that
    jobs were committed. An empty or missing store with none of them is a batch not yet started (or its creation
    cut short), which a batch starts afresh.
    """
    path = out / STORE_FILE
    wal = path.with_name(STORE_FILE + "-wal")
    missing = not path.exists()
    if not missing and _size(path) > 0:
        return None
    what = "the file is missing" if missing else "the file is empty (0 bytes)"
    if _size(wal) > 0:
        return (f"{what} while its write-ahead log '{wal.name}' ({_size(wal)} bytes) holds the latest commits, which "
                "SQLite would discard on opening it")
    evidence = []
    if (out / INDEX_FILE).is_file():
        evidence.append(INDEX_FILE)
    n_folders = _finished_folders(out)
    if n_folders:
        evidence.append(f"{n_folders} finished job folder{'s' if n_folders > 1 else ''}")
    if evidence:
        return f"{what} although the folder holds {' and '.join(evidence)}"
    return None


def check_store(out: Path) -> None:
    """Raise StoreDamagedError when ``store_damage`` finds the store of ``out`` damaged; return None otherwise."""
    problem = store_damage(out)
    if problem is not None:
        raise damaged_store_error(out / STORE_FILE, problem)


def move_aside(out: Path, now: _dt.datetime | None = None) -> list[Path]:
    """Rename the store and its side files to ``batch-damaged-<UTC time>.sqlite[-wal|-shm]``; return the new paths.

    The new name never replaces an existing file (a counter is added); SQLite can open the moved pair as before.
    """
    stamp = (now or _dt.datetime.now(_dt.timezone.utc)).strftime("%Y%m%dT%H%M%SZ")
    stem = Path(STORE_FILE).stem
    for number in range(1, 1000):
        name = f"{stem}-damaged-{stamp}" + ("" if number == 1 else f"-{number}") + ".sqlite"
        if not any((out / (name + side)).exists() for side in ("", *_SIDE_FILES)):
            break
    else:
        raise OutputError(f"cannot find a free name to move the damaged store of '{out}' aside")
    moved = []
    for side in ("", *_SIDE_FILES):
        source = out / (STORE_FILE + side)
        if source.exists():
            target = out / (name + side)
            try:
                os.rename(source, target)
            except OSError as err:
                raise OutputError(f"cannot move the damaged store '{source}' aside to '{target}': "
                                  f"{err.strerror or err}") from err
            moved.append(target)
    return moved


@dataclass
class RebuildReport:
    """What a store rebuild did: where the old store went, the jobs kept, and the jobs left to compute again."""

    moved: list[Path] = field(default_factory=list)
    n_ok: int = 0
    n_failed: int = 0
    skipped: list[tuple[str, str]] = field(default_factory=list)  # (job folder or id, why it is computed again)
    index_note: str = ""


def _read_index(out: Path) -> tuple[dict[str, BatchJobEntry], str]:
    """Return ({job key: batch.json entry}, '') or ({}, why batch.json cannot be used)."""
    path = out / INDEX_FILE
    try:
        index = BatchIndex.model_validate_json(path.read_bytes())
    except FileNotFoundError:
        return {}, f"no {INDEX_FILE}: the job copies are checked against their own checksums only"
    except (OSError, ValidationError) as err:
        return {}, f"{INDEX_FILE} cannot be used ({str(err).splitlines()[0]}): the job copies are checked alone"
    return {entry.job_key: entry for entry in index.jobs}, ""


def _disagreement(row: StoredJob, entry: BatchJobEntry | None) -> str | None:
    """Return how a job copy disagrees with batch.json's entry of the same job, or None (also: no entry)."""
    if entry is None or entry.status == "not finished":  # finished after batch.json was last written
        return None
    listed = {f.path: (f.sha256, f.size_bytes) for f in entry.files}
    own = {path: (sha, size) for path, sha, size in row.files}
    if listed != own:
        changed = sorted(p for p in set(listed) | set(own) if listed.get(p) != own.get(p))
        return f"its files differ from those {INDEX_FILE} lists ({', '.join(changed[:3])})"
    return None


def rebuild_store(out: Path) -> RebuildReport:
    """Move the store of ``out`` aside and build a new one from the intact job copies; return what was kept.

    A job is kept when its ``job.json`` and every file it lists match their checksums and, where batch.json
    lists the job as finished, the same files and checksums as there. batch.json's start counts are carried
    over (at least one for a kept job). Everything else is computed again by the batch that follows.
    """
    report = RebuildReport(moved=move_aside(out))
    index, report.index_note = _read_index(out)
    rows: dict[str, StoredJob] = {}
    for copy in sorted(out.glob(f"jobs/*/*/{JOB_COPY_FILE}")):
        rel = copy.relative_to(out).as_posix()
        row, problem = row_from_copy(out, rel)
        if row is not None:
            problem = _disagreement(row, index.get(row.job_key))
        if problem is not None:
            report.skipped.append((str(Path(rel).parent), problem))
            continue
        if row.job_key not in rows or row.finished_utc > rows[row.job_key].finished_utc:
            rows[row.job_key] = row
    reported = {where for where, _ in report.skipped}
    for key, entry in index.items():
        if entry.status != "not finished" and entry.worker is not None and key not in rows \
                and entry.folder not in reported:
            report.skipped.append((entry.job_id, f"{INDEX_FILE} lists it as {entry.status}, but no intact "
                                                  f"{JOB_COPY_FILE} was found in its folder"))
    with JobStore(out / STORE_FILE) as store:
        for row in rows.values():
            store.record_finished(row)
        starts = {key: (entry.job_id, entry.job_starts) for key, entry in index.items()}
        for key, row in rows.items():  # a kept job batch.json does not count yet: computed at least once
            if starts.get(key, (None, 0))[1] == 0:
                starts[key] = (row.job_id, 1)
        for key, (job_id, count) in starts.items():
            if count:
                store.record_earlier_starts(key, job_id, count, utc_now())
    report.n_ok = sum(r.status == "ok" for r in rows.values())
    report.n_failed = len(rows) - report.n_ok
    return report

