"""The engine layer: the only module that imports xtb-python or tblite.

It gives GFN2-xTB (or GFN1-xTB) energies and gradients for ``ase.Atoms`` through one of two
backends, with implicit solvent checked against our own support table, an SCF retry at a higher
electronic temperature, a result cache keyed by a coordinate hash, and an ASE calculator that
reuses one backend object (and its wavefunction) along a geometry series.
Backend exceptions are translated here into elimscan's own errors, chained with ``from``.
"""

from __future__ import annotations

import hashlib
import importlib
import time
from dataclasses import dataclass, field
from typing import Any, Protocol

import numpy as np
from ase import Atoms
from ase.calculators.calculator import Calculator, all_changes

from elimscan.config import MethodConfig
from elimscan.engines.contract import CacheStats, PointLog, SinglePoint, geometry_changes, geometry_snapshot
from elimscan.errors import BackendUnavailableError, EngineError, ScfConvergenceError
from elimscan.solvents import XTB_PYTHON_NAMES, check_solvent, dielectric_constant, method_label
from elimscan.versions import backend_version
from elimscan.units import ANGSTROM_PER_BOHR, BOLTZMANN_HARTREE_PER_K, EV_PER_HARTREE

#: Python distribution name of each backend (for versions in provenance).


@dataclass(frozen=True)
class EngineSettings:
    """Everything that changes an xTB number: method, backend, solvent and SCF settings."""

    hamiltonian: str = "GFN2-xTB"
    backend: str = "tblite"
    solvent_model: str = "none"
    solvent_name: str | None = None
    electronic_temperature_K: float = 300.0
    retry_electronic_temperature_K: float = 1000.0
    max_scf_iterations: int = 250
    accuracy: float = 1.0

    def __post_init__(self) -> None:
        canonical = check_solvent(self.backend, self.hamiltonian, self.solvent_model, self.solvent_name)
        object.__setattr__(self, "solvent_name", canonical)

    @classmethod
    def from_method(cls, method: MethodConfig) -> "EngineSettings":
        """Return engine settings for the method section of a run config."""
        return cls(
            hamiltonian=method.hamiltonian,
            backend=method.backend,
            solvent_model=method.solvent.model,
            solvent_name=method.solvent.name if method.solvent.model != "none" else None,
            electronic_temperature_K=method.electronic_temperature_K,
            retry_electronic_temperature_K=method.retry_electronic_temperature_K,
            max_scf_iterations=method.max_scf_iterations,
            accuracy=method.accuracy,
        )

    def describe(self) -> str:
        """Return a one-line label such as 'GFN2-xTB/ALPB(ethanol) [tblite 0.8.0]'."""
        return method_label(self.hamiltonian, [(self.solvent_model, self.solvent_name)], self.backend,
                            backend_version(self.backend))


def _import_backend(backend: str) -> Any:
    """Return the backend's interface module, importing it on first use (after threads are set)."""
    name = {"tblite": "tblite.interface", "xtb": "xtb.interface"}[backend]
    try:
        return importlib.import_module(name)
    except ImportError as err:
        raise BackendUnavailableError(f"xTB backend '{backend}' cannot be loaded: {err}") from err


#: tblite interaction and model of the dielectric-only continuum (solvent model 'dielectric'). Not GB/GBε:
#: with ε alone (no parametrised radii or CDS term) tblite's GB and GBε let two hydrogens of an anionic
#: base-substrate complex collapse to 0.5 Å during relaxation (energy falling by ~36 eV, then no SCF), with
#: either Born kernel; ddX-CPCM at the same ε relaxes the same complex normally (measured, 2-bromobutane +
#: ethoxide, ε of ethanol). It costs far more per gradient.
DIELECTRIC_INTERACTION: tuple[str, str | None] = ("ddX-solvation", "cpcm")


class _Series(Protocol):
    def compute(self, positions_bohr: np.ndarray) -> tuple[float, np.ndarray]: ...

    def set_electronic_temperature(self, kelvin: float) -> None: ...


