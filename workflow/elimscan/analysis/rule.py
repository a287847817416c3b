"""Per beta-H analysis and the geometric rule's verdict (pure functions; the engine is never touched).

Penalties: the lowest energy at which a beta hydrogen sits anti-periplanar (|H-C-C-X| >= anti_min_deg)
or syn-periplanar (<= syn_max_deg) to the leaving group, relative to the global minimum, over every
conformer and scan point seen (kcal/mol). The rule: the major product is the most substituted alkene
reachable through an anti-periplanar hydrogen within the energy window (trans over cis), shifted to the
least substituted one for a bulky base or an onium/fluoride leaving group; a product reachable only
through a syn-periplanar hydrogen is called "syn only", one reachable through neither "blocked".
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

from ase import Atoms
from rdkit import Chem

from elimscan.config import RuleConfig
from elimscan.geometry import classify_dihedral, kabsch_rmsd
from elimscan.chem.alkenes import Alkene
from elimscan.analysis.rulebasis import Candidate, criteria_reason, deciding_criteria, rank_key
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K, KCAL_MOL_PER_HARTREE

#: substitution degrees in increasing order (carbon substituents on the two alkene carbons)
DEGREES = ("unsubstituted", "mono", "di", "tri", "tetra")
#: the method's uncertainty on a barrier (kcal/mol): best barriers of two products closer than this are a close
#: call, and the share ranges move every barrier by this much (common practice for GFN2-xTB barrier differences)
METHOD_UNCERTAINTY_KCAL_MOL = 1.0


@dataclass(frozen=True)
class GeometrySample:
    """A geometry seen for one beta hydrogen: its H-C-C-X dihedral (degrees), energy (hartree), origin."""

    dihedral_deg: float
    energy_hartree: float
    source: str
    ring_shapes: tuple[str, ...] = ()
    atoms: Atoms | None = field(default=None, compare=False, repr=False)


@dataclass(frozen=True)
class Periplanar:
    """The best anti- or syn-periplanar geometry of one hydrogen: penalty (kcal/mol) or None if never reached."""

    kind: str
    penalty_kcal_mol: float | None
    dihedral_deg: float | None
    source: str | None
    ring_shapes: tuple[str, ...] = ()
    atoms: Atoms | None = field(default=None, compare=False, repr=False)


@dataclass(frozen=True)
class ClassFacts:
    """What the rule needs about one beta-H class: its id, anti and syn products and penalties."""

    class_id: str
    anti_product: Alkene
    syn_product: Alkene
    anti: Periplanar
    syn: Periplanar


@dataclass(frozen=True)
class ProductCall:
    """The rule's call on one alkene: 'major', 'minor', 'syn only' or 'blocked', the classes giving it, and why."""

    smiles: str
    substitution: str
    call: str
    via_classes: tuple[str, ...]
    reason: str


@dataclass(frozen=True)
class RuleVerdict:
    """The rule's verdict for one substrate with one base: product calls, the major product and reasoning."""

    products: tuple[ProductCall, ...]
    major: str | None
    hofmann_shift: bool
    reasoning: tuple[str, ...]


def best_periplanar(samples: Sequence[GeometrySample], global_min_hartree: float, kind: str, rule: RuleConfig) -> Periplanar:
    """Return the lowest-energy sample in the anti or syn window, with its penalty over the global minimum (kcal/mol)."""
    window = [s for s in samples if classify_dihedral(s.dihedral_deg, rule.anti_min_deg, rule.syn_max_deg) == kind]
    if not window:
        return Periplanar(kind, None, None, None)
    best = min(window, key=lambda s: s.energy_hartree)
    penalty = (best.energy_hartree - global_min_hartree) * KCAL_MOL_PER_HARTREE
    return Periplanar(kind, round(penalty, 3), round(best.dihedral_deg, 2), best.source, best.ring_shapes, best.atoms)


