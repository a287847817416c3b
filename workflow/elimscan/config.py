"""YAML -> validated, frozen run configuration. Every default of elimscan lives in this module.

Errors name the key path (``substrates.0.smiles``) and, where the YAML has one, the line.
"""

from __future__ import annotations

import difflib
import os
from typing import Annotated, Any, Literal

import yaml
from pydantic import BaseModel, ConfigDict, Field, ValidationError, ValidationInfo, field_validator, model_validator

from elimscan.errors import ConfigError, SolventError
from elimscan.solvents import check_solvent

#: Random seed used when the config gives none (RDKit embedding, base rotations).
DEFAULT_SEED = 20261202


class _Frozen(BaseModel):
    """Base of every config model: immutable, unknown keys refused."""

    model_config = ConfigDict(extra="forbid", frozen=True)


class SolventConfig(_Frozen):
    """Implicit solvent: model (alpb, gbsa, dielectric or none) and solvent name.

    ``dielectric``: a continuum known only by its dielectric constant (solvents.DIELECTRIC_SOLVENTS), for
    solvents without ALPB parameters such as tert-butanol; tblite only.
    """

    model: Literal["alpb", "gbsa", "dielectric", "none"] = "alpb"
    name: str | None = "ethanol"

    @model_validator(mode="after")
    def _name_needed(self) -> "SolventConfig":
        if self.model != "none" and not self.name:
            raise ValueError(f"solvent model '{self.model}' needs a solvent name")
        return self


class MethodConfig(_Frozen):
    """Electronic-structure method, backend, solvent and temperatures."""

    hamiltonian: Literal["GFN2-xTB", "GFN1-xTB"] = "GFN2-xTB"
    backend: Literal["tblite", "xtb"] = "tblite"
    solvent: SolventConfig = SolventConfig()
    #: temperature for Boltzmann weights and free energies (K)
    temperature_K: float = Field(298.15, gt=0)
    #: electronic (Fermi smearing) temperature of the SCF (K)
    electronic_temperature_K: float = Field(300.0, gt=0)
    #: electronic temperature of the single retry after an SCF failure (K)
    retry_electronic_temperature_K: float = Field(1000.0, gt=0)
    max_scf_iterations: int = Field(250, ge=1)
    #: xTB numerical accuracy (1.0 = default; smaller is tighter)
    accuracy: float = Field(1.0, gt=0)
    #: another engine instead of GFN2-xTB: 'module:function', a factory called with this method config that
    #: returns an object satisfying elimscan.engines.contract.Engine (see DEVELOPERS.md); None: GFN2-xTB
    engine_factory: str | None = Field(None, pattern=r"^[A-Za-z_][\w.]*:[A-Za-z_]\w*$")

    @model_validator(mode="after")
    def _solvent_supported(self) -> "MethodConfig":
        try:
            check_solvent(self.backend, self.hamiltonian, self.solvent.model, self.solvent.name)
        except SolventError as err:
            raise ValueError(str(err)) from err
        return self


class OptimizerConfig(_Frozen):
    """Geometry optimiser for (constrained) relaxations."""

    #: 'sella' = Sella in internal coordinates (default: fewer gradients and less time per constrained
    #: point in benchmarks/bench_engine.py); 'bfgs' = ASE BFGS with FixInternals (the only one that
    #: can hold a linear combination of distances)
    name: Literal["bfgs", "sella"] = "sella"
    #: convergence: largest force component (eV/Å)
    fmax_eV_per_A: float = Field(0.01, gt=0)
    max_steps: int = Field(500, ge=1)
    #: a held dihedral further than this from its target is first set by rotating one side of the bond
    #: (acyclic bonds only); smaller differences are projected by the constraint (degrees)
    rigid_rotation_above_deg: float = Field(5.0, gt=0)


