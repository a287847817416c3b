"""Constrained relaxation: the toy tier (milliseconds, answers in closed form) and the GFN2-xTB tier."""

from __future__ import annotations

import numpy as np
import pytest

from elimscan.config import OptimizerConfig
from elimscan.errors import OptimizationError
from elimscan.geometry import dihedral_deg, distance
from elimscan.drivers.relax import HeldDihedral, HeldDistance, HeldDistanceSum, relax
from toyengine import SpringTorsionEngine
from elimscan.units import EV_PER_HARTREE, KCAL_MOL_PER_HARTREE

# Ethane: atoms 0, 1 are C; 2-4 on C0, 5-7 on C1 (RDKit order for SMILES "CC").
HCCH = (2, 0, 1, 5)
BFGS = OptimizerConfig(name="bfgs")
TIGHT = OptimizerConfig(name="bfgs", fmax_eV_per_A=1e-4)
TIGHTER = OptimizerConfig(name="bfgs", fmax_eV_per_A=1e-5)


@pytest.fixture(scope="module")
def ethane(embed):
    return embed("CC")


def test_toy_relaxation_holds_a_dihedral_and_finds_the_analytic_energy(ethane):
    # Toy model: 9 H-C-C-H torsions of V3/2 (1 + cos 3 phi), all in phase; held at 0 deg (eclipsed)
    # the torsional energy is 9 V3 (closed form), and the springs relax to ~0.
    toy = SpringTorsionEngine(ethane, torsion_barrier_eV=0.005)
    staggered = relax(ethane, toy.calculator(), (), TIGHT)
    start = dihedral_deg(staggered.atoms.positions, *HCCH)
    # approach eclipsed in 20-degree steps, each a held relaxation
    atoms = staggered.atoms
    for target in np.linspace(start, 0.0, 10)[1:]:
        atoms = relax(atoms, toy.calculator(), [HeldDihedral(HCCH, float(target))], TIGHT).atoms
    eclipsed = relax(atoms, toy.calculator(), [HeldDihedral(HCCH, 0.0)], TIGHTER)
    barrier_eV = (eclipsed.energy_hartree - staggered.energy_hartree) * EV_PER_HARTREE
    assert abs(dihedral_deg(eclipsed.atoms.positions, *HCCH)) < 0.01
    assert barrier_eV == pytest.approx(9 * 0.005, rel=0.02)


def test_toy_relaxation_holds_a_distance_and_a_distance_combination(ethane):
    toy = SpringTorsionEngine(ethane)
    held = relax(ethane, toy.calculator(), [HeldDistance((0, 1), 1.60)], BFGS)
    assert distance(held.atoms.positions, 0, 1) == pytest.approx(1.60, abs=1e-4)
    combo = HeldDistanceSum(((0, 2, 1.0), (0, 1, -1.0)), -0.40)
    moved = relax(ethane, toy.calculator(), [combo], BFGS)
    assert combo.value(moved.atoms.positions) == pytest.approx(-0.40, abs=1e-4)
    assert moved.max_constraint_error < 1e-4


def test_a_reused_calculator_is_restored_after_each_relaxation(ethane):
    # Scans and paths relax many points with one calculator: each relaxation counts only its own calls and
    # leaves the calculator as it found it (no wrapper stacked per point).
    toy = SpringTorsionEngine(ethane)
    calc = toy.calculator()
    moved = ethane.copy()
    moved.positions[2] += (0.2, 0.0, 0.0)
    first = relax(moved, calc, (), BFGS)
    assert "calculate" not in vars(calc)
    before = toy.stats.misses
    second = relax(moved, calc, (), BFGS)
    assert "calculate" not in vars(calc)
    assert first.n_gradients > 1 and second.n_gradients == first.n_gradients
    assert toy.stats.misses - before == second.n_gradients


@pytest.mark.parametrize("optimizer", ["sella", "sella-cartesian"])
def test_sella_refuses_a_distance_combination(ethane, optimizer):
    toy = SpringTorsionEngine(ethane)
    with pytest.raises(OptimizationError, match="linear combination"):
        relax(ethane, toy.calculator(), [HeldDistanceSum(((0, 2, 1.0), (0, 1, -1.0)))], OptimizerConfig(name=optimizer))


