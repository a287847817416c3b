"""VALIDATION.md's section on the bulky-base shift: ethoxide against a bulkier base on one substrate (pure text)."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from elimscan.analysis.baseshift import RESOLVED, BaseShift, LevelShift, base_shifts
from elimscan.analysis.benchmark_scoring import SHARE_TOLERANCE_POINTS, CaseScore

INTRO = ("The terminal-alkene share of the alkenes with a bulkier base minus that with ethoxide, on the same substrate "
         "(percentage points; mean over seeds, the shares in brackets). **resolved**: the published sign and larger "
         "than the seed spread (the largest max − min of the terminal share over either member's seeds); **within the "
         "seed spread**: the published sign, but a repeat moves the share as much; **wrong sign**: the other way. A "
         f"computed shift more than {SHARE_TOLERANCE_POINTS:g} points from the published one (the tolerance of a "
         "share) is said to be off by that much, whatever its verdict.")


def _cell(shift: LevelShift | None, published_points: float | None) -> str:
    """Return one level's shift in words: points, the two shares, the spread, the verdict and how far its size is
    from the published shift when that is more than the scoring's share tolerance."""
    if shift is None:
        return "not computed"
    verdict = f"; **{shift.verdict}**" if shift.verdict else ""
    off = None if published_points is None else shift.shift_points - published_points
    size = f"; size {off:+.0f} points off the published" if off is not None and abs(off) > SHARE_TOLERANCE_POINTS else ""
    return (f"{shift.shift_points:+.0f} ({100 * shift.small_terminal:.0f} → {100 * shift.bulky_terminal:.0f} %), "
            f"spread {shift.spread_points:.0f}{verdict}{size}")


def _count(shifts: Sequence[BaseShift], level: str) -> str:
    """Return 'resolved X of N computed (M pairs)' and how many are of the published size, for one level."""
    computed = [s for s in shifts if s.levels.get(level) is not None and s.published_shift_points is not None]
    resolved = sum(s.levels[level].verdict == RESOLVED for s in computed)
    sized = sum(abs(s.levels[level].shift_points - s.published_shift_points) <= SHARE_TOLERANCE_POINTS
                for s in computed)
    return (f"resolved {resolved} of {len(computed)} computed ({len(shifts)} pairs); the size within "
            f"{SHARE_TOLERANCE_POINTS:g} points of the published in {sized} of {len(computed)}")


def base_shift_section(scores: Sequence[CaseScore], levels: Sequence[str], level_words: Mapping[str, str]) -> list[str]:
    """Return the page's lines on the bulky-base shift (none when no substrate ran with ethoxide and a bulkier base)."""
    shifts = base_shifts(scores, levels)
    if not shifts:
        return []
    lines = ["## Bulky-base shift", "", INTRO, ""]
    lines += [f"- **{level_words[level]}**: {_count(shifts, level)}" for level in levels]
    lines += ["", "| substrate | cases | published shift (points) | " + " | ".join(level_words[lv] for lv in levels)
              + " |", "|---|---|---|" + "---|" * len(levels)]
    for s in shifts:
        published = "-" if s.published_shift_points is None else f"{s.published_shift_points:+.0f}"
        lines.append(f"| `{s.substrate}` | {s.small_case} → {s.bulky_case} | {published} | "
                     + " | ".join(_cell(s.levels[lv], s.published_shift_points) for lv in levels) + " |")
    return lines
