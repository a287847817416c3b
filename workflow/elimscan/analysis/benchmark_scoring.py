"""Scoring of the benchmark's test set from job record dicts (pure: no engine, no files).

For one case and one level (dE: GFN2-xTB electronic barriers; dG: quasi-RRHO free barriers of verified
saddles; DFT//GFN2: DFT single points on the GFN2-xTB tops) the product mix is elimscan's Curtin-Hammett
function (``rule.product_fractions``) over every E2 path and the SN2 path that have a barrier at that level.
A path whose record says it is no barrier (``reaches_products: false`` or ``budget_spent_in`` set, the tool's own
rule, or in older records a saddle note saying the path end did not relax to products) is left out of the mix
and named, E2 and SN2 alike. A product that some computed path leads to but that has no counted barrier at the
level (its only paths failed, or their saddles were not verified where the level needs it) makes the seed 'not
computed' at that level: a mix without it would be judged as if the product could not form.

Products are compared as exact isomers: canonical isomeric SMILES with tetrahedral stereo removed and E/Z
kept (``benchmark_cases.isomer_key``); the SN2 product is 'substitution'. One seed is:

- wrong, first: a published alkene share or E2 share missed by more than ``SHARE_TOLERANCE_POINTS`` (each named
  with its points off), however close the top products lie (until 2026-12-05 the closeness below came first, and a
  seed 26-87 points off a published share was filed undecided: found by a review of the partial full page);
- undecided: the case names a major product and the computed top products lie within the method's
  uncertainty (``rule.compare_verdicts``: best barriers of different products closer than 1 kcal/mol), or the
  case names the main path's geometry and the best syn and anti paths lie that close; counted as not right;
- right: the major product is the expected one (every published share being met, above), and the main path's
  approach is the expected one where the case gives it; else wrong;
- not computed: the job failed, is not finished, has no barrier at this level, lacks a product at this level
  (above), or the case asks for an E2 share and there is no SN2 barrier at this level.

Over seeds the majority decides (more than half of the seeds asked for); without a majority the case is
undecided ('seeds split'). The rule's call (the rule's major alkene, or 'substitution' where the textbook
E2/SN2 call is substitution; its path is anti by definition) is scored on the same case and majority; on a case
that asks for the E2 share, a textbook call of 'mixture' names no major product and is undecided. The rule names
no shares, so beside its count the computed side is also counted on the rule's basis (major product and path
geometry only, ``major_only``).
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

from rdkit import Chem

from elimscan.analysis.benchmark_cases import SUBSTITUTION, Expected, OutcomeCase, isomer_key
from elimscan.analysis.rule import (METHOD_UNCERTAINTY_KCAL_MOL, PathBarrier, compare_verdicts,
                                   product_barriers_kcal_mol, product_fractions)
from elimscan.results.flags import END_NOT_PRODUCTS, NOT_TO_PRODUCTS, no_barrier_reason
from elimscan.results.records import started_over
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K

#: level name -> barrier field of the path records (kcal/mol)
LEVELS: dict[str, str] = {"dE": "barrier_kcal_mol", "dG": "barrier_free_energy_kcal_mol",
                          "DFT//GFN2": "barrier_dft_kcal_mol"}
#: levels derived from a job record's fields, scored only where a job copy carries them (the calibration's DFT free
#: barrier, benchmark_calibration.with_dft_free_barriers): level name -> field of the path records (kcal/mol)
DERIVED_LEVELS: dict[str, str] = {"dG(DFT//GFN2)": "barrier_dft_free_kcal_mol"}
#: a published share is met when the computed one lies within this many percentage points (issue 17)
SHARE_TOLERANCE_POINTS = 20.0
RIGHT, WRONG, UNDECIDED, NOT_COMPUTED, NOT_SCORED = "right", "wrong", "undecided", "not computed", "not scored"
#: the approach the geometric rule assumes for its major product
RULE_APPROACH = "anti"
#: the textbook E2/SN2 call that names no major product between the two
MIXTURE = "mixture"
_TERMINAL = Chem.MolFromSmarts("[CH2]=C")


def level_field(level: str) -> str:
    """Return the path-record field (kcal/mol) that holds a level's barriers (KeyError for an unknown level)."""
    return LEVELS[level] if level in LEVELS else DERIVED_LEVELS[level]


