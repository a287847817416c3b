"""Published product shares and computed barriers as free-energy differences (kcal/mol), case by case. Pure.

The scoring (``benchmark_scoring``) says right or wrong; this says by how much. A share s of a product p within
its group (the alkenes, or E2 against SN2) is the free-energy difference between the effective barrier of p and
that of the rest of the group, ΔΔG‡ = G‡(p) - G‡(rest) = -RT ln(s / (1 - s)) (Curtin–Hammett; a minor product
has a positive value). The computed value comes from the same effective barriers elimscan's mix is made of,
G‡(p) = -RT ln Σ g_i exp(-G‡_i / RT) over p's counted paths (g: class degeneracy; ``rule.product_barriers_kcal_mol``),
at the temperature of the seed's mix, so nothing saturates at 0 or 100 %. The error (computed - published,
kcal/mol) is what a chemist sets beside the 1 kcal/mol under which elimscan calls two products undecided.

Counting rules, so that nothing flatters the method:
- a published share of 0 or 100 % has no finite value: counted (``published_extremes``), not expressed;
- when the published alkene shares make up the whole (sum at least 99 %), the largest is left out: k shares of a
  whole carry k - 1 independent differences (two alkenes: the smaller share only);
- a check is computed only when more than half of the seeds asked for give it a value, as the scoring's majority
  (else 'not computed', counted);
- a computed share of 0 or 100 % in a seed (a published product that no counted path forms, or the only alkene
  formed) has no finite error: the check is 'unbounded', counted apart, never averaged, never within the
  uncertainty.
"""

from __future__ import annotations

import math
import statistics
from collections.abc import Sequence
from dataclasses import dataclass

from elimscan.analysis.benchmark_cases import SUBSTITUTION, OutcomeCase, isomer_key
from elimscan.analysis.benchmark_scoring import CaseScore, LevelMix, has_majority
from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL, summed_barrier_kcal_mol
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K

#: the two groups a share is taken of
ALKENES, E2_VS_SN2 = "alkenes", "E2 vs SN2"
GROUPS = (ALKENES, E2_VS_SN2)
#: a group's published alkene shares that sum to at least this (percent) make up the whole
WHOLE_PERCENT = 99.0
#: shares with a finite error, and cases they come from, below which the report's note quotes no mean error beside
#: a single job's gap (a chosen floor, not a fitted one)
MIN_SHARES = 3
MIN_ERROR_CASES = 2


def gap_below_error(gap_kcal_mol: float, mean_abs_error_kcal_mol: float) -> bool:
    """Return True when a job's effective gap (kcal/mol) is smaller than the level's mean absolute error (kcal/mol)."""
    return gap_kcal_mol < mean_abs_error_kcal_mol


def published_difference_kcal_mol(percent: float, temperature_K: float) -> float | None:
    """Return -RT ln(s / (1 - s)) (kcal/mol) of a published share s (percent) at temperature_K (K); None at 0/100 %."""
    if not 0.0 < percent < 100.0:
        return None
    return -BOLTZMANN_KCAL_MOL_PER_K * temperature_K * math.log(percent / (100.0 - percent))


@dataclass(frozen=True)
class Published:
    """One published share as a free-energy difference (kcal/mol): which product against which group."""

    label: str
    #: isomer key of the product, or 'E2' for the E2 share
    product: str
    group: str
    percent: float
    difference_kcal_mol: float
    from_memory: bool


def published_differences(case: OutcomeCase) -> list[Published]:
    """Return the case's published shares with a finite free-energy difference (kcal/mol), in the page's order."""
    t = case.temperature_K
    shares = list(case.expected.alkene_shares_percent.items())
    if len(shares) > 1 and sum(v for _, v in shares) >= WHOLE_PERCENT:
        largest = max(shares, key=lambda item: item[1])
        shares = [item for item in shares if item is not largest]  # k shares of a whole: k - 1 differences
    out = []
    for smiles, percent in shares:
        value = published_difference_kcal_mol(percent, t)
        if value is not None:
            key = isomer_key(smiles)
            out.append(Published(f"{key} vs the other alkenes", key, ALKENES, percent, value,
                                 case.from_memory))
    if case.expected.e2_percent is not None:
        value = published_difference_kcal_mol(case.expected.e2_percent, t)
        if value is not None:
            out.append(Published(E2_VS_SN2, "E2", E2_VS_SN2, case.expected.e2_percent, value, case.from_memory))
    return out


def published_extremes(case: OutcomeCase) -> int:
    """Return how many of the case's published shares are 0 or 100 % (no finite free-energy difference)."""
    values = [*case.expected.alkene_shares_percent.values(),
              *(() if case.expected.e2_percent is None else (case.expected.e2_percent,))]
    return sum(not 0.0 < v < 100.0 for v in values)


def mix_difference_kcal_mol(mix: LevelMix, published: Published) -> float | None:
    """Return the computed counterpart (kcal/mol) of one published difference from one seed's mix; None when the
    product or the rest of its group has no counted barrier (for E2 vs SN2: no SN2 or no E2 barrier)."""
    barriers, t = mix.product_barriers_kcal_mol, mix.temperature_K
    alkenes = {p: b for p, b in barriers.items() if p != SUBSTITUTION}
    if published.group == E2_VS_SN2:
        if SUBSTITUTION not in barriers or not alkenes:
            return None
        return summed_barrier_kcal_mol([(b, 1) for b in alkenes.values()], t) - barriers[SUBSTITUTION]
    rest = [(b, 1) for p, b in alkenes.items() if p != published.product]
    if published.product not in alkenes or not rest:
        return None
    return alkenes[published.product] - summed_barrier_kcal_mol(rest, t)


