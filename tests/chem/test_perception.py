"""Tests of elimscan.chem.perception against outside references.

Every expected value names its source beside it: a publication (authors, journal, year),
"common practice" for a rule of thumb with no single source, or "from memory" where the
reference could not be checked. Stereo descriptors of inputs and products are checked
with RDKit's new CIP labeller (rdCIPLabeler, an implementation of the 2020 IUPAC rules
by Hanson et al., J. Chem. Inf. Model. 2018), which elimscan itself does not use.
"""

from __future__ import annotations

from functools import cache

import numpy as np
import pytest
from rdkit import Chem
from rdkit.Chem import rdCIPLabeler, rdDistGeom, rdMolTransforms

from elimscan.errors import InputError, StructureError
from elimscan.chem.betahydrogens import BetaHydrogenClass, zaitsev_ranks
from elimscan.chem.leavinggroups import find_leaving_groups
from elimscan.chem.perception import StereoWarning, Substrate, perceive_substrate

# --------------------------------------------------------------------------- helpers


@cache
def perceived(smiles: str) -> Substrate:
    """Return the perceived substrate, computed once per test session."""
    return perceive_substrate(smiles)


def canonical(smiles: str, isomeric: bool = True) -> str:
    """Return RDKit's canonical SMILES of a hand-written structure."""
    return Chem.MolToSmiles(Chem.MolFromSmiles(smiles), isomericSmiles=isomeric)


def double_bond_label(smiles: str) -> str:
    """Return the CIP E/Z label of the only stereo double bond of a SMILES (new CIP labeller)."""
    mol = Chem.MolFromSmiles(smiles)
    rdCIPLabeler.AssignCIPLabels(mol)
    labels = [b.GetProp("_CIPCode") for b in mol.GetBonds() if b.HasProp("_CIPCode")]
    assert len(labels) == 1, (smiles, labels)
    return labels[0]


def centre_labels(smiles: str) -> dict[int, str]:
    """Return {atom index: R/S} from the new CIP labeller."""
    mol = Chem.MolFromSmiles(smiles)
    rdCIPLabeler.AssignCIPLabels(mol)
    return {a.GetIdx(): a.GetProp("_CIPCode") for a in mol.GetAtoms() if a.HasProp("_CIPCode")}


def prochiral_label(sub: Substrate, h_index: int) -> str:
    """Return pro-R/pro-S of a hydrogen: the CIP label its carbon gets when that H becomes D."""
    mol = Chem.Mol(sub.mol)
    mol.GetAtomWithIdx(h_index).SetIsotope(2)
    Chem.AssignStereochemistryFrom3D(mol)
    rdCIPLabeler.AssignCIPLabels(mol)
    carbon = mol.GetAtomWithIdx(h_index).GetNeighbors()[0]
    return carbon.GetProp("_CIPCode")


def by_beta_carbon(sub: Substrate, index: int) -> list[BetaHydrogenClass]:
    """Return the classes whose representative hydrogen sits on the given carbon."""
    return [c for c in sub.beta_classes if c.beta_carbon_index == index]


def hydrogens_on(mol: Chem.Mol, index: int) -> list[int]:
    """Return the indices of the hydrogens bonded to an atom."""
    return [n.GetIdx() for n in mol.GetAtomWithIdx(index).GetNeighbors() if n.GetAtomicNum() == 1]


def parent(sub: Substrate, h_index: int) -> int:
    """Return the index of the heavy atom a hydrogen is bonded to."""
    return sub.mol.GetAtomWithIdx(h_index).GetNeighbors()[0].GetIdx()


# --------------------------------------------------------------------------- beta-H classes


