"""Overnight batches: many jobs, resumable, on local worker processes or an existing Dask cluster.

The driver (this module, in the ``elimscan batch`` process) takes a plan (``plan.py``: every job with its
key), skips the keys the store already holds, and hands the rest to an executor (``executors.py``).
Workers compute and return a ``JobOutcome``; only the driver writes (a worker only its job's replay log,
``replaylog.py``, which the driver removes once the job is kept): first the job's files
(``jobfiles.py``: temporary file, fsync, rename), then one store transaction with the record and the
files' checksums. Killing the driver at any moment loses at most the jobs being computed. A job whose files cannot be
written for reasons of its own (a name too long for the file system) fails alone; a full disk or an
unwritable folder stops the batch with one message, and the store records why (``elimscan status``).
A damaged store is refused before anything is read (``recovery.py``), or rebuilt on request.
``results.json`` and ``batch.json`` are assembled from the store's rows for the current config's keys
(``documents.py``).

Only the batch layer (with ``cli``) touches output folders. Progress is reported through a callback,
never printed; the text in its events (and in ``BatchOutcome.failures``) is printable (``output.text.printable``).
"""

from __future__ import annotations

import datetime as _dt
import json
import logging
import os
import signal
import socket
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from elimscan.atomicio import remove_stale_temporaries
from elimscan.config import ExecutorConfig
from elimscan.errors import ElimscanError, OutputError
from elimscan.results.documents import FileChecksum
from elimscan.results.records import ErrorInfo, JobRecord, MoleculeRecord
from elimscan.pipeline.document import solvent_label, utc_now
from elimscan.output.text import printable
from elimscan.batch.documents import INDEX_FILE, RESULTS_FILE, assemble_results, batch_index
from elimscan.batch.events import Done, Progress, Started
from elimscan.batch.executors import make_executor, planned_parallel_jobs
from elimscan.batch.jobfiles import (JOB_OWN_WRITE_ERRNOS, files_intact, relocate_outcome, write_file_atomic,
                                     write_job_copy, write_job_files)
from elimscan.batch.lock import refuse_inputs_among_outputs
from elimscan.batch.plan import BatchPlan, PlannedJob
from elimscan.batch.recovery import check_store, rebuild_store
from elimscan.batch.replaylog import drop_empty_folder, remove_log
from elimscan.batch.status import estimate_left
from elimscan.batch.store import STORE_FILE, JobStore, StoredJob
from elimscan.batch.worker import LOG_FILE, JobTask

log = logging.getLogger("elimscan.batch")

#: seconds between two store updates of one running job's step (status reads them)
_STEP_WRITE_INTERVAL_S = 2.0
#: the folder of the running jobs' replay logs (``batch.replaylog``; local executor): a job stopped half-way starts
#: over from its log; the log is removed once the job's result is kept, or for a failed job at the next run of the
#: batch that does not compute it again (``--retry-failed`` starts from it, after a time limit for instance)
REPLAY_DIR = "replay"


@dataclass(frozen=True)
class BatchOptions:
    """How to run a batch: retry failed jobs, the engine, the command line, and a test hook."""

    retry_failed: bool = False
    #: move a damaged store aside and rebuild it from the job folders' job.json before the batch (--rebuild-store)
    rebuild_store: bool = False
    #: 'module:function' of another engine than the config's (Python API; the command line sets method.engine_factory)
    engine_factory: str | None = None
    command_line: str = ""
    #: test hook: SIGKILL the driver itself right after this many store commits (None: never)
    kill_after_commits: int | None = None
    #: test hook (the kill test): SIGKILL the driver at (point, n), point one of KILL_POINTS (None: never)
    kill_at: tuple[str, int] | None = None


#: where the kill test's hook can stop the driver: after the n-th job start is stored; once the n-th finished
#: job's first temporary file is complete (before its rename); after the n-th job's files are all in place
#: (before its store commit); after the n-th commit; while writing batch.json (n counts its writes)
KILL_POINTS = ("start", "rename", "files", "commit", "documents")


def _kill_hook(options: "BatchOptions", point: str, count: int) -> None:
    """Test hook: SIGKILL this process when ``options.kill_at`` is (point, count); otherwise do nothing."""
    if options.kill_at == (point, count) or (point == "commit" and options.kill_after_commits == count):
        os.kill(os.getpid(), signal.SIGKILL)


