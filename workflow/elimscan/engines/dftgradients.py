"""DFT energies, gradients and analytic Hessians from PySCF behind the engine contract (``engines.contract.Engine``).

``DftEngine`` hands the drivers ASE calculators at one DFT level (``engines.dft.DftLevel``), so a saddle found at
GFN2-xTB can be refined and verified at DFT with the same driver code. Each calculator starts the SCF of a
new geometry from the density of the previous one. ``hessian`` is PySCF's analytic Hessian (density fitting,
IEF-PCM and D3/D4 included in PySCF 2.14). PySCF failures are translated into ``errors.DftError``, chained. Before a
geometry series or a Hessian starts, its peak-memory estimate is checked against the level's limit
(``engines.dftmemory``): over it, ``errors.DftMemoryError`` and nothing is computed. With a replay log (``replay``,
a ``contract.PointLog``) the gradients and Hessians a stopped earlier run of the job finished are served from it.
"""

from __future__ import annotations

import dataclasses
import time

import numpy as np
from ase import Atoms
from ase.calculators.calculator import Calculator, all_changes

from elimscan.engines.contract import CacheStats, PointLog, SinglePoint, geometry_changes, geometry_snapshot
from elimscan.engines.dft import (DftLevel, DftPoint, build_scf, converge_scf, guard_memory, import_pyscf, point_key,
                                  served_point)
from elimscan.errors import DftError
from elimscan.units import ANGSTROM_PER_BOHR, EV_PER_HARTREE


