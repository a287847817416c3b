"""Relative basicity of base models (pure numbers): a physics check on a base model, apart from any outcome.

Issue 18 chooses a base model partly on "the order of alkoxide basicity in solution". For two alkoxides
RO- and R'O-, each modelled with n explicit molecules of its own alcohol (and the same cation, if any), the
balanced proton exchange

    R'O-(R'OH)n [M+] + (n + 1) ROH  ->  RO-(ROH)n [M+] + (n + 1) R'OH

has the reaction energy dE, and pKa(ROH) - pKa(R'OH) = dE / (RT ln 10). A positive value: RO- is the stronger
base. In solution tert-butoxide is the strongest of methoxide, ethoxide and tert-butoxide; in the gas phase
the order is reversed (the larger anion is the better stabilised), so the sign of the tert-butoxide value is
a test of whether a model holds the solvation that sets the order.
"""

from __future__ import annotations

import math

from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K, KCAL_MOL_PER_HARTREE


def exchange_energy_kcal_mol(base_model_hartree: float, acid_hartree: float, reference_model_hartree: float,
                             reference_acid_hartree: float, n_explicit: int) -> float:
    """Return dE (kcal/mol) of R'O-(R'OH)n + (n+1) ROH -> RO-(ROH)n + (n+1) R'OH from four energies (hartree)."""
    if n_explicit < 0:
        raise ValueError(f"n_explicit must be >= 0, not {n_explicit}")
    hartree = (base_model_hartree + (n_explicit + 1) * reference_acid_hartree
               - reference_model_hartree - (n_explicit + 1) * acid_hartree)
    return hartree * KCAL_MOL_PER_HARTREE


def relative_pka(exchange_kcal_mol: float, temperature_K: float) -> float:
    """Return pKa(ROH) - pKa(R'OH) (pKa units) from the exchange energy (kcal/mol) at a temperature (K)."""
    if temperature_K <= 0:
        raise ValueError(f"temperature must be positive, not {temperature_K} K")
    return exchange_kcal_mol / (BOLTZMANN_KCAL_MOL_PER_K * temperature_K * math.log(10.0))
