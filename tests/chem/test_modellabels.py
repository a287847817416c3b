"""A model label read back into its parts (chem/modellabels.py), the names of explicit molecules, and which
recorded models are the explicit-solvent default.

Labels come from the one builder, ``basemodels.build_cluster``, and are checked against the cluster SMILES the
same call returns (what was actually built). The names of the conjugate acids are the textbook ones: the alcohol
of each alkoxide reagent named in config/basenames.py, and water for hydroxide.
"""

from __future__ import annotations

import pytest

from elimscan.chem.basemodels import build_cluster, conjugate_acid_smiles, resolve_base_model
from elimscan.chem.bases import describe_base
from elimscan.chem.modellabels import BARE_LABEL, is_default_cluster, label_parts, molecule_name
from elimscan.chem.structures import build_molecule
from elimscan.config import BaseConfig
from elimscan.config.basenames import NAMED_BASES

#: the alcohol (or water) whose anion each reagent is: common textbook knowledge
TEXTBOOK_ACIDS = {"potassium tert-butoxide": "tert-butanol", "sodium ethoxide": "ethanol",
                  "sodium methoxide": "methanol", "sodium isopropoxide": "2-propanol", "sodium hydroxide": "water"}


@pytest.mark.parametrize("smiles, counter_ion, explicit", [
    ("CC[O-]", None, 3), ("CC[O-]", None, 2), ("CC(C)(C)[O-]", "K", 3), ("C[O-]", "Na", 0), ("[OH-]", None, 1),
    ("C[O-]", None, 0)])
def test_the_parts_of_a_label_are_what_the_builder_put_in_the_cluster(smiles, counter_ion, explicit):
    info = describe_base(smiles)
    acid = conjugate_acid_smiles(smiles, info.basic_atom_index)
    molecules = [build_molecule(acid, 5 + k).atoms for k in range(explicit)]
    cluster = build_cluster(build_molecule(smiles, 5).atoms, info.basic_atom_index, smiles, -1, counter_ion,
                            molecules, acid, "test base")
    parts = label_parts(cluster.label)
    pieces = cluster.smiles.split(".")
    assert pieces[0] == smiles
    assert parts.counter_ion == counter_ion and (f"[{counter_ion}+]" in pieces) == (counter_ion is not None)
    assert parts.explicit == explicit == pieces.count(acid)
    assert parts.explicit_smiles == (acid if explicit else None)
    assert (cluster.label == BARE_LABEL) == (counter_ion is None and explicit == 0)


def test_a_label_this_version_does_not_know_is_not_guessed():
    assert label_parts(None) is None
    for label in ("3 ethanols around it", "2 x CCO hydrogen-bonded + something else", "Cs+ ion pair"):
        assert label_parts(label) is None, label


@pytest.mark.parametrize("reagent, acid_name", TEXTBOOK_ACIDS.items())
def test_the_conjugate_acid_of_each_named_reagent_has_its_textbook_name(reagent, acid_name):
    (base,) = [b for b in NAMED_BASES.values() if b.full_name == reagent]
    assert molecule_name(conjugate_acid_smiles(base.smiles, describe_base(base.smiles).basic_atom_index)) == acid_name


def test_a_molecule_without_a_usual_name_or_a_bad_smiles_gets_none():
    assert molecule_name("CC(C)CO") is None and molecule_name("not a smiles((") is None
    assert molecule_name("OCC") == "ethanol"  # read through RDKit, not as written


def test_only_the_explicit_solvent_default_counts_as_the_default():
    def recorded(base: BaseConfig, solvent: str | None) -> bool:
        model = resolve_base_model(base, "alpb" if solvent else "none", solvent)
        groups = " + ".join(([f"{model.counter_ion}+ ion pair"] if model.counter_ion else [])
                            + ([f"{model.explicit} x CCO hydrogen-bonded"] if model.explicit else [])) or BARE_LABEL
        return is_default_cluster(groups, model.reason)

    assert recorded(BaseConfig(name="ethoxide"), "ethanol")
    assert recorded(BaseConfig(name="NaOEt"), "methanol")  # the reason goes on to name the cation left out
    assert not recorded(BaseConfig(name="ethoxide"), "thf")  # default, but bare
    assert not recorded(BaseConfig(name="ethoxide"), None)
    assert not recorded(BaseConfig(name="ethoxide", model="bare"), "ethanol")
    assert not recorded(BaseConfig(name="ethoxide", model={"explicit": 3}), "ethanol")  # asked for, not the default
    assert not recorded(BaseConfig(name="KOtBu", model={"counter_ion": "K"}), "ethanol")
    assert not is_default_cluster(None, "default for an alkoxide in a protic solvent (ethanol)")
