"""Frozen, unit-tagged result models and the JSON Schema files exported from them.

Every document carries ``schema_name`` and ``schema_version``; the unit is in each field name
(``energy_hartree``, ``relax_seconds``). ``python -m elimscan.results.records DIR`` writes the schema files.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any, Literal

from pydantic import BaseModel, ConfigDict, Field

from elimscan.config import ExecutorConfig, RunConfig, SolventConfig

RESULT_SCHEMA_NAME = "elimscan.result"
#: 0.6.1 added one optional field (jobs[].retry_temperature_points and its summary.trouble entry).
#: 0.6.0 added optional fields only (DFT single points, substituent series, base models, path starts and their
#: combination, summary.trouble; config keys dft, series, solvent model dielectric, base models, stage limits).
#: 0.5.0 added optional fields only (free energies, isotope effects, saddle character, the SN2 block,
#: energy_used). 0.4.0 added optional fields only (the job's solvent and key, the molecule's solvent; config keys
#: substrates_file and executor): documents of 0.3.0 stay valid and are still read.
RESULT_SCHEMA_VERSION = "0.6.1"
BATCH_SCHEMA_NAME = "elimscan.batch"
BATCH_SCHEMA_VERSION = "0.1.0"
SCHEMA_BASE_URI = "https://elimscan.invalid/results-schema"


class _Record(BaseModel):
    """Base of every result model: immutable, unknown fields refused."""

    model_config = ConfigDict(extra="forbid", frozen=True)


class ErrorInfo(_Record):
    """Why something failed: our error class's error_type and a message naming the input."""

    error_type: str = Field(description="machine-readable kind of failure, e.g. scf_not_converged")
    error_message: str = Field(description="human-readable message naming the offending input")


class Provenance(_Record):
    """Where a result came from: program, backend, versions and the command line."""

    program: Literal["elimscan"] = "elimscan"
    program_version: str
    command_line: str
    created_utc: str = Field(description="ISO 8601 time the document was written (UTC)")
    python_version: str
    rdkit_version: str
    ase_version: str
    numpy_version: str
    backend: str = Field(description="xTB backend library: tblite or xtb (xtb-python)")
    backend_version: str
    method_label: str = Field(description="method, solvation model and backend in one line")


class Seeds(_Record):
    """Random seeds used, so that a run can be repeated."""

    rdkit_embedding: int


class MoleculeRecord(_Record):
    """One relaxed molecule (substrate or base) and its GFN2-xTB energy."""

    name: str
    role: Literal["substrate", "base"]
    smiles: str
    status: Literal["ok", "failed"]
    charge: int | None = None
    multiplicity: int | None = None
    n_atoms: int | None = None
    formula: str | None = None
    energy_hartree: float | None = Field(None, description="electronic energy incl. implicit solvation (hartree)")
    converged: bool | None = None
    n_gradients: int | None = Field(None, description="energy+gradient evaluations spent on the relaxation")
    relax_seconds: float | None = Field(None, description="wall time of the relaxation (s)")
    xyz_file: str | None = Field(None, description="relaxed geometry, extended XYZ, path relative to the output folder")
    model: str | None = Field(None, description="base model: null or 'bare', else the counter-ion and explicit "
                              "molecules around the basic atom (smiles is then the dot-separated cluster)")
    error: ErrorInfo | None = None
    solvent: SolventConfig | None = Field(None, description="implicit solvent of this record (batches); null: the "
                                          "config's method.solvent")


class LeavingGroupRecord(_Record):
    """The leaving group: label, kind, the leaving atom and C-alpha (0-based indices), the user's map number."""

    label: str
    kind: str
    leaving_atom_index: int
    c_alpha_index: int
    map_number: int | None = Field(None, description="1-based SMILES atom-map label, when the user gave one")


class ConformerRecord(_Record):
    """One conformer of the substrate ensemble."""

    conformer_id: int
    relative_energy_kcal_mol: float
    energy_hartree: float
    source: str = Field(description="etkdg, chair+ / chair- (built on purpose) or user; duplicates join labels with +")
    ring_shapes: tuple[str, ...]


class ScanPointRecord(_Record):
    """One point of an H-C-C-X scan."""

    dihedral_deg: float = Field(description="measured dihedral on (-180, 180]")
    relative_energy_kcal_mol: float | None = Field(description="above the substrate's global minimum")
    status: Literal["ok", "above_cap", "failed"]
    ring_shapes: tuple[str, ...]


class ScanRecord(_Record):
    """One H-C-C-X scan: its start, its points and why branches stopped."""

    start: str
    points: tuple[ScanPointRecord, ...]
    notes: tuple[str, ...]
    xyz_file: str | None = Field(None, description="extended XYZ trajectory, relative to the output folder")


