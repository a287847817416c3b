"""H-Cβ-Cα-X dihedral scans: constrained relaxations in steps, everything else free.

Acyclic Cβ-Cα bonds get a full turn, as two branches from the start (forward and backward). Ring bonds
cannot turn freely: a ring scan starts from the conformer nearest the target (anti or syn) and steps
toward it and a window past it. A branch stops when a point lies more than the energy cap above the
scan's start, or when a point fails; failed points are data, not crashes. Each point records the shape
of every saturated six-ring, because a ring forced far enough flips or twists. Dihedrals are driven
continuously (targets may pass 180 deg) and reported on (-180, 180]. The engine is passed in.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from ase import Atoms

from elimscan.config import OptimizerConfig, ScanConfig
from elimscan.errors import ElimscanError
from elimscan.geometry import dihedral_deg, wrap_degrees
from elimscan.drivers.relax import HeldDihedral, relax
from elimscan.drivers.conformers import ring_shapes
from elimscan.units import KCAL_MOL_PER_HARTREE


@dataclass(frozen=True)
class ScanPoint:
    """One constrained point: target and measured dihedral (degrees), energy (hartree), status, ring shapes."""

    target_deg: float
    dihedral_deg: float
    energy_hartree: float | None
    status: str  # 'ok' | 'above_cap' | 'failed'
    ring_shapes: tuple[str, ...]
    n_gradients: int
    atoms: Atoms | None
    error: str | None = None


@dataclass(frozen=True)
class DihedralScan:
    """A scan of one dihedral from one start geometry: points ordered by target, and why branches stopped."""

    dihedral_atoms: tuple[int, int, int, int]
    start_label: str
    start_energy_hartree: float
    points: tuple[ScanPoint, ...]
    notes: tuple[str, ...]

    def ok_points(self) -> list[ScanPoint]:
        """Return the points that converged below the cap."""
        return [p for p in self.points if p.status == "ok"]


def branch_plan(start_deg: float, in_ring: bool, settings: ScanConfig, targets: Sequence[float] = (180.0, 0.0)
                ) -> list[tuple[int, int]]:
    """Return the scan branches as (direction +1/-1, number of steps) from a start dihedral (degrees).

    Acyclic: a full turn (forward to start+180, backward to start-180+step). In a ring: for each target,
    toward it and ``ring_window_deg`` past it, plus ``ring_window_deg`` the other way.
    """
    step = settings.step_deg
    if not in_ring:
        half = math.ceil(180.0 / step)
        return [(+1, half), (-1, half - 1)]
    plan: dict[int, int] = {}
    for target in targets:
        delta = wrap_degrees(target - start_deg)
        direction = 1 if delta >= 0 else -1
        toward = math.ceil((abs(delta) + settings.ring_window_deg) / step)
        plan[direction] = max(plan.get(direction, 0), toward)
        plan[-direction] = max(plan.get(-direction, 0), math.ceil(settings.ring_window_deg / step))
    return [(d, n) for d, n in sorted(plan.items(), reverse=True) if n > 0]


def scan_dihedral(
    start: Atoms,
    quad: tuple[int, int, int, int],
    engine,
    charge: int,
    multiplicity: int,
    branches: Sequence[tuple[int, int]],
    settings: ScanConfig = ScanConfig(),
    optimizer: OptimizerConfig = OptimizerConfig(),
    rings: Sequence[tuple[int, ...]] = (),
    start_label: str = "start",
    name: str = "substrate",
    on_point: Callable[[ScanPoint], None] | None = None,
) -> DihedralScan:
    """Return the constrained scan of dihedral ``quad`` along ``branches`` from a relaxed ``start``.

    ``start`` must be a relaxed geometry; its energy is taken as the reference for the cap.
    """
    reference = engine.single_point(start, charge, multiplicity, name=name).energy_hartree
    phi0 = dihedral_deg(start.positions, *quad)
    points: list[ScanPoint] = [
        ScanPoint(phi0, phi0, reference, "ok", ring_shapes(start.positions, rings), 0, start.copy())]
    notes: list[str] = []
    cap = settings.energy_cap_kcal_mol
    for direction, steps in branches:
        current = start
        calc = engine.calculator(charge, multiplicity, name=f"{name} scan")
        for k in range(1, steps + 1):
            target = phi0 + direction * k * settings.step_deg
            try:
                result = relax(current, calc, [HeldDihedral(quad, target)], optimizer)
            except ElimscanError as err:
                point = ScanPoint(target, wrap_degrees(target), None, "failed", (), 0, None, f"{err.error_type}: {err}")
                points.append(point)
                notes.append(f"branch {'+' if direction > 0 else '-'} stopped at {wrap_degrees(target):.0f} deg: point failed ({err.error_type})")
                if on_point is not None:
                    on_point(point)
                break
            above = (result.energy_hartree - reference) * KCAL_MOL_PER_HARTREE
            status = "above_cap" if above > cap else ("ok" if result.converged else "failed")
            point = ScanPoint(target, dihedral_deg(result.atoms.positions, *quad), result.energy_hartree, status,
                              ring_shapes(result.atoms.positions, rings), result.n_gradients, result.atoms,
                              None if result.converged else "optimization_failed: step limit reached")
            points.append(point)
            if on_point is not None:
                on_point(point)
            if status == "above_cap":
                notes.append(f"branch {'+' if direction > 0 else '-'} stopped at {point.dihedral_deg:.0f} deg: "
                             f"{above:.1f} kcal/mol above the start (cap {cap:g})")
                break
            if status == "failed":
                notes.append(f"branch {'+' if direction > 0 else '-'} stopped at {point.dihedral_deg:.0f} deg: "
                             "optimisation hit its step limit")
                break
            current = result.atoms
    points.sort(key=lambda p: p.target_deg)
    return DihedralScan(quad, start_label, reference, tuple(points), tuple(notes))
