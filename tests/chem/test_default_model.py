"""The default base model, resolved per base and solvent (chem/basemodels.resolve_base_model), without an engine.

The rule (validation/model-freeze.yaml, the frozen benchmark model ``alcohol-3-embedded``): an alkoxide or hydroxide
in water or an alcohol gets three molecules of its own conjugate acid, embedded five times; every other base, and any base in an aprotic
solvent or the gas phase, stays bare; what the config writes wins. Which anions are alkoxides, which solvents are
protic and which reagents the abbreviations name are common practice (any organic chemistry textbook).
"""

from __future__ import annotations

import pytest

from elimscan.chem.basemodels import DEFAULT_REASON, oxide_anion_kind, resolve_base_model
from elimscan.config import (BaseConfig, BaseModelConfig, OptimizerConfig, PathConfig, RunConfig, SolventConfig,
                             SubstrateConfig, parse_config)
from elimscan.config.molecules import DEFAULT_CLUSTER_EMBEDDINGS, DEFAULT_EXPLICIT_MOLECULES
from elimscan.errors import ConfigError
from elimscan.solvents import DIELECTRIC_SOLVENTS, PROTIC_SOLVENTS, SUPPORTED_SOLVENTS, is_protic


def _model(base: dict | str, solvent: str | None = "ethanol", model: str = "alpb"):
    item = BaseConfig(**base) if isinstance(base, dict) else BaseConfig(name=base)
    return resolve_base_model(item, "none" if solvent is None else model, solvent)


def test_the_default_is_the_frozen_benchmark_model():
    # validation/model-freeze.yaml: base_model alcohol-3-embedded, i.e. {explicit: 3, embeddings: 5}
    from pathlib import Path

    from elimscan.analysis.benchmark_models import base_model_block

    freeze = Path(__file__).resolve().parents[2] / "validation" / "model-freeze.yaml"
    line = next(row for row in freeze.read_text().splitlines() if row.startswith("base_model:"))
    frozen = base_model_block(line.split(":", 1)[1].strip())
    assert frozen == {"explicit": DEFAULT_EXPLICIT_MOLECULES, "embeddings": DEFAULT_CLUSTER_EMBEDDINGS} \
        == {"explicit": 3, "embeddings": 5}
    model = _model("ethoxide")
    assert (model.explicit, model.embeddings) == (3, 5)
    # a model written out embeds once unless it says otherwise (the benchmark's alcohol-3 keeps its jobs)
    assert _model({"name": "ethoxide", "model": {"explicit": 3}}).embeddings == 1
    assert _model({"name": "ethoxide", "model": {"embeddings": 2}}).embeddings == 2
    assert _model({"name": "ethoxide", "model": "bare"}).embeddings == 1


@pytest.mark.parametrize("base, solvent", [
    ("ethoxide", "ethanol"), ("methoxide", "methanol"), ("tert-butoxide", "ethanol"), ("isopropoxide", "water"),
    ("hydroxide", "water"), ("hydroxide", "h2o"), ("ethoxide", "octanol")])
def test_an_alkoxide_or_hydroxide_in_a_protic_solvent_gets_three_molecules_of_its_conjugate_acid(base, solvent):
    model = _model(base, solvent)
    assert (model.counter_ion, model.explicit, model.explicit_smiles) == (None, 3, None)  # None: the conjugate acid
    assert model.reason.startswith("default for an alkoxide in a protic solvent" if base != "hydroxide"
                                   else "default for hydroxide in a protic solvent")


def test_an_alkoxide_in_a_dielectric_only_alcohol_stays_bare_for_the_cost():
    # tert-butanol is protic, but its continuum (ddX-CPCM) makes a cluster about 100 times dearer per step
    # (docs/configuration.md); gbsa water, a parametrised continuum, gets the default
    assert is_protic("dielectric", "tert-butanol")
    model = resolve_base_model(BaseConfig(name="tert-butoxide"), "dielectric", "tert-butanol")
    assert model.bare and model.reason.startswith("default: bare for an alkoxide in the dielectric-only continuum "
                                                  "(tert-butanol)")
    assert resolve_base_model(BaseConfig(name="hydroxide"), "gbsa", "water").explicit == 3


@pytest.mark.parametrize("solvent", ["thf", "dmso", "acetonitrile", "dmf", "hexane", None])
def test_an_alkoxide_in_an_aprotic_solvent_or_the_gas_phase_stays_bare(solvent):
    model = _model("ethoxide", solvent)
    assert model.bare and model.reason.startswith("default: bare for an alkoxide in ")
    assert ("the gas phase" if solvent is None else f"an aprotic solvent ({solvent})") in model.reason


