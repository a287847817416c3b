"""The DFT saddle rung (dft.saddles: reoptimise) on scripted saddles: selection, verification as the gate of the
product mix, the GFN2-xTB Hessian handed on, progress, and the job record (no DFT is computed here)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from ase import Atoms

from elimscan.config import BaseConfig, DftConfig, PathConfig, RunConfig, SubstrateConfig
from elimscan.drivers.saddles import SaddleResult
from elimscan.engines.contract import CacheStats
from elimscan.engines.dft import DftPoint, SaddleCandidate

#: toy jobs kept small: coarse scans, few embeddings
_SMALL = {"scan": {"step_deg": 60.0}, "conformers": {"max_embeddings": 3, "max_relaxations": 2}}


class _Distances:
    """Key atoms of a scripted path: distances from the first two atoms."""

    def distances(self, positions):
        return {"x_A": float(np.linalg.norm(positions[1] - positions[0]))}


class _ScriptedEngine:
    """Stands in for engines.dftgradients.DftEngine: counts gradients, keeps a trace, no PySCF."""

    def __init__(self, level, threads=1):
        self.label, self.stats, self.trace, self.hessian_seconds = "scripted DFT", CacheStats(), [], 0.0

    def check_memory(self, atoms, charge, multiplicity, task, name="structure"):
        return 0.0  # the memory guard itself is tested in tests/engines/test_dft_memory.py

    def calculator(self, charge=0, multiplicity=1, name="structure"):
        raise AssertionError("the scripted search computes nothing")

    def hessian(self, atoms, charge, multiplicity, name="structure"):
        raise AssertionError("the scripted search asks for no Hessian")


def _script(monkeypatch, outcomes: dict[str, tuple[float, bool]], seen: dict):
    """Replace the DFT engine and the Sella search of pipeline.dftsaddles by a script keyed by the start's x distance."""
    import elimscan.engines.dft as dft
    import elimscan.pipeline.dftsaddles as rung

    def refine(guess, reactive, engine, charge, multiplicity, settings, optimizer, name="saddle", method="sella",
               start_hessian_eV_A2=None, hessian=None, side_chunk_steps=20):
        key = name.split("'")[2].split()[0] + " " + name.split("'")[2].split()[1]
        seen[key] = (start_hessian_eV_A2, settings.saddle.fmax_eV_per_A, side_chunk_steps)
        energy, verified = outcomes[key]
        for k in range(7):  # seven gradients: the first at the GFN2-xTB saddle (its single point)
            engine.stats.misses += 1
            getattr(engine, "_engine", engine).trace.append((name, DftPoint(energy + 0.01 - 0.001 * k, -0.01, -0.05, 9, 0.1)))
        moved = guess.copy()
        moved.positions[1, 2] += 0.1
        if not verified:
            return SaddleResult(moved, energy, False, method, 250.0, (), "relaxing both ways along the mode gave "
                                "reactant and other, not reactant and product", error_type="saddle_not_connected")
        return SaddleResult(moved, energy, True, method, 812.3, (), "one imaginary mode; connects the reactant "
                            "complex with the products", np.zeros((len(guess), 3)), np.eye(3 * len(guess)))

    monkeypatch.setattr(dft, "missing_pyscf", lambda dispersion: None)
    monkeypatch.setattr(rung, "DftEngine", _ScriptedEngine)
    monkeypatch.setattr(rung, "refine_and_verify", refine)


def _cand(key, product, energy, hessian=True, kind="e2", degeneracy=1):
    atoms = Atoms("CH", positions=[(0, 0, 0), (0, 0, 1.0 + energy % 0.1)])
    return SaddleCandidate(key, product, degeneracy, energy, atoms, kind=kind,
                           hessian_eV_A2=np.full((6, 6), abs(energy)) if hessian else None)


