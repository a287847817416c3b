"""The headline of one job: the main channel, the alkene mix and the verdict in three states (pure: no I/O).

``job_headline`` reads a job record and returns a small frozen ``Headline`` with numbers only; the words are
``output/headline.py``'s. Only paths that hold a barrier decide anything (``records.counts_as_barrier``: computed
and reaching their products; with a free-energy mix, only those with a ΔG‡): the computed major alkene, the gap
between the two best alkenes and the gap between E2 and SN2. The verdict is:

- agree / disagree: the rule's major alkene is / is not the computed one, and the best barriers of the computed
  major and its closest rival lie at least ``rule.METHOD_UNCERTAINTY_KCAL_MOL`` apart;
- undecided otherwise, with why (``UNDECIDED_WHY``): a close call, no path reached its products, every path
  failed, no path computed, no ΔG‡ for a free-energy mix, the rule predicts no E2, or the job failed.
  Undecided is an honest answer, never a win.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from elimscan.analysis.rule import (DEGREES, METHOD_UNCERTAINTY_KCAL_MOL, PathBarrier, compare_verdicts, hofmann_shift,
                                    is_trans, product_barriers_kcal_mol, product_fractions)
from elimscan.analysis.rulebasis import Candidate, deciding_criteria
from elimscan.results.records import ApproachRecord, JobRecord, SubstitutionRecord, counts_as_barrier
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K

AGREE, DISAGREE, UNDECIDED = "agree", "disagree", "undecided"
#: why a verdict is undecided (machine words; output/headline.py words them)
CLOSE_CALL = "close call"
NONE_REACHED = "no path reached its products"
ALL_FAILED = "every path failed"
NO_PATHS = "no paths computed"
NO_FREE_ENERGY = "no free-energy barrier"
NO_RULE_MAJOR = "no rule major"
JOB_FAILED = "job failed"
UNDECIDED_WHY = (CLOSE_CALL, NONE_REACHED, ALL_FAILED, NO_PATHS, NO_FREE_ENERGY, NO_RULE_MAJOR, JOB_FAILED)
#: the main channel of a job with an SN2 path
E2, SN2 = "E2", "SN2"
#: largest gap / RT turned into a ratio (exp(700) is near the largest float; any such ratio reads "all one product")
MAX_EXPONENT = 700.0


@dataclass(frozen=True)
class AlkeneShare:
    """One alkene of a job: the rule's call, the computed share of the alkenes and its range (0-1; None: none)."""

    smiles: str
    substitution: str
    rule_call: str
    share: float | None
    low: float | None
    high: float | None
    #: lowest barrier to it among the paths that decide (kcal/mol, the mix's kind); None: no such path
    best_barrier_kcal_mol: float | None


@dataclass(frozen=True)
class ChannelSplit:
    """E2 against SN2 in one job: the shares (0-1), which is the main channel, and the gap between them."""

    #: 'E2' or 'SN2' by the computed shares; None when the split is not decided
    main: str | None
    e2_fraction: float | None
    sn2_fraction: float | None
    sn2_product: str | None
    #: SN2 barrier minus the lowest E2 barrier (kcal/mol, the mix's kind; positive: E2 lower); None: no split
    gap_kcal_mol: float | None
    #: the two channels' best barriers lie within the method's uncertainty
    close: bool
    #: why there is no split: 'not computed', 'failed', 'no products', 'no E2 barrier', 'no free-energy barrier'
    why_none: str | None
    textbook_call: str
    textbook_reason: str


@dataclass(frozen=True)
class Headline:
    """What a chemist reads first about one job: channel, alkene mix, verdict and what decided the rule."""

    job_id: str
    substrate: str
    base: str
    ok: bool
    #: 'agree', 'disagree' or 'undecided'
    state: str
    #: one of UNDECIDED_WHY when undecided, else None
    why_undecided: str | None
    rule_major: str | None
    computed_major: str | None
    #: the computed major's closest rival (best barrier nearest the major's); None with one computed alkene
    runner_up: str | None
    #: best barrier of the runner-up minus that of the computed major (kcal/mol, kind: energy_used)
    gap_kcal_mol: float | None
    #: the same gap from the verified saddles' ΔG‡ when the mix used electronic barriers and both have one
    gap_free_kcal_mol: float | None
    #: exp(gap / RT) at temperature_K: the major : runner-up ratio the gap implies
    implied_ratio: float | None
    energy_used: str
    temperature_K: float | None
    uncertainty_kcal_mol: float
    alkenes: tuple[AlkeneShare, ...]
    #: None when SN2 was not asked for
    channel: ChannelSplit | None
    #: what decided the rule's major alkene (rulebasis.CRITERIA, in the rule's order) and, under a shift, why
    rule_criteria: tuple[str, ...]
    shift_reason: str
    #: no beta hydrogen is anti-periplanar within the energy window: the rule went through the cheapest anti geometry
    slow_e2: bool
    #: computed paths (E2 and SN2) shown not to reach their products: no barriers, left out of every share
    paths_left_out: int
    error: str | None = None
    #: the alkene with the lowest effective barrier after the computed major's (degeneracy counted,
    #: rule.product_barriers_kcal_mol), and its effective barrier minus the major's (kcal/mol, the mix's kind; not
    #: negative when the major is the largest share); None with one computed alkene or without a temperature. It may
    #: differ from runner_up (the nearest by best single path, which decides the undecided call); the report's note
    #: sets this one beside the benchmark's error of relative barriers, which are of effective barriers too
    product_rival: str | None = None
    product_gap_kcal_mol: float | None = None


