"""Batch workers: fresh processes that compute jobs, on this machine or on a Dask cluster, with time limits.

Local workers are started with multiprocessing's 'spawn' method (never a fork of a process whose xTB
backend is loaded); each sets its thread variables before the heavy imports, computes one job at a time
(``jobs.run_job`` with a new engine per job) and sends back the ``JobOutcome``: workers never write the
output folder or the store. The per-job time limit is enforced by the process that started the worker,
which kills it (a Fortran call never sees a Python signal). With Dask, each task starts such a job process
(a subprocess: a Dask worker is daemonic and may not have multiprocessing children) and supervises it the
same way. Workers exit by themselves when the process that started them is gone.

Executors (``LocalExecutor``, ``DaskExecutor``) report ``Started``, ``Progress`` and ``Done`` events to the
batch driver through ``poll``.
"""

from __future__ import annotations

import multiprocessing
import multiprocessing.connection
import os
import queue
import signal
import socket
import subprocess
import sys
import tempfile
import threading
import time
import traceback
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from pathlib import Path

from elimscan.config import BaseConfig, RunConfig, SubstrateConfig
from elimscan.errors import ConfigError, ElimscanError, EngineError
from elimscan.results.records import ErrorInfo
from elimscan.engines.threads import configure_threads

#: Dask event topic of the progress messages sent by job processes
PROGRESS_TOPIC = "elimscan-batch-progress"
#: local worker processes that may fail to start before the batch gives up
_MAX_START_FAILURES = 3
#: the batch folder's log (tracebacks of bugs go there) and the file that receives what local workers print
LOG_FILE = "batch.log"
WORKER_LOG_FILE = "workers.log"


@dataclass(frozen=True)
class JobTask:
    """What a worker needs for one job (picklable)."""

    key: str
    job_id: str
    substrate: SubstrateConfig
    base: BaseConfig
    config: RunConfig
    geometry: tuple[str, str] | None
    #: 'module:function' of another engine than the job config's (tests); None: the config's
    engine_factory: str | None = None


def _execute(task: JobTask, send: Callable[[tuple], None]) -> tuple:
    """Run one job in this (worker) process; return the ('result', key, outcome, error, traceback, seconds) message."""
    from elimscan.engines.factory import make_engine
    from elimscan.pipeline.jobs import run_job
    from elimscan.pipeline.outcome import DETAIL

    started = time.perf_counter()
    send(("started", task.key))

    def progress(done: int, total: int, message: str) -> None:
        send(("progress", task.key, message if done == DETAIL else f"step {done + 1}/{total}: {message}"))

    try:
        engine = make_engine(task.config.method, task.engine_factory)
        outcome = run_job(task.substrate, task.base, task.config, engine, task.geometry, progress)
        return ("result", task.key, outcome, None, None, time.perf_counter() - started)
    except ElimscanError as err:
        error = {"error_type": err.error_type, "error_message": str(err)}
        return ("result", task.key, None, error, traceback.format_exc(), time.perf_counter() - started)
    except Exception as err:  # a bug: the traceback goes back to the driver's log
        error = {"error_type": "internal_error",
                 "error_message": f"unexpected {type(err).__name__} in the worker: {err} (traceback in {LOG_FILE})"}
        return ("result", task.key, None, error, traceback.format_exc(), time.perf_counter() - started)


def _watch_parent(parent_pid: int, interval_s: float = 1.0) -> None:
    """Exit this worker when the process that started it is gone (a killed driver leaves no busy orphans)."""

    def watch() -> None:
        while True:
            time.sleep(interval_s)
            if os.getppid() != parent_pid:
                os._exit(70)

    threading.Thread(target=watch, name="elimscan-parent-watch", daemon=True).start()


