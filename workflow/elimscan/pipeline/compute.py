"""The computation of a run, without file I/O.

Per substrate: perception (leaving group, beta-H classes, products), a GFN2-xTB conformer ensemble,
H-C-C-X scans for every beta-H class, and the anti/syn penalties. Per base: a relaxed structure and
how the rule sees it. Per job: the records, with the geometric rule's verdict. Known failures
(bad input, SCF or optimiser trouble) become records with ``status: failed``; the run carries on.
Progress is reported through a callback, never printed.
"""

from __future__ import annotations

import dataclasses

import time
from collections.abc import Callable
from dataclasses import dataclass, field

from ase import Atoms
from rdkit import Chem

from elimscan.analysis.rule import (ClassFacts, GeometrySample, PathBarrier, Periplanar, best_periplanar, boltzmann_combined,
                               compare_verdicts, fraction_ranges, periplanar_starts, product_fractions, rule_status,
                               rule_verdict)
from elimscan.chem.bases import BaseInfo, describe_base
from elimscan.chem.basemodels import build_cluster, conjugate_acid_smiles
from elimscan.config import BaseConfig, OptimizerConfig, RunConfig, SubstrateConfig
from elimscan.drivers.conformers import ConformerEnsemble, build_ensemble, saturated_six_rings
from elimscan.errors import ElimscanError
from elimscan.geometry import dihedral_deg, wrap_degrees
from elimscan.chem.alkenes import Alkene
from elimscan.chem.betahydrogens import BetaHydrogenClass
from elimscan.chem.perception import Substrate, perceive_substrate
from elimscan.analysis.character import saddle_character
from elimscan.engines.dft import DftJobResult, DftPoint, SaddleCandidate, refine_job
from elimscan.drivers.freeenergy import MinimumHessian, isotope_effect, minimum_hessian, molecule_thermo, saddle_thermo
from elimscan.geometry import distance
from elimscan.chem.substitution import substitution_product
from elimscan.drivers.complexes import Reactive, SubstitutionReactive
from elimscan.drivers.paths import PathResult, compute_path, compute_substitution_path
from elimscan.results.failures import error_info
from elimscan.results.records import (ApproachRecord, BaseRecord, BetaHydrogenRecord, ConformerRecord, DftJobRecord,
                              DftPointRecord, ErrorInfo, JobRecord,
                              LeavingGroupRecord, MoleculeRecord, PathPointRecord, ProductRecord, RuleRecord,
                              SaddleCharacterRecord, IsotopeEffectRecord, ScanPointRecord, ScanRecord,
                              SubstitutionRecord, VerdictRecord)
from elimscan.drivers.relax import relax
from elimscan.drivers.scans import DihedralScan, branch_plan, scan_dihedral
from elimscan.chem.structures import atoms_from_geometry, build_molecule, check_charge, formula
from elimscan.units import KCAL_MOL_PER_HARTREE

#: progress callback: (finished steps, total steps, message); DETAIL in both counts marks a sub-step message
ProgressCallback = Callable[[int, int, str], None]
DETAIL = -1


@dataclass(frozen=True)
class RelaxedMolecule:
    """A molecule's record and, when it succeeded, its relaxed geometry (Å)."""

    record: MoleculeRecord
    atoms: Atoms | None


@dataclass(frozen=True)
class ClassAnalysis:
    """One beta-H class: its perception, scans, best anti and syn geometries and the rule status."""

    beta_class: BetaHydrogenClass
    scans: tuple[DihedralScan, ...]
    anti: Periplanar
    syn: Periplanar
    status: str
    #: distinct backbone starts for the paths, lowest first (empty: start from ``anti`` / ``syn`` alone)
    anti_starts: tuple[Periplanar, ...] = ()
    syn_starts: tuple[Periplanar, ...] = ()


@dataclass(frozen=True)
class SubstrateAnalysis:
    """Everything computed for one substrate, independent of the base."""

    name: str
    substrate: Substrate
    charge: int
    multiplicity: int
    ensemble: ConformerEnsemble
    classes: tuple[ClassAnalysis, ...]
    global_minimum_hartree: float
    #: Hessian of the lowest conformer, for free energies and isotope effects
    minimum: MinimumHessian | None = None


@dataclass(frozen=True)
class BaseAnalysis:
    """A relaxed base, how the rule sees it, and its Hessian (for free energies)."""

    relaxed: RelaxedMolecule
    info: BaseInfo | None
    minimum: MinimumHessian | None = None


#: (class_id, approach) -> the computed path, or why it failed; SUBSTITUTION_KEY for the SN2 path
JobPaths = dict[tuple[str, str], "PathResult | ErrorInfo"]
SUBSTITUTION_KEY = ("substitution", "backside")


@dataclass
class RunOutcome:
    """Everything a run computed: substrates and bases by name (or their failures), jobs and their paths."""

    substrates: dict[str, SubstrateAnalysis | ErrorInfo] = field(default_factory=dict)
    bases: dict[str, BaseAnalysis] = field(default_factory=dict)
    jobs: list[tuple[SubstrateConfig, BaseConfig]] = field(default_factory=list)
    paths: dict[tuple[str, str], JobPaths] = field(default_factory=dict)
    #: the optional DFT tier of each job (substrate, base), when dft.enabled
    dft: dict[tuple[str, str], DftJobResult] = field(default_factory=dict)


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


