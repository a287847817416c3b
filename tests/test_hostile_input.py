"""Hostile input: inputs that gave a silent wrong answer, a hang or an "unexpected internal error" (issue 21).

Each case asserts the exit code, the first line of the message (the error line, which names the file, key
and YAML line where there is one), no traceback on stderr, and that nothing finished is lost: a YAML error
also stops ``run --overwrite`` before the finished result in its folder is touched. Everything runs in this
process on the toy engine (``toyjobs``), except the closed and full standard output, which need a real one.
The fault injection of ``run`` (full disk at each write, a kill, concurrent commands) is in ``test_run_faults.py``.
"""

from __future__ import annotations

import os
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import pytest

from elimscan.cli import build_parser, main
from elimscan.config import MAX_CONFIG_BYTES
from elimscan.errors import ExitCode
from toyjobs import TOY_SETTINGS

ROOT = Path(__file__).resolve().parents[1]
TESTS = Path(__file__).resolve().parent

#: one toy-engine job; the substrate sits on line 7, the base on line 9
GOOD = TOY_SETTINGS + """\
name: hostile
substrates:
  - {name: chloroethane, smiles: "CCCl"}
bases:
  - {name: methoxide, smiles: "C[O-]"}
"""
BATCH = TOY_SETTINGS + """\
name: hostile-batch
substrates_file: more.csv
bases:
  - {name: methoxide}
executor: {workers: 1}
"""
#: 377 bytes that PyYAML expands to 9**10 strings (an "alias bomb"): the duplicate-key walk hung on such a config
ALIAS_BOMB = ('a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]\n'
              + "".join(f"{n}: &{n} [{','.join(['*' + p] * 9)}]\n" for p, n in zip("abcdefghi", "bcdefghij")))
#: chloroethane as methane: the wrong atoms for the substrate's SMILES
METHANE_XYZ = "5\nmethane\nC 0 0 0\nH 0.63 0.63 0.63\nH -0.63 -0.63 0.63\nH -0.63 0.63 -0.63\nH 0.63 -0.63 -0.63\n"
FINISHED = '{"finished": "by an earlier run"}\n'


def cli(capsys, argv: list[str]) -> tuple[int, str]:
    """Run the command line in this process; return (exit code, stderr)."""
    try:
        code = main([str(a) for a in argv])
    except SystemExit as exc:
        code = exc.code
    return int(code), capsys.readouterr().err


def error_line(err: str) -> str:
    """Return the first line of stderr that reports an error (the message a user reads first)."""
    return next((line for line in err.splitlines() if line.startswith(("error (", "unexpected"))), "")


def substrate(smiles: str, extra: str = "") -> str:
    """Return GOOD with another substrate SMILES (and extra keys in its mapping)."""
    return GOOD.replace('smiles: "CCCl"}', f'smiles: "{smiles}"{extra}}}')


def setting(text: str) -> str:
    """Return GOOD with a top-level setting after its name line (line 6)."""
    return GOOD.replace("name: hostile\n", f"name: hostile\n{text}\n")


@dataclass(frozen=True)
class Yaml:
    """A config that 'plan' and 'run --overwrite' must both refuse the same way."""

    text: str
    error_type: str
    first_line: str  # must be in the error line, after "error (TYPE): CONFIG"
    files: tuple[tuple[str, str], ...] = ()


