"""What a chemist types: every input problem listed at once, the ``solvent: NAME`` shorthand, base abbreviations (the
anion, its counter-ion named), the quote hint for a name cut at a comma, and the plan printed to standard output.

No GFN2-xTB: input checks stop before any calculation; the costs test runs a batch on the toy engine.
"""

from __future__ import annotations

import json

import pytest
from rdkit import Chem

from elimscan.cli import main
from elimscan.config import SolventConfig, parse_config
from elimscan.config.basenames import BASE_ABBREVIATIONS, COUNTER_IONS, NAMED_BASES, named_base
from elimscan.errors import ConfigError, ExitCode, InputProblems
from toyjobs import TOY_SETTINGS

ONE_JOB = """\
name: chemist
substrates:
  - {name: 2-bromobutane, smiles: "CCC(C)Br"}
bases:
  - {name: ethoxide}
"""


def run_cli(capsys, argv: list[str]) -> tuple[int, str, str]:
    """Run the command line in this process; return (exit code, stdout, stderr)."""
    code = main([str(a) for a in argv])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


# --- every problem at once ---------------------------------------------------------------------------------------

MANY_PROBLEMS = """\
name: four-problems
method: {temperature_K: warm}
substrates:
  - {name: broken-one, smiles: "CC(Br"}
  - {name: broken-two, smiles: "C1CCBr"}
  - {name: 2-bromobutane, smiles: "CCC(C)Br", chrage: 0}
bases:
  - {name: ethoxide}
"""


def test_every_problem_of_a_config_is_listed_at_once_with_its_key_path_and_line(tmp_path, capsys):
    config = tmp_path / "run.yaml"
    config.write_text(MANY_PROBLEMS)
    for argv in (["plan", config], ["run", config, "--out", tmp_path / "out"]):
        code, out, err = run_cli(capsys, argv)
        assert code == ExitCode.CONFIG, err
        assert "Traceback" not in err and out == ""
        assert f"error (input_error): {config}: 4 problems, all listed:" in err
        lines = err.splitlines()
        # in file order, each naming the file, the key path and the YAML line
        assert lines[1].startswith(f"  1. {config}: key 'method.temperature_K', line 2: ") and "'warm'" in lines[1]
        assert lines[2].startswith(f"  2. {config}, key 'substrates.0.smiles', line 4: substrate 'broken-one'")
        assert "cannot parse SMILES 'CC(Br'" in lines[2]
        assert lines[3].startswith(f"  3. {config}, key 'substrates.1.smiles', line 5: substrate 'broken-two'")
        assert "'C1CCBr'" in lines[3]
        assert lines[4].startswith(f"  4. {config}: key 'substrates.2.chrage', line 6: unknown key 'chrage'; "
                                   "did you mean 'charge'?")
    assert not (tmp_path / "out").exists()


def test_two_bad_smiles_of_a_valid_config_are_both_named(tmp_path, capsys):
    config = tmp_path / "run.yaml"
    config.write_text(ONE_JOB.replace('"CCC(C)Br"}', '"CCC(C)Br"}\n  - {name: neo, smiles: "CC(C)(C)CBr"}\n'
                                      '  - {name: nothing, smiles: "CCCC"}'))
    code, out, err = run_cli(capsys, ["plan", config])
    assert code == ExitCode.CONFIG
    assert err.startswith(f"error (structure_error): {config}: 2 problems, all listed:")
    assert "key 'substrates.1.smiles', line 4: substrate 'neo'" in err and "no beta hydrogen" in err
    assert "key 'substrates.2.smiles', line 5: substrate 'nothing'" in err and "no leaving group" in err


def test_one_problem_is_still_one_line():
    with pytest.raises(ConfigError) as caught:
        parse_config(ONE_JOB.replace("{name: ethoxide}", "{nmae: ethoxide}"))
    assert not isinstance(caught.value, InputProblems)
    assert str(caught.value).startswith("key 'bases.0.nmae', line 5: unknown key 'nmae'; did you mean 'name'?")


# --- solvent shorthand -----------------------------------------------------------------------------------------


