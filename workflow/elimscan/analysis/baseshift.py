"""The bulky-base shift: how the terminal alkene gains from ethoxide to a bulky base on one substrate. Pure.

Experiment: a bulky alkoxide takes more of the terminal alkene (the Hofmann product). For each substrate the
benchmark runs with ethoxide and with a base the rule calls bulky (``chem.bases.describe_base``), the shift is
measured as a free-energy difference, so that shares near 0 or 100 % neither hide nor inflate it: per seed,
ΔΔG‡(terminal) = G‡(terminal alkenes) - G‡(other alkenes) from the effective product barriers (kcal/mol; a negative
value favours the terminal alkene), and the shift is the bulky base's mean minus ethoxide's. Published: the same
from the published terminal share, -RT ln(t / (100 - t)), at each case's temperature.

A member counts when more than half of its seeds give a value (as a case's score needs a majority); a seed whose
counted paths form no terminal alkene, or only terminal ones, is unbounded and so is the pair. The verdict:
'resolved' with the published sign and beyond the seed spread (the largest max - min over either member's seeds);
'within the seed spread' with the sign but not beyond it; 'no seed spread' with the sign but one seed in a member;
'wrong sign' otherwise. The size is off when the shift misses the published one by more than the method's
uncertainty. Every published shift of the benchmark points to the terminal alkene, so any steric bias gets the
sign: the sign alone is agreement, not proof.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from rdkit import Chem

from elimscan.analysis.benchmark_cases import SUBSTITUTION, OutcomeCase, isomer_key
from elimscan.analysis.benchmark_jobs import base_smiles
from elimscan.analysis.benchmark_scoring import CaseScore, LevelMix, has_majority, is_terminal, terminal_share
from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL, summed_barrier_kcal_mol
from elimscan.chem.bases import describe_base
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K

#: the small base every bulky one is set against (canonical SMILES)
SMALL_BASE_SMILES = "CC[O-]"
RESOLVED, WITHIN_SPREAD, NO_SPREAD, WRONG_SIGN = "resolved", "within the seed spread", "no seed spread", "wrong sign"


def published_terminal_percent(case: OutcomeCase) -> float | None:
    """Return the case's published terminal-alkene share of the alkenes (percent), None when it names none."""
    terminal = [v for s, v in case.expected.alkene_shares_percent.items() if is_terminal(isomer_key(s))]
    return sum(terminal) if terminal else None


def published_terminal_kcal_mol(case: OutcomeCase) -> float | None:
    """Return -RT ln(t / (100 - t)) (kcal/mol) of the published terminal share t, None without one or at 0/100 %."""
    t = published_terminal_percent(case)
    if t is None or not 0.0 < t < 100.0:
        return None
    return -BOLTZMANN_KCAL_MOL_PER_K * case.temperature_K * math.log(t / (100.0 - t))


def terminal_difference_kcal_mol(mix: LevelMix) -> float:
    """Return G‡(terminal alkenes) - G‡(other alkenes) of one mix (kcal/mol; +inf / -inf when one side forms none)."""
    alkenes = {p: b for p, b in mix.product_barriers_kcal_mol.items() if p != SUBSTITUTION}
    terminal = [(b, 1) for p, b in alkenes.items() if is_terminal(p)]
    other = [(b, 1) for p, b in alkenes.items() if not is_terminal(p)]
    if not terminal or not other:
        return math.inf if not terminal else -math.inf
    return summed_barrier_kcal_mol(terminal, mix.temperature_K) - summed_barrier_kcal_mol(other, mix.temperature_K)


@dataclass(frozen=True)
class Member:
    """One case of a pair at one level: its seeds' terminal differences (kcal/mol) and terminal shares (0-1)."""

    values_kcal_mol: tuple[float, ...]
    terminal_fractions: tuple[float, ...]
    n_unbounded: int
    n_seeds: int

    @property
    def computed(self) -> bool:
        """Return True when more than half of the seeds asked for gave a value or an unbounded one."""
        return has_majority(len(self.values_kcal_mol) + self.n_unbounded, self.n_seeds)


def member(score: CaseScore, level: str) -> Member:
    """Return a scored case's seeds at one level as a pair member (seeds without a complete mix give nothing)."""
    mixes = [s.mix for s in score.levels[level].seeds if s.mix is not None and not s.mix.missing]
    values = [terminal_difference_kcal_mol(m) for m in mixes]
    finite = tuple(v for v in values if math.isfinite(v))
    return Member(finite, tuple(terminal_share(m) for m in mixes), len(values) - len(finite),
                  len(score.levels[level].seeds))


@dataclass(frozen=True)
class LevelShift:
    """One level's shift of a pair (kcal/mol; negative: toward the terminal alkene), its spread and verdict."""

    #: None when a member is not computed or unbounded
    shift_kcal_mol: float | None
    #: largest max - min over either member's seeds (kcal/mol); None when a member has one value
    spread_kcal_mol: float | None
    #: RESOLVED, WITHIN_SPREAD, NO_SPREAD, WRONG_SIGN; 'not computed', 'unbounded'; None without a published shift
    verdict: str | None
    #: shift minus the published shift (kcal/mol), None without both
    size_off_kcal_mol: float | None
    #: mean terminal share of the alkenes of each member (0-1), for reading
    small_terminal_fraction: float | None
    bulky_terminal_fraction: float | None
    #: each member's own error: its mean ddG++(terminal) minus its published one (kcal/mol), None without both; two
    #: large errors of one sign cancel in the shift, so a shift of the right size can hide members that both miss
    small_error_kcal_mol: float | None = None
    bulky_error_kcal_mol: float | None = None

    @property
    def size_ok(self) -> bool:
        """Return True when the shift lies within the method's uncertainty of the published shift."""
        return self.size_off_kcal_mol is not None and abs(self.size_off_kcal_mol) <= METHOD_UNCERTAINTY_KCAL_MOL


