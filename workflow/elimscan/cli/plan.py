"""``elimscan plan``: a config checked without computing, and what a run of it would do, printed to standard output.

Per substrate: the leaving group, every beta-H class with 1-based atom numbers (as a chemist counts: heavy atoms in
SMILES order, then the hydrogens) and the alkene its anti and its syn elimination gives; then the jobs and a rough
time. The time is measured cost scaled by size: from the finished jobs of a batch folder (``--costs DIR``), else
from one job measured on the development machine (``MEASURED_JOB``); it is never more precise than that.
"""

from __future__ import annotations

import argparse
import json
import logging
import statistics
import warnings
from dataclasses import dataclass
from pathlib import Path

from elimscan.cli.inputs import batch_only, check_batch_inputs, check_inputs, read_config, warn_sizes, with_engine
from elimscan.cli.logs import echo
from elimscan.errors import ExitCode, OutputError

log = logging.getLogger("elimscan")


@dataclass(frozen=True)
class MeasuredJob:
    """One measured job: its wall time (s, one core), its E2 and SN2 paths and heavy atoms (substrate + base)."""

    seconds: float
    n_paths: int
    heavy_atoms: int
    source: str


#: 2-bromobutane + ethoxide in ALPB(ethanol): 3 beta-H classes, anti and syn, plus the SN2 path, 8 heavy atoms;
#: 99 s on one core of the 2-core development machine (benchmarks/bench_paths.py, README "Measured performance")
MEASURED_JOB = MeasuredJob(99.0, 7, 8, "one job measured on the development machine (2-bromobutane + ethoxide, "
                                       "7 paths, 99 s on one core, benchmarks/bench_paths.py)")
#: the cost of a path is taken to grow with the cube of the heavy atoms of substrate + base (a rough rule until the
#: benchmark measures costs by size; the same rule as molecules.OVERNIGHT_HEAVY_ATOMS)
SIZE_EXPONENT = 3
#: an estimate is stated as "within a factor of this either way": one measured anchor and a scaling rule allow no
#: more (the demo took 670 s where this rule gives about 400 s: the substrate's conformers and scans are not counted)
ESTIMATE_FACTOR = 2


def seconds_per_path(job: MeasuredJob) -> float:
    """Return a measured job's seconds per path scaled to 8 heavy atoms (s)."""
    return job.seconds / job.n_paths / (job.heavy_atoms / 8) ** SIZE_EXPONENT


def job_seconds(unit_s: float, n_paths: int, heavy_atoms: int) -> float:
    """Return the estimated wall time of one job (s, one core) from seconds per path at 8 heavy atoms."""
    return unit_s * n_paths * (heavy_atoms / 8) ** SIZE_EXPONENT


def rough_duration(seconds: float) -> str:
    """Return a duration to one significant figure in words ('about 7 min', 'about 3 h')."""
    for unit, size in (("h", 3600.0), ("min", 60.0), ("s", 1.0)):
        if seconds >= size or unit == "s":
            return f"about {float(f'{seconds / size:.1g}'):g} {unit}"
    return "about 0 s"


def measured_from_folder(folder: Path) -> list[MeasuredJob]:
    """Return the finished ok jobs of a batch folder: wall times from batch.json, paths and molecules from results.json.

    A job that started over from its replay log (``replayed_points``) timed its last run only: left out."""
    from rdkit import Chem

    from elimscan.results.records import started_over

    try:
        index = json.loads((folder / "batch.json").read_text(encoding="utf-8"))
        result = json.loads((folder / "results.json").read_text(encoding="utf-8"))
    except (OSError, ValueError) as err:
        raise OutputError(f"--costs '{folder}': needs a finished batch folder (batch.json and results.json): "
                          f"{getattr(err, 'strerror', None) or err}") from err
    smiles = {(m.get("role"), m.get("name")): m.get("smiles") for m in result.get("molecules", [])}
    seconds = {j["job_id"]: j.get("wall_seconds") for j in index.get("jobs", []) if j.get("status") == "ok"}
    found = []
    for job in result.get("jobs", []):
        wall = seconds.get(job.get("job_id"))
        mols = [Chem.MolFromSmiles(smiles.get((role, job.get(role))) or "") for role in ("substrate", "base")]
        if not wall or job.get("status") != "ok" or started_over(job) or any(m is None for m in mols):
            continue
        n_paths = sum(1 for beta in job.get("beta_hydrogens", ()) for approach in ("anti", "syn")
                      if (beta.get(approach) or {}).get("path_status", "not computed") != "not computed")
        n_paths += job.get("substitution") is not None
        if n_paths:
            found.append(MeasuredJob(float(wall), n_paths, sum(m.GetNumHeavyAtoms() for m in mols),
                                     f"{folder}/batch.json"))
    return found


