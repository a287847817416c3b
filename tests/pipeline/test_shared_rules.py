"""Rules that `run` and `batch` once wrote twice, and whose copies drifted: each now has one function."""

from __future__ import annotations

import textwrap

import pytest

from elimscan.batch.plan import plan_batch
from elimscan.cli import main
from elimscan.config import parse_config

GAS_PHASE = textwrap.dedent("""\
    method: {{solvent: {{model: none}}}}
    substrates:
      - {{name: bromoethane, smiles: CCBr}}
    bases:
      - {{name: ethoxide, smiles: "CC[O-]"{model}}}
    """)


def _write(tmp_path, model: str):
    path = tmp_path / "gas.yaml"
    path.write_text(GAS_PHASE.format(model=model))
    return path


def test_an_ion_paired_base_in_the_gas_phase_is_judged_alike_by_run_and_batch(tmp_path):
    # Na+ ethoxide is neutral as modelled (the cation travels with the base): no free ion in the gas phase.
    # Before the fix `plan`/`run` accepted this config and `batch` refused every job of it.
    path = _write(tmp_path, ", model: {counter_ion: Na}")
    assert main(["plan", str(path), "-q"]) == 0
    plan = plan_batch(parse_config(path.read_text(), str(path)), path)
    assert [job.input_error for job in plan.jobs] == [None]


def test_a_bare_anion_in_the_gas_phase_is_refused_by_run_and_batch_with_one_message(tmp_path, capsys):
    path = _write(tmp_path, "")
    assert main(["plan", str(path)]) == 3
    said = capsys.readouterr().err
    plan = plan_batch(parse_config(path.read_text(), str(path)), path)
    (job,) = plan.jobs
    assert job.input_error.error_type == "config_error"
    # one wording: the batch's message is the one `plan` prints
    assert job.input_error.error_message in said.replace("\n", " ")
    assert "base 'ethoxide' (charge -1)" in job.input_error.error_message


@pytest.mark.parametrize("counter_ion,charge,expected", [(None, -1, -1), ("Na", -1, 0), ("K", 0, 1)])
def test_the_modelled_charge_of_a_base_counts_its_counter_ion(counter_ion, charge, expected):
    from elimscan.chem.inputcheck import modelled_charge

    assert modelled_charge(charge, counter_ion) == expected


@pytest.mark.parametrize("solvent", ["{model: dielectric, name: ethanol}", "{model: alpb, name: ethanol}",
                                     "{model: none}"])
def test_run_and_batch_label_the_method_alike(tmp_path, solvent):
    # Before the fix the batch wrote 'DIELECTRIC(ethanol)' where `run` wrote 'ddX-CPCM(ethanol, ε 24.852, ...)'.
    from elimscan.batch.documents import _provenance
    from elimscan.engines.xtb import EngineSettings

    path = tmp_path / "one.yaml"
    path.write_text(f"method: {{solvent: {solvent}}}\nsubstrates: [{{name: chloroethane, smiles: CCCl}}]\n"
                    "bases: [{name: triethylamine, smiles: CCN(CC)CC}]\n")
    config = parse_config(path.read_text(), str(path))
    plan = plan_batch(config, path)
    run_label = EngineSettings.from_method(config.method).describe()
    assert _provenance(plan, "elimscan batch one.yaml").method_label == run_label
    if "dielectric" in solvent:
        assert "ddX-CPCM(ethanol, ε 24.85" in run_label  # ε of ethanol: Minnesota solvent database


def test_the_batch_key_versions_name_every_numeric_library_once():
    # one lookup for the key, the provenance and `elimscan info`: the libraries that change numbers are all in it
    from elimscan.versions import environment_versions, numeric_versions

    key = numeric_versions("tblite")
    assert set(key) == {"elimscan", "tblite", "rdkit", "ase", "numpy", "scipy", "sella"}
    assert "pyscf" in numeric_versions("tblite", dft=True) and "pyscf" not in key
    info = environment_versions()
    assert all(info[name] == version for name, version in key.items())


