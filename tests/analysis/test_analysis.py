"""The geometric rule's arithmetic on hand-made facts (algorithm tier: invented inputs, no outside data)."""

from __future__ import annotations

import pytest

from elimscan.analysis.rule import (ClassFacts, GeometrySample, Periplanar, best_periplanar, is_trans, rule_status,
                               rule_verdict)
from elimscan.config import RuleConfig
from elimscan.chem.alkenes import Alkene
from elimscan.units import KCAL_MOL_PER_HARTREE

RULE = RuleConfig()


def alkene(smiles: str, degree: str, possible: bool = True) -> Alkene:
    return Alkene(smiles, degree, False, "acyclic", possible, "")


def facts(class_id: str, anti_smiles: str, degree: str, anti: float | None, syn: float | None,
          syn_smiles: str | None = None, possible: bool = True) -> ClassFacts:
    return ClassFacts(class_id, alkene(anti_smiles, degree, possible), alkene(syn_smiles or anti_smiles, degree, possible),
                      Periplanar("anti", anti, 180.0 if anti is not None else None, "test"),
                      Periplanar("syn", syn, 0.0 if syn is not None else None, "test"))


def test_best_periplanar_takes_the_lowest_sample_in_the_window():
    e0 = -10.0
    samples = [GeometrySample(179.0, e0 + 2 / KCAL_MOL_PER_HARTREE, "a"), GeometrySample(-151.0, e0 + 1 / KCAL_MOL_PER_HARTREE, "b"),
               GeometrySample(149.0, e0, "c"), GeometrySample(10.0, e0 + 4 / KCAL_MOL_PER_HARTREE, "d")]
    anti = best_periplanar(samples, e0, "anti", RULE)
    assert anti.penalty_kcal_mol == pytest.approx(1.0) and anti.source == "b"
    assert best_periplanar(samples, e0, "syn", RULE).penalty_kcal_mol == pytest.approx(4.0)
    assert best_periplanar(samples[:1], e0, "syn", RULE).penalty_kcal_mol is None


def test_rule_status_windows():
    f = facts("x", "C=C", "mono", 2.9, 0.0)
    assert rule_status(f.anti, f.syn, RULE) == "anti accessible"
    f = facts("x", "C=C", "mono", 3.1, 0.5)
    assert rule_status(f.anti, f.syn, RULE) == "syn only"
    f = facts("x", "C=C", "mono", None, 3.5)
    assert rule_status(f.anti, f.syn, RULE) == "blocked"


def test_zaitsev_trans_before_cis_and_hofmann_shift():
    classes = [facts("C1-H", "C=CCC", "mono", 0.0, 1.0), facts("C3-Ha", "C/C=C/C", "di", 0.2, 3.0),
               facts("C3-Hb", "C/C=C\\C", "di", 0.6, 1.4)]
    small = rule_verdict(classes, RULE, bulky_base=False, leaving_kind="halide", leaving_label="Br")
    assert small.major == "C/C=C/C" and not small.hofmann_shift
    assert {p.smiles: p.call for p in small.products} == {"C/C=C/C": "major", "C/C=C\\C": "minor", "C=CCC": "minor"}
    bulky = rule_verdict(classes, RULE, bulky_base=True, leaving_kind="halide", leaving_label="Br")
    assert bulky.major == "C=CCC" and bulky.hofmann_shift
    onium = rule_verdict(classes, RULE, bulky_base=False, leaving_kind="onium", leaving_label="NMe3+")
    fluoride = rule_verdict(classes, RULE, bulky_base=False, leaving_kind="halide", leaving_label="F")
    assert onium.major == fluoride.major == "C=CCC"


def test_products_reachable_only_syn_are_syn_only_and_neither_blocked():
    classes = [facts("ring-CH", "CC1=CCCCC1", "tri", None, 0.5), facts("ring-CH2", "CC1C=CCCC1", "di", 1.8, 4.0)]
    verdict = rule_verdict(classes, RULE, bulky_base=False, leaving_kind="halide", leaving_label="Cl")
    calls = {p.smiles: p.call for p in verdict.products}
    assert calls == {"CC1C=CCCC1": "major", "CC1=CCCCC1": "syn only"}
    assert any("never anti-periplanar" in line for line in verdict.reasoning)
    beyond = RULE.energy_window_kcal_mol + 3.0  # neither anti nor syn within the window
    classes = [facts("ring-CH", "CC1=CCCCC1", "tri", None, beyond), facts("ring-CH2", "CC1C=CCCC1", "di", 1.8, 4.0)]
    calls = {p.smiles: p.call for p in rule_verdict(classes, RULE, False, "halide", "Cl").products}
    assert calls == {"CC1C=CCCC1": "major", "CC1=CCCCC1": "blocked"}


def test_only_costly_anti_geometries_give_a_slow_e2_through_the_cheapest():
    classes = [facts("a", "CC1=CCCCC1", "tri", None, 6.0), facts("b", "CC1C=CCCC1", "di", 4.7, 9.0)]
    verdict = rule_verdict(classes, RULE, bulky_base=False, leaving_kind="halide", leaving_label="Cl")
    assert verdict.major == "CC1C=CCCC1"
    assert any("slow E2" in line for line in verdict.reasoning)