YAML_CASES = {
    # silent wrong answers
    "names_that_become_one_folder": Yaml(GOOD.replace("bases:", '  - {name: "ethyl/halide", smiles: "CCBr"}\n'
                                                      '  - {name: ethyl halide, smiles: "CCI"}\nbases:'), "config_error",
                                         ": key 'substrates', line 7: names 'ethyl/halide' and 'ethyl halide' both become "
                                         "the file name 'ethyl_halide'"),
    "multiplicity_1001": Yaml(substrate("CCBr", ", multiplicity: 1001"), "config_error",
                              ": key 'substrates.0.multiplicity', line 7: multiplicity 1001: elimscan handles closed-shell "
                              "molecules only"),
    "triplet_base": Yaml(GOOD.replace('smiles: "C[O-]"}', 'smiles: "C[O-]", multiplicity: 3}'), "config_error",
                         ": key 'bases.0.multiplicity', line 9: multiplicity 3: elimscan handles closed-shell"),
    "radical_odd_electrons": Yaml(substrate("C[CH]CCl"), "structure_error",
                                  ", key 'substrates.0.smiles', line 7: substrate 'chloroethane' 'C[CH]CCl' has 1 unpaired "
                                  "electron(s) on C atom 2 (41 electrons, an odd count)"),
    "base_60_temperature": Yaml(setting("method: {temperature_K: 298:15}"), "config_error",
                                ": key 'method.temperature_K', line 6: Input should be a valid number, unable to parse "
                                "string as a number (got '298:15'): numbers are read as plain decimals (YAML 1.1 would "
                                "read this as base 60); did you mean 298.15?"),
    "infinite_temperature": Yaml(setting("method: {temperature_K: .inf}"), "config_error",
                                 ": key 'method.temperature_K', line 6: temperature inf K is outside 150-1000 K"),
    "tiny_temperature": Yaml(setting("method: {temperature_K: 1e-300}"), "config_error",
                             ": key 'method.temperature_K', line 6: temperature 1e-300 K is outside 150-1000 K"),
    "infinite_accuracy": Yaml(setting("method: {accuracy: .inf}"), "config_error",
                              ": key 'method.accuracy', line 6: Input should be a finite number"),
    "octal_looking_seed_is_decimal_hex_is_text": Yaml(setting("seed: 0x10"), "config_error",
                                                      ": key 'seed', line 6: Input should be a valid integer"),
    "seed_minus_one": Yaml(setting("seed: -1"), "config_error",
                           ": key 'seed', line 6: seed -1 is outside 0 to 2147483647: RDKit's random seed is a 32-bit"),
    "seed_2_to_the_63": Yaml(setting(f"seed: {2**63}"), "config_error", f": key 'seed', line 6: seed {2**63} is outside"),
    "seed_2_to_the_31": Yaml(setting(f"seed: {2**31}"), "config_error", f": key 'seed', line 6: seed {2**31} is outside"),
    "text_after_a_space_in_smiles": Yaml(substrate("CC(C)Br 2-bromopropane, please use CCCCl"), "structure_error",
                                         ", key 'substrates.0.smiles', line 7: substrate 'chloroethane': SMILES "
                                         "'CC(C)Br 2-bromopropane, please use CCCCl' holds a space: 'CC(C)Br' would be "
                                         "read and '2-bromopropane, please use CCCCl' silently dropped"),
    "deuterium_labels": Yaml(substrate("[2H]C([2H])([2H])CBr"), "structure_error",
                             ", key 'substrates.0.smiles', line 7: substrate 'chloroethane' '[2H]C([2H])([2H])CBr': isotope "
                             "labels (2H atom 1, 2H atom 3, 2H atom 4) are not read"),
    "bad_explicit_smiles": Yaml(GOOD.replace('smiles: "C[O-]"}', 'smiles: "C[O-]", model: {explicit: 1, '
                                                                 'explicit_smiles: "C(C"}}'), "structure_error",
                                ", key 'bases.0.model.explicit_smiles', line 9: base 'methoxide' explicit_smiles: cannot "
                                "parse SMILES 'C(C'"),
    "explicit_molecule_without_donor": Yaml(GOOD.replace('smiles: "C[O-]"}', 'smiles: "C[O-]", model: {explicit: 1, '
                                                                             'explicit_smiles: "CC"}}'), "structure_error",
                                            ", key 'bases.0.model', line 9: base 'methoxide': explicit molecule 'CC' has "
                                            "no O-H or N-H"),
    "geometry_with_the_wrong_atoms": Yaml(substrate("CCCl", ", geometry: methane.xyz"), "structure_error",
                                          ", key 'substrates.0.geometry', line 7: substrate 'chloroethane': the geometry "
                                          "file holds 5 atoms (CHHHH), the SMILES 8 with hydrogens: they must be the same "
                                          "molecule", (("methane.xyz", METHANE_XYZ),)),
    # denial of service
    "alias_bomb": Yaml(ALIAS_BOMB, "config_error", ": line 1: YAML anchors and aliases ('&name', '*name') are not accepted"),
    "deep_nesting": Yaml(setting("x: " + "[" * 5000 + "]" * 5000), "config_error",
                         ": line 6: the config nests mappings and lists more than 20 deep"),
    "too_many_heavy_atoms": Yaml(substrate("C" * 250 + "Br"), "structure_error",
                                 ", key 'substrates.0.smiles', line 7: substrate 'chloroethane' 'CCCCC"),
    "a_billion_conformers": Yaml(GOOD.replace("max_relaxations: 2}", "max_relaxations: 2, max_embeddings: 1000000000}"),
                                 "config_error", ": key 'conformers.max_embeddings', line 2: Input should be less than or "
                                                 "equal to 1000"),
    # lost work: a name no file system can hold
    "name_of_300_characters": Yaml(GOOD.replace("name: chloroethane", "name: " + "x" * 300), "config_error",
                                   ": key 'substrates.0.name', line 7: name 'xxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxxx...' "
                                   "has 300 bytes as a file name; at most 100"),
}


