"""The engine calculator's cheap change check against ASE's own compare_atoms (fast tier, no GFN2-xTB)."""

from __future__ import annotations

import numpy as np
from ase.calculators.calculator import compare_atoms

from elimscan.engines.contract import GEOMETRY_CHANGES, geometry_changes, geometry_snapshot


def test_geometry_changes_agree_with_ase_compare_atoms(embed):
    # ASE's compare_atoms (ase/calculators/calculator.py) is the reference; ours looks at the four properties an
    # xTB energy depends on, so compare on those
    atoms = embed("CCO")
    stored = geometry_snapshot(atoms)
    cases = {"same": atoms.copy()}
    moved = atoms.copy()
    moved.positions[3, 1] += 1e-6
    cases["moved"] = moved
    below_tolerance = atoms.copy()
    below_tolerance.positions[0, 0] += 1e-16 if abs(atoms.positions[0, 0]) < 0.5 else 0.0
    cases["below tolerance"] = below_tolerance
    swapped = atoms.copy()
    swapped.numbers[[0, 2]] = swapped.numbers[[2, 0]]
    cases["numbers"] = swapped
    boxed = atoms.copy()
    boxed.cell = np.eye(3) * 10.0
    boxed.pbc = True
    cases["cell and pbc"] = boxed
    for label, other in cases.items():
        ours = geometry_changes(stored, other)
        theirs = [c for c in compare_atoms(stored, other) if c in GEOMETRY_CHANGES]
        assert sorted(ours) == sorted(theirs), label
    assert geometry_changes(stored, moved) == ["positions"]
    assert geometry_changes(None, atoms) == list(GEOMETRY_CHANGES)
    assert stored.constraints == [] and stored.calc is None
