"""One substrate's jobs side by side (bases, solvents, base models), with experiment beside them (pure: no I/O).

``compare_substrates`` groups the jobs of each substrate that has more than one job (or an observation) into a
``SubstrateComparison``: one column per job with its headline (shares per alkene, the gap between the two best
alkenes, E2 : SN2, the verdict) and, where the config holds one for that substrate x base, the observation and
its score. ``score_experiment`` judges a job against an observation with the reference benchmark's rules
(``benchmark_scoring.judge_mix``: exact isomers, shares within ``SHARE_TOLERANCE_POINTS``, a close call is
undecided and counts as not right); the rule's call is scored apart (``judge_rule``). An observation that says
nothing about substitution is judged on the alkenes alone.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass

from elimscan.analysis.benchmark_cases import Expected, isomer_key
from elimscan.analysis.benchmark_scoring import (NOT_COMPUTED, NOT_SCORED, judge_mix, judge_rule, level_mix,
                                                 rule_call)
from elimscan.analysis.headline import Headline, job_headline
from elimscan.config import ExperimentConfig
from elimscan.results.records import JobRecord


@dataclass(frozen=True)
class ExperimentScore:
    """A job judged against an observation: the computed outcome and why, and the rule's outcome."""

    #: right, wrong, undecided (counted as not right) or not computed; 'not scored' when a SMILES cannot be read
    outcome: str
    reasons: tuple[str, ...]
    #: right, wrong, or 'not scored' (the observation names no major product)
    rule_outcome: str


@dataclass(frozen=True)
class ComparisonColumn:
    """One job of a substrate: its base, base model and solvent, its headline, and the observation with its score."""

    job_id: str
    base: str
    base_model: str | None
    solvent: str
    headline: Headline
    experiment: ExperimentConfig | None
    score: ExperimentScore | None
    #: the observed alkene shares (percent of the alkenes) by the SMILES of the computed alkene they are (same
    #: isomer: tetrahedral stereo ignored, E/Z kept); an observed alkene the job did not give keeps its own SMILES
    observed_percent: Mapping[str, float]


@dataclass(frozen=True)
class SubstrateComparison:
    """A substrate's jobs side by side: the alkenes (largest computed share first) and one column per job."""

    substrate: str
    alkenes: tuple[str, ...]
    columns: tuple[ComparisonColumn, ...]


def score_experiment(job: JobRecord, observed: ExperimentConfig) -> ExperimentScore:
    """Return a job judged against an observation (the mix at the job's level: dG for a free-energy mix, else dE)."""
    expected = Expected(major=observed.expected_major(), alkene_shares=observed.alkene_shares,
                        e2_percent=observed.e2_percent)
    if job.status != "ok" or job.temperature_K is None:
        return ExperimentScore(NOT_COMPUTED, ("the job failed" if job.status != "ok" else "no temperature",),
                               NOT_SCORED)
    data = job.model_dump(mode="json")
    if not observed.about_substitution():
        data["substitution"] = None  # the observation counts alkenes only
    try:
        mix = level_mix(data, "dG" if job.energy_used == "free" else "dE", job.temperature_K)
        outcome, reasons = judge_mix(expected, mix)
        rule = judge_rule(expected, rule_call(data))
    except ValueError as err:  # a SMILES RDKit cannot read (the input check refuses these before a run)
        return ExperimentScore(NOT_SCORED, (str(err),), NOT_SCORED)
    return ExperimentScore(outcome, reasons, rule)


def compare_substrates(jobs: Sequence[JobRecord], experiments: Mapping[str, Mapping[str, ExperimentConfig]],
                       solvent_of: Callable[[JobRecord], str]) -> tuple[SubstrateComparison, ...]:
    """Return a comparison for each substrate with more than one job or with an observation, in the order of the jobs.

    ``experiments``: substrate name -> base name -> observation; ``solvent_of``: a job's solvent as shown.
    """
    by_substrate: dict[str, list[JobRecord]] = {}
    for job in jobs:
        by_substrate.setdefault(job.substrate, []).append(job)
    found = []
    for substrate, group in by_substrate.items():
        if len(group) < 2 and not experiments.get(substrate):
            continue
        columns = []
        for job in group:
            observed = experiments.get(substrate, {}).get(job.base)
            headline = job_headline(job)
            columns.append(ComparisonColumn(
                job_id=job.job_id, base=job.base, base_model=job.base_info.model if job.base_info else None,
                solvent=solvent_of(job), headline=headline, experiment=observed,
                score=None if observed is None else score_experiment(job, observed),
                observed_percent={} if observed is None else _observed_by_computed(observed, headline)))
        top: dict[str, float] = {}
        for column in columns:
            for alkene in column.headline.alkenes:
                top[alkene.smiles] = max(top.get(alkene.smiles, -1.0), alkene.share if alkene.share is not None else -1.0)
            for smiles in column.observed_percent:
                top.setdefault(smiles, -1.0)
        found.append(SubstrateComparison(substrate, tuple(sorted(top, key=lambda s: -top[s])), tuple(columns)))
    return tuple(found)


def _same_isomer(a: str, b: str) -> bool:
    """Return True when two SMILES are the same alkene isomer (E/Z kept); False when one cannot be read."""
    try:
        return isomer_key(a) == isomer_key(b)
    except ValueError:
        return False


def _observed_by_computed(observed: ExperimentConfig, headline: Headline) -> dict[str, float]:
    """Return the observed alkene shares (percent) keyed by the SMILES of the job's alkene each one is."""
    found = {}
    for smiles, percent in observed.alkene_shares.items():
        match = next((a.smiles for a in headline.alkenes if _same_isomer(a.smiles, smiles)), smiles)
        found[match] = percent
    return found