def periplanar_starts(samples: Sequence[GeometrySample], global_min_hartree: float, kind: str, rule: RuleConfig,
                      count: int, window_kcal_mol: float, distinct_rmsd_A: float) -> tuple[Periplanar, ...]:
    """Return up to ``count`` distinct backbone geometries in the anti or syn window, lowest first.

    Distinct: heavy-atom RMSD after superposition above ``distinct_rmsd_A`` (Å) from every one kept;
    only geometries within ``window_kcal_mol`` of the lowest one in the window are kept (kcal/mol).
    """
    window = sorted((s for s in samples if s.atoms is not None
                     and classify_dihedral(s.dihedral_deg, rule.anti_min_deg, rule.syn_max_deg) == kind),
                    key=lambda s: s.energy_hartree)
    kept: list[GeometrySample] = []
    for s in window:
        if len(kept) == count or (s.energy_hartree - window[0].energy_hartree) * KCAL_MOL_PER_HARTREE > window_kcal_mol:
            break
        heavy = s.atoms.numbers > 1
        if all(kabsch_rmsd(s.atoms.positions[heavy], k.atoms.positions[heavy]) > distinct_rmsd_A for k in kept):
            kept.append(s)
    return tuple(Periplanar(kind, round((s.energy_hartree - global_min_hartree) * KCAL_MOL_PER_HARTREE, 3),
                            round(s.dihedral_deg, 2), s.source, s.ring_shapes, s.atoms) for s in kept)


def rule_status(anti: Periplanar, syn: Periplanar, rule: RuleConfig) -> str:
    """Return 'anti accessible', 'syn only' or 'blocked' for a class, by the energy window (kcal/mol)."""
    if anti.penalty_kcal_mol is not None and anti.penalty_kcal_mol <= rule.energy_window_kcal_mol:
        return "anti accessible"
    if syn.penalty_kcal_mol is not None and syn.penalty_kcal_mol <= rule.energy_window_kcal_mol:
        return "syn only"
    return "blocked"


def is_trans(smiles: str) -> bool:
    """Return True when the alkene's stereo double bond is E (trans for simple alkenes), False otherwise."""
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return False
    return any(b.GetStereo() in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOTRANS) for b in mol.GetBonds())


def hofmann_shift(bulky_base: bool, leaving_kind: str, leaving_label: str) -> tuple[bool, str]:
    """Return (shift, reason): the rule favours the less substituted alkene for a bulky base or a poor leaving group."""
    if bulky_base:
        return True, "bulky base"
    if leaving_kind == "onium":
        return True, f"onium leaving group ({leaving_label})"
    if leaving_label == "F":
        return True, "fluoride leaving group"
    return False, ""


def class_reason(facts: ClassFacts, status: str) -> str:
    """Return a one-line explanation of a class's status under the rule."""
    def where(p: Periplanar) -> str:
        shapes = f", ring {'/'.join(p.ring_shapes)}" if p.ring_shapes else ""
        return f"{p.penalty_kcal_mol:.1f} kcal/mol ({p.source}, {p.dihedral_deg:.0f}\u00b0{shapes})"

    if status == "anti accessible":
        return f"{facts.class_id}: anti-periplanar at {where(facts.anti)}"
    anti_text = f"anti needs {where(facts.anti)}" if facts.anti.penalty_kcal_mol is not None else "never anti-periplanar in any geometry found"
    if status == "syn only":
        return f"{facts.class_id}: {anti_text}; syn-periplanar at {where(facts.syn)}"
    return f"{facts.class_id}: {anti_text}"


