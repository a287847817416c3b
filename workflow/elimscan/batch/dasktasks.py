"""Batch jobs on an existing Dask cluster: each Dask task starts one job process and supervises it with time limits.

A Dask worker is daemonic and may not have multiprocessing children, so a task's job process is a
subprocess of the interpreter, served over an inherited socket (``worker.serve_fd``). Starts and
progress reach the driver as Dask events on ``PROGRESS_TOPIC``.
"""

from __future__ import annotations

import multiprocessing
import os
import queue
import socket
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable, Iterable
from pathlib import Path

import elimscan
from elimscan.config import ExecutorConfig
from elimscan.errors import ConfigError
from elimscan.results.records import ErrorInfo
from elimscan.engines.threads import configure_threads
from elimscan.batch.events import STAGE_PREFIX, Done, Progress, Started, death_message, stage_limit_error, time_limit_error
from elimscan.batch.worker import JobTask

#: Dask event topic of the progress messages sent by job processes
PROGRESS_TOPIC = "elimscan-batch-progress"


def run_supervised(task: JobTask, time_limit_s: float, threads: int,
                   on_message: Callable[[tuple], None] | None = None, stage_limit_s: float | None = None) -> tuple:
    """Run one job in a fresh child process, killing it after ``time_limit_s``; return the ('result', ...) message.

    Used by Dask tasks: a Dask worker cannot start multiprocessing children (it is daemonic), so the job
    process is a subprocess of the interpreter, served over an inherited socket.
    """
    parent, child = multiprocessing.Pipe()
    package_root = str(Path(elimscan.__file__).resolve().parents[1])  # the folder that holds this elimscan
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([package_root, *filter(None, [env.get("PYTHONPATH")])])
    configure_threads(threads, env)
    with tempfile.TemporaryFile() as stderr:
        process = subprocess.Popen(
            [sys.executable, "-c", "import sys; from elimscan.batch.worker import serve_fd; "
             "serve_fd(int(sys.argv[1]), int(sys.argv[2]), int(sys.argv[3]))",
             str(child.fileno()), str(threads), str(os.getpid())],
            pass_fds=[child.fileno()], stdin=subprocess.DEVNULL, stdout=stderr, stderr=stderr, env=env)
        child.close()
        where = f"job process pid {process.pid} on {socket.gethostname()}"
        started = time.monotonic()  # the limit counts from the launch: a job process that hangs is stopped too
        stage, stage_started = "its start-up", started
        try:
            while True:
                if parent.poll(0.5):
                    try:
                        message = parent.recv()
                    except (EOFError, OSError):
                        message = None
                    if message is not None:
                        if message[0] == "ready":
                            parent.send(("job", task))
                        elif message[0] == "result":
                            parent.send(("stop",))
                            process.wait(10)
                            return message
                        else:
                            if message[0] == "progress" and message[2].startswith(STAGE_PREFIX):
                                stage, stage_started = message[2], time.monotonic()
                            if on_message is not None:
                                on_message(message)
                        continue
                if process.poll() is not None:
                    stderr.seek(0)
                    tail = stderr.read().decode("utf-8", "replace").strip().splitlines()[-5:]
                    detail = f"; its last output: {' | '.join(tail)}" if tail else ""
                    return ("result", task.key, None, {
                        "error_type": "worker_died",
                        "error_message": f"the {where} running job '{task.job_id}' ended unexpectedly "
                                         f"({death_message(process.returncode)}){detail}"}, None,
                        time.monotonic() - started)
                over_stage = stage_limit_s is not None and time.monotonic() - stage_started > stage_limit_s
                if time.monotonic() - started > time_limit_s or over_stage:
                    process.kill()
                    process.wait(10)
                    error = (stage_limit_error(task.job_id, stage_limit_s, stage, where) if over_stage
                             else time_limit_error(task.job_id, time_limit_s, where))
                    return ("result", task.key, None, error.model_dump(), None, time.monotonic() - started)
        finally:
            if process.poll() is None:
                process.kill()
                process.wait(10)
            parent.close()


def dask_task(task: JobTask, time_limit_s: float, threads: int, stage_limit_s: float | None = None) -> tuple:
    """Run one job on a Dask worker (supervised child process); return the ('result', ...) message.

    Starts and progress messages go to the driver as Dask events on PROGRESS_TOPIC.
    """
    try:
        from distributed import get_worker

        worker = get_worker()
        name = f"dask worker {worker.address}"
    except (ImportError, ValueError):
        worker, name = None, "dask worker"

    def forward(message: tuple) -> None:
        if worker is not None and message[0] in ("started", "progress"):
            worker.log_event(PROGRESS_TOPIC, {"kind": message[0], "key": message[1], "where": name,
                                              "text": message[2] if len(message) > 2 else ""})

    result = run_supervised(task, time_limit_s, threads, forward, stage_limit_s)
    return (*result, name)


