"""Basic atom and bulkiness of bases (RDKit only)."""

from __future__ import annotations

import pytest

from elimscan.chem.bases import describe_base
from elimscan.errors import StructureError


@pytest.mark.parametrize(
    "smiles, basic_symbol, bulky",
    [
        # Bulky classes as standard textbooks list them for the Hofmann shift (common practice):
        ("CC(C)(C)[O-]", "O", True),  # tert-butoxide
        ("CC(C)[N-]C(C)C", "N", True),  # LDA anion
        ("C[Si](C)(C)[N-][Si](C)(C)C", "N", True),  # HMDS anion
        ("Cc1cccc(C)n1", "N", True),  # 2,6-lutidine
        ("CC[O-]", "O", False),  # ethoxide
        ("C[O-]", "O", False),  # methoxide
        ("[OH-]", "O", False),  # hydroxide
        ("CC(C)[O-]", "O", False),  # isopropoxide: secondary, not counted bulky by the rule
        ("c1ccncc1", "N", False),  # pyridine
        ("C1CCC2=NCCCN2CC1", "N", False),  # DBU: the amidine's imine N is the basic atom
    ],
)
def test_basic_atom_and_bulkiness(smiles, basic_symbol, bulky):
    from rdkit import Chem

    info = describe_base(smiles)
    mol = Chem.AddHs(Chem.MolFromSmiles(smiles))
    assert mol.GetAtomWithIdx(info.basic_atom_index).GetSymbol() == basic_symbol
    assert info.bulky is bulky


def test_dbu_basic_atom_is_the_imine_nitrogen():
    from rdkit import Chem

    info = describe_base("C1CCC2=NCCCN2CC1")
    atom = Chem.MolFromSmiles("C1CCC2=NCCCN2CC1").GetAtomWithIdx(info.basic_atom_index)
    assert any(b.GetBondType() == Chem.BondType.DOUBLE for b in atom.GetBonds())


def test_user_flag_overrides_and_errors_name_the_base():
    assert describe_base("CC[O-]", bulky_flag=True).bulky
    assert not describe_base("CC(C)(C)[O-]", bulky_flag=False).bulky
    with pytest.raises(StructureError, match="no basic atom"):
        describe_base("CCCC")
    with pytest.raises(StructureError, match="several anionic atoms"):
        describe_base("[O-]CC[O-]")
    assert describe_base("[O-]CC[O-:1]").basic_atom_index == 3