def rule_verdict(classes: Sequence[ClassFacts], rule: RuleConfig, bulky_base: bool, leaving_kind: str,
                 leaving_label: str) -> RuleVerdict:
    """Return the geometric rule's product calls and major product for one substrate and base."""
    shift, shift_reason = hofmann_shift(bulky_base, leaving_kind, leaving_label)
    reasoning: list[str] = []
    anti_reach: dict[str, list[ClassFacts]] = {}
    all_products: dict[str, tuple[str, list[str]]] = {}
    for facts in classes:
        status = rule_status(facts.anti, facts.syn, rule)
        reasoning.append(class_reason(facts, status))
        for product in (facts.anti_product, facts.syn_product):
            if product.possible:
                all_products.setdefault(product.smiles, (product.substitution, []))[1].append(facts.class_id)
        if status == "anti accessible" and facts.anti_product.possible:
            anti_reach.setdefault(facts.anti_product.smiles, []).append(facts)

    if not anti_reach:
        # no hydrogen within the window: E2 is slow, and goes through the cheapest anti geometry there is
        costly = [f for f in classes if f.anti.penalty_kcal_mol is not None and f.anti_product.possible]
        if costly:
            cheapest = min(f.anti.penalty_kcal_mol for f in costly)
            for f in costly:
                if f.anti.penalty_kcal_mol - cheapest <= rule.energy_window_kcal_mol:
                    anti_reach.setdefault(f.anti_product.smiles, []).append(f)
            reasoning.append(f"no beta hydrogen is anti-periplanar within {rule.energy_window_kcal_mol:g} kcal/mol of the "
                             f"global minimum: slow E2 through the cheapest anti geometry ({cheapest:.1f} kcal/mol)")
    major, major_reason = None, ""
    if anti_reach:
        candidates = [Candidate(smiles, DEGREES.index(all_products[smiles][0]), is_trans(smiles),
                                min(f.anti.penalty_kcal_mol for f in anti_reach[smiles])) for smiles in anti_reach]
        major = max(candidates, key=lambda c: rank_key(c, shift)).smiles
        major_reason = criteria_reason(deciding_criteria(major, candidates, len(all_products), shift), shift_reason)
        reasoning.append(f"major {major}: {major_reason}")
    else:
        reasoning.append("no beta hydrogen reaches an anti-periplanar geometry below the scan cap: the rule predicts no E2")

    syn_reach = {f.syn_product.smiles for f in classes if f.syn_product.possible and f.syn.penalty_kcal_mol is not None
                 and f.syn.penalty_kcal_mol <= rule.energy_window_kcal_mol}
    calls = []
    for smiles, (degree, via) in all_products.items():
        if smiles == major:
            call, reason = "major", major_reason
        elif smiles in anti_reach:
            call, reason = "minor", "reachable through an anti-periplanar hydrogen"
        elif smiles in syn_reach:
            call, reason = "syn only", "no anti-periplanar hydrogen within the energy window gives it; a syn-periplanar one does"
        else:
            call, reason = "blocked", "no anti- or syn-periplanar hydrogen within the energy window gives it"
        calls.append(ProductCall(smiles, degree, call, tuple(sorted(set(via))), reason))
    order = {"major": 0, "minor": 1, "syn only": 2, "blocked": 3}
    calls.sort(key=lambda c: (order[c.call], c.smiles))
    return RuleVerdict(tuple(calls), major, shift, tuple(reasoning))


# --- computed product mix (Curtin-Hammett) and the verdicts side by side -----------------------------


@dataclass(frozen=True)
class PathBarrier:
    """One computed path: class, approach, the alkene it gives, its barrier (kcal/mol) and the class degeneracy."""

    class_id: str
    approach: str
    product_smiles: str
    barrier_kcal_mol: float
    degeneracy: int


@dataclass(frozen=True)
class ComputedVerdict:
    """The computed major product beside the rule's, whether they agree, and why not."""

    rule_major: str | None
    computed_major: str | None
    agreement: bool | None
    within_method_uncertainty: bool
    reason: str


