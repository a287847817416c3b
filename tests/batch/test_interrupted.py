"""Interrupted and failing batches lose nothing: SIGKILL at five known points, a disk that fills up
(RLIMIT_FSIZE), an output folder that stops being writable mid-run, a bug in a worker, atomic files.

Every batch here computes on the toy engine (``toyjobs.py``, selected with the documented test hook
``--engine toyjobs:toy_engine``), so a job takes about a second and no GFN2-xTB is needed: what is tested is
the bookkeeping, not the numbers, which are compared only with an uninterrupted run of the same jobs.
"""

from __future__ import annotations

import json
import os
import resource
import signal
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest

from elimscan.atomicio import temporary_name, write_bytes_atomic
from elimscan.batch.jobfiles import files_intact
from elimscan.batch.lock import lock_holder
from elimscan.errors import ExitCode, OutputError
from elimscan.output.files import build_report_files, validate_result_file
from elimscan.batch.store import STORE_FILE, JobStore
from toyjobs import TOY_SETTINGS, without_timings

ROOT = Path(__file__).resolve().parents[2]
TESTS = Path(__file__).resolve().parents[1]

CONFIG = TOY_SETTINGS + """\
name: interrupted
substrates:
  - {name: chloroethane, smiles: "CCCl"}
  - {name: 2-chloropropane, smiles: "CC(C)Cl"}
  - {name: 1-chloropropane, smiles: "CCCCl"}
bases:
  - {name: methoxide}
executor: {workers: 1}
"""
JOB_IDS = ["chloroethane__methoxide", "2-chloropropane__methoxide", "1-chloropropane__methoxide"]


def elimscan(*args: str, env: dict | None = None, preexec_fn=None,
             engine: str = "toyjobs:toy_engine") -> subprocess.CompletedProcess:
    """Run ``elimscan`` in a subprocess on the toy engine (``--engine`` for run and batch); return the process."""
    if args and args[0] in ("run", "batch"):
        args = (*args, "--engine", engine)
    path = os.pathsep.join([str(TESTS / "support"), str(ROOT / "workflow"), os.environ.get("PYTHONPATH", "")])
    return subprocess.run([sys.executable, "-m", "elimscan", *args], capture_output=True, text=True, timeout=300,
                          preexec_fn=preexec_fn,
                          env={**os.environ, "PYTHONPATH": path, "PYTHONDONTWRITEBYTECODE": "1",
                               **(env or {})})


def batch(folder: Path, **kwargs) -> subprocess.CompletedProcess:
    (folder / "batch.yaml").write_text(CONFIG)
    return elimscan("batch", str(folder / "batch.yaml"), "--out", str(folder / "out"), **kwargs)


def numbers(out: Path) -> dict:
    """Return the jobs and molecules of results.json without timings (what must not depend on interruptions)."""

    for name in ("results.json", "batch.json"):  # valid against the JSON Schema exported from records.py
        assert validate_result_file(out / name) == [], name
    document = json.loads((out / "results.json").read_text())
    return {"jobs": without_timings(document["jobs"]), "molecules": without_timings(document["molecules"])}


def committed(out: Path) -> dict:
    """Return {job key: stored row} of the finished jobs in a batch folder."""
    with JobStore(out / STORE_FILE, read_only=True) as store:
        return store.finished()


def starts(out: Path, run_id: int) -> list[str]:
    with sqlite3.connect(f"file:{out / STORE_FILE}?mode=ro", uri=True) as conn:
        return [k for (k,) in conn.execute("SELECT job_key FROM events WHERE kind = 'start' AND run_id = ?", (run_id,))]


def assert_consistent(out: Path) -> None:
    """Assert what a reader of a killed folder relies on: every committed job's files are complete and
    unchanged, no result document exists half-written, and the lock died with the process."""
    for key, row in committed(out).items():
        assert files_intact(out, row.files) is None, row.job_id
    for name in ("results.json", "batch.json"):
        if (out / name).exists():
            json.loads((out / name).read_text())  # a complete document, or none at all
    assert lock_holder(out) is None


@pytest.fixture(scope="module")
def reference(tmp_path_factory) -> Path:
    """Return the output folder of the batch run without interruption."""
    folder = tmp_path_factory.mktemp("reference")
    done = batch(folder)
    assert done.returncode == ExitCode.OK, done.stderr
    return folder / "out"


#: (point, n): after the 2nd job start is stored (the 2nd job is being computed); once the 2nd job's first
#: temporary file is complete but not renamed; after the 2nd job's files are in place but before its store
#: commit; right after the 1st commit; while batch.json is written at the end (all jobs committed)
KILL_POINTS = [("start", 2), ("rename", 2), ("files", 2), ("commit", 1), ("documents", 1)]


