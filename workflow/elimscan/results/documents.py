"""The result documents: results.json of a run, batch.json of a batch and each batch job's job.json, with their
schema names and versions.

Every document carries ``schema_name`` and ``schema_version``; the unit is in each field name. Besides the
job records (``records``) they hold provenance, seeds, run counts, substituent series and the batch's jobs.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field, model_validator

from elimscan.config import ExecutorConfig, RunConfig, SolventConfig
from elimscan.results.records import ErrorInfo, JobRecord, MoleculeRecord, Record
from elimscan.results.relabel import OLD_JOB_COPY_VERSIONS, OLD_RESULT_VERSIONS, class_map, relabel_job, relabel_text

RESULT_SCHEMA_NAME = "elimscan.result"
#: 0.7.1 added the path records' reaches_products (a path shown not to reach its products) and budget_spent_in (a
#: path stopped by its gradient budget), the config keys paths.gradient_budget_per_atom and substrates[].experiment
#: (observations per base, shown and scored in the report); it also renamed the 0-based atom indices of the job
#: records (leaving_atom_index0, c_alpha_index0, beta_carbon_index0, hydrogen_indices0, representative_index0,
#: deuterated_indices0, basic_atom_index0: older names are still read), numbers the atoms of class_id from 1,
#: splits the rule call 'forbidden' into 'syn only' and 'blocked', and adds the structure files of each path
#: (complex_file, product_file).
#: 0.7.0 added optional fields only: config keys method.engine_factory and paths.saddle.path_point_starts, and
#: provenance.scipy_version, sella_version and pyscf_version (every library of the job key); run's documents now
#: carry each job's solvent and key as batch's do.
#: 0.6.1 added one optional field (jobs[].retry_temperature_points and its summary.trouble entry).
#: 0.6.0 added optional fields only (DFT single points, substituent series, base models, path starts and their
#: combination, summary.trouble; config keys dft, series, solvent model dielectric, base models, stage limits).
#: 0.5.0 added optional fields only (free energies, isotope effects, saddle character, the SN2 block,
#: energy_used). 0.4.0 added optional fields only (the job's solvent and key, the molecule's solvent; config keys
#: substrates_file and executor): documents of 0.3.0 stay valid and are still read.
#: 0.7.3 (optional additions, documents stay valid both ways): molecules[].arrangements and
#: arrangement_spread_kcal_mol (the base cluster's hydrogen-bond arrangements), molecules[].model_reason and
#: jobs[].base_info.model_reason (why a base got its model); config bases[].model.arrangements, and
#: bases[].model.explicit may be null (the per-solvent default).
#: 0.8.0 added optional fields only: the DFT saddle rung (config dft.saddles and dft.reoptimise_*; per path
#: dft.saddle; jobs[].dft.saddles, n_saddles_reoptimised, n_saddles_verified, n_gradients) and the config key
#: paths.carry_hessian.
#: 0.8.1 added one optional config key: dft.memory_limit_MB (the DFT tier's memory guard; a refused calculation's
#: error_type is dft_memory_limit, a string as every error_type).
#: 0.8.2 added two optional config keys: paths.complex_screen_fmax_eV_per_A and complex_screen_window_kcal_mol (base
#: rotations screened loosely with BFGS, only the chosen ones relaxed on).
#: 0.8.3 added one optional config key: paths.complex_optimizer (the optimiser of the complex relaxations; null:
#: method.optimizer) and one value of method.optimizer.name: sella-cartesian (Sella in Cartesians); and it changed
#: what two fields hold: under barrier_combination boltzmann, barrier_free_energy_kcal_mol is the Boltzmann sum over
#: the starts' verified saddles (before: the lowest start's saddle alone); with paths.orientation_paths > 1 the
#: substitution block's barriers come from that many sampled SN2 paths; and one optional config key
#: bases[].model.embeddings (a base model's molecules embedded that many times; molecule records' arrangements
#: count every relaxed start).
#: 0.8.4: config bases[].model.embeddings may be null (the resolved model's default: five embeddings for the
#: per-solvent default cluster, one otherwise); documents of 0.8.3 stay valid.
#: 0.8.5 added values only: config dft.functional 'wb97x-3c' (the wB97X-3c composite) and dft.basis 'vdzp' (its
#: basis, allowed with it alone); documents of 0.8.4 stay valid.
#: 0.8.6 added one optional config key: optimizer.internal_rebuild_limit (Sella's internal coordinates handed to its
#: Cartesian mode after that many rebuilds in one relaxation; null: never, as before).
#: 0.8.7 (commit 1906f10, reverted by a3e411d) changed two defaults for a trial (optimizer.internal_rebuild_limit 5,
#: paths.carry_hessian true); its documents stay readable.
#: 0.8.8 changed one default only: optimizer.internal_rebuild_limit 30 (was null); documents of 0.8.6 and 0.8.7 stay
#: valid.
#: 0.8.9 added two config keys with defaults that change results: paths.complex_clearance_vdw_fraction (0.7; null
#: places the base as before) and paths.complex_bond_check (true); a new error type complex_bonds_changed. Documents
#: of 0.8.8 stay valid.
#: 0.8.10 added paths.complex_base_bond_check (true; false checks the substrate's bonds only, as before): a complex
#: whose base cluster changed its own bonds is dropped as complex_bonds_changed. Documents of 0.8.9 stay valid.
#: 0.8.11 added one optional field: jobs[].replayed_points (single points a restarted batch job was served from its
#: replay log). Documents of 0.8.10 stay valid.
#: 0.8.12 added one optional field: stage_gradients of every E2 approach and of the SN2 record (the gradients of
#: each stage of the path). Documents of 0.8.11 stay valid.
RESULT_SCHEMA_VERSION = "0.8.12"
BATCH_SCHEMA_NAME = "elimscan.batch"
BATCH_SCHEMA_VERSION = "0.1.0"
JOB_COPY_SCHEMA_NAME = "elimscan.batch-job"
#: 0.1.1: the job record's renamed index fields and rule calls of result schema 0.7.1; 0.2.0: the optional DFT
#: saddle fields of result schema 0.8.0 (additions only)
JOB_COPY_SCHEMA_VERSION = "0.2.0"


class Provenance(Record):
    """Where a result came from: program, backend, versions and the command line."""

    program: Literal["elimscan"] = "elimscan"
    program_version: str
    command_line: str
    created_utc: str = Field(description="ISO 8601 time the document was written (UTC)")
    python_version: str
    rdkit_version: str
    ase_version: str
    numpy_version: str
    scipy_version: str | None = Field(None, description="SciPy version (it enters the job key); null: a document "
                                      "written before it was recorded")
    sella_version: str | None = Field(None, description="Sella version (it enters the job key); null: a document "
                                      "written before it was recorded")
    pyscf_version: str | None = Field(None, description="PySCF version when the DFT tier is on (it then enters the "
                                      "job key); null: the tier is off")
    backend: str = Field(description="xTB backend library: tblite or xtb (xtb-python)")
    backend_version: str
    method_label: str = Field(description="method, solvation model and backend in one line")


class Seeds(Record):
    """Random seeds used, so that a run can be repeated."""

    rdkit_embedding: int


class SeriesPointRecord(Record):
    """One member of a substituent series: its sigma, its job's lowest E2 barrier and log10(k/k0), or why it is missing."""

    substrate: str
    sigma: float = Field(description="substituent constant from the config (dimensionless)")
    status: Literal["ok", "missing"]
    job_id: str | None = None
    barrier_kcal_mol: float | None = Field(None, description="lowest E2 barrier of the job, of the kind in the "
                                           "series' energy_used (dE or dG, kcal/mol)")
    barrier_source: Literal["verified saddle", "relaxed-path maximum"] | None = None
    path: str | None = Field(None, description="the lowest path: beta-H class and approach")
    log10_k_rel: float | None = Field(None, description="log10(k/k0) = -(barrier - barrier of k0) / (RT ln 10)")
    note: str | None = Field(None, description="why the member has no barrier")


