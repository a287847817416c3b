"""The batch's documents from its store: ``results.json`` (every job finished) and ``batch.json`` (always).

Both are assembled from the store's rows for the current config's keys only; the run document itself is
built by ``pipeline.document.run_document``, as for ``elimscan run``.
"""

from __future__ import annotations

import json

from pydantic import ValidationError

from elimscan.config import ExecutorConfig
from elimscan.errors import OutputError
from elimscan.results.documents import BatchCounts, BatchIndex, BatchJobEntry, FileChecksum, Provenance, RunResult
from elimscan.results.records import ErrorInfo, JobRecord, MoleculeRecord
from elimscan.pipeline.document import provenance, run_document
from elimscan.batch.plan import BatchPlan
from elimscan.batch.store import STORE_FILE, JobStore, StoredJob

RESULTS_FILE = "results.json"
INDEX_FILE = "batch.json"


def _provenance(plan: BatchPlan, command_line: str) -> Provenance:
    """Return the provenance block of the batch's documents."""
    return provenance(plan.config, command_line, plan.versions)


def assemble_results(plan: BatchPlan, rows: dict[str, StoredJob], command_line: str) -> RunResult:
    """Return the RunResult of a finished batch, built from the store's rows for the current config's keys only."""
    jobs: list[JobRecord] = []
    molecules: list[MoleculeRecord] = []
    for job in plan.jobs:
        row = rows[job.key]
        try:
            jobs.append(JobRecord.model_validate_json(row.job_json))
            molecules += [MoleculeRecord.model_validate(data).model_copy(update={"solvent": job.solvent})
                          for data in json.loads(row.molecules_json)]
        except (ValidationError, ValueError) as err:
            raise OutputError(f"job '{job.job_id}': its record in {STORE_FILE} does not match the result format of "
                              f"this elimscan (written by another build?): {str(err).splitlines()[0]}; use a new "
                              "--out for this version") from err
    return run_document(plan.config, _provenance(plan, command_line), jobs, molecules)


def _series(plan: BatchPlan, jobs: list[JobRecord]) -> tuple:
    """Return the SeriesRecords of the config's substituent series over the given finished job records."""
    from elimscan.analysis.series import series_records

    config = plan.config
    return series_records(config.series, jobs, config.method.temperature_K, config.analysis.energy)


def _series_so_far(plan: BatchPlan, store: JobStore) -> tuple:
    """Return the SeriesRecords over the jobs of the current config finished so far (() without series)."""
    if not plan.config.series:
        return ()
    rows = store.finished([job.key for job in plan.jobs], with_records=True)
    return _series(plan, [JobRecord.model_validate_json(rows[job.key].job_json) for job in plan.jobs if job.key in rows])


def batch_index(plan: BatchPlan, store: JobStore, command_line: str, executor_config: ExecutorConfig) -> BatchIndex:
    """Return the batch.json document: every job of the current config with its key, state, times and files."""
    rows = store.finished([job.key for job in plan.jobs])
    starts = store.start_counts()
    entries = []
    for job in plan.jobs:
        row = rows.get(job.key)
        error = None
        if row is not None and row.error_type is not None:
            error = ErrorInfo(error_type=row.error_type, error_message=row.error_message or "")
        entries.append(BatchJobEntry(
            job_key=job.key, job_id=job.job_id, substrate=job.substrate_name, base=job.base.name, solvent=job.solvent,
            source=job.source, status=row.status if row else "not finished", error=error,
            job_starts=starts.get(job.key, 0), started_utc=row.started_utc if row else None,
            finished_utc=row.finished_utc if row else None, wall_seconds=row.wall_seconds if row else None,
            worker=row.worker if row else None, folder=row.folder if row else None,
            files=tuple(FileChecksum(path=p, sha256=s, size_bytes=n) for p, s, n in (row.files if row else ()))))
    n_ok = sum(e.status == "ok" for e in entries)
    n_failed = sum(e.status == "failed" for e in entries)
    return BatchIndex(provenance=_provenance(plan, command_line), config_name=plan.config.name,
                      complete=n_ok + n_failed == len(entries), store_file=STORE_FILE,
                      substrates_file=plan.substrates_file, substrates_file_sha256=plan.substrates_file_sha256,
                      executor=executor_config,
                      counts=BatchCounts(n_jobs=len(entries), n_ok=n_ok, n_failed=n_failed,
                                         n_not_finished=len(entries) - n_ok - n_failed),
                      jobs=tuple(entries),
                      series=_series_so_far(plan, store))