@pytest.mark.parametrize("point, n", KILL_POINTS, ids=[f"{p}-{n}" for p, n in KILL_POINTS])
def test_a_batch_killed_at_a_known_point_resumes_to_the_uninterrupted_result(tmp_path, reference, point, n):
    out = tmp_path / "out"
    killed = batch(tmp_path, env={"ELIMSCAN_TEST_KILL_AT": f"{point}:{n}"})
    assert killed.returncode == -signal.SIGKILL, killed.stderr
    assert not (out / "results.json").exists()
    assert_consistent(out)
    first = committed(out)
    expected_rows = {"start": 1, "rename": 1, "files": 1, "commit": 1, "documents": 3}[point]
    assert len(first) == expected_rows
    if point == "rename":  # the temporary file is there, complete, but no finished file was replaced by it
        assert list(out.glob("jobs/2-chloropropane__methoxide/*/.*.tmp"))
    resumed = batch(tmp_path)
    assert resumed.returncode == ExitCode.OK, resumed.stderr
    assert "Traceback" not in resumed.stderr
    assert not list(out.rglob("*.tmp"))  # leftovers of the killed writer are cleaned up
    assert not set(starts(out, 2)) & set(first)  # nothing finished before the kill was computed again
    assert all(committed(out)[k].finished_utc == row.finished_utc for k, row in first.items())
    assert_consistent(out)
    assert numbers(out) == numbers(reference)


def _file_size_limit(limit_bytes: int):
    """Return a preexec function: ignore SIGXFSZ (so writes fail with EFBIG) and cap every file at ``limit_bytes``."""

    def apply() -> None:
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit_bytes, limit_bytes))

    return apply


def test_a_disk_that_fills_up_keeps_every_finished_job(tmp_path, reference):
    # RLIMIT_FSIZE caps each file; the store's write-ahead log grows with every commit, so a cap between one
    # and three jobs' worth makes the disk "full" part-way. The sizes depend on the record format, so the
    # first cap (of a few, smallest first) that lets at least one job finish is used.
    out = tmp_path / "out"
    for limit in (160_000, 200_000, 260_000, 340_000, 440_000):
        if out.exists():
            import shutil

            shutil.rmtree(out)
        full = batch(tmp_path, preexec_fn=_file_size_limit(limit))
        if full.returncode == ExitCode.OUTPUT and committed(out):
            break
    else:
        pytest.fail(f"no file-size limit up to {limit} bytes stopped the batch after a finished job: {full.stderr}")
    assert "error (output_error)" in full.stderr and "disk full" in full.stderr, full.stderr
    assert "Traceback" not in full.stderr
    assert "Traceback" in (out / "batch.log").read_text()  # the details are in the log file
    assert_consistent(out)
    first = committed(out)
    assert 1 <= len(first) < len(JOB_IDS)
    resumed = batch(tmp_path)
    assert resumed.returncode == ExitCode.OK, resumed.stderr
    assert not set(starts(out, 2)) & set(first)
    assert numbers(out) == numbers(reference)


def test_an_output_folder_that_stops_being_writable_keeps_finished_jobs(tmp_path, reference):
    # CI runs as root, so permissions cannot make a folder unwritable: the failure is injected by putting a
    # plain file where the second job's folder must go (writing below it fails with "Not a directory")
    out = tmp_path / "out"
    (out / "jobs").mkdir(parents=True)
    (out / "jobs" / JOB_IDS[1]).write_text("in the way\n")
    stopped = batch(tmp_path)
    assert stopped.returncode == ExitCode.OUTPUT, stderr_tail(stopped)
    assert f"error (output_error): cannot write '{out}/jobs/{JOB_IDS[1]}/" in stopped.stderr
    assert "Not a directory" in stopped.stderr and "Traceback" not in stopped.stderr
    assert_consistent(out)
    first = committed(out)
    assert [row.job_id for row in first.values()] == [JOB_IDS[0]]
    (out / "jobs" / JOB_IDS[1]).unlink()
    resumed = batch(tmp_path)
    assert resumed.returncode == ExitCode.OK, resumed.stderr
    assert numbers(out) == numbers(reference)


def stderr_tail(done: subprocess.CompletedProcess) -> str:
    return done.stderr[-2000:]


def test_a_bug_in_a_worker_fails_its_job_with_the_traceback_in_the_log_only(tmp_path):
    (tmp_path / "batch.yaml").write_text(CONFIG)
    done = elimscan("batch", str(tmp_path / "batch.yaml"), "--out", str(tmp_path / "out"),
                    engine="toyjobs:broken_engine")
    assert done.returncode == ExitCode.JOBS_FAILED, done.stderr
    assert "Traceback" not in done.stderr
    assert "internal_error: unexpected ZeroDivisionError in the worker" in done.stderr
    log = (tmp_path / "out" / "batch.log").read_text()
    assert "Traceback" in log and "ZeroDivisionError" in log


# --- the atomic writer -----------------------------------------------------------------------------------------