def test_the_provenance_of_a_run_document_carries_every_library_of_the_job_key(tmp_path):
    # SciPy and Sella enter every job key and PySCF enters it with the DFT tier: results.json records them too
    from elimscan import compute_run
    from elimscan.batch.documents import _provenance
    from elimscan.versions import numeric_versions
    from toyjobs import TOY_SETTINGS, ToyJobEngine

    text = TOY_SETTINGS + "substrates: [{name: 2-chloropropane, smiles: 'CC(C)Cl'}]\nbases: [{name: methoxide}]\n"
    result, _ = compute_run(parse_config(text), ToyJobEngine())
    key = numeric_versions("tblite")
    origin = result.provenance
    assert (origin.scipy_version, origin.sella_version, origin.pyscf_version) == (key["scipy"], key["sella"], None)
    assert "not installed" not in (origin.scipy_version, origin.sella_version)
    assert origin.backend_version == key["tblite"]
    path = tmp_path / "dft.yaml"
    path.write_text(text + "dft: {enabled: true}\n")
    batch = _provenance(plan_batch(parse_config(path.read_text(), str(path)), path), "elimscan batch dft.yaml")
    assert batch.pyscf_version == numeric_versions("tblite", dft=True)["pyscf"]
    assert (batch.scipy_version, batch.sella_version) == (key["scipy"], key["sella"])


def test_a_setting_added_later_keeps_the_keys_of_finished_jobs():
    """Finished batch jobs are found again by their key: a setting added since they ran, at the value that does
    what the code did before it existed (pipeline/document.KEY_NEUTRAL), leaves the key alone.

    A change that does change a job's numbers (a default, a library version) must change keys: then update this
    value and say why in the commit. History: f89e676d… from commit 607da3f (the frozen-model benchmark's first
    batches); 847460fe… since the loose-first driven path became the default (merge of branch pathcost: barriers
    within 0.06 kcal/mol on bench_paths, but numbers move, so keys must); 5ddf9964... since key format 2 (geminal
    hydrogens keep their perceived labels: products of open-chain CH2 hydrogens were E/Z-swapped in some conformers);
    5b4604d5... since optimizer.internal_rebuild_limit 30 became the default (written out at its old value, null,
    the job keys as before: 5ddf9964...); 0b258165... since the placed base keeps clear of the substrate and a
    complex that changed the substrate's bonds is dropped (paths.complex_clearance_vdw_fraction 0.7 and
    paths.complex_bond_check true; written out at null and false, the job keys as before: 5b4604d5...); 324470da...
    since a complex whose base cluster changed its own bonds is dropped too (paths.complex_base_bond_check true;
    written out at false, the job keys as before: 0b258165...).
    """
    from elimscan.config import BaseConfig, OptimizerConfig, PathConfig, RunConfig, SolventConfig, SubstrateConfig
    from elimscan.pipeline.document import job_key

    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),),
                       bases=(BaseConfig(name="ethoxide", model={"explicit": 3}),))
    key = job_key(config, {"name": "s", "smiles": "CCCl"}, config.bases[0], SolventConfig(model="alpb", name="ethanol"),
                  {"elimscan": "test"})
    assert key == DEFAULT_KEY
    before = config.model_copy(update={"optimizer": OptimizerConfig(internal_rebuild_limit=None)})
    assert job_key(before, {"name": "s", "smiles": "CCCl"}, before.bases[0], SolventConfig(model="alpb", name="ethanol"),
                   {"elimscan": "test"}) != BEFORE_REBUILD_LIMIT_KEY  # the placement came after
    before = before.model_copy(update={"paths": PathConfig(complex_clearance_vdw_fraction=None,
                                                           complex_bond_check=False, complex_base_bond_check=False)})
    assert job_key(before, {"name": "s", "smiles": "CCCl"}, before.bases[0], SolventConfig(model="alpb", name="ethanol"),
                   {"elimscan": "test"}) == BEFORE_REBUILD_LIMIT_KEY
    placed_as_before = config.model_copy(update={"paths": before.paths})
    assert job_key(placed_as_before, {"name": "s", "smiles": "CCCl"}, config.bases[0],
                   SolventConfig(model="alpb", name="ethanol"), {"elimscan": "test"}) == BEFORE_CLEARANCE_KEY
    more = config.bases[0].model_copy(update={"model": config.bases[0].model.model_copy(update={"arrangements": 3})})
    assert job_key(config, {"name": "s", "smiles": "CCCl"}, more, SolventConfig(model="alpb", name="ethanol"),
                   {"elimscan": "test"}) != key  # three arrangements can change the numbers
    embedded = config.bases[0].model_copy(update={"model": config.bases[0].model.model_copy(update={"embeddings": 2})})
    assert job_key(config, {"name": "s", "smiles": "CCCl"}, embedded, SolventConfig(model="alpb", name="ethanol"),
                   {"elimscan": "test"}) != key  # so can two embeddings (one, the default, keeps the key above)