def test_no_anti_geometry_at_all_gives_no_major():
    verdict = rule_verdict([facts("a", "C=C", "mono", None, 1.0)], RULE, False, "halide", "Cl")
    assert verdict.major is None and verdict.products[0].call == "syn only"


def test_anti_bredt_products_never_count():
    verdict = rule_verdict([facts("a", "C1=C2CCC1CC2", "tri", 0.0, 1.0, possible=False)], RULE, False, "halide", "Br")
    assert verdict.major is None and verdict.products == ()


def test_is_trans_reads_the_double_bond_stereo():
    assert is_trans("C/C=C/C") and not is_trans("C/C=C\\C") and not is_trans("C=CCC")


def test_boltzmann_weights_with_degeneracy():
    # Two equal barriers with degeneracies 3 and 2 give 60/40 (Curtin-Hammett with path degeneracy).
    from elimscan.analysis.rule import PathBarrier, product_fractions

    paths = [PathBarrier("C1-H", "anti", "A", 5.0, 3), PathBarrier("C3-H", "anti", "B", 5.0, 2)]
    fractions = product_fractions(paths, 298.15)
    assert fractions["A"] == pytest.approx(0.6) and fractions["B"] == pytest.approx(0.4)


def test_boltzmann_factor_at_room_temperature():
    # 1.364 kcal/mol is a factor of ten at 298.15 K (RT ln 10; R from ase.units via elimscan.units).
    from elimscan.analysis.rule import PathBarrier, product_fractions

    paths = [PathBarrier("a", "anti", "A", 0.0, 1), PathBarrier("b", "anti", "B", 1.3642, 1)]
    fractions = product_fractions(paths, 298.15)
    assert fractions["A"] / fractions["B"] == pytest.approx(10.0, rel=1e-3)


def test_paths_to_the_same_alkene_add_up_and_ranges_bracket_the_fraction():
    from elimscan.analysis.rule import PathBarrier, fraction_ranges, product_fractions

    paths = [PathBarrier("a", "anti", "A", 5.0, 1), PathBarrier("a", "syn", "B", 5.0, 1),
             PathBarrier("b", "anti", "B", 5.0, 1)]
    fractions = product_fractions(paths, 298.15)
    assert fractions["B"] == pytest.approx(2 / 3)
    ranges = fraction_ranges(paths, 298.15, 1.0)
    for smiles, (low, high) in ranges.items():
        assert low < fractions[smiles] < high


def test_verdicts_side_by_side():
    from elimscan.analysis.rule import PathBarrier, compare_verdicts, product_fractions

    paths = [PathBarrier("C1-H", "anti", "C=CCC", 4.0, 3), PathBarrier("C3-Ha", "anti", "C/C=C/C", 6.5, 1)]
    fractions = product_fractions(paths, 298.15)
    verdict = compare_verdicts("C/C=C/C", fractions, paths)
    assert verdict.computed_major == "C=CCC" and verdict.agreement is False and not verdict.within_method_uncertainty
    assert "2.5 kcal/mol below the rule's best path (C3-Ha anti)" in verdict.reason
    close = [PathBarrier("C1-H", "anti", "C=CCC", 4.0, 1), PathBarrier("C3-Ha", "anti", "C/C=C/C", 4.5, 1)]
    verdict = compare_verdicts("C=CCC", product_fractions(close, 298.15), close)
    assert verdict.agreement and verdict.within_method_uncertainty and "within method uncertainty" in verdict.reason
    # the computed major by share (degeneracy 3) can have a higher best barrier than a rival: still a close call
    mixed = [PathBarrier("C1-H", "anti", "C=CCC", 4.75, 3), PathBarrier("C3-Hb", "anti", "C/C=C\\C", 4.55, 1)]
    verdict = compare_verdicts("C/C=C\\C", product_fractions(mixed, 298.15), mixed)
    assert verdict.computed_major == "C=CCC" and verdict.within_method_uncertainty
    assert "dE 4.5 vs 4.8" in verdict.reason


def test_hammett_fit_recovers_a_known_line():
    # Barriers built from rho = +2.1 exactly (the size DePuy & Bishop, J. Am. Chem. Soc. 1960, 82, 2532 report
    # for ArCH2CH2Br + EtO-, from memory; here only an input) with the gas constant written out, not taken
    # from elimscan: R = 8.314462618 J/(mol K) (CODATA 2018, exact) and 4184 J per thermochemical kcal.
    import math

    from elimscan.analysis.rule import hammett_fit

    sigmas = [-0.27, 0.0, 0.23, 0.54]  # OMe, H, Cl, CF3 (Hansch, Leo & Taft, Chem. Rev. 1991, 91, 165; from memory)
    rt_ln10 = 8.314462618 / 4184.0 * 298.15 * math.log(10)
    barriers = [10.0 - 2.1 * s * rt_ln10 for s in sigmas]
    fit = hammett_fit(sigmas, barriers, 298.15, reference_index=1)
    # 1e-6: elimscan's units come from ASE, whose default is CODATA 2014 (R = 8.3144598): 3.4e-7 relative
    assert fit.rho == pytest.approx(2.1, rel=1e-6) and fit.r_squared == pytest.approx(1.0)
    assert fit.intercept == pytest.approx(0.0, abs=1e-12)
    with pytest.raises(ValueError, match="at least three"):
        hammett_fit([0.0, 0.2], [1.0, 2.0], 298.15)