@dataclass(frozen=True)
class PlanJob:
    """One job of the plan: its id, substrate, base, solvent label, the base's model in that solvent (a
    ``basemodels.ResolvedModel``) and why it will fail on its input (or None)."""

    job_id: str
    substrate_name: str
    substrate_smiles: str
    base: object
    solvent: str
    model: object
    input_error: str | None = None


def _solvent_label(solvent) -> str:
    """Return 'ALPB(ethanol)' or 'gas phase' for a solvent config."""
    from elimscan.solvents import medium_label

    return medium_label(solvent.model, solvent.name)


def _base_label(job: PlanJob) -> str:
    """Return how a job's base is modelled and why: 'bare base; default: bare ...', '3 explicit ... molecule(s); default
    for an alkoxide in a protic solvent (ethanol)'."""
    return f"{job.model.words()}; {job.model.reason}"


def _model(base, solvent) -> object:
    """Return the model a base gets in a solvent config (``basemodels.resolve_base_model``)."""
    from elimscan.chem.basemodels import resolve_base_model

    return resolve_base_model(base, solvent.model, solvent.name)


def substrate_lines(name: str, smiles: str, seed: int) -> tuple[list[str], int]:
    """Return the plan's lines for one substrate (1-based atom numbers) and its number of beta-H classes."""
    from elimscan.chem.perception import perceive_substrate
    from elimscan.errors import StructureError

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            sub = perceive_substrate(smiles, seed=seed)
    except StructureError as err:
        return [f"substrate {name}  {smiles}", f"  will fail: {err}"], 0
    mol = sub.mol

    def atom(i: int) -> str:
        return f"{mol.GetAtomWithIdx(i).GetSymbol()}{i + 1}"

    lg = sub.leaving_group
    lines = [f"substrate {name}  {smiles}",
             f"  leaving group {lg.label} (atom {atom(lg.leaving_atom_index)}) on C-alpha {atom(lg.c_alpha_index)}",
             f"  beta-H classes: {len(sub.beta_classes)} (atoms numbered from 1: heavy atoms in SMILES order, then H)"]
    for beta in sub.beta_classes:
        hydrogens = ", ".join(atom(h) for h in beta.hydrogen_indices)
        lines.append(f"    {atom(beta.beta_carbon_index)}-H{beta.representative_index + 1}: "
                     f"{beta.degeneracy} H ({hydrogens})")
        for approach, alkene in (("anti", beta.anti_product), ("syn", beta.syn_product)):
            pattern = alkene.substitution if alkene.substitution == "unsubstituted" else f"{alkene.substitution}substituted"
            what = f"{alkene.smiles} ({pattern}, {alkene.ring_position})"
            if not alkene.possible:
                what += f"; not formed: {alkene.note}"
            lines.append(f"      {approach:<4} -> {what}")
    return lines, len(sub.beta_classes)


def _plan_jobs(config, config_path: str) -> list[PlanJob]:
    """Return the jobs of a config after every input check (a batch's bad file rows as jobs that will fail)."""
    from elimscan.pipeline.names import job_id_of

    if batch_only(config):
        plan, _ = check_batch_inputs(config, config_path)
        warn_sizes((job.job_id, job.substrate_smiles, job.base.smiles) for job in plan.jobs if job.input_error is None)
        return [PlanJob(job.job_id, job.substrate_name, job.substrate_smiles, job.base, _solvent_label(job.solvent),
                        _model(job.base, job.solvent),
                        None if job.input_error is None else job.input_error.error_message) for job in plan.jobs]
    check_inputs(config, config_path)
    warn_sizes((job_id_of(s.name, b.name), s.smiles, b.smiles) for s, b in config.jobs())
    solvent = _solvent_label(config.method.solvent)
    return [PlanJob(job_id_of(s.name, b.name), s.name, s.smiles, b, solvent, _model(b, config.method.solvent))
            for s, b in config.jobs()]