def boltzmann_combined(tops_hartree: Sequence[float], temperature_K: float, same_kcal_mol: float = 0.01) -> float:
    """Return -RT ln sum exp(-E_i/RT) over distinct tops (hartree); tops within ``same_kcal_mol`` count once.

    Several paths to one product from different starts act as parallel channels (Curtin-Hammett); two
    starts that reach the same saddle give the same top and are counted once.
    """
    distinct: list[float] = []
    for top in sorted(tops_hartree):
        if not distinct or (top - distinct[-1]) * KCAL_MOL_PER_HARTREE > same_kcal_mol:
            distinct.append(top)
    rt = BOLTZMANN_KCAL_MOL_PER_K * temperature_K / KCAL_MOL_PER_HARTREE
    lowest = distinct[0]
    return lowest - rt * math.log(sum(math.exp(-(t - lowest) / rt) for t in distinct))


def product_fractions(paths: Sequence[PathBarrier], temperature_K: float,
                      shifts_kcal_mol: dict[int, float] | None = None) -> dict[str, float]:
    """Return product fractions from Boltzmann factors g exp(-dE/RT) of every path, summed per alkene.

    Each path's weight is multiplied by its class degeneracy (symmetry counted once, here only).
    ``shifts_kcal_mol`` adds a shift to path i's barrier (used for the uncertainty ranges).
    """
    if not paths:
        return {}
    rt = BOLTZMANN_KCAL_MOL_PER_K * temperature_K
    shifts = shifts_kcal_mol or {}
    barriers = [p.barrier_kcal_mol + shifts.get(i, 0.0) for i, p in enumerate(paths)]
    lowest = min(barriers)
    weights: dict[str, float] = {}
    for path, barrier in zip(paths, barriers):
        weights[path.product_smiles] = weights.get(path.product_smiles, 0.0) + path.degeneracy * math.exp(-(barrier - lowest) / rt)
    total = sum(weights.values())
    return {smiles: w / total for smiles, w in weights.items()}


def summed_barrier_kcal_mol(barriers: Sequence[tuple[float, int]], temperature_K: float) -> float:
    """Return the effective barrier (kcal/mol) of parallel paths given as (barrier kcal/mol, degeneracy): the
    Boltzmann sum, -RT ln sum(n exp(-barrier / RT)), computed from the lowest so that nothing underflows."""
    rt = BOLTZMANN_KCAL_MOL_PER_K * temperature_K
    lowest = min(b for b, _ in barriers)
    return lowest - rt * math.log(sum(n * math.exp(-(b - lowest) / rt) for b, n in barriers))


def product_barriers_kcal_mol(paths: Sequence[PathBarrier], temperature_K: float) -> dict[str, float]:
    """Return each product's effective barrier (kcal/mol): -RT ln Σ g exp(-dE/RT) over its paths (g: degeneracy).

    The same weights as ``product_fractions``: a share is exp(-G_p/RT) over the sum of every product's.
    """
    by_product: dict[str, list[tuple[float, int]]] = {}
    for path in paths:
        by_product.setdefault(path.product_smiles, []).append((path.barrier_kcal_mol, path.degeneracy))
    return {smiles: summed_barrier_kcal_mol(values, temperature_K) for smiles, values in by_product.items()}


def fraction_ranges(paths: Sequence[PathBarrier], temperature_K: float,
                    delta_kcal_mol: float = METHOD_UNCERTAINTY_KCAL_MOL
                    ) -> dict[str, tuple[float, float]]:
    """Return each product's (lowest, highest) fraction when every barrier may move by +-delta (kcal/mol)."""
    ranges = {}
    for smiles in {p.product_smiles for p in paths}:
        favour = {i: (-delta_kcal_mol if p.product_smiles == smiles else delta_kcal_mol) for i, p in enumerate(paths)}
        disfavour = {i: -v for i, v in favour.items()}
        ranges[smiles] = (product_fractions(paths, temperature_K, disfavour)[smiles],
                          product_fractions(paths, temperature_K, favour)[smiles])
    return ranges