class PathPointRecord(_Record):
    """One point of a relaxed E2 path."""

    coordinate_A: float = Field(description="d(Cb-H) - d(B-H) + d(Ca-X)")
    relative_energy_kcal_mol: float = Field(description="above substrate global minimum + free base")
    c_beta_h_A: float
    base_h_A: float
    c_alpha_x_A: float


class SaddleCharacterRecord(_Record):
    """Where a verified E2 saddle sits: fractional C-H and C-X cleavage (Pauling bond orders) and a label."""

    c_h_cleavage: float = Field(description="1 - Pauling bond order of C-beta-H at the saddle (0 intact, 1 broken)")
    c_x_cleavage: float = Field(description="1 - Pauling bond order of C-alpha-X at the saddle")
    label: Literal["carbanion-like", "central", "carbocation-like"]


class IsotopeEffectRecord(_Record):
    """A primary kinetic isotope effect k_H/k_D of one beta-H class (harmonic Bigeleisen-Mayer)."""

    label: str = Field(description="which hydrogens carry deuterium")
    deuterated_indices: tuple[int, ...]
    approach: Literal["anti", "syn"]
    kh_kd: float
    kh_kd_wigner: float = Field(description="with Wigner's tunnelling correction")
    temperature_K: float


class DftPointRecord(_Record):
    """One DFT single point on a path top (PySCF, level in the job's dft block), or why it failed."""

    status: Literal["ok", "failed"]
    energy_hartree: float | None = Field(None, description="DFT total energy incl. dispersion and implicit solvation")
    dispersion_hartree: float | None = Field(None, description="dispersion correction inside energy_hartree")
    geometry: Literal["verified saddle", "relaxed-path maximum"] | None = Field(
        None, description="the GFN2-xTB geometry computed: the verified saddle, else the relaxed-path maximum")
    seconds: float | None = Field(None, description="wall time of the single point (s)")
    scf_cycles: int | None = None
    error: ErrorInfo | None = None


class ApproachRecord(_Record):
    """The anti or syn elimination of one beta-H class: product, best periplanar geometry, and its barrier."""

    product_smiles: str
    product_substitution: str
    product_conjugated: bool
    product_ring_position: str
    product_possible: bool
    penalty_kcal_mol: float | None = Field(description="lowest periplanar energy above the global minimum; null: never reached")
    dihedral_deg: float | None
    geometry_source: str | None
    ring_shapes: tuple[str, ...]
    path_status: Literal["ok", "failed", "not computed"] = "not computed"
    barrier_kcal_mol: float | None = Field(None, description="electronic dE (GFN2-xTB) of the top of this path above "
                                           "substrate global minimum + free base, same solvent")
    relative_barrier_kcal_mol: float | None = Field(None, description="above the lowest barrier of the job")
    barrier_source: Literal["verified saddle", "relaxed-path maximum"] | None = None
    barrier_free_energy_kcal_mol: float | None = Field(None, description="dG (quasi-RRHO, 1 M, T of the run) of the "
                                                       "verified saddle above free substrate + free base")
    saddle_character: SaddleCharacterRecord | None = None
    relaxed_path_estimate_kcal_mol: float | None = None
    saddle_verified: bool = False
    imaginary_frequency_cm1: float | None = None
    saddle_note: str | None = None
    saddle_method: str | None = Field(None, description="how the saddle was searched (start of the Sella refinement)")
    saddle_error_type: str | None = Field(None, description="why the saddle is not verified, machine-readable: "
                                          "saddle_search_failed, saddle_not_converged, saddle_collapsed, "
                                          "saddle_wrong_modes, saddle_not_connected, no_interior_maximum, neb_failed; "
                                          "null when verified or not refined")
    complex_energy_kcal_mol: float | None = Field(None, description="base-substrate complex above the same zero")
    complex_rotation_spread_kcal_mol: float | None = Field(None, description="max - min over the base rotations tried")
    path_starts: int | None = Field(None, description="paths driven for this approach: backbone conformers x "
                                    "base orientations")
    start_spread_kcal_mol: float | None = Field(None, description="max - min path top over those starts (kcal/mol); "
                                                "null when one start")
    barrier_combination: Literal["lowest", "boltzmann"] | None = Field(
        None, description="how several starts make barrier_kcal_mol: the lowest top, or a Boltzmann sum of the "
        "distinct tops (then the saddle fields, barrier_source and barrier_free_energy_kcal_mol describe the "
        "lowest start only, and the distinct tops may mix verified saddles with path maxima of other starts)")
    flags: tuple[str, ...] = ()
    n_gradients: int | None = None
    path: tuple[PathPointRecord, ...] = ()
    path_file: str | None = Field(None, description="extended XYZ of the path, relative to the output folder")
    saddle_file: str | None = Field(None, description="extended XYZ: saddle and frames along its imaginary mode")
    error: ErrorInfo | None = None
    barrier_dft_kcal_mol: float | None = Field(
        None, description="DFT single-point energy of this path's top geometry relative to the lowest DFT saddle of the "
        "job (electronic dE, kcal/mol); above DFT free substrate + free base when dft.absolute_barriers is on (see the "
        "job's dft.zero_kind); null: not computed")
    dft: DftPointRecord | None = Field(None, description="the DFT single point behind barrier_dft_kcal_mol")


