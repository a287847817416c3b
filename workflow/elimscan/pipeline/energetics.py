"""The numbers of one job computed from its paths: free energies, isotope effects, product mixes and verdicts.

``job_numbers`` is the computing step between a run's outcome and its records: the rule's verdict,
quasi-RRHO free energies of the verified saddles, k_H/k_D per beta-H class, saddle characters, the
Boltzmann-weighted product fractions (and their ranges), the E2/SN2 shares, and the job's warnings.
``assemble`` packs these into the job record without computing anything further. No file I/O here.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

from elimscan.analysis.character import SaddleCharacter, saddle_character
from elimscan.analysis.rule import (ClassFacts, ComputedVerdict, PathBarrier, RuleVerdict, boltzmann_combined,
                                    compare_verdicts, fraction_ranges, product_fractions, rule_verdict)
from elimscan.analysis.thermo import IsotopeEffect
from elimscan.chem.betahydrogens import BetaHydrogenClass
from elimscan.chem.substitution import substitution_product
from elimscan.config import BaseConfig, RunConfig
from elimscan.drivers.freeenergy import isotope_effect, molecule_thermo, saddle_thermo
from elimscan.drivers.paths import PathResult
from elimscan.geometry import distance
from elimscan.pipeline.outcome import SUBSTITUTION_KEY, BaseAnalysis, JobPaths, SubstrateAnalysis
from elimscan.results.flags import BUDGET_STOPPED, NOT_TO_PRODUCTS, no_barrier_reason
from elimscan.results.records import ErrorInfo
from elimscan.units import KCAL_MOL_PER_HARTREE

#: job warning for charged reactants in the dielectric-only continuum (numbers measured in test_engine_xtb.py)
DIELECTRIC_ION_NOTE = ("solvent model 'dielectric' (ddX-CPCM from ε alone) with a charged reactant: against "
                       "ALPB(methanol) it over-solvates small anions by 8-13 kcal/mol and halves a syn-anti gap "
                       "(measured); compare these barriers only with other jobs in the same model")

#: how far (kcal/mol) a scan point may lie below the lowest conformer before the job warns that the conformer
#: search missed a minimum (0.1: well above the optimiser's convergence noise, 0.002 kcal/mol measured in the
#: validation jobs; a reporting choice, not a physical constant)
MISSED_MINIMUM_KCAL_MOL = 0.1


@dataclass(frozen=True)
class IsotopeNumbers:
    """One k_H/k_D of a beta-H class: which hydrogens carry D, on which approach's saddle, and the effect."""

    label: str
    deuterated_indices: tuple[int, ...]
    approach: str
    effect: IsotopeEffect


@dataclass(frozen=True)
class SubstitutionNumbers:
    """The SN2 side of a job: the textbook call, the product, and (with a computed path) its barriers and shares."""

    product_smiles: str
    rule_call: str
    rule_reason: str
    #: dE of the path top above the job's zero (kcal/mol, rounded to 3 decimals as recorded)
    barrier_kcal_mol: float | None = None
    #: dG of a verified saddle (kcal/mol, rounded to 3 decimals as recorded)
    free_energy_kcal_mol: float | None = None
    #: (elimination, substitution) fractions of the E2 + SN2 Boltzmann mix, when both sides have a barrier
    shares: tuple[float, float] | None = None


@dataclass(frozen=True)
class JobNumbers:
    """Every number of one job that its record carries beyond the run's outcome (energies in hartree or kcal/mol)."""

    verdict: RuleVerdict
    #: free substrate (global minimum) + free base, the zero of every dE (hartree)
    zero_hartree: float
    #: the lowest E2 path top of the job (hartree), None without a computed E2 path
    lowest_top_hartree: float | None
    #: True when the product mix uses free energies (analysis.energy == 'free')
    use_free: bool
    #: dG per computed E2 path (kcal/mol, rounded to 3 decimals); None without a verified saddle
    free_kcal_mol: dict[tuple[str, str], float | None]
    #: saddle character per (class, approach) with a verified saddle
    characters: dict[tuple[str, str], SaddleCharacter]
    #: k_H/k_D per beta-H class id
    isotope_effects: dict[str, tuple[IsotopeNumbers, ...]]
    #: Boltzmann-weighted product fractions and their (lowest, highest) under +-1 kcal/mol, by product SMILES
    fractions: dict[str, float]
    ranges: dict[str, tuple[float, float]]
    computed: ComputedVerdict
    substitution: SubstitutionNumbers | None
    #: the job's own warnings (after the substrate's and the conformer search's)
    notes: tuple[str, ...]


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
    """Return dG of a verified saddle above free substrate + free base (kcal/mol), else None.

    A path whose starts were Boltzmann-combined (``paths.combine: boltzmann``) gets the free energies of all its
    starts' verified saddles combined the same way (distinct saddles as parallel channels), so that the free
    barrier is sampled like the electronic one; its own saddle must be verified, as for a single path.
    """
    saddle = path.saddle
    if g_zero is None or not saddle.verified or saddle.hessian_eV_A2 is None:
        return None
    multiplicity = analysis.multiplicity + (base.relaxed.record.multiplicity or 1) - 1
    free = []
    for each in path.start_saddles or (saddle,):
        try:
            free.append(saddle_thermo(each.atoms, each.energy_hartree, each.hessian_eV_A2, temperature_K,
                                      multiplicity).free_energy_hartree)
        except ValueError:
            if each is saddle:
                return None
    if not free:
        return None
    g = boltzmann_combined(free, temperature_K) if len(free) > 1 else free[0]
    return round((g - g_zero) * KCAL_MOL_PER_HARTREE, 3)


