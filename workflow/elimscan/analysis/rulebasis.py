"""What decided the geometric rule's major alkene: the criteria, named (pure: no engine, no files).

The rule keeps the alkenes reachable through an anti-periplanar hydrogen and ranks them by substitution
degree (reversed under a Hofmann shift), then E before Z, then the lower anti-periplanar cost
(``rule.rule_verdict``). The criteria named are those that set some alkene aside, in that order; before them
come the cases where nothing had to be ranked: only one alkene can form, or the rule predicts no E2.
``rule.rule_verdict`` words its reason from them, and the headline (``headline``) finds them again from a job
record.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

#: the criteria, in the order the rule applies them (machine words; output/headline.py words them)
NO_E2 = "no E2"
SINGLE_ALKENE = "single alkene"
ANTI_REACH = "anti-reachability"
DEGREE = "substitution degree"
HOFMANN_SHIFT = "Hofmann shift"
E_BEFORE_Z = "E before Z"
ANTI_COST = "anti cost"
CRITERIA = (NO_E2, SINGLE_ALKENE, ANTI_REACH, DEGREE, HOFMANN_SHIFT, E_BEFORE_Z, ANTI_COST)


@dataclass(frozen=True)
class Candidate:
    """An anti-reachable alkene as the rule ranks it: degree (index in rule.DEGREES), E or not, anti cost (kcal/mol)."""

    smiles: str
    degree: int
    trans: bool
    penalty_kcal_mol: float


def rank_key(candidate: Candidate, shift: bool) -> tuple[int, bool, float]:
    """Return the rule's ranking key of a candidate (larger wins): degree (negated under a shift), E, -cost (kcal/mol)."""
    return (-candidate.degree if shift else candidate.degree), candidate.trans, -candidate.penalty_kcal_mol


def deciding_criteria(major: str | None, candidates: Sequence[Candidate], n_possible: int,
                      shift: bool) -> tuple[str, ...]:
    """Return the criteria (from CRITERIA, in the rule's order) that set ``major`` apart from the other alkenes.

    ``candidates``: the anti-reachable alkenes; ``n_possible``: how many distinct alkenes the substrate can give
    at all (anti or syn). A criterion is named when it sets some alkene aside; the last one named decided
    between the major alkene and its closest rival.
    """
    if major is None:
        return (NO_E2,)
    if n_possible <= 1:
        return (SINGLE_ALKENE,)
    chosen = next((c for c in candidates if c.smiles == major), None)
    rivals = [c for c in candidates if c.smiles != major]
    steps: list[str] = []
    if chosen is None or len(candidates) < n_possible:
        steps.append(ANTI_REACH)
    if chosen is None or not rivals:
        return tuple(steps) or (ANTI_REACH,)
    if any(c.degree != chosen.degree for c in rivals):
        steps.append(HOFMANN_SHIFT if shift else DEGREE)
    same = [c for c in rivals if c.degree == chosen.degree]
    if any(c.trans != chosen.trans for c in same):
        steps.append(E_BEFORE_Z)
    if any(c.trans == chosen.trans for c in same):
        steps.append(ANTI_COST)
    return tuple(steps)


#: each criterion as a clause of the rule's reason
_CLAUSES = {
    NO_E2: "no beta hydrogen reaches an anti-periplanar geometry: the rule predicts no E2",
    SINGLE_ALKENE: "only one alkene can form",
    ANTI_REACH: "reachable through an anti-periplanar hydrogen (not every alkene is)",
    DEGREE: "Zaitsev: the most substituted anti-reachable alkene",
    HOFMANN_SHIFT: "Hofmann: the least substituted anti-reachable alkene ({shift})",
    E_BEFORE_Z: "E before Z at the same substitution",
    ANTI_COST: "the lowest anti-periplanar cost among alkenes alike in substitution and geometry",
}


def criteria_reason(criteria: Sequence[str], shift_reason: str = "") -> str:
    """Return the rule's one-line reason for its major alkene, naming the criteria that decided, in order."""
    if tuple(criteria) == (ANTI_REACH,):
        return "the only alkene reachable through an anti-periplanar hydrogen"
    return "; then ".join(_CLAUSES[c].format(shift=shift_reason or "shift") for c in criteria)
