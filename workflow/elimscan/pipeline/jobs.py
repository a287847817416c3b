"""One job (substrate x base, in the config's solvent) from start to records and file contents.

This is the unit of work of a batch: a worker process calls ``run_job`` and returns its ``JobOutcome``;
only the driver writes files and the store. No file I/O here.
"""

from __future__ import annotations

from dataclasses import dataclass

from elimscan.pipeline import artifacts
from elimscan.config import BaseConfig, RunConfig, SolventConfig, SubstrateConfig
from elimscan.config.dft import BSE_BASIS_KEYS
from elimscan.engines.contract import PointLog
from elimscan.pipeline.assemble import failed_job_record, pack_job, substrate_molecule_record, with_dft
from elimscan.pipeline.compute import run_config
from elimscan.pipeline.document import canonical_solvent, job_key, provenance, run_document, substrate_inputs
from elimscan.pipeline.energetics import job_numbers
from elimscan.pipeline.outcome import ProgressCallback, RunOutcome
from elimscan.results.documents import RunResult
from elimscan.results.records import JobRecord, MoleculeRecord
from elimscan.versions import numeric_versions


@dataclass(frozen=True)
class JobOutcome:
    """A finished job: its record, the records of its two molecules, and its files {relative path: bytes}."""

    job: JobRecord
    molecules: tuple[MoleculeRecord, ...]
    files: dict[str, bytes]


def single_job_config(config: RunConfig, substrate: SubstrateConfig, base: BaseConfig,
                      solvent: SolventConfig | None = None) -> RunConfig:
    """Return the config restricted to one substrate, one base and one solvent (every other setting kept).

    ``solvent`` replaces ``method.solvent`` (a batch's ``solvents:`` entry); the batch-only keys are cleared.
    """
    update = {"substrates": (substrate,), "bases": (base,), "pairs": None, "solvents": None, "substrates_file": None}
    if solvent is not None:
        update["method"] = config.method.model_copy(update={"solvent": solvent})
    return config.model_copy(update=update)


def job_record(substrate_cfg: SubstrateConfig, base_cfg: BaseConfig, outcome: RunOutcome, config: RunConfig) -> JobRecord:
    """Return the record of one job: beta-H classes, products and the rule's verdict, or its failure.

    Its numbers are computed first (``energetics.job_numbers``), then packed (``assemble``) with the DFT tier.
    """
    analysis, base = outcome.substrates[substrate_cfg.name], outcome.bases[base_cfg.name]
    failed = failed_job_record(substrate_cfg, base_cfg, analysis, base)
    if failed is not None:
        return failed
    paths = outcome.paths.get((substrate_cfg.name, base_cfg.name), {})
    numbers = job_numbers(analysis, base, base_cfg, paths, config)
    return with_dft(pack_job(substrate_cfg, base_cfg, analysis, base, paths, numbers, config),
                    outcome.dft.get((substrate_cfg.name, base_cfg.name)), config)


def job_outcomes(config: RunConfig, outcome: RunOutcome, method_label: str,
                 solvent: SolventConfig | None = None) -> list[JobOutcome]:
    """Return one JobOutcome per job of a computed run (records stamped with the solvent, and their files).

    A run shares each substrate's analysis and each base between its jobs, so their files repeat from one
    outcome to the next with the same contents.
    """
    stamp = {"solvent": solvent or config.method.solvent}
    found = []
    for substrate, base in outcome.jobs:
        analysis = outcome.substrates[substrate.name]
        files: dict[str, bytes] = {}
        substrate_record = substrate_molecule_record(substrate, analysis)
        if substrate_record.status == "ok":
            files.update(artifacts.substrate_files(substrate.name, analysis, method_label))
        relaxed = outcome.bases[base.name].relaxed
        base_record = relaxed.record
        xyz = artifacts.base_file(base.name, relaxed, method_label)
        if xyz is not None:
            files[xyz[0]] = xyz[1]
            base_record = base_record.model_copy(update={"xyz_file": xyz[0]})
        record = job_record(substrate, base, outcome, config)
        files.update(artifacts.path_files(record, outcome.paths.get((substrate.name, base.name), {}), method_label))
        found.append(JobOutcome(record.model_copy(update=stamp),
                                (substrate_record.model_copy(update=stamp), base_record.model_copy(update=stamp)),
                                files))
    return found


def run_job(substrate: SubstrateConfig, base: BaseConfig, config: RunConfig, engine,
            geometry: tuple[str, str] | None = None, on_progress: ProgressCallback | None = None,
            replay: PointLog | None = None) -> JobOutcome:
    """Return the outcome of one job in ``config.method.solvent``; known failures are inside the record, not raised.

    The job's solvent is recorded on its job record and on both molecule records, and so are the number of
    single points the engine had to keep at the retry electronic temperature while running it and the number
    served from ``replay``, the job's replay log (points a stopped earlier run of the job finished; see
    ``compute.run_config``).
    """
    one = single_job_config(config, substrate, base)
    hot_before = engine.stats.hot_points
    served_before = 0 if replay is None else replay.served
    outcome = run_config(one, engine, on_progress, {substrate.name: geometry} if geometry else None, replay)
    (done,) = job_outcomes(one, outcome, engine.label)
    record = done.job.model_copy(update={"retry_temperature_points": engine.stats.hot_points - hot_before,
                                         "replayed_points": 0 if replay is None else replay.served - served_before})
    return JobOutcome(record, done.molecules, done.files)


def compute_run(config: RunConfig, engine, on_progress: ProgressCallback | None = None,
                geometries: dict[str, tuple[str, str]] | None = None,
                command_line: str = "", replay: PointLog | None = None) -> tuple[RunResult, dict[str, bytes]]:
    """Return the result document of a whole run and its files {relative path: bytes}; nothing is written.

    Every job is keyed as a batch keys it, and the document is built by ``pipeline.document.run_document``,
    as for a batch. ``replay`` is the run's replay log (see ``compute.run_config``).
    """
    outcome = run_config(config, engine, on_progress, geometries, replay)
    done = job_outcomes(config, outcome, engine.label)
    files: dict[str, bytes] = {}
    for job in done:
        files.update(job.files)
    versions = numeric_versions(config.method.backend, dft=config.dft.enabled,
                                basis_data=config.dft.basis in BSE_BASIS_KEYS)
    solvent = canonical_solvent(config.method.solvent, config)
    keyed = [job.job.model_copy(update={"job_key": job_key(
        config, substrate_inputs(substrate, (geometries or {}).get(substrate.name, (None,))[0]), base, solvent,
        versions)}) for job, (substrate, base) in zip(done, outcome.jobs)]
    molecules = [m for job in done for m in job.molecules]
    return (run_document(config, provenance(config, command_line, versions), keyed, molecules,
                         engine.stats.hot_points), files)