def path_left_out(block: Mapping) -> str | None:
    """Return why a path record is no barrier (shown not to reach its products, or stopped by its gradient
    budget), or None when it counts.

    The same rule as the tool's own mixes (``flags.no_barrier_reason``); records written before
    ``reaches_products`` existed say it only in the saddle note of an unverified saddle.
    """
    reaches = False if NOT_TO_PRODUCTS in (block.get("flags") or ()) else block.get("reaches_products")
    why = no_barrier_reason(reaches, block.get("budget_spent_in"))
    if why is not None:
        return why
    if not block.get("saddle_verified") and END_NOT_PRODUCTS in (block.get("saddle_note") or ""):
        return END_NOT_PRODUCTS
    return None


def e2_paths(job: Mapping, level: str) -> tuple[list[PathBarrier], list[str]]:
    """Return the E2 paths with a barrier at ``level`` (kcal/mol; products as isomer keys) and the paths left out."""
    field = level_field(level)
    paths, left_out = [], []
    for beta in job.get("beta_hydrogens") or ():
        for approach in ("anti", "syn"):
            block = beta[approach]
            if block.get("path_status") != "ok" or block.get(field) is None:
                continue
            why = path_left_out(block)
            if why is not None:
                left_out.append(f"{beta['class_id']} {approach}: {why}")
                continue
            paths.append(PathBarrier(beta["class_id"], approach, isomer_key(block["product_smiles"]), block[field],
                                     beta["degeneracy"]))
    return paths, left_out


def missing_products(job: Mapping, counted: set[str]) -> tuple[str, ...]:
    """Return one note per product that a computed path leads to but that is not among the ``counted`` products
    (those with a barrier at the level, 'substitution' included).

    A path the tool's rule leaves out (it does not reach its products) is no barrier and lacks nothing; a failed
    path, or a path without this level's barrier (a saddle not verified, at dG), does: the product's share would
    otherwise be read as zero."""
    blocks = [(isomer_key(b[a]["product_smiles"]) if b[a].get("product_smiles") else None, b[a])
              for b in job.get("beta_hydrogens") or () for a in ("anti", "syn")]
    if job.get("substitution"):
        blocks.append((SUBSTITUTION, job["substitution"]))
    notes: dict[str, str] = {}
    for product, block in blocks:
        status = block.get("path_status")
        if product is None or product in counted or status not in ("ok", "failed"):
            continue
        if status == "ok" and path_left_out(block) is not None:
            continue
        notes.setdefault(product, f"{product}: {'its path failed' if status == 'failed' else 'no barrier at this level'}")
    return tuple(notes.values())


def sn2_left_out(job: Mapping) -> str | None:
    """Return why a job's computed SN2 path is no barrier (``path_left_out``), or None when it counts or was not
    computed."""
    block = job.get("substitution") or {}
    return path_left_out(block) if block.get("path_status") == "ok" else None


def sn2_path(job: Mapping, level: str) -> PathBarrier | None:
    """Return the SN2 path with a barrier at ``level`` (kcal/mol) as product 'substitution', or None."""
    block = job.get("substitution")
    field = level_field(level)
    if not block or block.get("path_status") != "ok" or block.get(field) is None or path_left_out(block):
        return None
    return PathBarrier("substitution", "backside", SUBSTITUTION, block[field], 1)


@dataclass(frozen=True)
class LevelMix:
    """The computed outcome of one job at one level (shares are fractions 0-1)."""

    #: every product (alkene isomer keys and 'substitution') -> share of all products
    shares: dict[str, float]
    #: alkenes only, normalised over the alkenes
    alkene_shares: dict[str, float]
    #: E2 share of E2 + SN2; None without an SN2 barrier at this level
    e2_fraction: float | None
    major: str
    #: the top products lie within the method's uncertainty (rule.compare_verdicts)
    undecided: bool
    #: approach of the path with the largest Curtin-Hammett weight
    main_approach: str
    #: paths left out because their record says they are no barrier (did not reach their products, or stopped by
    #: their gradient budget), E2 and SN2
    left_out: tuple[str, ...]
    #: the temperature of the shares and effective barriers (K)
    temperature_K: float
    #: products a computed path leads to without a counted barrier at this level (``missing_products``)
    missing: tuple[str, ...] = ()
    #: best syn minus best anti effective barrier (kcal/mol; degeneracy counted), None without both approaches
    syn_minus_anti_kcal_mol: float | None = None
    #: every product's effective barrier over its paths (kcal/mol; degeneracy counted,
    #: ``rule.product_barriers_kcal_mol``)
    product_barriers_kcal_mol: dict[str, float] = field(default_factory=dict)