def compare_verdicts(rule_major: str | None, fractions: dict[str, float], paths: Sequence[PathBarrier],
                     close_kcal_mol: float = METHOD_UNCERTAINTY_KCAL_MOL) -> ComputedVerdict:
    """Return the computed major product beside the rule's, the agreement flag and a one-line reason.

    Different products whose best barriers lie within ``close_kcal_mol`` are a close call: within the
    method's uncertainty.
    """
    if not fractions:
        return ComputedVerdict(rule_major, None, None, False, "no barrier could be computed")
    computed = max(fractions, key=fractions.get)
    best = {}
    for p in paths:
        if p.product_smiles not in best or p.barrier_kcal_mol < best[p.product_smiles].barrier_kcal_mol:
            best[p.product_smiles] = p
    top = best[computed]
    rivals = [b for s, b in best.items() if s != computed]
    runner = min(rivals, key=lambda b: abs(b.barrier_kcal_mol - top.barrier_kcal_mol)) if rivals else None
    close = runner is not None and abs(runner.barrier_kcal_mol - top.barrier_kcal_mol) < close_kcal_mol
    if rule_major is None:
        return ComputedVerdict(None, computed, None, close, f"the rule names no major product; computed {computed} "
                               f"({fractions[computed]:.0%}) via {top.class_id} {top.approach}")
    agreement = computed == rule_major
    if agreement:
        reason = f"both: {computed}, computed {fractions[computed]:.0%} via {top.class_id} {top.approach} " \
                 f"(dE {top.barrier_kcal_mol:.1f} kcal/mol)"
    else:
        rule_path = best.get(rule_major)
        gap = f"{rule_path.barrier_kcal_mol - top.barrier_kcal_mol:.1f} kcal/mol below the rule's best path " \
              f"({rule_path.class_id} {rule_path.approach})" if rule_path else "the rule's product has no computed path"
        reason = f"computed: {top.approach} path of {top.class_id} to {computed} lies {gap}"
    if close:
        reason += f"; within method uncertainty (best path to {runner.product_smiles}: dE {runner.barrier_kcal_mol:.1f} " \
                  f"vs {top.barrier_kcal_mol:.1f} kcal/mol)"
    return ComputedVerdict(rule_major, computed, agreement, close, reason)


@dataclass(frozen=True)
class HammettFit:
    """Hammett line log10(k_X / k_ref) = rho sigma + c, from barriers (kcal/mol) at one temperature (K)."""

    rho: float
    intercept: float
    r_squared: float | None  # None when every barrier is the same (r^2 = 0/0)
    log_k_ratios: tuple[float, ...]


def hammett_fit(sigmas: Sequence[float], barriers_kcal_mol: Sequence[float], temperature_K: float,
                reference_index: int = 0) -> HammettFit:
    """Return rho, intercept and r^2 of log10(k_X/k_ref) = -(dE_X - dE_ref) / (RT ln 10) against sigma.

    r^2 is None when every barrier is the same (a flat line explains nothing, and 0/0 is no fit quality).
    """
    if len(sigmas) != len(barriers_kcal_mol) or len(sigmas) < 3:
        raise ValueError("a Hammett fit needs at least three substituents with a sigma and a barrier each")
    if len(set(sigmas)) < 2:
        raise ValueError(f"a Hammett fit needs two different sigma values; all {len(sigmas)} are {sigmas[0]:+.2f}")
    rt_ln10 = BOLTZMANN_KCAL_MOL_PER_K * temperature_K * math.log(10.0)
    reference = barriers_kcal_mol[reference_index]
    y = [-(b - reference) / rt_ln10 for b in barriers_kcal_mol]
    x = list(sigmas)
    n = len(x)
    mean_x, mean_y = sum(x) / n, sum(y) / n
    sxx = sum((xi - mean_x) ** 2 for xi in x)
    sxy = sum((xi - mean_x) * (yi - mean_y) for xi, yi in zip(x, y))
    syy = sum((yi - mean_y) ** 2 for yi in y)
    rho = sxy / sxx
    r2 = (sxy * sxy) / (sxx * syy) if syy > 0 else None
    return HammettFit(rho, mean_y - rho * mean_x, r2, tuple(y))
