"""The worker side of a batch on the toy engine: the messages ``_execute`` and ``serve`` send, in-process and over a Pipe."""

from __future__ import annotations

import multiprocessing
import os

import pytest

from elimscan.batch.plan import plan_batch
from elimscan.batch.worker import LOG_FILE, JobTask, _execute, serve
from elimscan.config import parse_config
from toyjobs import TOY_SETTINGS

CONFIG = TOY_SETTINGS + """\
name: worker-loop
substrates:
  - {name: chloroethane, smiles: "CCCl"}
bases:
  - {name: methoxide}
"""


@pytest.fixture(scope="module")
def planned(tmp_path_factory):
    """Return the one planned job of a chloroethane + methoxide batch config."""
    path = tmp_path_factory.mktemp("worker") / "batch.yaml"
    path.write_text(CONFIG)
    (job,) = plan_batch(parse_config(CONFIG, str(path)), path).jobs
    assert job.input_error is None
    return job


def task_for(job, engine: str) -> JobTask:
    """Return the worker task of a planned job computed on the named engine factory."""
    return JobTask(job.key, job.job_id, job.substrate, job.base, job.config, job.geometry, engine)


def test_execute_sends_start_and_steps_then_returns_the_outcome(planned):
    sent = []
    result = _execute(task_for(planned, "toyjobs:toy_engine"), sent.append)
    kind, key, outcome, error, trace, seconds = result
    assert (kind, key, error, trace) == ("result", planned.key, None, None)
    assert outcome.job.status == "ok" and outcome.files, "a toy job has files to write"
    assert 0 < seconds < 300
    assert sent[0] == ("started", planned.key)
    steps = sent[1:]
    assert steps and all(m[0] == "progress" and m[1] == planned.key for m in steps)
    assert any(m[2].startswith("step ") for m in steps)  # the stage messages the time limits read


def test_execute_turns_a_known_error_into_data(planned):
    sent = []
    kind, key, outcome, error, trace, _ = _execute(task_for(planned, "toyjobs:no_such_factory"), sent.append)
    assert (kind, key, outcome) == ("result", planned.key, None)
    assert error["error_type"] == "config_error" and "no_such_factory" in error["error_message"]
    assert "ConfigError" in trace
    assert sent == [("started", planned.key)]


def test_execute_reports_a_bug_with_its_traceback(planned):
    _, _, outcome, error, trace, _ = _execute(task_for(planned, "toyjobs:broken_engine"), lambda m: None)
    assert outcome is None and error["error_type"] == "internal_error"
    assert "ZeroDivisionError" in error["error_message"] and LOG_FILE in error["error_message"]
    assert "ZeroDivisionError" in trace


@pytest.fixture
def worker():
    """Return (driver's end of the Pipe, process) of a spawned worker running ``serve``; killed at the end if alive."""
    context = multiprocessing.get_context("spawn")
    parent, child = context.Pipe()
    process = context.Process(target=serve, args=(child, 1, os.getpid()), daemon=True)
    process.start()
    child.close()
    yield parent, process
    if process.is_alive():
        process.kill()
        process.join(5)
    parent.close()


def test_serve_over_a_pipe(planned, worker):
    parent, process = worker
    assert parent.poll(120), "the worker never said it was ready"
    assert parent.recv() == ("ready", process.pid)
    parent.send(("job", task_for(planned, "toyjobs:toy_engine")))
    messages = []
    while not messages or messages[-1][0] != "result":
        assert parent.poll(300), f"no result; last messages {messages[-3:]}"
        messages.append(parent.recv())
    kinds = [m[0] for m in messages]
    assert kinds[0] == "started" and set(kinds[1:-1]) == {"progress"}
    result = messages[-1]
    assert result[1] == planned.key and result[3] is None and result[2].job.status == "ok"
    parent.send(("stop",))
    process.join(30)
    assert process.exitcode == 0


def test_serve_ends_when_the_driver_closes_its_end(worker):
    parent, process = worker
    assert parent.poll(120) and parent.recv()[0] == "ready"
    parent.close()
    process.join(30)
    assert process.exitcode == 0