def level_mix(job: Mapping, level: str, temperature_K: float) -> LevelMix | None:
    """Return the product mix of a job at one level at temperature_K (K), or None without an E2 barrier there."""
    paths, left_out = e2_paths(job, level)
    if not paths:
        return None
    sn2 = sn2_path(job, level)
    why_sn2 = sn2_left_out(job)
    if why_sn2 is not None:
        left_out.append(f"substitution: {why_sn2}")
    everything = [*paths, sn2] if sn2 is not None else paths
    shares = product_fractions(everything, temperature_K)
    verdict = compare_verdicts(None, shares, everything)
    rt = BOLTZMANN_KCAL_MOL_PER_K * temperature_K
    effective = {id(p): p.barrier_kcal_mol - rt * math.log(p.degeneracy) for p in paths}
    main = min(paths, key=lambda p: effective[id(p)])
    best = {a: min((effective[id(p)] for p in paths if p.approach == a), default=None) for a in ("anti", "syn")}
    return LevelMix(shares=shares, alkene_shares=product_fractions(paths, temperature_K),
                    e2_fraction=None if sn2 is None else 1.0 - shares[SUBSTITUTION], major=verdict.computed_major,
                    undecided=verdict.within_method_uncertainty, main_approach=main.approach,
                    left_out=tuple(left_out), missing=missing_products(job, set(shares)),
                    syn_minus_anti_kcal_mol=None if None in best.values() else best["syn"] - best["anti"],
                    product_barriers_kcal_mol=product_barriers_kcal_mol(everything, temperature_K),
                    temperature_K=temperature_K)


def judge_mix(expected: Expected, mix: LevelMix | None, major_only: bool = False) -> tuple[str, tuple[str, ...]]:
    """Return (right | wrong | undecided | not computed, reasons) of one computed mix against experiment.

    ``major_only`` judges on the rule's basis: the major product and the path geometry, no published shares."""
    if mix is None:
        return NOT_COMPUTED, ("no E2 barrier at this level",)
    if mix.missing:
        return NOT_COMPUTED, tuple(f"no counted barrier for {m}" for m in mix.missing)
    if expected.e2_percent is not None and mix.e2_fraction is None:
        return NOT_COMPUTED, ("no SN2 barrier at this level: the E2 share cannot be judged",)
    # a published share missed by more than the tolerance is wrong whatever the gap between the top products: the
    # close call below is about which product is major, not a licence for a mix far from the measured one
    share_misses = [] if major_only else _share_misses(expected, mix)
    if share_misses:
        wrong_major = expected.major is not None and mix.major != isomer_key(expected.major)
        named = (f"major {mix.major}, expected {isomer_key(expected.major)}",) if wrong_major else ()
        return WRONG, named + tuple(share_misses)
    if expected.major is not None and mix.undecided:
        return UNDECIDED, (f"top products within the method's uncertainty (computed top: {mix.major})",)
    if (expected.approach is not None and mix.syn_minus_anti_kcal_mol is not None
            and abs(mix.syn_minus_anti_kcal_mol) < METHOD_UNCERTAINTY_KCAL_MOL):
        return UNDECIDED, (f"best syn and anti paths within the method's uncertainty "
                           f"(syn - anti {mix.syn_minus_anti_kcal_mol:+.2f} kcal/mol)",)
    reasons = []
    if expected.major is not None and mix.major != isomer_key(expected.major):
        reasons.append(f"major {mix.major}, expected {isomer_key(expected.major)}")
    if expected.approach is not None and mix.main_approach != expected.approach:
        reasons.append(f"main path {mix.main_approach}, expected {expected.approach}")
    return (WRONG, tuple(reasons)) if reasons else (RIGHT, ())


def _share_misses(expected: Expected, mix: LevelMix) -> list[str]:
    """Return why the published shares are missed (each computed share more than SHARE_TOLERANCE_POINTS off, in
    percent with one decimal and the points off), or [] when every published share is met."""
    misses = []
    for smiles, percent in expected.alkene_shares_percent.items():
        got = 100.0 * mix.alkene_shares.get(isomer_key(smiles), 0.0)
        if abs(got - percent) > SHARE_TOLERANCE_POINTS:
            misses.append(f"{isomer_key(smiles)} {got:.1f} % of alkenes, published {percent:g} % "
                          f"({abs(got - percent):.1f} points off)")
    if expected.e2_percent is not None and abs(100.0 * mix.e2_fraction - expected.e2_percent) > SHARE_TOLERANCE_POINTS:
        got = 100.0 * mix.e2_fraction
        misses.append(f"E2 {got:.1f} %, published {expected.e2_percent:g} % ({abs(got - expected.e2_percent):.1f} "
                      "points off)")
    return misses