class ConformerConfig(_Frozen):
    """Conformer search: seeded ETKDG embedding, pruning, GFN2-xTB relaxation, de-duplication."""

    #: embeddings = base + per rotatable bond + per ring, capped at max_embeddings
    base_embeddings: int = Field(6, ge=1)
    per_rotatable_bond: int = Field(4, ge=0)
    per_ring: int = Field(4, ge=0)
    max_embeddings: int = Field(40, ge=1)
    #: force-field geometries closer than this heavy-atom RMSD (Å) are pruned before xTB
    prune_rmsd_A: float = Field(0.25, gt=0)
    #: after GFN2-xTB: same conformer when both energy and heavy-atom RMSD are this close
    duplicate_energy_kcal_mol: float = Field(0.05, gt=0)
    duplicate_rmsd_A: float = Field(0.25, gt=0)
    #: conformers more than this above the lowest are dropped (kcal/mol)
    energy_window_kcal_mol: float = Field(10.0, gt=0)
    #: build both chair forms of every saturated six-membered ring on purpose
    ring_flip: bool = True
    #: xTB relaxations of conformers at most (the lowest force-field energies first); the forced chair forms
    #: of saturated six-membered rings are always relaxed and count first, plus at least one other start, so
    #: a molecule with many rings can exceed this number
    max_relaxations: int = Field(12, ge=1)


class ScanConfig(_Frozen):
    """H-C-C-X dihedral scans."""

    step_deg: float = Field(15.0, gt=0, le=60)
    #: a scan branch stops once a point is this far above the scan's start (kcal/mol)
    energy_cap_kcal_mol: float = Field(25.0, gt=0)
    #: around anti and syn in rings: how far past the target a local scan goes (degrees)
    ring_window_deg: float = Field(30.0, ge=0)


class RuleConfig(_Frozen):
    """The geometric rule: dihedral windows and the energy window for 'accessible'."""

    #: |H-C-C-X| at least this is anti-periplanar (degrees)
    anti_min_deg: float = Field(150.0, gt=90, le=180)
    #: |H-C-C-X| at most this is syn-periplanar (degrees)
    syn_max_deg: float = Field(30.0, ge=0, lt=90)
    #: a geometry within this of the global minimum counts as accessible (kcal/mol)
    energy_window_kcal_mol: float = Field(3.0, gt=0)


class SaddleConfig(_Frozen):
    """Saddle refinement and verification."""

    #: refine a first-order saddle with Sella from the relaxed-path maximum
    refine: bool = True
    #: Sella starts tried from the path before the fallbacks: the highest finished interior points, highest
    #: first (a flat, double-humped top can make Sella fail from one point and succeed from its neighbour)
    path_point_starts: int = Field(3, ge=1, le=10)
    #: start Sella from a one-sided finite-difference Hessian (3N+1 gradients) instead of its model Hessian
    exact_initial_hessian: bool = True
    max_steps: int = Field(300, ge=1)
    fmax_eV_per_A: float = Field(0.01, gt=0)
    #: finite-difference step of the verification Hessian (Å)
    hessian_step_A: float = Field(0.005, gt=0)
    #: the reaction mode must be imaginary beyond this (cm^-1) ...
    imaginary_min_cm1: float = Field(100.0, gt=0)
    #: ... and no other mode imaginary beyond this (cm^-1)
    other_imaginary_max_cm1: float = Field(50.0, gt=0)
    #: displacement along the imaginary mode before relaxing both ways (Å, whole-molecule norm)
    displacement_A: float = Field(0.3, gt=0)
    #: product side: C-alpha...X at least this (Å) and base-H at most product_base_h_max_A (Å)
    product_c_x_min_A: float = Field(3.0, gt=0)
    product_base_h_max_A: float = Field(1.1, gt=0)
    #: reactant side: base...H at least this (Å) and C-alpha-X at most reactant_c_x_max_A (Å)
    reactant_base_h_min_A: float = Field(1.3, gt=0)
    reactant_c_x_max_A: float = Field(2.4, gt=0)
    #: substitution: product side has Nu-C-alpha at most this (Å); reactant side at least the next (Å)
    substitution_bond_max_A: float = Field(1.7, gt=0)
    substitution_reactant_min_A: float = Field(2.5, gt=0)
    #: last fallback when Sella fails from the path maximum and from the base-H scan: a climbing-image NEB
    #: between the reactant complex and the freely relaxed path end, whose climbing image seeds Sella again
    neb_fallback: bool = True
    #: NEB images including the two end points (at least 15: fewer let the climbing image sit on a false maximum)
    neb_images: int = Field(15, ge=15)
    #: NEB convergence (eV/Å, largest NEB force) and step limit (FIRE)
    neb_fmax_eV_per_A: float = Field(0.05, gt=0)
    neb_max_steps: int = Field(300, ge=1)