def test_a_plain_solvent_name_means_the_default_model_with_that_solvent():
    config = parse_config(ONE_JOB + "method: {solvent: methanol}\n")
    assert config.method.solvent == SolventConfig(model="alpb", name="methanol")
    assert parse_config(ONE_JOB.replace("{name: ethoxide}", "dbu") + "method: {solvent: none}\n").method.solvent == (
        SolventConfig(model="none", name=None))


def test_a_solvent_of_the_wrong_shape_says_what_is_expected_in_plain_words():
    with pytest.raises(ConfigError) as caught:
        parse_config(ONE_JOB + "method: {solvent: [ethanol]}\n")
    assert "expected a solvent name (solvent: ethanol) or a mapping" in str(caught.value)
    assert "SolventConfig" not in str(caught.value)


def test_a_block_setting_written_at_the_top_level_names_its_block():
    with pytest.raises(ConfigError) as caught:
        parse_config(ONE_JOB + "solvent: ethanol\n")
    assert str(caught.value) == ("key 'solvent', line 6: unknown key 'solvent' at the top level: it belongs in the "
                                 "'method' block (method: {solvent: ...})")


def test_a_list_given_as_one_word_says_a_list_is_expected():
    with pytest.raises(ConfigError) as caught:
        parse_config(ONE_JOB + "substrates_file: more.csv\nsolvents: ethanol\n")
    assert "key 'solvents', line 7: expected a list ([a, b], or lines starting with '- '), got 'ethanol'" in str(
        caught.value)
    assert "tuple" not in str(caught.value)


def test_a_solvent_known_only_by_its_dielectric_constant_gets_the_way_to_ask_for_it():
    with pytest.raises(ConfigError) as caught:
        parse_config(ONE_JOB + "method: {solvent: tert-butanol}\n")
    assert "solvent: {model: dielectric, name: tert-butanol}" in str(caught.value)


# --- base abbreviations ------------------------------------------------------------------------------------------

#: abbreviation -> (conjugate acid, counter-ion). Common practice: the reagent names of any organic chemistry
#: textbook and reagent catalogue (e.g. Clayden, Greeves & Warren, Organic Chemistry, 2nd ed. 2012, ch. 8 and 17:
#: KOtBu potassium tert-butoxide, LDA lithium diisopropylamide, HMDS hexamethyldisilazide); the conjugate acids are
#: written here by hand, independently of the table.
EXPECTED = {
    "KOtBu": ("CC(C)(C)O", "K"), "NaOtBu": ("CC(C)(C)O", "Na"), "LiOtBu": ("CC(C)(C)O", "Li"),
    "NaOEt": ("CCO", "Na"), "KOEt": ("CCO", "K"), "LiOEt": ("CCO", "Li"),
    "NaOMe": ("CO", "Na"), "KOMe": ("CO", "K"), "LiOMe": ("CO", "Li"), "NaOiPr": ("CC(C)O", "Na"),
    "NaOH": ("O", "Na"), "KOH": ("O", "K"), "LiOH": ("O", "Li"), "NaNH2": ("N", "Na"), "KNH2": ("N", "K"),
    "LDA": ("CC(C)NC(C)C", "Li"), "LiTMP": ("CC1(C)CCCC(C)(C)N1", "Li"),
    "LiHMDS": ("C[Si](C)(C)N[Si](C)(C)C", "Li"), "NaHMDS": ("C[Si](C)(C)N[Si](C)(C)C", "Na"),
    "KHMDS": ("C[Si](C)(C)N[Si](C)(C)C", "K"),
}


def conjugate_acid(smiles: str) -> str:
    """Return the canonical SMILES of an anion with its negative atom protonated."""
    mol = Chem.RWMol(Chem.MolFromSmiles(smiles))
    for atom in mol.GetAtoms():
        if atom.GetFormalCharge() == -1:
            atom.SetFormalCharge(0)
            atom.SetNumExplicitHs(atom.GetTotalNumHs() + 1)
    Chem.SanitizeMol(mol)
    return Chem.MolToSmiles(mol)


