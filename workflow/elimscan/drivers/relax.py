"""Geometry relaxation with held internal coordinates, behind one call for three optimisers.

Part of the engine layer but backend-agnostic: it drives any ASE calculator (GFN2-xTB from
``engine.py`` or the toy model). Held coordinates: dihedrals, distances and linear combinations
of distances. ``bfgs`` uses ASE BFGS with ``FixInternals`` (all three kinds; its force projection made
cheaper in ``constraints``); ``sella`` uses Sella in internal coordinates (``sella-cartesian``: in Cartesians)
with its own constraints, which hold dihedrals and distances but no linear combination of distances (Sella 2.6
has no such constraint type), so a combination is refused there.
"""

from __future__ import annotations

import logging
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np
from ase import Atoms
from ase.calculators.calculator import Calculator
from ase.neighborlist import NeighborList, natural_cutoffs
from ase.optimize import BFGS

from elimscan.config import OptimizerConfig
from elimscan.drivers.constraints import ProjectedInternals
from elimscan.errors import EngineError, OptimizationError
from elimscan.geometry import dihedral_deg, distance, wrap_degrees
from elimscan.units import EV_PER_HARTREE

log = logging.getLogger(__name__)


@dataclass(frozen=True)
class HeldDihedral:
    """Hold the a-b-c-d dihedral at ``target_deg`` (None: at its current value)."""

    atoms: tuple[int, int, int, int]
    target_deg: float | None = None


@dataclass(frozen=True)
class HeldDistance:
    """Hold the i-j distance at ``target_A`` (None: at its current value)."""

    atoms: tuple[int, int]
    target_A: float | None = None


@dataclass(frozen=True)
class HeldDistanceSum:
    """Hold sum(coef * d(i, j)) at ``target_A`` (None: at its current value); terms are (i, j, coef)."""

    terms: tuple[tuple[int, int, float], ...]
    target_A: float | None = None

    def value(self, positions: np.ndarray) -> float:
        """Return the current value of the combination (Å)."""
        return float(sum(coef * distance(positions, i, j) for i, j, coef in self.terms))


Held = HeldDihedral | HeldDistance | HeldDistanceSum


@dataclass(frozen=True)
class RelaxResult:
    """Outcome of one relaxation: final atoms, energy (hartree), gradient calls, steps, convergence."""

    atoms: Atoms
    energy_hartree: float
    n_gradients: int
    n_steps: int
    converged: bool
    max_constraint_error: float
    #: the BFGS Hessian model at the end (eV/Å^2, 3N x 3N; None for Sella or when no step was taken), for
    #: ``relax(..., start_hessian=...)`` to go on from where this relaxation stopped
    hessian_eV_A2: np.ndarray | None = field(default=None, repr=False, compare=False)


def constraint_error(positions: np.ndarray, held: Held, target: float) -> float:
    """Return |value - target| of a held coordinate (degrees for dihedrals, Å otherwise)."""
    if isinstance(held, HeldDihedral):
        return abs(wrap_degrees(dihedral_deg(positions, *held.atoms) - target))
    if isinstance(held, HeldDistance):
        return abs(distance(positions, *held.atoms) - target)
    return abs(held.value(positions) - target)


def _targets(atoms: Atoms, held: Sequence[Held]) -> list[float]:
    """Return the target value of each held coordinate (current value where none is given)."""
    values = []
    for item in held:
        if isinstance(item, HeldDihedral):
            values.append(item.target_deg if item.target_deg is not None else dihedral_deg(atoms.positions, *item.atoms))
        elif isinstance(item, HeldDistance):
            values.append(item.target_A if item.target_A is not None else distance(atoms.positions, *item.atoms))
        else:
            values.append(item.target_A if item.target_A is not None else item.value(atoms.positions))
    return values


def _side_of_bond(atoms: Atoms, b: int, c: int) -> list[int] | None:
    """Return the atoms on c's side of the b-c bond (covalent-radius bonds), or None if b-c is in a ring."""
    cutoffs = natural_cutoffs(atoms, mult=1.1)
    nl = NeighborList(cutoffs, self_interaction=False, bothways=True)
    nl.update(atoms)
    seen, stack = {c}, [c]
    while stack:
        atom = stack.pop()
        for nb in nl.get_neighbors(atom)[0]:
            if atom == c and nb == b:
                continue
            if nb == b:
                return None
            if nb not in seen:
                seen.add(nb)
                stack.append(int(nb))
    return sorted(seen)