def _character(analysis: SubstrateAnalysis, b: BetaHydrogenClass, path) -> SaddleCharacter | None:
    """Return the saddle character of a verified path (bond lengths of the free substrate as reference)."""
    if path is None or isinstance(path, ErrorInfo) or not path.saddle.verified:
        return None
    lg = analysis.substrate.leaving_group
    ref, pos = analysis.ensemble.lowest.atoms.positions, path.saddle.atoms.positions
    h, cb, ca, x = b.representative_index, b.beta_carbon_index, lg.c_alpha_index, lg.leaving_atom_index
    return saddle_character(distance(ref, cb, h), distance(pos, cb, h), distance(ref, ca, x), distance(pos, ca, x))


def _isotope_effects(analysis: SubstrateAnalysis, b: BetaHydrogenClass, paths: JobPaths,
                     temperature_K: float) -> tuple[IsotopeNumbers, ...]:
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
    found = []
    for label, labelled in (("D at the transferring hydrogen", (b.representative_index,)),
                            (f"D at every hydrogen of the beta carbon (CD{len(beta_h)})" if len(beta_h) > 1 else None, beta_h)):
        if label is None:
            continue
        try:
            kie = isotope_effect(analysis.minimum, path.saddle.atoms, path.saddle.hessian_eV_A2, labelled, temperature_K)
        except ValueError:
            continue
        found.append(IsotopeNumbers(label, labelled, approach, kie))
    return tuple(found)


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


def _substitution_numbers(analysis: SubstrateAnalysis, base: BaseAnalysis, base_cfg: BaseConfig, paths: JobPaths,
                          zero: float, g_zero: float | None, e2_barriers: list[PathBarrier], config: RunConfig,
                          use_free: bool) -> SubstitutionNumbers | None:
    """Return the SN2 numbers of a job (None when substitution was not asked for)."""
    if not config.paths.substitution:
        return None
    call, why = textbook_substitution_call(analysis, base.info.bulky)
    product = substitution_product(analysis.substrate, base_cfg.smiles, base.info.basic_atom_index)
    path = paths.get(SUBSTITUTION_KEY)
    if path is None or isinstance(path, ErrorInfo):
        return SubstitutionNumbers(product, call, why)
    barrier = round((path.top_hartree - zero) * KCAL_MOL_PER_HARTREE, 3)
    free = _saddle_free_energy(path, g_zero, base, analysis, config.method.temperature_K)
    mine = free if use_free else barrier
    shares = None
    if mine is not None and e2_barriers and path.counts_as_barrier:
        mix = product_fractions([*e2_barriers, PathBarrier("substitution", "backside", "SN2", mine, 1)],
                                config.method.temperature_K)
        shares = (1.0 - mix["SN2"], mix["SN2"])
    return SubstitutionNumbers(product, call, why, barrier, free, shares)