def test_the_table_holds_every_expected_abbreviation_and_no_other_computable_one():
    computable = {spellings[0] for spellings, base in NAMED_BASES.items() if base.counter_ion in COUNTER_IONS}
    assert computable == set(EXPECTED)


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_an_abbreviation_resolves_to_its_anion_and_names_its_counter_ion_without_modelling_it(name):
    acid, ion = EXPECTED[name]
    config = parse_config(ONE_JOB.replace("{name: ethoxide}", name))  # a plain name in the list, as typed
    base = config.bases[0]
    assert base.name == name
    assert conjugate_acid(base.smiles) == Chem.MolToSmiles(Chem.MolFromSmiles(acid))
    assert Chem.GetFormalCharge(Chem.MolFromSmiles(base.smiles)) == -1
    # the name's cation is named, not modelled: the ion pair was rejected as a default (validation/BASICITY.md)
    assert base.named_cation == ion and base.model.counter_ion is None and base.model.explicit is None


def test_the_cations_of_the_table_are_the_ones_the_ion_pair_model_builds():
    import typing

    from elimscan.chem.basemodels import CATION_DISTANCE_A
    from elimscan.config import BaseModelConfig

    allowed = set(typing.get_args(typing.get_args(BaseModelConfig.model_fields["counter_ion"].annotation)[0]))
    assert set(COUNTER_IONS) == set(CATION_DISTANCE_A) == allowed


def test_other_spellings_and_case_resolve_alike():
    assert named_base("tBuOK") == named_base("kotbu") == named_base(" KOt-Bu ") == BASE_ABBREVIATIONS["kotbu"]


def test_the_config_can_keep_the_bare_anion_or_its_own_smiles():
    bare = parse_config(ONE_JOB.replace("{name: ethoxide}", "{name: KOtBu, model: {counter_ion: null, explicit: 1}}"))
    assert bare.bases[0].model.counter_ion is None and bare.bases[0].model.explicit == 1
    own = parse_config(ONE_JOB.replace("{name: ethoxide}", '{name: KOtBu, smiles: "CC(C)(C)[O-]"}'))
    assert own.bases[0].model.counter_ion is None  # a SMILES given: the name is only a label


@pytest.mark.parametrize("name, ion", [("CsOH", "Cs"), ("TBAOH", "NBu4")])
def test_an_abbreviation_whose_cation_the_ion_pair_model_lacks_gives_the_anion_and_names_the_cation(name, ion):
    from elimscan.chem.basemodels import resolve_base_model

    base = parse_config(ONE_JOB.replace("{name: ethoxide}", name)).bases[0]
    assert base.smiles == "[OH-]" and base.named_cation == ion and base.model.counter_ion is None
    model = resolve_base_model(base, "alpb", "water")
    assert model.explicit == 3 and f"the {ion}+ of {name} is not modelled (the ion-pair model has no {ion}+)" in model.reason


def test_a_counter_ion_written_out_that_the_model_lacks_is_named():
    with pytest.raises(ConfigError) as caught:
        parse_config(ONE_JOB.replace("{name: ethoxide}", '{name: x, smiles: "C[O-]", model: {counter_ion: Cs}}'))
    assert "counter-ion 'Cs' is not one the ion-pair model has (it has Li, Na, K)" in str(caught.value)


def test_an_unknown_base_name_lists_the_names_and_abbreviations():
    with pytest.raises(ConfigError) as caught:
        parse_config(ONE_JOB.replace("{name: ethoxide}", "superbase"))
    assert "base 'superbase' needs a smiles" in str(caught.value) and "KOtBu" in str(caught.value)
    assert "CsOH" in str(caught.value)  # every abbreviation gives its anion now, whatever its cation


# --- a name cut at a comma -----------------------------------------------------------------------------------------


def test_a_name_with_a_comma_inside_braces_gets_the_quote_hint():
    text = ONE_JOB.replace('{name: 2-bromobutane, smiles: "CCC(C)Br"}', '{name: 2,3-dibromobutane, smiles: "CC(Br)C(C)Br"}')
    with pytest.raises(ConfigError) as caught:
        parse_config(text)
    assert not isinstance(caught.value, InputProblems)  # the name's own type error is its consequence
    assert str(caught.value) == ("key 'substrates.0.3-dibromobutane', line 3: unknown key '3-dibromobutane': inside "
                                 "{...} a comma ends a value, so 'name: 2,3-dibromobutane' was cut at the comma; put "
                                 "the text in quotes: name: \"2,3-dibromobutane\"")
    quoted = parse_config(text.replace("name: 2,3-dibromobutane", 'name: "2,3-dibromobutane"'))
    assert quoted.substrates[0].name == "2,3-dibromobutane"


