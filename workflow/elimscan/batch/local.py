"""Local batch workers: N fresh processes on this machine, each computing one job at a time, with time limits.

The per-job time limit is enforced by this (the driver's) process, which kills the worker (a Fortran
call never sees a Python signal) and starts another.
"""

from __future__ import annotations

import multiprocessing
import multiprocessing.connection
import os
import time
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

from elimscan.config import ExecutorConfig, default_workers
from elimscan.errors import EngineError
from elimscan.results.records import ErrorInfo
from elimscan.batch.events import (STAGE_PREFIX, Done, Progress, Started, death_message, stage_limit_error,
                                   time_limit_error)
from elimscan.batch.worker import WORKER_LOG_FILE, JobTask, serve

#: local worker processes that may fail to start before the batch gives up
_MAX_START_FAILURES = 3


@dataclass
class _Slot:
    """One local worker process and the job it runs."""

    number: int
    process: multiprocessing.process.BaseProcess
    conn: multiprocessing.connection.Connection
    ready: bool = False
    task: JobTask | None = None
    dispatched: float = 0.0
    stage: str = "its start-up"
    stage_started: float = 0.0

    @property
    def name(self) -> str:
        return f"local worker {self.number} (pid {self.process.pid})"


class LocalExecutor:
    """N worker processes on this machine (spawned fresh), each computing one job at a time."""

    def __init__(self, workers: int, threads: int, time_limit_s: float, worker_log: Path | None,
                 stage_limit_s: float | None = None):
        self.workers = workers
        self.threads = threads
        self.time_limit_s = time_limit_s
        self.stage_limit_s = stage_limit_s
        self.worker_log = worker_log
        self._context = multiprocessing.get_context("spawn")
        self._slots: list[_Slot] = []
        self._waiting: list[JobTask] = []
        self._start_failures = 0
        self._next_number = 1

    @classmethod
    def from_config(cls, config: ExecutorConfig, threads: int, n_tasks: int, out: Path) -> "LocalExecutor":
        """Return the executor of a batch of ``n_tasks`` jobs: at most one worker per job; worker output to OUT/workers.log."""
        workers = min(config.workers or default_workers(), n_tasks)
        return cls(workers, threads, config.time_limit_seconds, out / WORKER_LOG_FILE, config.stage_time_limit_seconds)

    @classmethod
    def planned_parallel_jobs(cls, config: ExecutorConfig) -> int:
        """Return the worker processes the config asks for (``executor.workers``, else the core count)."""
        return config.workers or default_workers()

    @property
    def parallel_jobs(self) -> int:
        """Return how many jobs can run at once."""
        return self.workers

    @property
    def description(self) -> str:
        """Return a short description for logs and the store."""
        return f"local, {self.workers} worker process(es)"

    def _spawn(self) -> _Slot:
        parent, child = self._context.Pipe()
        process = self._context.Process(
            target=serve, args=(child, self.threads, os.getpid(), str(self.worker_log) if self.worker_log else None),
            name=f"elimscan-worker-{self._next_number}", daemon=True)
        process.start()
        child.close()
        slot = _Slot(self._next_number, process, parent)
        self._next_number += 1
        return slot

    def submit(self, tasks: Iterable[JobTask]) -> None:
        """Queue tasks; workers start on the first poll."""
        self._waiting.extend(tasks)
        while len(self._slots) < min(self.workers, len(self._waiting) + self._busy()):
            self._slots.append(self._spawn())

    def _busy(self) -> int:
        return sum(slot.task is not None for slot in self._slots)

    def outstanding(self) -> int:
        """Return the number of tasks queued or running."""
        return len(self._waiting) + self._busy()

    def poll(self, timeout_s: float) -> list:
        """Return the events of the next ``timeout_s`` seconds (at most): Started, Progress, Done."""
        events: list = []
        for slot in self._slots:
            if slot.ready and slot.task is None and self._waiting:
                slot.task = self._waiting.pop(0)
                slot.dispatched = slot.stage_started = time.monotonic()
                slot.stage = "its start-up"
                try:
                    slot.conn.send(("job", slot.task))
                except (BrokenPipeError, OSError):
                    pass  # the death is noticed below
        waitables = [s.conn for s in self._slots] + [s.process.sentinel for s in self._slots]
        ready = multiprocessing.connection.wait(waitables, timeout=timeout_s) if waitables else []
        for slot in list(self._slots):
            if slot.conn in ready:
                self._read(slot, events)
        for slot in list(self._slots):
            if not slot.process.is_alive():
                self._lost(slot, events)
            elif slot.task is not None and time.monotonic() - slot.dispatched > self.time_limit_s:
                self._stop(slot, events, time_limit_error(slot.task.job_id, self.time_limit_s, slot.name))
            elif (slot.task is not None and self.stage_limit_s is not None
                  and time.monotonic() - slot.stage_started > self.stage_limit_s):
                self._stop(slot, events, stage_limit_error(slot.task.job_id, self.stage_limit_s, slot.stage, slot.name))
        return events

    def _stop(self, slot: _Slot, events: list, error: ErrorInfo) -> None:
        """Kill a worker over a time limit (a Fortran call never sees a signal), record its job as failed, replace it."""
        slot.process.kill()
        slot.process.join(10)
        events.append(Done(slot.task.key, slot.name, time.monotonic() - slot.dispatched, error=error))
        self._replace(slot)

    def _read(self, slot: _Slot, events: list) -> None:
        while True:
            try:
                if not slot.conn.poll():
                    return
                message = slot.conn.recv()
            except (EOFError, OSError):
                return  # the process died: handled as lost
            kind = message[0]
            if kind == "ready":
                slot.ready = True
            elif kind == "started" and slot.task is not None:
                events.append(Started(message[1], slot.name))
            elif kind == "progress":
                events.append(Progress(message[1], message[2]))
                if slot.task is not None and message[2].startswith(STAGE_PREFIX):
                    slot.stage, slot.stage_started = message[2], time.monotonic()
            elif kind == "result" and slot.task is not None and message[1] == slot.task.key:
                _, key, outcome, error, trace, seconds = message
                events.append(Done(key, slot.name, seconds, outcome,
                                   ErrorInfo(**error) if error else None, trace))
                slot.task = None

    def _lost(self, slot: _Slot, events: list) -> None:
        self._read(slot, events)  # a result sent just before the end still counts
        slot.process.join(1)
        if slot.task is not None:
            events.append(Done(slot.task.key, slot.name, time.monotonic() - slot.dispatched, error=ErrorInfo(
                error_type="worker_died",
                error_message=f"the worker process running job '{slot.task.job_id}' ended unexpectedly "
                              f"({death_message(slot.process.exitcode)}); see {WORKER_LOG_FILE}")))
        elif not slot.ready:
            self._start_failures += 1
            if self._start_failures >= _MAX_START_FAILURES:
                raise EngineError(f"worker processes cannot start ({death_message(slot.process.exitcode)}); "
                                  f"see {self.worker_log or 'their stderr'}")
        self._replace(slot)

    def _replace(self, slot: _Slot) -> None:
        slot.conn.close()
        index = self._slots.index(slot)
        if self._waiting:
            self._slots[index] = self._spawn()
        else:
            del self._slots[index]

    def shutdown(self, kill: bool = False) -> None:
        """Stop every worker: politely when idle, killed when ``kill`` (interrupt) or still busy."""
        for slot in self._slots:
            try:
                if kill or slot.task is not None:
                    slot.process.kill()
                else:
                    slot.conn.send(("stop",))
            except (BrokenPipeError, OSError):
                pass
        for slot in self._slots:
            slot.process.join(5)
            if slot.process.is_alive():
                slot.process.kill()
                slot.process.join(5)
            slot.conn.close()
        self._slots.clear()
