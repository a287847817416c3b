"""Published product shares and computed barriers as free-energy differences (kcal/mol), case by case. Pure.

The scoring (``benchmark_scoring``) says right or wrong; this says by how much. A share s of a product p within
its group (the alkenes, or E2 against SN2) is the free-energy difference between the effective barrier of p and
that of the rest of the group, ΔΔG‡ = G‡(p) - G‡(rest) = -RT ln(s / (1 - s)) (Curtin–Hammett; a minor product
has a positive value). The computed value comes from the same effective barriers elimscan's mix is made of,
G‡(p) = -RT ln Σ g_i exp(-G‡_i / RT) over p's paths (g: class degeneracy), so nothing saturates at 0 or 100 %.
The error (computed - published, kcal/mol) is what a chemist compares with the 1 kcal/mol under which elimscan
calls two products undecided: relative barriers that miss by more than that cannot decide a mix.

A published share of 0 or 100 % has no finite value and is left out; of a group with exactly two published
alkenes only the smaller share is kept (the other is its mirror image). A computed share of 0 or 100 % (a
published product that no counted path forms, or the only alkene formed) has no finite error either: such a
check is counted apart, never averaged and never within the method's uncertainty.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from elimscan.analysis.benchmark_cases import SUBSTITUTION, OutcomeCase, isomer_key
from elimscan.analysis.benchmark_scoring import CaseScore, LevelMix
from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL, free_energy_of_sum_kcal_mol
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K

#: the label of the E2-against-SN2 difference
E2_VS_SN2 = "E2 vs SN2"


def published_difference_kcal_mol(percent: float, temperature_K: float) -> float | None:
    """Return -RT ln(s / (1 - s)) (kcal/mol) of a published share (percent), None at 0 or 100 %."""
    if not 0.0 < percent < 100.0:
        return None
    return -BOLTZMANN_KCAL_MOL_PER_K * temperature_K * math.log(percent / (100.0 - percent))


def computed_difference_kcal_mol(product_barriers_kcal_mol: Mapping[str, float], product: str, group: Sequence[str],
                                 temperature_K: float) -> float | None:
    """Return G‡(product) - G‡(rest of group) (kcal/mol) from effective product barriers (kcal/mol); None when the
    product or the rest has no barrier (+inf would be a product that does not form at all)."""
    rest = [product_barriers_kcal_mol[p] for p in group if p != product and p in product_barriers_kcal_mol]
    if product not in product_barriers_kcal_mol or not rest:
        return None
    return product_barriers_kcal_mol[product] - free_energy_of_sum_kcal_mol(rest, temperature_K)


@dataclass(frozen=True)
class Published:
    """One published share as a free-energy difference: which product against which group, and its value."""

    label: str
    #: isomer key of the product, or 'E2' for the E2 share
    product: str
    #: 'alkenes' or 'E2 vs SN2'
    group: str
    percent: float
    difference_kcal_mol: float


def published_differences(case: OutcomeCase) -> list[Published]:
    """Return the case's published shares that have a finite free-energy difference (kcal/mol), in page order."""
    t = case.temperature_K
    shares = [(isomer_key(s), s, v) for s, v in case.expected.alkene_shares_percent.items()]
    if len(shares) == 2 and shares[0][2] + shares[1][2] >= 99.0:
        shares = [min(shares, key=lambda item: item[2])]  # the other is its mirror image
    out = []
    for key, smiles, percent in shares:
        value = published_difference_kcal_mol(percent, t)
        if value is not None:
            out.append(Published(f"{smiles} vs the other alkenes", key, "alkenes", percent, value))
    if case.expected.e2_percent is not None:
        value = published_difference_kcal_mol(case.expected.e2_percent, t)
        if value is not None:
            out.append(Published(E2_VS_SN2, "E2", E2_VS_SN2, case.expected.e2_percent, value))
    return out


