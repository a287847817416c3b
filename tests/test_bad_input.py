"""The catalogue of bad inputs: each gives its documented exit code, the error class, a message that names
the offending input (file, key path and YAML line; substrate or base name and SMILES), no traceback on the
terminal, and loses no finished result.

The cases run the real command line in this process (``cli.main`` with stderr captured), which is what
the terminal would show; ``test_the_terminal_never_shows_a_traceback`` repeats a few in a subprocess.
None of them needs GFN2-xTB: input errors stop before any calculation, and the batch cases compute on the
toy engine of ``toyjobs.py``.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from dataclasses import dataclass, field
from pathlib import Path

import pytest

from elimscan.cli import main
from elimscan.errors import ExitCode
from toyjobs import TOY_SETTINGS

ROOT = Path(__file__).resolve().parents[1]
TESTS = Path(__file__).resolve().parent

#: a single-job config; the cases below change one thing each (line numbers in the cases refer to it)
GOOD = """\
name: catalogue
method: {backend: tblite, solvent: {model: alpb, name: ethanol}, temperature_K: 298.15}
optimizer: {name: bfgs, fmax_eV_per_A: 0.05}
substrates:
  - {name: chloroethane, smiles: "CCCl"}
bases:
  - {name: methoxide, smiles: "C[O-]"}
"""

#: settings that make a toy-engine job take about a second
FAST = TOY_SETTINGS

BATCH = FAST + """\
name: catalogue-batch
substrates:
  - {name: chloroethane, smiles: "CCCl"}
substrates_file: more.csv
bases:
  - {name: methoxide}
