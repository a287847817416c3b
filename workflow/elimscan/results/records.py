"""Frozen, unit-tagged result models of one job and of its molecules.

The unit is in each field name (``energy_hartree``, ``relax_seconds``). The documents that hold these
records (results.json, batch.json) are in ``documents``; their JSON Schema export is in ``schema``.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Literal

from pydantic import AliasChoices, BaseModel, ConfigDict, Field

from elimscan.config import SolventConfig
from elimscan.results.flags import no_barrier_reason


#: the schema's words for a path's two no-barrier fields (E2 and SN2 records alike; see counts_as_barrier)
REACHES_PRODUCTS_WORDS = ("false: the path was shown not to reach its products (no verified saddle, and its freely "
                          "relaxed end is not the product side); its top is then no barrier and decides no share; null: "
                          "not computed, or stopped by its gradient budget before it was known")
BUDGET_SPENT_IN_WORDS = ("the stage of the path (complex relaxations, driven path, saddle search, a fallback) in which "
                         "its gradient budget (paths.gradient_budget_per_atom) ran out; the top is then an unfinished "
                         "estimate, no barrier, and decides no share; null: the path finished")


class Record(BaseModel):
    """Base of every result model: immutable, unknown fields refused."""

    model_config = ConfigDict(extra="forbid", frozen=True, validate_by_name=True, validate_by_alias=True,
                              serialize_by_alias=True)


def index0_field(name: str, what: str):
    """Return the Field of a 0-based atom index (or tuple of them) written as ``<name>0`` in JSON.

    Results of schema 0.7.0 and older wrote ``<name>``: both are read, ``<name>0`` is written. People read
    atoms numbered from 1 (index + 1); the machine fields keep RDKit's and ASE's 0-based order and say so.
    """
    return Field(validation_alias=AliasChoices(f"{name}0", name), serialization_alias=f"{name}0",
                 description=f"{what}: 0-based atom index (RDKit/ASE order); the number people read is index + 1")


class ErrorInfo(Record):
    """Why something failed: our error class's error_type and a message naming the input."""

    error_type: str = Field(description="machine-readable kind of failure, e.g. scf_not_converged")
    error_message: str = Field(description="human-readable message naming the offending input")


class MoleculeRecord(Record):
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
    arrangements: int | None = Field(None, description="base models: starting clusters relaxed, hydrogen-bond "
                                     "arrangements x embeddings of the molecules (the lowest relaxed one is this record)")
    arrangement_spread_kcal_mol: float | None = Field(None, description="base models: highest minus lowest relaxed "
                                                      "energy over the arrangements (kcal/mol); null for one")
    model_reason: str | None = Field(None, description="why the base got this model: as configured, or the default "
                                     "of the base and solvent (e.g. 'default for an alkoxide in a protic solvent')")
    error: ErrorInfo | None = None
    solvent: SolventConfig | None = Field(None, description="implicit solvent of this record (batches); null: the "
                                          "config's method.solvent")


class LeavingGroupRecord(Record):
    """The leaving group: label, kind, the leaving atom and C-alpha (0-based indices), the user's map number."""

    label: str
    kind: str
    leaving_atom_index: int = index0_field("leaving_atom_index", "X, the atom bonded to C-alpha")
    c_alpha_index: int = index0_field("c_alpha_index", "C-alpha")
    map_number: int | None = Field(None, description="1-based SMILES atom-map label, when the user gave one")


class ConformerRecord(Record):
    """One conformer of the substrate ensemble."""

    conformer_id: int
    relative_energy_kcal_mol: float
    energy_hartree: float
    source: str = Field(description="etkdg, chair+ / chair- (built on purpose) or user; duplicates join labels with +")
    ring_shapes: tuple[str, ...]


class ScanPointRecord(Record):
    """One point of an H-C-C-X scan."""

    dihedral_deg: float = Field(description="measured dihedral on (-180, 180]")
    relative_energy_kcal_mol: float | None = Field(description="above the substrate's global minimum")
    status: Literal["ok", "above_cap", "failed"]
    ring_shapes: tuple[str, ...]


