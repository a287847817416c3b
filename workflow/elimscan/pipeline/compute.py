"""The computation of a run, without file I/O.

Per substrate: perception (leaving group, beta-H classes, products), a GFN2-xTB conformer ensemble,
H-C-C-X scans for every beta-H class, and the anti/syn penalties. Per base: a relaxed structure and
how the rule sees it. Per job: the paths of every beta-H class and approach (and the optional DFT tier,
``dfttier``); the job's numbers and records follow in ``energetics`` and ``assemble``. Known failures
(bad input, SCF or optimiser trouble) become records with ``status: failed``; the run carries on.
Progress is reported through a callback, never printed.
"""

from __future__ import annotations

import dataclasses
import time
from collections.abc import Callable

from rdkit import Chem

from elimscan.analysis.rule import GeometrySample, best_periplanar, boltzmann_combined, periplanar_starts, rule_status
from elimscan.chem.bases import BaseInfo, describe_base
from elimscan.chem.basemodels import BaseCluster, model_cluster, resolve_base_model
from elimscan.config import SEED_LIMIT, BaseConfig, OptimizerConfig, RunConfig, SubstrateConfig
from elimscan.drivers.conformers import ConformerEnsemble, build_ensemble, saturated_six_rings
from elimscan.engines.contract import PointLog
from elimscan.errors import ElimscanError
from elimscan.units import KCAL_MOL_PER_HARTREE
from elimscan.geometry import dihedral_deg, wrap_degrees
from elimscan.chem.betahydrogens import BetaHydrogenClass
from elimscan.chem.perception import Substrate, perceive_substrate
from elimscan.analysis.stagegradients import summed_counts
from elimscan.drivers.budget import GradientBudget
from elimscan.drivers.freeenergy import minimum_hessian
from elimscan.drivers.paths import PathResult, compute_path, compute_substitution_path
from elimscan.pipeline.dfttier import job_dft, path_reactive
from elimscan.pipeline.productcheck import checked_isomer
from elimscan.pipeline.outcome import (DETAIL, SUBSTITUTION_KEY, BaseAnalysis, ClassAnalysis, JobPaths, ProgressCallback,
                                       RelaxedMolecule, RunOutcome, SubstrateAnalysis)
from elimscan.results.failures import error_info
from elimscan.results.records import ErrorInfo, MoleculeRecord
from elimscan.drivers.relax import RelaxResult, relax
from elimscan.drivers.scans import DihedralScan, branch_plan, scan_dihedral
from elimscan.chem.structures import atoms_from_geometry, build_molecule, check_charge, formula


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


#: the seeds of a base model's further embeddings step by this prime from the job's seed, so that they never meet the
#: next seeds of a benchmark (1, 2, 3 ...) nor the seed + k of the k-th explicit molecule: seeds stay independent
EMBEDDING_SEED_STRIDE = 7919


def embedding_seed(seed: int, embedding: int) -> int:
    """Return the seed of a base model's ``embedding``-th embedding (0: the job's seed)."""
    return (seed + EMBEDDING_SEED_STRIDE * embedding) % SEED_LIMIT


