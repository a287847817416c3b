"""A path that does not reach its products, or that its gradient budget stopped, is not a barrier: it decides no
share, no E2 : SN2 split, no lowest start and no DFT point; one rule (``flags.no_barrier_reason``) says so for
path results, records and the benchmark scoring alike (toy engine, no GFN2-xTB).

Before the fix, an unverified SN2 relaxed-path maximum whose end did not relax to products decided the E2 : SN2
split (seen with GFN2-xTB: a 1,2-dibromide with ethoxide, an "SN2 barrier" 12 kcal/mol below the verified E2
saddle and elimination_fraction 0.0). The toy engine stands in for the chemistry; the monkeypatches make the
chosen paths unverified and their freely relaxed ends miss the products, exactly the situation to be judged.
"""

from __future__ import annotations

import pytest

import elimscan.drivers.paths as paths
from elimscan.config import BaseConfig, PathConfig, RunConfig, SubstrateConfig
from elimscan.drivers.saddles import SaddleResult
from elimscan.results.flags import NOT_TO_PRODUCTS


def _outcome(monkeypatch, miss: str):
    """Return (run outcome, config) of bromoethane + ethoxide where paths whose name holds ``miss`` miss the
    products."""
    from toyjobs import ToyJobEngine

    from elimscan.pipeline.compute import run_config

    real_refine = paths.refine_from_path

    def refine(points, top, reactive, engine, charge, multiplicity, settings, optimizer, name):
        if miss in name:
            return SaddleResult(None, None, False, "sella", None, (), "not verified (test)",
                                error_type="saddle_search_failed")
        return real_refine(points, top, reactive, engine, charge, multiplicity, settings, optimizer, name)

    def ends(complex_, points, reactive, engine, charge, multiplicity, optimizer, criteria, name="neb end"):
        # the other paths reach their products (the toy model's own ends do not: it is no chemistry)
        return None if miss in name else (complex_.atoms, points[-1].atoms)

    monkeypatch.setattr(paths, "refine_from_path", refine)
    monkeypatch.setattr(paths, "neb_end_points", ends)
    monkeypatch.setattr(paths, "base_h_scan_maximum", lambda *a, **k: None)
    settings = PathConfig(approaches=("anti",), substitution=True, points=4, base_rotations=1,
                          saddle={"neb_fallback": False})
    config = RunConfig(substrates=(SubstrateConfig(name="bromoethane", smiles="CCBr"),),
                       bases=(BaseConfig(name="ethoxide"),), paths=settings)
    return run_config(config, ToyJobEngine()), config


def _run(monkeypatch, miss: str):
    """Return the job record of bromoethane + ethoxide where paths whose name holds ``miss`` miss the products."""
    from elimscan.pipeline.jobs import job_record

    outcome, config = _outcome(monkeypatch, miss)
    return job_record(*outcome.jobs[0], outcome, config)


def test_an_sn2_path_that_misses_its_products_decides_no_e2_sn2_split(monkeypatch):
    record = _run(monkeypatch, "substitution")
    assert record.status == "ok", record.error
    sub = record.substitution
    assert sub.path_status == "ok" and sub.barrier_kcal_mol is not None  # the number stays in its record
    assert sub.reaches_products is False and not sub.saddle_verified
    assert sub.elimination_fraction is None and sub.substitution_fraction is None
    assert any("do not reach their products" in note for note in record.warnings)
    anti = record.beta_hydrogens[0].anti
    assert anti.reaches_products is True and anti.barrier_kcal_mol is not None
    assert [(p.smiles, p.fraction) for p in record.products] == [("C=C", pytest.approx(1.0))]


def test_an_e2_path_that_misses_its_products_gets_no_share_and_is_flagged(monkeypatch):
    record = _run(monkeypatch, "")  # every path (E2 and SN2) misses its products
    anti = record.beta_hydrogens[0].anti
    assert anti.path_status == "ok" and anti.reaches_products is False
    assert any(flag == NOT_TO_PRODUCTS for flag in anti.flags)
    assert all(p.fraction is None for p in record.products)
    assert record.verdict is None or record.verdict.computed_major is None


def test_the_end_check_runs_before_the_ci_neb_and_a_missing_end_skips_it(embed, monkeypatch):
    from toyengine import SpringTorsionEngine

    from elimscan.config import OptimizerConfig
    from elimscan.drivers.complexes import Reactive, place_base

    substrate, base = embed("CCCl"), embed("C[O-]")
    toy = SpringTorsionEngine(place_base(substrate, 3, 0, base, 1, 2.0, 0.0))
    reactive = Reactive(h=3, c_beta=0, c_alpha=1, x=2, base=len(substrate) + 1)
    tried = []
    monkeypatch.setattr(paths, "refine_and_verify", lambda *a, method="", **k: tried.append(method) or SaddleResult(
        None, None, False, method, None, (), "failed", error_type="saddle_collapsed"))
    monkeypatch.setattr(paths, "base_h_scan_maximum", lambda *a, **k: None)
    monkeypatch.setattr(paths, "neb_end_points", lambda *a, **k: None)
    monkeypatch.setattr(paths, "neb_climbing_image", lambda *a, **k: pytest.fail("CI-NEB run without product end"))
    settings = PathConfig(step_A=0.05, points=3, base_rotations=1)
    result = paths.compute_path(substrate, base, 1, reactive, "anti", toy, 0, 1, settings,
                                OptimizerConfig(name="bfgs"), ())
    assert not result.reaches_products and NOT_TO_PRODUCTS in result.flags
    assert "did not relax to products" in result.saddle.reason