def test_2_bromobutane_has_methyl_class_and_two_diastereotopic_c3_classes():
    # (R)-2-bromobutane; checked to be R by the new CIP labeller below.
    smiles = "C[C@@H](Br)CC"
    assert centre_labels(smiles) == {1: "R"}
    sub = perceived(smiles)
    assert len(sub.beta_classes) == 3
    methyl = by_beta_carbon(sub, 0)
    # Three hydrogens of a freely rotating CH3 are equivalent (common practice).
    assert [c.degeneracy for c in methyl] == [3]
    assert canonical(methyl[0].anti_product.smiles) == canonical("C=CCC")  # 1-butene
    c3 = by_beta_carbon(sub, 3)
    assert [c.degeneracy for c in c3] == [1, 1]
    # The two C3 hydrogens are diastereotopic: one gives (E)-, the other (Z)-2-butene by
    # anti elimination (stereospecific anti E2; common practice, standard textbooks).
    assert sorted(double_bond_label(c.anti_product.smiles) for c in c3) == ["E", "Z"]


def test_2_bromobutane_anti_product_matches_the_anti_periplanar_rule():
    # Textbook rule (common practice): in the H/Br anti-periplanar conformer, the two
    # methyls end up trans in the alkene if they are anti (dihedral near 180 deg) there.
    # Checked here on the substrate's own 3D structure with plain RDKit geometry.
    sub = perceived("C[C@@H](Br)CC")
    conformer_mol = Chem.Mol(sub.mol)
    conf = conformer_mol.GetConformer()
    for cls in by_beta_carbon(sub, 3):
        rdMolTransforms.SetDihedralDeg(conf, cls.representative_index, 3, 1, 2, 180.0)
        methyls = rdMolTransforms.GetDihedralDeg(conf, 4, 3, 1, 0)
        expected = "E" if abs(methyls) > 90 else "Z"
        assert double_bond_label(cls.anti_product.smiles) == expected
        # Syn elimination from the same hydrogen gives the other isomer.
        assert double_bond_label(cls.syn_product.smiles) == ("Z" if expected == "E" else "E")


def test_2_chloropropane_has_one_class_of_six():
    # Six equivalent methyl hydrogens (common practice / molecular symmetry).
    sub = perceived("CC(C)Cl")
    assert [c.degeneracy for c in sub.beta_classes] == [6]
    assert canonical(sub.beta_classes[0].anti_product.smiles) == canonical("C=CC")  # propene


def test_1_bromopropane_enantiotopic_hydrogens_are_one_class():
    # Enantiotopic hydrogens react alike with an achiral base (Mislow & Raban,
    # Top. Stereochem. 1967; from memory).
    sub = perceived("CCCBr")
    assert [c.degeneracy for c in sub.beta_classes] == [2]


def test_3_bromopentane_pairs_mirror_related_hydrogens_not_geminal_ones():
    sub = perceived("CCC(Br)CC")
    classes = sub.beta_classes
    assert [c.degeneracy for c in classes] == [2, 2]
    for cls in classes:
        carbons = sorted(parent(sub, h) for h in cls.hydrogen_indices)
        assert carbons == [1, 4]  # one H on C2 and one on C4 (IUPAC numbering), not geminal
        # The partners are mirror images: pro-R on one carbon with pro-S on the other
        # (Mislow & Raban, Top. Stereochem. 1967, from memory; labels from rdCIPLabeler).
        assert sorted(prochiral_label(sub, h) for h in cls.hydrogen_indices) == ["R", "S"]
    # The two classes give (E)- and (Z)-2-pentene by anti elimination (common practice).
    assert {canonical(c.anti_product.smiles, isomeric=False) for c in classes} == {
        canonical("CC=CCC")
    }
    assert sorted(double_bond_label(c.anti_product.smiles) for c in classes) == ["E", "Z"]


# --------------------------------------------------------------------------- stereospecific E2

# Anti E2 of the 2-bromo-3-phenylbutane diastereomers gives opposite 2-phenyl-2-butenes:
# (2S,3R) -> (Z), (2R,3R) -> (E) (Cram and co-workers, J. Am. Chem. Soc., 1950s work on
# 3-phenyl-2-butyl systems; from memory).
CRAM_CASES = [
    ("C[C@H](Br)[C@H](C)c1ccccc1", {1: "S", 3: "R"}, "Z"),
    ("C[C@@H](Br)[C@H](C)c1ccccc1", {1: "R", 3: "R"}, "E"),
]