def relax_base(item: BaseConfig, engine, config: RunConfig) -> tuple[RelaxedMolecule, BaseInfo | None]:
    """Return the relaxed base model (bare, ion pair and/or explicit molecules) and how the rule sees the base.

    The model is ``resolve_base_model``'s for the base in ``config.method.solvent`` (the job's solvent). For a
    bare base this is ``relax_molecule``; otherwise the cluster of basemodels.py is built on the embedded base
    and relaxed as one molecule (charge: base + cation), whose energy is the base's share of the common zero;
    with ``model.arrangements`` > 1 each starting arrangement, and with more than one embedding (the resolved model's:
    the config's ``model.embeddings``, else DEFAULT_CLUSTER_EMBEDDINGS for the default cluster) each embedding of the
    molecules in each arrangement, is relaxed and the lowest converged one kept.
    The record's SMILES is the dot-separated cluster; its ``model`` and ``model_reason`` say which model and why.
    """
    solvent = config.method.solvent
    model = resolve_base_model(item, solvent.model, solvent.name)
    if model.bare:
        relaxed = relax_molecule(item.name, "base", item.smiles, item.charge, item.multiplicity, engine,
                                 config.optimizer, config.seed)
        relaxed = RelaxedMolecule(relaxed.record.model_copy(update={"model": "bare", "model_reason": model.reason}),
                                  relaxed.atoms)
        return relaxed, (describe_base(item.smiles, item.bulky) if relaxed.record.status == "ok" else None)
    what = f"base '{item.name}'"
    start = time.perf_counter()
    tried: list[tuple[BaseCluster, RelaxResult]] = []
    try:
        info = describe_base(item.smiles, item.bulky)
        for embedding in range(model.embeddings):
            seed = embedding_seed(config.seed, embedding)
            for arrangement in range(item.model.arrangements):
                cluster = model_cluster(item.smiles, item.charge, item.multiplicity, model.counter_ion, model.explicit,
                                        model.explicit_smiles, seed, item.name, arrangement)
                calc = engine.calculator(cluster.charge, item.multiplicity, name=what)
                tried.append((cluster, relax(cluster.atoms, calc, (), config.optimizer)))
    except ElimscanError as err:
        record = MoleculeRecord(name=item.name, role="base", smiles=item.smiles, status="failed", error=error_info(err),
                                model_reason=model.reason)
        return RelaxedMolecule(record, None), None
    converged = [pair for pair in tried if pair[1].converged] or tried
    cluster, result = min(converged, key=lambda pair: pair[1].energy_hartree)
    energies = [r.energy_hartree for _, r in converged]
    record = MoleculeRecord(
        name=item.name, role="base", smiles=cluster.smiles, status="ok", charge=cluster.charge,
        multiplicity=item.multiplicity, n_atoms=len(result.atoms), formula=result.atoms.get_chemical_formula(mode="hill"),
        energy_hartree=result.energy_hartree, converged=result.converged,
        n_gradients=sum(r.n_gradients for _, r in tried), relax_seconds=round(time.perf_counter() - start, 3),
        model=cluster.label, model_reason=model.reason, arrangements=len(tried),
        arrangement_spread_kcal_mol=round((max(energies) - min(energies)) * KCAL_MOL_PER_HARTREE, 3)
        if len(energies) > 1 else None)
    if not result.converged:
        record = record.model_copy(update={"status": "failed", "error": ErrorInfo(
            error_type="optimization_failed",
            error_message=f"{what} ({cluster.label}): relaxation did not converge in {config.optimizer.max_steps} steps"
                          + (f" in any of its {len(tried)} arrangements" if len(tried) > 1 else ""))})
        return RelaxedMolecule(record, result.atoms), None
    return RelaxedMolecule(record, result.atoms), BaseInfo(cluster.smiles, info.basic_atom_index, cluster.charge,
                                                            info.bulky, info.bulky_reason)


def _bond_in_ring(mol: Chem.Mol, a: int, b: int) -> bool:
    """Return True when the bond a-b lies in a ring."""
    bond = mol.GetBondBetweenAtoms(a, b)
    return bond is not None and bond.IsInRing()


def _class_scans(substrate: Substrate, beta_class: BetaHydrogenClass, ensemble: ConformerEnsemble, engine,
                 charge: int, multiplicity: int, config: RunConfig, rings, name: str,
                 meter: GradientBudget | None) -> tuple[DihedralScan, ...]:
    """Return the scans of one class: a full turn from the lowest conformer, or local ring scans (each a stage of
    ``meter``, which reports it)."""
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
        if meter is not None:
            meter.enter(f"scanning H-C-C-X of {beta_class.class_id} from conformer {conformer_id} at {phi:.0f}\u00b0, "
                        f"{sum(n for _, n in plan)} points")
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
    meter, engine = _stage_meter(engine, on_progress, name, "substrate")
    if meter is not None:
        meter.enter(f"conformer search, {len(substrate.beta_classes)} beta-H classes")
    ensemble = build_ensemble(substrate.mol, engine, charge, item.multiplicity, config.seed, config.conformers,
                              config.optimizer, extra=extra, name=name, c_alpha=substrate.leaving_group.c_alpha_index)
    rings = saturated_six_rings(substrate.mol)
    lg = substrate.leaving_group
    per_class = []
    for beta_class in substrate.beta_classes:
        quad = (beta_class.representative_index, beta_class.beta_carbon_index, lg.c_alpha_index, lg.leaving_atom_index)
        scans = _class_scans(substrate, beta_class, ensemble, engine, charge, item.multiplicity, config, rings, name,
                             meter)
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
    if meter is not None:
        meter.enter("Hessian of the lowest conformer")
    minimum = minimum_hessian(lowest.atoms, lowest.energy_hartree, engine, charge, item.multiplicity,
                              config.paths.saddle.hessian_step_A, name=name)
    return SubstrateAnalysis(item.name, substrate, charge, item.multiplicity, ensemble, tuple(classes), global_min,
                             minimum)