def relax_base(item: BaseConfig, engine, config: RunConfig) -> tuple[RelaxedMolecule, BaseInfo | None]:
    """Return the relaxed base model (bare, ion pair and/or explicit molecules) and how the rule sees the base.

    For a bare base this is ``relax_molecule``; otherwise the cluster of basemodels.py is built on the
    embedded base and relaxed as one molecule (charge: base + cation), whose energy is the base's share of
    the common zero. The record's SMILES is the dot-separated cluster.
    """
    model = item.model
    if model.counter_ion is None and not model.explicit:
        relaxed = relax_molecule(item.name, "base", item.smiles, item.charge, item.multiplicity, engine,
                                 config.optimizer, config.seed)
        return relaxed, (describe_base(item.smiles, item.bulky) if relaxed.record.status == "ok" else None)
    what = f"base '{item.name}'"
    start = time.perf_counter()
    try:
        info = describe_base(item.smiles, item.bulky)
        built = build_molecule(item.smiles, config.seed, item.charge, item.multiplicity, what)
        explicit_smiles = model.explicit_smiles or conjugate_acid_smiles(item.smiles, info.basic_atom_index)
        explicit = [build_molecule(explicit_smiles, config.seed + k, None, 1, f"{what} explicit molecule").atoms
                    for k in range(model.explicit)]
        cluster = build_cluster(built.atoms, info.basic_atom_index, item.smiles, built.formal_charge, model.counter_ion,
                                explicit, explicit_smiles, item.name)
        calc = engine.calculator(cluster.charge, item.multiplicity, name=what)
        result = relax(cluster.atoms, calc, (), config.optimizer)
    except ElimscanError as err:
        record = MoleculeRecord(name=item.name, role="base", smiles=item.smiles, status="failed", error=error_info(err))
        return RelaxedMolecule(record, None), None
    record = MoleculeRecord(
        name=item.name, role="base", smiles=cluster.smiles, status="ok", charge=cluster.charge,
        multiplicity=item.multiplicity, n_atoms=len(result.atoms), formula=result.atoms.get_chemical_formula(mode="hill"),
        energy_hartree=result.energy_hartree, converged=result.converged, n_gradients=result.n_gradients,
        relax_seconds=round(time.perf_counter() - start, 3), model=cluster.label)
    if not result.converged:
        record = record.model_copy(update={"status": "failed", "error": ErrorInfo(
            error_type="optimization_failed",
            error_message=f"{what} ({cluster.label}): relaxation did not converge in {config.optimizer.max_steps} steps")})
        return RelaxedMolecule(record, result.atoms), None
    return RelaxedMolecule(record, result.atoms), BaseInfo(cluster.smiles, info.basic_atom_index, cluster.charge,
                                                            info.bulky, info.bulky_reason)


def _bond_in_ring(mol: Chem.Mol, a: int, b: int) -> bool:
    """Return True when the bond a-b lies in a ring."""
    bond = mol.GetBondBetweenAtoms(a, b)
    return bond is not None and bond.IsInRing()


def _class_scans(substrate: Substrate, beta_class: BetaHydrogenClass, ensemble: ConformerEnsemble, engine,
                 charge: int, multiplicity: int, config: RunConfig, rings, name: str,
                 on_progress: ProgressCallback | None) -> tuple[DihedralScan, ...]:
    """Return the scans of one class: a full turn from the lowest conformer, or local ring scans."""
    lg = substrate.leaving_group
    quad = (beta_class.representative_index, beta_class.beta_carbon_index, lg.c_alpha_index, lg.leaving_atom_index)
    in_ring = _bond_in_ring(substrate.mol, beta_class.beta_carbon_index, lg.c_alpha_index)
    starts: list[tuple[int, tuple[float, ...]]] = []
    if not in_ring:
        starts.append((ensemble.lowest.conformer_id, (180.0, 0.0)))
    else:
        for target in (180.0, 0.0):
            nearest = min(ensemble.conformers, key=lambda c: (round(abs(wrap_degrees(dihedral_deg(c.atoms.positions, *quad) - target)) / 10),
                                                             c.energy_hartree))
            starts.append((nearest.conformer_id, (target,)))
    scans = []
    for conformer_id, targets in starts:
        conformer = ensemble.conformers[conformer_id]
        phi = dihedral_deg(conformer.atoms.positions, *quad)
        plan = branch_plan(phi, in_ring, config.scan, targets)
        if on_progress is not None:
            on_progress(DETAIL, DETAIL, f"{name}: scanning H-C-C-X of {beta_class.class_id} from conformer {conformer_id} "
                              f"({phi:.0f} deg, {sum(n for _, n in plan)} points)")
        scans.append(scan_dihedral(conformer.atoms, quad, engine, charge, multiplicity, plan, config.scan,
                                   config.optimizer, rings, start_label=f"conformer {conformer_id}", name=name))
    return tuple(scans)