def _notes(analysis: SubstrateAnalysis, base: BaseAnalysis, config: RunConfig, missing_free: bool,
           no_barrier: Counter[str] | None = None) -> tuple[str, ...]:
    """Return the job's warnings: paths that are no barrier (``no_barrier``: reason -> count), free energies left
    out of the mix, a charged dielectric job, a missed minimum."""
    notes: list[str] = []
    no_barrier = no_barrier or Counter()
    if no_barrier[NOT_TO_PRODUCTS]:
        notes.append(f"{no_barrier[NOT_TO_PRODUCTS]} path(s) do not reach their products (see their flags): their "
                     "tops are not barriers and are left out of every share")
    if no_barrier[BUDGET_STOPPED]:
        notes.append(f"{no_barrier[BUDGET_STOPPED]} path(s) were stopped by their gradient budget "
                     "(paths.gradient_budget_per_atom; see their flags): their tops are unfinished estimates, not "
                     "barriers, and are left out of every share")
    if missing_free:
        notes.append("free-energy product mix: paths without a verified saddle have no dG and are left out")
    if config.method.solvent.model == "dielectric" and (analysis.charge or base.relaxed.record.charge):
        notes.append(DIELECTRIC_ION_NOTE)
    below = (analysis.ensemble.lowest.energy_hartree - analysis.global_minimum_hartree) * KCAL_MOL_PER_HARTREE
    if below > MISSED_MINIMUM_KCAL_MOL:
        notes.append(f"a dihedral scan point lies {below:.2f} kcal/mol below the lowest conformer: the conformer "
                     "search missed a minimum; dE is measured from that point, dG and the isotope effects from the "
                     "lowest conformer (raise conformers.max_relaxations or conformers.base_embeddings)")
    return tuple(notes)


def job_numbers(analysis: SubstrateAnalysis, base: BaseAnalysis, base_cfg: BaseConfig, paths: JobPaths,
                config: RunConfig) -> JobNumbers:
    """Return the computed numbers of one job whose substrate and base succeeded (energies in hartree, kcal/mol)."""
    lg = analysis.substrate.leaving_group
    facts = [ClassFacts(c.beta_class.class_id, c.beta_class.anti_product, c.beta_class.syn_product, c.anti, c.syn)
             for c in analysis.classes]
    verdict = rule_verdict(facts, config.rule, base.info.bulky, lg.kind, lg.label)
    zero = analysis.global_minimum_hartree + base.relaxed.record.energy_hartree
    done = {key: p for key, p in paths.items() if not isinstance(p, ErrorInfo) and key != SUBSTITUTION_KEY}
    # a path that is no barrier (it does not reach its products, or its gradient budget stopped it) decides no
    # share and sets no zero; it stays in its record
    counted = {key: p for key, p in done.items() if p.counts_as_barrier}
    sn2 = paths.get(SUBSTITUTION_KEY)
    computed = [*done.values(), *([sn2] if isinstance(sn2, PathResult) else [])]
    degeneracy = {c.beta_class.class_id: c.beta_class.degeneracy for c in analysis.classes}
    products_of = {(c.beta_class.class_id, a): (c.beta_class.anti_product if a == "anti" else c.beta_class.syn_product).smiles
                   for c in analysis.classes for a in ("anti", "syn")}
    temperature = config.method.temperature_K
    g_zero = _free_zero(analysis, base, temperature)
    free = {key: _saddle_free_energy(p, g_zero, base, analysis, temperature) for key, p in done.items()}
    use_free = config.analysis.energy == "free"
    barriers = [PathBarrier(cid, a, products_of[(cid, a)],
                            free[(cid, a)] if use_free else (p.top_hartree - zero) * KCAL_MOL_PER_HARTREE, degeneracy[cid])
                for (cid, a), p in counted.items() if not use_free or free[(cid, a)] is not None]
    fractions = product_fractions(barriers, temperature)
    characters = {(c.beta_class.class_id, a): found for c in analysis.classes for a in ("anti", "syn")
                  for found in [_character(analysis, c.beta_class, paths.get((c.beta_class.class_id, a)))]
                  if found is not None}
    return JobNumbers(
        verdict=verdict, zero_hartree=zero, lowest_top_hartree=min((p.top_hartree for p in counted.values()), default=None),
        use_free=use_free, free_kcal_mol=free, characters=characters,
        isotope_effects={c.beta_class.class_id: _isotope_effects(analysis, c.beta_class, paths, temperature)
                         for c in analysis.classes},
        fractions=fractions, ranges=fraction_ranges(barriers, temperature),
        computed=compare_verdicts(verdict.major, fractions, barriers),
        substitution=_substitution_numbers(analysis, base, base_cfg, paths, zero, g_zero, barriers, config, use_free),
        notes=_notes(analysis, base, config, use_free and any(v is None for v in free.values()),
                     Counter(no_barrier_reason(p.reaches_products, p.stopped_stage) for p in computed
                             if not p.counts_as_barrier)))