class _TbliteSeries:
    """A tblite calculator for one molecule, restarting each SCF from the previous wavefunction."""

    def __init__(self, settings: EngineSettings, numbers: np.ndarray, positions_bohr: np.ndarray,
                 charge: int, uhf: int, electronic_temperature_K: float):
        interface = _import_backend("tblite")
        self._calc = interface.Calculator(settings.hamiltonian, numbers, positions_bohr, charge=charge, uhf=uhf)
        self._calc.set("verbosity", 0)
        self._calc.set("max-iter", settings.max_scf_iterations)
        self._calc.set("accuracy", settings.accuracy)
        self._calc.set("temperature", electronic_temperature_K * BOLTZMANN_HARTREE_PER_K)
        if settings.solvent_model == "dielectric":  # ddX conductor-like PCM at the table's dielectric constant
            kind, kernel = DIELECTRIC_INTERACTION
            self._calc.add(kind, dielectric_constant(settings.solvent_name), *((kernel,) if kernel else ()))
        elif settings.solvent_model != "none":
            self._calc.add(f"{settings.solvent_model}-solvation", settings.solvent_name)
        self._result = None

    def compute(self, positions_bohr: np.ndarray) -> tuple[float, np.ndarray]:
        self._calc.update(positions_bohr)
        self._result = self._calc.singlepoint(self._result) if self._result is not None else self._calc.singlepoint()
        return float(self._result.get("energy")), np.array(self._result.get("gradient"))

    def set_electronic_temperature(self, kelvin: float) -> None:
        """Set the Fermi smearing temperature (K) of the next SCF, which restarts from the last wavefunction."""
        self._calc.set("temperature", kelvin * BOLTZMANN_HARTREE_PER_K)


class _XtbPythonSeries:
    """An xtb-python calculator for one molecule, restarting each SCF from the previous wavefunction."""

    def __init__(self, settings: EngineSettings, numbers: np.ndarray, positions_bohr: np.ndarray,
                 charge: int, uhf: int, electronic_temperature_K: float):
        interface = _import_backend("xtb")
        libxtb = importlib.import_module("xtb.libxtb")
        utils = importlib.import_module("xtb.utils")
        param = {"GFN2-xTB": interface.Param.GFN2xTB, "GFN1-xTB": interface.Param.GFN1xTB}[settings.hamiltonian]
        self._calc = interface.Calculator(param, numbers, positions_bohr, charge=charge, uhf=uhf)
        self._calc.set_verbosity(libxtb.VERBOSITY_MUTED)
        self._calc.set_max_iterations(settings.max_scf_iterations)
        self._calc.set_accuracy(settings.accuracy)
        self._calc.set_electronic_temperature(electronic_temperature_K)
        if settings.solvent_model != "none":
            name = XTB_PYTHON_NAMES.get(settings.solvent_name, settings.solvent_name)
            solvent = utils.get_solvent(name)
            if solvent is None:  # our table and the backend disagree: never fall back to gas phase
                raise EngineError(f"xtb-python does not know solvent '{settings.solvent_name}'")
            self._calc.set_solvent(solvent)
        self._result = None

    def compute(self, positions_bohr: np.ndarray) -> tuple[float, np.ndarray]:
        self._calc.update(positions_bohr)
        self._result = self._calc.singlepoint(self._result) if self._result is not None else self._calc.singlepoint()
        return float(self._result.get_energy()), np.array(self._result.get_gradient())

    def set_electronic_temperature(self, kelvin: float) -> None:
        """Set the Fermi smearing temperature (K) of the next SCF, which restarts from the last wavefunction."""
        self._calc.set_electronic_temperature(kelvin)


_SERIES = {"tblite": _TbliteSeries, "xtb": _XtbPythonSeries}


def geometry_key(numbers: np.ndarray, positions_A: np.ndarray, charge: int, multiplicity: int, settings: EngineSettings) -> str:
    """Return a SHA-256 hex key of numbers, positions (rounded to 1e-8 Å), charge, spin and settings."""
    digest = hashlib.sha256()
    digest.update(np.asarray(numbers, dtype=np.int64).tobytes())
    digest.update(np.round(np.asarray(positions_A, dtype=float), 8).tobytes())
    digest.update(f"{charge}|{multiplicity}|{settings!r}".encode())
    return digest.hexdigest()