class BetaHydrogenRecord(_Record):
    """One class of symmetry-equivalent beta hydrogens."""

    class_id: str
    beta_carbon_index: int
    hydrogen_indices: tuple[int, ...]
    representative_index: int
    degeneracy: int
    anti_penalty_kcal_mol: float | None
    syn_penalty_kcal_mol: float | None
    rule_status: Literal["anti accessible", "syn only", "blocked"]
    anti: ApproachRecord
    syn: ApproachRecord
    isotope_effects: tuple[IsotopeEffectRecord, ...] = ()
    scans: tuple[ScanRecord, ...]


class ProductRecord(_Record):
    """One alkene and the geometric rule's call on it."""

    smiles: str
    substitution: str
    rule_call: Literal["major", "minor", "forbidden"]
    via_classes: tuple[str, ...]
    reason: str
    fraction: float | None = Field(None, description="computed share (Curtin-Hammett, Boltzmann over path barriers)")
    fraction_range: tuple[float, float] | None = Field(None, description="share when every barrier moves by +-1 kcal/mol")
    fraction_dft: float | None = Field(None, description="share from the DFT single points of the job's saddles "
                                       "(Curtin-Hammett over the refined saddles); null: no DFT tier or no DFT saddle")


class BaseRecord(_Record):
    """The base as the rule sees it."""

    basic_atom_index: int
    bulky: bool
    bulky_reason: str
    smiles: str | None = Field(None, description="the base itself (without counter-ion or explicit molecules)")
    model: str | None = Field(None, description="base model: 'bare', or the counter-ion and explicit molecules")


class RuleRecord(_Record):
    """The geometric rule's verdict for one job."""

    rule_major: str | None
    hofmann_shift: bool
    energy_window_kcal_mol: float
    reasoning: tuple[str, ...]


class SubstitutionRecord(_Record):
    """Backside substitution (SN2) at C-alpha: its product, barrier, and the elimination/substitution split."""

    product_smiles: str | None = Field(None, description="inversion at C-alpha, canonical isomeric SMILES")
    path_status: Literal["ok", "failed", "not computed"] = "not computed"
    barrier_kcal_mol: float | None = Field(None, description="same zero and kind as the E2 barriers")
    barrier_free_energy_kcal_mol: float | None = None
    barrier_source: Literal["verified saddle", "relaxed-path maximum"] | None = None
    saddle_verified: bool = False
    imaginary_frequency_cm1: float | None = None
    saddle_note: str | None = None
    path_file: str | None = None
    saddle_file: str | None = None
    error: ErrorInfo | None = None
    elimination_fraction: float | None = Field(None, description="share of all E2 paths against the SN2 path")
    substitution_fraction: float | None = None
    barrier_dft_kcal_mol: float | None = Field(None, description="DFT single point of the SN2 path top, same zero as "
                                               "the E2 barrier_dft_kcal_mol of the job")
    dft: DftPointRecord | None = None
    substitution_fraction_dft: float | None = Field(None, description="share of the SN2 saddle against every DFT "
                                                    "saddle of the job (E2 ones: the lowest few per alkene)")
    rule_call: Literal["substitution", "elimination", "mixture"]
    rule_reason: str


class VerdictRecord(_Record):
    """The rule's major product beside the computed one."""

    rule_major: str | None
    computed_major: str | None
    agreement: bool | None
    within_method_uncertainty: bool
    reason: str


class DftJobRecord(_Record):
    """The optional DFT tier of one job: what ran, at which level, and the DFT-based product mix."""

    status: Literal["ok", "partial", "skipped", "refused", "failed"] = Field(
        description="ok: every chosen saddle computed; partial: some failed; skipped: PySCF missing; refused: "
        "gas-phase DFT with a free ion, or no dielectric constant; failed: no single point succeeded")
    message: str
    level: str | None = Field(None, description="functional, dispersion, basis, fitting and solvation model")
    program_version: str | None = Field(None, description="PySCF version")
    saddles_per_product: int
    n_single_points: int = Field(0, description="saddle single points attempted")
    zero_kind: str | None = Field(None, description="zero of barrier_dft_kcal_mol: the lowest DFT saddle of the job, "
                                  "or DFT free substrate + free base")
    reference_energy_hartree: float | None = None
    computed_major: str | None = Field(None, description="product with the largest DFT share")
    seconds: float | None = Field(None, description="wall time of the tier for this job (s)")
    error: ErrorInfo | None = None