def run_steps(config: RunConfig) -> list[str]:
    """Return the kind of every counted step of a run, in order: 'substrate', 'base', then 'job' (its paths)."""
    jobs = config.jobs()
    return (["substrate"] * len({s.name for s, _ in jobs}) + ["base"] * len({b.name for _, b in jobs})
            + ["job"] * len(jobs))


def run_config(config: RunConfig, engine, on_progress: ProgressCallback | None = None,
               geometries: dict[str, tuple[str, str]] | None = None, replay: PointLog | None = None) -> RunOutcome:
    """Return the outcome of a run: each substrate analysed once, each base relaxed once.

    ``geometries`` maps substrate names to the (text, format) of user 3D structures; ``replay`` is the job's replay
    log, handed to the engine (when it has a slot for it, as ``XtbEngine`` has) and to the DFT tier, which serve
    from it the points a stopped earlier run finished.
    """
    if replay is not None and hasattr(engine, "replay"):
        engine.replay = replay
    jobs = config.jobs()
    outcome = RunOutcome(jobs=jobs)
    substrates = list({s.name: s for s, _ in jobs}.values())
    bases = list({b.name: b for _, b in jobs}.values())
    total = len(run_steps(config))  # one counter over the whole run: substrates, bases, then the jobs' paths
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
        meter, metered = _stage_meter(engine, on_progress, f"base '{item.name}'", "base")
        if meter is not None:
            meter.enter("relaxation")
        relaxed, info = relax_base(item, metered, config)
        minimum = None
        if relaxed.record.status == "ok":  # a failed base (not relaxed, or not converged) gets no Hessian
            if meter is not None:
                meter.enter("Hessian")
            try:
                minimum = minimum_hessian(relaxed.atoms, relaxed.record.energy_hartree, metered, relaxed.record.charge,
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
            on_progress(len(substrates) + len(bases) + step, total, f"paths of {substrate_cfg.name} + {base_cfg.name}")
        outcome.paths[(substrate_cfg.name, base_cfg.name)] = compute_job_paths(analysis, base, config, engine, on_progress)
        if config.dft.enabled:
            outcome.dft[(substrate_cfg.name, base_cfg.name)] = job_dft(
                analysis, base, outcome.paths[(substrate_cfg.name, base_cfg.name)], config, on_progress,
                replay=replay)
    return outcome


def _stage_meter(engine, on_progress: ProgressCallback | None, name: str, scope: str
                 ) -> tuple[GradientBudget | None, object]:
    """Return (meter, engine) for the stages of one substrate or base: a budget without a limit whose ``enter``
    reports a stage and whose engine reports it again every ``REPORT_INTERVAL_S`` with its gradients and seconds,
    as a path's stages do; (None, ``engine``) without a progress callback."""
    report = _stage_reporter(on_progress, name)
    if report is None:
        return None, engine
    meter = GradientBudget(engine, None, report, scope=scope)
    return meter, meter.metered(engine)


def _stage_reporter(on_progress: ProgressCallback | None, name: str) -> Callable[[str], None] | None:
    """Return the callback that passes a path's stage reports (gradients, s) on as sub-step messages, or None."""
    if on_progress is None:
        return None
    return lambda text: on_progress(DETAIL, DETAIL, f"{name}: {text}")


def compute_job_paths(analysis: SubstrateAnalysis, base: BaseAnalysis, config: RunConfig, engine,
                      on_progress: ProgressCallback | None = None) -> JobPaths:
    """Return every (class, approach) path of one substrate with one base; failures are recorded, not raised."""
    charge = analysis.charge + base.info.formal_charge
    multiplicity = analysis.multiplicity + base.relaxed.record.multiplicity - 1
    all_h = tuple(i for c in analysis.classes for i in c.beta_class.hydrogen_indices)
    paths: JobPaths = {}
    for c in analysis.classes:
        b = c.beta_class
        reactive = path_reactive(analysis, base, (b.class_id, "anti"))
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
                    name = (f"{analysis.name} {b.class_id} {approach}" + (f" start {k}" if k else "")
                            + (f" orientation {rank}" if rank else ""))
                    try:
                        tried.append(checked_isomer(compute_path(
                            start.atoms, base.relaxed.atoms, base.info.basic_atom_index, reactive, approach, engine,
                            charge, multiplicity, config.paths, config.optimizer,
                            tuple(i for i in all_h if i != b.representative_index),
                            name=name, orientation_rank=rank, on_stage=_stage_reporter(on_progress, name)),
                            analysis.substrate, b, product.smiles))
                    except ElimscanError as err:
                        failure = failure or error_info(err)
            paths[(b.class_id, approach)] = (lowest_of_starts(tried, config.paths.combine, config.method.temperature_K)
                                             if tried else failure)
    if config.paths.substitution:
        if on_progress is not None:
            on_progress(DETAIL, DETAIL, f"{analysis.name}: backside substitution (SN2) path")
        reactive = path_reactive(analysis, base, SUBSTITUTION_KEY)
        tried, failure = [], None
        # the nucleophile's rotations are sampled as an E2 approach's are (paths.orientation_paths, paths.combine)
        for rank in range(min(config.paths.orientation_paths, config.paths.base_rotations)):
            name = f"{analysis.name} substitution" + (f" orientation {rank}" if rank else "")
            try:
                tried.append(compute_substitution_path(
                    analysis.ensemble.lowest.atoms, base.relaxed.atoms, base.info.basic_atom_index, reactive, engine,
                    charge, multiplicity, config.paths, config.optimizer, name=name,
                    on_stage=_stage_reporter(on_progress, name), orientation_rank=rank))
            except ElimscanError as err:
                failure = failure or error_info(err)
        paths[SUBSTITUTION_KEY] = (lowest_of_starts(tried, config.paths.combine, config.method.temperature_K)
                                   if tried else failure)
    return paths


def lowest_of_starts(tried: list[PathResult], combine: str = "lowest", temperature_K: float = 298.15) -> PathResult:
    """Return the path with the lowest top (verified saddles first), carrying every counted start's top (hartree).

    Starts that are no barrier (shown not to reach their products, or stopped by their gradient budget:
    ``PathResult.counts_as_barrier``) are left out while any start is a barrier.

    With ``combine='boltzmann'`` the returned path also carries the Boltzmann-combined top of the distinct
    tops (analysis.boltzmann_combined), which then stands for the approach's barrier, and the verified saddles of
    those starts, whose free energies are combined the same way (pipeline/energetics).
    """
    counted = [p for p in tried if p.counts_as_barrier] or tried  # a start that is no barrier decides nothing
    best = min(counted, key=lambda p: (not p.saddle.verified, p.top_hartree))
    tops = tuple(p.top_hartree for p in counted)
    combined = boltzmann_combined(tops, temperature_K) if combine == "boltzmann" and len(tops) > 1 else None
    saddles = () if combined is None else tuple(p.saddle for p in counted
                                                 if p.saddle.verified and p.saddle.hessian_eV_A2 is not None)
    return dataclasses.replace(best, start_tops_hartree=tops, combined_top_hartree=combined, start_saddles=saddles,
                               n_gradients=sum(p.n_gradients for p in tried),
                               stage_gradients=summed_counts(*(p.stage_gradients for p in tried)))
