"""SMILES -> checked molecule: every bad structure is refused with a message naming it."""

from __future__ import annotations

import pytest

from elimscan.errors import ExitCode, StructureError
from elimscan.structures import build_molecule, parse_smiles


@pytest.mark.parametrize(
    "smiles, words",
    [
        ("CC(Cl", "cannot parse SMILES 'CC(Cl'"),
        ("C1CC", "cannot parse SMILES"),
        ("[CH2]C(Cl)C", "unpaired electron"),
        ("[Og]", "outside GFN2-xTB's range"),
        ("[U]", "element U (U atom 0) is outside"),
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