class JobRecord(_Record):
    """One substrate x base job."""

    job_id: str
    substrate: str
    base: str
    status: Literal["ok", "failed"]
    error: ErrorInfo | None = None
    solvent: SolventConfig | None = Field(None, description="implicit solvent of this job (batches); null: the "
                                          "config's method.solvent")
    job_key: str | None = Field(None, description="batch store key: SHA-256 of the job's inputs and of every setting "
                                "and library version that changes its numbers")
    leaving_group: LeavingGroupRecord | None = None
    base_info: BaseRecord | None = None
    global_minimum_hartree: float | None = Field(None, description="lowest substrate energy seen (conformers and scans)")
    conformers: tuple[ConformerRecord, ...] = ()
    conformer_file: str | None = Field(None, description="SDF of the ensemble, relative to the output folder")
    warnings: tuple[str, ...] = ()
    beta_hydrogens: tuple[BetaHydrogenRecord, ...] = ()
    products: tuple[ProductRecord, ...] = ()
    rule: RuleRecord | None = None
    reference_energy_hartree: float | None = Field(None, description="zero of the barriers: substrate global minimum + free base")
    barrier_kind: str | None = Field(None, description="what the barriers are, e.g. electronic energy differences")
    temperature_K: float | None = Field(None, description="temperature of the Boltzmann weights")
    verdict: VerdictRecord | None = None
    energy_used: Literal["electronic", "free"] = Field("electronic", description="which barriers drive the product mix")
    substitution: SubstitutionRecord | None = None
    dft: DftJobRecord | None = Field(None, description="optional DFT single-point tier; null: not asked for")
    retry_temperature_points: int = Field(0, ge=0, description=(
        "GFN2-xTB single points of this job kept at method.retry_electronic_temperature_K because the SCF "
        "failed at the normal temperature, both first and when restarted from the retry's converged "
        "wavefunction; counted per job in batches (one engine per job), run-wide in summary.trouble otherwise"))


class SeriesPointRecord(_Record):
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


class SeriesRecord(_Record):
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


class RunSummary(_Record):
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


class RunResult(_Record):
    """The document results.json: provenance, resolved config, seeds, molecules and jobs."""

    schema_name: Literal["elimscan.result"] = RESULT_SCHEMA_NAME
    schema_version: Literal["0.6.1", "0.6.0", "0.5.0", "0.4.0", "0.3.0"] = RESULT_SCHEMA_VERSION
    provenance: Provenance
    config: RunConfig
    seeds: Seeds
    molecules: tuple[MoleculeRecord, ...]
    jobs: tuple[JobRecord, ...]
    summary: RunSummary
    series: tuple[SeriesRecord, ...] = Field((), description="substituent series (Hammett fits) of the config")


class FileChecksum(_Record):
    """One file a batch job wrote: its path, SHA-256 and size, as committed to the store."""

    path: str = Field(description="relative to the output folder")
    sha256: str
    size_bytes: int


class BatchJobEntry(_Record):
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


class BatchCounts(_Record):
    """Jobs of the current config: finished ok, failed, and not finished."""

    n_jobs: int
    n_ok: int
    n_failed: int
    n_not_finished: int


class BatchIndex(_Record):
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


#: schema file name -> model
SCHEMA_MODELS: dict[str, type[BaseModel]] = {"result.schema.json": RunResult, "batch.schema.json": BatchIndex}


def json_schema(model: type[BaseModel], file_name: str) -> dict[str, Any]:
    """Return the draft 2020-12 JSON Schema of a result model, with $schema and $id."""
    schema = model.model_json_schema(mode="serialization")
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": f"{SCHEMA_BASE_URI}/{file_name}",
        **schema,
    }


def schema_text(file_name: str) -> str:
    """Return the JSON Schema text of one schema file (stable key order, trailing newline)."""
    return json.dumps(json_schema(SCHEMA_MODELS[file_name], file_name), indent=2, sort_keys=True) + "\n"


def write_schemas(folder: str | Path) -> list[Path]:
    """Write every schema file into ``folder``; return their paths."""
    out = Path(folder)
    out.mkdir(parents=True, exist_ok=True)
    paths = []
    for name in SCHEMA_MODELS:
        path = out / name
        path.write_text(schema_text(name), encoding="utf-8")
        paths.append(path)
    return paths


if __name__ == "__main__":
    for written in write_schemas(sys.argv[1] if len(sys.argv) > 1 else "results-schema"):
        print(written)