class ScanRecord(Record):
    """One H-C-C-X scan: its start, its points and why branches stopped."""

    start: str
    points: tuple[ScanPointRecord, ...]
    notes: tuple[str, ...]
    xyz_file: str | None = Field(None, description="extended XYZ trajectory, relative to the output folder")


class PathPointRecord(Record):
    """One point of a relaxed E2 path."""

    coordinate_A: float = Field(description="d(Cb-H) - d(B-H) + d(Ca-X)")
    relative_energy_kcal_mol: float = Field(description="above substrate global minimum + free base")
    c_beta_h_A: float
    base_h_A: float
    c_alpha_x_A: float


class StageGradientsRecord(Record):
    """The energy+gradient evaluations of one stage of a path, summed over the starts tried for its approach."""

    stage: str = Field(description="complex relaxations, driven path, saddle search from the path, or a fallback")
    gradients: int = Field(description="energy+gradient evaluations (points served from a replay log count too)")


STAGE_GRADIENTS_WORDS = ("the gradients of each stage of the path (complex relaxations, driven path, saddle search "
                         "and its checks, fallbacks), in the order they ran, summed over the starts tried; for an E2 "
                         "approach they add up to n_gradients; empty before schema 0.8.12")


class SaddleCharacterRecord(Record):
    """Where a verified E2 saddle sits: fractional C-H and C-X cleavage (Pauling bond orders) and a label."""

    c_h_cleavage: float = Field(description="1 - Pauling bond order of C-beta-H at the saddle (0 intact, 1 broken)")
    c_x_cleavage: float = Field(description="1 - Pauling bond order of C-alpha-X at the saddle")
    label: Literal["carbanion-like", "central", "carbocation-like"]


class IsotopeEffectRecord(Record):
    """A primary kinetic isotope effect k_H/k_D of one beta-H class (harmonic Bigeleisen-Mayer)."""

    label: str = Field(description="which hydrogens carry deuterium")
    deuterated_indices: tuple[int, ...] = index0_field("deuterated_indices", "the hydrogens carrying deuterium")
    approach: Literal["anti", "syn"]
    kh_kd: float
    kh_kd_wigner: float = Field(description="with Wigner's tunnelling correction")
    temperature_K: float


class DftSaddleRecord(Record):
    """A path's saddle re-optimised at DFT (dft.saddles: reoptimise) and its verification, or why it failed."""

    status: Literal["verified", "not verified", "failed"] = Field(
        description="verified: one imaginary mode at DFT and the both-way check reached reactant and product; "
        "not verified: re-optimised but the check failed (left out of the DFT product mix); failed: an error")
    energy_hartree: float | None = Field(None, description="DFT total energy of the re-optimised saddle")
    reason: str | None = Field(None, description="the verification's verdict in words")
    error_type: str | None = Field(None, description="why it is not verified, machine-readable")
    imaginary_cm1: float | None = Field(None, description="the DFT reaction mode (cm^-1, as a positive number)")
    other_imaginary_cm1: tuple[float, ...] = ()
    n_gradients: int | None = Field(None, description="DFT gradients of the search and the both-way check")
    seconds: float | None = Field(None, description="wall time of search, Hessian and check (s)")
    hessian_seconds: float | None = Field(None, description="wall time of the analytic DFT Hessian (s)")
    largest_shift_A: float | None = Field(None, description="largest atom displacement from the GFN2-xTB saddle")
    gfn2_distances_A: dict[str, float] = Field(default_factory=dict, description="key distances at the GFN2-xTB saddle")
    dft_distances_A: dict[str, float] = Field(default_factory=dict, description="key distances at the DFT saddle")
    error: ErrorInfo | None = None


class DftPointRecord(Record):
    """One DFT single point on a path top (PySCF, level in the job's dft block), or why it failed."""

    status: Literal["ok", "failed"]
    energy_hartree: float | None = Field(None, description="DFT total energy incl. dispersion and implicit solvation")
    dispersion_hartree: float | None = Field(None, description="dispersion correction inside energy_hartree")
    geometry: Literal["verified saddle", "relaxed-path maximum"] | None = Field(
        None, description="the GFN2-xTB geometry computed: the verified saddle, else the relaxed-path maximum")
    seconds: float | None = Field(None, description="wall time of the single point (s)")
    scf_cycles: int | None = None
    error: ErrorInfo | None = None
    saddle: DftSaddleRecord | None = Field(None, description="the saddle re-optimised at DFT (dft.saddles: "
                                           "reoptimise); the single point above is then its first gradient's energy")