def rotate_to_dihedral(atoms: Atoms, indices: tuple[int, int, int, int], target_deg: float) -> bool:
    """Rotate the d-side fragment of an acyclic b-c bond so the dihedral is ``target_deg``; return success."""
    a, b, c, d = indices
    side = _side_of_bond(atoms, b, c)
    if side is None:
        return False
    mask = np.zeros(len(atoms), dtype=bool)
    mask[side] = True
    atoms.set_dihedral(a, b, c, d, target_deg % 360.0, mask=mask)
    return True


def _fix_internals(held: Sequence[Held], targets: Sequence[float]) -> ProjectedInternals:
    """Return a FixInternals with the cheaper force projection (``constraints``) holding each coordinate at its target."""
    bonds, dihedrals, combos = [], [], []
    for item, target in zip(held, targets):
        if isinstance(item, HeldDihedral):
            dihedrals.append([target % 360.0, list(item.atoms)])
        elif isinstance(item, HeldDistance):
            bonds.append([target, list(item.atoms)])
        else:
            combos.append([target, [[i, j, coef] for i, j, coef in item.terms]])
    return ProjectedInternals(bonds=bonds or None, dihedrals_deg=dihedrals or None, bondcombos=combos or None)


class _Counter:
    """Counts the calls of a calculator's calculate() inside a ``with`` block, then restores the calculator."""

    def __init__(self, calc: Calculator):
        self.calls = 0
        self._calc = calc
        self._own = vars(calc).get("calculate")  # an instance-level calculate (e.g. a test's wrapper), else None

    def __enter__(self) -> "_Counter":
        original = self._calc.calculate

        def counted(*args, **kwargs):
            self.calls += 1
            return original(*args, **kwargs)

        self._calc.calculate = counted  # type: ignore[method-assign]
        return self

    def __exit__(self, *exc_info) -> None:
        if self._own is None:
            del self._calc.calculate
        else:
            self._calc.calculate = self._own  # type: ignore[method-assign]


def relax(
    atoms: Atoms,
    calculator: Calculator,
    held: Sequence[Held] = (),
    settings: OptimizerConfig = OptimizerConfig(),
    on_step: Callable[[int, float], None] | None = None,
    raise_on_step_limit: bool = False,
    start_hessian: np.ndarray | None = None,
) -> RelaxResult:
    """Return the relaxed copy of ``atoms`` (energy in hartree) with the ``held`` coordinates fixed.

    ``settings`` names the optimiser, its convergence and step limit (defaults in config.py).
    A held dihedral more than ``settings.rigid_rotation_above_deg`` from its target is first set by rotating the
    fragment on one side of an acyclic bond; other differences are projected onto the targets at the
    start (keep such moves small, e.g. one scan step). ``on_step(step, energy_hartree)`` reports progress.
    ``start_hessian`` (eV/Å^2, BFGS only) replaces BFGS's fresh model Hessian: pass the ``hessian_eV_A2`` of a
    looser relaxation of the same point to go on from where it stopped.
    """
    work = atoms.copy()
    work.set_constraint()
    work.calc = calculator
    targets = _targets(work, held)
    for item, target in zip(held, targets):
        if isinstance(item, HeldDihedral) and constraint_error(work.positions, item, target) > settings.rigid_rotation_above_deg:
            rotate_to_dihedral(work, item.atoms, target)  # rings cannot rotate rigidly: left to the projection
    optimizer, fmax_eV_per_A, max_steps = settings.name, settings.fmax_eV_per_A, settings.max_steps
    if optimizer not in ("bfgs", "sella", "sella-cartesian"):
        raise ValueError(f"unknown optimizer '{optimizer}' (choose bfgs, sella or sella-cartesian)")
    try:
        with _Counter(calculator) as counter:
            if optimizer == "bfgs":
                steps, converged, hessian = _run_bfgs(work, held, targets, fmax_eV_per_A, max_steps, on_step,
                                                      start_hessian)
            else:
                steps, converged = _run_sella(work, held, targets, fmax_eV_per_A, max_steps, on_step,
                                              internal=optimizer == "sella",
                                              rebuild_limit=settings.internal_rebuild_limit)
                hessian = None
            energy = work.get_potential_energy() / EV_PER_HARTREE
    except EngineError:
        raise
    # numerical breakdown inside the optimiser (e.g. Sella's Hessian update meeting a non-finite number ends
    # in scipy's ValueError "array must not contain infs or NaNs"): a failed optimisation, recorded as data
    except (np.linalg.LinAlgError, RuntimeError, FloatingPointError, ValueError) as err:
        raise OptimizationError(f"{optimizer} optimisation failed: {err}") from err
    error = max((constraint_error(work.positions, h, t) for h, t in zip(held, targets)), default=0.0)
    if raise_on_step_limit and not converged:
        raise OptimizationError(f"{optimizer} optimisation did not converge in {max_steps} steps (fmax {fmax_eV_per_A} eV/Å)")
    result_atoms = work.copy()
    result_atoms.calc = None
    return RelaxResult(result_atoms, float(energy), counter.calls, steps, bool(converged), float(error), hessian)