def rule_call(job: Mapping, e2_share_asked: bool = False) -> str | None:
    """Return the rule's call on a job: 'substitution', its major alkene (isomer key), 'mixture' (a case that asks
    for the E2 share, where the textbook E2/SN2 call names no major product), or None (no E2 predicted)."""
    textbook = (job.get("substitution") or {}).get("rule_call")
    if textbook == SUBSTITUTION:
        return SUBSTITUTION
    if textbook == MIXTURE and e2_share_asked:
        return MIXTURE
    major = (job.get("rule") or {}).get("rule_major")
    return isomer_key(major) if major else None


def judge_rule(expected: Expected, call: str | None) -> str:
    """Return right, wrong or undecided (a 'mixture' call) for the rule's call (its path is anti); 'not scored' for
    a case without a major."""
    if expected.major is None:
        return NOT_SCORED
    if call == MIXTURE:
        return UNDECIDED
    if call != isomer_key(expected.major):
        return WRONG
    return WRONG if expected.approach not in (None, RULE_APPROACH) else RIGHT


def has_majority(n_with: int, n_asked: int) -> bool:
    """Return True when ``n_with`` seeds are more than half of the ``n_asked`` seeds a case asks for."""
    return 2 * n_with > n_asked


def majority(outcomes: Sequence[str], n_seeds: int) -> str:
    """Return the outcome more than half of the ``n_seeds`` seeds gave, else 'undecided' (or 'not computed')."""
    counts = Counter(outcomes)
    for outcome in (RIGHT, WRONG, UNDECIDED, NOT_COMPUTED, NOT_SCORED):
        if has_majority(counts[outcome], n_seeds):
            return outcome
    return UNDECIDED if counts[RIGHT] + counts[WRONG] + counts[UNDECIDED] else NOT_COMPUTED


@dataclass(frozen=True)
class SeedScore:
    """One seed of one case at one level: its outcome, why, and the mix."""

    seed: int
    outcome: str
    reasons: tuple[str, ...]
    mix: LevelMix | None


@dataclass(frozen=True)
class LevelScore:
    """One case at one level over its seeds: the majority outcome, mean shares and the spread over seeds."""

    outcome: str
    seeds: tuple[SeedScore, ...]
    #: product -> mean share of all products over the seeds with a mix (0-1)
    mean_shares: dict[str, float]
    #: mean alkene share (of the alkenes) of each published alkene, and mean E2 share (0-1)
    mean_alkene_shares: dict[str, float]
    mean_e2_fraction: float | None
    #: largest max - min of a product's share over the seeds (percentage points); None with fewer than 2 mixes
    spread_points: float | None
    note: str
    #: the majority outcome on the rule's basis (major product and path geometry only; 'not scored' without a major)
    outcome_major_only: str = NOT_SCORED


def _mean(values: Sequence[float]) -> float | None:
    """Return the mean of the values, or None for none."""
    return sum(values) / len(values) if values else None


def score_level(case: OutcomeCase, jobs: Mapping[int, Mapping], level: str, seeds: Sequence[int]) -> LevelScore:
    """Return one case's score at one level from its job records by seed (missing seeds: not computed)."""
    scores = []
    for seed in seeds:
        job = jobs.get(seed)
        if job is None:
            scores.append(SeedScore(seed, NOT_COMPUTED, ("job not finished",), None))
        elif job.get("status") != "ok":
            error = job.get("error") or {}
            scores.append(SeedScore(seed, NOT_COMPUTED, (f"job failed: {error.get('error_type', 'failed')}",), None))
        else:
            mix = level_mix(job, level, job.get("temperature_K") or case.temperature_K)
            outcome, reasons = judge_mix(case.expected, mix)
            if mix is None:
                reasons += tuple(f"left out: {why}" for why in e2_paths(job, level)[1])
            scores.append(SeedScore(seed, outcome, reasons, mix))
    major_only = [judge_mix(case.expected, s.mix, major_only=True)[0] if s.mix is not None else s.outcome
                  for s in scores]
    mixes = [s.mix for s in scores if s.mix is not None and not s.mix.missing]
    products = sorted({p for m in mixes for p in m.shares})
    mean_shares = {p: _mean([m.shares.get(p, 0.0) for m in mixes]) for p in products}
    spreads = [max(m.shares.get(p, 0.0) for m in mixes) - min(m.shares.get(p, 0.0) for m in mixes) for p in products]
    published = [isomer_key(s) for s in case.expected.alkene_shares_percent]
    outcome = majority([s.outcome for s in scores], len(seeds))
    split = outcome == UNDECIDED and sum(s.outcome == UNDECIDED for s in scores) * 2 <= len(seeds)
    return LevelScore(
        outcome=outcome, seeds=tuple(scores),
        mean_shares=dict(sorted(mean_shares.items(), key=lambda kv: -kv[1])),
        mean_alkene_shares={p: _mean([m.alkene_shares.get(p, 0.0) for m in mixes]) for p in published if mixes},
        mean_e2_fraction=_mean([m.e2_fraction for m in mixes if m.e2_fraction is not None]),
        spread_points=100.0 * max(spreads) if len(mixes) > 1 and spreads else None,
        note="seeds split: " + ", ".join(f"seed {s.seed} {s.outcome}" for s in scores) if split else "",
        outcome_major_only=majority(major_only, len(seeds)) if case.expected.major is not None else NOT_SCORED)