class ApproachRecord(Record):
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
    reaches_products: bool | None = Field(None, description=REACHES_PRODUCTS_WORDS)
    budget_spent_in: str | None = Field(None, description=BUDGET_SPENT_IN_WORDS)
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
        "distinct tops (then the saddle fields and barrier_source describe the lowest start only, the distinct "
        "tops may mix verified saddles with path maxima of other starts, and barrier_free_energy_kcal_mol is the "
        "Boltzmann sum over the free energies of the starts' verified saddles; before schema 0.8.3 it was the "
        "lowest start's alone)")
    flags: tuple[str, ...] = ()
    n_gradients: int | None = None
    stage_gradients: tuple[StageGradientsRecord, ...] = Field((), description=STAGE_GRADIENTS_WORDS)
    path: tuple[PathPointRecord, ...] = ()
    path_file: str | None = Field(None, description="extended XYZ of the path, relative to the output folder")
    saddle_file: str | None = Field(None, description="extended XYZ: saddle and frames along its imaginary mode")
    complex_file: str | None = Field(None, description="extended XYZ of the base-substrate complex the path starts from")
    product_file: str | None = Field(None, description="extended XYZ of the product side: the last point of the relaxed "
                                     "path (products only when reaches_products is not false)")
    error: ErrorInfo | None = None
    barrier_dft_kcal_mol: float | None = Field(
        None, description="DFT single-point energy of this path's top geometry relative to the lowest DFT saddle of the "
        "job (electronic dE, kcal/mol); above DFT free substrate + free base when dft.absolute_barriers is on (see the "
        "job's dft.zero_kind); null: not computed")
    dft: DftPointRecord | None = Field(None, description="the DFT single point behind barrier_dft_kcal_mol")


class BetaHydrogenRecord(Record):
    """One class of symmetry-equivalent beta hydrogens."""

    class_id: str = Field(description="label 'C<beta carbon>-H<representative H>', atoms numbered from 1 since schema "
                          "0.7.1 (0-based before)")
    beta_carbon_index: int = index0_field("beta_carbon_index", "C-beta")
    hydrogen_indices: tuple[int, ...] = index0_field("hydrogen_indices", "the equivalent hydrogens of the class")
    representative_index: int = index0_field("representative_index", "the hydrogen that names the class")
    degeneracy: int = Field(description="number of equivalent hydrogens in the class")
    anti_penalty_kcal_mol: float | None
    syn_penalty_kcal_mol: float | None
    rule_status: Literal["anti accessible", "syn only", "blocked"]
    anti: ApproachRecord
    syn: ApproachRecord
    isotope_effects: tuple[IsotopeEffectRecord, ...] = ()
    scans: tuple[ScanRecord, ...]


class ProductRecord(Record):
    """One alkene and the geometric rule's call on it."""

    smiles: str
    substitution: str
    rule_call: Literal["major", "minor", "syn only", "blocked", "forbidden"] = Field(
        description="the geometric rule's call: major, minor (another anti-reachable alkene), syn only (only a "
                    "syn-periplanar hydrogen within the window gives it) or blocked (no periplanar hydrogen within the "
                    "window gives it); 'forbidden' only in results before schema 0.7.1 (syn only or blocked)")
    via_classes: tuple[str, ...]
    reason: str
    fraction: float | None = Field(None, description="computed share (Curtin-Hammett, Boltzmann over path barriers)")
    fraction_range: tuple[float, float] | None = Field(None, description="share when every barrier moves by +-1 kcal/mol")
    fraction_dft: float | None = Field(None, description="share from the DFT single points of the job's saddles "
                                       "(Curtin-Hammett over the refined saddles); null: no DFT tier or no DFT saddle")