@dataclass(frozen=True)
class BatchEvent:
    """Progress of a batch: what happened, to which job, and the counts and time estimate (s) after it; its text
    (message, running steps) is printable: control characters of user-given names are escaped."""

    kind: str  # plan | start | step | finish | tick
    n_jobs: int
    n_ok: int
    n_failed: int
    n_left: int
    elapsed_s: float
    eta_s: float | None = None
    job_id: str | None = None
    message: str | None = None
    status: str | None = None
    seconds: float | None = None
    running: tuple[tuple[str, str], ...] = ()  # (job_id, latest step) of the running jobs


@dataclass
class BatchOutcome:
    """What a batch run did: counts over the current config's jobs, and how many it computed now."""

    n_jobs: int = 0
    n_ok: int = 0
    n_failed: int = 0
    n_reused: int = 0
    n_computed: int = 0
    complete: bool = False
    results_file: Path | None = None
    failures: list[tuple[str, ErrorInfo]] = field(default_factory=list)
    #: numerical trouble counted over the finished batch's jobs (see trouble.count_trouble)
    trouble: dict[str, int] = field(default_factory=dict)


def _input_failure_row(job: PlannedJob, run_id: int) -> StoredJob:
    """Return the store row of a job that fails on its input (no worker runs it)."""
    record = JobRecord(job_id=job.job_id, substrate=job.substrate_name, base=job.base.name, status="failed",
                       error=job.input_error, solvent=job.solvent, job_key=job.key)
    molecule = MoleculeRecord(name=job.substrate_name, role="substrate", smiles=job.substrate_smiles, status="failed",
                              error=job.input_error, solvent=job.solvent)
    return _row(job, record, [molecule], [], run_id, None, None, None, folder=None)


def _row(job: PlannedJob, record: JobRecord, molecules: list[MoleculeRecord], files: list[FileChecksum],
         run_id: int | None, started_utc: str | None, seconds: float | None, worker: str | None,
         folder: str | None) -> StoredJob:
    return StoredJob(
        job_key=job.key, job_id=job.job_id, substrate=job.substrate_name, base=job.base.name,
        solvent=solvent_label(job.solvent), source=job.source, status=record.status,
        error_type=record.error.error_type if record.error else None,
        error_message=record.error.error_message if record.error else None,
        job_json=record.model_dump_json(), molecules_json=json.dumps([m.model_dump(mode="json") for m in molecules]),
        folder=folder, started_utc=started_utc, finished_utc=utc_now(),
        wall_seconds=None if seconds is None else round(seconds, 3), worker=worker, run_id=run_id,
        files=tuple((f.path, f.sha256, f.size_bytes) for f in files))


def run_batch(plan: BatchPlan, out: Path, executor_config: ExecutorConfig, threads: int,
              options: BatchOptions = BatchOptions(),
              on_event: Callable[[BatchEvent], None] | None = None) -> BatchOutcome:
    """Run the jobs of ``plan`` not yet finished in ``out`` (the caller holds the folder lock); return the counts.

    Writes each finished job's files and store row, then results.json and batch.json when every job has
    finished. An interrupt (KeyboardInterrupt) stops the workers, keeps everything finished and re-raises.
    """
    out = Path(out)
    wall_start = time.monotonic()
    refuse_inputs_among_outputs(out, plan.input_files)  # before anything is written
    if options.rebuild_store:
        _rebuild(out)
    else:
        check_store(out)  # before SQLite opens (and might empty) a damaged store
    store = JobStore(out / STORE_FILE)
    try:
        stale = store.close_stale_runs(utc_now())
        if stale:
            log.info("a previous batch in %s stopped without finishing; resuming", out)
        keys = [job.key for job in plan.jobs]
        finished = store.finished(keys)
        retried: set[str] = set()
        todo: list[PlannedJob] = []
        for job in plan.jobs:
            row = finished.get(job.key)
            if job.input_error is not None:
                continue
            if row is not None:
                problem = files_intact(out, row.files)
                if problem is not None:
                    log.warning("job %s: %s; computing it again", job.job_id, problem)
                elif row.status == "failed" and options.retry_failed:
                    retried.add(job.key)
                else:
                    continue
            todo.append(job)
        parallel_hint = planned_parallel_jobs(executor_config)
        run_id = store.begin_run(utc_now(), os.getpid(), socket.gethostname(), options.command_line,
                                 plan.config.name, executor_config.kind, parallel_hint,
                                 [(job.key, job.job_id) for job in plan.jobs])
        for job in plan.jobs:
            if job.input_error is not None:
                row = finished.get(job.key)
                if row is None or row.error_message != job.input_error.error_message:
                    store.record_finished(_input_failure_row(job, run_id))
                    log.warning("job %s fails on its input: %s", job.job_id, printable(job.input_error.error_message))
        outcome = BatchOutcome(n_jobs=len(plan.jobs))
        todo_keys = {job.key for job in todo}
        outcome.n_reused = sum(1 for job in plan.jobs if job.input_error is None and job.key not in todo_keys)
        state, stop, stopping = "interrupted", None, True
        _forget_replays(out, todo_keys)  # also when nothing is left to compute
        try:
            if todo:
                _compute(plan, todo, out, store, run_id, executor_config, threads, options, on_event, outcome,
                         wall_start)
            state, stopping = "finished", False
        except Exception as err:  # KeyboardInterrupt (Ctrl-C, SIGTERM) stays 'interrupted'
            state, stop = "stopped", _stop_reason(err)
            raise
        finally:
            _wind_up(plan, out, store, run_id, state, stop, options, executor_config, outcome, stopping)
        return outcome
    finally:
        store.close()


