"""The substrate check keeps its perception outcome per SMILES and seed: a second substrate with the same SMILES
is still named in its own error, and a cached outcome never changes what the check says (bookkeeping tests, no
chemistry checked here: the perception itself is tested in test_perception.py)."""

import pytest

from elimscan.chem.inputcheck import check_substrate
from elimscan.errors import StructureError


def test_two_substrates_with_one_bad_smiles_are_each_named_in_their_own_error():
    texts = []
    for name in ("pentane-a", "pentane-b", "pentane-a"):
        with pytest.raises(StructureError) as caught:
            check_substrate("CCCCC", None, 1, f"substrate '{name}'", seed=7)
        texts.append(str(caught.value))
    assert texts[0].startswith("substrate 'pentane-a'") and "CCCCC" in texts[0]
    assert texts[1].startswith("substrate 'pentane-b'") and "pentane-a" not in texts[1]
    assert texts[2] == texts[0]


def test_a_good_substrate_checks_the_same_twice_and_a_graph_only_check_is_kept_apart():
    assert check_substrate("CC(Br)C", None, 1, "substrate 'a'", seed=3) == 0
    assert check_substrate("CC(Br)C", None, 1, "substrate 'b'", seed=3) == 0
    assert check_substrate("C[N+](C)(C)CC", None, 1, "substrate 'c'", seed=3, full=False) == 1
