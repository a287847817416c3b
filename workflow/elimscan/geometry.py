"""Pure numpy geometry: distances, dihedrals on (-180, 180] degrees and their gradients, RMSD.

Lengths in Å, angles in degrees unless a name says radians.
"""

from __future__ import annotations

import numpy as np


def wrap_degrees(angle_deg: float) -> float:
    """Return an angle in degrees mapped onto (-180, 180]."""
    wrapped = (angle_deg + 180.0) % 360.0 - 180.0
    return 180.0 if wrapped == -180.0 else float(wrapped)


def distance(positions: np.ndarray, i: int, j: int) -> float:
    """Return the distance between atoms i and j (Å)."""
    return float(np.linalg.norm(positions[j] - positions[i]))


def dihedral_deg(positions: np.ndarray, a: int, b: int, c: int, d: int) -> float:
    """Return the a-b-c-d dihedral angle in degrees on (-180, 180] (IUPAC sign convention)."""
    p = np.asarray(positions, dtype=float)
    b0, b1, b2 = p[a] - p[b], p[c] - p[b], p[d] - p[c]
    b1n = b1 / np.linalg.norm(b1)
    v = b0 - np.dot(b0, b1n) * b1n
    w = b2 - np.dot(b2, b1n) * b1n
    x = np.dot(v, w)
    y = np.dot(np.cross(b1n, v), w)
    return wrap_degrees(float(np.degrees(np.arctan2(y, x))))


def dihedral_gradient_rad(positions: np.ndarray, a: int, b: int, c: int, d: int) -> np.ndarray:
    """Return d(phi)/d(positions) in rad/Å as an (n, 3) array, for the a-b-c-d dihedral phi.

    Blondel & Karplus, J. Comput. Chem. 1996, 17, 1132 (the singularity-free form).
    """
    p = np.asarray(positions, dtype=float)
    f, g, h = p[a] - p[b], p[b] - p[c], p[d] - p[c]
    cross_a, cross_b = np.cross(f, g), np.cross(h, g)
    a2, b2 = np.dot(cross_a, cross_a), np.dot(cross_b, cross_b)
    gn = np.linalg.norm(g)
    grad = np.zeros_like(p)
    grad[a] = -gn / a2 * cross_a
    grad[d] = gn / b2 * cross_b
    grad[b] = gn / a2 * cross_a + np.dot(f, g) / (a2 * gn) * cross_a - np.dot(h, g) / (b2 * gn) * cross_b
    grad[c] = -gn / b2 * cross_b - np.dot(f, g) / (a2 * gn) * cross_a + np.dot(h, g) / (b2 * gn) * cross_b
    return grad


def classify_dihedral(angle_deg: float, anti_min_deg: float = 150.0, syn_max_deg: float = 30.0) -> str:
    """Return 'anti' (|angle| >= anti_min_deg), 'syn' (|angle| <= syn_max_deg) or 'gauche'."""
    magnitude = abs(wrap_degrees(angle_deg))
    if magnitude >= anti_min_deg:
        return "anti"
    if magnitude <= syn_max_deg:
        return "syn"
    return "gauche"


def kabsch_rmsd(p: np.ndarray, q: np.ndarray) -> float:
    """Return the RMSD (Å) of two equally ordered point sets after optimal superposition."""
    p = np.asarray(p, dtype=float) - np.mean(p, axis=0)
    q = np.asarray(q, dtype=float) - np.mean(q, axis=0)
    u, s, vt = np.linalg.svd(p.T @ q)
    sign = np.sign(np.linalg.det(u @ vt)) or 1.0
    s[-1] *= sign
    msd = (np.sum(p * p) + np.sum(q * q) - 2.0 * np.sum(s)) / len(p)
    return float(np.sqrt(max(msd, 0.0)))