@dataclass
class XtbEngine:
    """GFN2-xTB energies and gradients with caching; hands out ASE calculators bound to it."""

    settings: EngineSettings = field(default_factory=EngineSettings)
    max_cache_entries: int = 100_000
    stats: CacheStats = field(default_factory=CacheStats)
    #: the job's replay log (``batch.replaylog``): finished points served to a restarted job; None: none kept
    replay: PointLog | None = field(default=None, repr=False)
    _cache: dict[str, SinglePoint] = field(default_factory=dict, repr=False)

    @property
    def label(self) -> str:
        """Return a one-line description of method, solvent and backend."""
        return self.settings.describe()

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> "EngineCalculator":
        """Return an ASE calculator for one geometry series (energy in eV, forces in eV/Å)."""
        return EngineCalculator(self, charge=charge, multiplicity=multiplicity, name=name)

    def single_point(self, atoms: Atoms, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> SinglePoint:
        """Return the energy (hartree) and gradient (hartree/bohr) of one geometry."""
        return self.compute(atoms.numbers, atoms.positions, charge, multiplicity, name, holder=None)

    def compute(self, numbers: np.ndarray, positions_A: np.ndarray, charge: int, multiplicity: int,
                name: str, holder: "EngineCalculator | None") -> SinglePoint:
        """Return a cached or new single point; ``holder`` keeps the backend object for reuse."""
        key = geometry_key(numbers, positions_A, charge, multiplicity, self.settings)
        cached = self._cache.get(key)
        if cached is not None:
            self.stats.hits += 1
            return cached
        self.stats.misses += 1
        result = self._replayed(key, holder)
        if result is None:
            library_before = self.stats.backend_seconds
            result = self._run(numbers, positions_A, charge, multiplicity, name, holder)
            if self.replay is not None:
                self.replay.put(key, {"energy_hartree": result.energy_hartree,
                                      "electronic_temperature_K": result.electronic_temperature_K,
                                      "retried": result.retried,
                                      "seconds": self.stats.backend_seconds - library_before},
                                result.gradient_hartree_per_bohr)
        if len(self._cache) >= self.max_cache_entries:
            self._cache.pop(next(iter(self._cache)))
        self._cache[key] = result
        return result

    def _replayed(self, key: str, holder: "EngineCalculator | None" = None) -> SinglePoint | None:
        """Return the point stored under ``key`` in the replay log, counted as the first run counted it; else None."""
        found = None if self.replay is None else self.replay.get(key)
        if found is None:
            return None
        fields, gradient = found
        try:  # a record of another code version's making is computed again, never a failure of the job
            point = SinglePoint(float(fields["energy_hartree"]), gradient.reshape(-1, 3),
                                float(fields["electronic_temperature_K"]), retried=bool(fields["retried"]))
            seconds = float(fields["seconds"])
        except (KeyError, TypeError, ValueError):
            return None
        if holder is not None:  # the next computed point starts from a fresh guess, as after a kill
            holder.drop_series()
        self.stats.replayed += 1
        self.stats.replayed_seconds += seconds
        if point.retried:
            self.stats.retries += 1
            if point.electronic_temperature_K != self.settings.electronic_temperature_K:
                self.stats.hot_points += 1
        return point

    def _run(self, numbers: np.ndarray, positions_A: np.ndarray, charge: int, multiplicity: int,
             name: str, holder: "EngineCalculator | None") -> SinglePoint:
        attempt_started = time.perf_counter()  # a point's library time: the backend object's set-up, every attempt
        positions_bohr = np.asarray(positions_A, dtype=float) / ANGSTROM_PER_BOHR
        numbers = np.asarray(numbers, dtype=np.int32)
        uhf = multiplicity - 1
        series = holder.series_for(numbers) if holder is not None else None
        first_error: Exception | None = None
        try:
            if series is None:
                series = self._new_series(numbers, positions_bohr, charge, uhf, self.settings.electronic_temperature_K)
                if holder is not None:
                    holder.keep_series(numbers, series)
            energy, gradient = _finite(*series.compute(positions_bohr))
            self.stats.backend_seconds += time.perf_counter() - attempt_started
            return SinglePoint(energy, gradient, self.settings.electronic_temperature_K)
        except EngineError:
            raise
        except Exception as err:  # backend failure: translated below, after one retry
            first_error = err
            if holder is not None:
                holder.drop_series()
        self.stats.retries += 1
        hot = self.settings.retry_electronic_temperature_K
        try:
            retry = self._new_series(numbers, positions_bohr, charge, uhf, hot)
            energy, gradient = _finite(*retry.compute(positions_bohr))
        except EngineError:
            raise
        except Exception as err:
            formula = Atoms(numbers=numbers).get_chemical_formula()
            where = (f"{name} ({formula}, {len(numbers)} atoms, charge {charge}, multiplicity {multiplicity}) "
                     f"with {self.label}, max {self.settings.max_scf_iterations} SCF iterations")
            text = f"{first_error}".strip().replace("\n", " ")
            if "converge" in text.lower() or "converge" in str(err).lower():
                raise ScfConvergenceError(
                    f"SCF did not converge for {where}, also on retry at electronic temperature {hot:g} K: {text}"
                ) from err
            raise EngineError(f"xTB calculation failed for {where}: {text}") from err
        point = self._back_to_normal_temperature(retry, positions_bohr, SinglePoint(energy, gradient, hot, retried=True))
        self.stats.backend_seconds += time.perf_counter() - attempt_started
        return point

    def _back_to_normal_temperature(self, series: _Series, positions_bohr: np.ndarray, hot: SinglePoint) -> SinglePoint:
        """Return the point at the normal electronic temperature, restarted from the converged hot wavefunction.

        A point smeared at the retry temperature lies on a different energy surface; it is kept (and counted
        in ``stats.hot_points``) only when the restart at the normal temperature fails too.
        """
        normal = self.settings.electronic_temperature_K
        try:
            series.set_electronic_temperature(normal)
            energy, gradient = _finite(*series.compute(positions_bohr))
        except Exception:  # the hot point is the best there is: kept, and counted as numerical trouble
            self.stats.hot_points += 1
            return hot
        return SinglePoint(energy, gradient, normal, retried=True)

    def _new_series(self, numbers: np.ndarray, positions_bohr: np.ndarray, charge: int, uhf: int, etemp: float) -> _Series:
        return _SERIES[self.settings.backend](self.settings, numbers, positions_bohr, charge, uhf, etemp)


def _finite(energy: float, gradient: np.ndarray) -> tuple[float, np.ndarray]:
    """Return the backend's (energy in hartree, gradient in hartree/bohr); raise FloatingPointError if not finite."""
    if not (np.isfinite(energy) and np.all(np.isfinite(gradient))):
        raise FloatingPointError("the backend returned a non-finite energy or gradient")
    return energy, gradient


class EngineCalculator(Calculator):
    """ASE calculator backed by an XtbEngine; reuses one backend object while the atoms stay the same."""

    implemented_properties = ["energy", "free_energy", "forces"]

    def __init__(self, engine: XtbEngine, charge: int = 0, multiplicity: int = 1, name: str = "structure"):
        super().__init__()
        self.engine = engine
        self.charge = charge
        self.multiplicity = multiplicity
        self.structure_name = name
        self._series: _Series | None = None
        self._series_numbers: np.ndarray | None = None

    def series_for(self, numbers: np.ndarray) -> _Series | None:
        """Return the kept backend object if it was made for these atomic numbers."""
        if self._series is not None and self._series_numbers is not None and np.array_equal(self._series_numbers, numbers):
            return self._series
        return None

    def keep_series(self, numbers: np.ndarray, series: _Series) -> None:
        """Keep a backend object for the next geometry of the same molecule."""
        self._series, self._series_numbers = series, np.array(numbers)

    def drop_series(self) -> None:
        """Forget the kept backend object (after a failure)."""
        self._series, self._series_numbers = None, None

    def check_state(self, atoms: Atoms, tol: float = 1e-15) -> list[str]:
        """Return the changes since the last calculation that move the result: numbers, positions, cell, pbc."""
        return geometry_changes(self.atoms, atoms, tol)

    def calculate(self, atoms: Atoms | None = None, properties: list[str] | None = None,
                  system_changes: list[str] = all_changes) -> None:
        if atoms is not None:  # ASE's Calculator.calculate deep-copies the atoms, constraints included
            self.atoms = geometry_snapshot(atoms)
        point = self.engine.compute(self.atoms.numbers, self.atoms.positions, self.charge, self.multiplicity, self.structure_name, holder=self)
        energy_eV = point.energy_hartree * EV_PER_HARTREE
        self.results = {"energy": energy_eV, "free_energy": energy_eV, "forces": point.forces_eV_per_A}