def _rebuild(out: Path) -> None:
    """Rebuild the store of ``out`` from its job copies (``recovery.rebuild_store``) and log what was kept."""
    report = rebuild_store(out)
    moved = ", ".join(str(p) for p in report.moved) or "no store file was there"
    log.warning("rebuilt the batch store %s from the job folders: %d ok and %d failed job(s) kept; the old store "
                "was moved aside (%s)", out / STORE_FILE, report.n_ok, report.n_failed, moved)
    if report.index_note:
        log.warning("%s", report.index_note)
    for where, why in report.skipped:
        log.warning("not kept, computed again: %s: %s", printable(where), printable(why))


def _stop_reason(err: Exception) -> tuple[str, str]:
    """Return (kind, message) of the error that stops a batch: write_error, error or internal_error."""
    if isinstance(err, OutputError):
        return "write_error", str(err)
    if isinstance(err, ElimscanError):
        return "error", f"{err.error_type}: {err}"
    return "internal_error", f"unexpected {type(err).__name__} (a bug; the traceback is in {LOG_FILE})"


def _wind_up(plan: BatchPlan, out: Path, store: JobStore, run_id: int, state: str, stop: tuple[str, str] | None,
             options: BatchOptions, executor_config: ExecutorConfig, outcome: BatchOutcome, stopping: bool) -> None:
    """Record the run's end (and why it stopped), then write the documents. While an error already stops the batch,
    a failure of these writes (the same full disk, most likely) is only logged, so that the first error is the
    one reported; otherwise it is raised."""
    first: OutputError | None = None
    for what, write in (("the run's end", lambda: store.end_run(run_id, state, utc_now(), stop)),
                        (INDEX_FILE, lambda: _finish_documents(plan, out, store, options, executor_config, outcome))):
        try:
            write()
        except OutputError as err:
            if not stopping and first is None:
                first = err
            log.debug("could not write %s: %s", what, err)
    if first is not None:
        raise first