@pytest.mark.parametrize(("smiles", "descriptors", "anti_label"), CRAM_CASES)
def test_2_bromo_3_phenylbutane_anti_elimination_is_stereospecific(smiles, descriptors, anti_label):
    assert centre_labels(smiles) == descriptors  # the input is the stated diastereomer
    sub = perceived(smiles)
    (c3,) = by_beta_carbon(sub, 3)
    assert canonical(c3.anti_product.smiles, isomeric=False) == canonical("CC=C(C)c1ccccc1")
    assert double_bond_label(c3.anti_product.smiles) == anti_label
    syn_label = "E" if anti_label == "Z" else "Z"
    assert double_bond_label(c3.syn_product.smiles) == syn_label
    assert c3.anti_product.substitution == "tri"
    assert c3.anti_product.conjugated  # styrene-type alkene (common practice)


# --------------------------------------------------------------------------- rings


def faces(mol: Chem.Mol, ring: list[int], pairs: list[tuple[int, int, int]]) -> list[float]:
    """Return, per (ring atom, substituent, its geminal H), which face the substituent is on."""
    pos = mol.GetConformer().GetPositions()
    centred = pos[ring] - pos[ring].mean(axis=0)
    normal = np.linalg.svd(centred)[2][2]
    return [
        float(np.sign(np.dot(pos[sub] - pos[atom], normal) - np.dot(pos[h] - pos[atom], normal)))
        for atom, sub, h in pairs
    ]


TRANS_2_METHYLCYCLOHEXYL_CHLORIDE = "C[C@@H]1CCCC[C@H]1Cl"


def test_trans_2_methylcyclohexyl_chloride_smiles_is_trans():
    # Independent check of the input: embed it and see the CH3 and Cl on opposite faces.
    mol = Chem.AddHs(Chem.MolFromSmiles(TRANS_2_METHYLCYCLOHEXYL_CHLORIDE))
    params = rdDistGeom.ETKDGv3()
    params.randomSeed = 7
    assert rdDistGeom.EmbedMolecule(mol, params) == 0
    (h1,) = hydrogens_on(mol, 1)
    (h6,) = hydrogens_on(mol, 6)
    side_me, side_cl = faces(mol, [1, 2, 3, 4, 5, 6], [(1, 0, h1), (6, 7, h6)])
    assert side_me == -side_cl != 0


def test_trans_2_methylcyclohexyl_chloride_products():
    sub = perceived(TRANS_2_METHYLCYCLOHEXYL_CHLORIDE)
    ranks = zaitsev_ranks(sub.beta_classes)
    assert {c.beta_carbon_index for c in sub.beta_classes} == {1, 5}  # ring CH(CH3) and ring CH2
    (ch,) = by_beta_carbon(sub, 1)
    ch2 = by_beta_carbon(sub, 5)
    assert len(ch2) == 2  # cis and trans hydrogens of the CH2 are diastereotopic
    # Products: 1-methylcyclohexene (tri, Zaitsev) and 3-methylcyclohexene (di, Hofmann)
    # (Hueckel's work on cyclic cis/trans isomers; standard textbooks; from memory).
    assert canonical(ch.anti_product.smiles) == canonical("CC1=CCCCC1")
    assert (ch.anti_product.substitution, ch.anti_product.ring_position) == ("tri", "endocyclic")
    assert ranks[ch.class_id] == "zaitsev"
    for cls in ch2:
        assert canonical(cls.anti_product.smiles, isomeric=False) == canonical("CC1C=CCCC1")
        assert (cls.anti_product.substitution, cls.anti_product.ring_position) == (
            "di",
            "endocyclic",
        )
        assert ranks[cls.class_id] == "hofmann"
    # Only a hydrogen trans to Cl can be anti-periplanar (trans-diaxial): the ring CH
    # hydrogen is cis to Cl here, one CH2 hydrogen is trans. This is why the trans isomer
    # (like menthyl chloride) gives the less substituted alkene by E2 (Hughes, Ingold et al.,
    # J. Chem. Soc. 1948; from memory). Anti-periplanar = 180 +- 30 deg (Klyne & Prelog,
    # Experientia 1960).
    assert abs(ch.anti_product.dihedral_deg) < 150
    assert "not reachable" in ch.anti_product.note
    assert sorted(abs(c.anti_product.dihedral_deg) >= 150 for c in ch2) == [False, True]


