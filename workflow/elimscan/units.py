"""Unit conversion constants, taken from ase.units (CODATA 2014), never typed by hand."""

from __future__ import annotations

from ase import units as _ase_units

#: kcal/mol per hartree (about 627.509)
KCAL_MOL_PER_HARTREE: float = _ase_units.Hartree / (_ase_units.kcal / _ase_units.mol)
#: eV per hartree
EV_PER_HARTREE: float = _ase_units.Hartree
#: kcal/mol per eV
KCAL_MOL_PER_EV: float = 1.0 / (_ase_units.kcal / _ase_units.mol)
#: Å per bohr
ANGSTROM_PER_BOHR: float = _ase_units.Bohr
#: Boltzmann constant in hartree per kelvin
BOLTZMANN_HARTREE_PER_K: float = _ase_units.kB / _ase_units.Hartree
#: Boltzmann constant in kcal/mol per kelvin
BOLTZMANN_KCAL_MOL_PER_K: float = _ase_units.kB * KCAL_MOL_PER_EV

# CODATA 2018 (exact in the 2019 SI; Tiesinga et al., Rev. Mod. Phys. 2021, 93, 025010), for the Eyring
# conversion of measured rate constants (analysis/benchmark_scoring.py); from ase.units' table, not typed.
_CODATA_2018 = _ase_units.CODATA["2018"]
#: Boltzmann constant (J/K), CODATA 2018
BOLTZMANN_J_PER_K_2018: float = _CODATA_2018["_k"]
#: Planck constant (J s), CODATA 2018
PLANCK_J_S_2018: float = _CODATA_2018["_hplanck"]
#: Avogadro constant (1/mol), CODATA 2018
AVOGADRO_PER_MOL_2018: float = _CODATA_2018["_Nav"]
#: joules per kilocalorie (thermochemical calorie, 4.184 J; the ratio of ase.units' kcal and J)
J_PER_KCAL: float = _ase_units.kcal / _ase_units.J
