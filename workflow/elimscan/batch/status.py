"""The status of a batch folder, read-only from its store and lock (safe while the batch runs), and its text.

A damaged store raises ``StoreDamagedError`` with the same words as ``elimscan batch`` (``recovery.check_store``
runs before SQLite opens the file, which it might otherwise empty of its write-ahead log). Text read from the
store (names, messages) comes back printable: control characters escaped (``output.text.printable``).
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass
from pathlib import Path

from elimscan.output.text import duration_text, printable
from elimscan.batch.lock import lock_holder
from elimscan.batch.recovery import check_store
from elimscan.batch.store import STORE_FILE, JobStore


def estimate_left(durations: list[float], n_waiting: int, running_for: list[float], parallel: int) -> float | None:
    """Return the estimated seconds left: mean measured job time x remaining work / parallel jobs."""
    if not durations:
        return None
    mean = sum(durations) / len(durations)
    work = n_waiting * mean + sum(max(mean - t, 0.0) for t in running_for)
    return work / max(1, parallel)


@dataclass(frozen=True)
class BatchStatus:
    """A batch folder as its store and lock show it: the latest run, counts, running jobs, failures, estimate."""

    out: Path
    holder: str | None
    run_state: str | None
    run_started_utc: str | None
    config_name: str | None
    executor: str | None
    n_jobs: int
    n_ok: int
    n_failed: int
    n_left: int
    running: tuple[tuple[str, str | None, str, str | None], ...]  # (job_id, worker, started_utc, step)
    failures: tuple[tuple[str, str, str], ...]  # (job_id, error_type, error_message)
    mean_job_seconds: float | None
    eta_s: float | None
    #: (kind, message) of the error that stopped the latest run: write_error, error or internal_error (else None)
    stop: tuple[str, str] | None = None


def read_status(out: str | Path) -> BatchStatus:
    """Return the status of a batch folder, read-only (safe while the batch runs)."""
    out = Path(out)
    holder = lock_holder(out)
    if not holder:  # while a batch runs, its store is in use and whole
        check_store(out)
    store = JobStore(out / STORE_FILE, read_only=True)
    try:
        run = store.last_run()
        stop = store.run_stop(run.run_id) if run and not holder else None
        jobs = store.run_job_keys(run.run_id) if run else []
        keys = [k for k, _ in jobs]
        rows = store.finished(keys)
        running = store.running() if holder else []
        durations = store.finished_durations(keys)
    finally:
        store.close()
    n_ok = sum(r.status == "ok" for r in rows.values())
    n_failed = sum(r.status == "failed" for r in rows.values())
    n_left = len(keys) - n_ok - n_failed
    mean = sum(durations) / len(durations) if durations else None
    now = _dt.datetime.now(_dt.timezone.utc)
    running_for = [(now - _dt.datetime.fromisoformat(r.started_utc)).total_seconds() for r in running]
    parallel = (run.parallel_jobs if run else 0) or max(1, len(running))
    eta = estimate_left(durations, max(0, n_left - len(running)), running_for, parallel) if holder else None
    return BatchStatus(
        out=out, holder=None if holder is None else printable(holder),
        run_state=("running" if holder else (run.state if run else None)),
        run_started_utc=run.started_utc if run else None, config_name=printable(run.config_name) if run else None,
        executor=run.executor if run else None, n_jobs=len(keys), n_ok=n_ok, n_failed=n_failed, n_left=n_left,
        running=tuple((printable(r.job_id), r.worker and printable(r.worker), r.started_utc, r.step and printable(r.step))
                      for r in running),
        failures=tuple((printable(r.job_id), printable(r.error_type or "failed"), printable(r.error_message or ""))
                       for r in rows.values() if r.status == "failed"),
        mean_job_seconds=mean, eta_s=eta, stop=None if stop is None else (stop[0], printable(stop[1])))


#: how ``elimscan status`` words the end of a run that an error stopped, by the error's kind
_STOP_WORDS = {"write_error": "stopped on a write error", "error": "stopped on an error",
               "internal_error": "stopped on an internal error"}


def state_text(status: BatchStatus) -> str:
    """Return how the latest run stands in words: running (by whom), finished, interrupted, stopped and why."""
    again = "run the batch again to resume"
    if status.holder:
        return f"running ({status.holder})"
    if status.run_state == "finished":
        return "finished"
    if status.run_state == "interrupted":
        return f"interrupted (Ctrl-C or SIGTERM); {again}"
    if status.stop is not None:
        kind, message = status.stop
        fix = "free space or fix the folder, then " if kind == "write_error" else ""
        return f"{_STOP_WORDS.get(kind, 'stopped on an error')}: {message}; {fix}{again}"
    return f"stopped without finishing (killed?); {again}"


def status_lines(status: BatchStatus) -> list[str]:
    """Return the lines ``elimscan status`` prints: state, start, counts, mean job time (s) and estimate, running
    jobs and failures (names escaped)."""
    if status.config_name is None:
        return [f"{printable(str(status.out))}: a batch store without runs"]
    lines = [f"batch '{status.config_name}' in {printable(str(status.out))}: {state_text(status)}",
             f"  last started {status.run_started_utc} on {status.executor}",
             f"  jobs: {status.n_ok} ok, {status.n_failed} failed, {status.n_left} not finished, of {status.n_jobs}"]
    if status.mean_job_seconds is not None:
        eta = f"; about {duration_text(status.eta_s)} left" if status.eta_s is not None else ""
        lines.append(f"  mean time per computed job: {duration_text(status.mean_job_seconds)}{eta}")
    lines += [f"  running: {job_id} on {worker or '?'} since {since}: {step or 'starting'}"
              for job_id, worker, since, step in status.running]
    lines += [f"  failed: {job_id}: {error_type}: {message}" for job_id, error_type, message in status.failures]
    return lines