@pytest.mark.parametrize("seed", [1, 2, 20261202])
def test_cyclohexyl_chloride_anti_elimination_needs_the_trans_hydrogen(seed):
    # E2 on cyclohexanes needs H and X trans-diaxial: only a beta hydrogen on the face
    # opposite to Cl can be anti-periplanar, in the chair with axial Cl (Barton, Experientia
    # 1950; standard textbooks; from memory). Which face each H is on is measured here on
    # the substrate's own 3D structure with plain geometry. Several seeds, because the
    # first embedded chair may have Cl equatorial or axial; the answer must not depend on it.
    sub = perceive_substrate("ClC1CCCCC1", seed=seed)
    classes = sub.beta_classes
    assert sorted(c.degeneracy for c in classes) == [2, 2]
    (h_alpha,) = hydrogens_on(sub.mol, 1)
    ring = [1, 2, 3, 4, 5, 6]
    for cls in classes:
        rep = cls.representative_index
        carbon = parent(sub, rep)
        (geminal,) = [h for h in hydrogens_on(sub.mol, carbon) if h != rep]
        side_h, side_cl = faces(sub.mol, ring, [(carbon, rep, geminal), (1, 0, h_alpha)])
        trans = side_h == -side_cl
        assert (abs(cls.anti_product.dihedral_deg) >= 150) is trans
        assert canonical(cls.anti_product.smiles) == canonical("C1=CCCCC1")


def test_exocyclic_and_endocyclic_products_of_1_bromo_1_methylcyclohexane():
    # Methylenecyclohexane (exocyclic, di) and 1-methylcyclohexene (endocyclic, tri)
    # (common practice, standard textbooks).
    sub = perceived("CC1(Br)CCCCC1")
    ranks = zaitsev_ranks(sub.beta_classes)
    found = {
        canonical(c.anti_product.smiles): (c.anti_product, ranks[c.class_id])
        for c in sub.beta_classes
    }
    exo, exo_rank = found[canonical("C=C1CCCCC1")]
    endo, endo_rank = found[canonical("CC1=CCCCC1")]
    assert (exo.ring_position, exo.substitution, exo_rank) == ("exocyclic", "di", "hofmann")
    assert (endo.ring_position, endo.substitution, endo_rank) == ("endocyclic", "tri", "zaitsev")


# --------------------------------------------------------------------------- Zaitsev / Hofmann


def test_2_bromo_2_methylbutane_zaitsev_and_hofmann_products():
    # 2-methyl-2-butene (trisubstituted, Zaitsev) and 2-methyl-1-butene (disubstituted,
    # Hofmann) (Zaitsev's rule, common practice).
    sub = perceived("CCC(C)(C)Br")
    ranks = zaitsev_ranks(sub.beta_classes)
    result = {
        canonical(c.anti_product.smiles): (
            c.anti_product.substitution,
            ranks[c.class_id],
            c.degeneracy,
        )
        for c in sub.beta_classes
    }
    assert result == {
        canonical("CC=C(C)C"): ("tri", "zaitsev", 2),
        canonical("C=C(C)CC"): ("di", "hofmann", 6),
    }


