"""Engine factories for whole-job tests of the input, interruption and failure handling (no GFN2-xTB).

``toy_engine`` gives every calculator its own spring + torsion model (``toyengine.SpringTorsionEngine``)
built from the first geometry it is asked about, so a whole job (conformers, scans, Hessians, paths) runs
in a second or two. The numbers mean nothing chemically; they are deterministic, which is all the
resume and kill tests compare. Batch workers load these by name ("toyjobs:toy_engine"), so the tests put
this folder on PYTHONPATH.
"""

from __future__ import annotations

import dataclasses
import os
import signal
import time

import numpy as np
from ase import Atoms
from ase.calculators.calculator import Calculator, all_changes

from elimscan.engines.xtb import CacheStats, EngineSettings, SinglePoint, XtbEngine
from elimscan.errors import ScfConvergenceError
from toyengine import SpringTorsionEngine
from elimscan.units import ANGSTROM_PER_BOHR, EV_PER_HARTREE, KCAL_MOL_PER_HARTREE

#: one kcal/mol in eV (from the project's CODATA-based units)
KCAL_MOL_IN_EV = EV_PER_HARTREE / KCAL_MOL_PER_HARTREE


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
            reference = self.owner.reference(self.atoms, self.structure)
            self.model = SpringTorsionEngine(reference, stats=self.owner.stats,
                                             extra_springs=reference.info.get("toy_springs", ()))
        energy, forces = self.model.energy_forces(self.atoms.positions)
        energy += self.owner.offset_eV(self.structure)
        self.results = {"energy": energy, "free_energy": energy, "forces": forces}


_HALOGENS = ("F", "Cl", "Br", "I")


def _move_to(positions, anchor: int, moved: int, distance_A: float) -> None:
    """Put atom ``moved`` at ``distance_A`` from ``anchor`` along their present direction (in place)."""
    vector = positions[moved] - positions[anchor]
    positions[moved] = positions[anchor] + distance_A * vector / max(float(np.linalg.norm(vector)), 1e-6)


def _products_of(atoms, substitution: bool):
    """Return a copy of a path's end with its reaction completed: X 3.5 Å from C-alpha, and the nearest
    carbon-bound H on the base's O/N at 1.0 Å (E2) or the base's O/N on C-alpha at 1.45 Å (SN2).

    The toy model's minimum is the geometry it is built on, so an end relaxed in this model goes downhill
    to its products, as a real path end past its saddle does; the toy has no chemistry to find them itself.
    """
    out = atoms.copy()
    pos, symbols = out.positions, out.get_chemical_symbols()
    carbons = [i for i, s in enumerate(symbols) if s == "C"]
    pairs = [(float(np.linalg.norm(pos[x] - pos[c])), x, c) for x in range(len(out)) if symbols[x] in _HALOGENS
             for c in carbons]
    if not pairs:
        return out
    _, x, c_alpha = min(pairs)
    donors = [i for i, s in enumerate(symbols) if s in ("O", "N")]
    if substitution and donors:
        nu = min(donors, key=lambda i: np.linalg.norm(pos[i] - pos[c_alpha]))
        _move_to(pos, c_alpha, nu, 1.45)
    elif donors:
        hydrogens = [h for h, s in enumerate(symbols) if s == "H"
                     and min(np.linalg.norm(pos[h] - pos[c]) for c in carbons) < 1.6]
        h, base = min(((h, b) for h in hydrogens for b in donors), key=lambda hb: np.linalg.norm(pos[hb[0]] - pos[hb[1]]))
        _move_to(pos, base, h, 1.0)
    _move_to(pos, c_alpha, x, 3.5)
    out.positions = pos
    out.info["toy_springs"] = ((c_alpha, x, 3.5),)  # X is bonded to nothing in the products: this pulls it off
    return out


class ToyJobEngine:
    """Engine stand-in with XtbEngine's interface; optional trouble: an SCF failure for names containing a word,
    and a ``stretch`` > 1 that puts a model's minimum away from the geometry it is built from (so each
    relaxation has work to do and a small optimizer.max_steps is reached), for every model or only for
    structures whose name contains ``stretch_on``."""

    def __init__(self, fail_scf_on: str | None = None, stretch: float = 1.0, stretch_on: str | None = None,
                 lower_on: str | None = None, lower_kcal_mol: float = 0.0):
        self.stats = CacheStats()
        self.fail_scf_on = fail_scf_on
        self.stretch = stretch
        self.stretch_on = stretch_on
        self.lower_on, self.lower_kcal_mol = lower_on, lower_kcal_mol

    def reference(self, atoms, name: str = ""):
        """Return the geometry a new toy model is built on: ``atoms`` scaled about its centre by ``stretch``;
        for the free relaxation of a path's end (a name ending in ' end'), the products of that path."""
        reference = atoms.copy()
        if name.endswith(" end"):
            return _products_of(reference, substitution=name.endswith("substitution end"))
        if self.stretch_on and self.stretch_on not in name:
            return reference
        centre = reference.positions.mean(axis=0)
        reference.positions = centre + self.stretch * (reference.positions - centre)
        return reference

    @property
    def label(self) -> str:
        """Return a description of the toy model."""
        return "toy spring-torsion model (tests only)"

    def offset_eV(self, name: str) -> float:
        """Return the constant energy shift (eV) of a structure: minus ``lower_kcal_mol`` for structures named
        with ``lower_on`` (forces unchanged), else 0."""
        return -self.lower_kcal_mol * KCAL_MOL_IN_EV if self.lower_on and self.lower_on in name else 0.0

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
        point = SpringTorsionEngine(self.reference(atoms, name), stats=self.stats).single_point(atoms)
        return dataclasses.replace(point, energy_hartree=point.energy_hartree + self.offset_eV(name) / EV_PER_HARTREE)