executor: {workers: 1}
"""


def with_substrate(smiles: str, extra: str = "") -> str:
    """Return GOOD with another substrate SMILES (and extra keys inside its mapping)."""
    return GOOD.replace('smiles: "CCCl"}', f'smiles: "{smiles}"{extra}}}')


def with_base(smiles: str) -> str:
    """Return GOOD with another base SMILES."""
    return GOOD.replace('smiles: "C[O-]"}', f'smiles: "{smiles}"}}')


@dataclass(frozen=True)
class Case:
    """One bad input: files to write, the command (``{d}`` is the test folder), and what must come out."""

    files: dict[str, str]
    argv: tuple[str, ...]
    exit_code: int
    error_type: str | None
    words: tuple[str, ...]
    also_run: bool = True  # a YAML input error must also stop 'run' before anything is written
    setup: str | None = None  # name of a folder preparation (see prepare())
    keep: tuple[str, ...] = field(default=())  # files that must be unchanged afterwards


def validate(text: str, *words: str, error_type: str = "config_error", **extra) -> Case:
    return Case({"run.yaml": text}, ("plan", "{d}/run.yaml"), ExitCode.CONFIG, error_type, words, **extra)


CASES: dict[str, Case] = {
    # --- the YAML itself
    "yaml_syntax_error": validate(GOOD.replace("substrates:\n", "substrates: [\n"), "YAML syntax error", "line 5"),
    "unknown_key_did_you_mean": validate(GOOD.replace("{name: methoxide", "{nmae: methoxide"),
                                         "key 'bases.0.nmae', line 7", "unknown key 'nmae'; did you mean 'name'?"),
    "wrong_type": validate(GOOD.replace("temperature_K: 298.15", "temperature_K: warm"),
                           "key 'method.temperature_K', line 2", "valid number", "'warm'"),
    "negative_temperature": validate(GOOD.replace("temperature_K: 298.15", "temperature_K: -5"),
                                     "key 'method.temperature_K', line 2", "temperature -5 K is outside 150-1000 K"),
    "zero_temperature": validate(GOOD.replace("temperature_K: 298.15", "temperature_K: 0"),
                                 "key 'method.temperature_K', line 2", "temperature 0 K is outside 150-1000 K"),
    "empty_substrate_list": validate(GOOD.replace('substrates:\n  - {name: chloroethane, smiles: "CCCl"}\n',
                                                  "substrates: []\n"), "key 'substrates', line 4", "at least 1 item"),
    "duplicate_names": validate(GOOD.replace("bases:", '  - {name: chloroethane, smiles: "CCBr"}\nbases:'),
                                "key 'substrates', line 5", "duplicate name 'chloroethane' (entries 0 and 1"),
    "repeated_key": validate(GOOD + "name: second\n", "key 'name', line 8", "appears twice (first on line 1)"),
    "unknown_built_in_base": validate(GOOD.replace('{name: methoxide, smiles: "C[O-]"}', "{name: superbase}"),
                                      "key 'bases.0', line 7", "base 'superbase' needs a smiles", "ethoxide"),
    "pair_names_unknown_substrate": validate(GOOD + "pairs:\n  - {substrate: chloropropane, base: methoxide}\n",
                                             "unknown substrate 'chloropropane' (known: chloroethane)"),
    "dask_without_address": validate(GOOD + "executor: {kind: dask}\n", "key 'executor'",
                                     "kind 'dask' needs an address"),
    # --- solvents and the backend (tables measured on the pinned backends, see solvents.py)
    "unknown_solvent_lists_supported": validate(GOOD.replace("name: ethanol", "name: ethanol-ish"),
                                                "key 'method', line 2", "'ethanol-ish'",
                                                "acetone, acetonitrile, aniline"),
    "solvent_model_backend_cannot_do": validate(GOOD.replace("backend: tblite", "backend: xtb"),
                                                "backend 'xtb' cannot do solvent model 'alpb' with GFN2-xTB",
                                                "it supports: gbsa"),
    "gas_phase_with_anionic_base": validate(GOOD.replace("{model: alpb, name: ethanol}", "{model: none}"),
                                            "key 'method.solvent.model', line 2",
                                            "free ions appear: base 'methoxide' (charge -1)"),
    # --- substrates: SMILES and perception (before any calculation)
    "unparsable_smiles": validate(with_substrate("CC(Cl"), "key 'substrates.0.smiles', line 5",
                                  "substrate 'chloroethane': cannot parse SMILES 'CC(Cl'",
                                  error_type="structure_error"),
    "no_leaving_group": validate(with_substrate("CCCC"), "key 'substrates.0.smiles', line 5",
                                 "substrate 'chloroethane'", "'CCCC'", "no leaving group found",
                                 error_type="structure_error"),
    "several_leaving_groups_without_map": validate(with_substrate("ClCCCBr"), "substrate 'chloroethane'",
                                                   "'ClCCCBr'", "several leaving groups", "atom-map number",
                                                   error_type="structure_error"),
    "map_on_a_non_leaving_atom": validate(with_substrate("[CH3:1]CCl"), "substrate 'chloroethane'", "'[CH3:1]CCl'",
                                          "atom map :1 is on C atom 1, which is not a leaving atom",
                                          error_type="structure_error"),
    # neopentyl bromide: C-alpha's only carbon neighbour is quaternary, no beta hydrogen (common practice:
    # any organic chemistry textbook, e.g. Clayden, Greeves & Warren, Organic Chemistry, 2nd ed. 2012, ch. 17)
    "no_beta_hydrogen_neopentyl": validate(with_substrate("CC(C)(C)CBr"), "substrate 'chloroethane'",
                                           "'CC(C)(C)CBr'", "no beta hydrogen", "C atom 2 carries no hydrogen",
                                           error_type="structure_error"),
    # aryl halides do not undergo E2 at the aromatic carbon (common practice, same textbook)
    "no_beta_hydrogen_aryl_halide": validate(with_substrate("Clc1ccccc1"), "substrate 'chloroethane'", "'Clc1ccccc1'",
                                             "which is aromatic, not sp3", error_type="structure_error"),
    "radical": validate(with_substrate("C[CH]CCl"), "substrate 'chloroethane' 'C[CH]CCl'",
                        "1 unpaired electron(s)", error_type="structure_error"),
    "wrong_total_charge": validate(with_substrate("CCCl", ", charge: 1"), "substrate 'chloroethane' 'CCCl'",
                                   "charge 1 does not match the structure", error_type="structure_error"),
    "impossible_multiplicity": validate(with_substrate("CCCl", ", multiplicity: 2"),
                                        "key 'substrates.0.multiplicity', line 5",
                                        "multiplicity 2: elimscan handles closed-shell molecules only"),
    # GFN2-xTB is parametrised for H-Rn (Bannwarth, Ehlert & Grimme, J. Chem. Theory Comput. 2019, 15, 1652)
    "element_outside_gfn2_range": validate(with_substrate("ClCC[U]"), "substrate 'chloroethane' 'ClCC[U]'",
                                           "element U", "outside GFN2-xTB's range H-Rn", error_type="structure_error"),
    "salt_with_counter_ion": validate(with_substrate("CCCl.[Na+]"), "substrate 'chloroethane'",
                                      "holds 2 separate molecules", error_type="structure_error"),
    "open_double_bond_stereo": validate(with_substrate("CC=CC(Cl)C"), "substrate 'chloroethane'",
                                        "stereochemistry left unspecified", "(E/Z)", error_type="structure_error"),
    "missing_geometry_file": validate(with_substrate("CCCl", ", geometry: nowhere.xyz"),
                                      "key 'substrates.0.geometry'", "cannot read geometry file", "nowhere.xyz"),
    # --- bases
    "base_without_basic_atom": validate(with_base("CCCC"), "key 'bases.0.smiles', line 7", "base 'methoxide'",
                                        "'CCCC'", "no basic atom found", error_type="structure_error"),
    "base_is_the_substrate": validate(with_base("ClCC"), "key 'bases.0.smiles', line 7",
                                      "base 'methoxide' ('ClCC') is the same molecule as substrate 'chloroethane'",
                                      error_type="structure_error"),
    "base_outside_gfn2_range": validate(with_base("C[Og-]"), "base 'methoxide' 'C[Og-]'", "element Og",
                                        error_type="structure_error"),
    # --- files and folders
    "missing_config_file": Case({}, ("plan", "{d}/nowhere.yaml"), ExitCode.CONFIG, "config_error",
                                ("cannot read config file", "nowhere.yaml"), also_run=False),
    "missing_substrates_file": Case({"batch.yaml": BATCH}, ("plan", "{d}/batch.yaml"), ExitCode.CONFIG,
                                    "config_error", ("key 'substrates_file'", "cannot read substrates file",
                                                     "more.csv"), also_run=False),
    "substrates_file_unknown_column": Case({"batch.yaml": BATCH, "more.csv": "name,smile\na,CCCl\n"},
                                           ("plan", "{d}/batch.yaml"), ExitCode.CONFIG, "config_error",
                                           ("more.csv' line 1: unknown column 'smile'; did you mean 'smiles'?",),
                                           also_run=False),
    "bad_smiles_in_a_batch_yaml_stops_the_batch": Case(
        {"batch.yaml": BATCH.replace('smiles: "CCCl"', 'smiles: "CC(Cl"'), "more.csv": "name,smiles\na,CCCCl\n"},
        ("batch", "{d}/batch.yaml", "--out", "{d}/out"), ExitCode.CONFIG, "structure_error",
        ("batch.yaml, key 'substrates.0.smiles', line 7: substrate 'chloroethane': cannot parse SMILES 'CC(Cl'",),
        also_run=False),
    "batch_keys_given_to_run": Case({"batch.yaml": BATCH, "more.csv": "name,smiles\na,CCCCl\n"},
                                    ("run", "{d}/batch.yaml", "--out", "{d}/out"), ExitCode.CONFIG, "config_error",
                                    ("uses substrates_file, which only 'elimscan batch' reads",), also_run=False),
    "negative_time_limit_option": Case({"batch.yaml": BATCH, "more.csv": "name,smiles\na,CCCCl\n"},
                                       ("batch", "{d}/batch.yaml", "--out", "{d}/out", "--time-limit", "-1"),
                                       ExitCode.CONFIG, "config_error", ("key 'executor'", "greater than 0"),
                                       also_run=False),
    "zero_stage_time_limit": Case({"batch.yaml": BATCH.replace("executor: {workers: 1}",
                                                               "executor: {workers: 1, stage_time_limit_seconds: 0}"),
                                   "more.csv": "name,smiles\na,CCCCl\n"},
                                  ("batch", "{d}/batch.yaml", "--out", "{d}/out"), ExitCode.CONFIG, "config_error",
                                  ("key 'executor.stage_time_limit_seconds', line 11", "greater than 0"),
                                  also_run=False),
    "usage_error": Case({"run.yaml": GOOD}, ("run", "{d}/run.yaml"), ExitCode.USAGE, None,
                        ("the following arguments are required: --out",), also_run=False),
    "output_folder_holds_a_finished_run": Case({"run.yaml": GOOD}, ("run", "{d}/run.yaml", "--out", "{d}/out"),
                                               ExitCode.OUTPUT, "output_error",
                                               ("already holds a finished run (results.json)", "--overwrite"),
                                               also_run=False, setup="finished_run", keep=("out/results.json",)),
    "batch_into_a_run_folder": Case({"batch.yaml": BATCH, "more.csv": "name,smiles\na,CCCCl\n"},
                                    ("batch", "{d}/batch.yaml", "--out", "{d}/out"), ExitCode.OUTPUT, "output_error",
                                    ("holds the result of 'elimscan run'",), also_run=False, setup="finished_run",
                                    keep=("out/results.json",)),
    "run_into_a_batch_folder": Case({"run.yaml": GOOD}, ("run", "{d}/run.yaml", "--out", "{d}/out"), ExitCode.OUTPUT,
                                    "output_error", ("holds a batch (batch.sqlite)",), also_run=False,
                                    setup="batch_store", keep=("out/batch.sqlite",)),
    "output_folder_under_a_file": Case({"run.yaml": GOOD, "blocker": "a file, not a folder\n"},
                                       ("run", "{d}/run.yaml", "--out", "{d}/blocker/out"), ExitCode.OUTPUT,
                                       "output_error", ("cannot write to output folder", "blocker/out",
                                                        "Not a directory"), also_run=False, keep=("blocker",)),
    "batch_folder_under_a_file": Case({"batch.yaml": BATCH, "more.csv": "name,smiles\na,CCCCl\n",
                                       "blocker": "a file\n"}, ("batch", "{d}/batch.yaml", "--out", "{d}/blocker/out"),
                                      ExitCode.OUTPUT, "output_error", ("cannot create output folder", "blocker/out"),
                                      also_run=False, keep=("blocker",)),
    "status_of_a_folder_without_batch": Case({}, ("status", "{d}"), ExitCode.OUTPUT, "output_error",
                                             ("no batch store",), also_run=False),
    "report_without_results": Case({}, ("report", "{d}"), ExitCode.OUTPUT, "output_error",
                                   ("results.json' not found",), also_run=False),
    "summary_of_a_broken_result": Case({"results.json": '{"schema_name": "elimscan-result"}'}, ("summary", "{d}"),
                                       ExitCode.OUTPUT, "output_error", ("is not a valid elimscan result",),
                                       also_run=False, keep=("results.json",)),
}


def prepare(folder: Path, setup: str | None) -> None:
    """Give the output folder {folder}/out the state a case needs."""
    if setup == "finished_run":
        (folder / "out").mkdir()
        (folder / "out" / "results.json").write_text('{"finished": "by an earlier run"}\n')
    elif setup == "batch_store":
        from elimscan.batch.store import STORE_FILE, JobStore

        (folder / "out").mkdir()
        JobStore(folder / "out" / STORE_FILE).close()


def cli(capsys, argv: list[str]) -> tuple[int, str]:
    """Run the elimscan command line in this process; return (exit code, what it wrote to stderr)."""
    try:
        code = main(argv)
    except SystemExit as exc:  # argparse usage errors
        code = exc.code
    return int(code), capsys.readouterr().err


def test_the_catalogue_has_at_least_25_cases():
    assert len(CASES) >= 25
    assert {c.exit_code for c in CASES.values()} >= {ExitCode.USAGE, ExitCode.CONFIG, ExitCode.OUTPUT}


@pytest.mark.parametrize("name", sorted(CASES))
def test_bad_input(name, tmp_path, capsys):
    case = CASES[name]
    for rel, text in case.files.items():
        (tmp_path / rel).write_text(text)
    prepare(tmp_path, case.setup)
    kept = {rel: (tmp_path / rel).read_bytes() for rel in case.keep}
    commands = [case.argv]
    if case.also_run:  # the same YAML given to 'run' stops before the output folder is touched
        commands.append(("run", case.argv[1], "--out", "{d}/out"))
    for argv in commands:
        code, err = cli(capsys, [a.format(d=tmp_path) for a in argv])
        assert code == case.exit_code, err
        if case.error_type is not None:
            assert f"error ({case.error_type}): " in err, err
        for words in case.words:
            assert words in err, err
        assert "Traceback" not in err
    if case.exit_code == ExitCode.CONFIG:
        assert not (tmp_path / "out").exists()  # input errors stop before anything is started or written
    for rel, content in kept.items():  # no finished result was lost or changed
        assert (tmp_path / rel).read_bytes() == content


def elimscan(*args: str, env: dict | None = None, timeout: float = 300) -> subprocess.CompletedProcess:
    """Run the elimscan command in a subprocess (toyjobs importable by its workers); return the completed process."""
    path = os.pathsep.join([str(TESTS / "support"), str(ROOT / "workflow"), os.environ.get("PYTHONPATH", "")])
    return subprocess.run([sys.executable, "-m", "elimscan", *args], capture_output=True, text=True, timeout=timeout,
                          env={**os.environ, "PYTHONPATH": path, **(env or {})})


def test_the_terminal_never_shows_a_traceback(tmp_path):
    for name in ("unknown_key_did_you_mean", "no_beta_hydrogen_neopentyl", "output_folder_under_a_file"):
        case = CASES[name]
        for rel, text in case.files.items():
            (tmp_path / rel).write_text(text)
        done = elimscan(*[a.format(d=tmp_path) for a in case.argv])
        assert done.returncode == case.exit_code, done.stderr
        assert f"error ({case.error_type})" in done.stderr and case.words[-1] in done.stderr
        assert "Traceback" not in done.stderr and "Traceback" not in done.stdout


def test_a_bad_csv_row_fails_only_its_own_job(tmp_path, capsys, monkeypatch):
    (tmp_path / "batch.yaml").write_text(BATCH)
    (tmp_path / "more.csv").write_text("name,smiles\n2-chloropropane,CC(C)Cl\nbroken,CC(Cl\nneopentyl,CC(C)(C)CBr\n")
    code = main(["plan", str(tmp_path / "batch.yaml")])
    out = capsys.readouterr().out
    assert code == ExitCode.OK, out
    model = ("3 explicit conjugate-acid molecule(s), lowest of 5 embeddings; default for an alkoxide in a protic solvent "
             "(ethanol)")
    assert (f"broken__methoxide: broken + methoxide ({model}), ALPB(ethanol); will fail: more.csv line 3: substrate "
            "'broken': cannot parse SMILES 'CC(Cl'") in out
    assert f"neopentyl__methoxide: neopentyl + methoxide ({model}), ALPB(ethanol); will fail: more.csv line 4" in out
    assert "4 job(s)" in out and "for 2 job(s)" in out  # two of the four fail on their input: no time for them
    code, err = cli(capsys, ["batch", str(tmp_path / "batch.yaml"), "--out", str(tmp_path / "out"),
                             "--engine", "toyjobs:toy_engine"])
    assert code == ExitCode.JOBS_FAILED, err
    assert "Traceback" not in err
    jobs = {j["job_id"]: j for j in json.loads((tmp_path / "out" / "results.json").read_text())["jobs"]}
    assert jobs["chloroethane__methoxide"]["status"] == jobs["2-chloropropane__methoxide"]["status"] == "ok"
    assert jobs["broken__methoxide"]["error"]["error_type"] == "structure_error"
    assert "more.csv line 3" in jobs["broken__methoxide"]["error"]["error_message"]
    assert "no beta hydrogen" in jobs["neopentyl__methoxide"]["error"]["error_message"]