def _level(block: ApproachRecord | SubstitutionRecord, free: bool) -> float | None:
    """Return a path's barrier at the mix's level (kcal/mol) when it may decide a share, else None."""
    if not counts_as_barrier(block):
        return None
    return block.barrier_free_energy_kcal_mol if free else block.barrier_kcal_mol


def deciding_paths(job: JobRecord, free: bool) -> list[PathBarrier]:
    """Return the E2 paths of a job that decide shares (kcal/mol, electronic or free), as rule.PathBarrier."""
    paths = []
    for beta in job.beta_hydrogens:
        for name, block in (("anti", beta.anti), ("syn", beta.syn)):
            value = _level(block, free)
            if value is not None:
                paths.append(PathBarrier(beta.class_id, name, block.product_smiles, value, beta.degeneracy))
    return paths


def _best(paths: Sequence[PathBarrier]) -> dict[str, float]:
    """Return the lowest barrier per product (kcal/mol)."""
    best: dict[str, float] = {}
    for p in paths:
        best[p.product_smiles] = min(best.get(p.product_smiles, math.inf), p.barrier_kcal_mol)
    return best


def _rule_criteria(job: JobRecord) -> tuple[tuple[str, ...], str, bool]:
    """Return (criteria, shift reason, slow E2) of the rule's major alkene, found again from the record."""
    rule = job.rule
    anti_cost: dict[str, float] = {}
    for beta in job.beta_hydrogens:
        if beta.anti_penalty_kcal_mol is not None and beta.anti.product_possible:
            smiles = beta.anti.product_smiles
            anti_cost[smiles] = min(anti_cost.get(smiles, math.inf), beta.anti_penalty_kcal_mol)
    candidates = [Candidate(p.smiles, DEGREES.index(p.substitution) if p.substitution in DEGREES else 0,
                            is_trans(p.smiles), anti_cost.get(p.smiles, 0.0))
                  for p in job.products if p.rule_call in ("major", "minor")]
    shift = rule is not None and rule.hofmann_shift
    reason = ""
    if shift and job.base_info is not None and job.leaving_group is not None:
        reason = hofmann_shift(job.base_info.bulky, job.leaving_group.kind, job.leaving_group.label)[1]
    major = rule.rule_major if rule is not None else None
    slow = major is not None and not any(b.rule_status == "anti accessible" for b in job.beta_hydrogens)
    return deciding_criteria(major, candidates, len(job.products), shift), reason, slow


def _why_no_barrier(job: JobRecord, free: bool) -> str:
    """Return why a job has no deciding E2 path: none computed, none reached its products, no ΔG‡, or all failed."""
    blocks = [block for beta in job.beta_hydrogens for block in (beta.anti, beta.syn)]
    if all(block.path_status == "not computed" for block in blocks):
        return NO_PATHS
    if free and any(counts_as_barrier(block) for block in blocks):
        return NO_FREE_ENERGY
    if any(block.path_status == "ok" and block.reaches_products is False for block in blocks):
        return NONE_REACHED
    return ALL_FAILED