def _mean(values: Sequence[float]) -> float | None:
    """Return the mean, None for no values."""
    return sum(values) / len(values) if values else None


def level_shift(small: Member, bulky: Member, published_kcal_mol: float | None,
                published_members_kcal_mol: tuple[float | None, float | None] = (None, None)) -> LevelShift:
    """Return one level's shift of a pair of members against the published shift (kcal/mol), with each member's
    own error against its published ddG++(terminal) (``published_members_kcal_mol``: small, bulky) when given."""
    shares = (_mean(small.terminal_fractions), _mean(bulky.terminal_fractions))
    if not (small.computed and bulky.computed):
        return LevelShift(None, None, "not computed", None, *shares)
    if small.n_unbounded or bulky.n_unbounded:
        return LevelShift(None, None, "unbounded", None, *shares)
    means = (_mean(small.values_kcal_mol), _mean(bulky.values_kcal_mol))
    errors = tuple(None if p is None else m - p for m, p in zip(means, published_members_kcal_mol))
    shift = means[1] - means[0]
    spreads = [max(v) - min(v) for v in (small.values_kcal_mol, bulky.values_kcal_mol)]
    spread = max(spreads) if min(len(small.values_kcal_mol), len(bulky.values_kcal_mol)) > 1 else None
    if published_kcal_mol is None:
        return LevelShift(shift, spread, None, None, *shares, *errors)
    if shift * published_kcal_mol <= 0.0:
        verdict = WRONG_SIGN
    elif spread is None:
        verdict = NO_SPREAD
    else:
        verdict = RESOLVED if abs(shift) > spread else WITHIN_SPREAD
    return LevelShift(shift, spread, verdict, shift - published_kcal_mol, *shares, *errors)


@dataclass(frozen=True)
class BaseShift:
    """A substrate with ethoxide and a bulky base: the published shift and each level's computed one (kcal/mol)."""

    substrate: str
    small_case: str
    bulky_case: str
    #: published terminal shares (percent) of the two members, and the shift they give (kcal/mol)
    published_small_percent: float | None
    published_bulky_percent: float | None
    published_shift_kcal_mol: float | None
    from_memory: bool
    levels: dict[str, LevelShift]


def _is_bulky(score: CaseScore) -> bool:
    """Return True when the rule calls the case's base bulky."""
    return describe_base(base_smiles(score.case.base)).bulky


def base_shifts(scores: Sequence[CaseScore], levels: Sequence[str]) -> list[BaseShift]:
    """Return one shift per ethoxide case and bulky-base case of the same substrate (canonical SMILES, stereo kept)."""
    by_substrate: dict[str, list[CaseScore]] = {}
    for score in scores:
        by_substrate.setdefault(Chem.CanonSmiles(score.case.substrate.smiles or ""), []).append(score)
    out = []
    for substrate, members in by_substrate.items():
        smalls = [m for m in members if Chem.CanonSmiles(base_smiles(m.case.base)) == SMALL_BASE_SMILES]
        for small in smalls:
            for bulky in (m for m in members if _is_bulky(m)):
                p_small, p_bulky = (published_terminal_kcal_mol(m.case) for m in (small, bulky))
                published = None if p_small is None or p_bulky is None else p_bulky - p_small
                out.append(BaseShift(
                    substrate, small.case.id, bulky.case.id, published_terminal_percent(small.case),
                    published_terminal_percent(bulky.case), published, small.case.from_memory or bulky.case.from_memory,
                    {lv: level_shift(member(small, lv), member(bulky, lv), published, (p_small, p_bulky))
                     for lv in levels}))
    return out


@dataclass(frozen=True)
class ShiftCounts:
    """One level's count over the pairs with a published shift: computed, by verdict, of the published size."""

    n_pairs: int
    n_computed: int
    n_resolved: int
    n_sign: int
    n_size_ok: int
    #: pairs whose published shift rests on a value from memory (either member)
    n_from_memory: int = 0


def shift_counts(shifts: Sequence[BaseShift], level: str) -> ShiftCounts:
    """Return the counts of one level over the pairs with a published shift (not computed ones stay in n_pairs)."""
    pairs = [s for s in shifts if s.published_shift_kcal_mol is not None]
    scored = [s.levels[level] for s in pairs]
    computed = [s for s in scored if s.shift_kcal_mol is not None]
    return ShiftCounts(n_pairs=len(scored), n_computed=len(computed), n_from_memory=sum(s.from_memory for s in pairs),
                       n_resolved=sum(s.verdict == RESOLVED for s in computed),
                       n_sign=sum(s.verdict in (RESOLVED, WITHIN_SPREAD, NO_SPREAD) for s in computed),
                       n_size_ok=sum(s.size_ok for s in computed))
