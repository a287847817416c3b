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