@pytest.mark.parametrize("base", ["amide", "diisopropylamide", "hexamethyldisilazide", "dbu",
                                  {"name": "acetate", "smiles": "CC(=O)[O-]"},
                                  {"name": "phenoxide", "smiles": "[O-]c1ccccc1"},
                                  {"name": "triethylamine", "smiles": "CCN(CC)CC"}])
def test_any_other_base_stays_bare_in_ethanol(base):
    # amides, amidines and amines are no oxygen anions; a carboxylate or phenoxide is an oxygen anion the
    # model was not calibrated on (its conjugate acid is no alcohol)
    model = _model(base)
    assert model.bare and model.reason.startswith("default: bare (")


@pytest.mark.parametrize("smiles, kind", [
    ("CC[O-]", "an alkoxide"), ("CC(C)(C)[O-]", "an alkoxide"), ("[OH-]", "hydroxide"), ("OCC[O-]", "an alkoxide"),
    ("CC(=O)[O-]", None), ("[O-]c1ccccc1", None), ("[NH2-]", None), ("C=C[O-]", None), ("[O-][O-]", None),
    ("CCO", None), ("CC[O-:1]", "an alkoxide")])
def test_which_anions_count_as_alkoxide_or_hydroxide(smiles, kind):
    assert oxide_anion_kind(smiles) == kind


@pytest.mark.parametrize("given, expected", [
    ({"explicit": 1}, (None, 1)), ({"explicit": 0}, (None, 0)), ({"explicit": 4}, (None, 4)),
    ({"counter_ion": "K"}, ("K", 0)), ({"counter_ion": "Na", "explicit": 2}, ("Na", 2))])
def test_an_explicit_model_is_kept_in_any_solvent(given, expected):
    for solvent in ("ethanol", "thf"):
        model = _model({"name": "ethoxide", "model": given}, solvent)
        assert (model.counter_ion, model.explicit) == expected
        assert "as configured" in model.reason and "default" not in model.reason.split("(")[0]


def test_bare_is_one_word_and_the_same_as_explicit_zero():
    assert BaseModelConfig.model_validate("bare") == BaseModelConfig(explicit=0) == BaseModelConfig.model_validate("Bare")
    assert _model({"name": "ethoxide", "model": "bare"}).reason == "bare base as configured"
    text = "substrates: [{name: s, smiles: CCBr}]\nbases: [{name: ethoxide, model: bare}]\n"
    assert parse_config(text).bases[0].model.explicit == 0
    with pytest.raises(ConfigError, match="model 'naked': write 'bare'"):
        parse_config(text.replace("model: bare", "model: naked"))


@pytest.mark.parametrize("name, cation", [("KOtBu", "K"), ("NaOEt", "Na"), ("LiOMe", "Li"), ("KOH", "K")])
def test_an_abbreviation_gets_the_default_model_not_the_ion_pair(name, cation):
    in_ethanol, in_thf = _model(name, "ethanol"), _model(name, "thf")
    assert (in_ethanol.counter_ion, in_ethanol.explicit) == (None, 3) and in_thf.bare
    for model in (in_ethanol, in_thf):
        assert f"the {cation}+ of {name} is not modelled (model: {{counter_ion: {cation}}} for the contact ion pair)" \
            in model.reason
    paired = _model({"name": name, "model": {"counter_ion": cation}})
    assert (paired.counter_ion, paired.explicit) == (cation, 0) and "not modelled" not in paired.reason


def test_a_smiles_of_ones_own_makes_the_name_a_label():
    base = BaseConfig(name="KOtBu", smiles="CC(C)(C)[O-:1]")
    assert base.named_cation is None and "not modelled" not in resolve_base_model(base, "alpb", "ethanol").reason


def test_the_protic_set_is_water_and_the_alcohols_of_the_tables():
    known = set(DIELECTRIC_SOLVENTS).union(*SUPPORTED_SOLVENTS.values())
    assert PROTIC_SOLVENTS <= known
    assert {"water", "methanol", "ethanol", "tert-butanol", "2-propanol"} <= PROTIC_SOLVENTS
    assert not PROTIC_SOLVENTS & {"thf", "dmso", "acetonitrile", "dmf", "acetone", "hexane", "phenol", "ether"}
    assert is_protic("alpb", "H2O") and is_protic("dielectric", "isopropanol") and not is_protic("none", None)