def _run_bfgs(work: Atoms, held: Sequence[Held], targets: Sequence[float], fmax: float, max_steps: int,
              on_step: Callable[[int, float], None] | None, start_hessian: np.ndarray | None = None
              ) -> tuple[int, bool, np.ndarray | None]:
    """Run ASE BFGS with FixInternals from ``start_hessian`` if given; return (steps, converged, final Hessian
    model in eV/Å^2 or None when no step was taken)."""
    if held:
        work.set_constraint(_fix_internals(held, targets))
        work.set_positions(work.get_positions())  # projects onto the targets
    opt = BFGS(work, logfile=None)
    if start_hessian is not None:
        opt.H0 = np.array(start_hessian, dtype=float)  # read by BFGS's first step, when its model is made
    if on_step is not None:
        opt.attach(lambda: on_step(opt.nsteps, work.get_potential_energy() / EV_PER_HARTREE))
    converged = opt.run(fmax=fmax, steps=max_steps)
    work.set_constraint()
    hessian = None if opt.state is None else np.array(opt.H)
    return opt.nsteps, bool(converged), hessian


def _sella_constraints(work: Atoms, held: Sequence[Held], targets: Sequence[float]):
    """Return Sella's constraints holding ``held`` at ``targets`` (dihedrals in degrees, distances in Å)."""
    from sella import Constraints  # imported here: Sella loads jax, which is slow to start

    constraints = Constraints(work)
    for item, target in zip(held, targets):
        if isinstance(item, HeldDihedral):
            constraints.fix_dihedral(item.atoms, target=wrap_degrees(target))  # Sella takes degrees
        elif isinstance(item, HeldDistance):
            constraints.fix_bond(item.atoms, target=target)
        else:
            raise OptimizationError("Sella cannot hold a linear combination of distances: use optimizer 'bfgs'")
    return constraints


def _run_sella(work: Atoms, held: Sequence[Held], targets: Sequence[float], fmax: float, max_steps: int,
               on_step: Callable[[int, float], None] | None, internal: bool = True,
               rebuild_limit: int | None = None) -> tuple[int, bool]:
    """Run Sella (minimisation, in internal coordinates or Cartesians) with its own constraints; return (steps,
    converged).

    In internal coordinates with ``rebuild_limit``: once Sella has rebuilt its coordinates more than that many
    times, the relaxation goes on in Sella's Cartesian mode from the current geometry for the steps left.
    """
    from sella import Sella

    opt = Sella(work, order=0, internal=internal, constraints=_sella_constraints(work, held, targets), logfile=None)
    if on_step is not None:
        opt.attach(lambda: on_step(opt.nsteps, work.get_potential_energy() / EV_PER_HARTREE))
    if not internal or rebuild_limit is None:
        converged = opt.run(fmax=fmax, steps=max_steps)
        return opt.nsteps, bool(converged)
    rebuilds = _count_rebuilds(opt)
    converged = False
    for converged in opt.irun(fmax=fmax, steps=max_steps):
        if rebuilds.count > rebuild_limit:
            break
    if converged or rebuilds.count <= rebuild_limit or opt.nsteps >= max_steps:
        return opt.nsteps, bool(converged)
    done = opt.nsteps
    more, converged = _run_sella(work, held, targets, fmax, max_steps - done, _on_step_after(on_step, done),
                                 internal=False)
    return done + more, converged


@dataclass
class _Rebuilds:
    """How many times a Sella optimiser rebuilt its internal coordinates."""

    count: int = 0


def _count_rebuilds(opt) -> _Rebuilds:
    """Return a counter of ``opt``'s internal-coordinate rebuilds (wraps Sella 2.6's
    ``_rebuild_after_bad_internals``)."""
    rebuilds, original = _Rebuilds(), opt._rebuild_after_bad_internals

    def counted():
        rebuilds.count += 1
        return original()

    opt._rebuild_after_bad_internals = counted
    return rebuilds


def _on_step_after(on_step: Callable[[int, float], None] | None, offset: int) -> Callable[[int, float], None] | None:
    """Return ``on_step`` with its step numbers shifted by ``offset`` (None stays None)."""
    return None if on_step is None else (lambda step, energy_hartree: on_step(offset + step, energy_hartree))