class PathConfig(_Frozen):
    """Base-substrate complexes and the relaxed E2 path for each beta-H class."""

    #: compute anti and/or syn paths
    approaches: tuple[Literal["anti", "syn"], ...] = ("anti", "syn")
    #: basic atom placed on the extension of the C-beta-H bond at this H...base distance (Å)
    complex_distance_A: float = Field(2.0, gt=0.8)
    #: rotations of the base about that axis tried for each complex
    base_rotations: int = Field(3, ge=1)
    #: combined coordinate d(Cb-H) - d(B-H) + d(Ca-X) is driven up in steps of this (Å) ...
    step_A: float = Field(0.15, gt=0)
    #: ... for this many points after the complex
    points: int = Field(20, ge=2)
    #: syn paths hold H-C-C-X at this dihedral (degrees)
    syn_dihedral_deg: float = Field(0.0, ge=-30, le=30)
    #: also compute backside substitution (SN2) at C-alpha for every job
    substitution: bool = True
    #: start each E2 approach from up to this many distinct backbone conformers (lowest first); the lowest
    #: path top is used and the spread over them is reported as an uncertainty
    backbone_conformers: int = Field(1, ge=1)
    #: ... only conformers within this window above the lowest periplanar one (kcal/mol) ...
    backbone_window_kcal_mol: float = Field(3.0, gt=0)
    #: ... and differing from each other by more than this heavy-atom RMSD (Å)
    backbone_distinct_rmsd_A: float = Field(0.25, gt=0)
    #: drive a whole path from each of this many lowest base rotations of the complex (at most base_rotations)
    orientation_paths: int = Field(1, ge=1)
    #: how the paths of one approach from several starts (backbone conformers x orientations) make one
    #: barrier: the lowest top, or a Boltzmann sum over distinct tops at method.temperature_K
    combine: Literal["lowest", "boltzmann"] = "lowest"
    #: nucleophile placed behind C-alpha at this distance for the substitution complex (Å)
    substitution_distance_A: float = Field(3.0, gt=1.5)
    #: gradients one path (complex, driven path, saddle search, checks and fallbacks) may spend, per atom of the
    #: complex; a path that would spend more is stopped and reported as an unfinished estimate that decides no
    #: product share (null: no limit)
    gradient_budget_per_atom: float | None = Field(200.0, gt=0)
    saddle: SaddleConfig = SaddleConfig()


class ThreadsConfig(_Frozen):
    """OpenMP/BLAS threads per worker process (parallelism comes from processes)."""

    per_process: int = Field(1, ge=1)


class SubstrateConfig(_Frozen):
    """One substrate: a name, a SMILES (an atom map may mark the leaving atom), charge and multiplicity."""

    name: str = Field(min_length=1)
    smiles: str = Field(min_length=1)
    #: total charge; None = take the formal charge of the SMILES
    charge: int | None = None
    multiplicity: int = Field(1, ge=1)
    #: optional SDF or XYZ file (path relative to the config file) with a 3D structure of this substrate;
    #: it joins the conformer ensemble. The SMILES still fixes connectivity, charge and stereochemistry.
    geometry: str | None = None

    @field_validator("geometry")
    @classmethod
    def _geometry_suffix(cls, value: str | None) -> str | None:
        if value is not None and not value.lower().endswith((".sdf", ".mol", ".xyz")):
            raise ValueError(f"geometry file '{value}' must end in .sdf, .mol or .xyz")
        return value


