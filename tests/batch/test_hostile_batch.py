"""Hostile input and failing disks in a batch (issue 21, the batch side): a name too long for a file name, a
job whose files cannot be written, an input file the batch would overwrite, names with terminal escape
sequences, a store that is empty, corrupt or deleted beside its write-ahead log, a disk that fills up.

Each case asserts the exit code, the first line of its message, no traceback on the terminal, and that no
finished job is lost. Batches compute on the toy engine (about a second a job, no GFN2-xTB), named in the
YAML through ``writefaults`` (the toy engine; ``ELIMSCAN_TEST_WRITE_FAULT`` makes its import fail writes in the
driver), so that runs on the command line and in this process plan the same job keys. The numbers are
compared only with the module's uninterrupted batch, never with chemistry.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest

from elimscan.batch.driver import BatchOptions, run_batch
from elimscan.batch.jobfiles import JOB_COPY_FILE, files_intact
from elimscan.batch.lock import lock_holder
from elimscan.batch.plan import plan_batch
from elimscan.batch.recovery import move_aside, store_damage
from elimscan.batch.status import read_status, state_text, status_lines
from elimscan.batch.store import STORE_FILE, JobStore
from elimscan.config import parse_config
from elimscan.errors import ExitCode
from elimscan.output.files import validate_result_file
from toyjobs import TOY_SETTINGS, without_timings

ROOT = Path(__file__).resolve().parents[2]
TESTS = Path(__file__).resolve().parents[1]

CONFIG = TOY_SETTINGS + """\
name: hostile
method: {engine_factory: "writefaults:toy_engine"}
substrates:
  - {name: chloroethane, smiles: "CCCl"}
substrates_file: more.csv
bases:
  - {name: methoxide}
executor: {workers: 1}
"""
LONG_NAME = "x" * 300
#: terminal escapes: clear the screen, set the window title (OSC ... BEL), a right-to-left override
EVIL_NAME = "\x1b[2J\x1b]0;pwned\x07red\u202e"
EVIL_SHOWN = "\\x1b[2J\\x1b]0;pwned\\x07red\\u202e"
#: two usable rows, a row whose name cannot be a folder name (line 3), a row with escapes and a bad SMILES (line 4)
HOSTILE_CSV = f'name,smiles\n2-chloropropane,CC(C)Cl\n{LONG_NAME},CCCCCl\n"{EVIL_NAME}",C1CC\n1-chloropropane,CCCCl\n'
COMPUTED = ["chloroethane__methoxide", "2-chloropropane__methoxide", "1-chloropropane__methoxide"]


def elimscan(*args: str, env: dict | None = None) -> subprocess.CompletedProcess:
    """Run ``elimscan`` in a subprocess with this clone's package and the test engines; return the process."""
    path = os.pathsep.join([str(TESTS / "support"), str(ROOT / "workflow"), os.environ.get("PYTHONPATH", "")])
    return subprocess.run([sys.executable, "-m", "elimscan", *args], capture_output=True, text=True, timeout=300,
                          env={**os.environ, "PYTHONPATH": path, "PYTHONDONTWRITEBYTECODE": "1", **(env or {})})


def write_config(folder: Path, csv_text: str = HOSTILE_CSV, extra: str = "") -> Path:
    """Write the batch config and its substrates CSV into ``folder``; return the config path."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "more.csv").write_text(csv_text, encoding="utf-8")
    path = folder / "batch.yaml"
    path.write_text(CONFIG.replace("substrates_file: more.csv\n", extra or "substrates_file: more.csv\n"))
    return path


def plan_of(config: Path):
    """Return the batch plan of a config file, as the command line makes it."""
    return plan_batch(parse_config(config.read_text(), source=str(config)), config)


def run_here(config: Path, out: Path, **options):
    """Run a batch in this process (local workers); return its BatchOutcome."""
    plan = plan_of(config)
    return run_batch(plan, out, plan.config.executor, 1, BatchOptions(**options))


def numbers(out: Path) -> dict:
    """Return the jobs and molecules of results.json without timings (valid against the schema)."""
    assert validate_result_file(out / "results.json") == []
    document = json.loads((out / "results.json").read_text())
    return {"jobs": without_timings(document["jobs"]), "molecules": without_timings(document["molecules"])}


def committed(out: Path) -> dict:
    """Return {job id: stored row} of the finished jobs of a batch folder."""
    with JobStore(out / STORE_FILE, read_only=True) as store:
        return {row.job_id: row for row in store.finished(with_records=True).values()}


def starts(out: Path) -> dict[int, list[str]]:
    """Return {run id: job ids started in that run} from the store's events."""
    with sqlite3.connect(f"file:{out / STORE_FILE}?mode=ro", uri=True) as conn:
        found: dict[int, list[str]] = {}
        for run_id, job_id in conn.execute("SELECT run_id, job_id FROM events WHERE kind = 'start' ORDER BY event_id"):
            found.setdefault(run_id, []).append(job_id)
    return found


