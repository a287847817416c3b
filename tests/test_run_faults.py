"""Fault injection for ``elimscan run`` (issue 21): a full disk at each write, a file that cannot be written, a kill
during ``--overwrite``, a second run or a batch started while a run computes, a bug after the log file opened.

Whatever happens, results.json is either the new complete one or the previous one, byte for byte, and no file of
the previous run is left beside a new results.json. The computation itself is done once on the toy engine and
replayed (``compute_run`` and ``build_report_files`` patched to return it), so each fault costs milliseconds; the
kill needs a real process (``toyjobs:stuck_engine`` hangs on the base until it is killed).
"""

from __future__ import annotations

import errno
import os
import shutil
import signal
import subprocess
import sys
import time
from dataclasses import dataclass
from pathlib import Path

import pytest

import elimscan.atomicio as atomicio
from elimscan.batch.lock import lock_holder
from elimscan.cli import main
from elimscan.errors import ExitCode
from elimscan.results.documents import RunResult
from toyjobs import TOY_SETTINGS

ROOT = Path(__file__).resolve().parents[1]
TESTS = Path(__file__).resolve().parent
CONFIG = TOY_SETTINGS + """\
name: faults
substrates:
  - {name: chloroethane, smiles: "CCCl"}
bases:
  - {name: methoxide, smiles: "C[O-]"}
"""
BATCH = TOY_SETTINGS + """\
name: faults-batch
substrates_file: more.csv
bases:
  - {name: methoxide}
"""
TOY = ("--engine", "toyjobs:toy_engine")


@dataclass(frozen=True)
class Computed:
    """One toy run, computed once: its config, what compute_run and build_report_files returned, its folder."""

    config: Path
    result: RunResult
    files: dict[str, bytes]
    report: dict[str, bytes]
    folder: Path

    @property
    def results_json(self) -> bytes:
        """Return the bytes of the run's results.json."""
        return (self.folder / "results.json").read_bytes()

    def written(self) -> dict[str, bytes]:
        """Return every file a complete run writes besides run.log: {relative path: content}."""
        return {"results.json": self.results_json, **self.files, **self.report}


@pytest.fixture(scope="module")
def computed(tmp_path_factory) -> Computed:
    """Return the toy run, computed once into a folder of its own."""
    import elimscan.output.files
    import elimscan.pipeline.jobs

    folder = tmp_path_factory.mktemp("computed")
    (folder / "run.yaml").write_text(CONFIG)
    kept = {}
    real_compute, real_report = elimscan.pipeline.jobs.compute_run, elimscan.output.files.build_report_files
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(elimscan.pipeline.jobs, "compute_run", lambda *a: kept.setdefault("run", real_compute(*a)))
        patch.setattr(elimscan.output.files, "build_report_files", lambda out: kept.setdefault("report", real_report(out)))
        assert main(["run", str(folder / "run.yaml"), "--out", str(folder / "out"), "-q", *TOY]) == ExitCode.OK
    result, files = kept["run"]
    return Computed(folder / "run.yaml", result, files, kept["report"], folder / "out")


@pytest.fixture
def replay(computed, monkeypatch) -> Computed:
    """Make 'run' replay the computed run instead of computing (the writing is what these tests exercise)."""
    monkeypatch.setattr("elimscan.pipeline.jobs.compute_run", lambda *a: (computed.result, computed.files))
    monkeypatch.setattr("elimscan.output.files.build_report_files", lambda out: dict(computed.report))
    return computed


def previous_run(computed: Computed, out: Path) -> dict[str, bytes]:
    """Put a finished earlier run into ``out`` (its results.json tells itself apart); return its files."""
    shutil.copytree(computed.folder, out)
    (out / "results.json").write_bytes(computed.results_json.replace(b'"name": "faults"', b'"name": "previous"', 1))
    return {rel: (out / rel).read_bytes() for rel in computed.written()}


