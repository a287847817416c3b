"""A finished job's files in the batch folder: moved into the job's own folder, written atomically, checked by checksum.

Only the driver writes them (before the job's store commit); a resumed batch computes a job again when
one of its files is missing or changed.
"""

from __future__ import annotations

import hashlib
from collections.abc import Callable, Iterable
from pathlib import Path, PurePosixPath

from elimscan.atomicio import remove_stale_temporaries, write_bytes_atomic
from elimscan.errors import OutputError
from elimscan.results.documents import FileChecksum
from elimscan.results.records import JobRecord, MoleculeRecord
from elimscan.batch.plan import PlannedJob

#: output-relative record fields that name a job's files
_FILE_FIELDS = frozenset({"conformer_file", "xyz_file", "path_file", "saddle_file"})


def write_file_atomic(out: Path, rel: str, content: bytes,
                      before_rename: Callable[[Path], None] | None = None) -> FileChecksum:
    """Write one file through a temporary file, fsync and a rename (atomicio); return its checksum record."""
    write_bytes_atomic(out / rel, content, before_rename)
    return FileChecksum(path=rel, sha256=hashlib.sha256(content).hexdigest(), size_bytes=len(content))


def write_job_files(out: Path, files: dict[str, bytes],
                     before_first_rename: Callable[[Path], None] | None = None) -> list[FileChecksum]:
    """Write a job's files atomically (fsync'd, folders too); return their checksums.

    Temporary files left in the job's folder by a driver killed while writing are removed first.
    ``before_first_rename`` is the kill test's hook (called once the first temporary file is complete).
    """
    for folder in sorted({(out / rel).parent for rel in files}):
        remove_stale_temporaries(folder)
    sums = [write_file_atomic(out, rel, content, before_first_rename if i == 0 else None)
            for i, (rel, content) in enumerate(sorted(files.items()))]
    return sums


def files_intact(out: Path, files: Iterable[tuple[str, str, int]]) -> str | None:
    """Return the first problem with a finished job's files (missing, other size or checksum), or None."""
    for rel, sha, size in files:
        path = out / rel
        try:
            data = path.read_bytes()
        except OSError:
            return f"'{rel}' is missing"
        if len(data) != size or hashlib.sha256(data).hexdigest() != sha:
            return f"'{rel}' changed after the job finished"
    return None


def _relocate(value, folder: str):
    """Return a record dump with every file path moved into the job's folder (<folder>/<file name>)."""
    if isinstance(value, dict):
        return {k: (f"{folder}/{PurePosixPath(v).name}" if k in _FILE_FIELDS and isinstance(v, str) else _relocate(v, folder))
                for k, v in value.items()}
    if isinstance(value, list):
        return [_relocate(v, folder) for v in value]
    return value


def relocate_outcome(job: PlannedJob, outcome) -> tuple[JobRecord, list[MoleculeRecord], dict[str, bytes]]:
    """Return the job's record (its batch id, solvent and key set), molecule records and files, moved into its folder."""
    folder = job.folder
    files: dict[str, bytes] = {}
    for rel, content in outcome.files.items():
        target = f"{folder}/{PurePosixPath(rel).name}"
        if target in files:
            raise OutputError(f"job '{job.job_id}': two files named '{PurePosixPath(rel).name}'")
        files[target] = content
    record = JobRecord.model_validate(_relocate(outcome.job.model_dump(mode="json"), folder))
    record = record.model_copy(update={"job_id": job.job_id, "solvent": job.solvent, "job_key": job.key})
    molecules = [MoleculeRecord.model_validate(_relocate(m.model_dump(mode="json"), folder)).model_copy(
        update={"solvent": job.solvent}) for m in outcome.molecules]
    return record, molecules, files