def test_verified_dft_saddles_alone_decide_the_mix(monkeypatch):
    """Lowest verified GFN2-xTB saddle per product re-optimised from its own Hessian; a failed check is left out."""
    from scipy.constants import R, calorie

    from elimscan.engines.dft import DftSaddle
    from elimscan.pipeline.dftsaddles import reoptimise_job

    cands = [_cand(("C1", "anti"), "P", -10.000), _cand(("C1", "syn"), "P", -9.990),
             _cand(("C2", "anti"), "Q", -9.995, degeneracy=2), _cand(("C3", "anti"), "R", -9.999),
             _cand(("C4", "anti"), "S", -10.001, hessian=False),  # lowest of all, but no verified GFN2-xTB saddle
             _cand(("substitution", "backside"), "SN2", -9.997, kind="sn2")]
    outcomes = {"C1 anti": (-20.000, True), "C2 anti": (-19.998, True), "C3 anti": (-20.010, False),
                "substitution backside": (-19.996, True)}
    seen: dict = {}
    _script(monkeypatch, outcomes, seen)
    reports: list[str] = []
    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCBr"),), bases=(BaseConfig(name="ethoxide"),),
                       dft=DftConfig(enabled=True, saddles="reoptimise"))
    reactives = {c.key: _Distances() for c in cands}
    result = reoptimise_job("s + ethoxide", cands, reactives, -1, 1, {"base": -1}, config, report=reports.append)
    # one saddle per product (the lowest verified one) and the SN2 saddle; the product without one is named
    assert set(result.saddles) == {("C1", "anti"), ("C2", "anti"), ("C3", "anti"), ("substitution", "backside")}
    assert "no verified GFN2-xTB saddle to start from for S" in result.message
    # each search started from the Hessian of its own GFN2-xTB saddle, handed on, not recomputed
    by_key = {c.key: c for c in cands}
    for key, (hessian, fmax, chunk) in seen.items():
        k = tuple(key.split())
        assert hessian is by_key[k].hessian_eV_A2
        assert fmax == config.dft.reoptimise_fmax_eV_per_A and chunk == config.dft.reoptimise_side_chunk_steps
    # C3 failed its check: reported, no barrier, no share, although its energy is the lowest of all
    failed = result.saddles[("C3", "anti")]
    assert isinstance(failed, DftSaddle) and not failed.verified and failed.error_type == "saddle_not_connected"
    assert ("C3", "anti") not in result.barriers_kcal_mol and "R" not in result.fractions
    assert result.status == "partial" and "C3 anti: relaxing both ways" in result.message
    # the zero is the lowest verified DFT saddle; the single point at the GFN2-xTB saddle is the search's first point
    assert result.barriers_kcal_mol[("C1", "anti")] == 0.0
    assert result.points[("C1", "anti")].energy_hartree == pytest.approx(-20.000 + 0.01)
    ok = result.saddles[("C1", "anti")]
    assert ok.n_gradients == 7 and ok.imaginary_cm1 == 812.3 and ok.largest_shift_A == pytest.approx(0.1)
    assert ok.dft_distances_A["x_A"] - ok.gfn2_distances_A["x_A"] == pytest.approx(0.1, abs=1e-3)
    # shares from the verified DFT saddles, recomputed with scipy's CODATA constants (independent of elimscan's units)
    from scipy.constants import N_A, physical_constants

    kcal = physical_constants["Hartree energy"][0] * N_A / (1000.0 * calorie)
    rt = R * config.method.temperature_K / calorie / 1000.0
    w_p, w_q = 1.0, 2 * math.exp(-0.002 * kcal / rt)
    assert result.fractions["P"] == pytest.approx(w_p / (w_p + w_q), abs=1e-4)
    assert result.fractions["Q"] == pytest.approx(w_q / (w_p + w_q), abs=1e-4)
    w_sn2 = math.exp(-0.004 * kcal / rt)
    assert result.substitution_fraction == pytest.approx(w_sn2 / (w_sn2 + w_p + w_q), abs=1e-4)
    # progress: each saddle announced, then its stages with gradients and seconds, as the path stages report
    assert any("DFT saddle 1/4" in r for r in reports)
    assert any("DFT saddle search" in r for r in reports)
    assert any(r.endswith(" s") and "7 gradients" in r for r in reports)