def cli(capsys, *argv) -> tuple[int, str]:
    """Run the command line in this process; return (exit code, stderr)."""
    code = main([str(a) for a in argv])
    return int(code), capsys.readouterr().err


def error_line(err: str) -> str:
    """Return the first line of stderr that reports an error."""
    return next((line for line in err.splitlines() if line.startswith(("error (", "unexpected"))), "")


class FullDisk:
    """Stands in for ``open`` in atomicio: from the ``full_from``-th file on, writing raises ENOSPC (the disk stays full)."""

    def __init__(self, full_from: int):
        self.full_from, self.opened = full_from, []

    def __call__(self, path, mode="r", *args, **kwargs):
        handle = open(path, mode, *args, **kwargs)
        self.opened.append(Path(path).name)
        if len(self.opened) >= self.full_from:
            handle.write = self._full
        return handle

    @staticmethod
    def _full(data):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))


def test_a_full_disk_at_each_write_keeps_the_new_or_the_previous_results(replay, tmp_path, capsys, monkeypatch):
    written = replay.written()
    assert len(written) >= 10 and list(written)[0] == "results.json"
    for full_from in range(1, len(written) + 2):
        out = tmp_path / f"full-from-{full_from}"
        before = previous_run(replay, out)
        disk = FullDisk(full_from)
        with monkeypatch.context() as patch:
            patch.setattr(atomicio, "open", disk, raising=False)
            code, err = cli(capsys, "run", replay.config, "--out", out, "--overwrite", *TOY)
        assert disk.opened[0].startswith(".results.json.")  # results.json is written first
        assert "Traceback" not in err and not list(out.rglob("*.tmp"))
        full = os.strerror(errno.ENOSPC)
        if full_from == 1:  # nothing could be saved: the previous run is untouched, all of it
            assert code == ExitCode.OUTPUT
            assert error_line(err) == (f"error (output_error): disk full while writing '{out / 'results.json'}': {full}: the results "
                                       "of this run could not be saved; the previous results.json is kept unchanged")
            assert {rel: (out / rel).read_bytes() for rel in before} == before
            continue
        assert (out / "results.json").read_bytes() == replay.results_json  # the new results, complete
        stale = [rel for rel, content in written.items() if (out / rel).exists() and (out / rel).read_bytes() != content]
        assert stale == []  # every other file is the new one or absent: none of the previous run is left
        missing = [rel for rel in written if not (out / rel).exists()]
        assert len(missing) == len(written) - full_from + 1
        if missing:
            assert code == ExitCode.OUTPUT
            assert error_line(err).startswith(f"error (output_error): {len(missing)} file(s) could not be written "
                                              f"(first: disk full while writing '{out / missing[0]}': {full}); the results are "
                                              f"complete in {out / 'results.json'}")
        else:
            assert code == ExitCode.OK, err


def test_a_file_that_cannot_be_written_does_not_stop_the_others(replay, tmp_path, capsys):
    out = tmp_path / "out"
    (out / "substrates").mkdir(parents=True)
    (out / "substrates" / "chloroethane").write_text("a file where the substrate's folder belongs\n")
    code, err = cli(capsys, "run", replay.config, "--out", out, *TOY)
    assert code == ExitCode.OUTPUT
    blocked = [rel for rel in replay.files if rel.startswith("substrates/chloroethane/")]  # in the order written
    assert len(blocked) == 2
    assert error_line(err).startswith(f"error (output_error): 2 file(s) could not be written (first: cannot write "
                                      f"'{out / blocked[0]}': ")
    assert "Traceback" not in err
    assert (out / "results.json").read_bytes() == replay.results_json
    for rel, content in replay.written().items():
        if rel not in blocked:
            assert (out / rel).read_bytes() == content, rel