@dataclass(frozen=True)
class SelectivityCheck:
    """One published difference of one case at one level: the seeds' computed values and their mean (kcal/mol)."""

    published: Published
    #: the finite computed differences, one per seed that has one (kcal/mol)
    seed_values_kcal_mol: tuple[float, ...]
    #: seeds whose counted paths form no such product (computed share 0: the difference is +infinity)
    n_seeds_not_formed: int = 0
    #: seeds in which it is the only alkene formed (computed share 100 %: the difference is -infinity)
    n_seeds_alone: int = 0
    #: seeds the case asked for
    n_seeds: int = 1

    @property
    def computed(self) -> bool:
        """Return True when more than half of the seeds asked for gave a value or an unbounded share."""
        return has_majority(len(self.seed_values_kcal_mol) + self.n_seeds_not_formed + self.n_seeds_alone, self.n_seeds)

    @property
    def unbounded(self) -> bool:
        """Return True when computed and some seed's computed share is 0 or 100 % (no finite error)."""
        return self.computed and bool(self.n_seeds_not_formed or self.n_seeds_alone)

    @property
    def mean_kcal_mol(self) -> float | None:
        """Return the mean computed difference over the seeds (kcal/mol); None when not computed or unbounded."""
        values = self.seed_values_kcal_mol
        return sum(values) / len(values) if self.computed and not self.unbounded else None

    @property
    def spread_kcal_mol(self) -> float | None:
        """Return max - min of the computed difference over the seeds (kcal/mol), None with fewer than two."""
        values = self.seed_values_kcal_mol
        return max(values) - min(values) if self.mean_kcal_mol is not None and len(values) > 1 else None

    @property
    def error_kcal_mol(self) -> float | None:
        """Return the mean computed minus the published difference (kcal/mol), None without a finite mean."""
        mean = self.mean_kcal_mol
        return None if mean is None else mean - self.published.difference_kcal_mol


def selectivity_checks(score: CaseScore, level: str) -> list[SelectivityCheck]:
    """Return one check per published difference of a scored case at one level (a seed not computed at the level,
    or whose mix lacks a barrier of a product it forms, gives no value)."""
    seeds = score.levels[level].seeds
    out = []
    for published in published_differences(score.case):
        values, not_formed, alone = [], 0, 0
        for seed in seeds:
            if seed.mix is None or seed.mix.missing:
                continue
            alkenes = [p for p in seed.mix.product_barriers_kcal_mol if p != SUBSTITUTION]
            if published.group == ALKENES and published.product not in alkenes:
                not_formed += 1
            elif published.group == ALKENES and alkenes == [published.product]:
                alone += 1
            elif (value := mix_difference_kcal_mol(seed.mix, published)) is not None:
                values.append(value)
        out.append(SelectivityCheck(published, tuple(values), not_formed, alone, len(seeds)))
    return out


@dataclass(frozen=True)
class SelectivitySummary:
    """The errors of one level (and group) over the published shares (kcal/mol), and how many are which."""

    level: str
    #: 'alkenes', 'E2 vs SN2', or None for both
    group: str | None
    #: published shares with a finite free-energy difference, and how many of them are from memory
    n_published: int
    n_from_memory: int
    #: of those: with a finite error, unbounded (a computed share of 0 or 100 %), not computed
    n: int
    n_unbounded: int
    n_not_computed: int
    mean_error_kcal_mol: float | None
    mean_abs_error_kcal_mol: float | None
    #: finite errors within the method's uncertainty (the gap of elimscan's undecided call)
    n_within_uncertainty: int
    #: cases the finite errors come from
    n_cases: int = 0
    #: median and largest max - min over seeds of the computed differences with two or more seeds (kcal/mol): how
    #: far a repeat of the same job moves a selectivity; None without such a check
    median_spread_kcal_mol: float | None = None
    largest_spread_kcal_mol: float | None = None


def summarise_selectivity(by_case: Sequence[Sequence[SelectivityCheck]], level: str,
                          group: str | None = None) -> SelectivitySummary:
    """Return the summary (kcal/mol) of the checks of one level, one list per case, of one group (None: both)."""
    checks = [[c for c in case_checks if group is None or c.published.group == group] for case_checks in by_case]
    every = [c for case_checks in checks for c in case_checks]
    errors = [c.error_kcal_mol for c in every if c.error_kcal_mol is not None]
    spreads = sorted(c.spread_kcal_mol for c in every if c.spread_kcal_mol is not None)
    return SelectivitySummary(
        level=level, group=group, n_published=len(every), n_from_memory=sum(c.published.from_memory for c in every),
        n=len(errors), n_unbounded=sum(c.unbounded for c in every), n_not_computed=sum(not c.computed for c in every),
        mean_error_kcal_mol=sum(errors) / len(errors) if errors else None,
        mean_abs_error_kcal_mol=sum(abs(e) for e in errors) / len(errors) if errors else None,
        n_within_uncertainty=sum(abs(e) <= METHOD_UNCERTAINTY_KCAL_MOL for e in errors),
        n_cases=sum(any(c.error_kcal_mol is not None for c in case_checks) for case_checks in checks),
        median_spread_kcal_mol=statistics.median(spreads) if spreads else None,
        largest_spread_kcal_mol=spreads[-1] if spreads else None)


def case_checks(scores: Sequence[CaseScore], level: str) -> list[list[SelectivityCheck]]:
    """Return the selectivity checks of every scored case at one level, one list per case (in the scores' order)."""
    return [selectivity_checks(score, level) for score in scores if level in score.levels]
