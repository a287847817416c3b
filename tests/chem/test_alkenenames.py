"""Plain-words names of alkenes (chem/alkenenames.py) against known names and RDKit's own stereo perception.

The names are the IUPAC names of common alkenes as they are usually written (common practice; e.g. "(E)-but-2-ene"
written "(E)-2-butene"). The substitution patterns (mono-, 1,1-, 1,2-di-, tri-, tetrasubstituted) are the usual
textbook classes of Zaitsev's rule (common practice).
"""

from __future__ import annotations

import pytest
from rdkit import Chem

from elimscan.chem.alkenenames import KNOWN_ALKENES, alkene_description

KNOWN = [
    ("C=C", "ethene, unsubstituted"),
    ("CC=C", "propene, monosubstituted"),
    ("CCC=C", "1-butene, monosubstituted"),
    ("C/C=C/C", "(E)-2-butene, 1,2-disubstituted"),
    (r"C/C=C\C", "(Z)-2-butene, 1,2-disubstituted"),
    ("CC(C)=C", "2-methylpropene, 1,1-disubstituted"),
    ("CC/C=C/C", "(E)-2-pentene, 1,2-disubstituted"),
    ("CC=C(C)C", "2-methyl-2-butene, trisubstituted"),
    ("CC(C)=C(C)C", "2,3-dimethyl-2-butene, tetrasubstituted"),
    ("CC1=CCCCC1", "1-methylcyclohexene, trisubstituted"),
    ("C=Cc1ccccc1", "styrene, monosubstituted"),
]


@pytest.mark.parametrize(("smiles", "expected"), KNOWN)
def test_common_alkenes_get_their_usual_names(smiles, expected):
    assert alkene_description(smiles) == expected


def test_the_name_table_is_keyed_by_canonical_smiles_without_stereo():
    for key in KNOWN_ALKENES:
        assert Chem.MolToSmiles(Chem.MolFromSmiles(key)) == key


@pytest.mark.parametrize("smiles", [r"C/C=C/CC(C)C", r"C/C=C\CC(C)C", r"CC/C(C)=C/CC", r"CC/C(C)=C\CC",
                                    r"ClC/C=C/CC", r"F/C=C/CCC"])
def test_e_z_agrees_with_rdkit_legacy_perception_for_1_2_disubstituted_and_cip_for_the_rest(smiles):
    # independent of our CIP route: RDKit's legacy stereo perception gives STEREOE/STEREOZ (CIP ranks) per bond
    mol = Chem.MolFromSmiles(smiles)
    Chem.AssignStereochemistry(mol, cleanIt=True, force=True)
    legacy = {Chem.BondStereo.STEREOE: "E", Chem.BondStereo.STEREOZ: "Z"}
    found = [legacy[b.GetStereo()] for b in mol.GetBonds() if b.GetStereo() in legacy]
    assert len(found) == 1
    assert alkene_description(smiles).startswith(f"({found[0]})-")


def test_an_unknown_alkene_gets_a_generated_description_with_its_pattern_and_place():
    assert alkene_description(r"C/C=C(/C)CC(C)C") == "(Z)-trisubstituted alkene"
    assert alkene_description("CC1=CCC(C)CC1") == "trisubstituted alkene, in a ring"
    assert alkene_description("C=C1CCCC1") == "1,1-disubstituted alkene, on a ring"
    assert alkene_description("CC=Cc1ccc(C)cc1").endswith("1,2-disubstituted alkene, conjugated with an aromatic ring")


def test_stereocentres_are_named_and_a_non_alkene_says_so():
    # (R)-3-methylcyclohexene: the CIP label of the ring carbon, read by RDKit's CIP labeller
    assert alkene_description("C[C@@H]1CCCC=C1") in ("(R)-3-methylcyclohexene, 1,2-disubstituted",
                                                      "(S)-3-methylcyclohexene, 1,2-disubstituted")
    assert alkene_description("C[C@@H]1CCCC=C1") != alkene_description("C[C@H]1CCCC=C1")
    assert alkene_description("CCOC") == "no C=C double bond"
    assert alkene_description("not a smiles") == ""
    assert alkene_description("C=CC=C").startswith("diene, 2 C=C bonds")