@pytest.mark.parametrize("name", sorted(YAML_CASES))
def test_a_hostile_config_is_refused_by_plan_and_run(name, tmp_path, capsys):
    case = YAML_CASES[name]
    config = tmp_path / "run.yaml"
    config.write_text(case.text)
    for rel, text in case.files:
        (tmp_path / rel).write_text(text)
    (tmp_path / "out").mkdir()
    (tmp_path / "out" / "results.json").write_text(FINISHED)
    for argv in (["plan", config], ["run", config, "--out", tmp_path / "out", "--overwrite",
                                        "--engine", "toyjobs:toy_engine"]):
        code, err = cli(capsys, argv)
        assert code == ExitCode.CONFIG, err
        assert err.splitlines()[0].startswith(f"error ({case.error_type}): {config}{case.first_line}"), err
        assert "Traceback" not in err
    assert (tmp_path / "out" / "results.json").read_text() == FINISHED  # nothing lost
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == ["results.json"]  # nor touched


def test_the_batch_refuses_the_clashing_names_with_the_same_rule(tmp_path, capsys):
    config = tmp_path / "batch.yaml"
    config.write_text(YAML_CASES["names_that_become_one_folder"].text)
    code, err = cli(capsys, ["batch", config, "--out", tmp_path / "out", "--engine", "toyjobs:toy_engine"])
    assert code == ExitCode.CONFIG
    assert error_line(err).startswith(f"error (config_error): {config}: key 'substrates', line 7: names 'ethyl/halide' "
                                      "and 'ethyl halide' both become the file name 'ethyl_halide'"), err
    assert "Traceback" not in err and not (tmp_path / "out").exists()


def test_the_alias_bomb_is_refused_by_the_batch_too(tmp_path, capsys):
    config = tmp_path / "batch.yaml"
    config.write_text(BATCH + ALIAS_BOMB)
    code, err = cli(capsys, ["batch", config, "--out", tmp_path / "out"])
    assert code == ExitCode.CONFIG
    assert error_line(err).startswith(f"error (config_error): {config}: line 10: YAML anchors and aliases"), err
    assert not (tmp_path / "out").exists()


def test_no_stays_a_name_and_a_switch_still_reads_it(tmp_path, capsys):
    from elimscan.config import parse_config

    text = GOOD.replace("{name: methoxide", "{name: no").replace("substitution: false", "substitution: no")
    config = parse_config(text)  # YAML 1.1 would make the base's name the boolean false, refused as a name
    assert config.bases[0].name == "no" and config.paths.substitution is False
    (tmp_path / "run.yaml").write_text(text)
    assert main(["plan", str(tmp_path / "run.yaml")]) == ExitCode.OK
    assert "1 substrate(s), 1 base(s), 1 job(s)" in capsys.readouterr().out


def test_a_config_over_the_size_bound_is_refused_unread(tmp_path, capsys):
    config = tmp_path / "run.yaml"
    config.write_text(GOOD + "# " + "x" * MAX_CONFIG_BYTES + "\n")
    code, err = cli(capsys, ["plan", config])
    assert code == ExitCode.CONFIG
    assert err.splitlines()[0] == (f"error (config_error): {config}: the config has more than 1,000,000 bytes (a config "
                                   "lists settings and a few molecules: give many substrates in a 'substrates_file')")


def test_a_config_that_is_not_utf8_names_the_byte_and_line(tmp_path, capsys):
    config = tmp_path / "run.yaml"
    config.write_bytes(GOOD.encode() + b"# caf\xe9\n")
    code, err = cli(capsys, ["plan", config])
    assert code == ExitCode.CONFIG
    assert err.splitlines()[0] == (f"error (config_error): {config}: the config is not UTF-8 text (byte 0xe9 at offset "
                                   f"{len(GOOD) + 5}, line 10); save it as UTF-8")
    assert "Traceback" not in err