#: the pinned job key of chloroethane + ethoxide (three ethanols, ALPB ethanol) under today's defaults ...
DEFAULT_KEY = "324470da5ef4fde45b8a30193482f8126212527a288c0a1b3c3fad21fc76d920"
#: ... with only the substrate's bonds checked in a complex, as before 2026-12-05 ...
BEFORE_BASE_CHECK_KEY = "0b258165b1d386a75b5a48242fc30bff551c76082864483f7ff39485ced31235"
#: ... with the base placed and its complex kept as before 2026-12-04 (clearance null, bond check false) ...
BEFORE_CLEARANCE_KEY = "5b4604d53bcf2d3f65d6890b51bc7f4fc3560a24c51730a83644a3fc10e4c90b"
#: ... and with optimizer.internal_rebuild_limit null as well, the default before that
BEFORE_REBUILD_LIMIT_KEY = "5ddf9964f05d092304331a0334f56dc9631464fa8b80a54c586e3c8eed25daaa"


def _dft_key(monkeypatch):
    """Return a function: the job key of chloroethane + ethoxide (three ethanols) with a ``dft`` block, PySCF's
    version pinned to 'test' so the value does not follow the installed library."""
    import elimscan.pipeline.document as document
    from elimscan.config import BaseConfig, RunConfig, SolventConfig, SubstrateConfig

    monkeypatch.setattr(document, "installed_version", lambda name: "test")

    def key(dft: dict) -> str:
        config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),),
                           bases=(BaseConfig(name="ethoxide", model={"explicit": 3}),), dft=dft)
        return document.job_key(config, {"name": "s", "smiles": "CCCl"}, config.bases[0],
                                SolventConfig(model="alpb", name="ethanol"), {"elimscan": "test"})

    return key


def test_a_dft_single_point_job_keeps_its_key_after_the_saddle_rung_was_added(monkeypatch):
    """The DFT saddle rung's settings (dft.saddles, dft.reoptimise_*) change nothing while the tier does single
    points, so those jobs key as before the rung existed: bc6a9dbf… computed by commit 860c162, afbc3fb9… since key
    format 2, 49631899… since optimizer.internal_rebuild_limit 30 became the default, 683548eb… since the placed
    base keeps clear of the substrate and complexes keep its bonds, 91b47beb… since they keep the base's own bonds
    too (PySCF's version pinned to 'test' here so the value does not follow the installed library). Re-optimising
    keys differently."""
    key = _dft_key(monkeypatch)
    single = key({"enabled": True})
    assert single == "91b47beb0719733d7a1f4f7d3c8e0da1909ab81ab66a4a4ad1ee2eb4dcd11305"
    assert key({"enabled": True, "reoptimise_max_steps": 7}) == single  # unused by single points
    reoptimise = key({"enabled": True, "saddles": "reoptimise"})
    assert reoptimise != single
    assert key({"enabled": True, "saddles": "reoptimise", "reoptimise_max_steps": 7}) != reoptimise


def test_carrying_the_bfgs_hessian_along_the_path_keys_apart_only_when_on():
    """paths.carry_hessian at false does what the driven path did before it existed (KEY_NEUTRAL), so a job keys as
    in the pinned test above; on, the path's numbers move, so its key must too."""
    from elimscan.config import BaseConfig, PathConfig, RunConfig, SolventConfig, SubstrateConfig
    from elimscan.pipeline.document import job_key

    def key(**paths) -> str:
        config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),),
                           bases=(BaseConfig(name="ethoxide", model={"explicit": 3}),), paths=PathConfig(**paths))
        return job_key(config, {"name": "s", "smiles": "CCCl"}, config.bases[0],
                       SolventConfig(model="alpb", name="ethanol"), {"elimscan": "test"})

    assert key(carry_hessian=False) == key()
    assert key(carry_hessian=True) != key()


