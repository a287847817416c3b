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


def ring_torsions_deg(positions: np.ndarray, ring: tuple[int, ...]) -> list[float]:
    """Return the endocyclic torsions (degrees) of a ring given in ring order."""
    n = len(ring)
    return [dihedral_deg(positions, ring[k], ring[(k + 1) % n], ring[(k + 2) % n], ring[(k + 3) % n]) for k in range(n)]


def six_ring_shape(torsions_deg: list[float], chair_min_deg: float = 20.0, boat_flat_deg: float = 15.0) -> str:
    """Return 'chair', 'boat' or 'twist-boat' for a six-membered ring from its six torsions (degrees).

    Chair: torsion signs alternate, each at least ``chair_min_deg`` (ideal +-55 deg). Boat: two opposite
    torsions within ``boat_flat_deg`` of zero. Anything else non-planar is called twist-boat (this also
    covers half-chairs and envelopes met along a forced ring flip). Windows: common practice.
    """
    if len(torsions_deg) != 6:
        raise ValueError("six_ring_shape needs six torsions")
    t = np.asarray(torsions_deg)
    if all(abs(x) >= chair_min_deg for x in t) and all(t[k] * t[(k + 1) % 6] < 0 for k in range(6)):
        return "chair"
    if any(abs(t[k]) < boat_flat_deg and abs(t[k + 3]) < boat_flat_deg for k in range(3)):
        return "boat"
    return "twist-boat"


def ring_normal(positions: np.ndarray, ring: tuple[int, ...]) -> np.ndarray:
    """Return the unit normal of a ring's mean plane (least squares)."""
    points = np.asarray(positions, dtype=float)[list(ring)]
    _, _, vt = np.linalg.svd(points - points.mean(axis=0))
    return vt[2]


def substituent_orientation(positions: np.ndarray, ring: tuple[int, ...], ring_atom: int, substituent: int,
                            axial_min_cos: float = 0.7) -> str:
    """Return 'axial' or 'equatorial' for a ring substituent from the angle of its bond to the ring normal.

    Axial bonds lie nearly parallel to the mean-plane normal (|cos| about 0.95 in a chair), equatorial ones
    nearly in the plane (|cos| about 0.3); ``axial_min_cos`` splits the two (common practice).
    """
    bond = np.asarray(positions[substituent], dtype=float) - np.asarray(positions[ring_atom], dtype=float)
    cos = abs(float(np.dot(bond / np.linalg.norm(bond), ring_normal(positions, ring))))
    return "axial" if cos >= axial_min_cos else "equatorial"


def covalent_neighbours(positions: np.ndarray, radii_A: np.ndarray, index: int, scale: float = 1.2) -> list[int]:
    """Return the atoms (0-based) closer to atom ``index`` than ``scale`` x the sum of their covalent radii (Å)."""
    points = np.asarray(positions, dtype=float)
    radii = np.asarray(radii_A, dtype=float)
    gaps = np.linalg.norm(points - points[index], axis=1)
    return [j for j in range(len(points)) if j != index and gaps[j] < scale * (radii[index] + radii[j])]


def covalent_bonds(positions: np.ndarray, radii_A: np.ndarray, scale: float = 1.2) -> set[tuple[int, int]]:
    """Return the atom pairs (i < j, 0-based) closer than ``scale`` x the sum of their covalent radii (Å)."""
    points = np.asarray(positions, dtype=float)
    radii = np.asarray(radii_A, dtype=float)
    gaps = np.linalg.norm(points[:, None, :] - points[None, :, :], axis=-1)
    near = np.argwhere(np.triu(gaps < scale * (radii[:, None] + radii[None, :]), k=1))
    return {(int(i), int(j)) for i, j in near}


def rotation_matrix(axis: np.ndarray, angle_rad: float) -> np.ndarray:
    """Return the 3 x 3 matrix of a right-handed rotation by ``angle_rad`` (radians) about ``axis`` (any length)."""
    axis = np.asarray(axis, dtype=float) / np.linalg.norm(axis)
    k = np.array([[0, -axis[2], axis[1]], [axis[2], 0, -axis[0]], [-axis[1], axis[0], 0]])
    return np.eye(3) + np.sin(angle_rad) * k + (1 - np.cos(angle_rad)) * k @ k