def test_step_limit_is_reported(ethane):
    toy = SpringTorsionEngine(ethane)
    stretched = ethane.copy()
    stretched.positions[0] += 0.3
    one_step = OptimizerConfig(name="bfgs", max_steps=1)
    result = relax(stretched, toy.calculator(), (), one_step)
    assert not result.converged and result.n_steps == 1
    with pytest.raises(OptimizationError, match="did not converge in 1 steps"):
        relax(stretched, toy.calculator(), (), one_step, raise_on_step_limit=True)


@pytest.mark.xtb
@pytest.mark.parametrize("optimizer", ["bfgs", "sella", "sella-cartesian"])
def test_gfn2_relaxation_holds_dihedral_and_distance(embed, gfn2_gas, optimizer):
    # The tolerances: dihedral held to 0.01 deg, distance to 1e-4 Å, with GFN2-xTB forces.
    atoms = embed("CC(Cl)CC")  # 2-chlorobutane; H on C3 is atom 9 or later
    hcccl = (9, 3, 1, 2) if atoms.numbers[9] == 1 else None
    assert hcccl is not None
    start = relax(atoms, gfn2_gas.calculator(), ())
    target = dihedral_deg(start.atoms.positions, *hcccl) + 10.0
    held = relax(start.atoms, gfn2_gas.calculator(), [HeldDihedral(hcccl, target), HeldDistance((1, 2), 1.85)],
                 OptimizerConfig(name=optimizer))
    assert held.converged
    assert abs(((dihedral_deg(held.atoms.positions, *hcccl) - target + 180) % 360) - 180) < 0.01
    assert distance(held.atoms.positions, 1, 2) == pytest.approx(1.85, abs=1e-4)


@pytest.mark.xtb
def test_ethane_rotation_barrier_against_experiment(embed, gfn2_gas):
    # Experimental ethane rotation barrier 2.88 kcal/mol (as cited by Quijano-Quiñones et al.,
    # Molecules 2012, 17, 4661); GFN2-xTB within 0.6 kcal/mol.
    staggered = relax(embed("CC"), gfn2_gas.calculator(), ())
    eclipsed = relax(staggered.atoms, gfn2_gas.calculator(), [HeldDihedral(HCCH, 0.0)])
    barrier = (eclipsed.energy_hartree - staggered.energy_hartree) * KCAL_MOL_PER_HARTREE
    assert barrier == pytest.approx(2.88, abs=0.6)


def test_rigid_rotation_only_for_acyclic_bonds(embed):
    from elimscan.drivers.relax import rotate_to_dihedral

    butane = embed("CCCC")
    quad = (0, 1, 2, 3)
    assert rotate_to_dihedral(butane, quad, 65.0)
    assert dihedral_deg(butane.positions, *quad) == pytest.approx(65.0, abs=1e-6)
    # bond lengths on both sides are untouched by a rigid rotation
    assert butane.get_distance(0, 1) == pytest.approx(embed("CCCC").get_distance(0, 1), abs=1e-9)
    ring = embed("C1CCCCC1")
    before = ring.positions.copy()
    assert not rotate_to_dihedral(ring, (0, 1, 2, 3), 180.0)
    assert (ring.positions == before).all()


class _TurnsNonFinite:
    """A toy calculator that returns NaN forces from its ``after``-th call on (a numerical breakdown)."""

    def __init__(self, toy, after: int):
        self.inner, self.after, self.calls = toy.calculator(), after, 0

    def wrap(self):
        from ase.calculators.calculator import Calculator, all_changes

        outer = self

        class Wrapped(Calculator):
            implemented_properties = ["energy", "free_energy", "forces"]

            def calculate(self, atoms=None, properties=None, system_changes=all_changes):
                super().calculate(atoms, properties or ["energy"], system_changes)
                outer.calls += 1
                energy = outer.inner.get_property("energy", self.atoms.copy())
                forces = outer.inner.get_property("forces", self.atoms.copy()).copy()
                if outer.calls >= outer.after:
                    forces[0, 0] = np.nan
                self.results = {"energy": energy, "free_energy": energy, "forces": forces}

        return Wrapped()


