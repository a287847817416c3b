"""Ideal-gas thermochemistry with Grimme's quasi-RRHO entropy, and Bigeleisen-Mayer isotope effects.

Pure numpy on frequencies (cm^-1) and geometries; constants from ase.units. Free energies are per molecule
in hartree unless a name says otherwise. Quasi-RRHO: low modes get a free-rotor entropy blended in with
w = 1 / (1 + (nu0 / nu)^4), nu0 = 100 cm^-1, B_av = 1e-44 kg m^2 (Grimme, Chem. Eur. J. 2012, 18, 9955);
enthalpies stay harmonic. Standard state 1 M (or 1 atm / 1 bar on request). Rotational symmetry numbers
default to 1: path degeneracy already counts symmetry once (see analysis.product_fractions).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from ase import Atoms
from ase import units

from elimscan.units import EV_PER_HARTREE

_K = units._k  # J/K
_H = units._hplanck  # J s
_C_CM = units._c * 100.0  # cm/s
_AMU = units._amu  # kg
_NA = units._Nav
_EV = units._e  # J per eV
#: average moment of inertia of the free-rotor model (kg m^2), Grimme 2012
FREE_ROTOR_AVERAGE_MOMENT_KG_M2 = 1e-44


@dataclass(frozen=True)
class Thermo:
    """Free-energy terms of one molecule at one temperature (hartree, except the entropy in hartree/K)."""

    electronic_hartree: float
    zero_point_hartree: float
    enthalpy_hartree: float
    entropy_hartree_per_K: float
    free_energy_hartree: float
    temperature_K: float
    n_low_modes: int


def _x(frequencies_cm1: np.ndarray, temperature_K: float) -> np.ndarray:
    return _H * _C_CM * frequencies_cm1 / (_K * temperature_K)


def harmonic_entropy_J_per_K(frequencies_cm1: np.ndarray, temperature_K: float) -> np.ndarray:
    """Return the harmonic-oscillator entropy of each mode (J/K per molecule)."""
    x = _x(frequencies_cm1, temperature_K)
    return _K * (x / np.expm1(x) - np.log1p(-np.exp(-x)))


def free_rotor_entropy_J_per_K(frequencies_cm1: np.ndarray, temperature_K: float) -> np.ndarray:
    """Return Grimme's free-rotor entropy of each mode (J/K per molecule)."""
    nu = frequencies_cm1 * _C_CM
    mu = _H / (8 * np.pi**2 * nu)
    mu_eff = mu * FREE_ROTOR_AVERAGE_MOMENT_KG_M2 / (mu + FREE_ROTOR_AVERAGE_MOMENT_KG_M2)
    return _K * (0.5 + np.log(np.sqrt(8 * np.pi**3 * mu_eff * _K * temperature_K / _H**2)))


def vibrational_entropy_J_per_K(frequencies_cm1: np.ndarray, temperature_K: float,
                                switching_cm1: float | None = 100.0, alpha: float = 4.0) -> float:
    """Return the vibrational entropy (J/K per molecule), quasi-RRHO unless ``switching_cm1`` is None."""
    s_ho = harmonic_entropy_J_per_K(frequencies_cm1, temperature_K)
    if switching_cm1 is None:
        return float(s_ho.sum())
    w = 1.0 / (1.0 + (switching_cm1 / frequencies_cm1) ** alpha)
    return float(np.sum(w * s_ho + (1 - w) * free_rotor_entropy_J_per_K(frequencies_cm1, temperature_K)))


def _is_linear(atoms: Atoms) -> bool:
    moments = atoms.get_moments_of_inertia()
    return len(atoms) == 2 or moments[0] < 1e-3 * max(moments[2], 1e-12)