def test_the_reason_names_the_rule_in_one_wording():
    assert DEFAULT_REASON.format(kind="an alkoxide", solvent="ethanol") == \
        "default for an alkoxide in a protic solvent (ethanol)"


# --- job keys: a resumed batch --------------------------------------------------------------------------------------

#: keys of bare and ion-pair bases (whose model the per-solvent default leaves alone) for chloroethane + methoxide,
#: versions {"elimscan": "test"}, the default settings. First computed at commit c92e145 (before the per-solvent
#: default; 87f831af..., 7c608560..., 2c77eb06...); recomputed for key format 2 (geminal hydrogens keep their
#: labels: every finished job is computed again), with which the per-solvent default changes nothing for them. The
#: default optimizer.internal_rebuild_limit 30 (2026-12-04; null before) rekeys every job, so these keys are taken
#: with it written out at null (a job keys as if it were not written); the same for the placement clearance and the
#: complex bond check (2026-12-04, on by default; written out at null and false)
KEY_BEFORE_ETHANOL = "3ed8c6305827be3fdc4be9d8a9ac3caabe81177eaf86f7178c2fdf58fb9a987f"
KEY_BEFORE_DMSO = "657618156489c9d7c9ced6f08d977c7105e05de129a5571244ec7f540a26d49f"
KEY_BEFORE_K_PAIR = "57c3e5370901998e245b5cbd4b9777f498b864ceaf60d047bf549273d75b9566"


def _key(base: BaseConfig, solvent: str) -> str:
    from elimscan.pipeline.document import job_key

    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),), bases=(base,),
                       optimizer=OptimizerConfig(internal_rebuild_limit=None),
                       paths=PathConfig(complex_clearance_vdw_fraction=None, complex_bond_check=False,
                                        complex_base_bond_check=False))
    return job_key(config, {"name": "s", "smiles": "CCCl"}, base, SolventConfig(model="alpb", name=solvent),
                   {"elimscan": "test"})


def test_a_job_whose_model_stays_bare_keeps_its_key_so_a_resumed_batch_reuses_it():
    assert _key(BaseConfig(name="methoxide"), "dmso") == KEY_BEFORE_DMSO  # default: bare in DMSO, as before
    assert _key(BaseConfig(name="methoxide", model="bare"), "ethanol") == KEY_BEFORE_ETHANOL  # pinned bare
    assert _key(BaseConfig(name="KOtBu", model={"counter_ion": "K"}), "ethanol") == KEY_BEFORE_K_PAIR


def test_a_job_whose_default_changed_gets_a_new_key_and_is_computed_again():
    default = _key(BaseConfig(name="methoxide"), "ethanol")
    assert default != KEY_BEFORE_ETHANOL
    # the key holds the model as computed: writing the default out changes nothing
    assert default == _key(BaseConfig(name="methoxide", model={"explicit": 3, "embeddings": 5}), "ethanol")
    # the default before alcohol-3-embedded was frozen (one embedding) is another job
    assert default != _key(BaseConfig(name="methoxide", model={"explicit": 3}), "ethanol")


# --- the record and the plan say which model and why ----------------------------------------------------------------


def test_the_job_record_names_the_model_and_why_on_the_toy_engine():
    from toyjobs import ToyJobEngine

    from elimscan.config import PathConfig
    from elimscan.pipeline.compute import run_config
    from elimscan.pipeline.jobs import job_record

    paths = PathConfig(approaches=("anti",), substitution=False, points=3, base_rotations=1, saddle={"refine": False})
    config = RunConfig(substrates=(SubstrateConfig(name="chloroethane", smiles="CCCl"),),
                       bases=(BaseConfig(name="NaOEt"), BaseConfig(name="EtO bare", smiles="CC[O-]", model="bare")),
                       paths=paths)
    outcome = run_config(config, ToyJobEngine())
    default, bare = (outcome.bases[name].relaxed.record for name in ("NaOEt", "EtO bare"))
    assert default.smiles == "CC[O-].CCO.CCO.CCO" and default.charge == -1  # no Na+ in the cluster
    assert default.model == "2 x CCO hydrogen-bonded + 1 x CCO in the second shell"
    assert default.model_reason == ("default for an alkoxide in a protic solvent (ethanol); the Na+ of NaOEt is not "
                                    "modelled (model: {counter_ion: Na} for the contact ion pair)")
    assert (bare.model, bare.model_reason, bare.smiles) == ("bare", "bare base as configured", "CC[O-]")
    records = {b.name: job_record(s, b, outcome, config) for s, b in outcome.jobs}
    assert records["NaOEt"].base_info.model_reason == default.model_reason
    assert records["EtO bare"].base_info.model == "bare"


