"""Where finished jobs spent their gradients: the stage counts their path records carry, summed over jobs.

Each E2 approach and the SN2 path of a job record carries ``stage_gradients`` (schema 0.8.12: the energy+gradient
evaluations of each stage of the path: complex relaxations, driven path, saddle search with its checks, fallbacks).
Summed over jobs they say which stage a batch's gradients went to, measured on the jobs themselves rather than on
one benchmark job. Counts are the same however often a job started over (a point served from a replay log counts
as the first run counted it), so no finished job is left out but those whose records hold none (older code).
Wall time per stage is not in the records (a record holds only what the same inputs reproduce); the batch log's
stage lines give it. Pure: reads record dicts, no files.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field


def summed_counts(*counts: Mapping[str, int]) -> dict[str, int]:
    """Return per-stage counts of several paths added stage by stage (in the order the stages first appear)."""
    total: dict[str, int] = {}
    for by_stage in counts:
        for stage, count in by_stage.items():
            total[stage] = total.get(stage, 0) + count
    return total


def _path_records(job: Mapping) -> Iterable[Mapping]:
    """Yield every path record of a job record dict: each beta-H class's anti and syn approach, and the SN2 path."""
    for beta in job.get("beta_hydrogens") or ():
        for approach in ("anti", "syn"):
            if isinstance(beta.get(approach), Mapping):
                yield beta[approach]
    if isinstance(job.get("substitution"), Mapping):
        yield job["substitution"]


def job_stage_gradients(job: Mapping) -> tuple[dict[str, int], int]:
    """Return the gradients per stage of one job record dict summed over its paths (empty: its records carry none),
    and how many of its paths carry them."""
    counts = [{c["stage"]: int(c["gradients"]) for c in path["stage_gradients"]}
              for path in _path_records(job) if path.get("stage_gradients")]
    return summed_counts(*counts), len(counts)


@dataclass(frozen=True)
class StageTotals:
    """Gradients per stage summed over the finished jobs that carry them, how many jobs and paths that is, and how
    many finished jobs carry none."""

    by_stage: dict[str, int] = field(default_factory=dict)
    n_jobs: int = 0
    n_paths: int = 0
    n_without: int = 0


def stage_totals(jobs: Iterable[Mapping]) -> StageTotals:
    """Return the gradients per stage summed over finished ok job record dicts, each job given once."""
    counted, n_jobs, n_paths, without = [], 0, 0, 0
    for job in jobs:
        if job.get("status") != "ok":
            continue
        counts, paths = job_stage_gradients(job)
        if not counts:
            without += 1
            continue
        counted.append(counts)
        n_jobs, n_paths = n_jobs + 1, n_paths + paths
    return StageTotals(summed_counts(*counted), n_jobs, n_paths, without)