def test_conjugation_with_a_phenyl_ring():
    # Elimination towards the ring gives 1-phenylpropene (conjugated), away from it
    # allylbenzene (not conjugated) (common practice).
    sub = perceived("C[C@@H](Br)Cc1ccccc1")
    flags = {
        canonical(c.anti_product.smiles, isomeric=False): c.anti_product.conjugated
        for c in sub.beta_classes
    }
    assert flags == {canonical("CC=Cc1ccccc1"): True, canonical("C=CCc1ccccc1"): False}


# --------------------------------------------------------------------------- Bredt's rule


def test_bridgehead_alkene_of_norbornane_is_impossible():
    # Bicyclo[2.2.1]hept-1-ene violates Bredt's rule (common practice).
    sub = perceived("BrC12CCC(CC1)C2")
    assert sub.beta_classes
    for cls in sub.beta_classes:
        for product in (cls.anti_product, cls.syn_product):
            assert product.possible is False
            assert "Bredt" in product.note
    assert set(zaitsev_ranks(sub.beta_classes).values()) == {"not possible"}


def test_bridgehead_alkene_of_bicyclo_331_nonane_is_allowed():
    # Bicyclo[3.3.1]non-1-ene (S = 7) is isolable (Wiseman, J. Am. Chem. Soc. 1967;
    # Marshall & Faubl, J. Am. Chem. Soc. 1967; from memory).
    sub = perceived("BrC12CCCC(CCC1)C2")
    assert sub.beta_classes
    assert all(c.anti_product.possible for c in sub.beta_classes)


# --------------------------------------------------------------------------- leaving groups

# Standard abbreviations of leaving groups (common practice).
LABELS = [
    ("CCC(C)Cl", "Cl", "halide", "Cl"),
    ("CCC(C)Br", "Br", "halide", "Br"),
    ("CCC(C)I", "I", "halide", "I"),
    ("CCC(C)F", "F", "halide", "F"),
    ("CCC(C)OS(=O)(=O)c1ccc(C)cc1", "OTs", "sulfonate", "O"),
    ("CCC(C)OS(C)(=O)=O", "OMs", "sulfonate", "O"),
    ("CCC(C)OS(=O)(=O)C(F)(F)F", "OTf", "sulfonate", "O"),
    ("CCC(C)OS(=O)(=O)c1ccc([N+](=O)[O-])cc1", "ONs", "sulfonate", "O"),
    ("CCC(C)OS(=O)(=O)CC", "OSO2R", "sulfonate", "O"),
    ("CCCC[N+](C)(C)C", "NMe3+", "onium", "N"),
    ("CCCC[S+](C)C", "SMe2+", "onium", "S"),
    ("CCCC[OH2+]", "OH2+", "oxonium", "O"),
]


@pytest.mark.parametrize(("smiles", "label", "kind", "element"), LABELS)
def test_leaving_group_labels(smiles, label, kind, element):
    mol = Chem.AddHs(Chem.MolFromSmiles(smiles))
    (lg,) = find_leaving_groups(mol)
    assert (lg.label, lg.kind) == (label, kind)
    assert mol.GetAtomWithIdx(lg.leaving_atom_index).GetSymbol() == element
    assert mol.GetBondBetweenAtoms(lg.leaving_atom_index, lg.c_alpha_index) is not None
    # The leaving group's atoms all leave together; C-alpha stays (common practice).
    assert lg.leaving_atom_index in lg.group_atom_indices
    assert lg.c_alpha_index not in lg.group_atom_indices


def test_onium_with_other_alkyl_groups_is_labelled_nr3():
    # Butyl(ethyl)dimethylammonium: either alkyl group can leave; both are NR3+ (common practice).
    mol = Chem.AddHs(Chem.MolFromSmiles("CCCC[N+](C)(C)CC"))
    assert {lg.label for lg in find_leaving_groups(mol)} == {"NR3+"}


