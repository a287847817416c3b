"""Where finished jobs spent their gradients: stage counts summed over their path records, and the page's table
of them (bookkeeping on hand-made records; the counts a real path records are checked in
tests/drivers/test_budget.py)."""

from __future__ import annotations

from elimscan.analysis.stagegradients import StageTotals, job_stage_gradients, stage_totals, summed_counts
from elimscan.output.benchmark_stages import stage_section


def _stages(complex_: int, path: int) -> list[dict]:
    """Return a path record's stage counts: complex relaxations and driven path."""
    return [{"stage": "complex relaxations", "gradients": complex_}, {"stage": "driven path", "gradients": path}]


def _job(with_counts: bool = True, status: str = "ok") -> dict:
    """Return a job record dict with one beta-H class (anti computed, syn not) and an SN2 path."""
    anti = {"path_status": "ok", "stage_gradients": _stages(10, 40) if with_counts else []}
    sn2 = {"path_status": "ok", "stage_gradients": _stages(2, 8) if with_counts else []}
    return {"status": status, "substitution": sn2,
            "beta_hydrogens": [{"class_id": "C2-H9", "anti": anti, "syn": {"path_status": "not computed"}}]}


def test_a_jobs_stage_counts_add_up_over_its_paths():
    assert job_stage_gradients(_job()) == ({"complex relaxations": 12, "driven path": 48}, 2)
    assert job_stage_gradients(_job(with_counts=False)) == ({}, 0)  # a record of older code carries none
    assert summed_counts({"a": 1}, {"b": 2, "a": 3}) == {"a": 4, "b": 2}


def test_the_totals_count_each_finished_job_once_and_say_what_they_left_out():
    totals = stage_totals([_job(), _job(), _job(with_counts=False), _job(status="failed")])
    assert (totals.n_jobs, totals.n_paths, totals.n_without) == (2, 4, 1)
    assert totals.by_stage == {"complex relaxations": 24, "driven path": 96}


def test_the_page_section_shows_each_stage_with_its_share_and_mean_per_path():
    lines = stage_section(StageTotals({"complex relaxations": 100, "driven path": 300}, n_jobs=2, n_paths=4,
                                      n_without=3))
    assert lines[1] == "## Where the gradients went"
    rows = [line for line in lines if line.startswith("| ") and not line.startswith("| stage")]
    assert rows == ["| driven path | 300 | 75 % | 75 |", "| complex relaxations | 100 | 25 % | 25 |"]
    assert "Left out: 3 finished job(s) whose records carry no stage counts" in "\n".join(lines)
    assert stage_section(StageTotals(n_without=5)) == []  # nothing counted: no section