class BaseRecord(Record):
    """The base as the rule sees it."""

    basic_atom_index: int = index0_field("basic_atom_index", "the base's basic atom")
    bulky: bool
    bulky_reason: str
    smiles: str | None = Field(None, description="the base itself (without counter-ion or explicit molecules)")
    model: str | None = Field(None, description="base model: 'bare', or the counter-ion and explicit molecules")
    model_reason: str | None = Field(None, description="why the base got this model: as configured, or the default "
                                     "of the base and solvent (e.g. 'default for an alkoxide in a protic solvent')")


class RuleRecord(Record):
    """The geometric rule's verdict for one job."""

    rule_major: str | None
    hofmann_shift: bool
    energy_window_kcal_mol: float
    reasoning: tuple[str, ...]


class SubstitutionRecord(Record):
    """Backside substitution (SN2) at C-alpha: its product, barrier, and the elimination/substitution split."""

    product_smiles: str | None = Field(None, description="inversion at C-alpha, canonical isomeric SMILES")
    path_status: Literal["ok", "failed", "not computed"] = "not computed"
    barrier_kcal_mol: float | None = Field(None, description="same zero and kind as the E2 barriers")
    barrier_free_energy_kcal_mol: float | None = None
    barrier_source: Literal["verified saddle", "relaxed-path maximum"] | None = None
    reaches_products: bool | None = Field(None, description=REACHES_PRODUCTS_WORDS)
    budget_spent_in: str | None = Field(None, description=BUDGET_SPENT_IN_WORDS)
    saddle_verified: bool = False
    imaginary_frequency_cm1: float | None = None
    saddle_note: str | None = None
    path_file: str | None = None
    saddle_file: str | None = None
    complex_file: str | None = Field(None, description="extended XYZ of the complex the SN2 path starts from")
    product_file: str | None = Field(None, description="extended XYZ of the last point of the relaxed SN2 path")
    complex_energy_kcal_mol: float | None = Field(None, description="the SN2 complex above the zero of the barriers")
    stage_gradients: tuple[StageGradientsRecord, ...] = Field((), description=STAGE_GRADIENTS_WORDS)
    path_end_energy_kcal_mol: float | None = Field(None, description="the last point of the relaxed SN2 path above the "
                                                   "zero of the barriers (the product side when reaches_products)")
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


class VerdictRecord(Record):
    """The rule's major product beside the computed one."""

    rule_major: str | None
    computed_major: str | None
    agreement: bool | None
    within_method_uncertainty: bool
    reason: str


class DftJobRecord(Record):
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
    saddles: Literal["single-point", "reoptimise"] = Field(
        "single-point", description="single-point: barriers from DFT single points at GFN2-xTB geometries; "
        "reoptimise: from the saddles re-optimised and verified at DFT")
    n_saddles_reoptimised: int = Field(0, description="saddles re-optimised at DFT (reoptimise)")
    n_saddles_verified: int = Field(0, description="of those, verified at DFT: only these enter the DFT product mix")
    n_gradients: int = Field(0, description="DFT gradients of the tier for this job (reoptimise)")


class JobRecord(Record):
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
    replayed_points: int = Field(0, ge=0, description=(
        "single points (GFN2-xTB; the DFT tier's single points, gradients and Hessians) served from the job's "
        "replay log because a stopped earlier run of the same job had finished them (batches on the local "
        "executor); when above 0 the job's wall time covers only its last run, and a served DFT point keeps its "
        "first run's seconds"))


def started_over(job: Mapping) -> bool:
    """Return True when a job record (as read from JSON) was served points from its replay log, so that its wall time
    covers its last run only."""
    return (job.get("replayed_points") or 0) > 0


def counts_as_barrier(approach: "ApproachRecord | SubstitutionRecord") -> bool:
    """Return True when a path record holds a barrier that may decide a share: computed, and no reason of
    ``flags.no_barrier_reason`` against it (shown not to reach its products, or stopped by its gradient budget)."""
    return (approach.path_status == "ok" and approach.barrier_kcal_mol is not None
            and no_barrier_reason(approach.reaches_products, approach.budget_spent_in) is None)