def thermochemistry(atoms: Atoms, frequencies_cm1: np.ndarray, electronic_hartree: float, temperature_K: float,
                    multiplicity: int = 1, symmetry_number: int = 1, standard_state: str = "1M",
                    switching_cm1: float | None = 100.0) -> Thermo:
    """Return ideal-gas H, S and G (hartree) from real frequencies (cm^-1; imaginary ones must be removed).

    ``standard_state``: '1M' (1 mol/L), '1atm' or '1bar'. ``switching_cm1`` None gives the plain RRHO.
    """
    nu = np.asarray(frequencies_cm1, dtype=float)
    if np.any(nu <= 0):
        raise ValueError("thermochemistry needs real, positive frequencies: drop the imaginary mode of a saddle first")
    t = temperature_K
    kt = _K * t
    mass = float(atoms.get_masses().sum()) * _AMU
    linear = _is_linear(atoms)
    # energies (J per molecule)
    zpe = 0.5 * _H * _C_CM * float(nu.sum())
    x = _x(nu, t)
    e_vib = float(np.sum(_H * _C_CM * nu / np.expm1(x)))
    e_trans = 1.5 * kt
    e_rot = kt if linear else 1.5 * kt
    enthalpy = zpe + e_vib + e_trans + e_rot + kt  # + pV = kT
    # entropies (J/K per molecule)
    if standard_state == "1M":
        volume = 1.0 / (1000.0 * _NA)  # m^3 per molecule at 1 mol/L
    elif standard_state == "1atm":
        volume = kt / 101325.0
    elif standard_state == "1bar":
        volume = kt / 1e5
    else:
        raise ValueError(f"unknown standard state '{standard_state}' (1M, 1atm, 1bar)")
    s_trans = _K * (np.log((2 * np.pi * mass * kt / _H**2) ** 1.5 * volume) + 2.5)
    moments = atoms.get_moments_of_inertia() * _AMU * 1e-20  # kg m^2
    if linear:
        s_rot = _K * (np.log(8 * np.pi**2 * moments[2] * kt / (symmetry_number * _H**2)) + 1.0)
    else:
        s_rot = _K * (np.log(np.sqrt(np.pi * np.prod(moments)) / symmetry_number
                             * (8 * np.pi**2 * kt / _H**2) ** 1.5) + 1.5)
    s_vib = vibrational_entropy_J_per_K(nu, t, switching_cm1)
    s_elec = _K * np.log(multiplicity)
    entropy = s_trans + s_rot + s_vib + s_elec
    to_hartree = 1.0 / _EV / EV_PER_HARTREE
    h = electronic_hartree + enthalpy * to_hartree
    s = entropy * to_hartree
    low = int(np.sum(nu < (switching_cm1 or 0.0)))
    return Thermo(electronic_hartree, zpe * to_hartree, h, s, h - t * s, t, low)


# --- kinetic isotope effects ----------------------------------------------------------------------


def _bigeleisen_factor(light_cm1: np.ndarray, heavy_cm1: np.ndarray, temperature_K: float) -> float:
    """Return prod (u_L / u_H) sinh(u_H / 2) / sinh(u_L / 2) over matched real modes."""
    u_l, u_h = _x(np.asarray(light_cm1), temperature_K), _x(np.asarray(heavy_cm1), temperature_K)
    return float(np.prod((u_l / u_h) * np.sinh(u_h / 2) / np.sinh(u_l / 2)))


@dataclass(frozen=True)
class IsotopeEffect:
    """k(light)/k(heavy) from harmonic frequencies, with and without Wigner's tunnelling correction."""

    ratio: float
    ratio_wigner: float
    imaginary_light_cm1: float
    imaginary_heavy_cm1: float


def bigeleisen_mayer(reactant_light_cm1: np.ndarray, reactant_heavy_cm1: np.ndarray, saddle_light_cm1: np.ndarray,
                     saddle_heavy_cm1: np.ndarray, imaginary_light_cm1: float, imaginary_heavy_cm1: float,
                     temperature_K: float) -> IsotopeEffect:
    """Return the Bigeleisen-Mayer isotope effect k_L/k_H from real frequencies of reactant and saddle (cm^-1).

    k_L/k_H = (nu_L / nu_H)_imaginary x F(saddle) / F(reactant) with F = prod (u_L/u_H) sinh(u_H/2)/sinh(u_L/2)
    (Bigeleisen & Mayer, J. Chem. Phys. 1947, 15, 261; Teller-Redlich form). Wigner: Q = 1 + (h nu/kT)^2 / 24
    for the imaginary frequency of each isotopologue (Wigner, Z. Phys. Chem. B 1932, 19, 203).
    """
    ratio = (imaginary_light_cm1 / imaginary_heavy_cm1) * _bigeleisen_factor(saddle_light_cm1, saddle_heavy_cm1, temperature_K) \
        / _bigeleisen_factor(reactant_light_cm1, reactant_heavy_cm1, temperature_K)
    q = lambda nu: 1.0 + _x(np.array([nu]), temperature_K)[0] ** 2 / 24.0  # noqa: E731
    return IsotopeEffect(float(ratio), float(ratio * q(imaginary_light_cm1) / q(imaginary_heavy_cm1)),
                         imaginary_light_cm1, imaginary_heavy_cm1)
