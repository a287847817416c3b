"""Free energies of barriers and primary kinetic isotope effects from the Hessians the tool already has.

The saddle's Hessian comes from its verification; the free substrate (lowest conformer) and the free base
each get one finite-difference Hessian (6N+1 gradients). Free energies: quasi-RRHO at the configured
temperature, standard state 1 M, rotational symmetry numbers 1 (path degeneracy counts symmetry once).
Isotope effects: Bigeleisen-Mayer from the real frequencies of the free substrate and the saddle with
isotopic masses; the base carries no label and cancels. The engine is passed in; no file I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from ase import Atoms

from elimscan.drivers.hessian import finite_difference_hessian, harmonic_analysis
from elimscan.analysis.thermo import IsotopeEffect, Thermo, bigeleisen_mayer, thermochemistry

#: mass of deuterium (amu; IUPAC/CIAAW atomic mass of 2H)
DEUTERIUM_AMU = 2.01410177812
#: in a minimum, imaginary modes weaker than this (cm^-1) are numerical noise and count as real
NOISE_IMAGINARY_CM1 = 50.0


@dataclass(frozen=True)
class MinimumHessian:
    """A relaxed structure (Å), its electronic energy (hartree) and its Hessian (eV/Å^2)."""

    atoms: Atoms
    energy_hartree: float
    hessian_eV_A2: np.ndarray
    n_gradients: int


def minimum_hessian(atoms: Atoms, energy_hartree: float, engine, charge: int, multiplicity: int,
                    step_A: float, name: str = "minimum") -> MinimumHessian:
    """Return the finite-difference Hessian (eV/Å²) of a relaxed structure with its energy (hartree)."""
    hessian, n = finite_difference_hessian(atoms, engine.calculator(charge, multiplicity, name=f"{name} hessian"), step_A)
    return MinimumHessian(atoms.copy(), energy_hartree, hessian, n)


def _real_frequencies(hessian: np.ndarray, atoms: Atoms, masses: np.ndarray | None, drop_imaginary: int) -> np.ndarray:
    """Return real frequencies (cm^-1): the ``drop_imaginary`` most imaginary modes removed, weak noise made positive."""
    frequencies = harmonic_analysis(hessian, atoms, masses).frequencies_cm1
    kept = np.sort(frequencies)[drop_imaginary:]
    if np.any(kept < -NOISE_IMAGINARY_CM1):
        raise ValueError(f"an imaginary mode of {-kept.min():.0f}i cm^-1 remains: not a minimum (or not a first-order saddle)")
    return np.abs(kept)


def molecule_thermo(minimum: MinimumHessian, temperature_K: float, multiplicity: int = 1,
                    switching_cm1: float | None = 100.0) -> Thermo:
    """Return quasi-RRHO free-energy terms (hartree) of a minimum at ``temperature_K``."""
    nu = _real_frequencies(minimum.hessian_eV_A2, minimum.atoms, None, 0)
    return thermochemistry(minimum.atoms, nu, minimum.energy_hartree, temperature_K, multiplicity, 1, "1M", switching_cm1)


def saddle_thermo(atoms: Atoms, energy_hartree: float, hessian: np.ndarray, temperature_K: float,
                  multiplicity: int = 1, switching_cm1: float | None = 100.0) -> Thermo:
    """Return quasi-RRHO free-energy terms (hartree) of a first-order saddle (its imaginary mode left out)."""
    nu = _real_frequencies(hessian, atoms, None, 1)
    return thermochemistry(atoms, nu, energy_hartree, temperature_K, multiplicity, 1, "1M", switching_cm1)


def _isotopic_masses(atoms: Atoms, heavy: tuple[int, ...]) -> np.ndarray:
    masses = atoms.get_masses().copy()
    for i in heavy:
        if atoms.numbers[i] != 1:
            raise ValueError(f"atom {i} is not a hydrogen: only H -> D labels are supported")
        masses[i] = DEUTERIUM_AMU
    return masses


def isotope_effect(substrate: MinimumHessian, saddle_atoms: Atoms, saddle_hessian: np.ndarray,
                   deuterated: tuple[int, ...], temperature_K: float) -> IsotopeEffect:
    """Return k_H/k_D for deuterium at ``deuterated`` (indices shared by substrate and saddle complex)."""
    reactant_h = _real_frequencies(substrate.hessian_eV_A2, substrate.atoms, None, 0)
    reactant_d = _real_frequencies(substrate.hessian_eV_A2, substrate.atoms, _isotopic_masses(substrate.atoms, deuterated), 0)
    light = harmonic_analysis(saddle_hessian, saddle_atoms).frequencies_cm1
    heavy = harmonic_analysis(saddle_hessian, saddle_atoms, _isotopic_masses(saddle_atoms, deuterated)).frequencies_cm1
    saddle_h = np.abs(np.sort(light)[1:])
    saddle_d = np.abs(np.sort(heavy)[1:])
    return bigeleisen_mayer(reactant_h, reactant_d, saddle_h, saddle_d, float(-np.sort(light)[0]),
                            float(-np.sort(heavy)[0]), temperature_K)