def _compute(plan: BatchPlan, todo: list[PlannedJob], out: Path, store: JobStore, run_id: int,
             executor_config: ExecutorConfig, threads: int, options: BatchOptions,
             on_event: Callable[[BatchEvent], None] | None, outcome: BatchOutcome, wall_start: float) -> None:
    """Compute ``todo`` on the configured executor, committing each finished job; return when all are done."""
    by_key = {job.key: job for job in todo}
    replays = executor_config.kind == "local"  # Dask workers may not share this folder
    tasks = [JobTask(job.key, job.job_id, job.substrate, job.base, job.config, job.geometry, options.engine_factory,
                     str(_replay_path(out, job.key)) if replays else None)
             for job in todo]
    executor = make_executor(executor_config, threads, len(tasks), out)
    log.info("batch %s: %d job(s): %d finished before, %d failing on their input, %d to compute on %s",
             printable(plan.config.name), len(plan.jobs), len(plan.jobs) - len(todo) - plan.n_input_failures,
             plan.n_input_failures, len(todo), executor.description)
    finished_now = store.finished([job.key for job in plan.jobs])
    n_ok = sum(r.status == "ok" for k, r in finished_now.items() if k not in by_key)
    n_failed = sum(r.status == "failed" for k, r in finished_now.items() if k not in by_key)
    durations = store.finished_durations([job.key for job in plan.jobs])
    running: dict[str, tuple[float, str]] = {}  # key -> (monotonic start, latest step)
    step_written: dict[str, float] = {}
    commits = starts = 0

    def emit(kind: str, message: str | None = None, **extra) -> None:
        """Send a BatchEvent; its message and running steps are printable (user-given names escaped)."""
        if on_event is None:
            return
        now = time.monotonic()
        left = len(todo) - (n_ok + n_failed - base_done)
        eta = estimate_left(durations, max(0, left - len(running)), [now - s for s, _ in running.values()],
                             executor.parallel_jobs)
        on_event(BatchEvent(kind=kind, n_jobs=len(plan.jobs), n_ok=n_ok, n_failed=n_failed, n_left=left,
                            elapsed_s=now - wall_start, eta_s=eta,
                            running=tuple((by_key[k].job_id, printable(step)) for k, (_, step) in running.items()),
                            message=None if message is None else printable(message), **extra))

    base_done = n_ok + n_failed
    emit("plan", message=executor.description)
    try:
        executor.submit(tasks)
        last_tick = time.monotonic()
        while executor.outstanding():
            for event in executor.poll(0.5):
                job = by_key.get(event.key)
                if job is None:
                    continue
                if isinstance(event, Started):
                    running[event.key] = (time.monotonic(), "started")
                    store.record_start(run_id, job.key, job.job_id, event.worker, utc_now())
                    starts += 1
                    _kill_hook(options, "start", starts)
                    emit("start", job_id=job.job_id, message=event.worker)
                elif isinstance(event, Progress):
                    if event.key in running:
                        running[event.key] = (running[event.key][0], event.message)
                    log.debug("%s: %s", job.job_id, printable(event.message))
                    if time.monotonic() - step_written.get(event.key, 0.0) > _STEP_WRITE_INTERVAL_S:
                        store.record_step(job.key, event.message[:300], utc_now())
                        step_written[event.key] = time.monotonic()
                    emit("step", job_id=job.job_id, message=event.message)
                elif isinstance(event, Done):
                    if event.key not in running:  # the start event may arrive late (Dask) or never
                        store.record_start(run_id, job.key, job.job_id, event.worker, utc_now())
                    running.pop(event.key, None)
                    record = _commit(job, event, out, store, run_id,
                                     lambda point, n=commits + 1: _kill_hook(options, point, n))
                    if record.status == "ok":  # a failed job's log serves --retry-failed (after a time limit)
                        _forget_replay(out, job.key)
                    commits += 1
                    if not record.replayed_points:  # a job that started over from its log timed its last run
                        durations.append(event.seconds)
                    outcome.n_computed += 1
                    if record.status == "ok":
                        n_ok += 1
                    else:
                        n_failed += 1
                    emit("finish", job_id=job.job_id, status=record.status, seconds=event.seconds,
                         message=None if record.error is None else f"{record.error.error_type}: {record.error.error_message}")
                    _kill_hook(options, "commit", commits)  # test hook: die hard at a known point
            if time.monotonic() - last_tick > 1.0:
                emit("tick")
                last_tick = time.monotonic()
        executor.shutdown()
        _forget_replays(out, set(by_key))  # the folder goes when no failed job's log is left in it
    except BaseException:
        executor.shutdown(kill=True)
        if running:
            log.warning("stopped %d running job(s): %s; they start again on the next run", len(running),
                        ", ".join(by_key[k].job_id for k in running))
        raise


def _replay_path(out: Path, key: str) -> Path:
    """Return where the replay log of the job ``key`` is kept while it runs."""
    return out / REPLAY_DIR / f"{key}.replay"