def snapshot(out: Path) -> dict[str, str]:
    """Return {relative path: SHA-256} of every file in a folder but the lock and the log (which a refused batch
    writes), SQLite's shared-memory index and an empty write-ahead log (which opening a store may create)."""
    return {p.relative_to(out).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(out.rglob("*"))
            if p.is_file() and p.name not in ("batch.lock", "batch.log", f"{STORE_FILE}-shm")
            and not (p.name == f"{STORE_FILE}-wal" and p.stat().st_size == 0)}


def error_lines(stderr: str) -> list[str]:
    return [line for line in stderr.splitlines() if line.startswith("error (")]


@pytest.fixture(scope="module")
def finished(tmp_path_factory):
    """Return (config, output folder, the process) of the module's batch: three computed jobs and two hostile rows."""
    folder = tmp_path_factory.mktemp("finished")
    config = write_config(folder)
    done = elimscan("batch", str(config), "--out", str(folder / "out"))
    return config, folder / "out", done


@pytest.fixture(scope="module")
def killed(tmp_path_factory):
    """Return (config, output folder) of the same batch SIGKILLed right after its 2nd job commit: the store's
    write-ahead log holds the commits (no checkpoint yet)."""
    folder = tmp_path_factory.mktemp("killed")
    config = write_config(folder)
    done = elimscan("batch", str(config), "--out", str(folder / "out"), env={"ELIMSCAN_TEST_KILL_AT": "commit:2"})
    assert done.returncode == -9, done.stderr[-2000:]
    return config, folder / "out"


def copy_batch(source: Path, to: Path) -> tuple[Path, Path]:
    """Copy a batch's folder (config, CSV, output folder) to ``to``; return (config, output folder) there."""
    shutil.copytree(source.parent, to)
    return to / "batch.yaml", to / source.name


# --- 1: a row that cannot be written fails alone ---------------------------------------------------------------


def test_a_name_too_long_for_a_folder_fails_only_its_row_and_a_rerun_goes_on(finished, tmp_path):
    config, out, done = finished
    assert done.returncode == ExitCode.JOBS_FAILED, done.stderr[-3000:]
    assert done.stderr.splitlines()[0] == (
        f"job {LONG_NAME}__methoxide fails on its input: more.csv line 3: name '{'x' * 40}...' has 300 bytes as a "
        "file name; at most 100 (names become folder and file names in the output folder)")
    assert "Traceback" not in done.stderr
    rows = committed(out)
    assert sorted(j for j, r in rows.items() if r.status == "ok") == sorted(COMPUTED)  # nothing else was lost
    assert rows[f"{LONG_NAME}__methoxide"].error_type == "config_error"
    assert all(files_intact(out, row.files) is None for row in rows.values())
    config, out = copy_batch(out, tmp_path / "again")
    again = elimscan("batch", str(config), "--out", str(out))  # the rerun neither stops nor computes anything
    assert again.returncode == ExitCode.JOBS_FAILED and "Traceback" not in again.stderr, again.stderr[-3000:]
    assert "nothing to compute: all 5 job(s)" in again.stderr
    assert sorted(starts(out)) == [1]
    status = elimscan("status", str(out))
    assert status.returncode == ExitCode.OK and status.stdout.splitlines()[0] == f"batch 'hostile' in {out}: finished"