def toy_engine(method) -> ToyJobEngine:
    """Engine factory of the batch tests: a toy engine; ELIMSCAN_TOY_FAIL_SCF=word scripts SCF failures,
    ELIMSCAN_TOY_STRETCH=factor moves the models' minima, of structures named with ELIMSCAN_TOY_STRETCH_ON=word
    only if set; ELIMSCAN_TOY_LOWER=word:kcal_mol lowers the energies of structures named with the word (see
    ToyJobEngine)."""
    lower_on, _, kcal = os.environ.get("ELIMSCAN_TOY_LOWER", "").partition(":")
    return ToyJobEngine(os.environ.get("ELIMSCAN_TOY_FAIL_SCF") or None,
                        float(os.environ.get("ELIMSCAN_TOY_STRETCH", "1.0")),
                        os.environ.get("ELIMSCAN_TOY_STRETCH_ON") or None,
                        lower_on or None, float(kcal or 0.0))


class _BuggyEngine(ToyJobEngine):
    """A toy engine with a bug: its first calculator divides by zero (an unexpected, non-elimscan exception)."""

    def calculator(self, charge: int = 0, multiplicity: int = 1, name: str = "structure") -> Calculator:
        """Raise ZeroDivisionError, as a bug would."""
        return 1 / 0


def broken_engine(method) -> ToyJobEngine:
    """Engine factory whose engine raises ZeroDivisionError (for the tests of unexpected errors)."""
    return _BuggyEngine()


class _WorkerLosingEngine(ToyJobEngine):
    """A toy engine that, once, kills the process that started its job (a Dask worker) mid-job.

    ELIMSCAN_TOY_LOSE_WORKER_ON=word picks the structures (names containing the word); the first one to be
    computed creates the marker file ELIMSCAN_TOY_LOSE_WORKER_MARKER and SIGKILLs the parent process, as a
    node lost mid-job would. Later attempts find the marker and compute normally.
    """

    def check(self, name: str) -> None:
        """Kill the parent process the first time a structure named with the word is computed."""
        super().check(name)
        word, marker = os.environ.get("ELIMSCAN_TOY_LOSE_WORKER_ON"), os.environ.get("ELIMSCAN_TOY_LOSE_WORKER_MARKER")
        if word and marker and word in name:
            try:
                fd = os.open(marker, os.O_CREAT | os.O_EXCL | os.O_WRONLY)
            except FileExistsError:
                return
            os.write(fd, f"{os.getpid()} killed parent {os.getppid()} at {name}\n".encode())
            os.close(fd)
            os.kill(os.getppid(), signal.SIGKILL)
            os._exit(1)  # the job process goes with its worker (its parent watch would end it within a second)


def worker_losing_engine(method) -> ToyJobEngine:
    """Engine factory of the lost-worker test: see ``_WorkerLosingEngine``."""
    return _WorkerLosingEngine()


class _StuckEngine(ToyJobEngine):
    """A toy engine stuck forever in every calculation on a base, like a backend call that never returns."""

    def check(self, name: str) -> None:
        """Hang (sleep) for structures whose name starts with 'base'; a kill is the only way out."""
        if name.startswith("base"):
            while True:
                time.sleep(3600)


def stuck_engine(method) -> ToyJobEngine:
    """Engine factory whose engine hangs on the base (for the stage time-limit tests)."""
    return _StuckEngine()


#: config settings that make a toy-engine job take about a second (prepended to the tests' YAML)
TOY_SETTINGS = """\
optimizer: {name: bfgs, fmax_eV_per_A: 0.05}
conformers: {base_embeddings: 2, per_rotatable_bond: 1, max_relaxations: 2}
scan: {step_deg: 60}
paths: {approaches: [anti], points: 4, base_rotations: 1, substitution: false, saddle: {refine: false}}
"""


def without_timings(value):
    """Return a JSON value with every relax_seconds entry dropped (what must not depend on interruptions)."""
    if isinstance(value, dict):
        return {k: without_timings(v) for k, v in value.items() if k != "relax_seconds"}
    if isinstance(value, list):
        return [without_timings(v) for v in value]
    return value