def analyze_substrate(item: SubstrateConfig, config: RunConfig, engine,
                      on_progress: ProgressCallback | None = None,
                      geometry: tuple[str, str] | None = None) -> SubstrateAnalysis:
    """Return the base-independent analysis of one substrate: ensemble, scans and anti/syn penalties.

    ``geometry`` is the (text, format) of a user's SDF/XYZ structure, which joins the ensemble.
    """
    name = f"substrate '{item.name}'"
    substrate = perceive_substrate(item.smiles, seed=config.seed)
    charge = check_charge(item.smiles, substrate.formal_charge, item.charge, name)
    extra = [(atoms_from_geometry(substrate.mol, geometry[0], geometry[1], name), "user")] if geometry else []
    if on_progress is not None:
        on_progress(DETAIL, DETAIL, f"{name}: conformer search ({len(substrate.beta_classes)} beta-H classes)")
    ensemble = build_ensemble(substrate.mol, engine, charge, item.multiplicity, config.seed, config.conformers,
                              config.optimizer, extra=extra, name=name)
    rings = saturated_six_rings(substrate.mol)
    lg = substrate.leaving_group
    per_class = []
    for beta_class in substrate.beta_classes:
        quad = (beta_class.representative_index, beta_class.beta_carbon_index, lg.c_alpha_index, lg.leaving_atom_index)
        scans = _class_scans(substrate, beta_class, ensemble, engine, charge, item.multiplicity, config, rings, name,
                             on_progress)
        samples = [GeometrySample(dihedral_deg(c.atoms.positions, *quad), c.energy_hartree, f"conformer {c.conformer_id}",
                                  c.ring_shapes, c.atoms) for c in ensemble.conformers]
        samples += [GeometrySample(p.dihedral_deg, p.energy_hartree, f"scan from {scan.start_label}", p.ring_shapes, p.atoms)
                    for scan in scans for p in scan.ok_points()]
        per_class.append((beta_class, scans, samples))
    global_min = min(s.energy_hartree for _, _, samples in per_class for s in samples) if per_class else ensemble.lowest.energy_hartree
    classes = []
    for beta_class, scans, samples in per_class:
        anti = best_periplanar(samples, global_min, "anti", config.rule)
        syn = best_periplanar(samples, global_min, "syn", config.rule)
        p = config.paths
        starts = {kind: periplanar_starts(samples, global_min, kind, config.rule, p.backbone_conformers,
                                          p.backbone_window_kcal_mol, p.backbone_distinct_rmsd_A)
                  if p.backbone_conformers > 1 else () for kind in ("anti", "syn")}
        classes.append(ClassAnalysis(beta_class, scans, anti, syn, rule_status(anti, syn, config.rule),
                                     starts["anti"], starts["syn"]))
    lowest = ensemble.lowest
    minimum = minimum_hessian(lowest.atoms, lowest.energy_hartree, engine, charge, item.multiplicity,
                              config.paths.saddle.hessian_step_A, name=name)
    return SubstrateAnalysis(item.name, substrate, charge, item.multiplicity, ensemble, tuple(classes), global_min,
                             minimum)


def run_config(config: RunConfig, engine, on_progress: ProgressCallback | None = None,
               geometries: dict[str, tuple[str, str]] | None = None) -> RunOutcome:
    """Return the outcome of a run: each substrate analysed once, each base relaxed once.

    ``geometries`` maps substrate names to the (text, format) of user 3D structures.
    """
    jobs = config.jobs()
    outcome = RunOutcome(jobs=jobs)
    substrates = list({s.name: s for s, _ in jobs}.values())
    bases = list({b.name: b for _, b in jobs}.values())
    total = len(substrates) + len(bases)
    for step, item in enumerate(substrates):
        if on_progress is not None:
            on_progress(step, total, f"substrate '{item.name}' ({item.smiles})")
        try:
            outcome.substrates[item.name] = analyze_substrate(item, config, engine, on_progress,
                                                              (geometries or {}).get(item.name))
        except ElimscanError as err:
            outcome.substrates[item.name] = error_info(err)
    for step, item in enumerate(bases, start=len(substrates)):
        if on_progress is not None:
            on_progress(step, total, f"base '{item.name}' ({item.smiles})")
        relaxed, info = relax_base(item, engine, config)
        minimum = None
        if relaxed.record.status == "ok":  # a failed base (not relaxed, or not converged) gets no Hessian
            try:
                minimum = minimum_hessian(relaxed.atoms, relaxed.record.energy_hartree, engine, relaxed.record.charge,
                                          relaxed.record.multiplicity, config.paths.saddle.hessian_step_A,
                                          name=f"base '{item.name}'")
            except ElimscanError as err:  # as for a substrate: the molecule fails, its jobs say why
                failed = relaxed.record.model_copy(update={"status": "failed", "error": error_info(err)})
                relaxed, info = RelaxedMolecule(failed, relaxed.atoms), None
        outcome.bases[item.name] = BaseAnalysis(relaxed, info, minimum)
    for step, (substrate_cfg, base_cfg) in enumerate(jobs):
        analysis, base = outcome.substrates[substrate_cfg.name], outcome.bases[base_cfg.name]
        if isinstance(analysis, ErrorInfo) or base.info is None or base.relaxed.atoms is None:
            continue
        if on_progress is not None:
            on_progress(step, len(jobs), f"paths of {substrate_cfg.name} + {base_cfg.name}")
        outcome.paths[(substrate_cfg.name, base_cfg.name)] = compute_job_paths(analysis, base, config, engine, on_progress)
        if config.dft.enabled:
            outcome.dft[(substrate_cfg.name, base_cfg.name)] = job_dft(
                analysis, base, outcome.paths[(substrate_cfg.name, base_cfg.name)], config, on_progress)
    return outcome


