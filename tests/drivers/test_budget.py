"""The gradient budget of a path (paths.gradient_budget_per_atom) on the toy engine: where it stops, what the
record says, and that a stopped path decides no product share (fast tier)."""

from __future__ import annotations

import math

import pytest

from elimscan.config import BaseConfig, OptimizerConfig, PathConfig, RunConfig, SubstrateConfig
from elimscan.drivers.complexes import Reactive, place_base
from elimscan.drivers.budget import (STAGE_COMPLEX, STAGE_END, STAGE_PATH, STAGE_SADDLE, GradientBudget,
                                     path_budget)
from elimscan.drivers.paths import compute_path
from elimscan.errors import GradientBudgetError
from elimscan.results.flags import BUDGET_SPENT, BUDGET_STOPPED, NOT_TO_PRODUCTS, no_barrier_reason
from toyengine import SpringTorsionEngine

BFGS = OptimizerConfig(name="bfgs", fmax_eV_per_A=0.05)


@pytest.fixture(scope="module")
def toy_path(embed):
    """Return a function: PathConfig -> (PathResult or the error, gradients the engine spent) for chloroethane
    + methoxide (13 atoms) on a fresh toy engine built on their placed complex."""
    substrate, base = embed("CCCl"), embed("C[O-]")
    reactive = Reactive(h=3, c_beta=0, c_alpha=1, x=2, base=len(substrate) + 1)

    def run(settings: PathConfig):
        engine = SpringTorsionEngine(place_base(substrate, 3, 0, base, 1, 2.0, 0.0))
        try:
            result = compute_path(substrate, base, 1, reactive, "anti", engine, 0, 1, settings, BFGS, (4, 5))
        except GradientBudgetError as err:
            return err, engine.stats.misses
        return result, engine.stats.misses

    return run


def _per_atom(limit: int, n_atoms: int = 13) -> float:
    """Return a per-atom budget whose path limit (ceil(per_atom x atoms)) is exactly ``limit``."""
    per_atom = limit / n_atoms
    assert path_budget(per_atom, n_atoms) == limit
    return per_atom


def test_a_path_that_would_exceed_its_budget_stops_at_it_and_names_the_driven_path(toy_path):
    # every point relaxed tightly at once (no loose first pass): the stopped path's points are then the free path's
    free = PathConfig(points=6, base_rotations=2, saddle={"refine": False}, gradient_budget_per_atom=None,
                      loose_fmax_eV_per_A=None)
    full, spent_full = toy_path(free)
    assert full.stopped_stage is None and len(full.points) == 7
    complex_cost = full.complex.n_gradients
    limit = complex_cost + (full.n_gradients - complex_cost) // 2  # half way along the driven path
    stopped, spent = toy_path(free.model_copy(update={"gradient_budget_per_atom": _per_atom(limit)}))
    assert stopped.stopped_stage == STAGE_PATH
    assert stopped.n_gradients == spent == limit  # stopped before the first gradient past the limit
    assert 1 < len(stopped.points) < len(full.points)
    assert stopped.points == full.points[:len(stopped.points)]  # same steps as the free path until the stop
    (flag,) = [f for f in stopped.flags if f.startswith(BUDGET_SPENT)]
    assert f"in the {STAGE_PATH} ({limit} of {limit} gradients" in flag and flag.endswith(BUDGET_STOPPED)
    assert f"{STAGE_COMPLEX} {complex_cost}" in flag  # the gradients of each stage so far
    assert stopped.stage_gradients == {STAGE_COMPLEX: complex_cost, STAGE_PATH: limit - complex_cost}
    assert not stopped.saddle.verified and stopped.top_hartree == stopped.estimate_hartree
    # the one rule: a stopped path is no barrier, and whether it reaches its products is not known (the full path
    # was checked: its end, relaxed freely on this toy surface without products, is not the product side)
    assert full.reaches_products is False and NOT_TO_PRODUCTS in full.flags
    assert stopped.reaches_products is None and NOT_TO_PRODUCTS not in stopped.flags
    assert no_barrier_reason(stopped.reaches_products, stopped.stopped_stage) == BUDGET_STOPPED
    assert not stopped.counts_as_barrier


def test_a_budget_spent_in_the_saddle_search_or_before_the_complex(toy_path):
    # the toy surface has no E2 saddle: Sella's search and its checks would go on into the fallbacks
    def settings(refine: bool, per_atom: float | None, rotations: int = 1) -> PathConfig:
        return PathConfig(points=4, base_rotations=rotations, gradient_budget_per_atom=per_atom,
                          saddle={"refine": refine, "neb_fallback": False, "path_point_starts": 1})

    unrefined, _ = toy_path(settings(False, None))
    limit = unrefined.n_gradients - unrefined.saddle_gradients + 20  # complex and driven path, then 20 more
    stopped, spent = toy_path(settings(True, _per_atom(limit)))
    assert stopped.stopped_stage == STAGE_SADDLE and spent == limit
    assert stopped.saddle_gradients == 20 and len(stopped.points) == 5
    assert stopped.saddle.reason.startswith("stopped: gradient budget")
    # each toy complex relaxes in one gradient: a budget of one stops the second base rotation
    error, spent = toy_path(settings(True, _per_atom(1), rotations=2))
    assert isinstance(error, GradientBudgetError) and spent == 1
    assert error.error_type == "gradient_budget_spent" and STAGE_COMPLEX in str(error)