class BaseModelConfig(_Frozen):
    """How the base is modelled: bare (default), ion-paired with a metal cation, with explicit molecules, or both.

    The cation and the explicit molecules sit on the basic atom's lone pairs; one lone pair stays free for
    the proton transfer (basemodels.py).
    """

    #: metal cation paired with an anionic base (None: no counter-ion)
    counter_ion: Literal["Li", "Na", "K"] | None = None
    #: explicit solvent molecules hydrogen-bonded to the basic atom
    explicit: int = Field(0, ge=0, le=3)
    #: SMILES of the explicit molecule; None: the base's conjugate acid (tert-butanol for tert-butoxide)
    explicit_smiles: str | None = Field(None, min_length=1)


#: Built-in bases: a base given by one of these names needs no SMILES.
BASE_LIBRARY: dict[str, str] = {
    "hydroxide": "[OH-]",
    "methoxide": "C[O-]",
    "ethoxide": "CC[O-]",
    "isopropoxide": "CC(C)[O-]",
    "tert-butoxide": "CC(C)(C)[O-]",
    "amide": "[NH2-]",
    "diisopropylamide": "CC(C)[N-]C(C)C",
    "hexamethyldisilazide": "C[Si](C)(C)[N-][Si](C)(C)C",
    "dbu": "C1CCC2=NCCCN2CC1",
}


class BaseConfig(_Frozen):
    """One base: a name, a SMILES (optional for the built-in names), optional bulky flag and model."""

    name: str = Field(min_length=1)
    smiles: str = Field(None, min_length=1, validate_default=False)

    @model_validator(mode="before")
    @classmethod
    def _from_library(cls, data: Any) -> Any:
        if isinstance(data, dict) and not data.get("smiles") and isinstance(data.get("name"), str):
            smiles = BASE_LIBRARY.get(data["name"].strip().lower())
            if smiles is None:
                raise ValueError(f"base '{data['name']}' needs a smiles (built-in names: {', '.join(BASE_LIBRARY)})")
            data = {**data, "smiles": smiles}
        return data

    charge: int | None = None
    multiplicity: int = Field(1, ge=1)
    #: True marks a sterically demanding base for the geometric rule (Hofmann shift)
    bulky: bool | None = None
    model: BaseModelConfig = BaseModelConfig()


class PairConfig(_Frozen):
    """One substrate x base job, by names."""

    substrate: str
    base: str


class AnalysisConfig(_Frozen):
    """Which energy drives the product mix (reserved for the free-energy issue)."""

    energy: Literal["electronic", "free"] = "electronic"


class DftConfig(_Frozen):
    """Optional DFT single points (PySCF) on the GFN2-xTB saddles of each job; off by default."""

    enabled: bool = False
    #: exchange-correlation functional (PySCF name)
    functional: Literal["b3lyp", "pbe0"] = "b3lyp"
    #: dispersion correction (pyscf-dispersion): D3 with Becke-Johnson damping, D4, or none
    dispersion: Literal["d3bj", "d4", "none"] = "d3bj"
    #: basis set: diffuse functions are needed for the anionic bases (def2-SVP without them gave the wrong
    #: anti/syn order in a scratch test); def2-TZVP is the check level
    basis: Literal["def2-svpd", "def2-tzvp", "def2-tzvpd"] = "def2-svpd"
    #: density fitting (RI) of the Coulomb and exchange integrals
    density_fit: bool = True
    #: 'pcm' = IEF-PCM at the dielectric constant of the job's solvent; 'none' = gas phase (refused for jobs
    #: with a free ion: ion-dipole binding would dominate)
    solvation: Literal["pcm", "none"] = "pcm"
    #: dielectric constant for IEF-PCM; None = take it from the table for the job's solvent (dft.py)
    dielectric_constant: float | None = Field(None, gt=1)
    #: single points on this many of the lowest GFN2-xTB saddles of each product (by GFN2-xTB energy)
    saddles_per_product: int = Field(3, ge=1)
    #: also compute the free substrate and free base, so that barrier_dft_kcal_mol is absolute; otherwise it
    #: is relative to the lowest DFT saddle of the job (all that the product mix needs)
    absolute_barriers: bool = False
    #: PySCF integration grid level (0 coarse ... 9 fine)
    grid_level: int = Field(3, ge=0, le=9)
    #: SCF cycles at most and convergence of the energy (hartree)
    max_scf_cycles: int = Field(100, ge=1)
    scf_tolerance_hartree: float = Field(1e-9, gt=0)

    @field_validator("basis", mode="before")
    @classmethod
    def _diffuse_needed(cls, value: Any) -> Any:
        if isinstance(value, str) and value.strip().lower() == "def2-svp":
            raise ValueError("def2-svp lacks the diffuse functions the anionic bases need: use def2-svpd (the "
                             "default), or def2-tzvp / def2-tzvpd")
        return value.strip().lower() if isinstance(value, str) else value


