"""SN2 product SMILES with inversion, checked with RDKit's CIP labeller (an independent algorithm)."""

from __future__ import annotations

from rdkit import Chem
from rdkit.Chem import rdCIPLabeler

from elimscan.chem.perception import perceive_substrate
from elimscan.chem.substitution import substitution_product


def _cip(smiles: str) -> str:
    mol = Chem.MolFromSmiles(smiles)
    rdCIPLabeler.AssignCIPLabels(mol)
    labels = [a.GetProp("_CIPCode") for a in mol.GetAtoms() if a.HasProp("_CIPCode")]
    assert len(labels) == 1
    return labels[0]


def test_walden_inversion_of_2_bromobutane_by_methoxide():
    # SN2 inverts C-alpha (Walden inversion; standard textbooks). (S)-2-bromobutane -> (R)-2-methoxybutane:
    # the priorities keep their order (Br > Et > Me, then OMe > Et > Me), so the descriptor flips.
    substrate = perceive_substrate("C[C@H](Br)CC")
    assert _cip(Chem.MolToSmiles(Chem.RemoveHs(substrate.mol))) == "S"
    product = substitution_product(substrate, "C[O-]", 1)
    assert Chem.MolFromSmiles(product).HasSubstructMatch(Chem.MolFromSmarts("COC(C)CC"))
    assert _cip(product) == "R"
    mirror = substitution_product(perceive_substrate("C[C@@H](Br)CC"), "C[O-]", 1)
    assert _cip(mirror) == "S"


def test_neutral_nucleophile_gives_an_onium_product():
    product = substitution_product(perceive_substrate("CCBr"), "CN(C)C", 1)
    assert Chem.MolToSmiles(Chem.MolFromSmiles(product)) == Chem.MolToSmiles(Chem.MolFromSmiles("CC[N+](C)(C)C"))


def test_inversion_with_a_sulfonate_leaving_group():
    # (S)-2-butyl tosylate + hydroxide -> (R)-2-butanol: OTs > Et > Me and OH > Et > Me (Walden inversion).
    substrate = perceive_substrate("C[C@H](OS(=O)(=O)c1ccc(C)cc1)CC")
    assert substrate.leaving_group.label == "OTs"
    product = substitution_product(substrate, "[OH-]", 0)
    assert Chem.MolToSmiles(Chem.MolFromSmiles(product)) == Chem.MolToSmiles(Chem.MolFromSmiles("C[C@@H](O)CC"))
    assert _cip(product) == "R"