class DftEngine:
    """Energies and gradients at one DFT level (PySCF), counted in ``stats`` (misses = gradients, seconds inside)."""

    def __init__(self, level: DftLevel, threads: int = 1, replay: PointLog | None = None):
        self.level, self.threads = level, threads
        #: the job's replay log: gradients and Hessians a stopped earlier run of the job finished are served from it
        self.replay = replay
        self.label = f"{level.label()} [PySCF]"
        self.stats = CacheStats()
        #: analytic Hessians computed and their wall time (s)
        self.hessians, self.hessian_seconds = 0, 0.0
        #: every computed gradient's DFT point, in order, with the name of its series
        self.trace: list[tuple[str, DftPoint]] = []
        #: geometry series (name, atom count, charge, multiplicity) whose gradients passed the memory guard
        self._guarded: set[tuple[str, int, int, int]] = set()

    def _prepare(self) -> None:
        """Set PySCF's thread count for this engine."""
        _, _, lib = import_pyscf()
        lib.num_threads(self.threads)

    def check_memory(self, atoms: Atoms, charge: int, multiplicity: int, task: str, name: str = "structure") -> float:
        """Return the peak-memory estimate (GB) of a 'gradient' or 'hessian' of ``atoms``; raise DftMemoryError over
        the level's limit (call it before a long series, so that nothing is started that cannot end)."""
        return guard_memory(atoms, charge, multiplicity, self.level, task, name)

    def energy_gradient(self, atoms: Atoms, charge: int, multiplicity: int, name: str = "structure",
                        dm0=None) -> tuple[SinglePoint, object]:
        """Return the single point (hartree, hartree/bohr) of one geometry and its density matrix (for the next SCF)."""
        self._prepare()
        series = (name, len(atoms), charge, multiplicity)
        if series not in self._guarded:  # the same atoms and basis all along a series: checked once
            self.check_memory(atoms, charge, multiplicity, "gradient", name)
            self._guarded.add(series)
        key = None if self.replay is None else "gradient:" + point_key(atoms, charge, multiplicity, self.level)
        served = None if key is None else served_point(self.replay, key)
        if served is not None:  # the next SCF of the series starts from its own guess (no density kept)
            point, gradient = served
            self.stats.misses += 1
            self.stats.retries += int(point.retried)
            self.stats.replayed += 1
            self.stats.replayed_seconds += point.seconds
            self.trace.append((name, point))
            return SinglePoint(point.energy_hartree, gradient.reshape(-1, 3), 0.0, point.retried), None
        start = time.perf_counter()
        try:
            mf = build_scf(atoms, charge, multiplicity, self.level)
        except (RuntimeError, ValueError, KeyError) as err:
            raise DftError(f"{name}: PySCF setup failed ({type(err).__name__}: {err})") from err
        if dm0 is not None and np.shape(dm0)[-1] != mf.mol.nao:
            dm0 = None
        mf, energy, retried = converge_scf(mf, self.level, name, dm0)
        try:
            gradient = np.asarray(mf.nuc_grad_method().kernel(), dtype=float)
        except (RuntimeError, ValueError, KeyError, ArithmeticError, MemoryError, AssertionError,
                NotImplementedError) as err:
            raise DftError(f"{name}: PySCF gradient failed ({type(err).__name__}: {err})") from err
        seconds = time.perf_counter() - start
        self.stats.misses += 1
        self.stats.retries += int(retried)
        self.stats.backend_seconds += seconds
        summary = getattr(mf, "scf_summary", {})
        point = DftPoint(energy, float(summary.get("dispersion", 0.0)), float(summary.get("e_solvent", 0.0)),
                         int(getattr(mf, "cycles", -1)), round(seconds, 2), retried)
        self.trace.append((name, point))
        if self.replay is not None:
            self.replay.put(key, dataclasses.asdict(point), gradient)
        return SinglePoint(energy, gradient, 0.0, retried), mf.make_rdm1()

    def single_point(self, atoms: Atoms, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> SinglePoint:
        """Return the DFT energy (hartree) and gradient (hartree/bohr) of one geometry."""
        return self.energy_gradient(atoms, charge, multiplicity, name)[0]

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> Calculator:
        """Return an ASE calculator for one geometry series at this DFT level (energy in eV, forces in eV/Å)."""
        return DftCalculator(self, charge, multiplicity, name)

    def hessian(self, atoms: Atoms, charge: int, multiplicity: int, name: str = "structure") -> tuple[np.ndarray, int]:
        """Return PySCF's analytic Hessian (3N, 3N) in eV/Å^2 and the gradients it cost (0: none are counted)."""
        self._prepare()
        self.check_memory(atoms, charge, multiplicity, "hessian", name)
        key = None if self.replay is None else "hessian:" + point_key(atoms, charge, multiplicity, self.level)
        found = None if key is None else self.replay.get(key)
        if found is not None and "seconds" in found[0] and found[1].size == 9 * len(atoms) ** 2:
            self.hessians += 1
            self.hessian_seconds += float(found[0]["seconds"])
            return found[1].reshape(3 * len(atoms), 3 * len(atoms)), 0
        start = time.perf_counter()
        try:
            mf = build_scf(atoms, charge, multiplicity, self.level)
            mf, _, _ = converge_scf(mf, self.level, f"{name} hessian")
            blocks = np.asarray(mf.Hessian().kernel(), dtype=float)  # (N, N, 3, 3), hartree/bohr^2
        except DftError:
            raise
        except (RuntimeError, ValueError, KeyError, ArithmeticError, MemoryError, AssertionError,
                NotImplementedError, AttributeError) as err:
            raise DftError(f"{name}: PySCF analytic Hessian failed ({type(err).__name__}: {err})") from err
        n = len(atoms)
        hessian = blocks.transpose(0, 2, 1, 3).reshape(3 * n, 3 * n) * EV_PER_HARTREE / ANGSTROM_PER_BOHR ** 2
        self.hessians += 1
        seconds = time.perf_counter() - start
        self.hessian_seconds += seconds
        hessian = 0.5 * (hessian + hessian.T)
        if self.replay is not None:
            self.replay.put(key, {"seconds": seconds}, hessian)
        return hessian, 0


class DftCalculator(Calculator):
    """ASE calculator for one geometry series at a DFT level (energy in eV, forces in eV/Å); warm-starts the SCF."""

    implemented_properties = ["energy", "forces"]

    def __init__(self, engine: DftEngine, charge: int, multiplicity: int, name: str):
        super().__init__()
        self.engine, self.charge, self.multiplicity, self.series = engine, charge, multiplicity, name
        self._density = None

    def check_state(self, atoms, tol: float = 1e-15) -> list[str]:
        """Return which geometry quantities changed since the last calculation (charge and spin are fixed)."""
        return geometry_changes(self.atoms, atoms, tol)

    def calculate(self, atoms=None, properties=None, system_changes=all_changes) -> None:
        if atoms is not None:
            self.atoms = geometry_snapshot(atoms)
        point, self._density = self.engine.energy_gradient(self.atoms, self.charge, self.multiplicity, self.series,
                                                           self._density)
        self.results = {"energy": point.energy_hartree * EV_PER_HARTREE, "forces": point.forces_eV_per_A}