class SeriesRecord(Record):
    """A substituent series: barrier and log10(k/k0) against sigma with the fitted slope rho and r^2."""

    name: str
    base: str
    solvent: SolventConfig | None = Field(None, description="implicit solvent of the series' jobs (batches); null: "
                                          "the config's method.solvent")
    energy_used: Literal["electronic", "free"] = Field(description="which barriers were fitted (dE or dG)")
    temperature_K: float
    sigma_source: str | None = None
    reference_substrate: str | None = Field(None, description="k0: the member with sigma 0, else the first with a barrier")
    points: tuple[SeriesPointRecord, ...]
    n_fitted: int = Field(description="members with a barrier, all of them in the fit")
    rho: float | None = Field(None, description="slope of log10(k/k0) against sigma; null: too few members to fit")
    intercept: float | None = Field(None, description="fitted log10(k/k0) at sigma 0")
    r_squared: float | None = Field(None, description="null: no fit, or every fitted barrier the same (0/0)")
    note: str | None = None


class RunSummary(Record):
    """Counts over the run."""

    n_jobs: int
    n_jobs_ok: int
    n_jobs_failed: int
    n_molecules_failed: int
    trouble: dict[str, int] = Field(default_factory=dict, description=(
        "numerical trouble recorded as data, counted over the jobs: 'job failed: <error_type>', 'path failed: "
        "<error_type>' (one anti or syn path of a beta-H class), 'saddle not verified' (refinement collapsed or "
        "wrong imaginary modes; the barrier is the relaxed-path maximum), 'scan point failed', 'scan point above cap', 'complex orientation failed' (one base orientation of a "
        "path's complex, skipped; the path used the others), 'single point at retry electronic temperature' (SCF "
        "converged only with the retry's Fermi smearing: that energy lies on a smeared surface)"))


