"""What an engine must provide: the contract between the drivers and any electronic-structure backend.

The drivers never import a backend: they receive an object that satisfies ``Engine`` and ask it for ASE
calculators and single points. ``engines.xtb.XtbEngine`` is the one elimscan ships; a plug-in engine is any
object with these members, made by a factory named in the config (``method.engine_factory``) or on the
command line (``--engine module:function``); see ``engines.factory`` and DEVELOPERS.md.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Protocol, runtime_checkable

import numpy as np
from ase import Atoms
from ase.calculators.calculator import Calculator

from elimscan.units import ANGSTROM_PER_BOHR, EV_PER_HARTREE


#: the ASE system changes an energy and gradient of a molecule depend on (charge and spin belong to the calculator)
GEOMETRY_CHANGES = ("numbers", "positions", "cell", "pbc")


def geometry_snapshot(atoms: Atoms) -> Atoms:
    """Return a copy of the atomic numbers, positions (Å), cell and pbc only: no constraints, info or calculator."""
    return Atoms(numbers=atoms.numbers, positions=atoms.positions, cell=atoms.cell, pbc=atoms.pbc)


def geometry_changes(stored: Atoms | None, atoms: Atoms, tol: float = 1e-15) -> list[str]:
    """Return which of ``GEOMETRY_CHANGES`` differ between a calculator's stored atoms and ``atoms``.

    Compared as ASE's ``compare_atoms`` does (within ``tol``, no relative tolerance), but an identical array is
    recognised first and the atoms' constraints and other arrays are not looked at: ASE's full comparison cost
    more than a tenth of a driven path's time (it runs about three times per gradient).
    """
    if stored is None:
        return list(GEOMETRY_CHANGES)
    changes = []
    for name, old, new in (("numbers", stored.numbers, atoms.numbers), ("positions", stored.positions, atoms.positions),
                           ("cell", stored.cell.array, atoms.cell.array), ("pbc", stored.pbc, atoms.pbc)):
        if np.shape(old) != np.shape(new) or not (np.array_equal(old, new) or np.allclose(old, new, rtol=0, atol=tol)):
            changes.append(name)
    return changes


@dataclass
class CacheStats:
    """Counters of the single-point cache: hits, misses (= single points the job computed) and SCF retries."""

    hits: int = 0
    #: single points computed for the job: by the backend in this process, or served from the job's replay log
    #: (``replayed``: computed by an earlier run of the same job that was stopped), so that gradient counts and
    #: budgets read the same whether or not a job was interrupted
    misses: int = 0
    retries: int = 0
    #: retried single points kept at the retry electronic temperature (the restart at the normal one failed)
    hot_points: int = 0
    #: wall time spent inside the xTB library (s), in this process
    backend_seconds: float = 0.0
    #: of the misses, the points served from the job's replay log, and the library time they had cost (s)
    replayed: int = 0
    replayed_seconds: float = 0.0

    @property
    def hit_ratio(self) -> float:
        """Return hits / (hits + misses), 0 when nothing was asked."""
        total = self.hits + self.misses
        return self.hits / total if total else 0.0


@dataclass(frozen=True)
class SinglePoint:
    """Energy (hartree) and gradient (hartree/bohr) of one geometry, and the electronic temperature (K) used."""

    energy_hartree: float
    gradient_hartree_per_bohr: np.ndarray
    electronic_temperature_K: float
    retried: bool = False

    @property
    def forces_eV_per_A(self) -> np.ndarray:
        """Return the forces in eV/Å (minus the gradient)."""
        return -self.gradient_hartree_per_bohr * EV_PER_HARTREE / ANGSTROM_PER_BOHR


@runtime_checkable
class Engine(Protocol):
    """An energy-and-gradient engine: a label, counters, ASE calculators and single points."""

    #: one line naming the method, solvation model and backend with its version (written into every file)
    label: str
    #: counters: ``misses`` (gradients computed), ``hits``, ``hot_points`` (points kept at a retry temperature)
    stats: CacheStats

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> Calculator:
        """Return an ASE calculator for one geometry series (energy in eV, forces in eV/Å)."""
        ...

    def single_point(self, atoms: Atoms, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> SinglePoint:
        """Return the energy (hartree) and gradient (hartree/bohr) of one geometry."""
        ...


class PointLog(Protocol):
    """A job's finished single points, kept for a restart of the same job (``batch.replaylog`` keeps them in a file).

    The engine looks a point up by its own key before it computes it, and appends it after."""

    #: how many points were served so far
    served: int

    def __len__(self) -> int:
        """Return how many points the log holds."""
        ...

    def get(self, key: str) -> tuple[dict, np.ndarray] | None:
        """Return (JSON-able fields, float64 array) kept under ``key``, or None."""
        ...

    def put(self, key: str, fields: dict, array: np.ndarray | None = None) -> None:
        """Keep one finished point under ``key``."""
        ...
