"""Where an E2 saddle sits between carbanion-like and carbocation-like (pure numpy).

Bond cleavage is measured by Pauling bond orders, n = exp((r0 - r) / c) with c = 0.3 Å (Pauling,
J. Am. Chem. Soc. 1947, 69, 542): r0 is the bond length in the free substrate, r at the saddle, and the
fractional cleavage is 1 - n (0 = intact, 1 = broken). Both cleavages place the saddle on the two-axis
map of C-H against C-X cleavage (More O'Ferrall, J. Chem. Soc. B 1970, 274; Jencks, Chem. Rev. 1972, 72,
705). The label compares the two: C-H far ahead of C-X is carbanion-like (E1cb-like), C-X far ahead is
carbocation-like (E1-like), otherwise central.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

#: Pauling's constant c in n = exp((r0 - r) / c), Å
PAULING_C_A = 0.3


@dataclass(frozen=True)
class SaddleCharacter:
    """Fractional C-H and C-X cleavage at a saddle (0 intact, 1 broken) and the resulting label."""

    c_h_cleavage: float
    c_x_cleavage: float
    label: str


def fractional_cleavage(r0_A: float, r_A: float, c_A: float = PAULING_C_A) -> float:
    """Return 1 - exp((r0 - r) / c): 0 for an intact bond (r = r0), toward 1 as the bond stretches."""
    return 1.0 - math.exp((r0_A - r_A) / c_A)


def saddle_character(c_h_reactant_A: float, c_h_saddle_A: float, c_x_reactant_A: float, c_x_saddle_A: float,
                     lead: float = 0.2) -> SaddleCharacter:
    """Return the saddle's C-H and C-X cleavage and its label; ``lead`` is the margin that decides the label."""
    ch = fractional_cleavage(c_h_reactant_A, c_h_saddle_A)
    cx = fractional_cleavage(c_x_reactant_A, c_x_saddle_A)
    if ch - cx > lead:
        label = "carbanion-like"
    elif cx - ch > lead:
        label = "carbocation-like"
    else:
        label = "central"
    return SaddleCharacter(round(ch, 4), round(cx, 4), label)