class DaskExecutor:
    """Jobs sent to an existing Dask cluster; each Dask task supervises one job process."""

    def __init__(self, address: str, threads: int, time_limit_s: float, stage_limit_s: float | None = None):
        try:
            from distributed import Client
        except ImportError as err:
            raise ConfigError("the Dask executor needs the 'distributed' package (pip install elimscan installs it)",
                              key_path="executor.kind") from err
        try:
            self.client = Client(address, timeout="30s")
        except (OSError, TimeoutError) as err:
            raise ConfigError(f"cannot connect to the Dask scheduler at '{address}': {err}",
                              key_path="executor.address") from err
        self.address = address
        self.threads = threads
        self.time_limit_s = time_limit_s
        self.stage_limit_s = stage_limit_s
        self._events: queue.Queue = queue.Queue()
        self._parallel = (0.0, 1)  # (monotonic time asked, worker threads then)
        self._futures: dict[str, object] = {}
        self._tasks: dict[str, JobTask] = {}
        self.client.subscribe_topic(PROGRESS_TOPIC, self._on_event)

    @classmethod
    def from_config(cls, config: ExecutorConfig, threads: int, n_tasks: int, out: Path) -> "DaskExecutor":
        """Return the executor of a batch on the Dask scheduler at ``config.address`` (``n_tasks``, ``out``: unused)."""
        return cls(config.address, threads, config.time_limit_seconds, config.stage_time_limit_seconds)

    @classmethod
    def planned_parallel_jobs(cls, config: ExecutorConfig) -> int:
        """Return 0: the cluster's size is known only once connected (``parallel_jobs`` asks it)."""
        return 0

    @property
    def parallel_jobs(self) -> int:
        """Return how many jobs can run at once (the cluster's worker threads, asked at most every 30 s)."""
        asked, count = self._parallel
        if time.monotonic() - asked > 30.0:
            try:
                count = max(1, sum(self.client.nthreads().values()))
            except Exception:  # the scheduler is busy or gone: keep the last estimate
                pass
            self._parallel = (time.monotonic(), count)
        return count

    @property
    def description(self) -> str:
        """Return a short description for logs and the store."""
        return f"dask scheduler {self.address}"

    def _on_event(self, event) -> None:
        _, message = event
        if message.get("kind") == "started":
            self._events.put(Started(message["key"], message.get("where", "dask worker")))
        else:
            self._events.put(Progress(message["key"], message.get("text", "")))

    def submit(self, tasks: Iterable[JobTask]) -> None:
        """Send tasks to the cluster (one Dask task per job; a worker lost mid-job reruns only that job)."""
        for task in tasks:
            future = self.client.submit(dask_task, task, self.time_limit_s, self.threads, self.stage_limit_s,
                                        key=f"elimscan-job-{task.key[:24]}-{time.time_ns()}", pure=False)
            self._futures[task.key] = future
            self._tasks[task.key] = task
            future.add_done_callback(lambda f, key=task.key: self._events.put(("future", key, f)))

    def outstanding(self) -> int:
        """Return the number of jobs not yet returned."""
        return len(self._futures)

    def poll(self, timeout_s: float) -> list:
        """Return the events of the next ``timeout_s`` seconds (at most): Started, Progress, Done."""
        events: list = []
        try:
            item = self._events.get(timeout=timeout_s)
        except queue.Empty:
            return events
        while True:
            if isinstance(item, tuple) and item[0] == "future":
                events.append(self._done(item[1], item[2]))
            else:
                events.append(item)
            try:
                item = self._events.get_nowait()
            except queue.Empty:
                return events

    def _done(self, key: str, future) -> Done:
        self._futures.pop(key, None)
        task = self._tasks.pop(key)
        try:
            _, _, outcome, error, trace, seconds, worker = future.result()
        except Exception as err:  # the task itself failed on Dask: KilledWorker, cancelled, ...
            kind = type(err).__name__
            error_type = "worker_died" if kind == "KilledWorker" else "dask_error"
            return Done(key, "dask", 0.0, error=ErrorInfo(
                error_type=error_type, error_message=f"job '{task.job_id}' failed on the Dask cluster: {kind}: {err}"))
        return Done(key, worker, seconds, outcome, ErrorInfo(**error) if error else None, trace)

    def shutdown(self, kill: bool = False) -> None:
        """Cancel what is left and close the connection to the scheduler (the cluster keeps running)."""
        try:
            if self._futures:
                self.client.cancel(list(self._futures.values()), force=True)
            self.client.unsubscribe_topic(PROGRESS_TOPIC)
        finally:
            self.client.close()
