"""One line per base model and level across benchmark runs: headline counts, calibration errors, seed spread, and
the error of the published shares as free-energy differences.

Issue 18 asks that every candidate base model be reported on the benchmark, not only the frozen one; this
module reduces one model's scored cases and calibration errors to the numbers of that comparison. Pure.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from elimscan.analysis.benchmark_calibration import CalibrationScore
from elimscan.analysis.benchmark_cases import RateCase
from elimscan.analysis.benchmark_scoring import CaseScore, Headline, headline
from elimscan.analysis.selectivity import case_checks, summarise_selectivity


@dataclass(frozen=True)
class ModelSummary:
    """One base model at one level: the test-set counts, the rate errors (kcal/mol) and the seed spread (points)."""

    model: str
    level: str
    counts: Headline
    #: mean of |computed - measured| ΔG‡ over the rate cases with an estimate at this level, and how many
    rate_mean_abs_error_kcal_mol: float | None
    rate_mean_error_kcal_mol: float | None
    n_rates: int
    #: largest max - min of a product share over seeds among the test cases (points); None with one seed
    largest_spread_points: float | None
    n_jobs: int
    n_jobs_finished: int
    #: mean |computed - published| free-energy difference of the published shares, alkenes and E2 vs SN2 together
    #: (kcal/mol, analysis.selectivity); over how many shares, of how many published, and how many unbounded
    selectivity_mean_abs_error_kcal_mol: float | None = None
    n_selectivity: int = 0
    n_selectivity_published: int = 0
    n_selectivity_unbounded: int = 0


def rate_errors_kcal_mol(calibration: Sequence[CalibrationScore], level: str) -> list[float]:
    """Return the computed - measured ΔG‡ errors (kcal/mol) of the rate cases at one level (label ends in it)."""
    return [e.error for score in calibration if isinstance(score.case, RateCase)
            for e in score.estimates if e.label.endswith(f" {level}") and e.error is not None]


def summarise_model(model: str, level: str, scores: Sequence[CaseScore], calibration: Sequence[CalibrationScore],
                    n_jobs: int, n_jobs_finished: int) -> ModelSummary:
    """Return the comparison line of one base model at one level."""
    errors = rate_errors_kcal_mol(calibration, level)
    selectivity = summarise_selectivity(case_checks(scores, level), level)
    spreads = [s.levels[level].spread_points for s in scores
               if level in s.levels and s.levels[level].spread_points is not None]
    return ModelSummary(model=model, level=level, counts=headline(scores, level),
                        rate_mean_abs_error_kcal_mol=sum(abs(e) for e in errors) / len(errors) if errors else None,
                        rate_mean_error_kcal_mol=sum(errors) / len(errors) if errors else None, n_rates=len(errors),
                        largest_spread_points=max(spreads) if spreads else None,
                        n_jobs=n_jobs, n_jobs_finished=n_jobs_finished,
                        selectivity_mean_abs_error_kcal_mol=selectivity.mean_abs_error_kcal_mol,
                        n_selectivity=selectivity.n, n_selectivity_published=selectivity.n_published,
                        n_selectivity_unbounded=selectivity.n_unbounded)
