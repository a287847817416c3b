"""A whole GFN2-xTB job started over from its replay log (batch.replaylog) gives the numbers of the job run whole.

Run three times in one process, each time on a new engine: whole (the log fills), again from the full log
(nothing computed: every single point is served, the record and its numbers equal to the last bit) and from the
first half of the log, as after a kill half-way: the served half is the same, the rest is computed from a fresh
wavefunction guess, so the numbers agree within the SCF tolerance's reach, far inside what any barrier is read to.
"""

from __future__ import annotations

import pytest

from elimscan.config import parse_config
from elimscan.engines.factory import make_engine
from elimscan.batch.replaylog import ReplayLog
from elimscan.pipeline.jobs import run_job

CONFIG = """\
name: replay
optimizer: {name: bfgs, fmax_eV_per_A: 0.05}
conformers: {base_embeddings: 2, per_rotatable_bond: 1, max_relaxations: 2}
scan: {step_deg: 60}
paths: {approaches: [anti], points: 4, base_rotations: 1, substitution: false}
method: {solvent: {model: alpb, name: ethanol}}
substrates: [{name: 2-chloropropane, smiles: "CC(C)Cl"}]
bases: [{name: methoxide, model: bare}]
"""


def _run(config, log_path):
    engine = make_engine(config.method)
    replay = ReplayLog(log_path)
    try:
        outcome = run_job(config.substrates[0], config.bases[0], config, engine, replay=replay)
    finally:
        replay.close()
    return outcome.job, engine.stats


def _barriers(record) -> list[float]:
    return [b.anti.barrier_kcal_mol for b in record.beta_hydrogens]


@pytest.mark.xtb
def test_a_job_started_over_from_its_log_gives_the_same_numbers(tmp_path):
    config = parse_config(CONFIG)
    whole, whole_stats = _run(config, tmp_path / "whole.replay")
    assert whole.status == "ok" and whole.replayed_points == 0 and whole_stats.misses > 50
    assert all(b is not None for b in _barriers(whole))  # paths, saddle searches and Hessians ran

    again, again_stats = _run(config, tmp_path / "whole.replay")
    assert again.replayed_points == again_stats.misses == whole_stats.misses
    assert again_stats.backend_seconds == 0.0  # the library was never called
    assert again.model_dump(exclude={"replayed_points"}) == whole.model_dump(exclude={"replayed_points"})

    data = (tmp_path / "whole.replay").read_bytes()
    (tmp_path / "half.replay").write_bytes(data[:len(data) // 2])  # killed half-way, mid-record
    half, half_stats = _run(config, tmp_path / "half.replay")
    assert 0 < half.replayed_points < half_stats.misses
    assert half_stats.misses == pytest.approx(whole_stats.misses, rel=0.05)
    assert _barriers(half) == pytest.approx(_barriers(whole), abs=0.01)  # kcal/mol
