"""Record assembly: a job's records packed from its computed outcome and numbers, without computing anything.

The numbers come from ``energetics.job_numbers`` (free energies, isotope effects, product mixes, verdicts)
and from the run's outcome (energies, paths, scans); here they are only converted to the record's units
(kcal/mol relative to the job's zero), rounded and named. No file I/O here.
"""

from __future__ import annotations

from elimscan.analysis.character import SaddleCharacter
from elimscan.analysis.rule import Periplanar
from elimscan.chem.alkenes import Alkene
from elimscan.chem.structures import formula
from elimscan.config import BaseConfig, RunConfig, SubstrateConfig
from elimscan.drivers.paths import PathResult
from elimscan.drivers.scans import DihedralScan
from elimscan.engines.dft import DftJobResult, DftPoint, DftSaddle
from elimscan.pipeline.energetics import JobNumbers
from elimscan.pipeline.names import conformer_file_name, job_id_of, path_file_name, scan_file_name
from elimscan.pipeline.outcome import SUBSTITUTION_KEY, BaseAnalysis, JobPaths, SubstrateAnalysis
from elimscan.results.records import (ApproachRecord, BaseRecord, BetaHydrogenRecord, ConformerRecord, DftJobRecord,
                                      DftPointRecord, DftSaddleRecord, ErrorInfo, IsotopeEffectRecord, JobRecord,
                                      LeavingGroupRecord,
                                      MoleculeRecord, PathPointRecord, ProductRecord, RuleRecord,
                                      SaddleCharacterRecord, ScanPointRecord, ScanRecord, StageGradientsRecord,
                                      SubstitutionRecord, VerdictRecord)
from elimscan.units import KCAL_MOL_PER_HARTREE


def _approach_record(product: Alkene, best: Periplanar, path: "PathResult | ErrorInfo | None", zero: float,
                     lowest_top: float | None, job_id: str, class_id: str, approach: str,
                     free_energy_kcal_mol: float | None = None,
                     character: SaddleCharacter | None = None) -> ApproachRecord:
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
        relative_barrier_kcal_mol=(None if lowest_top is None  # no path of the job is a barrier
                                   else round((path.top_hartree - lowest_top) * KCAL_MOL_PER_HARTREE, 3)),
        barrier_source="verified saddle" if path.saddle.verified else "relaxed-path maximum",
        barrier_free_energy_kcal_mol=free_energy_kcal_mol,
        reaches_products=path.reaches_products, budget_spent_in=path.stopped_stage,
        saddle_character=None if character is None else SaddleCharacterRecord(
            c_h_cleavage=character.c_h_cleavage, c_x_cleavage=character.c_x_cleavage, label=character.label),
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
        flags=path.flags, n_gradients=path.n_gradients, stage_gradients=stage_gradient_records(path),
        path=tuple(PathPointRecord(coordinate_A=round(p.coordinate_A, 4), relative_energy_kcal_mol=kcal(p.energy_hartree),
                                   c_beta_h_A=round(p.distances["c_beta_h_A"], 4), base_h_A=round(p.distances["base_h_A"], 4),
                                   c_alpha_x_A=round(p.distances["c_alpha_x_A"], 4)) for p in path.points),
        path_file=path_file_name(job_id, class_id, approach),
        saddle_file=path_file_name(job_id, class_id, approach, "saddle") if path.saddle.atoms is not None else None,
        complex_file=path_file_name(job_id, class_id, approach, "complex"),
        product_file=path_file_name(job_id, class_id, approach, "product") if path.points else None)


def stage_gradient_records(path: PathResult) -> tuple[StageGradientsRecord, ...]:
    """Return the records of each stage's energy+gradient evaluations of a path, in the order the stages ran."""
    return tuple(StageGradientsRecord(stage=stage, gradients=count) for stage, count in path.stage_gradients.items())


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