def _heavy_atoms(substrate_smiles: str, base, model) -> int:
    """Return the heavy atoms of a job as modelled: substrate, base, its cation and its explicit molecules."""
    from rdkit import Chem

    def count(smiles: str) -> int:
        return Chem.MolFromSmiles(smiles).GetNumHeavyAtoms()

    return (count(substrate_smiles) + count(base.smiles) + (model.counter_ion is not None)
            + model.explicit * count(model.explicit_smiles or base.smiles))


def job_estimate(config, job: PlanJob, n_classes: int, unit_s: float) -> tuple[int, int, float]:
    """Return a job's (paths, heavy atoms as modelled, estimated wall time in s on one core)."""
    n_paths = len(config.paths.approaches) * n_classes + int(config.paths.substitution)
    heavy = _heavy_atoms(job.substrate_smiles, job.base, job.model)
    return n_paths, heavy, job_seconds(unit_s, n_paths, heavy)


def plan_lines(config, config_path: str, jobs: list[PlanJob], measured: list[MeasuredJob]) -> list[str]:
    """Return the whole plan as lines of text: substrates, jobs and the rough time (one core)."""
    substrates = {job.substrate_name: job.substrate_smiles for job in jobs}
    n_bases = len({job.base.name for job in jobs})
    lines = [f"plan of {config_path} ({config.name}): {len(substrates)} substrate(s), {n_bases} base(s), "
             f"{len(jobs)} job(s); {config.method.hamiltonian} at {config.method.temperature_K:g} K", ""]
    classes: dict[str, int] = {}
    for name, smiles in substrates.items():
        block, classes[name] = substrate_lines(name, smiles, config.seed)
        lines += block + [""]
    lines.append("jobs (substrate + base, base model, solvent):")
    total_s, n_estimated = 0.0, 0
    anchor = statistics.median(seconds_per_path(m) for m in measured or [MEASURED_JOB])  # s per path, 8 heavy atoms
    for job in jobs:
        line = f"  {job.job_id}: {job.substrate_name} + {job.base.name} ({_base_label(job)}), {job.solvent}"
        if job.input_error is not None:
            line += f"; will fail: {job.input_error}"
        elif classes.get(job.substrate_name):
            n_paths, heavy, seconds = job_estimate(config, job, classes[job.substrate_name], anchor)
            total_s += seconds
            n_estimated += 1
            line += f"; {n_paths} path{'' if n_paths == 1 else 's'}, {heavy} heavy atoms, {rough_duration(seconds)}"
        lines.append(line)
    basis = (f"the {len(measured)} finished job(s) of {measured[0].source}" if measured else
             f"{MEASURED_JOB.source}: an estimate")
    lines += ["", f"time: {rough_duration(total_s)} on one core for {n_estimated} job(s), within a factor of "
                  f"{ESTIMATE_FACTOR} either way (the substrates' conformer searches and scans not counted); "
                  f"scaled by paths and the cube of the heavy atoms from {basis}"]
    return lines


def cmd_plan(args: argparse.Namespace) -> int:
    """Check a config without computing and print its plan to standard output; return the exit code."""
    config = with_engine(read_config(args.config), args)
    jobs = _plan_jobs(config, args.config)
    measured = measured_from_folder(Path(args.costs)) if args.costs else []
    if args.costs and not measured:
        log.warning("--costs %s: no finished ok job with a wall time; using the stated estimate instead", args.costs)
    for line in plan_lines(config, args.config, jobs, measured):
        echo(line)
    return ExitCode.OK


def cmd_validate(args: argparse.Namespace) -> int:
    """The old name of ``plan``: print a one-line notice, then the plan; return the exit code."""
    log.warning("note: 'elimscan validate' is now 'elimscan plan' (the old name still works for now)")
    return cmd_plan(args)