def test_a_job_too_large_for_one_night_is_warned_not_refused(tmp_path, capsys):
    config = tmp_path / "run.yaml"
    config.write_text(substrate("C" * 60 + "Br"))
    code, err = cli(capsys, ["plan", config])
    assert code == ExitCode.OK, err
    assert err.splitlines()[0] == ("chloroethane__methoxide: 63 heavy atoms in substrate and base, more than 60: such a "
                                   "job is unlikely to finish overnight on one core (a rough bound from one measured "
                                   "job, until the benchmark measures costs by size); a batch with "
                                   "executor.time_limit_seconds stops it in time")


# --- substrates files that stopped with an internal error -----------------------------------------------------

CSV_CASES = {
    "header_only": ("name,smiles\n", "substrates file 'more.csv' has a header but no substrate rows"),
    "carriage_returns_only_header": ("name,smiles\r", "substrates file 'more.csv' has a header but no substrate rows"),
    "unterminated_quote": ('name,smiles\n"propyl,CCCCl\n', "substrates file 'more.csv' line 2: a quote (\") opened here "
                                                          "is never closed (the field runs on to the end of the file)"),
    "quote_swallowing_rows": ('name,smiles\npropyl,"CCCCl\nbutyl,CCCCCl\n', "substrates file 'more.csv' line 2: a quote "
                                                                           "(\") opened here is never closed"),
    "no_row_with_a_smiles": ("name,smiles\npropyl,\n", "no substrate to compute: none in the config, and no row of "
                                                       "'more.csv' has a name and a SMILES (1 row(s) read)"),
}


@pytest.mark.parametrize("name", sorted(CSV_CASES))
def test_a_broken_substrates_file_is_an_input_error(name, tmp_path, capsys):
    text, words = CSV_CASES[name]
    (tmp_path / "batch.yaml").write_text(BATCH)
    (tmp_path / "more.csv").write_text(text, newline="")
    for argv in (["plan", tmp_path / "batch.yaml"], ["batch", tmp_path / "batch.yaml", "--out", tmp_path / "out"]):
        code, err = cli(capsys, argv)
        assert code == ExitCode.CONFIG, err
        assert error_line(err).startswith(f"error (config_error): {tmp_path / 'batch.yaml'}, key 'substrates_file', "
                                          f"line 6: {words}"), err
        assert "Traceback" not in err
    assert not (tmp_path / "out").exists()


def test_a_csv_with_carriage_returns_only_is_read(tmp_path, capsys):
    (tmp_path / "batch.yaml").write_text(BATCH)
    (tmp_path / "more.csv").write_text("name,smiles\rpropyl,CCCCl\rbutyl,CCCCCl\r", newline="")
    assert main(["plan", str(tmp_path / "batch.yaml")]) == ExitCode.OK
    out = capsys.readouterr().out
    assert "2 substrate(s), 1 base(s), 2 job(s)" in out and "will fail" not in out


def test_a_scheduler_that_is_not_an_address_is_an_input_error(tmp_path, capsys):
    (tmp_path / "batch.yaml").write_text(BATCH)
    (tmp_path / "more.csv").write_text("name,smiles\npropyl,CCCCl\n")
    code, err = cli(capsys, ["batch", tmp_path / "batch.yaml", "--out", tmp_path / "out", "--scheduler", "not a url"])
    assert code == ExitCode.CONFIG
    assert error_line(err) == ("error (config_error): key 'executor': command-line options: 'not a url' is not a Dask "
                               "scheduler address (e.g. tcp://10.0.0.5:8786 or host:8786)")
    assert "Traceback" not in err and not (tmp_path / "out").exists()


# --- result files that stopped with an internal error ---------------------------------------------------------

BAD_RESULTS = {"binary": bytes(range(256)) * 4, "deeply_nested": b"[" * 100_000 + b"]" * 100_000}