def _channel(job: JobRecord, e2_paths: Sequence[PathBarrier], free: bool, uncertainty: float) -> ChannelSplit | None:
    """Return E2 against SN2 of a job, or None when SN2 was not asked for."""
    sub = job.substitution
    if sub is None:
        return None
    head = dict(sn2_product=sub.product_smiles, textbook_call=sub.rule_call, textbook_reason=sub.rule_reason)
    none = dict(main=None, e2_fraction=None, sn2_fraction=None, gap_kcal_mol=None, close=False)
    if sub.path_status != "ok":
        return ChannelSplit(**head, **none, why_none="not computed" if sub.path_status == "not computed" else "failed")
    if sub.reaches_products is False:
        return ChannelSplit(**head, **none, why_none="no products")
    barrier = _level(sub, free)
    if barrier is None:
        return ChannelSplit(**head, **none, why_none="no free-energy barrier" if free else "failed")
    if not e2_paths or sub.elimination_fraction is None or sub.substitution_fraction is None:
        return ChannelSplit(**head, **none, why_none="no E2 barrier")
    gap = barrier - min(p.barrier_kcal_mol for p in e2_paths)
    main = SN2 if sub.substitution_fraction > sub.elimination_fraction else E2
    return ChannelSplit(**head, main=main, e2_fraction=sub.elimination_fraction, sn2_fraction=sub.substitution_fraction,
                        gap_kcal_mol=gap, close=abs(gap) < uncertainty, why_none=None)


def job_headline(job: JobRecord, uncertainty_kcal_mol: float = METHOD_UNCERTAINTY_KCAL_MOL) -> Headline:
    """Return the headline of one job record: channel, alkene mix, verdict state and why, the gap (kcal/mol)."""
    base = dict(job_id=job.job_id, substrate=job.substrate, base=job.base, energy_used=job.energy_used,
                temperature_K=job.temperature_K, uncertainty_kcal_mol=uncertainty_kcal_mol)
    if job.status != "ok" or job.rule is None:
        error = f"{job.error.error_type}: {job.error.error_message}" if job.error else "the record is incomplete"
        return Headline(**base, ok=False, state=UNDECIDED, why_undecided=JOB_FAILED, rule_major=None,
                        computed_major=None, runner_up=None, gap_kcal_mol=None, gap_free_kcal_mol=None,
                        implied_ratio=None, alkenes=(), channel=None, rule_criteria=deciding_criteria(None, (), 0, False),
                        shift_reason="", slow_e2=False, paths_left_out=0, error=error)
    free = job.energy_used == "free"
    paths = deciding_paths(job, free)
    best = _best(paths)
    alkenes = tuple(sorted((AlkeneShare(p.smiles, p.substitution, p.rule_call, p.fraction,
                                        *(p.fraction_range or (None, None)), best.get(p.smiles)) for p in job.products),
                           key=lambda a: (a.share is None, -(a.share or 0.0))))
    rule_major = job.rule.rule_major
    computed = runner = gap = gap_free = ratio = product_rival = product_gap = None
    state, why = UNDECIDED, None
    if paths:
        fractions = (product_fractions(paths, job.temperature_K) if job.temperature_K else
                     {p.smiles: p.fraction for p in job.products if p.fraction is not None})
        verdict = compare_verdicts(rule_major, fractions, paths, uncertainty_kcal_mol)
        computed = verdict.computed_major
        rivals = [s for s in best if s != computed] if computed in best else []
        if rivals:
            runner = min(rivals, key=lambda s: abs(best[s] - best[computed]))
            gap = best[runner] - best[computed]
            if job.temperature_K:
                ratio = math.exp(min(gap / (BOLTZMANN_KCAL_MOL_PER_K * job.temperature_K), MAX_EXPONENT))
            if not free:
                best_free = _best(deciding_paths(job, True))
                if computed in best_free and runner in best_free:
                    gap_free = best_free[runner] - best_free[computed]
        effective = product_barriers_kcal_mol(paths, job.temperature_K) if job.temperature_K else {}
        if computed in effective and len(effective) > 1:
            product_rival = min((p for p in effective if p != computed), key=effective.__getitem__)
            product_gap = effective[product_rival] - effective[computed]
        if computed is None:
            why = _why_no_barrier(job, free)
        elif rule_major is None:
            why = NO_RULE_MAJOR
        elif verdict.within_method_uncertainty:
            why = CLOSE_CALL
        else:
            state = AGREE if computed == rule_major else DISAGREE
    else:
        why = _why_no_barrier(job, free)
    criteria, shift_reason, slow = _rule_criteria(job)
    left_out = sum(block.path_status == "ok" and block.reaches_products is False
                   for block in (*(a for b in job.beta_hydrogens for a in (b.anti, b.syn)),
                                 *((job.substitution,) if job.substitution is not None else ())))
    return Headline(**base, ok=True, state=state, why_undecided=why, rule_major=rule_major, computed_major=computed,
                    runner_up=runner, gap_kcal_mol=gap, gap_free_kcal_mol=gap_free, implied_ratio=ratio,
                    alkenes=alkenes, channel=_channel(job, paths, free, uncertainty_kcal_mol), rule_criteria=criteria,
                    shift_reason=shift_reason, slow_e2=slow, paths_left_out=left_out, product_rival=product_rival,
                    product_gap_kcal_mol=product_gap)