def failed_job_record(substrate_cfg: SubstrateConfig, base_cfg: BaseConfig, analysis: SubstrateAnalysis | ErrorInfo,
                      base: BaseAnalysis) -> JobRecord | None:
    """Return the failed record of a job whose substrate or base failed, else None (the job can be packed)."""
    errors = [e for e in (analysis if isinstance(analysis, ErrorInfo) else None, base.relaxed.record.error) if e]
    if not errors and base.info is not None:
        return None
    return JobRecord(job_id=job_id_of(substrate_cfg.name, base_cfg.name), substrate=substrate_cfg.name, base=base_cfg.name,
                     status="failed", error=ErrorInfo(
                         error_type=errors[0].error_type if errors else "failed",
                         error_message="; ".join(e.error_message for e in errors) or "base failed"))


def _isotope_records(numbers: JobNumbers, class_id: str, temperature_K: float) -> tuple[IsotopeEffectRecord, ...]:
    """Return the k_H/k_D records of one beta-H class (ratios rounded to 3 decimals)."""
    return tuple(IsotopeEffectRecord(label=k.label, deuterated_indices=k.deuterated_indices, approach=k.approach,
                                     kh_kd=round(k.effect.ratio, 3), kh_kd_wigner=round(k.effect.ratio_wigner, 3),
                                     temperature_K=temperature_K)
                 for k in numbers.isotope_effects[class_id])


def _substitution_record(numbers: JobNumbers, paths: JobPaths, job_id: str, zero: float) -> SubstitutionRecord | None:
    """Return the SN2 record of a job (None when substitution was not asked for)."""
    sn2 = numbers.substitution
    if sn2 is None:
        return None
    path = paths.get(SUBSTITUTION_KEY)
    head = dict(product_smiles=sn2.product_smiles, rule_call=sn2.rule_call, rule_reason=sn2.rule_reason)
    if path is None:
        return SubstitutionRecord(**head)
    if isinstance(path, ErrorInfo):
        return SubstitutionRecord(**head, path_status="failed", error=path)
    return SubstitutionRecord(
        **head, path_status="ok", barrier_kcal_mol=sn2.barrier_kcal_mol, barrier_free_energy_kcal_mol=sn2.free_energy_kcal_mol,
        barrier_source="verified saddle" if path.saddle.verified else "relaxed-path maximum",
        reaches_products=path.reaches_products, budget_spent_in=path.stopped_stage,
        saddle_verified=path.saddle.verified,
        imaginary_frequency_cm1=None if path.saddle.imaginary_cm1 is None else round(path.saddle.imaginary_cm1, 1),
        saddle_note=path.saddle.reason, path_file=path_file_name(job_id, "substitution", "backside"),
        saddle_file=path_file_name(job_id, "substitution", "backside", "saddle") if path.saddle.atoms is not None else None,
        complex_file=path_file_name(job_id, "substitution", "backside", "complex"),
        product_file=path_file_name(job_id, "substitution", "backside", "product") if path.points else None,
        complex_energy_kcal_mol=round((path.complex.energy_hartree - zero) * KCAL_MOL_PER_HARTREE, 3),
        stage_gradients=stage_gradient_records(path),
        path_end_energy_kcal_mol=(round((path.points[-1].energy_hartree - zero) * KCAL_MOL_PER_HARTREE, 3)
                                  if path.points else None),
        elimination_fraction=round(sn2.shares[0], 4) if sn2.shares else None,
        substitution_fraction=round(sn2.shares[1], 4) if sn2.shares else None)


def _product_records(numbers: JobNumbers) -> tuple[ProductRecord, ...]:
    """Return the product records: the rule's call beside the computed fraction (4 decimals) and its range."""
    fractions, ranges = numbers.fractions, numbers.ranges
    return tuple(ProductRecord(smiles=p.smiles, substitution=p.substitution, rule_call=p.call,
                               via_classes=p.via_classes, reason=p.reason,
                               fraction=round(fractions[p.smiles], 4) if p.smiles in fractions else None,
                               fraction_range=(round(ranges[p.smiles][0], 4), round(ranges[p.smiles][1], 4))
                               if p.smiles in ranges else None)
                 for p in numbers.verdict.products)