def test_a_job_whose_files_cannot_be_written_fails_alone_and_is_not_repeated(tmp_path, finished):
    # injected in the driver: creating any file below the 2nd job's folder fails as a name too long would
    config = write_config(tmp_path, "name,smiles\n2-chloropropane,CC(C)Cl\n")
    out = tmp_path / "out"
    done = elimscan("batch", str(config), "--out", str(out),
                    env={"ELIMSCAN_TEST_WRITE_FAULT": "ENAMETOOLONG@/jobs/2-chloropropane__methoxide/"})
    assert done.returncode == ExitCode.JOBS_FAILED, done.stderr[-3000:]
    folder = next(j.folder for j in plan_of(config).jobs if j.job_id == "2-chloropropane__methoxide")
    warning = [line for line in done.stderr.splitlines() if line.startswith("job 2-chloropropane__methoxide")]
    assert warning == [
        "job 2-chloropropane__methoxide failed: more.csv line 2: substrate '2-chloropropane': the job's files cannot "
        f"be written, so its results are not kept: cannot write '{out}/{folder}/base-methoxide.xyz': File name too "
        "long; the other jobs go on"]
    assert "Traceback" not in done.stderr and error_lines(done.stderr) == []
    rows = committed(out)
    assert [rows[j].status for j in COMPUTED[:2]] == ["ok", "failed"]
    assert rows["2-chloropropane__methoxide"].error_type == "output_error" and rows["2-chloropropane__methoxide"].files == ()
    reference = {j["job_id"]: j for j in numbers(finished[1])["jobs"]}
    assert numbers(out)["jobs"][0] == reference["chloroethane__methoxide"]  # the other job is kept whole
    assert files_intact(out, rows["chloroethane__methoxide"].files) is None
    rerun = run_here(config, out)  # the failure is recorded: a rerun computes nothing and does not stop
    assert (rerun.n_computed, rerun.n_ok, rerun.n_failed) == (0, 1, 1)


def test_a_name_in_the_yaml_too_long_for_a_file_name_stops_the_batch_before_it_starts(tmp_path):
    from elimscan.errors import ConfigError

    for key_path, old, new in (("substrates.0.name", "{name: chloroethane,", f"{{name: {'y' * 250},"),
                               ("bases.0.name", "{name: methoxide}", f"{{name: {'b' * 250}, smiles: '[O-]C'}}")):
        config = write_config(tmp_path)
        config.write_text(config.read_text().replace(old, new))
        with pytest.raises(ConfigError) as info:
            plan_of(config)
        assert info.value.key_path == key_path
        # the config's one name rule (config/names.py): a name is at most 100 bytes as a file name
        assert str(info.value).startswith(f"key '{key_path}', line ")
        assert f"name '{new[7:47]}...' has 250 bytes as a file name; at most 100" in str(info.value)


# --- 2: an input file the batch would overwrite -----------------------------------------------------------------


@pytest.mark.parametrize("inside", ["summary.csv", "jobs/more.csv"])
def test_an_input_file_among_the_batch_outputs_is_refused_before_anything_runs(tmp_path, inside):
    out = tmp_path / "out"
    (out / inside).parent.mkdir(parents=True)
    (out / inside).write_text("name,smiles\n2-chloropropane,CC(C)Cl\n")
    config = write_config(tmp_path, extra=f"substrates_file: out/{inside}\n")
    done = elimscan("batch", str(config), "--out", str(out))
    assert done.returncode == ExitCode.CONFIG, done.stderr[-3000:]
    assert done.stderr.splitlines()[0] == (
        f"error (config_error): key 'substrates_file': the substrates file '{tmp_path}/out/{inside}' is '{out}/{inside}', "
        f"a file this batch writes into its output folder '{out}': it would be overwritten. Move it out of the "
        "output folder, or choose another --out")
    assert "Traceback" not in done.stderr
    assert (out / inside).read_text() == "name,smiles\n2-chloropropane,CC(C)Cl\n"  # untouched, nothing computed
    # refused before the folder lock and the log file are made: the input is the only file there
    assert [p.relative_to(out).as_posix() for p in out.rglob("*") if p.is_file()] == [inside]


# --- 3: a damaged store ------------------------------------------------------------------------------------------


def _zero(out: Path) -> None:
    (out / STORE_FILE).write_bytes(b"")


def _corrupt(out: Path) -> None:
    data = bytearray((out / STORE_FILE).read_bytes())
    data[4096:12288] = b"\xff" * 8192  # pages 2 and 3: tables and rows
    (out / STORE_FILE).write_bytes(bytes(data))


def _delete(out: Path) -> None:
    (out / STORE_FILE).unlink()


DAMAGE = {  # (fixture, damage, what the message says happened: its start)
    "empty": ("finished", _zero, "the file is empty (0 bytes) although the folder holds batch.json and 3 finished "
                                 "job folders; nothing was changed"),
    "corrupt": ("finished", _corrupt, "SQLite"),
    "empty-beside-its-log": ("killed", _zero, "the file is empty (0 bytes) while its write-ahead log 'batch.sqlite-wal' ("),
    "deleted-beside-its-log": ("killed", _delete, "the file is missing while its write-ahead log 'batch.sqlite-wal' ("),
}