def _forget_replays(out: Path, keep: set[str]) -> None:
    """With no worker running: remove the replay logs of every job but those in ``keep`` (finished, or no longer
    in the plan), and the folder when none is left; a log that cannot be removed is only logged."""
    folder = out / REPLAY_DIR
    if not folder.is_dir():
        return
    for key in {path.name.split(".", 1)[0] for path in folder.glob("*.replay*")} - keep:  # (a key has no dot)
        _forget_replay(out, key)
    drop_empty_folder(folder)


def _forget_replay(out: Path, key: str) -> None:
    """Remove the replay log of the job ``key`` (its result is kept) with any file it moved aside."""
    remove_log(_replay_path(out, key))


def _commit(job: PlannedJob, event: Done, out: Path, store: JobStore, run_id: int,
            hook: Callable[[str], None] | None = None) -> JobRecord:
    """Write a finished job's files and its job.json, then commit its row with their checksums; return its record.

    A job whose files cannot be written for a reason of its own (``JOB_OWN_WRITE_ERRNOS``: a name too long for
    the file system) is committed as failed (output_error, naming its input row); any other write error stops
    the batch. ``hook`` is the kill test's: called with 'rename' (first temporary file complete) and 'files'
    (all written, job.json too).
    """
    if event.outcome is not None:
        record, molecules, files = relocate_outcome(job, event.outcome)
    else:
        record = JobRecord(job_id=job.job_id, substrate=job.substrate_name, base=job.base.name, status="failed",
                           error=event.error, solvent=job.solvent, job_key=job.key)
        molecules, files = [], {}
    if event.traceback and (event.error is None or event.error.error_type == "internal_error"):
        log.error("job %s: unexpected error in the worker (a bug); the traceback is in %s", job.job_id, LOG_FILE)
        log.debug("job %s: traceback of the unexpected error:\n%s", job.job_id, event.traceback.rstrip())
    elif event.traceback:
        log.debug("job %s failed: %s", job.job_id, event.traceback.rstrip())
    started = (_dt.datetime.now(_dt.timezone.utc) - _dt.timedelta(seconds=event.seconds)).isoformat(timespec="milliseconds")
    try:
        sums = write_job_files(out, files, (lambda tmp: hook("rename")) if hook else None)
        row = _row(job, record, molecules, sums, run_id, started, event.seconds, event.worker, folder=job.folder)
        row = write_job_copy(out, row, record, molecules)
    except OutputError as err:
        if err.errno not in JOB_OWN_WRITE_ERRNOS:
            raise
        where = job.source if job.source != "config" else "the config"
        error = ErrorInfo(error_type="output_error", error_message=f"{where}: substrate '{job.substrate_name}': the "
                          f"job's files cannot be written, so its results are not kept: {err}")
        log.warning("job %s failed: %s; the other jobs go on", job.job_id, printable(error.error_message))
        record = JobRecord(job_id=job.job_id, substrate=job.substrate_name, base=job.base.name, status="failed",
                           error=error, solvent=job.solvent, job_key=job.key)
        row = _row(job, record, [], [], run_id, started, event.seconds, event.worker, folder=None)
    if hook is not None:
        hook("files")
    store.record_finished(row)
    return record


def _finish_documents(plan: BatchPlan, out: Path, store: JobStore, options: BatchOptions,
                      executor_config: ExecutorConfig, outcome: BatchOutcome) -> None:
    """Write batch.json always, and results.json when every job of the current config has finished."""
    index = batch_index(plan, store, options.command_line, executor_config)
    remove_stale_temporaries(out)
    write_file_atomic(out, INDEX_FILE, (index.model_dump_json(indent=2) + "\n").encode(),
                      lambda tmp: _kill_hook(options, "documents", 1))
    outcome.n_ok, outcome.n_failed = index.counts.n_ok, index.counts.n_failed
    outcome.failures = [(e.job_id, ErrorInfo(error_type=printable(e.error.error_type),
                                             error_message=printable(e.error.error_message)))
                        for e in index.jobs if e.status == "failed" and e.error is not None]
    outcome.complete = index.complete
    if index.complete:
        result = assemble_results(plan, store.finished([job.key for job in plan.jobs], with_records=True),
                                  options.command_line)
        write_file_atomic(out, RESULTS_FILE, (result.model_dump_json(indent=2) + "\n").encode())
        outcome.results_file = out / RESULTS_FILE
        outcome.trouble = result.summary.trouble
