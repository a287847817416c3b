"""A folder of finished job records kept by job key, so that long work outlives the machine it ran on.

The reference benchmark takes longer than any one machine may live (validation/validate.py): each finished job's
record (its job.json as the store holds it), its wall time, the batch provenance and the commit that computed it
are kept as ``<job key>.json.gz`` in a folder that can be committed with the code (a few kB a job). A job whose
key is archived is never computed again: the key holds every input and setting that changes its numbers
(pipeline/document.job_key), so an archived record is the record that job would write. Files are written
atomically and never overwritten (one key, one record); their bytes do not depend on when they were written.
"""

from __future__ import annotations

import gzip
import json
from dataclasses import asdict, dataclass
from pathlib import Path

from elimscan.atomicio import write_bytes_atomic

#: one archived job: ``<key>`` + this
ARCHIVE_SUFFIX = ".json.gz"


@dataclass(frozen=True)
class ArchivedJob:
    """One finished job: its record, wall time (s), the provenance of its batch and the commit that computed it."""

    job: dict
    wall_seconds: float | None
    provenance: dict | None
    commit: str


def archived_keys(folder: Path) -> set[str]:
    """Return the job keys archived in ``folder`` (empty when it does not exist)."""
    if not folder.is_dir():
        return set()
    return {p.name[:-len(ARCHIVE_SUFFIX)] for p in folder.iterdir() if p.name.endswith(ARCHIVE_SUFFIX)}


def read_archived(folder: Path, keys: set[str] | list[str]) -> dict[str, ArchivedJob]:
    """Return the archived jobs of ``keys`` that ``folder`` holds, by key (a key it lacks is left out)."""
    found = {}
    for key in keys:
        path = folder / f"{key}{ARCHIVE_SUFFIX}"
        if path.is_file():
            found[key] = ArchivedJob(**json.loads(gzip.decompress(path.read_bytes())))
    return found


def archive_jobs(folder: Path, jobs: dict[str, ArchivedJob]) -> int:
    """Write each job not yet archived in ``folder`` (created if missing); return how many were written."""
    folder.mkdir(parents=True, exist_ok=True)
    have, written = archived_keys(folder), 0
    for key, job in sorted(jobs.items()):
        if key in have:
            continue
        text = json.dumps(asdict(job), sort_keys=True, separators=(",", ":"))
        write_bytes_atomic(folder / f"{key}{ARCHIVE_SUFFIX}", gzip.compress(text.encode(), mtime=0))
        written += 1
    return written