class RunResult(Record):
    """The document results.json: provenance, resolved config, seeds, molecules and jobs."""

    schema_name: Literal["elimscan.result"] = RESULT_SCHEMA_NAME
    schema_version: Literal["0.8.12", "0.8.11", "0.8.10", "0.8.9", "0.8.8", "0.8.7", "0.8.6", "0.8.5", "0.8.4", "0.8.3", "0.8.2", "0.8.1", "0.8.0", "0.7.3", "0.7.2", "0.7.1", "0.7.0", "0.6.1", "0.6.0", "0.5.0", "0.4.0", "0.3.0"] = RESULT_SCHEMA_VERSION
    provenance: Provenance
    config: RunConfig
    seeds: Seeds
    molecules: tuple[MoleculeRecord, ...]
    jobs: tuple[JobRecord, ...]
    summary: RunSummary
    series: tuple[SeriesRecord, ...] = Field((), description="substituent series (Hammett fits) of the config")

    @model_validator(mode="before")
    @classmethod
    def _numbered_from_one(cls, data: object) -> object:
        """Return a document of schema 0.7.0 or older with its class labels numbered from 1 (``relabel``)."""
        if not isinstance(data, dict) or data.get("schema_version") not in OLD_RESULT_VERSIONS:
            return data
        jobs = data.get("jobs")
        maps = {j.get("job_id"): class_map(j) for j in jobs if isinstance(j, dict)} if isinstance(jobs, list) else {}
        series = data.get("series")
        if isinstance(series, list):
            series = [{**s, "points": [{**pt, "path": relabel_text(pt["path"], maps.get(pt.get("job_id"), {}))}
                                       if isinstance(pt, dict) and isinstance(pt.get("path"), str) else pt
                                       for pt in s.get("points") or ()]} if isinstance(s, dict) else s for s in series]
            data = {**data, "series": series}
        if isinstance(jobs, list):
            data = {**data, "jobs": [relabel_job(j) for j in jobs]}
        return data


