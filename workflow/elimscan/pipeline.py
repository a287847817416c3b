"""The computation of a run, without file I/O: build, relax and record every substrate and base.

Known failures (bad input, SCF or optimiser trouble) become records with ``status: failed``;
the run carries on. Progress is reported through a callback, never printed.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field

from ase import Atoms

from elimscan.config import OptimizerConfig, RunConfig
from elimscan.errors import ElimscanError
from elimscan.records import ErrorInfo, JobRecord, MoleculeRecord
from elimscan.relax import relax
from elimscan.structures import build_molecule, formula

#: progress callback: (finished steps, total steps, message)
ProgressCallback = Callable[[int, int, str], None]


@dataclass(frozen=True)
class RelaxedMolecule:
    """A molecule's record and, when it succeeded, its relaxed geometry (Å)."""

    record: MoleculeRecord
    atoms: Atoms | None


@dataclass
class RunOutcome:
    """Everything a run computed: molecules by (role, name), and the job records."""

    molecules: dict[tuple[str, str], RelaxedMolecule] = field(default_factory=dict)
    jobs: list[JobRecord] = field(default_factory=list)


def error_info(err: ElimscanError) -> ErrorInfo:
    """Return the ErrorInfo record of one of our errors."""
    return ErrorInfo(error_type=err.error_type, error_message=str(err))


def relax_molecule(name: str, role: str, smiles: str, charge: int | None, multiplicity: int, engine,
                   optimizer: OptimizerConfig, seed: int) -> RelaxedMolecule:
    """Return the relaxed molecule (energy in hartree) or a failed record naming the input."""
    what = f"{role} '{name}'"
    start = time.perf_counter()
    try:
        built = build_molecule(smiles, seed, charge, multiplicity, what)
        calc = engine.calculator(built.formal_charge, multiplicity, name=what)
        result = relax(built.atoms, calc, (), optimizer)
    except ElimscanError as err:
        record = MoleculeRecord(name=name, role=role, smiles=smiles, status="failed", error=error_info(err))
        return RelaxedMolecule(record, None)
    record = MoleculeRecord(
        name=name, role=role, smiles=smiles, status="ok", charge=built.formal_charge, multiplicity=multiplicity,
        n_atoms=len(result.atoms), formula=formula(built.mol), energy_hartree=result.energy_hartree,
        converged=result.converged, n_gradients=result.n_gradients,
        relax_seconds=round(time.perf_counter() - start, 3),
    )
    if not result.converged:
        record = record.model_copy(update={"status": "failed", "error": ErrorInfo(
            error_type="optimization_failed",
            error_message=f"{what}: relaxation did not converge in {optimizer.max_steps} steps "
                          f"(fmax {optimizer.fmax_eV_per_A} eV/Å)")})
    return RelaxedMolecule(record, result.atoms)


def run_config(config: RunConfig, engine, on_progress: ProgressCallback | None = None) -> RunOutcome:
    """Return the outcome of a run: every molecule used by a job relaxed once, and one record per job."""
    jobs = config.jobs()
    needed: dict[tuple[str, str], object] = {}
    for substrate, base in jobs:
        needed.setdefault(("substrate", substrate.name), substrate)
        needed.setdefault(("base", base.name), base)
    outcome = RunOutcome()
    total = len(needed)
    for step, ((role, name), item) in enumerate(needed.items()):
        if on_progress is not None:
            on_progress(step, total, f"relaxing {role} '{name}' ({item.smiles})")
        outcome.molecules[(role, name)] = relax_molecule(
            name, role, item.smiles, item.charge, item.multiplicity, engine, config.optimizer, config.seed)
    for substrate, base in jobs:
        parts = [outcome.molecules[("substrate", substrate.name)].record, outcome.molecules[("base", base.name)].record]
        failed = [p for p in parts if p.status != "ok"]
        error = None
        if failed:
            error = ErrorInfo(error_type=failed[0].error.error_type if failed[0].error else "failed",
                              error_message="; ".join(p.error.error_message for p in failed if p.error))
        outcome.jobs.append(JobRecord(job_id=f"{substrate.name}__{base.name}", substrate=substrate.name, base=base.name,
                                      status="failed" if failed else "ok", error=error))
    return outcome