def compute_job_paths(analysis: SubstrateAnalysis, base: BaseAnalysis, config: RunConfig, engine,
                      on_progress: ProgressCallback | None = None) -> JobPaths:
    """Return every (class, approach) path of one substrate with one base; failures are recorded, not raised."""
    lg = analysis.substrate.leaving_group
    n = len(analysis.ensemble.lowest.atoms)
    charge = analysis.charge + base.info.formal_charge
    multiplicity = analysis.multiplicity + base.relaxed.record.multiplicity - 1
    all_h = tuple(i for c in analysis.classes for i in c.beta_class.hydrogen_indices)
    paths: JobPaths = {}
    for c in analysis.classes:
        b = c.beta_class
        reactive = Reactive(b.representative_index, b.beta_carbon_index, lg.c_alpha_index, lg.leaving_atom_index,
                            n + base.info.basic_atom_index)
        for approach, best, starts in (("anti", c.anti, c.anti_starts), ("syn", c.syn, c.syn_starts)):
            if approach not in config.paths.approaches or best.atoms is None:
                continue
            product = b.anti_product if approach == "anti" else b.syn_product
            if not product.possible:
                continue
            tried: list[PathResult] = []
            failure: ErrorInfo | None = None
            orientations = min(config.paths.orientation_paths, config.paths.base_rotations)
            for k, start in enumerate(starts or (best,)):
                for rank in range(orientations):
                    if on_progress is not None:
                        on_progress(DETAIL, DETAIL, f"{analysis.name}: {approach} path of {b.class_id} "
                                                    f"(from {start.source}, {start.dihedral_deg:.0f} deg"
                                                    + (f", orientation {rank + 1}/{orientations})" if orientations > 1 else ")"))
                    try:
                        tried.append(compute_path(
                            start.atoms, base.relaxed.atoms, base.info.basic_atom_index, reactive, approach, engine,
                            charge, multiplicity, config.paths, config.optimizer,
                            tuple(i for i in all_h if i != b.representative_index),
                            name=f"{analysis.name} {b.class_id} {approach}" + (f" start {k}" if k else "")
                            + (f" orientation {rank}" if rank else ""), orientation_rank=rank))
                    except ElimscanError as err:
                        failure = failure or error_info(err)
            paths[(b.class_id, approach)] = (lowest_of_starts(tried, config.paths.combine, config.method.temperature_K)
                                             if tried else failure)
    if config.paths.substitution:
        if on_progress is not None:
            on_progress(DETAIL, DETAIL, f"{analysis.name}: backside substitution (SN2) path")
        reactive = SubstitutionReactive(n + base.info.basic_atom_index, lg.c_alpha_index, lg.leaving_atom_index)
        try:
            paths[SUBSTITUTION_KEY] = compute_substitution_path(
                analysis.ensemble.lowest.atoms, base.relaxed.atoms, base.info.basic_atom_index, reactive, engine,
                charge, multiplicity, config.paths, config.optimizer, name=f"{analysis.name} substitution")
        except ElimscanError as err:
            paths[SUBSTITUTION_KEY] = error_info(err)
    return paths


def lowest_of_starts(tried: list[PathResult], combine: str = "lowest", temperature_K: float = 298.15) -> PathResult:
    """Return the path with the lowest top (verified saddles first), carrying every start's top (hartree).

    With ``combine='boltzmann'`` the returned path also carries the Boltzmann-combined top of the distinct
    tops (analysis.boltzmann_combined), which then stands for the approach's barrier.
    """
    best = min(tried, key=lambda p: (not p.saddle.verified, p.top_hartree))
    tops = tuple(p.top_hartree for p in tried)
    combined = boltzmann_combined(tops, temperature_K) if combine == "boltzmann" and len(tops) > 1 else None
    return dataclasses.replace(best, start_tops_hartree=tops, combined_top_hartree=combined,
                               n_gradients=sum(p.n_gradients for p in tried))


# --- records -----------------------------------------------------------------------------------------


def scan_file_name(substrate: str, class_id: str, index: int) -> str:
    """Return the output-relative path of one scan trajectory."""
    return f"substrates/{safe_name(substrate)}/scan-{safe_name(class_id)}-{index}.xyz"


def conformer_file_name(substrate: str) -> str:
    """Return the output-relative path of a substrate's conformer SDF."""
    return f"substrates/{safe_name(substrate)}/conformers.sdf"


def safe_name(name: str) -> str:
    """Return a file-name-safe version of a user-given name."""
    return "".join(c if c.isalnum() or c in "-_." else "_" for c in name)


def path_file_name(job_id: str, class_id: str, approach: str, kind: str = "path") -> str:
    """Return the output-relative path of a path ('path') or saddle ('saddle') trajectory."""
    return f"jobs/{safe_name(job_id)}/{kind}-{safe_name(class_id)}-{approach}.xyz"


def _approach_record(product: Alkene, best: Periplanar, path: "PathResult | ErrorInfo | None", zero: float,
                     lowest_top: float | None, job_id: str, class_id: str, approach: str,
                     free_energy_kcal_mol: float | None = None,
                     character: SaddleCharacterRecord | None = None) -> ApproachRecord:
    """Return the record of one approach: product, periplanar geometry, and the path when one was computed."""
    record = dict(
        product_smiles=product.smiles, product_substitution=product.substitution, product_conjugated=product.conjugated,
        product_ring_position=product.ring_position, product_possible=product.possible,
        penalty_kcal_mol=best.penalty_kcal_mol, dihedral_deg=best.dihedral_deg, geometry_source=best.source,
        ring_shapes=best.ring_shapes)
    if isinstance(path, ErrorInfo):
        return ApproachRecord(**record, path_status="failed", error=path)
    if path is None:
        return ApproachRecord(**record)
    kcal = lambda e: round((e - zero) * KCAL_MOL_PER_HARTREE, 3)  # noqa: E731
    rotations = path.complex.energies_hartree
    return ApproachRecord(
        **record, path_status="ok", barrier_kcal_mol=kcal(path.top_hartree),
        relative_barrier_kcal_mol=round((path.top_hartree - lowest_top) * KCAL_MOL_PER_HARTREE, 3),
        barrier_source="verified saddle" if path.saddle.verified else "relaxed-path maximum",
        barrier_free_energy_kcal_mol=free_energy_kcal_mol, saddle_character=character,
        relaxed_path_estimate_kcal_mol=kcal(path.estimate_hartree), saddle_verified=path.saddle.verified,
        imaginary_frequency_cm1=None if path.saddle.imaginary_cm1 is None else round(path.saddle.imaginary_cm1, 1),
        saddle_note=path.saddle.reason, saddle_method=path.saddle.method, saddle_error_type=path.saddle.error_type,
        complex_energy_kcal_mol=kcal(path.complex.energy_hartree),
        complex_rotation_spread_kcal_mol=round((max(rotations) - min(rotations)) * KCAL_MOL_PER_HARTREE, 3),
        path_starts=max(1, len(path.start_tops_hartree)),
        barrier_combination=("boltzmann" if path.combined_top_hartree is not None else "lowest")
        if len(path.start_tops_hartree) > 1 else None,
        start_spread_kcal_mol=(round((max(path.start_tops_hartree) - min(path.start_tops_hartree))
                                        * KCAL_MOL_PER_HARTREE, 3) if len(path.start_tops_hartree) > 1 else None),
        flags=path.flags, n_gradients=path.n_gradients,
        path=tuple(PathPointRecord(coordinate_A=round(p.coordinate_A, 4), relative_energy_kcal_mol=kcal(p.energy_hartree),
                                   c_beta_h_A=round(p.distances["c_beta_h_A"], 4), base_h_A=round(p.distances["base_h_A"], 4),
                                   c_alpha_x_A=round(p.distances["c_alpha_x_A"], 4)) for p in path.points),
        path_file=path_file_name(job_id, class_id, approach),
        saddle_file=path_file_name(job_id, class_id, approach, "saddle") if path.saddle.atoms is not None else None)


