"""VALIDATION.md's section on the bulky-base shift: ethoxide against a bulky base on one substrate (pure text)."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from elimscan.analysis.baseshift import BaseShift, LevelShift, base_shifts, shift_counts
from elimscan.analysis.benchmark_scoring import CaseScore
from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL

INTRO = ("For each substrate run with ethoxide and with a base the rule calls bulky: per seed the free-energy "
         "difference between the terminal alkenes and the other alkenes, ΔΔG‡(terminal) = G‡(terminal) − G‡(others) "
         "from the effective product barriers (kcal/mol; negative favours the terminal alkene), and the shift, the "
         "bulky base's mean minus ethoxide's; published, the same from the published terminal shares at each case's "
         "temperature. The terminal shares (mean over seeds) are shown for reading. **resolved**: the published sign "
         "and larger than the seed spread (the largest max − min of ΔΔG‡ over either member's seeds); **within the "
         "seed spread**: the sign, not beyond the spread; **no seed spread**: the sign, one seed in a member; **wrong "
         "sign**: the other way. A member needs a majority of its seeds. The size is off when the shift misses the "
         f"published one by more than {METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol; where a member's own ΔΔG‡ misses "
         "its published one by more than that, both members' errors are shown: a shift of the right size can come "
         "from two errors that cancel. Every published shift points to the "
         "terminal alkene, so any steric bias gets the sign: the sign alone is agreement, not proof. The published "
         "tert-butoxide values were measured in tert-butanol, the cases are computed in ethanol's continuum "
         "(validation/cases.yaml); each member's source is in the test-case table.")


def _cell(shift: LevelShift) -> str:
    """Return one level's shift in words: kcal/mol, the two terminal shares, the spread, the verdict, the size."""
    shares = ("" if shift.small_terminal_fraction is None or shift.bulky_terminal_fraction is None else
              f" ({100 * shift.small_terminal_fraction:.0f} → {100 * shift.bulky_terminal_fraction:.0f} % terminal)")
    if shift.shift_kcal_mol is None:
        return f"{shift.verdict}{shares}"
    spread = "-" if shift.spread_kcal_mol is None else f"{shift.spread_kcal_mol:.2f}"
    text = f"{shift.shift_kcal_mol:+.2f}{shares}, spread {spread}"
    if shift.verdict:
        text += f"; **{shift.verdict}**"
    if shift.size_off_kcal_mol is not None and not shift.size_ok:
        text += f"; size off by {shift.size_off_kcal_mol:+.2f}"
    errors = (shift.small_error_kcal_mol, shift.bulky_error_kcal_mol)
    if None not in errors and max(abs(e) for e in errors) > METHOD_UNCERTAINTY_KCAL_MOL:
        text += f"; the members' own errors {errors[0]:+.2f} and {errors[1]:+.2f}"
    return text


def _count_line(shifts: Sequence[BaseShift], level: str, words: str) -> str:
    """Return one level's counts over the pairs with a published shift."""
    c = shift_counts(shifts, level)
    return (f"- **{words}**: resolved {c.n_resolved} of {c.n_pairs} pairs ({c.n_pairs - c.n_computed} not computed); "
            f"the published sign in {c.n_sign}; the size within {METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol in "
            f"{c.n_size_ok}")


def _published(s: BaseShift) -> str:
    """Return the published shift (kcal/mol) with the two terminal shares, '-' without one."""
    if s.published_shift_kcal_mol is None:
        return "-"
    memory = " (from memory)" if s.from_memory else ""
    return (f"{s.published_shift_kcal_mol:+.2f} ({s.published_small_percent:g} → {s.published_bulky_percent:g} % "
            f"terminal){memory}")


def base_shift_section(scores: Sequence[CaseScore], levels: Sequence[str], level_words: Mapping[str, str]) -> list[str]:
    """Return the page's lines on the bulky-base shift (none when no substrate ran with ethoxide and a bulky base)."""
    shifts = base_shifts(scores, levels)
    if not shifts:
        return []
    lines = ["## Bulky-base shift", "", INTRO, ""]
    lines += [_count_line(shifts, level, level_words[level]) for level in levels]
    lines += ["", "| substrate | cases | published shift (kcal/mol) | " + " | ".join(level_words[lv] for lv in levels)
              + " |", "|---|---|---|" + "---|" * len(levels)]
    for s in shifts:
        lines.append(f"| `{s.substrate}` | {s.small_case} → {s.bulky_case} | {_published(s)} | "
                     + " | ".join(_cell(s.levels[lv]) for lv in levels) + " |")
    return lines