def test_a_stopped_path_is_reported_but_decides_no_product_share():
    """Whole job on the toy engine: every path stopped -> flagged records, no fractions; without a budget the same
    job gives fractions (so the check can fail)."""
    from toyjobs import ToyJobEngine

    from elimscan.pipeline.compute import run_config
    from elimscan.pipeline.jobs import job_record
    from elimscan.pipeline.outcome import DETAIL
    from elimscan.results.trouble import count_trouble
    from elimscan.results.records import counts_as_barrier

    def job(per_atom, heard=None):
        # each driven point from a fresh Hessian (carry_hessian false): with the carried one the toy driven path is so
        # cheap that half the least path's gradients reach its end relaxation, and the stage checked here is the path
        paths = PathConfig(approaches=("anti",), substitution=False, points=4, base_rotations=1, carry_hessian=False,
                           saddle={"refine": False}, gradient_budget_per_atom=per_atom)
        config = RunConfig(substrates=(SubstrateConfig(name="2-bromobutane", smiles="C[C@H](Br)CC"),),
                           bases=(BaseConfig(name="methoxide", model="bare"),), paths=paths, optimizer=BFGS,
                           conformers={"base_embeddings": 2, "per_rotatable_bond": 1, "max_relaxations": 2},
                           scan={"step_deg": 60})
        outcome = run_config(config, ToyJobEngine(), None if heard is None else (lambda *m: heard.append(m)))
        return job_record(*outcome.jobs[0], outcome, config)

    heard = []
    free = job(None, heard)
    # each path stage reaches the progress callback as a sub-step message naming the path, with gradients and s
    stages = [text for done, _, text in heard if done == DETAIL and f"{STAGE_PATH} (path " in text]
    assert stages and all(text.startswith("2-bromobutane C") and "gradients" in text for text in stages)
    assert any(p.fraction is not None for p in free.products)
    computed = [h.anti for h in free.beta_hydrogens if h.anti.path_status == "ok"]
    assert computed and all(a.n_gradients > 0 and counts_as_barrier(a) and a.budget_spent_in is None for a in computed)
    # the record gives each stage's gradients in the order the stages ran, every gradient counted once
    for a in computed:
        assert [c.stage for c in a.stage_gradients][:2] == [STAGE_COMPLEX, STAGE_PATH]
        assert sum(c.gradients for c in a.stage_gradients) == a.n_gradients
    # a budget the complexes fit in but not the driven paths (toy complexes of 2-bromobutane + methoxide: 19 atoms)
    least = min(a.n_gradients for a in computed)
    stopped = job(math.floor(0.5 * least) / 19)
    anti = [h.anti for h in stopped.beta_hydrogens]
    assert [a.path_status for a in anti] == [a.path_status for a in (h.anti for h in free.beta_hydrogens)]
    for a in anti:
        if a.path_status == "ok":
            assert any(f.startswith(BUDGET_SPENT) and STAGE_PATH in f for f in a.flags), a.flags
            assert a.barrier_source == "relaxed-path maximum" and a.barrier_kcal_mol is not None
            # the record's own fields say why, and the one rule of every share reads them
            assert a.budget_spent_in == STAGE_PATH and a.reaches_products is None and not counts_as_barrier(a)
    assert all(p.fraction is None for p in stopped.products)
    assert count_trouble([stopped])["path stopped by its gradient budget"] == len(computed)
    assert any(w.startswith(f"{len(computed)} path(s) were stopped by their gradient budget") for w in stopped.warnings)


class _Stats:
    """Cache counters of a stand-in engine: ``misses`` are the gradients computed."""

    misses = 0


class _Engine:
    """A stand-in engine whose gradient count the test sets by hand."""

    def __init__(self):
        self.stats = _Stats()


def test_the_budget_reports_each_stage_and_a_long_stage_again_with_its_gradients_and_seconds():
    engine, now, heard = _Engine(), [100.0], []
    budget = GradientBudget(engine, 500, heard.append, interval_s=30.0, clock=lambda: now[0])
    engine.stats.misses = 7
    now[0] = 102.0
    budget.enter(STAGE_PATH)
    engine.stats.misses, now[0] = 50, 131.0
    budget.check()  # 29 s since the last report: nothing yet
    engine.stats.misses, now[0] = 60, 132.5
    budget.check()
    assert heard == ["driven path (path 7 of 500 gradients, 2 s so far)",
                     "driven path: 53 gradients, 30 s (path 60 of 500 gradients, 32 s)"]
    assert budget.metered(engine) is not engine  # a report meters the engine even without a limit
    assert GradientBudget(engine, None).metered(engine) is engine


def test_a_path_without_a_limit_reports_its_stages_in_order(embed):
    from elimscan.drivers.complexes import Reactive, place_base

    substrate, base = embed("CCCl"), embed("C[O-]")
    reactive = Reactive(h=3, c_beta=0, c_alpha=1, x=2, base=len(substrate) + 1)
    engine = SpringTorsionEngine(place_base(substrate, 3, 0, base, 1, 2.0, 0.0))
    heard = []
    settings = PathConfig(points=4, base_rotations=1, saddle={"refine": False}, gradient_budget_per_atom=None)
    result = compute_path(substrate, base, 1, reactive, "anti", engine, 0, 1, settings, BFGS, (4, 5),
                          on_stage=heard.append)
    assert [text.split(" (path")[0] for text in heard] == [STAGE_COMPLEX, STAGE_PATH, STAGE_END]
    assert heard[-1].startswith(f"{STAGE_END} (path {result.n_gradients - result.saddle_gradients} gradients")
    # the path keeps each stage's gradients: every gradient in exactly one stage, in the order they ran
    assert list(result.stage_gradients) == [STAGE_COMPLEX, STAGE_PATH, STAGE_END]
    assert sum(result.stage_gradients.values()) == result.n_gradients == engine.stats.misses
    assert result.stage_gradients[STAGE_COMPLEX] == result.complex.n_gradients