@pytest.mark.parametrize("kind", sorted(BAD_RESULTS))
def test_a_binary_or_deeply_nested_results_file_is_refused(kind, tmp_path, capsys):
    (tmp_path / "results.json").write_bytes(BAD_RESULTS[kind])
    path = tmp_path / "results.json"
    why = ("not UTF-8 text (byte 0x80 at offset 128)" if kind == "binary"
           else "(top level): Invalid JSON: recursion limit exceeded at line 1 column 202")
    expected = {
        "summary": (ExitCode.OUTPUT, f"error (output_error): '{path}' is not " + (
            f"an elimscan result: {why}" if kind == "binary" else f"a valid elimscan result: {why}")),
        "report": (ExitCode.OUTPUT, f"error (output_error): '{path}' does not match the results schema (1 problem(s), "
                                    "listed above)"),
        "check-results": (ExitCode.CONFIG, f"{path}: (file): " + (
            f"'{path}' is not an elimscan result: {why}" if kind == "binary"
            else "the JSON nests too deep to be an elimscan result")),
    }
    for command, (exit_code, first) in expected.items():
        code, err = cli(capsys, [command, path if command == "check-results" else tmp_path])
        assert code == exit_code, err
        assert (error_line(err) if command != "check-results" else err.splitlines()[0]) == first, err
        assert "Traceback" not in err
    assert (tmp_path / "results.json").read_bytes() == BAD_RESULTS[kind]
    assert not (tmp_path / "report.html").exists()


# --- standard output closed or full, and the message of a bug -------------------------------------------------

def elimscan(*args: str, **kwargs) -> subprocess.Popen:
    """Start the elimscan command in a subprocess (toyjobs importable); return the process."""
    path = os.pathsep.join([str(TESTS / "support"), str(ROOT / "workflow"), os.environ.get("PYTHONPATH", "")])
    return subprocess.Popen([sys.executable, "-m", "elimscan", *map(str, args)], stderr=subprocess.PIPE, text=True,
                            env={**os.environ, "PYTHONPATH": path}, **kwargs)


@pytest.fixture(scope="module")
def finished_batch(tmp_path_factory) -> Path:
    """Return a finished one-job toy batch folder (for the commands that read one)."""
    folder = tmp_path_factory.mktemp("batch")
    (folder / "batch.yaml").write_text(BATCH)
    (folder / "more.csv").write_text("name,smiles\npropyl,CCCCl\n")
    assert main(["batch", str(folder / "batch.yaml"), "--out", str(folder / "out"), "-q",
                 "--engine", "toyjobs:toy_engine"]) == ExitCode.OK
    return folder / "out"


def test_a_reader_that_closes_the_pipe_ends_the_command_quietly(finished_batch):
    for command in ("status", "summary"):  # as 'elimscan status DIR | head -3' when head leaves first
        process = elimscan(command, finished_batch, stdout=subprocess.PIPE)
        process.stdout.close()
        err = process.stderr.read()
        assert process.wait(120) == ExitCode.PIPE_CLOSED == 141
        assert err == ""  # no message and no traceback: the reader has what it wanted


def test_a_full_standard_output_is_an_output_error(finished_batch):
    with open("/dev/full", "w") as full:
        process = elimscan("summary", finished_batch, stdout=full)
        err = process.stderr.read()
    assert process.wait(120) == ExitCode.OUTPUT
    assert err.splitlines() == ["error (output_error): cannot write to standard output: No space left on device"]
    assert (finished_batch / "results.json").exists()


def test_the_message_of_a_bug_points_to_a_real_log_or_a_command_the_parser_takes(tmp_path, capsys, monkeypatch):
    config = tmp_path / "run.yaml"
    config.write_text(GOOD)

    def bug(*args):
        raise RuntimeError("a bug")

    monkeypatch.setattr("elimscan.cli.plan.check_inputs", bug)
    code, err = cli(capsys, ["plan", config, "-q"])
    assert code == ExitCode.INTERNAL
    assert err.splitlines() == [f"unexpected internal error (a bug); see the traceback with: elimscan plan -v {config}"]
    rerun = build_parser().parse_args(err.split("see the traceback with: elimscan ")[1].split())
    assert rerun.verbosity == 1 and rerun.command == "plan"  # the parser takes the suggested command
    monkeypatch.setattr("elimscan.cli.run.check_inputs", bug)
    code, err = cli(capsys, ["run", config, "--out", tmp_path / "out"])
    assert code == ExitCode.INTERNAL and not (tmp_path / "out").exists()  # no log file was opened: say how to see it
    assert error_line(err) == f"unexpected internal error (a bug); see the traceback with: elimscan run -v {config} --out {tmp_path / 'out'}"