def _scan_record(scan: DihedralScan, global_min: float, xyz_file: str) -> ScanRecord:
    points = tuple(ScanPointRecord(
        dihedral_deg=round(p.dihedral_deg, 2),
        relative_energy_kcal_mol=None if p.energy_hartree is None else round((p.energy_hartree - global_min) * KCAL_MOL_PER_HARTREE, 3),
        status=p.status, ring_shapes=p.ring_shapes) for p in scan.points)
    return ScanRecord(start=scan.start_label, points=points, notes=scan.notes, xyz_file=xyz_file)


def substrate_molecule_record(item: SubstrateConfig, analysis: SubstrateAnalysis | ErrorInfo) -> MoleculeRecord:
    """Return the molecule record of a substrate: its lowest conformer, or its failure."""
    if isinstance(analysis, ErrorInfo):
        return MoleculeRecord(name=item.name, role="substrate", smiles=item.smiles, status="failed", error=analysis)
    lowest = analysis.ensemble.lowest
    return MoleculeRecord(name=item.name, role="substrate", smiles=item.smiles, status="ok", charge=analysis.charge,
                          multiplicity=analysis.multiplicity, n_atoms=len(lowest.atoms),
                          formula=formula(analysis.substrate.mol), energy_hartree=lowest.energy_hartree, converged=True)