class SeriesMemberConfig(_Frozen):
    """One member of a substituent series: a substrate (by name) and its substituent constant sigma."""

    substrate: str = Field(min_length=1)
    #: Hammett-type substituent constant of this member (dimensionless), copied from a published table
    sigma: float = Field(allow_inf_nan=False)


#: a Hammett fit needs at least this many members with a barrier
SERIES_MIN_MEMBERS = 3


class SeriesConfig(_Frozen):
    """A substituent series: substrates (entries of ``substrates:``) with their sigma, all run with one base.

    The report plots each member's lowest E2 barrier as log10(k/k0) against sigma and fits the slope rho;
    k0 is the member with sigma 0 when there is one, else the first member with a barrier.
    """

    name: str = Field(min_length=1)
    base: str = Field(min_length=1)
    members: tuple[SeriesMemberConfig, ...]
    #: where the sigma values come from (shown beside the fit in the report), e.g. a table and its citation
    sigma_source: str | None = None

    @model_validator(mode="after")
    def _members_usable(self) -> "SeriesConfig":
        if len(self.members) < SERIES_MIN_MEMBERS:
            raise ValueError(f"series '{self.name}' has {len(self.members)} member(s): a Hammett fit needs at least "
                             f"{SERIES_MIN_MEMBERS}")
        seen: dict[str, int] = {}
        for index, member in enumerate(self.members):
            if member.substrate in seen:
                raise ValueError(f"series '{self.name}' member {index} repeats substrate '{member.substrate}' "
                                 f"(member {seen[member.substrate]}; counted from 0)")
            seen[member.substrate] = index
        if len({m.sigma for m in self.members}) < 2:
            raise ValueError(f"series '{self.name}': every member has sigma {self.members[0].sigma:g}, so no slope "
                             "can be fitted")
        return self


#: Per-job wall-time limit of a batch (s): a job still running after this is stopped and recorded as
#: failed (error_type time_limit). Four hours: a large substrate with every path takes well under one.
DEFAULT_JOB_TIME_LIMIT_SECONDS = 14400.0

#: File suffixes a ``substrates_file`` may have: CSV with a header, or a SMILES file (SMILES, then name).
SUBSTRATE_FILE_SUFFIXES = (".csv", ".smi", ".smiles")


