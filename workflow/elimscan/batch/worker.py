"""What runs inside a batch worker process: set threads, then compute jobs one at a time and send back their outcomes.

Local workers are started with multiprocessing's 'spawn' method (never a fork of a process whose xTB
backend is loaded); each sets its thread variables before the heavy imports, computes one job at a time
(``jobs.run_job`` with a new engine per job) and sends back the ``JobOutcome``: workers never write the
output folder or the store, only their job's replay log (``batch.replaylog``, under the folder's ``replay/``).
Workers exit by themselves when the process that started them is gone.

Messages a worker sends over its connection: ``('ready', pid)``, ``('started', key)``,
``('progress', key, text)`` and ``('result', key, outcome, error, traceback, seconds)``; it reads
``('job', JobTask)`` and ``('stop',)``.
"""

from __future__ import annotations

import multiprocessing.connection
import os
import signal
import threading
import time
import traceback
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

from elimscan.config import BaseConfig, RunConfig, SubstrateConfig
from elimscan.errors import ElimscanError
from elimscan.engines.threads import configure_threads

if TYPE_CHECKING:  # the module itself is imported inside the function, after the thread settings
    from elimscan.batch.replaylog import ReplayLog

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
    #: the job's replay log (``batch.replaylog``; local workers only): the single points a stopped earlier run of
    #: the job finished are served from it; None: none kept
    replay_file: str | None = None


def _execute(task: JobTask, send: Callable[[tuple], None]) -> tuple:
    """Run one job in this (worker) process; return the ('result', key, outcome, error, traceback, seconds) message."""
    from elimscan.engines.factory import make_engine
    from elimscan.pipeline.outcome import DETAIL
    from elimscan.pipeline.jobs import run_job

    started = time.perf_counter()
    send(("started", task.key))

    def progress(done: int, total: int, message: str) -> None:
        send(("progress", task.key, message if done == DETAIL else f"step {done + 1}/{total}: {message}"))

    replay = None
    try:
        engine = make_engine(task.config.method, task.engine_factory)
        replay = _open_replay(task, progress)
        outcome = run_job(task.substrate, task.base, task.config, engine, task.geometry, progress, replay)
        return ("result", task.key, outcome, None, None, time.perf_counter() - started)
    except ElimscanError as err:
        error = {"error_type": err.error_type, "error_message": str(err)}
        return ("result", task.key, None, error, traceback.format_exc(), time.perf_counter() - started)
    except Exception as err:  # a bug: the traceback goes back to the driver's log
        error = {"error_type": "internal_error",
                 "error_message": f"unexpected {type(err).__name__} in the worker: {err} (traceback in {LOG_FILE})"}
        return ("result", task.key, None, error, traceback.format_exc(), time.perf_counter() - started)
    finally:
        if replay is not None:
            replay.close()


def _open_replay(task: JobTask, progress: Callable[[int, int, str], None]) -> ReplayLog | None:
    """Return the task's replay log (None: the task keeps none), after saying how many finished points it holds
    for a job that starts over."""
    from elimscan.batch.replaylog import ReplayLog
    from elimscan.pipeline.outcome import DETAIL

    if task.replay_file is None:
        return None
    replay = ReplayLog(task.replay_file)
    if len(replay):
        progress(DETAIL, DETAIL, f"starting over: {len(replay)} single point(s) finished by the job's stopped earlier "
                                 "run are served from its replay log")
    return replay


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