class FileChecksum(Record):
    """One file a batch job wrote: its path, SHA-256 and size, as committed to the store."""

    path: str = Field(description="relative to the output folder")
    sha256: str
    size_bytes: int


class BatchJobEntry(Record):
    """One job of a batch as the store holds it."""

    job_key: str = Field(description="SHA-256 of the job's inputs and every setting that changes its numbers")
    job_id: str
    substrate: str
    base: str
    solvent: SolventConfig
    source: str = Field(description="where the substrate came from: 'config' or '<file> line <n>'")
    status: Literal["ok", "failed", "not finished"]
    error: ErrorInfo | None = None
    job_starts: int = Field(description="times a worker started this job (all batch runs in this folder)")
    started_utc: str | None = None
    finished_utc: str | None = None
    wall_seconds: float | None = Field(None, description="wall time of the finished attempt (s)")
    worker: str | None = Field(None, description="the worker that finished it (local process or Dask worker)")
    folder: str | None = Field(None, description="folder of the job's files, relative to the output folder")
    files: tuple[FileChecksum, ...] = ()


class BatchCounts(Record):
    """Jobs of the current config: finished ok, failed, and not finished."""

    n_jobs: int
    n_ok: int
    n_failed: int
    n_not_finished: int


class BatchIndex(Record):
    """The document batch.json: every job of a batch's current config, its key, state, time and files."""

    schema_name: Literal["elimscan.batch"] = BATCH_SCHEMA_NAME
    schema_version: Literal["0.1.0"] = BATCH_SCHEMA_VERSION
    provenance: Provenance
    config_name: str
    complete: bool = Field(description="every job finished (ok or failed); results.json then holds them all")
    store_file: str = Field(description="the SQLite store, relative to the output folder")
    substrates_file: str | None = Field(None, description="the substrates file as the config names it")
    substrates_file_sha256: str | None = None
    executor: ExecutorConfig
    counts: BatchCounts
    jobs: tuple[BatchJobEntry, ...]
    series: tuple[SeriesRecord, ...] = Field((), description="substituent series over the jobs finished so far")


class FinishedJobCopy(Record):
    """The document job.json in a finished batch job's folder: its store row (records, times, the checksums of its
    other files), from which a damaged store is rebuilt."""

    schema_name: Literal["elimscan.batch-job"] = JOB_COPY_SCHEMA_NAME
    schema_version: Literal["0.2.0", "0.1.1", "0.1.0"] = JOB_COPY_SCHEMA_VERSION
    job_key: str = Field(description="SHA-256 of the job's inputs and every setting that changes its numbers")
    job_id: str
    substrate: str
    base: str
    solvent: str = Field(description="the solvent label as the store keeps it (model and name)")
    source: str = Field(description="where the substrate came from: 'config' or '<file> line <n>'")
    status: Literal["ok", "failed"]
    job: JobRecord
    molecules: tuple[MoleculeRecord, ...]
    folder: str = Field(description="this file's folder, relative to the output folder")
    started_utc: str | None = None
    finished_utc: str
    wall_seconds: float | None = Field(None, description="wall time of the job (s)")
    worker: str | None = Field(None, description="the worker that computed it (local process or Dask worker)")
    files: tuple[FileChecksum, ...] = Field((), description="the job's other files, as committed to the store")

    @model_validator(mode="before")
    @classmethod
    def _numbered_from_one(cls, data: object) -> object:
        """Return a job copy of schema 0.1.0 with its class labels numbered from 1 (``relabel``)."""
        if isinstance(data, dict) and data.get("schema_version") in OLD_JOB_COPY_VERSIONS:
            return {**data, "job": relabel_job(data.get("job"))}
        return data
