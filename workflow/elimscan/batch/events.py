"""What executors report to the batch driver (``Started``, ``Progress``, ``Done``) and the errors they record.

A ``Done`` carries the job's outcome, or the error of a job stopped by a time limit or lost with its
worker process; both executors (``local.py``, ``dasktasks.py``) word those errors the same way.
"""

from __future__ import annotations

import signal
from dataclasses import dataclass

from elimscan.results.records import ErrorInfo


@dataclass(frozen=True)
class Started:
    """A worker started a job."""

    key: str
    worker: str


@dataclass(frozen=True)
class Progress:
    """A running job reported a step."""

    key: str
    message: str


@dataclass(frozen=True)
class Done:
    """A job ended: its outcome, or the error (time limit, dead worker, exception) and the traceback of a bug."""

    key: str
    worker: str
    seconds: float
    outcome: object | None = None
    error: ErrorInfo | None = None
    traceback: str | None = None


def death_message(exitcode: int | None) -> str:
    """Return how a process ended, in words: the signal that killed it (a hint at memory for SIGKILL) or its exit code."""
    if exitcode is not None and exitcode < 0:
        try:
            name = signal.Signals(-exitcode).name
        except ValueError:
            name = f"signal {-exitcode}"
        hint = " (out of memory?)" if -exitcode == signal.SIGKILL else ""
        return f"killed by {name}{hint}"
    return f"exit code {exitcode}"


#: progress messages that open a new stage of a job (pipeline steps; sub-step messages do not)
STAGE_PREFIX = "step "


def stage_limit_error(job_id: str, limit_s: float, stage: str, worker: str) -> ErrorInfo:
    """Return the error of a job stopped after ``limit_s`` seconds (s) in one stage."""
    return ErrorInfo(error_type="stage_time_limit",
                     error_message=f"job '{job_id}' spent longer than the stage time limit of {limit_s:g} s in "
                                   f"{stage} (executor.stage_time_limit_seconds); {worker} was stopped")


def time_limit_error(job_id: str, limit_s: float, worker: str) -> ErrorInfo:
    """Return the error of a job stopped after running ``limit_s`` seconds (s) in all."""
    return ErrorInfo(error_type="time_limit",
                     error_message=f"job '{job_id}' ran longer than the time limit of {limit_s:g} s "
                                   f"(executor.time_limit_seconds or --time-limit); {worker} was stopped")
