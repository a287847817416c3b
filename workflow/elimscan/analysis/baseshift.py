"""The bulky-base shift: how the terminal-alkene share moves from ethoxide to a bulkier base on one substrate. Pure.

Experiment: a bulkier alkoxide takes more of the terminal alkene (the Hofmann product). For each substrate the
benchmark runs with ethoxide and with a larger base, the shift is the bulkier base's terminal-alkene share of the
alkenes minus ethoxide's (percentage points, mean over seeds), at each level, beside the published shift. A
computed shift is 'resolved' when it has the published sign and is larger than the seed spread, the largest
max - min of the terminal share over the seeds of either member (the benchmark's measure of how far a repeat
moves it); 'within the seed spread' when the sign is right but the spread is larger; 'wrong sign' otherwise.

The published terminal share of a case is the sum of its published terminal alkenes; where it publishes only the
internal ones, it is 100 minus their sum when every other alkene the substrate can form (the perceived products of
its finished jobs, not their shares) is terminal.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from rdkit import Chem

from elimscan.analysis.benchmark_cases import SUBSTITUTION, OutcomeCase, isomer_key
from elimscan.analysis.benchmark_jobs import base_smiles
from elimscan.analysis.benchmark_scoring import CaseScore, is_terminal, terminal_share

#: the small base every bulkier one is set against (by its SMILES)
SMALL_BASE_SMILES = "CC[O-]"
RESOLVED, WITHIN_SPREAD, WRONG_SIGN = "resolved", "within the seed spread", "wrong sign"


def _heavy_atoms(smiles: str) -> int:
    """Return the number of heavy atoms of a SMILES."""
    return Chem.MolFromSmiles(smiles).GetNumHeavyAtoms()


def published_terminal_percent(case: OutcomeCase, formed: Sequence[str]) -> float | None:
    """Return the published terminal-alkene share of the alkenes (percent), or None when it cannot be read; ``formed``:
    the alkenes (isomer keys) the substrate can form, from perception."""
    shares = {isomer_key(s): v for s, v in case.expected.alkene_shares_percent.items()}
    if not shares:
        return None
    terminal = [v for s, v in shares.items() if is_terminal(s)]
    if terminal:
        return sum(terminal)
    others = [p for p in formed if p not in shares]
    return 100.0 - sum(shares.values()) if others and all(is_terminal(p) for p in others) else None


@dataclass(frozen=True)
class LevelShift:
    """One level's shift: the mean terminal shares (0-1), the shift and the seed spread (points), the verdict."""

    small_terminal: float
    bulky_terminal: float
    shift_points: float
    spread_points: float
    verdict: str


@dataclass(frozen=True)
class BaseShift:
    """A substrate with ethoxide and a bulkier base: the published shift (points) and each level's computed one."""

    substrate: str
    small_case: str
    bulky_case: str
    bulky_base: str
    published_shift_points: float | None
    levels: dict[str, LevelShift | None]


def _terminal_values(score: CaseScore, level: str) -> list[float]:
    """Return the terminal share (0-1) of each seed with a complete mix at one level."""
    values = [terminal_share(s.mix) for s in score.levels[level].seeds if s.mix is not None and not s.mix.missing]
    return [v for v in values if v is not None]


def _formed(score: CaseScore, level: str) -> list[str]:
    """Return the alkenes (isomer keys) the seeds' paths lead to at one level (perceived products, not shares)."""
    return sorted({p for s in score.levels[level].seeds if s.mix is not None for p in s.mix.product_barriers_kcal_mol
                   if p != SUBSTITUTION})


def level_shift(small: CaseScore, bulky: CaseScore, level: str, published_points: float | None) -> LevelShift | None:
    """Return one level's shift (points) of two scored cases, None when a member has no seed with a complete mix."""
    a, b = _terminal_values(small, level), _terminal_values(bulky, level)
    if not a or not b:
        return None
    shift = 100.0 * (sum(b) / len(b) - sum(a) / len(a))
    spread = 100.0 * max(max(a) - min(a), max(b) - min(b))
    if published_points is None or shift * published_points <= 0.0:
        verdict = WRONG_SIGN if published_points is not None else ""
    else:
        verdict = RESOLVED if abs(shift) > spread else WITHIN_SPREAD
    return LevelShift(sum(a) / len(a), sum(b) / len(b), shift, spread, verdict)


def base_shifts(scores: Sequence[CaseScore], levels: Sequence[str]) -> list[BaseShift]:
    """Return one shift per substrate and bulkier base whose cases include ethoxide (in the scores' order)."""
    by_substrate: dict[str, list[CaseScore]] = {}
    for score in scores:
        by_substrate.setdefault(isomer_key(score.case.substrate.smiles or ""), []).append(score)
    out = []
    for substrate, members in by_substrate.items():
        small = next((m for m in members if Chem.CanonSmiles(base_smiles(m.case.base)) == SMALL_BASE_SMILES), None)
        if small is None:
            continue
        for bulky in members:
            smiles = base_smiles(bulky.case.base)
            if bulky is small or _heavy_atoms(smiles) <= _heavy_atoms(SMALL_BASE_SMILES):
                continue
            formed = sorted({p for lv in levels for m in (small, bulky) for p in _formed(m, lv)})
            p_small, p_bulky = (published_terminal_percent(m.case, formed) for m in (small, bulky))
            published = None if p_small is None or p_bulky is None else p_bulky - p_small
            out.append(BaseShift(substrate, small.case.id, bulky.case.id, bulky.case.base.name, published,
                                 {lv: level_shift(small, bulky, lv, published) for lv in levels}))
    return out