def test_the_dft_memory_limit_changes_no_job_key(monkeypatch):
    """Two configs that differ only in dft.memory_limit_MB give the same job key (it changes no number)."""
    key = _dft_key(monkeypatch)
    plain = key({"enabled": True})
    assert key({"enabled": True, "memory_limit_MB": 2000}) == plain
    assert key({"enabled": True, "memory_limit_MB": 64000}) == plain
    assert key({"enabled": True, "basis": "def2-tzvp", "memory_limit_MB": 2000}) != plain  # a number-changing one


def test_screening_the_base_rotations_keys_apart_only_when_on():
    """paths.complex_screen_fmax_eV_per_A at null relaxes every rotation fully, as complexes were built before it
    existed (KEY_NEUTRAL), so a job keeps the pinned key above; on, the complex may move, so the key must too."""
    from elimscan.config import BaseConfig, PathConfig, RunConfig, SolventConfig, SubstrateConfig
    from elimscan.pipeline.document import job_key

    def key(**paths) -> str:
        config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),),
                           bases=(BaseConfig(name="ethoxide", model={"explicit": 3}),), paths=PathConfig(**paths))
        return job_key(config, {"name": "s", "smiles": "CCCl"}, config.bases[0],
                       SolventConfig(model="alpb", name="ethanol"), {"elimscan": "test"})

    assert key(complex_screen_fmax_eV_per_A=None) == key() == DEFAULT_KEY
    assert key(complex_screen_fmax_eV_per_A=0.05) != key()
    assert key(complex_screen_fmax_eV_per_A=0.05) != key(complex_screen_fmax_eV_per_A=0.1)
    assert key(complex_screen_window_kcal_mol=0.0) == key()
    assert key(complex_screen_fmax_eV_per_A=0.05, complex_screen_window_kcal_mol=0.5) != \
        key(complex_screen_fmax_eV_per_A=0.05)


def test_the_placement_clearance_and_the_bond_check_key_apart_only_when_on():
    """paths.complex_clearance_vdw_fraction at null and paths.complex_bond_check at false build complexes as before
    they existed (KEY_NEUTRAL); on (the defaults), the complexes may move, so each keys apart."""
    from elimscan.config import BaseConfig, PathConfig, RunConfig, SolventConfig, SubstrateConfig
    from elimscan.pipeline.document import job_key

    def key(**paths) -> str:
        config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),),
                           bases=(BaseConfig(name="ethoxide", model={"explicit": 3}),), paths=PathConfig(**paths))
        return job_key(config, {"name": "s", "smiles": "CCCl"}, config.bases[0],
                       SolventConfig(model="alpb", name="ethanol"), {"elimscan": "test"})

    before = key(complex_clearance_vdw_fraction=None, complex_bond_check=False, complex_base_bond_check=False)
    assert before == BEFORE_CLEARANCE_KEY and key() == DEFAULT_KEY
    assert key(complex_base_bond_check=False) == BEFORE_BASE_CHECK_KEY
    assert len({before, key(complex_clearance_vdw_fraction=None), key(complex_bond_check=False), key(),
                key(complex_clearance_vdw_fraction=0.6), key(complex_base_bond_check=False)}) == 6


def test_the_complex_optimizer_keys_apart_only_when_set():
    """paths.complex_optimizer at null relaxes the complexes with method.optimizer, as before it existed
    (KEY_NEUTRAL), so a job keeps the key pinned above; set, the complexes may move, so the key must too."""
    from elimscan.config import BaseConfig, PathConfig, RunConfig, SolventConfig, SubstrateConfig
    from elimscan.pipeline.document import job_key

    def key(**paths) -> str:
        config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),),
                           bases=(BaseConfig(name="ethoxide", model={"explicit": 3}),), paths=PathConfig(**paths))
        return job_key(config, {"name": "s", "smiles": "CCCl"}, config.bases[0],
                       SolventConfig(model="alpb", name="ethanol"), {"elimscan": "test"})

    assert key(complex_optimizer=None) == key() == DEFAULT_KEY
    assert key(complex_optimizer="bfgs") != key()
    assert key(complex_optimizer="sella") != key(complex_optimizer="bfgs")
    assert key(complex_optimizer="bfgs", complex_screen_fmax_eV_per_A=0.05) != key(complex_optimizer="bfgs")