def job_record(substrate_cfg: SubstrateConfig, base_cfg: BaseConfig, outcome: RunOutcome, config: RunConfig) -> JobRecord:
    """Return the record of one job: beta-H classes, products and the rule's verdict, or its failure."""
    job_id = f"{safe_name(substrate_cfg.name)}__{safe_name(base_cfg.name)}"
    head = {"job_id": job_id, "substrate": substrate_cfg.name, "base": base_cfg.name}
    analysis = outcome.substrates[substrate_cfg.name]
    base = outcome.bases[base_cfg.name]
    errors = [e for e in (analysis if isinstance(analysis, ErrorInfo) else None, base.relaxed.record.error) if e]
    if errors or base.info is None:
        return JobRecord(**head, status="failed", error=ErrorInfo(
            error_type=errors[0].error_type if errors else "failed",
            error_message="; ".join(e.error_message for e in errors) or "base failed"))
    lg = analysis.substrate.leaving_group
    facts = [ClassFacts(c.beta_class.class_id, c.beta_class.anti_product, c.beta_class.syn_product, c.anti, c.syn)
             for c in analysis.classes]
    verdict = rule_verdict(facts, config.rule, base.info.bulky, lg.kind, lg.label)
    lowest = analysis.ensemble.lowest.energy_hartree
    paths = outcome.paths.get((substrate_cfg.name, base_cfg.name), {})
    zero = analysis.global_minimum_hartree + base.relaxed.record.energy_hartree
    done = {key: p for key, p in paths.items() if not isinstance(p, ErrorInfo) and key != SUBSTITUTION_KEY}
    lowest_top = min((p.top_hartree for p in done.values()), default=None)
    degeneracy = {c.beta_class.class_id: c.beta_class.degeneracy for c in analysis.classes}
    products_of = {(c.beta_class.class_id, a): (c.beta_class.anti_product if a == "anti" else c.beta_class.syn_product).smiles
                   for c in analysis.classes for a in ("anti", "syn")}
    temperature = config.method.temperature_K
    g_zero = _free_zero(analysis, base, temperature)
    free = {key: _saddle_free_energy(p, g_zero, base, analysis, temperature) for key, p in done.items()}
    use_free = config.analysis.energy == "free"
    notes: list[str] = []
    if use_free and any(v is None for v in free.values()):
        notes.append("free-energy product mix: paths without a verified saddle have no dG and are left out")
    if config.method.solvent.model == "dielectric" and (analysis.charge or base.relaxed.record.charge):
        notes.append(DIELECTRIC_ION_NOTE)
    below = (lowest - analysis.global_minimum_hartree) * KCAL_MOL_PER_HARTREE
    if below > MISSED_MINIMUM_KCAL_MOL:
        notes.append(f"a dihedral scan point lies {below:.2f} kcal/mol below the lowest conformer: the conformer "
                     "search missed a minimum; dE is measured from that point, dG and the isotope effects from the "
                     "lowest conformer (raise conformers.max_relaxations or conformers.base_embeddings)")
    barriers = [PathBarrier(cid, a, products_of[(cid, a)],
                            free[(cid, a)] if use_free else (p.top_hartree - zero) * KCAL_MOL_PER_HARTREE, degeneracy[cid])
                for (cid, a), p in done.items() if not use_free or free[(cid, a)] is not None]
    fractions = product_fractions(barriers, temperature)
    ranges = fraction_ranges(barriers, temperature)
    computed = compare_verdicts(verdict.major, fractions, barriers)
    substitution = _substitution_record(analysis, base, base_cfg, paths, zero, g_zero, barriers, config, job_id, use_free)
    beta_records = []
    for c in analysis.classes:
        b = c.beta_class
        beta_records.append(BetaHydrogenRecord(
            class_id=b.class_id, beta_carbon_index=b.beta_carbon_index, hydrogen_indices=b.hydrogen_indices,
            representative_index=b.representative_index, degeneracy=b.degeneracy,
            anti_penalty_kcal_mol=c.anti.penalty_kcal_mol, syn_penalty_kcal_mol=c.syn.penalty_kcal_mol,
            rule_status=c.status,
            anti=_approach_record(b.anti_product, c.anti, paths.get((b.class_id, "anti")), zero, lowest_top, job_id,
                                  b.class_id, "anti", free.get((b.class_id, "anti")),
                                  _character(analysis, b, paths.get((b.class_id, "anti")))),
            syn=_approach_record(b.syn_product, c.syn, paths.get((b.class_id, "syn")), zero, lowest_top, job_id,
                                 b.class_id, "syn", free.get((b.class_id, "syn")),
                                 _character(analysis, b, paths.get((b.class_id, "syn")))),
            isotope_effects=_isotope_effects(analysis, b, paths, temperature),
            scans=tuple(_scan_record(s, analysis.global_minimum_hartree, scan_file_name(substrate_cfg.name, b.class_id, k))
                        for k, s in enumerate(c.scans))))
    return with_dft(JobRecord(
        **head, status="ok",
        leaving_group=LeavingGroupRecord(label=lg.label, kind=lg.kind, leaving_atom_index=lg.leaving_atom_index,
                                         c_alpha_index=lg.c_alpha_index, map_number=lg.map_number),
        base_info=BaseRecord(basic_atom_index=base.info.basic_atom_index, bulky=base.info.bulky,
                             bulky_reason=base.info.bulky_reason, smiles=base_cfg.smiles,
                             model=base.relaxed.record.model or "bare"),
        global_minimum_hartree=analysis.global_minimum_hartree,
        conformers=tuple(ConformerRecord(conformer_id=c.conformer_id, energy_hartree=c.energy_hartree,
                                         relative_energy_kcal_mol=round((c.energy_hartree - lowest) * KCAL_MOL_PER_HARTREE, 3),
                                         source=c.source, ring_shapes=c.ring_shapes) for c in analysis.ensemble.conformers),
        conformer_file=conformer_file_name(substrate_cfg.name),
        warnings=analysis.substrate.warnings + analysis.ensemble.failures + tuple(notes),
        beta_hydrogens=tuple(beta_records),
        products=tuple(ProductRecord(smiles=p.smiles, substitution=p.substitution, rule_call=p.call,
                                     via_classes=p.via_classes, reason=p.reason,
                                     fraction=round(fractions[p.smiles], 4) if p.smiles in fractions else None,
                                     fraction_range=(round(ranges[p.smiles][0], 4), round(ranges[p.smiles][1], 4))
                                     if p.smiles in ranges else None)
                       for p in verdict.products),
        rule=RuleRecord(rule_major=verdict.major, hofmann_shift=verdict.hofmann_shift,
                        energy_window_kcal_mol=config.rule.energy_window_kcal_mol, reasoning=verdict.reasoning),
        reference_energy_hartree=zero,
        barrier_kind=(f"{config.method.hamiltonian}: barrier_kcal_mol are electronic energy differences dE; "
                      "barrier_free_energy_kcal_mol are quasi-RRHO free energies dG (1 M)"),
        temperature_K=config.method.temperature_K,
        verdict=VerdictRecord(rule_major=computed.rule_major, computed_major=computed.computed_major,
                              agreement=computed.agreement, within_method_uncertainty=computed.within_method_uncertainty,
                              reason=computed.reason),
        energy_used="free" if use_free else "electronic",
        substitution=substitution,
    ), outcome.dft.get((substrate_cfg.name, base_cfg.name)), config)


#: job warning for charged reactants in the dielectric-only continuum (numbers measured in test_engine_xtb.py)
DIELECTRIC_ION_NOTE = ("solvent model 'dielectric' (ddX-CPCM from ε alone) with a charged reactant: against "
                       "ALPB(methanol) it over-solvates small anions by 8-13 kcal/mol and halves a syn-anti gap "
                       "(measured); compare these barriers only with other jobs in the same model")

#: how far (kcal/mol) a scan point may lie below the lowest conformer before the job warns that the conformer
#: search missed a minimum (0.1: well above the optimiser's convergence noise, 0.002 kcal/mol measured in the
#: validation jobs; a reporting choice, not a physical constant)
MISSED_MINIMUM_KCAL_MOL = 0.1