# --- the plan --------------------------------------------------------------------------------------------------------


def test_the_plan_goes_to_stdout_with_atoms_numbered_from_one_also_when_quiet(tmp_path, capsys):
    config = tmp_path / "run.yaml"
    config.write_text(ONE_JOB.replace("{name: ethoxide}", "KOtBu"))
    code, out, err = run_cli(capsys, ["plan", config, "-q"])
    assert code == ExitCode.OK and err == ""
    # 2-bromobutane CCC(C)Br: Br is the 5th atom of the SMILES, on the 3rd; the beta carbons are the 2nd (CH2, two
    # diastereotopic H: 2-butenes) and the 4th (CH3: 1-butene); hydrogens follow the five heavy atoms (6 to 14)
    assert "leaving group Br (atom Br5) on C-alpha C3" in out
    assert "beta-H classes: 3" in out
    methyl = next(line for line in out.splitlines() if line.strip().startswith("C4-H"))
    assert methyl.strip().endswith("3 H (H12, H13, H14)")
    assert out.count("    C2-H") == 2 and "C=CCC (monosubstituted" in out
    # the abbreviation's K+ is named, the anion gets the default of an alkoxide in ethanol (three tert-butanols)
    assert ("2-bromobutane__KOtBu: 2-bromobutane + KOtBu (3 explicit conjugate-acid molecule(s), lowest of 5 "
            "embeddings; default for an alkoxide in a protic solvent (ethanol); the K+ of KOtBu is not modelled (model: "
            "{counter_ion: K} for the contact ion pair)), ALPB(ethanol); 7 paths, 25 heavy atoms") in out
    assert "within a factor of 2 either way" in out


def test_the_plan_takes_its_costs_from_a_finished_batch(tmp_path, capsys):
    (tmp_path / "batch.yaml").write_text(TOY_SETTINGS + "name: costs\nsubstrates_file: more.csv\nbases:\n"
                                         "  - {name: methoxide}\nexecutor: {workers: 1}\n")
    (tmp_path / "more.csv").write_text("name,smiles\nchloroethane,CCCl\n")
    code, _, err = run_cli(capsys, ["batch", tmp_path / "batch.yaml", "--out", tmp_path / "done",
                                    "--engine", "toyjobs:toy_engine"])
    assert code == ExitCode.OK, err
    seconds = json.loads((tmp_path / "done" / "batch.json").read_text())["jobs"][0]["wall_seconds"]
    code, out, err = run_cli(capsys, ["plan", tmp_path / "batch.yaml", "--costs", tmp_path / "done"])
    assert code == ExitCode.OK, err
    assert f"from the 1 finished job(s) of {tmp_path / 'done'}/batch.json" in out
    from elimscan.cli.plan import rough_duration

    # the same job again: its own measured time (one class, the toy settings compute anti only and no SN2); methoxide
    # in ethanol is modelled with three methanols by default: 3 + 2 + 3 x 2 heavy atoms
    assert f"1 path, 11 heavy atoms, {rough_duration(seconds)}" in out, out
    # a job that started over from its replay log timed its last run only: it gives no cost
    from elimscan.cli.plan import measured_from_folder

    results = tmp_path / "done" / "results.json"
    document = json.loads(results.read_text())
    assert len(measured_from_folder(tmp_path / "done")) == 1
    document["jobs"][0]["replayed_points"] = 25
    results.write_text(json.dumps(document))
    assert measured_from_folder(tmp_path / "done") == []


@pytest.mark.parametrize("config, measured_s", [
    # measured on the 2-core development machine, one core: the demo's two jobs took 670 s (issue 20, a user's
    # run); the Hammett series, four anti paths, 3.5 min (docs/method.md, step 15)
    ("demo.yaml", 670.0), ("hammett-series.yaml", 210.0)])