def test_the_plan_names_each_jobs_model_per_solvent(tmp_path, capsys):
    from elimscan.cli import main

    (tmp_path / "batch.yaml").write_text("name: two-solvents\nsubstrates: [{name: s, smiles: CCCBr}]\n"
                                         "bases: [KOtBu, amide]\n"
                                         "solvents: [{model: alpb, name: ethanol}, {model: alpb, name: thf}]\n")
    assert main(["plan", str(tmp_path / "batch.yaml")]) == 0
    out = capsys.readouterr().out
    assert ("s__KOtBu__alpb-ethanol: s + KOtBu (3 explicit conjugate-acid molecule(s), lowest of 5 embeddings; default "
            "for an alkoxide in a protic solvent (ethanol); the K+ of KOtBu") in out
    assert "s__KOtBu__alpb-thf: s + KOtBu (bare base; default: bare for an alkoxide in an aprotic solvent (thf)" in out
    assert "s__amide__alpb-ethanol: s + amide (bare base; default: bare (" in out
    # heavy atoms as modelled: 1-bromopropane 4 + tert-butoxide 5 (+ 3 x 5 tert-butanol in ethanol)
    assert "24 heavy atoms" in out.split("s__KOtBu__alpb-ethanol")[1].splitlines()[0]
    assert "9 heavy atoms" in out.split("s__KOtBu__alpb-thf")[1].splitlines()[0]


@pytest.mark.xtb
def test_the_default_ethoxide_in_ethanol_relaxes_as_a_bound_three_ethanol_cluster_with_gfn2():
    """GFN2-xTB/ALPB(ethanol), a base config with no model: ethoxide + three ethanols, relaxed as one anion that
    stays a hydrogen-bonded cluster. Alkoxide-alcohol hydrogen bonds are short and strong (O-H...O- about
    1.5-1.8 A; common practice), so three O-H bonds remain, at least three H...O contacts shorter than 2.2 A hold
    the molecules, and the cluster lies below the separate ethoxide and ethanols (the bound here, -5 kcal/mol, is
    far above what was measured at the commit that added this test: -32.6 kcal/mol)."""
    import numpy as np

    from elimscan.config import MethodConfig
    from elimscan.engines.xtb import EngineSettings, XtbEngine
    from elimscan.pipeline.compute import relax_base, relax_molecule
    from elimscan.units import KCAL_MOL_PER_HARTREE

    method = MethodConfig(solvent=SolventConfig(model="alpb", name="ethanol"))
    item = BaseConfig(name="ethoxide")
    config = RunConfig(method=method, substrates=(SubstrateConfig(name="x", smiles="CCBr"),), bases=(item,))
    engine = XtbEngine(EngineSettings.from_method(method))
    relaxed, info = relax_base(item, engine, config)
    record = relaxed.record
    assert record.status == "ok", record.error
    assert record.model_reason.startswith("default for an alkoxide in a protic solvent (ethanol)")
    assert record.formula == "C8H23O4" and record.charge == -1 and info.basic_atom_index == 2
    atoms = relaxed.atoms
    o = np.flatnonzero(atoms.numbers == 8)
    h = np.flatnonzero(atoms.numbers == 1)
    d = np.linalg.norm(atoms.positions[o][:, None, :] - atoms.positions[h][None, :, :], axis=2)
    assert int((d < 1.2).sum()) == 3  # three alcohols, one alkoxide (a proton may shuttle, the count stays)
    assert int(((d > 1.3) & (d < 2.2)).sum()) >= 3, np.sort(d[(d > 1.2)])[:5]
    apart = relax_molecule("ethoxide", "base", "CC[O-]", None, 1, engine, config.optimizer, config.seed)
    ethanol = relax_molecule("ethanol", "base", "CCO", None, 1, engine, config.optimizer, config.seed)
    binding = (record.energy_hartree - apart.record.energy_hartree - 3 * ethanol.record.energy_hartree) \
        * KCAL_MOL_PER_HARTREE
    print(f"binding of three ethanols to ethoxide, GFN2-xTB/ALPB(ethanol): {binding:.1f} kcal/mol")
    assert binding < -5.0, binding
