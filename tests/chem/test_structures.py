"""SMILES -> checked molecule: every bad structure is refused with a message naming it."""

from __future__ import annotations

import pytest

from elimscan.errors import ExitCode, StructureError
from elimscan.chem.structures import build_molecule, parse_smiles


@pytest.mark.parametrize(
    "smiles, words",
    [
        ("CC(Cl", "cannot parse SMILES 'CC(Cl'"),
        ("C1CC", "cannot parse SMILES"),
        ("[CH2]C(Cl)C", "unpaired electron"),
        ("[Og]", "outside GFN2-xTB's range"),
        ("[U]", "element U (U atom 1) is outside"),
    ],
)
def test_bad_structures_are_named(smiles, words):
    with pytest.raises(StructureError, match=words.replace("(", r"\(").replace(")", r"\)").replace("'", "'")) as info:
        parse_smiles(smiles, "substrate 'x'")
    assert "substrate 'x'" in str(info.value)
    assert info.value.exit_code == ExitCode.CONFIG


def test_charge_must_match_the_structure():
    with pytest.raises(StructureError, match="charge 0 does not match the structure"):
        build_molecule("CC[O-]", seed=1, charge=0)
    assert build_molecule("CC[O-]", seed=1).formal_charge == -1
    assert build_molecule("C[N+](C)(C)C(C)C", seed=1, charge=1).formal_charge == 1


def test_impossible_multiplicity_is_refused():
    with pytest.raises(StructureError, match="multiplicity 2 is impossible"):
        build_molecule("CCCl", seed=1, multiplicity=2)


def test_embedding_is_repeatable_with_a_seed():
    a = build_molecule("CC(Br)CC", seed=11).atoms.positions
    b = build_molecule("CC(Br)CC", seed=11).atoms.positions
    assert (a == b).all()


def test_user_geometry_is_reordered_onto_the_smiles_atoms_and_checked():
    # RDKit's own writers make the SDF/XYZ text (an independent path from our reader).
    from rdkit import Chem
    from rdkit.Chem import AllChem

    from elimscan.geometry import kabsch_rmsd
    from elimscan.chem.structures import atoms_from_geometry

    ours = Chem.AddHs(Chem.MolFromSmiles("C[C@@H](Br)CC"))
    theirs = Chem.AddHs(Chem.MolFromSmiles(Chem.CanonSmiles("C[C@@H](Br)CC")))  # same molecule, other atom order
    AllChem.EmbedMolecule(theirs, randomSeed=1)
    for text, fmt in ((Chem.MolToMolBlock(theirs), "sdf"), (Chem.MolToXYZBlock(theirs), "xyz")):
        atoms = atoms_from_geometry(ours, text, fmt)
        assert atoms.get_chemical_symbols() == [a.GetSymbol() for a in ours.GetAtoms()]
        # same points as the file (only the order changed; the text formats keep 4 decimals)
        assert kabsch_rmsd(sorted(atoms.positions.tolist()), sorted(theirs.GetConformer().GetPositions().tolist())) < 1e-4
    mirror = Chem.AddHs(Chem.MolFromSmiles("C[C@H](Br)CC"))
    AllChem.EmbedMolecule(mirror, randomSeed=1)
    with pytest.raises(StructureError, match="stereochemistry differs"):
        atoms_from_geometry(ours, Chem.MolToXYZBlock(mirror), "xyz")
    other = Chem.AddHs(Chem.MolFromSmiles("CC(Cl)CC"))
    AllChem.EmbedMolecule(other, randomSeed=1)
    with pytest.raises(StructureError, match="must be the same molecule"):
        atoms_from_geometry(ours, Chem.MolToXYZBlock(other), "xyz")
