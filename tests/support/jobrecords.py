"""Job records built in the tests of the headline and the comparison (tests/analysis/test_headline.py).

BOOKKEEPING FIXTURES, NOT CHEMISTRY: the barriers are set by hand to put a verdict on one side of a threshold;
the shares are elimscan's own Curtin-Hammett function of those barriers, as the pipeline computes them.
"""

from __future__ import annotations

from elimscan.analysis.rule import PathBarrier, fraction_ranges, product_fractions
from elimscan.results.records import (ApproachRecord, BaseRecord, BetaHydrogenRecord, JobRecord, LeavingGroupRecord,
                                      ProductRecord, RuleRecord, SubstitutionRecord, VerdictRecord)

T = 298.15


def approach(product: str, substitution: str, barrier: float | None = None, reaches: bool = True,
             penalty: float | None = 0.0, free: float | None = None) -> ApproachRecord:
    """Return an approach to ``product``; with a barrier (kcal/mol) its path is computed (reaching or not)."""
    path = {} if barrier is None else dict(path_status="ok", barrier_kcal_mol=barrier, reaches_products=reaches,
                                           barrier_free_energy_kcal_mol=free,
                                           barrier_source="verified saddle" if reaches else "relaxed-path maximum",
                                           saddle_verified=reaches)
    return ApproachRecord(product_smiles=product, product_substitution=substitution, product_conjugated=False,
                          product_ring_position="acyclic", product_possible=True, penalty_kcal_mol=penalty,
                          dihedral_deg=None if penalty is None else 180.0, geometry_source="conformer", ring_shapes=(),
                          **path)


def beta(class_id: str, degeneracy: int, anti: ApproachRecord, syn: ApproachRecord | None = None,
         status: str = "anti accessible") -> BetaHydrogenRecord:
    """Return a beta-H class with its anti and syn approaches (syn: the anti product, not computed)."""
    syn = syn or approach(anti.product_smiles, anti.product_substitution, penalty=1.5)
    return BetaHydrogenRecord(class_id=class_id, beta_carbon_index=0, hydrogen_indices=(1,), representative_index=1,
                              degeneracy=degeneracy, anti_penalty_kcal_mol=anti.penalty_kcal_mol,
                              syn_penalty_kcal_mol=syn.penalty_kcal_mol, rule_status=status, anti=anti, syn=syn,
                              scans=())


def job(betas: list[BetaHydrogenRecord], calls: dict[str, str], rule_major: str | None, substrate: str = "s",
        base: str = "ethoxide", bulky: bool = False, sn2: float | None = None, sn2_reaches: bool = True,
        sn2_product: str = "CCOC", textbook: str = "mixture", energy_used: str = "electronic") -> JobRecord:
    """Return an ok job: shares from the counted paths (as the pipeline computes them), the rule's calls given.

    ``calls``: product SMILES -> 'major', 'minor' or 'forbidden'; ``sn2``: the SN2 barrier (kcal/mol) or None.
    """
    free = energy_used == "free"
    paths = [PathBarrier(b.class_id, name, a.product_smiles,
                         a.barrier_free_energy_kcal_mol if free else a.barrier_kcal_mol, b.degeneracy)
             for b in betas for name, a in (("anti", b.anti), ("syn", b.syn))
             if a.path_status == "ok" and a.reaches_products and (not free or a.barrier_free_energy_kcal_mol is not None)]
    fractions = product_fractions(paths, T)
    ranges = fraction_ranges(paths, T)
    degree = {a.product_smiles: a.product_substitution for b in betas for a in (b.anti, b.syn)}
    products = tuple(ProductRecord(smiles=s, substitution=degree[s], rule_call=call, via_classes=(), reason="",
                                   fraction=fractions.get(s), fraction_range=ranges.get(s)) for s, call in calls.items())
    substitution = None
    if sn2 is not None:
        split = None
        if sn2_reaches and paths:
            mix = product_fractions([*paths, PathBarrier("substitution", "backside", "SN2", sn2, 1)], T)
            split = (1.0 - mix["SN2"], mix["SN2"])
        substitution = SubstitutionRecord(product_smiles=sn2_product, path_status="ok", barrier_kcal_mol=sn2,
                                          reaches_products=sn2_reaches, saddle_verified=sn2_reaches,
                                          elimination_fraction=None if split is None else split[0],
                                          substitution_fraction=None if split is None else split[1],
                                          rule_call=textbook, rule_reason="the textbook's reason")
    computed = max(fractions, key=fractions.get) if fractions else None
    return JobRecord(
        job_id=f"{substrate}__{base}", substrate=substrate, base=base, status="ok",
        leaving_group=LeavingGroupRecord(label="Br", kind="halide", leaving_atom_index=3, c_alpha_index=2),
        base_info=BaseRecord(basic_atom_index=0, bulky=bulky, bulky_reason="tertiary alkoxide" if bulky else "small",
                             smiles="CC[O-]", model="bare"),
        beta_hydrogens=tuple(betas), products=products,
        rule=RuleRecord(rule_major=rule_major, hofmann_shift=bulky, energy_window_kcal_mol=3.0, reasoning=()),
        temperature_K=T, energy_used=energy_used, substitution=substitution,
        verdict=VerdictRecord(rule_major=rule_major, computed_major=computed,
                              agreement=None if computed is None or rule_major is None else computed == rule_major,
                              within_method_uncertainty=False, reason="bookkeeping"))