def test_an_atomic_write_replaces_the_whole_file_or_nothing(tmp_path):
    target = tmp_path / "results.json"
    write_bytes_atomic(target, b'{"old": true}')

    def fail(tmp: Path) -> None:
        assert tmp == temporary_name(target) and tmp.read_bytes() == b'{"new": true}'
        raise OSError(28, "No space left on device")

    with pytest.raises(OutputError, match="disk full while writing '.*results.json': No space left on device$"):
        write_bytes_atomic(target, b'{"new": true}', before_rename=fail)
    assert target.read_bytes() == b'{"old": true}'  # the old state, whole
    assert not temporary_name(target).exists()  # and no leftover
    write_bytes_atomic(target, b'{"new": true}')
    assert target.read_bytes() == b'{"new": true}'


def test_an_atomic_write_past_the_file_size_limit_leaves_the_old_file(tmp_path):
    script = ("import resource, signal, sys\n"
              "from elimscan.atomicio import write_bytes_atomic\n"
              "signal.signal(signal.SIGXFSZ, signal.SIG_IGN)\n"
              "resource.setrlimit(resource.RLIMIT_FSIZE, (4096, 4096))\n"
              "write_bytes_atomic(sys.argv[1], b'x' * 10000)\n")
    target = tmp_path / "summary.csv"
    target.write_bytes(b"old,content\n")
    done = subprocess.run([sys.executable, "-c", script, str(target)], capture_output=True, text=True, timeout=60,
                          env={**os.environ, "PYTHONPATH": str(ROOT / "workflow")})
    assert done.returncode != 0 and "File too large" in done.stderr and "disk full" in done.stderr
    assert target.read_bytes() == b"old,content\n"
    assert not list(tmp_path.glob(".*.tmp"))


def test_a_permission_error_mid_run_keeps_finished_jobs(tmp_path, reference, capsys, monkeypatch):
    # injected in the driver (this process): renaming the second job's files into place is refused, as on a
    # folder whose permissions changed under a running batch (root ignores permissions, so they cannot be used)
    import errno

    from elimscan.cli import main

    real_replace = os.replace

    def refuse(src, dst):
        if f"/jobs/{JOB_IDS[1]}/" in str(dst):
            raise PermissionError(errno.EACCES, "Permission denied")
        return real_replace(src, dst)

    (tmp_path / "batch.yaml").write_text(CONFIG)
    monkeypatch.setattr(os, "replace", refuse)
    code = main(["batch", str(tmp_path / "batch.yaml"), "--out", str(tmp_path / "out"), "--engine", "toyjobs:toy_engine"])
    monkeypatch.undo()
    err = capsys.readouterr().err
    out = tmp_path / "out"
    assert code == ExitCode.OUTPUT, err
    assert f"error (output_error): cannot write '{out}/jobs/{JOB_IDS[1]}/" in err and "Permission denied" in err
    assert "Traceback" not in err
    assert [row.job_id for row in committed(out).values()] == [JOB_IDS[0]]
    assert_consistent(out)
    assert not list(out.rglob("*.tmp"))  # the refused temporary file was removed
    resumed = batch(tmp_path)
    assert resumed.returncode == ExitCode.OK, resumed.stderr
    assert numbers(out) == numbers(reference)


RUN_CONFIG = TOY_SETTINGS + """\
name: run-disk-full
substrates:
  - {name: chloroethane, smiles: "CCCl"}
  - {name: 2-chloropropane, smiles: "CC(C)Cl"}
bases:
  - {name: methoxide}
"""


def test_a_disk_that_fills_up_during_a_single_run_keeps_its_results(tmp_path):
    # `run` writes results.json first, then the report; a per-file cap above results.json's size and below
    # report.html's makes the disk "full" between the two (sizes measured here, not assumed)
    (tmp_path / "run.yaml").write_text(RUN_CONFIG)
    whole = elimscan("run", str(tmp_path / "run.yaml"), "--out", str(tmp_path / "whole"))
    assert whole.returncode == ExitCode.OK, whole.stderr
    results_size = (tmp_path / "whole" / "results.json").stat().st_size
    report_size = (tmp_path / "whole" / "report.html").stat().st_size
    assert results_size < report_size
    out = tmp_path / "full"
    full = elimscan("run", str(tmp_path / "run.yaml"), "--out", str(out),
                    preexec_fn=_file_size_limit((results_size + report_size) // 2))
    assert full.returncode == ExitCode.OUTPUT, full.stderr
    assert "error (output_error)" in full.stderr and "disk full" in full.stderr and "Traceback" not in full.stderr
    assert f"elimscan report {out}" in full.stderr  # says how to get the report once there is room
    assert validate_result_file(out / "results.json") == []
    assert not (out / "report.html").exists() and not list(out.glob("*.tmp*"))
    assert without_timings(json.loads((out / "results.json").read_text())["jobs"]) == \
        without_timings(json.loads((tmp_path / "whole" / "results.json").read_text())["jobs"])
    rebuilt = elimscan("report", str(out))  # room again: the report comes from the kept results
    assert rebuilt.returncode == ExitCode.OK, rebuilt.stderr
    assert (out / "report.html").read_bytes() == build_report_files(out)["report.html"]  # from the kept results
    assert all(job_id in (out / "report.html").read_text() for job_id in ("chloroethane__methoxide",
                                                                         "2-chloropropane__methoxide"))
