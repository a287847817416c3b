"""Faults on a Dask cluster (toy engine: bookkeeping, not chemistry): a worker lost mid-job costs only that
job's rerun; a job stuck in one stage is stopped at the stage time limit.

The toy engine of ``toyjobs.py`` (``worker_losing_engine``) SIGKILLs the Dask worker process that runs one
chosen job, once, in the middle of that job, as a lost node would. Dask's nanny starts a new worker, the
scheduler sends the task again, and the batch must finish every job with the numbers of a run with no
loss, having started the lost job twice and every other job once.
"""

from __future__ import annotations

import json
import os
import sqlite3
import subprocess
import sys
from collections import Counter
from pathlib import Path

import pytest

from elimscan.errors import ExitCode
from elimscan.batch.store import STORE_FILE
from toyjobs import TOY_SETTINGS, without_timings

ROOT = Path(__file__).resolve().parents[2]
TESTS = Path(__file__).resolve().parents[1]

CONFIG = TOY_SETTINGS + """\
name: lost-worker
substrates:
  - {name: chloroethane, smiles: "CCCl"}
  - {name: 2-chloropropane, smiles: "CC(C)Cl"}
  - {name: 1-chloropropane, smiles: "CCCCl"}
bases:
  - {name: methoxide}
"""


def _env(extra: dict | None = None) -> dict:
    path = os.pathsep.join([str(TESTS / "support"), str(ROOT / "workflow"), os.environ.get("PYTHONPATH", "")])
    return {**os.environ, "PYTHONPATH": path, "PYTHONDONTWRITEBYTECODE": "1", **(extra or {})}


def _batch(config: Path, out: Path, env: dict, engine: str, *options: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "elimscan", "batch", str(config), "--out", str(out),
                           "--engine", engine, *options], capture_output=True, text=True, timeout=600, env=env)


def _jobs(out: Path) -> dict:
    return {j["job_id"]: without_timings(j) for j in json.loads((out / "results.json").read_text())["jobs"]}


def _without_key(job: dict) -> dict:
    """Return a job record with its key, and the key's prefix in its file folders, blanked."""
    return {**json.loads(json.dumps(job).replace(job["job_key"][:12], "KEY")), "job_key": None}


def _starts(out: Path) -> Counter:
    with sqlite3.connect(f"file:{out / STORE_FILE}?mode=ro", uri=True) as conn:
        return Counter(key for (key,) in conn.execute("SELECT job_key FROM events WHERE kind = 'start'"))


def test_a_dask_worker_lost_mid_job_costs_only_that_jobs_rerun(tmp_path, monkeypatch):
    pytest.importorskip("distributed")
    from distributed import LocalCluster

    config = tmp_path / "batch.yaml"
    config.write_text(CONFIG)
    reference = _batch(config, tmp_path / "reference", _env(), "toyjobs:toy_engine", "--workers", "1")
    assert reference.returncode == ExitCode.OK, reference.stderr

    marker = tmp_path / "worker-lost"
    lose = {"ELIMSCAN_TOY_LOSE_WORKER_ON": "2-chloropropane", "ELIMSCAN_TOY_LOSE_WORKER_MARKER": str(marker)}
    for key, value in _env(lose).items():
        monkeypatch.setenv(key, value)  # the Dask worker processes inherit this environment
    out = tmp_path / "out"
    with LocalCluster(processes=True, n_workers=2, threads_per_worker=1, dashboard_address=None) as cluster:
        done = _batch(config, out, dict(os.environ), "toyjobs:worker_losing_engine", "--scheduler",
                      cluster.scheduler_address)
    assert marker.exists(), "the worker was never lost: the test did not test anything"
    assert done.returncode == ExitCode.OK, done.stderr
    mine, theirs = _jobs(out), _jobs(tmp_path / "reference")
    assert sorted(mine) == sorted(theirs)
    assert all(job["status"] == "ok" for job in mine.values())
    for job_id in mine:  # the toy engine is deterministic: a rerun job gives the very same numbers
        # (the keys, and so the job folders, differ: the engine factory, another toy here, is part of the key)
        assert _without_key(mine[job_id]) == _without_key(theirs[job_id]), job_id
    starts = _starts(out)
    lost_key = mine["2-chloropropane__methoxide"]["job_key"]
    assert starts[lost_key] == 2, starts
    assert all(n == 1 for key, n in starts.items() if key != lost_key), starts


def test_a_job_stuck_in_one_stage_on_dask_is_stopped_at_the_stage_limit(tmp_path, monkeypatch):
    """The stuck toy engine hangs on the base; the Dask task's supervisor kills the job process at 12 s."""
    pytest.importorskip("distributed")
    from distributed import LocalCluster

    # On Dask the first stage, "its start-up", counts from the launch of the job process (interpreter and imports:
    # 0.8 s of CPU, 2 s on a machine loaded 3-fold). With a 4 s limit the job was stopped there, not in the base's
    # stage, on a 2-core machine at load average 15; 12 s leaves room for that (the hang itself lasts an hour).
    config = tmp_path / "batch.yaml"
    config.write_text(CONFIG.replace('  - {name: 2-chloropropane, smiles: "CC(C)Cl"}\n', "").replace(
        '  - {name: 1-chloropropane, smiles: "CCCCl"}\n', "")
        + "executor: {time_limit_seconds: 600, stage_time_limit_seconds: 12}\n")
    out = tmp_path / "out"
    env = _env()
    for key, value in env.items():
        monkeypatch.setenv(key, value)  # the Dask workers (and the job processes they start) import toyjobs
    with LocalCluster(processes=True, n_workers=1, threads_per_worker=1, dashboard_address=None) as cluster:
        done = _batch(config, out, env, "toyjobs:stuck_engine", "--scheduler", cluster.scheduler_address)
    assert done.returncode == ExitCode.JOBS_FAILED, done.stderr
    assert "Traceback" not in done.stderr
    job = json.loads((out / "results.json").read_text())["jobs"][0]
    assert job["error"]["error_type"] == "stage_time_limit"
    assert "longer than the stage time limit of 12 s in" in job["error"]["error_message"]
    assert "base 'methoxide'" in job["error"]["error_message"]
