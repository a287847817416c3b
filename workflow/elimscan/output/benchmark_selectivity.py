"""VALIDATION.md's section on selectivity in kcal/mol: each published share beside the computed barriers' (pure text).

``analysis.selectivity`` turns each published share into a free-energy difference between effective barriers
and computes the same difference from each seed's barriers; this module renders a summary line per level and one
table row per published share.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from elimscan.analysis.benchmark_scoring import CaseScore
from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL
from elimscan.analysis.selectivity import SelectivityCheck, selectivity_checks, summarise_selectivity

INTRO = ("Each published share s as a free-energy difference between the product's effective barrier and that of "
         "the rest of its group (the alkenes, or E2 against SN2): ΔΔG‡ = −RT ln(s / (1 − s)) at the case's "
         "temperature, positive for a minor product. Beside it the same difference from each level's barriers "
         "(effective barrier of a product: −RT ln Σ g exp(−ΔG‡_i/RT) over its counted paths, g the degeneracy; mean "
         "over seeds, max − min over seeds in brackets) and the error (computed − published). elimscan calls two "
         f"products undecided when their best barriers lie within {METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol: an error "
         "larger than that can turn a call. A share of 0 or 100 % has no finite value and is left out; of two "
         "published alkenes that make up the whole, only the smaller share is shown (the other is its mirror image). A "
         "computed share of 0 or 100 % in some seed (a published product that no counted path forms, or the only alkene "
         "formed) has no finite error: such a row is counted apart, never averaged and never within the uncertainty.")


def checks_by_case(scores: Sequence[CaseScore], levels: Sequence[str]) -> dict[str, dict[str, list[SelectivityCheck]]]:
    """Return case id -> level -> the case's selectivity checks (cases without a finite published share left out)."""
    out: dict[str, dict[str, list[SelectivityCheck]]] = {}
    for score in scores:
        by_level = {level: selectivity_checks(score, level) for level in levels}
        if any(by_level.values()):
            out[score.case.id] = by_level
    return out


def summary_line(checks: Sequence[SelectivityCheck], level: str, level_words: str) -> str:
    """Return one level's line: how many differences, mean and mean absolute error (kcal/mol), how many within the
    method's uncertainty."""
    s = summarise_selectivity(checks, level)
    if not s.n and not s.n_unbounded:
        return f"- **{level_words}**: no published share has a computed counterpart yet"
    if not s.n:
        return (f"- **{level_words}**: no finite difference; {s.n_unbounded} with a computed share of 0 or 100 % in "
                "some seed")
    return (f"- **{level_words}**: {s.n} difference(s); mean error {s.mean_error_kcal_mol:+.1f} kcal/mol, mean of "
            f"abs {s.mean_abs_error_kcal_mol:.1f}; within {METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol: "
            f"{s.n_within_uncertainty}/{s.n}" + (f"; {s.n_unbounded} more with a computed share of 0 or 100 % in some "
                                                  "seed (no finite error)" if s.n_unbounded else ""))


def _cell(check: SelectivityCheck) -> str:
    """Return 'mean (spread) | error' of one check (kcal/mol), '-' parts where nothing was computed."""
    mean, spread, error = check.mean_kcal_mol, check.spread_kcal_mol, check.error_kcal_mol
    if check.unbounded:
        words = ([f"not formed in {check.n_seeds_not_formed} seed(s) (+∞)"] if check.n_seeds_not_formed else []) + (
            [f"the only alkene in {check.n_seeds_alone} seed(s) (−∞)"] if check.n_seeds_alone else [])
        return f"{'; '.join(words)} | unbounded"
    if mean is None:
        return "- | -"
    seeds = len(check.seed_values_kcal_mol)
    partial = f" [{seeds} of {check.n_seeds} seeds]" if seeds < check.n_seeds else ""
    return f"{mean:+.1f}" + (f" ({spread:.1f})" if spread is not None else "") + partial + f" | {error:+.1f}"


def selectivity_section(scores: Sequence[CaseScore], levels: Sequence[str], level_words: Mapping[str, str]) -> list[str]:
    """Return the page's lines on selectivity in kcal/mol (none when no case has a finite published share)."""
    by_case = checks_by_case(scores, levels)
    if not by_case:
        return []
    every = [c for by_level in by_case.values() for checks in by_level.values() for c in checks]
    lines = ["## Selectivity in kcal/mol", "", INTRO, ""]
    lines += [summary_line(every, level, level_words[level]) for level in levels]
    lines += ["", "| case | published share | published ΔΔG‡ (kcal/mol) | "
              + " | ".join(f"{level_words[lv]}: computed | error" for lv in levels) + " |",
              "|---|---|---|" + "---|---|" * len(levels)]
    for case_id, by_level in by_case.items():
        for k, first in enumerate(by_level[levels[0]]):
            cells = " | ".join(_cell(by_level[lv][k]) for lv in levels)
            lines.append(f"| {case_id} | {first.published.label}: {first.published.percent:g} % | "
                         f"{first.published.difference_kcal_mol:+.1f} | {cells} |")
    return lines
