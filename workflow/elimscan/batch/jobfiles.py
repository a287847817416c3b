"""A finished job's files in the batch folder: moved into the job's own folder, written atomically, checked by checksum.

Only the driver writes them (before the job's store commit); a resumed batch computes a job again when
one of its files is missing or changed. The last file of every computed job is ``job.json``: its store row
with the checksums of its other files (``FinishedJobCopy``), from which ``recovery.py`` rebuilds a damaged store.
"""

from __future__ import annotations

import dataclasses
import errno
import hashlib
import json
from collections.abc import Callable, Iterable, Sequence
from pathlib import Path, PurePosixPath

from pydantic import ValidationError

from elimscan.atomicio import remove_stale_temporaries, write_bytes_atomic
from elimscan.errors import OutputError
from elimscan.results.documents import FileChecksum, FinishedJobCopy
from elimscan.results.records import JobRecord, MoleculeRecord
from elimscan.batch.plan import PlannedJob
from elimscan.batch.store import StoredJob

#: a computed job's own copy of its store row, the last file written into its folder
JOB_COPY_FILE = "job.json"
#: write errors that belong to one job's file names (too long, not encodable here), not to the disk or folder:
#: they fail that job only, and the batch goes on
JOB_OWN_WRITE_ERRNOS = frozenset({errno.ENAMETOOLONG, errno.EILSEQ})

#: output-relative record fields that name a job's files
_FILE_FIELDS = frozenset({"conformer_file", "xyz_file", "path_file", "saddle_file", "complex_file", "product_file"})


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


def write_job_copy(out: Path, row: StoredJob, record: JobRecord, molecules: Sequence[MoleculeRecord]) -> StoredJob:
    """Write ``job.json`` (the row, its records and its files' checksums) into the row's folder; return the row
    with that file's checksum added to its files."""
    copy = FinishedJobCopy(
        job_key=row.job_key, job_id=row.job_id, substrate=row.substrate, base=row.base, solvent=row.solvent,
        source=row.source, status=row.status, job=record, molecules=tuple(molecules), folder=row.folder,
        started_utc=row.started_utc, finished_utc=row.finished_utc, wall_seconds=row.wall_seconds, worker=row.worker,
        files=tuple(FileChecksum(path=p, sha256=s, size_bytes=n) for p, s, n in row.files))
    written = write_file_atomic(out, f"{row.folder}/{JOB_COPY_FILE}", (copy.model_dump_json(indent=1) + "\n").encode())
    return dataclasses.replace(row, files=row.files + ((written.path, written.sha256, written.size_bytes),))


def row_from_copy(out: Path, rel: str) -> tuple[StoredJob | None, str]:
    """Return (the store row kept in the job copy ``rel``, '') when it and every file it lists are intact, else
    (None, why not). The row's run is unknown (None); its files are the listed ones and the copy itself."""
    try:
        data = (out / rel).read_bytes()
        copy = FinishedJobCopy.model_validate_json(data)
    except OSError as err:
        return None, f"cannot read '{rel}': {err.strerror or err}"
    except ValidationError as err:
        return None, f"'{rel}' is not a job copy of this elimscan: {str(err).splitlines()[0]}"
    folder = str(PurePosixPath(rel).parent)
    if copy.folder != folder or PurePosixPath(folder).name != copy.job_key[:12]:
        return None, f"'{rel}' names another folder ('{copy.folder}', key {copy.job_key[:12]}…)"
    files = tuple((f.path, f.sha256, f.size_bytes) for f in copy.files)
    problem = files_intact(out, files)
    if problem is not None:
        return None, problem
    own = (rel, hashlib.sha256(data).hexdigest(), len(data))
    return StoredJob(
        job_key=copy.job_key, job_id=copy.job_id, substrate=copy.substrate, base=copy.base, solvent=copy.solvent,
        source=copy.source, status=copy.status, error_type=copy.job.error.error_type if copy.job.error else None,
        error_message=copy.job.error.error_message if copy.job.error else None, job_json=copy.job.model_dump_json(),
        molecules_json=json.dumps([m.model_dump(mode="json") for m in copy.molecules]), folder=copy.folder,
        started_utc=copy.started_utc, finished_utc=copy.finished_utc, wall_seconds=copy.wall_seconds,
        worker=copy.worker, run_id=None, files=tuple(sorted(files + (own,)))), ""


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