def serve(conn, threads: int, parent_pid: int, output_log: str | None = None) -> None:
    """Worker process main loop: set threads before any backend loads, then run the jobs sent over ``conn``."""
    configure_threads(threads)
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the driver decides; Ctrl-C reaches the whole process group
    if output_log is not None:
        fd = os.open(output_log, os.O_WRONLY | os.O_APPEND | os.O_CREAT, 0o644)
        os.dup2(fd, 1)
        os.dup2(fd, 2)
        os.close(fd)
    _watch_parent(parent_pid)
    import elimscan.pipeline.jobs  # noqa: F401  (the heavy imports, after the thread settings)

    conn.send(("ready", os.getpid()))
    while True:
        try:
            message = conn.recv()
        except (EOFError, OSError):
            return
        if message[0] == "stop":
            return
        try:
            conn.send(_execute(message[1], conn.send))
        except (BrokenPipeError, OSError):
            return


def serve_fd(fd: int, threads: int, parent_pid: int) -> None:
    """Entry of a job process started by a Dask task: serve jobs on the inherited socket ``fd``."""
    serve(multiprocessing.connection.Connection(fd), threads, parent_pid)


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


def _death_message(exitcode: int | None) -> str:
    if exitcode is not None and exitcode < 0:
        try:
            name = signal.Signals(-exitcode).name
        except ValueError:
            name = f"signal {-exitcode}"
        hint = " (out of memory?)" if -exitcode == signal.SIGKILL else ""
        return f"killed by {name}{hint}"
    return f"exit code {exitcode}"


#: progress messages that open a new stage of a job (pipeline steps; sub-step messages do not)
_STAGE_PREFIX = "step "


def _stage_limit_error(job_id: str, limit_s: float, stage: str, worker: str) -> ErrorInfo:
    return ErrorInfo(error_type="stage_time_limit",
                     error_message=f"job '{job_id}' spent longer than the stage time limit of {limit_s:g} s in "
                                   f"{stage} (executor.stage_time_limit_seconds); {worker} was stopped")


def _time_limit_error(job_id: str, limit_s: float, worker: str) -> ErrorInfo:
    return ErrorInfo(error_type="time_limit",
                     error_message=f"job '{job_id}' ran longer than the time limit of {limit_s:g} s "
                                   f"(executor.time_limit_seconds or --time-limit); {worker} was stopped")


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
                self._stop(slot, events, _time_limit_error(slot.task.job_id, self.time_limit_s, slot.name))
            elif (slot.task is not None and self.stage_limit_s is not None
                  and time.monotonic() - slot.stage_started > self.stage_limit_s):
                self._stop(slot, events, _stage_limit_error(slot.task.job_id, self.stage_limit_s, slot.stage, slot.name))
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
                if slot.task is not None and message[2].startswith(_STAGE_PREFIX):
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
                              f"({_death_message(slot.process.exitcode)}); see {WORKER_LOG_FILE}")))
        elif not slot.ready:
            self._start_failures += 1
            if self._start_failures >= _MAX_START_FAILURES:
                raise EngineError(f"worker processes cannot start ({_death_message(slot.process.exitcode)}); "
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


def run_supervised(task: JobTask, time_limit_s: float, threads: int,
                   on_message: Callable[[tuple], None] | None = None, stage_limit_s: float | None = None) -> tuple:
    """Run one job in a fresh child process, killing it after ``time_limit_s``; return the ('result', ...) message.

    Used by Dask tasks: a Dask worker cannot start multiprocessing children (it is daemonic), so the job
    process is a subprocess of the interpreter, served over an inherited socket.
    """
    parent, child = multiprocessing.Pipe()
    package_root = str(Path(__file__).resolve().parents[1])
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([package_root, *filter(None, [env.get("PYTHONPATH")])])
    configure_threads(threads, env)
    with tempfile.TemporaryFile() as stderr:
        process = subprocess.Popen(
            [sys.executable, "-c", "import sys; from elimscan.batch.workers import serve_fd; "
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
                            if message[0] == "progress" and message[2].startswith(_STAGE_PREFIX):
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
                                         f"({_death_message(process.returncode)}){detail}"}, None,
                        time.monotonic() - started)
                over_stage = stage_limit_s is not None and time.monotonic() - stage_started > stage_limit_s
                if time.monotonic() - started > time_limit_s or over_stage:
                    process.kill()
                    process.wait(10)
                    error = (_stage_limit_error(task.job_id, stage_limit_s, stage, where) if over_stage
                             else _time_limit_error(task.job_id, time_limit_s, where))
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