def test_no_verified_dft_saddle_gives_no_dft_mix(monkeypatch):
    from elimscan.pipeline.dftsaddles import reoptimise_job

    cands = [_cand(("C1", "anti"), "P", -10.0), _cand(("C2", "anti"), "Q", -9.99)]
    _script(monkeypatch, {"C1 anti": (-20.0, False), "C2 anti": (-19.9, False)}, {})
    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCBr"),), bases=(BaseConfig(name="ethoxide"),),
                       dft=DftConfig(enabled=True, saddles="reoptimise"))
    result = reoptimise_job("s + e", cands, {c.key: _Distances() for c in cands}, -1, 1, {}, config)
    assert result.status == "failed" and not result.fractions and not result.barriers_kcal_mol
    assert "no DFT saddle was verified" in result.message and len(result.saddles) == 2


def test_gas_phase_refusal_comes_before_any_search(monkeypatch):
    from elimscan.pipeline.dftsaddles import reoptimise_job

    _script(monkeypatch, {}, {})
    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCBr"),), bases=(BaseConfig(name="ethoxide"),),
                       dft=DftConfig(enabled=True, saddles="reoptimise", solvation="none"))
    result = reoptimise_job("s + e", [_cand(("C1", "anti"), "P", -10.0)], {}, -1, 1, {"base 'e'": -1}, config)
    assert result.status == "refused" and not result.saddles and result.saddles_mode == "reoptimise"


def test_whole_toy_job_records_the_dft_saddles(monkeypatch):
    """Toy job with the rung on: every path top given a stand-in GFN2-xTB Hessian, searches scripted; the record
    carries each DFT saddle and validates against the JSON Schema."""
    import jsonschema
    from toyjobs import ToyJobEngine

    import elimscan.pipeline.dfttier as tier
    from elimscan.pipeline.compute import run_config
    from elimscan.pipeline.jobs import job_record
    from elimscan.results.records import JobRecord
    from elimscan.results.schema import json_schema

    original = tier._candidate

    def with_hessian(key, path, product, degeneracy):
        c = original(key, path, product, degeneracy)
        return SaddleCandidate(c.key, c.product_smiles, c.degeneracy, c.gfn2_energy_hartree, c.atoms, c.kind,
                               np.eye(3 * len(c.atoms)))

    energies = {}

    def outcome_for(key):
        energies.setdefault(key, (-50.0 + 0.002 * len(energies), not key.startswith("substitution")))
        return energies[key]

    class Outcomes(dict):
        def __getitem__(self, key):
            return outcome_for(key)

    monkeypatch.setattr(tier, "_candidate", with_hessian)
    _script(monkeypatch, Outcomes(), {})
    paths = PathConfig(approaches=("anti",), substitution=True, points=3, base_rotations=1, saddle={"refine": False})
    config = RunConfig(substrates=(SubstrateConfig(name="2-bromobutane", smiles="C[C@H](Br)CC"),),
                       bases=(BaseConfig(name="methoxide"),), paths=paths,
                       dft=DftConfig(enabled=True, saddles="reoptimise"), **_SMALL)
    outcome = run_config(config, ToyJobEngine())
    record = job_record(*outcome.jobs[0], outcome, config)
    data = record.model_dump(mode="json")
    JobRecord.model_validate(data)
    jsonschema.Draft202012Validator(json_schema(JobRecord, "job.schema.json")).validate(data)
    dft = record.dft
    assert dft.saddles == "reoptimise" and dft.n_saddles_reoptimised == len(energies) >= 3
    assert dft.n_saddles_verified == len(energies) - 1 and dft.status == "partial"
    assert dft.n_gradients == 7 * len(energies)
    sn2 = record.substitution
    assert sn2.dft.saddle.status == "not verified" and sn2.barrier_dft_kcal_mol is None
    assert sn2.substitution_fraction_dft is None  # a saddle that failed never decides a share
    blocks = [b.anti for b in record.beta_hydrogens if b.anti.dft is not None]
    assert blocks and all(a.dft.saddle.status == "verified" and a.barrier_dft_kcal_mol is not None for a in blocks)
    assert all(a.dft.saddle.n_gradients == 7 and a.dft.status == "ok" for a in blocks)
    assert sum(p.fraction_dft or 0.0 for p in record.products) == pytest.approx(1.0, abs=1e-3)