@pytest.mark.parametrize("case", sorted(DAMAGE))
def test_a_damaged_store_is_refused_in_the_same_words_and_rebuilt_from_the_job_files(case, request, tmp_path,
                                                                                        finished):
    fixture, damage, what = DAMAGE[case]
    source = request.getfixturevalue(fixture)
    config, out = copy_batch(source[1], tmp_path / "batch")
    before_rows = committed(out)
    damage(out)
    if fixture == "killed":
        assert (out / "batch.sqlite-wal").stat().st_size > 0  # the commits are only in the log
    damaged = {name: (out / name).read_bytes() for name in (STORE_FILE, f"{STORE_FILE}-wal")
               if (out / name).exists() and (name == STORE_FILE or (out / name).stat().st_size)}
    files_before = snapshot(out)
    status = elimscan("status", str(out))
    batch = elimscan("batch", str(config), "--out", str(out))
    assert status.returncode == batch.returncode == ExitCode.OUTPUT, batch.stderr[-3000:]
    first = status.stderr.splitlines()[0]
    assert first.startswith(f"error (store_damaged): batch store '{out}/{STORE_FILE}' is damaged: {what}"), first
    assert first.endswith("; nothing was changed. Rebuild it from batch.json and the job files (every finished job "
                          "whose files match their checksums is kept, the damaged store is moved aside): elimscan "
                          f"batch CONFIG --out {out} --rebuild-store")
    assert batch.stderr.splitlines()[0] == first  # the same words from both commands
    assert "Traceback" not in status.stderr + batch.stderr and status.stdout == batch.stdout == ""
    assert snapshot(out) == files_before  # nothing read the store: its log is still there, nothing was replaced
    tampered = None
    if case == "corrupt":  # a job file changed since its commit: that job is not kept, but computed again
        tampered = next(p for p in sorted(out.glob("jobs/1-chloropropane__methoxide/*/scan-*.xyz")))
        tampered.write_text(tampered.read_text().replace("0", "1", 1))
    rebuilt = run_here(config, out, rebuild_store=True)
    moved = sorted(out.glob("batch-damaged-*.sqlite*"))
    aside = {p.name[len("batch-damaged-YYYYmmddTHHMMSSZ.sqlite"):]: p.read_bytes() for p in moved}
    assert {k: d for k, d in aside.items() if k == "" or (k == "-wal" and d)} == \
        {n[len(STORE_FILE):]: d for n, d in damaged.items()}  # the damaged store and its log, kept as they were
    kept_ok = [j for j, r in before_rows.items() if r.status == "ok"]
    assert len(kept_ok) == (3 if fixture == "finished" else 2)
    expected_computed = (3 - len(kept_ok)) + (tampered is not None)
    assert rebuilt.n_computed == expected_computed and rebuilt.complete
    assert numbers(out) == numbers(source[1] if fixture == "finished" else finished[1])  # identical numbers
    rows = committed(out)
    for job_id, row in before_rows.items():  # every job computed before the damage is back, untouched
        if job_id in COMPUTED and (tampered is None or not job_id.startswith("1-chloropropane")):
            assert (rows[job_id].status, rows[job_id].finished_utc, rows[job_id].job_json) == \
                (row.status, row.finished_utc, row.job_json), job_id
    for copy in out.glob(f"jobs/*/*/{JOB_COPY_FILE}"):
        assert validate_result_file(copy) == [], copy
    index = json.loads((out / "batch.json").read_text())
    assert all(entry["job_starts"] >= 1 for entry in index["jobs"] if entry["job_id"] in COMPUTED)
    assert read_status(out).run_state == "finished" and lock_holder(out) is None


def test_an_unstarted_folder_is_not_damaged_and_a_damaged_store_never_moves_over_a_file(tmp_path):
    assert store_damage(tmp_path) is None
    (tmp_path / STORE_FILE).write_bytes(b"")  # a store whose creation was cut short: the batch starts afresh
    assert store_damage(tmp_path) is None
    import datetime as dt

    now = dt.datetime(2026, 12, 3, 11, 0, 0, tzinfo=dt.timezone.utc)
    (tmp_path / STORE_FILE).write_bytes(b"first")
    (tmp_path / f"{STORE_FILE}-wal").write_bytes(b"log")
    assert [p.name for p in move_aside(tmp_path, now)] == ["batch-damaged-20261203T110000Z.sqlite",
                                                          "batch-damaged-20261203T110000Z.sqlite-wal"]
    (tmp_path / STORE_FILE).write_bytes(b"second")
    assert [p.name for p in move_aside(tmp_path, now)] == ["batch-damaged-20261203T110000Z-2.sqlite"]
    assert (tmp_path / "batch-damaged-20261203T110000Z.sqlite").read_bytes() == b"first"
    assert (tmp_path / "batch-damaged-20261203T110000Z-2.sqlite").read_bytes() == b"second"


