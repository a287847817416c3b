"""A cheap analytic engine for the algorithm-tier tests: springs plus threefold torsions.

It has the same interface as ``XtbEngine`` (``calculator``, ``single_point``, ``label``, ``stats``), so
drivers can be tested in milliseconds with answers known in closed form. Not a chemistry model.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from ase import Atoms
from ase.calculators.calculator import Calculator, all_changes
from ase.data import covalent_radii

from elimscan.engines.xtb import CacheStats, SinglePoint
from elimscan.geometry import dihedral_deg, dihedral_gradient_rad
from elimscan.units import ANGSTROM_PER_BOHR, EV_PER_HARTREE


def _bonds(atoms: Atoms, scale: float = 1.2) -> list[tuple[int, int]]:
    """Return bonded pairs by covalent radii (sum times ``scale``)."""
    pos, radii = atoms.positions, covalent_radii[atoms.numbers]
    pairs = []
    for i in range(len(atoms)):
        for j in range(i + 1, len(atoms)):
            if np.linalg.norm(pos[i] - pos[j]) < scale * (radii[i] + radii[j]):
                pairs.append((i, j))
    return pairs


@dataclass
class SpringTorsionEngine:
    """Harmonic springs on 1-2 and 1-3 pairs of a reference geometry plus V3/2 (1 + cos 3 phi) torsions.

    ``spring_eV_per_A2`` is the force constant; ``torsion_barrier_eV`` is V3 for every dihedral
    a-b-c-d whose b-c bond is not in a ring. Energies in eV, forces in eV/Å (ASE units).
    """

    reference: Atoms
    spring_eV_per_A2: float = 20.0
    torsion_barrier_eV: float = 0.005
    stats: CacheStats = field(default_factory=CacheStats)
    #: further springs (i, j, rest length in Å) beyond those of the reference geometry
    extra_springs: tuple[tuple[int, int, float], ...] = ()

    def __post_init__(self) -> None:
        bonds = _bonds(self.reference)
        neighbours: dict[int, set[int]] = {i: set() for i in range(len(self.reference))}
        for i, j in bonds:
            neighbours[i].add(j)
            neighbours[j].add(i)
        pairs = set(bonds)
        for centre, around in neighbours.items():
            for i in around:
                for j in around:
                    if i < j:
                        pairs.add((i, j))
        ref = self.reference.positions
        self._pairs = sorted(pairs) + [(i, j) for i, j, _ in self.extra_springs]
        self._lengths = np.array([np.linalg.norm(ref[i] - ref[j]) for i, j in sorted(pairs)]
                                 + [length for _, _, length in self.extra_springs])
        self._torsions = [(a, b, c, d) for b, c in bonds for a in neighbours[b] - {c} for d in neighbours[c] - {b, a}]

    @property
    def label(self) -> str:
        """Return a description of the toy model."""
        return f"spring-torsion toy model (k={self.spring_eV_per_A2} eV/Å², V3={self.torsion_barrier_eV} eV)"

    def energy_forces(self, positions: np.ndarray) -> tuple[float, np.ndarray]:
        """Return energy (eV) and forces (eV/Å) at the given positions (Å)."""
        self.stats.misses += 1
        pos = np.asarray(positions, dtype=float)
        energy, grad = 0.0, np.zeros_like(pos)
        for (i, j), r0 in zip(self._pairs, self._lengths):
            vec = pos[j] - pos[i]
            r = np.linalg.norm(vec)
            energy += 0.5 * self.spring_eV_per_A2 * (r - r0) ** 2
            g = self.spring_eV_per_A2 * (r - r0) * vec / r
            grad[j] += g
            grad[i] -= g
        v3 = self.torsion_barrier_eV
        for a, b, c, d in self._torsions:
            phi = np.radians(dihedral_deg(pos, a, b, c, d))
            energy += 0.5 * v3 * (1.0 + np.cos(3.0 * phi))
            grad += -1.5 * v3 * np.sin(3.0 * phi) * dihedral_gradient_rad(pos, a, b, c, d)
        return float(energy), -grad

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> "ToyCalculator":
        """Return an ASE calculator for this toy model (charge and multiplicity ignored)."""
        return ToyCalculator(self)

    def single_point(self, atoms: Atoms, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> SinglePoint:
        """Return the toy energy (hartree) and gradient (hartree/bohr) of one geometry."""
        energy, forces = self.energy_forces(atoms.positions)
        gradient = -forces / EV_PER_HARTREE * ANGSTROM_PER_BOHR
        return SinglePoint(energy / EV_PER_HARTREE, gradient, 0.0)


class ToyCalculator(Calculator):
    """ASE calculator wrapping a SpringTorsionEngine."""

    implemented_properties = ["energy", "free_energy", "forces"]

    def __init__(self, engine: SpringTorsionEngine):
        super().__init__()
        self.engine = engine

    def calculate(self, atoms: Atoms | None = None, properties: list[str] | None = None,
                  system_changes: list[str] = all_changes) -> None:
        super().calculate(atoms, properties or ["energy"], system_changes)
        energy, forces = self.engine.energy_forces(self.atoms.positions)
        self.results = {"energy": energy, "free_energy": energy, "forces": forces}