@pytest.mark.parametrize("fault", [KeyboardInterrupt, RuntimeError])
def test_an_interrupt_or_a_bug_while_computing_keeps_the_previous_run(fault, computed, tmp_path, capsys, monkeypatch):
    out = tmp_path / "out"
    before = previous_run(computed, out)

    def fails(*args):
        raise fault("while computing")

    monkeypatch.setattr("elimscan.pipeline.jobs.compute_run", fails)
    code, err = cli(capsys, "run", computed.config, "--out", out, "--overwrite", *TOY)
    assert {rel: (out / rel).read_bytes() for rel in before} == before
    assert "Traceback" not in err
    if fault is KeyboardInterrupt:
        assert code == 130 and error_line(err) == ""
        assert err.splitlines()[-1] == "interrupted"
    else:  # the log file is open by now: the message points to it, and it holds the traceback
        assert code == ExitCode.INTERNAL
        assert error_line(err) == f"unexpected internal error (a bug); the traceback is in {out / 'run.log'}"
        assert "RuntimeError: while computing" in (out / "run.log").read_text()


def test_a_batch_or_a_second_run_started_while_a_run_computes_is_refused(replay, tmp_path, capsys, monkeypatch):
    out = tmp_path / "out"
    (tmp_path / "batch.yaml").write_text(BATCH)
    (tmp_path / "more.csv").write_text("name,smiles\npropyl,CCCCl\n")
    refused = {}

    def computing(*args):  # while the first run holds the folder, the others try it
        for command, config in (("batch", tmp_path / "batch.yaml"), ("run", replay.config)):
            refused[command] = cli(capsys, command, config, "--out", out, *TOY)
        return replay.result, replay.files

    monkeypatch.setattr("elimscan.pipeline.jobs.compute_run", computing)
    code, err = cli(capsys, "run", replay.config, "--out", out, *TOY)
    assert code == ExitCode.OK, err
    for command, (code, err) in refused.items():
        assert code == ExitCode.OUTPUT
        assert error_line(err).startswith(f"error (output_error): output folder '{out}' is in use by another elimscan "
                                          f"run (pid {os.getpid()} on "), err
        assert error_line(err).endswith(", by elimscan run); wait for it to finish, or give this command another --out")
        assert "Traceback" not in err
    assert (out / "results.json").read_bytes() == replay.results_json and not (out / "batch.sqlite").exists()
    assert lock_holder(out) is None


def test_a_kill_during_overwrite_keeps_the_previous_run(computed, tmp_path, capsys):
    out = tmp_path / "out"
    before = previous_run(computed, out)
    assert (out / "run.log").exists()
    path = os.pathsep.join([str(TESTS / "support"), str(ROOT / "workflow"), os.environ.get("PYTHONPATH", "")])
    process = subprocess.Popen([sys.executable, "-m", "elimscan", "run", str(computed.config), "--out", str(out),
                                "--overwrite", "--engine", "toyjobs:stuck_engine"], stdout=subprocess.DEVNULL,
                               stderr=subprocess.DEVNULL, env={**os.environ, "PYTHONPATH": path})
    log_start = (out / "run.log").stat().st_size  # the earlier run's log is appended to
    try:
        deadline = time.monotonic() + 300
        while "base 'methoxide'" not in (out / "run.log").read_text()[log_start:]:
            assert process.poll() is None and time.monotonic() < deadline
            time.sleep(0.2)
        assert f"pid {process.pid} on " in lock_holder(out)
        code, err = cli(capsys, "run", computed.config, "--out", out, "--overwrite", *TOY)
        assert code == ExitCode.OUTPUT and f"in use by another elimscan run (pid {process.pid} on " in error_line(err)
        process.send_signal(signal.SIGKILL)  # stuck in the base's calculation, as a kill -9 or a power cut finds it
        assert process.wait(60) == -signal.SIGKILL
    finally:
        if process.poll() is None:
            process.kill()
    assert {rel: (out / rel).read_bytes() for rel in before} == before  # results.json, report and files unchanged
    assert lock_holder(out) is None and not list(out.rglob("*.tmp"))
