"""Engine factories for whole-job tests of the input, interruption and failure handling (no GFN2-xTB).

``toy_engine`` gives every calculator its own spring + torsion model (``toyengine.SpringTorsionEngine``)
built from the first geometry it is asked about, so a whole job (conformers, scans, Hessians, paths) runs
in a second or two. The numbers mean nothing chemically; they are deterministic, which is all the
resume and kill tests compare. Batch workers load these by name ("toyjobs:toy_engine"), so the tests put
this folder on PYTHONPATH.
"""

from __future__ import annotations

import os

from ase.calculators.calculator import Calculator, all_changes

from elimscan.engine import CacheStats, SinglePoint
from elimscan.errors import ScfConvergenceError
from elimscan.toyengine import SpringTorsionEngine


class _LazyToyCalculator(Calculator):
    """ASE calculator that builds its toy model from the first geometry it computes."""

    implemented_properties = ["energy", "free_energy", "forces"]

    def __init__(self, owner: "ToyJobEngine", name: str):
        super().__init__()
        self.owner, self.structure, self.model = owner, name, None

    def calculate(self, atoms=None, properties=None, system_changes=all_changes):
        super().calculate(atoms, properties or ["energy"], system_changes)
        self.owner.check(self.structure)
        if self.model is None:
            self.model = SpringTorsionEngine(self.atoms.copy(), stats=self.owner.stats)
        energy, forces = self.model.energy_forces(self.atoms.positions)
        self.results = {"energy": energy, "free_energy": energy, "forces": forces}


class ToyJobEngine:
    """Engine stand-in with XtbEngine's interface; optional trouble: an SCF failure for names containing a word."""

    def __init__(self, fail_scf_on: str | None = None):
        self.stats = CacheStats()
        self.fail_scf_on = fail_scf_on

    @property
    def label(self) -> str:
        """Return a description of the toy model."""
        return "toy spring-torsion model (tests only)"

    def check(self, name: str) -> None:
        """Raise ScfConvergenceError for structures whose name contains ``fail_scf_on``."""
        if self.fail_scf_on and self.fail_scf_on in name:
            raise ScfConvergenceError(f"SCF did not converge for {name} (scripted by the test engine)")

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> Calculator:
        """Return a new lazily built toy calculator."""
        return _LazyToyCalculator(self, name)

    def single_point(self, atoms, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> SinglePoint:
        """Return the toy energy (hartree) and gradient (hartree/bohr) of a geometry (model built from it)."""
        self.check(name)
        return SpringTorsionEngine(atoms.copy(), stats=self.stats).single_point(atoms)


def toy_engine(method) -> ToyJobEngine:
    """Engine factory of the batch tests: a toy engine; ELIMSCAN_TOY_FAIL_SCF=word scripts SCF failures."""
    return ToyJobEngine(os.environ.get("ELIMSCAN_TOY_FAIL_SCF") or None)


class _BuggyEngine(ToyJobEngine):
    """A toy engine with a bug: its first calculator divides by zero (an unexpected, non-elimscan exception)."""

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> Calculator:
        """Raise ZeroDivisionError, as a bug would."""
        return 1 / 0


def broken_engine(method) -> ToyJobEngine:
    """Engine factory whose engine raises ZeroDivisionError (for the tests of unexpected errors)."""
    return _BuggyEngine()
