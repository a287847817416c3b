"""VALIDATION.md's section on selectivity in kcal/mol: each published share beside the computed barriers' (pure text).

``analysis.selectivity`` turns each published share into a free-energy difference between effective barriers
and computes the same difference from each seed's barriers; this module renders a summary line per level and
group, and one table row per published share.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from elimscan.analysis.benchmark_scoring import CaseScore
from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL
from elimscan.analysis.selectivity import (GROUPS, SelectivityCheck, SelectivitySummary, published_extremes,
                                           selectivity_checks, summarise_selectivity)

INTRO = ("Each published share s as a free-energy difference between the product's effective barrier and that of "
         "the rest of its group (the alkenes, or E2 against SN2): ΔΔG‡ = −RT ln(s / (1 − s)) at the case's "
         "temperature, positive for a minor product. Beside it the same difference from each level's barriers "
         "(effective barrier of a product: −RT ln Σ g exp(−ΔG‡_i/RT) over its counted paths, g the degeneracy; mean "
         "over seeds, max − min over seeds in brackets) and the error (computed − published). elimscan calls two "
         f"products undecided when their best barriers lie within {METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol: an error "
         "larger than that can turn a call. A row is computed when more than half of its seeds give a value, as a "
         "case's score needs a majority of seeds. When the published alkene shares make up the whole, the largest "
         "is left out (k shares of a whole carry k − 1 differences). A computed share of 0 or 100 % in some seed (a "
         "published product that no counted path forms, or the only alkene formed) has no finite error: such a row "
         "is unbounded, counted apart, never averaged and never within the uncertainty.")


def summary_words(s: SelectivitySummary) -> str:
    """Return one level's and group's counts and errors (kcal/mol) in words."""
    if not s.n_published:
        return f"{s.group}: no published share"
    text = f"{s.group}: {s.n} of {s.n_published} published shares with a finite error"
    if s.n:
        text += (f" (from {s.n_cases} case(s)), mean error {s.mean_error_kcal_mol:+.1f}, mean of abs "
                 f"{s.mean_abs_error_kcal_mol:.1f} kcal/mol, {s.n_within_uncertainty} of {s.n} within "
                 f"{METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol")
    if s.median_spread_kcal_mol is not None:
        text += (f"; seed spread (max − min) median {s.median_spread_kcal_mol:.2f}, largest "
                 f"{s.largest_spread_kcal_mol:.2f} kcal/mol")
    counts = f"; {s.n_unbounded} unbounded, {s.n_not_computed} not computed"
    return text + counts + f"; {s.n_from_memory} of the {s.n_published} published values from memory"


def _cell(check: SelectivityCheck) -> str:
    """Return 'mean (spread) | error' of one check (kcal/mol), words where nothing finite was computed."""
    if not check.computed:
        return "not computed | -"
    if check.unbounded:
        words = ([f"not formed in {check.n_seeds_not_formed} seed(s) (+∞)"] if check.n_seeds_not_formed else []) + (
            [f"the only alkene in {check.n_seeds_alone} seed(s) (−∞)"] if check.n_seeds_alone else [])
        return f"{'; '.join(words)} | unbounded"
    mean, spread, error = check.mean_kcal_mol, check.spread_kcal_mol, check.error_kcal_mol
    seeds = len(check.seed_values_kcal_mol)
    partial = f" [{seeds} of {check.n_seeds} seeds]" if seeds < check.n_seeds else ""
    return f"{mean:+.1f}" + (f" ({spread:.1f})" if spread is not None else "") + partial + f" | {error:+.1f}"


def selectivity_section(scores: Sequence[CaseScore], levels: Sequence[str],
                        level_words: Mapping[str, str]) -> list[str]:
    """Return the page's lines on selectivity in kcal/mol (none when no case has a finite published share)."""
    rows = [(score, {level: selectivity_checks(score, level) for level in levels}) for score in scores]
    rows = [(score, by_level) for score, by_level in rows if any(by_level.values())]
    if not rows:
        return []
    extremes = sum(published_extremes(score.case) for score in scores)
    lines = ["## Selectivity in kcal/mol", "", INTRO + (f" {extremes} published share(s) of 0 or 100 % are not "
                                                        "expressed." if extremes else ""), ""]
    for level in levels:
        by_case = [by_level[level] for _, by_level in rows]
        lines.append(f"- **{level_words[level]}**: "
                     + "; ".join(summary_words(summarise_selectivity(by_case, level, g)) for g in GROUPS))
    lines += ["", "| case | published share | published ΔΔG‡ (kcal/mol) | "
              + " | ".join(f"{level_words[lv]}: computed | error" for lv in levels) + " |",
              "|---|---|---|" + "---|---|" * len(levels)]
    for score, by_level in rows:
        for k, first in enumerate(by_level[levels[0]]):
            p = first.published
            memory = " (from memory)" if p.from_memory else ""
            cells = " | ".join(_cell(by_level[lv][k]) for lv in levels)
            lines.append(f"| {score.case.id} | {p.label}: {p.percent:g} %{memory} | {p.difference_kcal_mol:+.1f} | "
                         f"{cells} |")
    return lines