def test_absolute_barriers_measure_from_reactants_relaxed_at_dft(monkeypatch):
    """With absolute_barriers the free substrate and base are relaxed at DFT (scripted here) and are the zero."""
    import elimscan.pipeline.dftsaddles as rung
    from elimscan.drivers.relax import RelaxResult
    from elimscan.pipeline.dftsaddles import reoptimise_job

    _script(monkeypatch, {"C1 anti": (-20.000, True)}, {})
    relaxed = {"substrate": -12.0, "base": -8.01}

    def scripted_relax(atoms, calculator, held, settings):
        assert settings.fmax_eV_per_A == DftConfig().reoptimise_fmax_eV_per_A
        return RelaxResult(atoms, relaxed[calculator], 5, 5, True, 0.0)

    class Engine(_ScriptedEngine):
        def calculator(self, charge=0, multiplicity=1, name="structure"):
            return name.split()[-1]  # 'substrate' or 'base': the scripted relaxation reads it

    monkeypatch.setattr(rung, "DftEngine", Engine)
    monkeypatch.setattr(rung, "relax", scripted_relax)
    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCBr"),), bases=(BaseConfig(name="ethoxide"),),
                       dft=DftConfig(enabled=True, saddles="reoptimise", absolute_barriers=True))
    reactants = (("substrate", Atoms("H"), 0, 1), ("base", Atoms("H"), -1, 1))
    result = reoptimise_job("s + e", [_cand(("C1", "anti"), "P", -10.0)], {("C1", "anti"): _Distances()}, -1, 1, {},
                            config, reactants)
    assert result.zero_kind == "DFT-relaxed free substrate + free base"
    # (-20.000 - (-20.010)) hartree in kcal/mol from CODATA via scipy, independently of elimscan's units
    from scipy.constants import N_A, calorie, physical_constants

    kcal = physical_constants["Hartree energy"][0] * N_A / (1000.0 * calorie)
    assert result.barriers_kcal_mol[("C1", "anti")] == pytest.approx(0.010 * kcal, abs=2e-3)


def test_the_rung_hands_the_jobs_replay_log_to_its_dft_engine(monkeypatch):
    # a job that starts over is served its finished DFT gradients and Hessians (batch.replaylog) only if the
    # engine of the rung holds the job's log
    import elimscan.pipeline.dftsaddles as rung
    from elimscan.pipeline.dftsaddles import reoptimise_job

    _script(monkeypatch, {"C1 anti": (-20.0, False)}, {})
    made = []

    class Recording(_ScriptedEngine):
        def __init__(self, level, threads=1):
            super().__init__(level, threads)
            made.append(self)

    monkeypatch.setattr(rung, "DftEngine", Recording)
    log = object()
    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCBr"),), bases=(BaseConfig(name="ethoxide"),),
                       dft=DftConfig(enabled=True, saddles="reoptimise"))
    reoptimise_job("s + e", [_cand(("C1", "anti"), "P", -10.0)], {("C1", "anti"): _Distances()}, -1, 1, {}, config,
                   replay=log)
    assert len(made) == 1 and made[0].replay is log