def mix_difference_kcal_mol(mix: LevelMix, published: Published, temperature_K: float) -> float | None:
    """Return the computed counterpart (kcal/mol) of one published difference from one seed's mix, or None."""
    barriers = mix.product_barriers_kcal_mol
    if published.group == E2_VS_SN2:
        alkenes = [b for p, b in barriers.items() if p != SUBSTITUTION]
        if SUBSTITUTION not in barriers or not alkenes:
            return None
        return free_energy_of_sum_kcal_mol(alkenes, temperature_K) - barriers[SUBSTITUTION]
    alkenes = [p for p in barriers if p != SUBSTITUTION]
    return computed_difference_kcal_mol(barriers, published.product, alkenes, temperature_K)


@dataclass(frozen=True)
class SelectivityCheck:
    """One published difference of one case at one level: the seeds' computed values and their mean (kcal/mol)."""

    case_id: str
    level: str
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
    def unbounded(self) -> bool:
        """Return True when some seed's computed share is 0 or 100 % (no finite difference, no finite error)."""
        return bool(self.n_seeds_not_formed or self.n_seeds_alone)

    @property
    def mean_kcal_mol(self) -> float | None:
        """Return the mean computed difference over the seeds (kcal/mol), None without one or when unbounded."""
        values = self.seed_values_kcal_mol
        return sum(values) / len(values) if values and not self.unbounded else None

    @property
    def spread_kcal_mol(self) -> float | None:
        """Return max - min of the computed difference over the seeds (kcal/mol), None with fewer than two."""
        values = self.seed_values_kcal_mol
        return max(values) - min(values) if len(values) > 1 and not self.unbounded else None

    @property
    def error_kcal_mol(self) -> float | None:
        """Return the mean computed minus the published difference (kcal/mol), None without a finite computed value."""
        mean = self.mean_kcal_mol
        return None if mean is None else mean - self.published.difference_kcal_mol


def selectivity_checks(score: CaseScore, level: str) -> list[SelectivityCheck]:
    """Return one check per published difference of a scored case at one level; a seed not computed at the level,
    or whose mix lacks a barrier of a product it forms, gives no value."""
    t = score.case.temperature_K
    seeds = score.levels[level].seeds
    out = []
    for published in published_differences(score.case):
        values, not_formed, alone = [], 0, 0
        for seed in seeds:
            if seed.mix is None or seed.mix.missing:
                continue
            barriers = seed.mix.product_barriers_kcal_mol
            if published.group != E2_VS_SN2 and published.product not in barriers:
                not_formed += 1
            elif published.group != E2_VS_SN2 and not any(p not in (published.product, SUBSTITUTION) for p in barriers):
                alone += 1
            elif (value := mix_difference_kcal_mol(seed.mix, published, t)) is not None:
                values.append(value)
        out.append(SelectivityCheck(score.case.id, level, published, tuple(values), not_formed, alone, len(seeds)))
    return out


@dataclass(frozen=True)
class SelectivitySummary:
    """The errors of one level over every check with a computed value (kcal/mol)."""

    level: str
    n: int
    mean_error_kcal_mol: float | None
    mean_abs_error_kcal_mol: float | None
    #: checks whose error lies within the method's uncertainty (the gap of elimscan's undecided call, kcal/mol)
    n_within_uncertainty: int
    #: checks with a seed whose computed share is 0 or 100 %: no finite error, counted apart (never as within)
    n_unbounded: int = 0


def summarise_selectivity(checks: Sequence[SelectivityCheck], level: str) -> SelectivitySummary:
    """Return the mean and mean absolute error (kcal/mol) of the checks at one level that have a computed value."""
    errors = [c.error_kcal_mol for c in checks if c.level == level and c.error_kcal_mol is not None]
    unbounded = sum(c.unbounded for c in checks if c.level == level)
    return SelectivitySummary(level=level, n=len(errors), n_unbounded=unbounded,
                              mean_error_kcal_mol=sum(errors) / len(errors) if errors else None,
                              mean_abs_error_kcal_mol=sum(abs(e) for e in errors) / len(errors) if errors else None,
                              n_within_uncertainty=sum(abs(e) <= METHOD_UNCERTAINTY_KCAL_MOL for e in errors))