def pack_job(substrate_cfg: SubstrateConfig, base_cfg: BaseConfig, analysis: SubstrateAnalysis, base: BaseAnalysis,
             paths: JobPaths, numbers: JobNumbers, config: RunConfig) -> JobRecord:
    """Return the record of a job whose substrate and base succeeded, packed from its outcome and its numbers."""
    name = job_id_of(substrate_cfg.name, base_cfg.name)
    lg = analysis.substrate.leaving_group
    lowest = analysis.ensemble.lowest.energy_hartree
    zero, lowest_top, free = numbers.zero_hartree, numbers.lowest_top_hartree, numbers.free_kcal_mol
    beta_records = []
    for c in analysis.classes:
        b = c.beta_class
        beta_records.append(BetaHydrogenRecord(
            class_id=b.class_id, beta_carbon_index=b.beta_carbon_index, hydrogen_indices=b.hydrogen_indices,
            representative_index=b.representative_index, degeneracy=b.degeneracy,
            anti_penalty_kcal_mol=c.anti.penalty_kcal_mol, syn_penalty_kcal_mol=c.syn.penalty_kcal_mol,
            rule_status=c.status,
            anti=_approach_record(b.anti_product, c.anti, paths.get((b.class_id, "anti")), zero, lowest_top, name,
                                  b.class_id, "anti", free.get((b.class_id, "anti")),
                                  numbers.characters.get((b.class_id, "anti"))),
            syn=_approach_record(b.syn_product, c.syn, paths.get((b.class_id, "syn")), zero, lowest_top, name,
                                 b.class_id, "syn", free.get((b.class_id, "syn")),
                                 numbers.characters.get((b.class_id, "syn"))),
            isotope_effects=_isotope_records(numbers, b.class_id, config.method.temperature_K),
            scans=tuple(_scan_record(s, analysis.global_minimum_hartree, scan_file_name(substrate_cfg.name, b.class_id, k))
                        for k, s in enumerate(c.scans))))
    verdict, computed = numbers.verdict, numbers.computed
    return JobRecord(
        job_id=name, substrate=substrate_cfg.name, base=base_cfg.name, status="ok",
        leaving_group=LeavingGroupRecord(label=lg.label, kind=lg.kind, leaving_atom_index=lg.leaving_atom_index,
                                         c_alpha_index=lg.c_alpha_index, map_number=lg.map_number),
        base_info=BaseRecord(basic_atom_index=base.info.basic_atom_index, bulky=base.info.bulky,
                             bulky_reason=base.info.bulky_reason, smiles=base_cfg.smiles,
                             model=base.relaxed.record.model or "bare", model_reason=base.relaxed.record.model_reason),
        global_minimum_hartree=analysis.global_minimum_hartree,
        conformers=tuple(ConformerRecord(conformer_id=c.conformer_id, energy_hartree=c.energy_hartree,
                                         relative_energy_kcal_mol=round((c.energy_hartree - lowest) * KCAL_MOL_PER_HARTREE, 3),
                                         source=c.source, ring_shapes=c.ring_shapes) for c in analysis.ensemble.conformers),
        conformer_file=conformer_file_name(substrate_cfg.name),
        warnings=analysis.substrate.warnings + analysis.ensemble.failures + numbers.notes,
        beta_hydrogens=tuple(beta_records),
        products=_product_records(numbers),
        rule=RuleRecord(rule_major=verdict.major, hofmann_shift=verdict.hofmann_shift,
                        energy_window_kcal_mol=config.rule.energy_window_kcal_mol, reasoning=verdict.reasoning),
        reference_energy_hartree=zero,
        barrier_kind=(f"{config.method.hamiltonian}: barrier_kcal_mol are electronic energy differences dE; "
                      "barrier_free_energy_kcal_mol are quasi-RRHO free energies dG (1 M)"),
        temperature_K=config.method.temperature_K,
        verdict=VerdictRecord(rule_major=computed.rule_major, computed_major=computed.computed_major,
                              agreement=computed.agreement, within_method_uncertainty=computed.within_method_uncertainty,
                              reason=computed.reason),
        energy_used="free" if numbers.use_free else "electronic",
        substitution=_substitution_record(numbers, paths, name, zero),
    )