def test_hammett_fit_of_equal_barriers_has_no_r_squared_and_equal_sigmas_are_refused():
    from elimscan.analysis.rule import hammett_fit
    from elimscan.output.text import r_squared_text

    flat = hammett_fit([-0.27, 0.0, 0.54], [10.0, 10.0, 10.0], 298.15)
    assert flat.rho == 0.0 and flat.r_squared is None  # 0/0: a flat line explains nothing
    assert r_squared_text(flat.r_squared) == "undefined (all barriers equal)"
    with pytest.raises(ValueError, match="two different sigma values"):
        hammett_fit([0.23, 0.23, 0.23], [9.0, 10.0, 11.0], 298.15)


def test_path_starts_are_distinct_anti_geometries_lowest_first():
    """Backbone starts for the paths: RDKit's own conformer RMSD is the independent check of 'distinct'."""
    from rdkit import Chem
    from rdkit.Chem import AllChem, rdMolAlign
    from ase import Atoms

    from elimscan.analysis.rule import periplanar_starts
    from elimscan.geometry import dihedral_deg

    mol = Chem.AddHs(Chem.MolFromSmiles("CCC(Br)CCC"))  # 3-bromohexane: many backbone rotamers
    ids = list(AllChem.EmbedMultipleConfs(mol, numConfs=30, randomSeed=7))
    energies = [e for _, e in AllChem.MMFFOptimizeMoleculeConfs(mol, maxIters=2000)]
    h = next(a.GetIdx() for a in mol.GetAtomWithIdx(1).GetNeighbors() if a.GetAtomicNum() == 1)
    quad = (h, 1, 2, 3)
    numbers = [a.GetAtomicNum() for a in mol.GetAtoms()]
    samples = []
    for cid, e in zip(ids, energies):
        pos = mol.GetConformer(cid).GetPositions()
        samples.append(GeometrySample(dihedral_deg(pos, *quad), e / 627.509 - 1.0, f"c{cid}", (),
                                      Atoms(numbers=numbers, positions=pos)))
    e_min = min(s.energy_hartree for s in samples)
    starts = periplanar_starts(samples, e_min, "anti", RULE, count=4, window_kcal_mol=5.0, distinct_rmsd_A=0.25)
    anti = [s for s in samples if abs(s.dihedral_deg) >= RULE.anti_min_deg]
    assert anti, "the embedding should give some anti geometries"
    assert 2 <= len(starts) <= 4  # several rotamers of the ethyl and propyl arms keep H anti
    assert all(abs(s.dihedral_deg) >= RULE.anti_min_deg for s in starts)
    assert [s.penalty_kcal_mol for s in starts] == sorted(s.penalty_kcal_mol for s in starts)
    assert starts[0].penalty_kcal_mol == pytest.approx(best_periplanar(samples, e_min, "anti", RULE).penalty_kcal_mol)
    heavy = [a.GetIdx() for a in mol.GetAtoms() if a.GetAtomicNum() > 1]
    by_source = {f"c{cid}": cid for cid in ids}
    kept = [by_source[s.source] for s in starts]
    for i, a in enumerate(kept):
        for b in kept[:i]:
            rms = rdMolAlign.AlignMol(Chem.Mol(mol, confId=a), Chem.Mol(mol, confId=b), prbCid=a, refCid=b,
                                      atomMap=[(k, k) for k in heavy])
            assert rms > 0.25
    # a single start asked for is the best periplanar geometry itself
    one = periplanar_starts(samples, e_min, "anti", RULE, count=1, window_kcal_mol=5.0, distinct_rmsd_A=0.25)
    assert len(one) == 1 and one[0].source == starts[0].source


def test_boltzmann_combination_of_parallel_channels():
    """Two equal channels are worth RT ln 2 (statistical mechanics of parallel paths; common practice)."""
    import math

    from elimscan.analysis.rule import boltzmann_combined
    from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K

    rt = BOLTZMANN_KCAL_MOL_PER_K * 298.15
    e = -100.0
    two = boltzmann_combined([e, e + 0.5 / KCAL_MOL_PER_HARTREE], 298.15)
    expected = -rt * math.log(1.0 + math.exp(-0.5 / rt))
    assert (two - e) * KCAL_MOL_PER_HARTREE == pytest.approx(expected, abs=1e-9)
    # the same saddle reached twice (tops equal within 0.01 kcal/mol) counts once
    assert boltzmann_combined([e, e + 0.001 / KCAL_MOL_PER_HARTREE], 298.15) == pytest.approx(e, abs=1e-12)
    # a channel 10 kcal/mol higher changes nothing measurable
    assert (boltzmann_combined([e, e + 10 / KCAL_MOL_PER_HARTREE], 298.15) - e) * KCAL_MOL_PER_HARTREE > -1e-6
