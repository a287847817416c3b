"""The executor contract: what the batch driver needs from a way of running jobs, and the registry by ``executor.kind``.

An executor takes ``JobTask``s, runs each in a worker process of its own making and reports ``Started``,
``Progress`` and ``Done`` events (``events.py``) through ``poll``; it never writes the output folder.
"""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path
from typing import Protocol

from elimscan.config import ExecutorConfig
from elimscan.errors import ConfigError
from elimscan.batch.dasktasks import DaskExecutor
from elimscan.batch.events import Done, Progress, Started
from elimscan.batch.local import LocalExecutor
from elimscan.batch.worker import JobTask


class Executor(Protocol):
    """What the batch driver calls on an executor (``driver._compute``), in this order: submit, then poll
    while anything is outstanding, then shutdown (``kill=True`` on an interrupt or an error)."""

    @classmethod
    def from_config(cls, config: ExecutorConfig, threads: int, n_tasks: int, out: Path) -> "Executor":
        """Return an executor for a batch of ``n_tasks`` jobs with ``threads`` threads each, writing logs into ``out``."""
        ...

    @classmethod
    def planned_parallel_jobs(cls, config: ExecutorConfig) -> int:
        """Return how many jobs can run at once as the config alone tells, before anything starts (stored for
        ``elimscan status``); 0 when only the running executor knows (the status then counts the running jobs)."""
        ...

    @property
    def parallel_jobs(self) -> int:
        """Return how many jobs can run at once (for the time estimate)."""
        ...

    @property
    def description(self) -> str:
        """Return a short description for logs and the store."""
        ...

    def submit(self, tasks: Iterable[JobTask]) -> None:
        """Queue or send the tasks; return at once."""
        ...

    def outstanding(self) -> int:
        """Return the number of tasks not yet reported as Done."""
        ...

    def poll(self, timeout_s: float) -> list[Started | Progress | Done]:
        """Return the events of the next ``timeout_s`` seconds (at most); one Done per submitted task, in the end."""
        ...

    def shutdown(self, kill: bool = False) -> None:
        """Stop every worker (killed when ``kill``) and release what the executor holds."""
        ...


#: ``ExecutorConfig.kind`` -> the executor class; its ``from_config`` is the factory
EXECUTORS: dict[str, type[Executor]] = {"local": LocalExecutor, "dask": DaskExecutor}


def make_executor(config: ExecutorConfig, threads: int, n_tasks: int, out: Path) -> Executor:
    """Return the executor of ``config.kind`` for a batch of ``n_tasks`` jobs; ConfigError naming an unknown kind."""
    executor_class = EXECUTORS.get(config.kind)
    if executor_class is None:
        raise ConfigError(f"unknown executor kind '{config.kind}' (known: {', '.join(sorted(EXECUTORS))})",
                          key_path="executor.kind")
    return executor_class.from_config(config, threads, n_tasks, out)


def planned_parallel_jobs(config: ExecutorConfig) -> int:
    """Return the parallel-jobs hint of ``config.kind``'s executor for the store (0 for a kind not registered:
    ``make_executor`` refuses it by name when there is something to compute)."""
    executor_class = EXECUTORS.get(config.kind)
    return 0 if executor_class is None else executor_class.planned_parallel_jobs(config)