def test_starts_that_miss_their_products_are_not_the_lowest_start():
    import dataclasses

    from elimscan.pipeline.compute import lowest_of_starts

    from elimscan.drivers.budget import STAGE_PATH

    def fake(top: float, reaches: bool):
        saddle = SaddleResult(None, None, False, "none", None, (), "not refined")
        point = paths.PathPoint(0.0, top, None, True, {})
        return paths.PathResult("anti", None, (point,), 0, saddle, () if reaches else (NOT_TO_PRODUCTS,), 10,
                                stage_gradients={STAGE_PATH: 10})

    best = lowest_of_starts([fake(-1.0, False), fake(-0.5, True), fake(-0.4, True)])
    assert best.top_hartree == -0.5 and best.reaches_products
    assert best.start_tops_hartree == (-0.5, -0.4) and best.n_gradients == 30  # every start spent its gradients
    assert best.stage_gradients == {STAGE_PATH: 30}  # ... stage by stage
    alone = lowest_of_starts([fake(-1.0, False)])  # no start reaches: kept, and still flagged
    assert not alone.reaches_products
    assert dataclasses.replace(alone).flags == (NOT_TO_PRODUCTS,)


def _fake_path(top: float, flags: tuple[str, ...] = (), stopped: str | None = None) -> paths.PathResult:
    """Return an unverified one-point path result with this top (hartree), flags and budget stop."""
    saddle = SaddleResult(None, None, False, "none", None, (), "not refined")
    point = paths.PathPoint(0.0, top, None, True, {})
    return paths.PathResult("anti", None, (point,), 0, saddle, flags, 10, stopped_stage=stopped)


def test_a_start_stopped_by_its_budget_is_not_the_lowest_start():
    from elimscan.pipeline.compute import lowest_of_starts

    stopped = _fake_path(-2.0, stopped="driven path")
    assert stopped.reaches_products is None and not stopped.counts_as_barrier
    best = lowest_of_starts([stopped, _fake_path(-1.0, (NOT_TO_PRODUCTS,)), _fake_path(-0.5)])
    assert best.top_hartree == -0.5 and best.counts_as_barrier and best.start_tops_hartree == (-0.5,)
    assert best.n_gradients == 30


def test_the_dft_tier_gets_only_paths_that_are_barriers(monkeypatch):
    import dataclasses

    from elimscan.pipeline import dfttier
    from elimscan.pipeline.outcome import SUBSTITUTION_KEY

    outcome, config = _outcome(monkeypatch, "substitution")  # the SN2 path misses its products
    (sub_name, base_name), job_paths = next(iter(outcome.paths.items()))
    seen = []
    monkeypatch.setattr(dfttier, "refine_job", lambda name, candidates, *a, **k: seen.append([c.key for c in candidates]))

    def candidates(job_paths) -> list:
        dfttier.job_dft(outcome.substrates[sub_name], outcome.bases[base_name], job_paths, config)
        return seen.pop()

    e2 = [key for key in job_paths if key != SUBSTITUTION_KEY]
    assert e2 and candidates(job_paths) == e2  # the SN2 path that misses its products gets no DFT point
    stopped = {**job_paths, e2[0]: dataclasses.replace(job_paths[e2[0]], stopped_stage="driven path")}
    assert candidates(stopped) == e2[1:]  # nor does an E2 path stopped by its gradient budget
    reaching = {**job_paths, SUBSTITUTION_KEY: dataclasses.replace(job_paths[SUBSTITUTION_KEY], flags=())}
    assert candidates(reaching) == [*e2, SUBSTITUTION_KEY]  # the check can fail: a reaching SN2 path is a candidate


def test_records_and_the_benchmark_scoring_ask_the_same_rule():
    from elimscan.analysis.benchmark_scoring import path_left_out
    from elimscan.results.flags import BUDGET_STOPPED
    from elimscan.results.records import SubstitutionRecord, counts_as_barrier

    cases = {None: dict(reaches_products=True), NOT_TO_PRODUCTS: dict(reaches_products=False),
             BUDGET_STOPPED: dict(reaches_products=None, budget_spent_in="saddle search from the path")}
    for why, fields in cases.items():
        record = SubstitutionRecord(path_status="ok", barrier_kcal_mol=20.0, rule_call="mixture", rule_reason="test",
                                    **fields)
        assert counts_as_barrier(record) is (why is None), why
        assert path_left_out(record.model_dump()) == why
    assert not counts_as_barrier(SubstitutionRecord(path_status="failed", rule_call="mixture", rule_reason="test"))