def test_formal_charge_of_an_ammonium_substrate():
    # Trimethyl(butyl)ammonium carries one positive charge (common practice).
    assert perceived("CCCC[N+](C)(C)C").formal_charge == 1
    assert perceived("CCCBr").formal_charge == 0


def test_two_leaving_groups_without_map_is_an_error():
    with pytest.raises(StructureError) as err:
        perceive_substrate("ClCCC[C@H](C)Br")
    message = str(err.value)
    assert "Cl (leaving Cl atom 1" in message
    assert "Br (leaving Br atom 7" in message


def test_atom_map_picks_the_leaving_group():
    sub = perceive_substrate("ClCCC[C@H](C)[Br:2]")
    assert (sub.leaving_group.label, sub.leaving_group.map_number) == ("Br", 2)
    assert sub.leaving_group.leaving_atom_index == 6
    sub = perceive_substrate("[Cl:1]CCC[C@H](C)Br")
    assert (sub.leaving_group.label, sub.leaving_group.leaving_atom_index) == ("Cl", 0)


def test_atom_map_on_a_carbon_is_an_error():
    with pytest.raises(StructureError, match="C atom 3"):
        perceive_substrate("ClC[CH2:3]C[C@H](C)Br")


# --------------------------------------------------------------------------- input errors


def test_unparsable_smiles_is_named():
    with pytest.raises(StructureError, match="CC\\(Br"):
        perceive_substrate("CC(Br")


def test_structure_error_is_an_input_error():
    with pytest.raises(InputError):
        perceive_substrate("CC(Br")


def test_no_leaving_group():
    with pytest.raises(StructureError, match="no leaving group"):
        perceive_substrate("CCCCC")


def test_neopentyl_bromide_has_no_beta_hydrogen():
    # Neopentyl halides have no beta hydrogen (common practice).
    with pytest.raises(StructureError, match="no beta hydrogen") as err:
        perceive_substrate("CC(C)(C)CBr")
    assert "C atom 2 carries no hydrogen" in str(err.value)


def test_bromobenzene_c_alpha_is_not_sp3():
    # Aryl halides do not undergo E2 at the ring carbon (common practice).
    with pytest.raises(StructureError, match="not sp3") as err:
        perceive_substrate("Brc1ccccc1")
    assert "Br atom 1" in str(err.value)


def test_radical_is_rejected():
    with pytest.raises(StructureError, match="unpaired") as err:
        perceive_substrate("CC[CH]CBr")
    assert "C atom 3" in str(err.value)


def test_element_beyond_radon_is_rejected():
    # GFN2-xTB is parametrised for Z = 1-86 (Bannwarth, Ehlert & Grimme,
    # J. Chem. Theory Comput. 2019). RDKit can build oganesson (Z = 118).
    with pytest.raises(StructureError, match="Og"):
        perceive_substrate("[Og]CCBr")


def test_several_molecules_are_rejected():
    with pytest.raises(StructureError, match="separate molecules"):
        perceive_substrate("CCCC[N+](C)(C)C.[I-]")


def test_unspecified_stereo_that_changes_products_is_an_error():
    # Two stereocentres: leaving them open mixes diastereomers, whose anti E2 gives
    # different alkene isomers (stereospecific anti E2, common practice).
    with pytest.raises(StructureError, match="unspecified") as err:
        perceive_substrate("CC(Br)C(C)CC")
    assert "C atom 2" in str(err.value)
    assert "C atom 4" in str(err.value)


def test_unspecified_double_bond_is_an_error():
    with pytest.raises(StructureError, match="E/Z"):
        perceive_substrate("CC=CC(C)(C)Br")


def test_unspecified_lone_stereocentre_only_warns():
    # Enantiomers react alike with an achiral base (common practice).
    with pytest.warns(StereoWarning, match="C atom 2"):
        sub = perceive_substrate("CC(Br)CC")
    assert len(sub.warnings) == 1
    assert [c.degeneracy for c in sub.beta_classes] == [3, 1, 1]
