"""Held internal coordinates for ASE optimisers: ASE's FixInternals with a cheaper force projection.

ASE's ``FixInternals.adjust_forces`` builds a dense 3N x 3N projector from outer products and applies it
twice on every ``get_forces`` call, and ASE's optimisers ask for the forces of one geometry three times a
step (log, convergence test, step). ``ProjectedInternals`` removes the same subspace (the constraint
gradients plus the six rigid-body motions, orthonormalised by the same QR) with two matrix-vector products,
and keeps the last projection so a repeated call for the same positions and forces costs a comparison. The
positions are still held by ASE's own iteration (``adjust_positions`` is not touched). No file I/O.
"""

from __future__ import annotations

import numpy as np
from ase.constraints import FixInternals


def rigid_body_directions(positions_A: np.ndarray) -> np.ndarray:
    """Return the six unit translation and rotation directions (about the unweighted centre), shape (6, 3N)."""
    n = len(positions_A)
    centre = positions_A.sum(axis=0) / n
    r = positions_A - centre
    rigid = np.zeros((6, n, 3))
    rigid[0, :, 0] = rigid[1, :, 1] = rigid[2, :, 2] = 1.0
    rigid[3, :, 1], rigid[3, :, 2] = -r[:, 2], r[:, 1]
    rigid[4, :, 0], rigid[4, :, 2] = r[:, 2], -r[:, 0]
    rigid[5, :, 0], rigid[5, :, 1] = -r[:, 1], r[:, 0]
    rigid = rigid.reshape(6, 3 * n)
    return rigid / np.linalg.norm(rigid, axis=1)[:, None]


class ProjectedInternals(FixInternals):
    """ASE ``FixInternals`` (same held coordinates, same position correction) with a cached, matrix-free force
    projection: the forces lose their components along the constraint gradients and the rigid-body motions."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self._last: tuple[bytes, bytes, np.ndarray] | None = None

    def adjust_forces(self, atoms, forces: np.ndarray) -> None:
        """Project ``forces`` (eV/Å, changed in place) onto the motions that keep every held coordinate fixed."""
        self.initialize(atoms)
        positions = atoms.positions
        key_positions, key_forces = positions.tobytes(), forces.tobytes()
        if self._last is not None and self._last[0] == key_positions and self._last[1] == key_forces:
            forces[:, :] = self._last[2]
            return
        columns = []
        for constraint in self.constraints:  # as ASE does: each sub-constraint's Jacobian, set up and normalised
            constraint.setup_jacobian(positions)
            constraint.adjust_forces(positions, forces)
            columns.insert(0, constraint.jacobian.ravel())
        basis = np.column_stack(columns + list(rigid_body_directions(positions)))
        q, _ = np.linalg.qr(basis)
        flat = forces.ravel()
        forces[:, :] = (flat - q @ (q.T @ flat)).reshape(-1, 3)
        self._last = (key_positions, key_forces, forces.copy())
