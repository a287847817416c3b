"""Finite-difference Hessians (any ASE calculator) and harmonic frequencies (numpy only).

Frequencies in cm^-1; imaginary ones are returned as negative numbers (common practice). Translations and
rotations are projected out of the mass-weighted Hessian before diagonalising.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from ase import Atoms
from ase import units

#: converts sqrt(eigenvalue in eV / (Å^2 amu)) to cm^-1 (from ase.units, as ase.vibrations does)
_SQRT_EV_A2_AMU_TO_CM1 = units._hbar * 1e10 / np.sqrt(units._e * units._amu) / units.invcm


@dataclass(frozen=True)
class Vibrations:
    """Harmonic analysis: frequencies (cm^-1, imaginary negative) and mass-weighted normal modes."""

    frequencies_cm1: np.ndarray
    modes: np.ndarray  # (n_modes, n_atoms, 3) Cartesian displacement directions, each of unit norm
    n_gradients: int

    def imaginary(self, threshold_cm1: float = 0.0) -> np.ndarray:
        """Return the imaginary frequencies beyond ``threshold_cm1`` (as positive numbers, cm^-1)."""
        return -self.frequencies_cm1[self.frequencies_cm1 < -threshold_cm1]


def finite_difference_hessian(atoms: Atoms, calculator, step_A: float = 0.005) -> tuple[np.ndarray, int]:
    """Return the (3N, 3N) Hessian in eV/Å^2 from central differences of forces, and the gradient count (6N + 1)."""
    work = atoms.copy()
    work.calc = calculator
    work.get_forces()  # the reference point: cached by the engine, counted for completeness
    n = len(work)
    hessian = np.zeros((3 * n, 3 * n))
    base = work.positions.copy()
    for i in range(n):
        for k in range(3):
            columns = []
            for sign in (+1, -1):
                work.positions = base
                displaced = base.copy()
                displaced[i, k] += sign * step_A
                work.positions = displaced
                columns.append(-work.get_forces().ravel())
            hessian[:, 3 * i + k] = (columns[0] - columns[1]) / (2 * step_A)
    work.positions = base
    return 0.5 * (hessian + hessian.T), 6 * n + 1


def forward_difference_hessian(atoms: Atoms, calculator, step_A: float = 0.005) -> tuple[np.ndarray, int]:
    """Return a (3N, 3N) Hessian in eV/Å^2 from one-sided differences of forces, and the gradient count (3N + 1).

    Half the gradients of ``finite_difference_hessian`` with an error of first order in the step: good as a
    starting Hessian for a saddle search, never for frequencies.
    """
    work = atoms.copy()
    work.calc = calculator
    reference = work.get_forces().ravel().copy()
    n = len(work)
    hessian = np.zeros((3 * n, 3 * n))
    base = work.positions.copy()
    for i in range(n):
        for k in range(3):
            displaced = base.copy()
            displaced[i, k] += step_A
            work.positions = displaced
            hessian[:, 3 * i + k] = (reference - work.get_forces().ravel()) / step_A
    work.positions = base
    return 0.5 * (hessian + hessian.T), 3 * n + 1


def _rigid_body_vectors(positions: np.ndarray, masses: np.ndarray) -> np.ndarray:
    """Return orthonormal mass-weighted translation and rotation vectors, shape (k, 3N), k = 5 or 6."""
    sqrt_m = np.sqrt(masses)
    centre = (masses[:, None] * positions).sum(axis=0) / masses.sum()
    r = positions - centre
    vectors = []
    for axis in range(3):
        t = np.zeros_like(positions)
        t[:, axis] = sqrt_m
        vectors.append(t.ravel())
    for axis in np.eye(3):
        vectors.append((np.cross(axis, r) * sqrt_m[:, None]).ravel())
    q, s, _ = np.linalg.svd(np.array(vectors).T, full_matrices=False)
    return q[:, s > 1e-6 * s.max()].T


def harmonic_analysis(hessian_eV_A2: np.ndarray, atoms: Atoms, masses: np.ndarray | None = None,
                      n_gradients: int = 0) -> Vibrations:
    """Return frequencies (cm^-1) and normal modes of a Hessian, rigid-body motions projected out.

    ``masses`` (amu) default to the atoms' masses; pass isotopic masses for isotope effects.
    """
    m = np.asarray(atoms.get_masses() if masses is None else masses, dtype=float)
    inv_sqrt = 1.0 / np.sqrt(np.repeat(m, 3))
    mass_weighted = hessian_eV_A2 * inv_sqrt[:, None] * inv_sqrt[None, :]
    rigid = _rigid_body_vectors(atoms.positions, m)
    projector = np.eye(len(mass_weighted)) - rigid.T @ rigid
    projected = projector @ mass_weighted @ projector
    eigenvalues, vectors = np.linalg.eigh(projected)
    # drop the rigid-body eigenvectors: the ones with the largest overlap with the rigid space
    overlap = np.sum((rigid @ vectors) ** 2, axis=0)
    keep = np.argsort(overlap)[: len(eigenvalues) - len(rigid)]
    keep = keep[np.argsort(eigenvalues[keep])]
    values = eigenvalues[keep]
    frequencies = np.sign(values) * np.sqrt(np.abs(values)) * _SQRT_EV_A2_AMU_TO_CM1
    cartesian = (vectors[:, keep] * inv_sqrt[:, None]).T.reshape(len(keep), len(atoms), 3)
    cartesian /= np.linalg.norm(cartesian.reshape(len(keep), -1), axis=1)[:, None, None]
    return Vibrations(frequencies, cartesian, n_gradients)