def _dft_saddle_record(saddle: DftSaddle | ErrorInfo | None) -> DftSaddleRecord | None:
    """Return the record of a saddle re-optimised at DFT (or of its failure), None when none was."""
    if saddle is None:
        return None
    if isinstance(saddle, ErrorInfo):
        return DftSaddleRecord(status="failed", reason=saddle.error_message, error_type=saddle.error_type, error=saddle)
    return DftSaddleRecord(status="verified" if saddle.verified else "not verified", energy_hartree=saddle.energy_hartree,
                           reason=saddle.reason, error_type=saddle.error_type, imaginary_cm1=saddle.imaginary_cm1,
                           other_imaginary_cm1=saddle.other_imaginary_cm1, n_gradients=saddle.n_gradients,
                           seconds=saddle.seconds, hessian_seconds=saddle.hessian_seconds,
                           largest_shift_A=saddle.largest_shift_A, gfn2_distances_A=saddle.gfn2_distances_A,
                           dft_distances_A=saddle.dft_distances_A)


def _dft_point_record(point: DftPoint | ErrorInfo | None, approach: ApproachRecord | SubstitutionRecord,
                      saddle: DftSaddle | ErrorInfo | None = None) -> DftPointRecord:
    """Return the record of one DFT single point (or its failure) on the path of ``approach`` (E2 or SN2), with its
    DFT re-optimised saddle if any."""
    saddle_record = _dft_saddle_record(saddle)
    if point is None or isinstance(point, ErrorInfo):
        error = point if isinstance(point, ErrorInfo) else (saddle if isinstance(saddle, ErrorInfo) else None)
        return DftPointRecord(status="failed", geometry=approach.barrier_source, error=error, saddle=saddle_record)
    return DftPointRecord(status="ok", energy_hartree=point.energy_hartree, dispersion_hartree=point.dispersion_hartree,
                          geometry=approach.barrier_source, seconds=point.seconds, scf_cycles=point.scf_cycles,
                          saddle=saddle_record)


def with_dft(record: JobRecord, result: DftJobResult | None, config: RunConfig) -> JobRecord:
    """Return the job record with its DFT tier: barrier_dft_kcal_mol per path, fraction_dft per product, the dft block."""
    if result is None:
        return record

    def approach(a: ApproachRecord, key: tuple[str, str]) -> ApproachRecord:
        point, saddle = result.points.get(key), result.saddles.get(key)
        if point is None and saddle is None:
            return a
        return a.model_copy(update={"barrier_dft_kcal_mol": result.barriers_kcal_mol.get(key),
                                    "dft": _dft_point_record(point, a, saddle)})
    betas = tuple(b.model_copy(update={"anti": approach(b.anti, (b.class_id, "anti")),
                                       "syn": approach(b.syn, (b.class_id, "syn"))}) for b in record.beta_hydrogens)
    products = tuple(p.model_copy(update={"fraction_dft": round(result.fractions[p.smiles], 4)
                                          if p.smiles in result.fractions else None}) for p in record.products)
    substitution = record.substitution
    sn2_point, sn2_saddle = result.points.get(SUBSTITUTION_KEY), result.saddles.get(SUBSTITUTION_KEY)
    if substitution is not None and (sn2_point is not None or sn2_saddle is not None):
        share = result.substitution_fraction
        substitution = substitution.model_copy(update={
            "barrier_dft_kcal_mol": result.barriers_kcal_mol.get(SUBSTITUTION_KEY),
            "dft": _dft_point_record(sn2_point, substitution, sn2_saddle),
            "substitution_fraction_dft": None if share is None else round(share, 4)})
    block = DftJobRecord(status=result.status, message=result.message, level=result.level,
                         program_version=result.program_version, saddles_per_product=config.dft.saddles_per_product,
                         n_single_points=len(result.points), zero_kind=result.zero_kind,
                         reference_energy_hartree=result.reference_energy_hartree,
                         computed_major=max(result.fractions, key=result.fractions.get) if result.fractions else None,
                         seconds=result.seconds, error=result.error, saddles=result.saddles_mode,
                         n_saddles_reoptimised=len(result.saddles),
                         n_saddles_verified=sum(1 for v in result.saddles.values() if isinstance(v, DftSaddle) and v.verified),
                         n_gradients=sum(v.n_gradients for v in result.saddles.values() if isinstance(v, DftSaddle)))
    return record.model_copy(update={"beta_hydrogens": betas, "products": products, "substitution": substitution,
                                     "dft": block})