def default_workers() -> int:
    """Return the default number of local worker processes: the cores this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not Linux
        return max(1, os.cpu_count() or 1)


class ExecutorConfig(_Frozen):
    """Where the jobs of a batch run: local worker processes (default) or an existing Dask cluster."""

    kind: Literal["local", "dask"] = "local"
    #: Dask scheduler address (kind: dask), e.g. tcp://10.0.0.5:8786
    address: str | None = None
    #: local worker processes, one job and one xTB thread each; None = default_workers() (the core count)
    workers: int | None = Field(None, ge=1)
    #: a job running longer than this is stopped (its process killed) and recorded as failed (s)
    time_limit_seconds: float = Field(DEFAULT_JOB_TIME_LIMIT_SECONDS, gt=0)
    #: a job that stays longer than this in one stage (a substrate's analysis, a base, a job's paths) is stopped
    #: the same way and recorded as failed with error_type stage_time_limit (s); None = no stage limit
    stage_time_limit_seconds: float | None = Field(None, gt=0)

    @model_validator(mode="after")
    def _address_for_dask(self) -> "ExecutorConfig":
        if self.kind == "dask" and not self.address:
            raise ValueError("executor kind 'dask' needs an address (the scheduler, e.g. tcp://host:8786)")
        if self.kind == "local" and self.address:
            raise ValueError("executor.address is the Dask scheduler: set kind: dask, or drop the address")
        return self


class RunConfig(_Frozen):
    """A whole elimscan run: method, molecules and the jobs to compute."""

    name: str = Field("elimscan-run", min_length=1)
    seed: int = DEFAULT_SEED
    method: MethodConfig = MethodConfig()
    optimizer: OptimizerConfig = OptimizerConfig()
    threads: ThreadsConfig = ThreadsConfig()
    conformers: ConformerConfig = ConformerConfig()
    scan: ScanConfig = ScanConfig()
    rule: RuleConfig = RuleConfig()
    paths: PathConfig = PathConfig()
    #: substrates listed in the YAML; a batch may take more (or all) from ``substrates_file``
    substrates: Annotated[tuple[SubstrateConfig, ...], Field(min_length=1)] = ()
    #: batches: a CSV (columns name, smiles, optional charge, multiplicity) or SMILES file of more substrates,
    #: path relative to the config file; a bad row fails only its jobs
    substrates_file: str | None = None
    bases: tuple[BaseConfig, ...] = Field(min_length=1)
    pairs: tuple[PairConfig, ...] | None = None
    #: batches: every job once per listed solvent (each like method.solvent, which it replaces)
    solvents: Annotated[tuple[SolventConfig, ...], Field(min_length=1)] | None = None
    analysis: AnalysisConfig = AnalysisConfig()
    #: batches: where the jobs run (local processes or Dask) and the per-job time limit
    executor: ExecutorConfig = ExecutorConfig()
    #: substituent series (Hammett plots): members name substrates, the series names the base
    series: tuple[SeriesConfig, ...] = ()
    #: optional DFT single points on the saddles of each job (PySCF; off by default)
    dft: DftConfig = DftConfig()

    @field_validator("substrates", "bases")
    @classmethod
    def _unique_names(cls, items: tuple[Any, ...]) -> tuple[Any, ...]:
        seen: dict[str, int] = {}
        for index, item in enumerate(items):
            if item.name in seen:
                raise ValueError(f"duplicate name '{item.name}' (entries {seen[item.name]} and {index}, counted from 0)")
            seen[item.name] = index
        return items

    @field_validator("substrates_file")
    @classmethod
    def _substrates_file_suffix(cls, value: str | None) -> str | None:
        if value is not None and not value.lower().endswith(SUBSTRATE_FILE_SUFFIXES):
            raise ValueError(f"substrates file '{value}' must end in {', '.join(SUBSTRATE_FILE_SUFFIXES)}")
        return value

    @model_validator(mode="after")
    def _some_substrates(self) -> "RunConfig":
        if not self.substrates and self.substrates_file is None:
            raise ValueError("no substrates: give 'substrates:' (a list) or 'substrates_file:' (a CSV or SMILES file)")
        return self

    @field_validator("solvents")
    @classmethod
    def _solvents_supported(cls, solvents: tuple[SolventConfig, ...] | None,
                            info: ValidationInfo) -> tuple[SolventConfig, ...] | None:
        method = info.data.get("method")
        if solvents is None or method is None:
            return solvents
        seen: dict[tuple[str, str | None], int] = {}
        for index, solvent in enumerate(solvents):
            try:
                name = check_solvent(method.backend, method.hamiltonian, solvent.model, solvent.name)
            except SolventError as err:
                raise ValueError(f"entry {index}: {err}") from err
            if (solvent.model, name) in seen:
                raise ValueError(f"entry {index} repeats entry {seen[(solvent.model, name)]} ({solvent.model} {name})")
            seen[(solvent.model, name)] = index
        return solvents

    @model_validator(mode="after")
    def _pairs_known(self) -> "RunConfig":
        substrates = {s.name for s in self.substrates}
        bases = {b.name for b in self.bases}
        for pair in self.pairs or ():
            if pair.substrate not in substrates and self.substrates_file is None:  # file rows: checked by the batch
                raise ValueError(f"pair names unknown substrate '{pair.substrate}' (known: {', '.join(sorted(substrates))})")
            if pair.base not in bases:
                raise ValueError(f"pair names unknown base '{pair.base}' (known: {', '.join(sorted(bases))})")
        return self

    @field_validator("series")
    @classmethod
    def _series_known(cls, series: tuple[SeriesConfig, ...], info: ValidationInfo) -> tuple[SeriesConfig, ...]:
        if "substrates" not in info.data or "bases" not in info.data:
            return series  # an error there is reported first
        substrates = {s.name for s in info.data["substrates"]}
        bases = {b.name for b in info.data["bases"]}
        pairs = info.data.get("pairs")
        from_file = info.data.get("substrates_file") is not None
        names: dict[str, int] = {}
        for k, item in enumerate(series):
            if item.name in names:
                raise ValueError(f"series {k} repeats the name '{item.name}' of series {names[item.name]}")
            names[item.name] = k
            if item.base not in bases:
                raise ValueError(f"series '{item.name}' names unknown base '{item.base}' (known: {', '.join(sorted(bases))})")
            for index, member in enumerate(item.members):
                where = f"series '{item.name}' member {index} ('{member.substrate}')"
                if member.substrate not in substrates and not from_file:  # file rows: their names are read by the batch
                    raise ValueError(f"{where}: unknown substrate (known: {', '.join(sorted(substrates))})")
                if pairs and not any(p.substrate == member.substrate and p.base == item.base for p in pairs):
                    raise ValueError(f"{where}: 'pairs' has no job of this substrate with base '{item.base}'")
        return series

    def jobs(self) -> list[tuple[SubstrateConfig, BaseConfig]]:
        """Return the (substrate, base) jobs: the given pairs, else every substrate with every base."""
        by_substrate = {s.name: s for s in self.substrates}
        by_base = {b.name: b for b in self.bases}
        if self.pairs:
            return [(by_substrate[p.substrate], by_base[p.base]) for p in self.pairs]
        return [(s, b) for s in self.substrates for b in self.bases]


# --- YAML reading with line numbers -------------------------------------------------------------


def _node_line(root: yaml.Node | None, loc: tuple[Any, ...]) -> int | None:
    """Return the 1-based YAML line of the node at a pydantic error location, or the nearest parent."""
    node, line = root, (root.start_mark.line + 1 if root is not None else None)
    for part in loc:
        if isinstance(node, yaml.MappingNode):
            match = next((v for k, v in node.value if k.value == part), None)
            if match is None:
                key = next((k for k, _ in node.value if k.value == part), None)
                return key.start_mark.line + 1 if key is not None else line
            node = match
        elif isinstance(node, yaml.SequenceNode) and isinstance(part, int) and part < len(node.value):
            node = node.value[part]
        else:
            break
        line = node.start_mark.line + 1
    return line


def _key_line(root: yaml.Node | None, loc: tuple[Any, ...]) -> int | None:
    """Return the line of the key itself (for unknown keys), falling back to _node_line."""
    parent = root
    for part in loc[:-1]:
        if isinstance(parent, yaml.MappingNode):
            parent = next((v for k, v in parent.value if k.value == part), None)
        elif isinstance(parent, yaml.SequenceNode) and isinstance(part, int) and part < len(parent.value):
            parent = parent.value[part]
        else:
            parent = None
        if parent is None:
            break
    if isinstance(parent, yaml.MappingNode):
        for key, _ in parent.value:
            if key.value == loc[-1]:
                return key.start_mark.line + 1
    return _node_line(root, loc)


def _model_at(loc: tuple[Any, ...]) -> type[BaseModel] | None:
    """Return the config model class that holds the last key of an error location."""
    model: Any = RunConfig
    for part in loc[:-1]:
        if isinstance(part, int):
            continue
        field = model.model_fields.get(part) if isinstance(model, type) and issubclass(model, BaseModel) else None
        if field is None:
            return None
        annotation = field.annotation
        candidates = [annotation, *getattr(annotation, "__args__", ())]
        nested = [c for c in candidates for c in (c, *getattr(c, "__args__", ())) if isinstance(c, type) and issubclass(c, BaseModel)]
        if not nested:
            return None
        model = nested[0]
    return model if isinstance(model, type) and issubclass(model, BaseModel) else None


def _check_duplicate_keys(node: yaml.Node | None, path: str = "") -> None:
    """Raise ConfigError when a YAML mapping repeats a key (PyYAML would silently keep the last)."""
    if isinstance(node, yaml.MappingNode):
        seen: dict[str, int] = {}
        for key, value in node.value:
            name = str(key.value)
            if name in seen:
                raise ConfigError(f"key '{name}' appears twice (first on line {seen[name]})",
                                  key_path=f"{path}{name}", line=key.start_mark.line + 1)
            seen[name] = key.start_mark.line + 1
            _check_duplicate_keys(value, f"{path}{name}.")
    elif isinstance(node, yaml.SequenceNode):
        for i, item in enumerate(node.value):
            _check_duplicate_keys(item, f"{path}{i}.")


def _translate(err: ValidationError, root: yaml.Node | None) -> ConfigError:
    """Return a ConfigError for the first pydantic error, with key path, line and suggestion."""
    # an unknown key usually explains the rest (a misspelt required key): report it first
    errors = sorted(err.errors(), key=lambda e: e["type"] != "extra_forbidden")
    first = errors[0]
    loc = tuple(first["loc"])
    key_path = ".".join(str(p) for p in loc) or "(top level)"
    message = first["msg"].removeprefix("Value error, ")
    if first["type"] == "extra_forbidden":
        line = _key_line(root, loc)
        model = _model_at(loc)
        known = sorted(model.model_fields) if model is not None else []
        close = difflib.get_close_matches(str(loc[-1]), known, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        message = f"unknown key '{loc[-1]}'{hint} (allowed here: {', '.join(known)})"
    else:
        line = _node_line(root, loc)
        if first["type"] == "missing":
            message = f"required key '{loc[-1]}' is missing"
        elif "input" in first and not isinstance(first["input"], (dict, list)):
            message = f"{message} (got {first['input']!r})"
    # errors on a parent of the first location are consequences of it (an emptied list)
    extra = sum(1 for e in errors[1:] if tuple(e["loc"]) != loc[: len(e["loc"])] and tuple(e["loc"])[:-1] != loc[:-1])
    if extra:
        message += f" [and {extra} more problem{'s' if extra > 1 else ''}]"
    return ConfigError(message, key_path=key_path, line=line)


def parse_config(text: str, source: str = "<config>") -> RunConfig:
    """Return the validated RunConfig for YAML text; raise ConfigError naming key path and line."""
    try:
        root = yaml.compose(text, Loader=yaml.SafeLoader)
        data = yaml.safe_load(text)
    except yaml.YAMLError as err:
        mark = getattr(err, "problem_mark", None)
        line = mark.line + 1 if mark is not None else None
        problem = getattr(err, "problem", None) or str(err)
        raise ConfigError(f"{source}: YAML syntax error: {problem}", line=line) from err
    if data is None:
        raise ConfigError(f"{source}: the config is empty")
    if not isinstance(data, dict):
        raise ConfigError(f"{source}: the config must be a mapping of keys, got {type(data).__name__}", line=1)
    _check_duplicate_keys(root)
    try:
        return RunConfig.model_validate(data)
    except ValidationError as err:
        raise _translate(err, root) from err


def config_to_dict(config: RunConfig) -> dict[str, Any]:
    """Return the resolved config (all defaults filled in) as plain JSON-ready data."""
    return config.model_dump(mode="json")


def key_line(text: str, key_path: str) -> int | None:
    """Return the 1-based YAML line of a dotted key path (``substrates.0.smiles``) in config text, or None."""
    try:
        root = yaml.compose(text, Loader=yaml.SafeLoader)
    except yaml.YAMLError:
        return None
    loc = tuple(int(p) if p.isdigit() else p for p in key_path.split("."))
    return _node_line(root, loc) if root is not None else None