def _free_zero(analysis: SubstrateAnalysis, base: BaseAnalysis, temperature_K: float) -> float | None:
    """Return G(free substrate) + G(free base) in hartree, or None without Hessians."""
    if analysis.minimum is None or base.minimum is None:
        return None
    try:
        return (molecule_thermo(analysis.minimum, temperature_K, analysis.multiplicity).free_energy_hartree
                + molecule_thermo(base.minimum, temperature_K, base.relaxed.record.multiplicity or 1).free_energy_hartree)
    except ValueError:  # a reactant that is not a minimum: no free energies for this job
        return None


def _saddle_free_energy(path: PathResult, g_zero: float | None, base: BaseAnalysis, analysis: SubstrateAnalysis,
                        temperature_K: float) -> float | None:
    """Return dG of a verified saddle above free substrate + free base (kcal/mol), else None."""
    saddle = path.saddle
    if g_zero is None or not saddle.verified or saddle.hessian_eV_A2 is None:
        return None
    multiplicity = analysis.multiplicity + (base.relaxed.record.multiplicity or 1) - 1
    try:
        g = saddle_thermo(saddle.atoms, saddle.energy_hartree, saddle.hessian_eV_A2, temperature_K, multiplicity)
    except ValueError:
        return None
    return round((g.free_energy_hartree - g_zero) * KCAL_MOL_PER_HARTREE, 3)


def _character(analysis: SubstrateAnalysis, b: BetaHydrogenClass, path) -> SaddleCharacterRecord | None:
    """Return the saddle character of a verified path (bond lengths of the free substrate as reference)."""
    if path is None or isinstance(path, ErrorInfo) or not path.saddle.verified:
        return None
    lg = analysis.substrate.leaving_group
    ref, pos = analysis.ensemble.lowest.atoms.positions, path.saddle.atoms.positions
    h, cb, ca, x = b.representative_index, b.beta_carbon_index, lg.c_alpha_index, lg.leaving_atom_index
    c = saddle_character(distance(ref, cb, h), distance(pos, cb, h), distance(ref, ca, x), distance(pos, ca, x))
    return SaddleCharacterRecord(c_h_cleavage=c.c_h_cleavage, c_x_cleavage=c.c_x_cleavage, label=c.label)


def _isotope_effects(analysis: SubstrateAnalysis, b: BetaHydrogenClass, paths: JobPaths,
                     temperature_K: float) -> tuple[IsotopeEffectRecord, ...]:
    """Return k_H/k_D of a class (D at the moving H, and at every H of the beta carbon) from its best verified path."""
    if analysis.minimum is None:
        return ()
    verified = [(a, p) for a in ("anti", "syn") for p in [paths.get((b.class_id, a))]
                if p is not None and not isinstance(p, ErrorInfo) and p.saddle.verified and p.saddle.hessian_eV_A2 is not None]
    if not verified:
        return ()
    approach, path = min(verified, key=lambda item: item[1].saddle.energy_hartree)
    mol = analysis.substrate.mol
    beta_h = tuple(n.GetIdx() for n in mol.GetAtomWithIdx(b.beta_carbon_index).GetNeighbors() if n.GetAtomicNum() == 1)
    records = []
    for label, labelled in (("D at the transferring hydrogen", (b.representative_index,)),
                            (f"D at every hydrogen of the beta carbon (CD{len(beta_h)})" if len(beta_h) > 1 else None, beta_h)):
        if label is None:
            continue
        try:
            kie = isotope_effect(analysis.minimum, path.saddle.atoms, path.saddle.hessian_eV_A2, labelled, temperature_K)
        except ValueError:
            continue
        records.append(IsotopeEffectRecord(label=label, deuterated_indices=labelled, approach=approach,
                                           kh_kd=round(kie.ratio, 3), kh_kd_wigner=round(kie.ratio_wigner, 3),
                                           temperature_K=temperature_K))
    return tuple(records)


def textbook_substitution_call(analysis: SubstrateAnalysis, bulky: bool) -> tuple[str, str]:
    """Return the textbook call on E2 against SN2: primary + small base substitution, tertiary or bulky elimination."""
    ca = analysis.substrate.mol.GetAtomWithIdx(analysis.substrate.leaving_group.c_alpha_index)
    carbons = sum(1 for n in ca.GetNeighbors() if n.GetAtomicNum() == 6)
    if carbons >= 3:
        return "elimination", "tertiary C-alpha: backside attack is blocked"
    if bulky:
        return "elimination", "bulky base: a poor nucleophile"
    if carbons <= 1:
        return "substitution", "primary C-alpha with a small base"
    return "mixture", "secondary C-alpha with a small base"


def _substitution_record(analysis: SubstrateAnalysis, base: BaseAnalysis, base_cfg: BaseConfig, paths: JobPaths,
                         zero: float, g_zero: float | None, e2_barriers: list[PathBarrier], config: RunConfig,
                         job_id: str, use_free: bool) -> SubstitutionRecord | None:
    """Return the SN2 record of a job (None when substitution was not asked for)."""
    if not config.paths.substitution:
        return None
    call, why = textbook_substitution_call(analysis, base.info.bulky)
    product = substitution_product(analysis.substrate, base_cfg.smiles, base.info.basic_atom_index)
    path = paths.get(SUBSTITUTION_KEY)
    head = dict(product_smiles=product, rule_call=call, rule_reason=why)
    if path is None:
        return SubstitutionRecord(**head)
    if isinstance(path, ErrorInfo):
        return SubstitutionRecord(**head, path_status="failed", error=path)
    barrier = round((path.top_hartree - zero) * KCAL_MOL_PER_HARTREE, 3)
    free = _saddle_free_energy(path, g_zero, base, analysis, config.method.temperature_K)
    mine = free if use_free else barrier
    shares: dict[str, float] = {}
    if mine is not None and e2_barriers:
        mix = product_fractions([*e2_barriers, PathBarrier("substitution", "backside", "SN2", mine, 1)],
                                config.method.temperature_K)
        shares = {"substitution": mix["SN2"], "elimination": 1.0 - mix["SN2"]}
    return SubstitutionRecord(
        **head, path_status="ok", barrier_kcal_mol=barrier, barrier_free_energy_kcal_mol=free,
        barrier_source="verified saddle" if path.saddle.verified else "relaxed-path maximum",
        saddle_verified=path.saddle.verified,
        imaginary_frequency_cm1=None if path.saddle.imaginary_cm1 is None else round(path.saddle.imaginary_cm1, 1),
        saddle_note=path.saddle.reason, path_file=path_file_name(job_id, "substitution", "backside"),
        saddle_file=path_file_name(job_id, "substitution", "backside", "saddle") if path.saddle.atoms is not None else None,
        elimination_fraction=round(shares["elimination"], 4) if shares else None,
        substitution_fraction=round(shares["substitution"], 4) if shares else None)