class _HotPointEngine(ToyJobEngine):
    """A toy engine that counts every computed geometry of structures named with ``hot_on`` as a single point
    kept at the retry electronic temperature (as ``XtbEngine`` does when even the restart fails)."""

    def __init__(self, hot_on: str | None):
        super().__init__()
        self.hot_on = hot_on

    def check(self, name: str) -> None:
        """Count a kept hot single point for structures whose name contains ``hot_on``."""
        super().check(name)
        if self.hot_on and self.hot_on in name:
            self.stats.hot_points += 1


def hot_point_engine(method) -> ToyJobEngine:
    """Engine factory of the retry-temperature tests: ELIMSCAN_TOY_HOT_ON=word (see ``_HotPointEngine``)."""
    return _HotPointEngine(os.environ.get("ELIMSCAN_TOY_HOT_ON") or None)


def toy_output(command: str, config_text: str, folder):
    """Return the output folder (``folder``/out) of ``elimscan run`` or ``batch`` on config_text with the toy engine."""
    from pathlib import Path

    from elimscan.cli import main

    folder = Path(folder)
    (folder / f"{command}.yaml").write_text(config_text)
    code = main([command, str(folder / f"{command}.yaml"), "--out", str(folder / "out"), "--engine",
                 "toyjobs:toy_engine", "-q"])
    assert code == 0, f"toy {command} exited {code}"
    return folder / "out"


class _ToySeries:
    """A backend series of ``ToyXtbEngine``: the toy model of the calculator it serves (built, as the toy engine's
    calculators build theirs, from the first geometry that calculator was asked about), in hartree and hartree/bohr."""

    def __init__(self, owner: "ToyXtbEngine", holder, name: str, numbers, positions_bohr):
        self.owner = owner
        model = getattr(holder, "toy_model", None)
        if model is None:  # kept on the calculator: a new series (after a served point) keeps its surface
            first = getattr(holder, "toy_first", None)
            positions_A = first if first is not None else np.asarray(positions_bohr) * ANGSTROM_PER_BOHR
            reference = owner.toy.reference(Atoms(numbers=numbers, positions=positions_A), name)
            model = SpringTorsionEngine(reference, extra_springs=reference.info.get("toy_springs", ()))
            if holder is not None:
                holder.toy_model = model
        self.model, self.offset_eV = model, owner.toy.offset_eV(name)

    def set_electronic_temperature(self, kelvin: float) -> None:
        """Do nothing: the toy model has no electrons."""

    def compute(self, positions_bohr):
        """Return the toy energy (hartree) and gradient (hartree/bohr) at these positions (bohr)."""
        self.owner.computed_one()
        energy, forces = self.model.energy_forces(np.asarray(positions_bohr) * ANGSTROM_PER_BOHR)
        return (energy + self.offset_eV) / EV_PER_HARTREE, -forces / EV_PER_HARTREE * ANGSTROM_PER_BOHR


class ToyXtbEngine(XtbEngine):
    """``XtbEngine`` itself (its cache, counters and replay log) on the toy model instead of a GFN2-xTB backend.

    ELIMSCAN_TOY_DIE_AFTER=n kills the worker after n computed points of a job whose replay log was empty when the
    job was handed it (a first attempt)."""

    def __init__(self):
        self.toy, self.computed, self.first_attempt = ToyJobEngine(), 0, True
        self.die_after = int(os.environ.get("ELIMSCAN_TOY_DIE_AFTER", "0"))
        self._context: tuple = ("structure", None)
        super().__init__(EngineSettings())

    @property
    def replay(self):
        return self.__dict__.get("_replay")

    @replay.setter
    def replay(self, log) -> None:
        self.__dict__["_replay"] = log
        self.first_attempt = log is None or len(log) == 0

    @property
    def label(self) -> str:
        """Return a description of the toy model behind XtbEngine."""
        return "toy spring-torsion model through XtbEngine (tests only)"

    def compute(self, numbers, positions_A, charge, multiplicity, name, holder):
        """Return XtbEngine's point, after noting the calculator's first geometry (its toy model's reference: the
        same whether or not the points before were served from a replay log)."""
        if holder is not None and getattr(holder, "toy_first", None) is None:
            holder.toy_first = np.array(positions_A, dtype=float)
        return super().compute(numbers, positions_A, charge, multiplicity, name, holder)

    def _run(self, numbers, positions_A, charge, multiplicity, name, holder):
        self.toy.check(name)
        self._context = (name, holder)
        return super()._run(numbers, positions_A, charge, multiplicity, name, holder)

    def _new_series(self, numbers, positions_bohr, charge, uhf, etemp):
        name, holder = self._context
        return _ToySeries(self, holder, name, numbers, positions_bohr)

    def computed_one(self) -> None:
        """Count a computed point; kill this process at ELIMSCAN_TOY_DIE_AFTER on a first attempt with a log."""
        self.computed += 1
        if self.die_after and self.replay is not None and self.first_attempt and self.computed > self.die_after:
            os.kill(os.getpid(), signal.SIGKILL)


def toy_xtb_engine(method) -> ToyXtbEngine:
    """Engine factory of the replay tests: XtbEngine's own code on the toy model."""
    return ToyXtbEngine()
