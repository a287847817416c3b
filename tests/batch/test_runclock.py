"""The wall-time log of a computation that outlives no machine (elimscan.batch.runclock).

The reference benchmark runs for more than a night and is killed (SIGKILL) at the end of every machine session and
paused (SIGSTOP) while the test suite runs: its page must still say how long it computed. Real processes are
killed and paused here; the lock is the kernel's (fcntl.flock), so these are the cases that happen.
"""

from __future__ import annotations

import fcntl
import json
import os
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest

from elimscan.batch import runclock
from elimscan.errors import OutputError

ROOT = Path(__file__).resolve().parents[2]
#: a computing invocation: its clock beats every 0.05 s; it says 'ready' and then works until killed
CHILD = """
import sys, time
from pathlib import Path
from elimscan.batch import runclock
runclock.HEARTBEAT_S = 0.05
work = Path(sys.argv[1])
with runclock.RunClock(work / "running.json", work / "runs.jsonl", work / "running.lock", {"commit": "abc1234"},
                       time.perf_counter()):
    print("ready", flush=True)
    time.sleep(120)
"""


def _files(work: Path) -> tuple[Path, Path, Path]:
    return work / "running.json", work / "runs.jsonl", work / "running.lock"


def _child(work: Path) -> subprocess.Popen:
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(ROOT / "workflow"), os.environ.get("PYTHONPATH", "")])}
    child = subprocess.Popen([sys.executable, "-c", CHILD, str(work)], stdout=subprocess.PIPE, text=True, env=env)
    assert child.stdout.readline().strip() == "ready"
    return child


def test_the_running_file_is_rewritten_while_the_invocation_runs(tmp_path, monkeypatch):
    monkeypatch.setattr(runclock, "HEARTBEAT_S", 0.05)
    running, log, lock = _files(tmp_path)
    with runclock.RunClock(running, log, lock, {"commit": "abc1234"}, time.perf_counter()):
        first = json.loads(running.read_text())
        time.sleep(0.4)
        later = json.loads(running.read_text())
        assert later["wall_seconds"] >= first["wall_seconds"] + 0.2  # the heartbeat wrote it again meanwhile
        assert later["commit"] == "abc1234" and later["pid"] == os.getpid()
        # the folder is this invocation's: a second one is refused, and nobody settles the live file
        with pytest.raises(OutputError, match="another invocation computes in"):
            runclock.RunClock(running, log, lock, {}, time.perf_counter()).__enter__()
        assert not runclock.settle_stale_run(running, log, lock) and running.exists()
    assert not running.exists()
    [entry] = runclock.read_run_log(log)
    assert entry["wall_seconds"] >= 0.4 and "interrupted" not in entry and "pid" not in entry


def test_an_invocation_ended_by_an_exception_is_logged_as_interrupted(tmp_path):
    running, log, lock = _files(tmp_path)
    with pytest.raises(KeyboardInterrupt):
        with runclock.RunClock(running, log, lock, {"commit": "abc1234"}, time.perf_counter()):
            raise KeyboardInterrupt
    [entry] = runclock.read_run_log(log)
    assert entry["interrupted"] and not running.exists()


def test_a_killed_invocation_keeps_its_time_and_a_paused_one_is_left_alone(tmp_path):
    running, log, lock = _files(tmp_path)
    child = _child(tmp_path)
    try:
        time.sleep(0.5)
        child.send_signal(signal.SIGSTOP)  # paused, as the benchmark is while the tests run
        time.sleep(0.2)
        assert not runclock.settle_stale_run(running, log, lock) and running.exists()
        last = json.loads(running.read_text())["wall_seconds"]
        child.send_signal(signal.SIGCONT)
        time.sleep(0.3)
    finally:
        child.kill()  # SIGKILL: no exit code of its own runs
        child.wait()
    assert running.exists() and not log.exists()
    assert runclock.settle_stale_run(running, log, lock) and not running.exists()
    [entry] = runclock.read_run_log(log)
    assert entry["interrupted"] and entry["commit"] == "abc1234" and entry["wall_seconds"] >= max(last, 0.5)
    assert entry["last_seen_utc"] and "pid" not in entry and "time_unknown" not in entry
    assert not runclock.settle_stale_run(running, log, lock)  # once only


def test_a_pause_counts_as_two_heartbeats(tmp_path, monkeypatch):
    running, log, lock = _files(tmp_path)
    clock = runclock.RunClock(running, log, lock, {}, time.perf_counter())
    now = [time.perf_counter()]
    monkeypatch.setattr(runclock.time, "perf_counter", lambda: now[0])
    before = clock.seconds()
    now[0] += 3600.0  # an hour stopped (SIGSTOP) between two heartbeats
    assert clock.seconds() - before == pytest.approx(runclock.PAUSE_HEARTBEATS * runclock.HEARTBEAT_S, abs=0.11)
    now[0] += 30.0  # then running again
    assert clock.seconds() - before == pytest.approx(runclock.PAUSE_HEARTBEATS * runclock.HEARTBEAT_S + 30.0, abs=0.11)


def test_a_running_file_of_older_code_is_logged_without_a_time(tmp_path):
    running, log, lock = _files(tmp_path)
    running.write_text(json.dumps({"commit": "f119db4", "base_model": "alcohol-3-embedded", "dft": None, "pid": 1}))
    log.write_text('{"commit": "0000000", "wall_seconds": 60.0}\n{"commit": "torn')  # a line cut by a full disk
    assert runclock.settle_stale_run(running, log, lock)
    entries = runclock.read_run_log(log)
    assert [e["commit"] for e in entries] == ["0000000", "f119db4"]
    assert entries[-1]["time_unknown"] and entries[-1]["wall_seconds"] == 0.0


def test_the_progress_look_names_a_live_or_paused_invocation_and_not_a_killed_one(tmp_path):
    # validate.py --progress: read-only, so a killed invocation's file stays for the next computing one to settle
    running, log, lock = _files(tmp_path)
    assert runclock.running_entry(running, lock) is None  # nothing runs here
    child = _child(tmp_path)
    try:
        time.sleep(0.2)
        entry = runclock.running_entry(running, lock)
        assert entry["commit"] == "abc1234" and entry["pid"] == child.pid and entry["wall_seconds"] > 0, entry
        child.send_signal(signal.SIGSTOP)
        time.sleep(0.3)  # six of its heartbeats missed
        assert runclock.running_entry(running, lock)["pid"] == child.pid  # paused: still its folder
        child.send_signal(signal.SIGCONT)
    finally:
        child.kill()
        child.wait()
    assert runclock.running_entry(running, lock) is None
    assert running.exists() and not log.exists()  # left to be settled, not settled by a look


def test_a_look_creates_nothing_and_does_not_turn_a_starting_invocation_away(tmp_path, monkeypatch):
    running, log, lock = _files(tmp_path)
    running.write_text(json.dumps({"commit": "abc1234", "wall_seconds": 60.0}))  # a killed invocation's, no lock file
    assert runclock.running_entry(running, lock) is None and not lock.exists()
    # a look holds a shared lock for an instant: an invocation starting at that moment waits for it, not refused
    lock.touch()
    look = os.open(lock, os.O_RDONLY)
    fcntl.flock(look, fcntl.LOCK_SH)
    threading.Timer(0.3, lambda: (fcntl.flock(look, fcntl.LOCK_UN), os.close(look))).start()
    with runclock.RunClock(running, log, lock, {"commit": "def5678"}, time.perf_counter()):
        pass
    [settled, ended] = runclock.read_run_log(log)
    assert settled["commit"] == "abc1234" and settled["interrupted"] and ended["commit"] == "def5678"