# --- 4: a disk that fills up --------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def disk_full(tmp_path_factory):
    """Return (config, output folder, the batch, its status) of the batch whose disk fills up at its 2nd job."""
    folder = tmp_path_factory.mktemp("full")
    config = write_config(folder)
    out = folder / "out"
    full = elimscan("batch", str(config), "--out", str(out),
                    env={"ELIMSCAN_TEST_WRITE_FAULT": "ENOSPC@/jobs/2-chloropropane__methoxide/"})
    return config, out, full, elimscan("status", str(out))


def _full_message(config: Path, out: Path) -> str:
    folder = next(j.folder for j in plan_of(config).jobs if j.job_id == "2-chloropropane__methoxide")
    return f"disk full while writing '{out}/{folder}/base-methoxide.xyz': No space left on device"


def test_a_full_disk_stops_the_batch_with_its_first_write_error_and_keeps_every_finished_job(disk_full, finished):
    config, out, full, _ = disk_full
    assert full.returncode == ExitCode.OUTPUT, full.stderr[-3000:]
    assert error_lines(full.stderr) == [f"error (output_error): {_full_message(config, out)}"]
    rows = committed(out)
    assert [j for j in COMPUTED if j in rows] == ["chloroethane__methoxide"]
    assert all(files_intact(out, row.files) is None for row in rows.values())
    status = read_status(out)
    assert status.stop == ("write_error", _full_message(config, out))
    assert state_text(status) == (f"stopped on a write error: {_full_message(config, out)}; free space or fix the "
                                  "folder, then run the batch again to resume")
    assert status_lines(status)[0] == f"batch 'hostile' in {out}: {state_text(status)}"
    resumed = run_here(config, out)  # room again: only the two jobs not finished are computed
    assert resumed.n_computed == 2 and resumed.complete
    assert numbers(out) == numbers(finished[1])


def test_a_full_disk_reaches_the_terminal_as_one_line_and_status_says_so(disk_full):
    config, out, full, status = disk_full
    assert "Traceback" not in full.stderr and "Logging error" not in full.stderr, full.stderr[-3000:]
    assert status.returncode == ExitCode.OK
    assert status.stdout.splitlines()[0] == (f"batch 'hostile' in {out}: stopped on a write error: "
                                             f"{_full_message(config, out)}; free space or fix the folder, then run "
                                             "the batch again to resume")


def test_the_store_is_rebuilt_from_the_command_line(finished, tmp_path):
    config, out = copy_batch(finished[1], tmp_path / "batch")
    _zero(out)
    rebuilt = elimscan("batch", str(config), "--out", str(out), "--rebuild-store")
    assert rebuilt.returncode == ExitCode.JOBS_FAILED and "Traceback" not in rebuilt.stderr, rebuilt.stderr[-3000:]
    assert rebuilt.stderr.splitlines()[0].startswith(f"rebuilt the batch store {out}/{STORE_FILE} from the job "
                                                     "folders: 3 ok and 0 failed job(s) kept")
    assert numbers(out) == numbers(finished[1])


# --- 5: names with terminal escape sequences ----------------------------------------------------------------------


def test_names_with_terminal_escapes_are_printed_escaped_by_batch_and_status(finished):
    _, out, done = finished
    assert done.returncode == ExitCode.JOBS_FAILED and "Traceback" not in done.stderr, done.stderr[-3000:]
    job_id = "__2J__0_pwned_red___methoxide"
    assert f"job {job_id} fails on its input: more.csv line 4: substrate '{EVIL_SHOWN}': " in done.stderr
    assert f"failed: {job_id}: structure_error: more.csv line 4: substrate '{EVIL_SHOWN}': " in done.stderr
    status = elimscan("status", str(out))
    assert status.returncode == ExitCode.OK and "Traceback" not in status.stderr
    assert f"  failed: {job_id}: structure_error: more.csv line 4: substrate '{EVIL_SHOWN}': " in status.stdout
    for text in (done.stderr, status.stdout):
        assert not any(c in text for c in "\x1b\x07\u202e"), "a control character reached the terminal"
    assert EVIL_NAME in committed(out)[job_id].error_message  # the record keeps the name as given