def test_a_numerical_breakdown_inside_sella_is_a_failed_optimisation(ethane):
    # seen on 2026-12-02 with ddX-CPCM: a non-finite number reached Sella's Hessian update and scipy raised
    # ValueError("array must not contain infs or NaNs"), which crashed the whole job instead of one path
    moved = ethane.copy()
    moved.positions[2] += (0.3, -0.2, 0.1)  # far from the minimum: several steps are needed
    calc = _TurnsNonFinite(SpringTorsionEngine(ethane), after=3).wrap()
    with pytest.raises(OptimizationError, match="sella optimisation failed"):
        relax(moved, calc, (), OptimizerConfig(name="sella"))


def test_a_non_finite_engine_result_is_retried_then_an_engine_error(ethane, monkeypatch):
    from elimscan.engines.xtb import EngineSettings, XtbEngine
    from elimscan.errors import EngineError

    class NanSeries:
        def compute(self, positions_bohr):
            return float("nan"), np.zeros_like(positions_bohr)

    engine = XtbEngine(EngineSettings())
    monkeypatch.setattr(engine, "_new_series", lambda *args: NanSeries())
    with pytest.raises(EngineError, match="non-finite energy or gradient") as caught:
        engine.single_point(ethane, name="ethane test structure")
    assert "ethane test structure" in str(caught.value)
    assert engine.stats.retries == 1  # once more at the higher electronic temperature, as for an SCF failure
    with pytest.raises(EngineError):  # and a relaxation on it stops with our error, not a scipy one
        relax(ethane, engine.calculator(name="ethane"), (), OptimizerConfig(name="sella"))


def test_sella_goes_on_in_cartesians_after_too_many_rebuilds_of_its_internals(ethane, monkeypatch):
    # Seen 2026-12-04 (validation/VALIDATION-fast.md run): a three-ethanol SN2 complex made Sella 2.6 rebuild its
    # internal coordinates at almost every step, each rebuild compiling them anew (about 15 s a step). Here every
    # step is declared bad: with internal_rebuild_limit 2, the third rebuild hands the relaxation to Sella's
    # Cartesian mode, which must still hold the dihedral and reach the closed-form energy (9 V3 above staggered,
    # as in the first test of this file).
    from sella import Sella
    from sella.internal import Internals

    rebuilt = []
    rebuild = Sella._rebuild_after_bad_internals

    def counted_rebuild(self):
        rebuilt.append(self.nsteps)
        return rebuild(self)

    def always_bad(self):
        return {"bonds": [], "angles": ["forced"]}

    toy = SpringTorsionEngine(ethane, torsion_barrier_eV=0.005)
    staggered = relax(ethane, toy.calculator(), (), TIGHT)
    near = relax(staggered.atoms, toy.calculator(), [HeldDihedral(HCCH, 20.0)], TIGHT).atoms
    monkeypatch.setattr(Internals, "check_for_bad_internals", always_bad)
    monkeypatch.setattr(Sella, "_rebuild_after_bad_internals", counted_rebuild)
    limited = OptimizerConfig(name="sella", fmax_eV_per_A=1e-4, internal_rebuild_limit=2, max_steps=300)
    steps = []
    result = relax(near, toy.calculator(), [HeldDihedral(HCCH, 0.0)], limited, on_step=lambda k, e: steps.append(k))
    assert len(rebuilt) == 3  # the third rebuild is the one past the limit: no internal step after it
    assert result.converged and abs(dihedral_deg(result.atoms.positions, *HCCH)) < 0.01
    barrier_eV = (result.energy_hartree - staggered.energy_hartree) * EV_PER_HARTREE
    assert barrier_eV == pytest.approx(9 * 0.005, rel=0.02)
    assert steps == sorted(steps) and result.n_steps == steps[-1], (steps, result.n_steps)  # one count, both modes