@dataclass(frozen=True)
class CaseScore:
    """One test case: its score per level, and the rule's calls per seed and majority outcome."""

    case: OutcomeCase
    levels: dict[str, LevelScore]
    rule_calls: tuple[str | None, ...]
    rule_outcome: str
    wall_seconds: float | None
    #: a seed's job started over from its replay log, so ``wall_seconds`` holds only its last run (a lower bound)
    time_partial: bool = False


def score_case(case: OutcomeCase, jobs: Mapping[int, Mapping], seeds: Sequence[int], levels: Sequence[str],
               wall_seconds: float | None = None) -> CaseScore:
    """Return a test case's score at each level and the rule's, from its job records by seed."""
    finished = [jobs[s] for s in seeds if s in jobs and jobs[s].get("status") == "ok"]
    calls = tuple(rule_call(job, case.expected.e2_percent is not None) for job in finished)
    rule = [judge_rule(case.expected, call) for call in calls]
    rule += [NOT_SCORED if case.expected.major is None else NOT_COMPUTED] * (len(seeds) - len(finished))
    partial = any(started_over(jobs[s]) for s in seeds if s in jobs)
    return CaseScore(case=case, levels={level: score_level(case, jobs, level, seeds) for level in levels},
                     rule_calls=calls, rule_outcome=majority(rule, len(seeds)), wall_seconds=wall_seconds,
                     time_partial=partial)


@dataclass(frozen=True)
class Headline:
    """Counts of one level (and category): computed right, rule right (of the cases it can be scored on), undecided."""

    n: int
    right: int
    undecided: int
    not_computed: int
    rule_right: int
    rule_n: int
    #: of rule_n, the cases whose rule call is not yet read (no finished job: the rule's call comes from the job)
    rule_not_computed: int = 0
    #: computed right on the rule's basis (major product and path geometry only), of the rule_n cases
    right_major_only: int = 0


def headline(scores: Sequence[CaseScore], level: str, category: str | Sequence[str] | None = None) -> Headline:
    """Return the headline counts of one level over the cases (of one category when given; of any of several, each
    case counted once, when a sequence is given)."""
    wanted = (category,) if isinstance(category, str) else category
    chosen = [s for s in scores if wanted is None or any(c in s.case.category for c in wanted)]
    outcomes = [s.levels[level].outcome for s in chosen]
    return Headline(n=len(chosen), right=outcomes.count(RIGHT), undecided=outcomes.count(UNDECIDED),
                    not_computed=outcomes.count(NOT_COMPUTED),
                    rule_right=sum(s.rule_outcome == RIGHT for s in chosen),
                    rule_n=sum(s.rule_outcome != NOT_SCORED for s in chosen),
                    rule_not_computed=sum(s.rule_outcome == NOT_COMPUTED for s in chosen),
                    right_major_only=sum(s.levels[level].outcome_major_only == RIGHT for s in chosen))


def computed_levels(jobs: Sequence[Mapping]) -> list[str]:
    """Return the levels (in LEVELS order) at which at least one job has an E2 barrier."""
    return [level for level in LEVELS if any(e2_paths(job, level)[0] for job in jobs if job.get("status") == "ok")]


def terminal_share(mix: LevelMix | None) -> float | None:
    """Return the share of terminal alkenes (a =CH2 end) among the alkenes of a mix (0-1), or None."""
    if mix is None:
        return None
    return sum(f for s, f in mix.alkene_shares.items() if is_terminal(s))


def is_terminal(smiles: str) -> bool:
    """Return True for an alkene with a =CH2 end (a terminal alkene)."""
    return Chem.MolFromSmiles(smiles).HasSubstructMatch(_TERMINAL)