def test_the_rough_time_is_within_its_stated_factor_of_measured_runs(config, measured_s):
    from pathlib import Path

    from elimscan.chem.perception import perceive_substrate
    from elimscan.chem.basemodels import resolve_base_model
    from elimscan.cli.plan import ESTIMATE_FACTOR, MEASURED_JOB, PlanJob, job_estimate, seconds_per_path
    from elimscan.config import BaseModelConfig

    root = Path(__file__).resolve().parents[1]
    parsed = parse_config((root / "configs" / config).read_text())
    total = 0.0
    for substrate, base in parsed.jobs():
        n_classes = len(perceive_substrate(substrate.smiles, seed=parsed.seed).beta_classes)
        # the measured runs computed the bare anion (before the per-solvent default): estimate that model
        bare = resolve_base_model(base.model_copy(update={"model": BaseModelConfig(explicit=0)}), "alpb", "ethanol")
        job = PlanJob("", substrate.name, substrate.smiles, base, "", bare)
        total += job_estimate(parsed, job, n_classes, seconds_per_path(MEASURED_JOB))[2]
    assert measured_s / ESTIMATE_FACTOR <= total <= measured_s * ESTIMATE_FACTOR


def test_rough_durations_keep_one_significant_figure():
    from elimscan.cli.plan import rough_duration

    assert [rough_duration(s) for s in (4.2, 47, 130, 670, 5400, 40000)] == [
        "about 4 s", "about 50 s", "about 2 min", "about 10 min", "about 2 h", "about 10 h"]


def test_the_old_name_of_check_results_still_works(tmp_path, capsys):
    (tmp_path / "broken.json").write_text('{"schema_name": "elimscan-result"}')
    code, _, err = run_cli(capsys, ["validate-results", tmp_path / "broken.json"])
    assert code == ExitCode.CONFIG
    assert err.splitlines()[0] == "note: 'elimscan validate-results' is now 'elimscan check-results' (the old name still works for now)"
    assert run_cli(capsys, ["check-results", tmp_path / "broken.json"])[0] == ExitCode.CONFIG


# --- progress of a run -----------------------------------------------------------------------------------------------


class FakeClock:
    """A clock the test moves by hand (s)."""

    def __init__(self):
        self.now = 0.0

    def __call__(self) -> float:
        return self.now


def test_the_run_counts_one_counter_and_shows_time_left_only_after_a_comparable_step(caplog):
    import logging

    from elimscan.cli.progress import RunProgress

    clock = FakeClock()
    progress = RunProgress(["substrate", "base", "job", "job"], clock)
    caplog.set_level(logging.INFO, logger="elimscan")
    for at, step, message in ((0, 0, "substrate 'a'"), (5, -1, "a: conformer search"), (10, 1, "base 'b'"),
                              (12, 2, "paths of a + b"), (612, 3, "paths of a + c")):
        clock.now = at
        progress(step, 4 if step >= 0 else -1, message)
    lines = [r.getMessage() for r in caplog.records]
    assert lines[0] == "[1/4] substrate 'a' (0 s elapsed)"
    assert lines[1] == "    a: conformer search (5 s elapsed)"
    assert lines[2] == "[2/4] base 'b' (10 s elapsed)"  # a base is still to come: no base measured yet
    assert lines[3] == "[3/4] paths of a + b (12 s elapsed)"  # the substrate's 10 s say nothing about paths
    assert lines[4] == "[4/4] paths of a + c (10 min elapsed, about 10 min left)"  # one job measured: 600 s
    clock.now = 1000
    progress.close()
    assert progress.durations_s == {"substrate": [10.0], "base": [2.0], "job": [600.0, 388.0]}


def test_a_run_reports_one_counter_from_the_first_step_to_the_last(tmp_path):
    from elimscan.config import parse_config as parse
    from elimscan.pipeline.compute import run_steps
    from elimscan.pipeline.jobs import compute_run
    from toyjobs import toy_engine

    config = parse(TOY_SETTINGS + "name: counter\nsubstrates:\n  - {name: chloroethane, smiles: \"CCCl\"}\n"
                   "  - {name: chloropropane, smiles: \"CCCCl\"}\nbases:\n  - {name: methoxide}\n  - {name: ethoxide}\n")
    calls = []
    compute_run(config, toy_engine(config.method), lambda done, total, message: calls.append((done, total, message)))
    counted = [(done, total) for done, total, _ in calls if done >= 0]
    assert run_steps(config) == ["substrate"] * 2 + ["base"] * 2 + ["job"] * 4
    assert counted == [(k, 8) for k in range(8)]  # one total, steps 1 to 8 in order
