"""The status of a batch folder, read-only from its store and lock (safe while the batch runs)."""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass
from pathlib import Path

from elimscan.batch.lock import lock_holder
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


def read_status(out: str | Path) -> BatchStatus:
    """Return the status of a batch folder, read-only (safe while the batch runs)."""
    out = Path(out)
    holder = lock_holder(out)
    store = JobStore(out / STORE_FILE, read_only=True)
    try:
        run = store.last_run()
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
        out=out, holder=holder, run_state=("running" if holder else (run.state if run else None)),
        run_started_utc=run.started_utc if run else None, config_name=run.config_name if run else None,
        executor=run.executor if run else None, n_jobs=len(keys), n_ok=n_ok, n_failed=n_failed, n_left=n_left,
        running=tuple((r.job_id, r.worker, r.started_utc, r.step) for r in running),
        failures=tuple((r.job_id, r.error_type or "failed", r.error_message or "") for r in rows.values()
                       if r.status == "failed"),
        mean_job_seconds=mean, eta_s=eta)
