"""The cheaper force projection of held internal coordinates against ASE's own FixInternals (fast tier)."""

from __future__ import annotations

import numpy as np
from ase.constraints import FixInternals

from elimscan.config import OptimizerConfig
from elimscan.drivers.constraints import ProjectedInternals
from elimscan.drivers.relax import HeldDihedral, HeldDistance, HeldDistanceSum, relax
from toyengine import SpringTorsionEngine

# held coordinates of an E2 path point on ethanol's atoms (RDKit order of "CCO": C0, C1, O2, H3-H8):
# a bond, a dihedral and a three-term distance combination, as drive_path holds them
HELD = dict(bonds=[[None, [0, 1]]], dihedrals_deg=[[None, [3, 0, 1, 2]]],
            bondcombos=[[None, [[1, 6, 1.0], [2, 6, -1.0], [0, 1, 1.0]]]])


def test_projected_forces_equal_ase_fixinternals_and_a_repeat_is_served_from_the_last_call(embed, rng):
    # ASE's FixInternals (the reference: ase/constraints/fix_internals.py) removes the span of the constraint
    # Jacobians and the six rigid-body motions; the matrix-free projection must give the same forces
    atoms = embed("CCO")
    atoms.positions += rng.normal(0.0, 0.05, atoms.positions.shape)
    ours, theirs = atoms.copy(), atoms.copy()
    ours.set_constraint(ProjectedInternals(**HELD))
    theirs.set_constraint(FixInternals(**HELD))
    for _ in range(5):
        raw = rng.normal(size=atoms.positions.shape)
        mine, reference = raw.copy(), raw.copy()
        ours.constraints[0].adjust_forces(ours, mine)
        theirs.constraints[0].adjust_forces(theirs, reference)
        assert np.abs(mine - reference).max() < 1e-12
        assert np.abs(mine).max() > 0.1  # the projection did not remove everything
        again = raw.copy()
        ours.constraints[0].adjust_forces(ours, again)
        assert np.array_equal(again, mine)


def test_a_held_bfgs_relaxation_takes_the_same_steps_as_with_ase_fixinternals(embed, monkeypatch):
    # the toy engine gives the same energy surface to both runs: same step count and same end geometry
    from elimscan.drivers import relax as relax_module

    atoms = embed("CCO")
    toy = SpringTorsionEngine(atoms, torsion_barrier_eV=0.01)
    held = [HeldDistance((0, 1), 1.60), HeldDihedral((3, 0, 1, 2), 100.0),
            HeldDistanceSum(((1, 6, 1.0), (2, 6, -1.0)), 0.1)]
    settings = OptimizerConfig(name="bfgs", fmax_eV_per_A=1e-3)
    ours = relax(atoms, toy.calculator(), held, settings)
    monkeypatch.setattr(relax_module, "ProjectedInternals", FixInternals)
    theirs = relax(atoms, toy.calculator(), held, settings)
    assert ours.converged and theirs.converged
    assert ours.n_steps == theirs.n_steps
    assert np.abs(ours.atoms.positions - theirs.atoms.positions).max() < 1e-8