# --- optional DFT tier --------------------------------------------------------------------------------


def _top_atoms(path: PathResult) -> Atoms:
    """Return the geometry behind a path's barrier: the verified saddle, else the relaxed-path maximum."""
    return path.saddle.atoms if path.saddle.verified else path.points[path.maximum_index].atoms


def job_dft(analysis: SubstrateAnalysis, base: BaseAnalysis, paths: JobPaths, config: RunConfig,
            on_progress: ProgressCallback | None = None) -> DftJobResult:
    """Return the DFT tier of one job: single points on the lowest GFN2-xTB saddles of each product (E2 paths)."""
    degeneracy = {c.beta_class.class_id: c.beta_class.degeneracy for c in analysis.classes}
    products = {(c.beta_class.class_id, a): (c.beta_class.anti_product if a == "anti" else c.beta_class.syn_product).smiles
                for c in analysis.classes for a in ("anti", "syn")}
    candidates = [SaddleCandidate(key, products[key], degeneracy[key[0]], p.top_hartree, _top_atoms(p))
                  if key != SUBSTITUTION_KEY else SaddleCandidate(key, "SN2", 1, p.top_hartree, _top_atoms(p), kind="sn2")
                  for key, p in paths.items() if not isinstance(p, ErrorInfo)]
    base_charge, base_mult = base.info.formal_charge, base.relaxed.record.multiplicity or 1
    reactants = (("substrate", analysis.ensemble.lowest.atoms, analysis.charge, analysis.multiplicity),
                 ("base", base.relaxed.atoms, base_charge, base_mult))
    report = None if on_progress is None else (lambda message: on_progress(DETAIL, DETAIL, message))
    return refine_job(f"{analysis.name} + {base.relaxed.record.name}", candidates,
                      analysis.charge + base_charge, analysis.multiplicity + base_mult - 1,
                      {f"substrate '{analysis.name}'": analysis.charge, f"base '{base.relaxed.record.name}'": base_charge},
                      config.dft, config.method.solvent, config.method.temperature_K, reactants,
                      config.threads.per_process, report)


def _dft_point_record(point: DftPoint | ErrorInfo, approach: ApproachRecord | SubstitutionRecord) -> DftPointRecord:
    """Return the record of one DFT single point (or its failure) on the path of ``approach`` (E2 or SN2)."""
    if isinstance(point, ErrorInfo):
        return DftPointRecord(status="failed", geometry=approach.barrier_source, error=point)
    return DftPointRecord(status="ok", energy_hartree=point.energy_hartree, dispersion_hartree=point.dispersion_hartree,
                          geometry=approach.barrier_source, seconds=point.seconds, scf_cycles=point.scf_cycles)


def with_dft(record: JobRecord, result: DftJobResult | None, config: RunConfig) -> JobRecord:
    """Return the job record with its DFT tier: barrier_dft_kcal_mol per path, fraction_dft per product, the dft block."""
    if result is None:
        return record

    def approach(a: ApproachRecord, key: tuple[str, str]) -> ApproachRecord:
        point = result.points.get(key)
        if point is None:
            return a
        return a.model_copy(update={"barrier_dft_kcal_mol": result.barriers_kcal_mol.get(key),
                                    "dft": _dft_point_record(point, a)})
    betas = tuple(b.model_copy(update={"anti": approach(b.anti, (b.class_id, "anti")),
                                       "syn": approach(b.syn, (b.class_id, "syn"))}) for b in record.beta_hydrogens)
    products = tuple(p.model_copy(update={"fraction_dft": round(result.fractions[p.smiles], 4)
                                          if p.smiles in result.fractions else None}) for p in record.products)
    substitution = record.substitution
    sn2_point = result.points.get(SUBSTITUTION_KEY)
    if substitution is not None and sn2_point is not None:
        share = result.substitution_fraction
        substitution = substitution.model_copy(update={
            "barrier_dft_kcal_mol": result.barriers_kcal_mol.get(SUBSTITUTION_KEY),
            "dft": _dft_point_record(sn2_point, substitution),
            "substitution_fraction_dft": None if share is None else round(share, 4)})
    block = DftJobRecord(status=result.status, message=result.message, level=result.level,
                         program_version=result.program_version, saddles_per_product=config.dft.saddles_per_product,
                         n_single_points=len(result.points), zero_kind=result.zero_kind,
                         reference_energy_hartree=result.reference_energy_hartree,
                         computed_major=max(result.fractions, key=result.fractions.get) if result.fractions else None,
                         seconds=result.seconds, error=result.error)
    return record.model_copy(update={"beta_hydrogens": betas, "products": products, "substitution": substitution,
                                     "dft": block})
