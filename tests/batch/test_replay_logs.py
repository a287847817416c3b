"""A batch keeps each running job's replay log (batch.replaylog) under replay/, hands it to the job's worker, and
removes it once the job's result is kept: a job whose worker died half-way starts over from the points it had
finished and ends with the numbers of a run never interrupted; stale logs of other jobs are removed.

Computed on a toy engine (no GFN2-xTB) that keeps and serves its points through a real ReplayLog and, asked to,
kills its own worker after a number of points on its first attempt; the GFN2-xTB engine's own use of the log is
tested in tests/batch/test_replaylog.py and tests/pipeline/test_replay_job.py.
"""

from __future__ import annotations

import hashlib
import json
import os
import signal
import textwrap

import numpy as np
from ase.calculators.calculator import all_changes

from elimscan.batch.driver import REPLAY_DIR, BatchOptions, run_batch
from elimscan.batch.lock import FolderLock
from elimscan.batch.plan import plan_batch
from elimscan.config import parse_config
from toyjobs import TOY_SETTINGS, ToyJobEngine, _LazyToyCalculator, without_timings

CONFIG = TOY_SETTINGS + textwrap.dedent("""\
    name: replayed
    substrates: [{name: chloroethane, smiles: "CCCl"}]
    bases: [{name: methoxide, model: bare}]
    executor: {workers: 1}
    """)
FACTORY = "test_replay_logs:replay_toy_engine"


class _ReplayToyCalculator(_LazyToyCalculator):
    """The toy calculator, serving a point from its engine's replay log when the log holds it, else computing it,
    keeping it, and killing its own process once ``die_after`` points were computed by a first attempt."""

    def calculate(self, atoms=None, properties=None, system_changes=all_changes):
        log = self.owner.replay
        key = hashlib.sha256(self.structure.encode() + np.round(atoms.positions, 8).tobytes()).hexdigest()
        found = None if log is None else log.get(key)
        if found is not None:
            self.atoms = atoms.copy()
            energy, forces = found[0]["energy_eV"], found[1].reshape(-1, 3)
            self.results = {"energy": energy, "free_energy": energy, "forces": forces}
            return
        super().calculate(atoms, properties, system_changes)
        if log is not None:
            log.put(key, {"energy_eV": self.results["energy"]}, self.results["forces"])
            self.owner.computed += 1
            if self.owner.die_after and self.owner.computed >= self.owner.die_after and self.owner.first_attempt:
                os.kill(os.getpid(), signal.SIGKILL)


class ReplayToyEngine(ToyJobEngine):
    """The toy engine with a replay slot; ELIMSCAN_TOY_DIE_AFTER=n kills the worker after n computed points of a
    job whose log was empty when it started."""

    def __init__(self):
        super().__init__()
        self._replay, self.computed, self.first_attempt = None, 0, True
        self.die_after = int(os.environ.get("ELIMSCAN_TOY_DIE_AFTER", "0"))

    @property
    def replay(self):
        return self._replay

    @replay.setter
    def replay(self, log):
        self._replay, self.first_attempt = log, log is None or len(log) == 0

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure"):
        return _ReplayToyCalculator(self, name)


def replay_toy_engine(method):
    """Engine factory of these tests."""
    return ReplayToyEngine()


def _batch(tmp_path, name, *, retry=False):
    config = parse_config(CONFIG)
    plan = plan_batch(config, tmp_path / "batch.yaml")
    out = tmp_path / name
    out.mkdir(exist_ok=True)
    events = []
    with FolderLock(out):
        outcome = run_batch(plan, out, config.executor, 1, BatchOptions(engine_factory=FACTORY, retry_failed=retry),
                            events.append)
    return out, outcome, events


def _jobs(out):
    return json.loads((out / "results.json").read_text())["jobs"]


def test_a_job_whose_worker_died_starts_over_from_its_log_and_ends_as_if_never_stopped(tmp_path, monkeypatch):
    (tmp_path / "batch.yaml").write_text(CONFIG)
    whole, outcome, _ = _batch(tmp_path, "whole")
    assert outcome.n_ok == 1 and not (whole / REPLAY_DIR).exists()
    assert _jobs(whole)[0]["replayed_points"] == 0

    monkeypatch.setenv("ELIMSCAN_TOY_DIE_AFTER", "40")
    out, outcome, _ = _batch(tmp_path, "stopped")
    assert outcome.n_failed == 1 and _jobs(out)[0]["error"]["error_type"] == "worker_died"
    (log_file,) = (out / REPLAY_DIR).glob("*.replay")  # a failed job's log stays for --retry-failed
    assert log_file.stem == _jobs(out)[0]["job_key"]
    (out / REPLAY_DIR / ("0" * 64 + ".replay")).write_bytes(b"")  # a stale log of a job no longer planned

    out, outcome, events = _batch(tmp_path, "stopped", retry=True)
    assert outcome.n_ok == 1 and not (out / REPLAY_DIR).exists()  # kept result: every log gone
    (job,) = _jobs(out)
    assert job["replayed_points"] == 40
    assert any("40 single point(s) finished by the job's stopped earlier run" in (e.message or "") for e in events)
    theirs = dict(_jobs(whole)[0], replayed_points=40)
    assert without_timings(job) == without_timings(theirs)


def test_a_failed_jobs_log_goes_at_the_next_run_that_does_not_retry_it(tmp_path, monkeypatch):
    (tmp_path / "batch.yaml").write_text(CONFIG)
    monkeypatch.setenv("ELIMSCAN_TOY_DIE_AFTER", "10")
    out, outcome, _ = _batch(tmp_path, "failed")
    assert outcome.n_failed == 1 and len(list((out / REPLAY_DIR).glob("*.replay"))) == 1
    out, outcome, _ = _batch(tmp_path, "failed")  # nothing to compute: the failed job stays failed
    assert outcome.n_computed == 0 and not (out / REPLAY_DIR).exists()
