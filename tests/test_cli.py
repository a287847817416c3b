"""The elimscan command end to end: exit codes, no tracebacks on the terminal, schema-valid results."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest

from elimscan.errors import ExitCode
from toyjobs import TOY_SETTINGS

ROOT = Path(__file__).resolve().parents[1]
SCHEMA = json.loads((ROOT / "results-schema" / "result.schema.json").read_text())

TINY = """\
name: tiny
method: {backend: tblite, solvent: {model: alpb, name: ethanol}}
paths: {approaches: [anti]}
substrates:
  - {name: chloroethane, smiles: "CCCl"}
bases:
  - {name: methoxide, smiles: "C[O-]", model: bare}  # measured bare: pinned against the per-solvent default
"""


def elimscan(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess:
    """Run the elimscan command in a subprocess; return the completed process."""
    return subprocess.run([sys.executable, "-m", "elimscan", *args], capture_output=True, text=True, cwd=cwd, timeout=600)


def write(tmp_path: Path, text: str, name: str = "run.yaml") -> str:
    path = tmp_path / name
    path.write_text(text)
    return str(path)


def test_info_prints_versions():
    done = elimscan("info")
    assert done.returncode == ExitCode.OK
    import importlib.metadata as md

    lines = dict(line.split(None, 1) for line in done.stdout.splitlines())
    for name in ("rdkit", "ase", "numpy", "tblite", "xtb", "sella", "dask", "distributed", "pyscf"):
        assert lines[name] == md.version(name)  # the installed distribution's own metadata
    assert lines["python"] == sys.version.split()[0]
    assert "not installed" not in done.stdout


def test_plan_accepts_the_demo_config_and_prints_to_stdout_also_when_quiet():
    done = elimscan("plan", str(ROOT / "configs" / "demo.yaml"), "-q")
    assert done.returncode == ExitCode.OK, done.stderr
    assert done.stderr == ""
    # (S)-2-chloropentane, C[C@H](Cl)CCC: Cl is the 3rd atom of the SMILES on C-alpha, the 2nd; the beta carbons are
    # the 1st (CH3 -> 1-pentene) and the 4th (CH2 -> 2-pentenes), numbered from 1 as a chemist counts
    assert "leaving group Cl (atom Cl3) on C-alpha C2" in done.stdout
    assert "C1-H7: 3 H (H7, H8, H9)" in done.stdout and "anti -> C=CCCC" in done.stdout
    assert done.stdout.count("C4-H") == 2
    assert "s-2-chloropentane__ethoxide: s-2-chloropentane + ethoxide" in done.stdout
    assert "time: about" in done.stdout and "an estimate" in done.stdout


def test_the_old_command_names_still_work_with_a_notice():
    done = elimscan("validate", str(ROOT / "configs" / "demo.yaml"))
    assert done.returncode == ExitCode.OK, done.stderr
    assert "'elimscan validate' is now 'elimscan plan'" in done.stderr
    assert "leaving group Cl (atom Cl3) on C-alpha C2" in done.stdout
    assert len(done.stderr.strip().splitlines()) == 1


@pytest.mark.parametrize(
    "text, code, words",
    [
        (TINY.replace("{name: methoxide", "{nmae: methoxide"), ExitCode.CONFIG, "line 7: unknown key 'nmae'; did you mean 'name'?"),
        (TINY.replace('"CCCl"', '"CC(Cl"'), ExitCode.CONFIG, "substrate 'chloroethane': cannot parse SMILES 'CC(Cl'"),
        (TINY.replace("backend: tblite", "backend: xtb"), ExitCode.CONFIG,
         "backend 'xtb' cannot do solvent model 'alpb' with GFN2-xTB; it supports: gbsa"),
        (TINY.replace("name: ethanol", "name: ethanol-ish"), ExitCode.CONFIG, "it supports: acetone"),
        (TINY.replace("substrates:", "substrates: [").replace("bases:", "]\nbases:"), ExitCode.CONFIG, "YAML syntax error"),
        (TINY.replace("{model: alpb, name: ethanol}", "{model: none}"), ExitCode.CONFIG,
         "gas phase requested, but free ions appear: base 'methoxide' (charge -1)"),
    ],
)
def test_bad_input_gives_its_exit_code_and_a_message_without_traceback(tmp_path, text, code, words):
    for command in (["plan"], ["run", "--out", str(tmp_path / "out")]):
        done = elimscan(*command[:1], write(tmp_path, text), *command[1:])
        assert done.returncode == code, done.stderr
        assert words in done.stderr
        assert "Traceback" not in done.stderr
    assert not (tmp_path / "out" / "results.json").exists()


def test_missing_config_file_is_a_config_error(tmp_path):
    done = elimscan("plan", str(tmp_path / "nope.yaml"))
    assert done.returncode == ExitCode.CONFIG
    assert "cannot read config file" in done.stderr


def test_usage_error_exit_code():
    assert elimscan("run").returncode == ExitCode.USAGE


@pytest.mark.xtb
def test_run_writes_schema_valid_results_and_refuses_to_overwrite(tmp_path):
    out = tmp_path / "out"
    done = elimscan("run", write(tmp_path, TINY), "--out", str(out))
    assert done.returncode == ExitCode.OK, done.stderr
    document = json.loads((out / "results.json").read_text())
    jsonschema.Draft202012Validator(SCHEMA).validate(document)
    molecules = {m["name"]: m for m in document["molecules"]}
    assert molecules["methoxide"]["charge"] == -1
    assert molecules["chloroethane"]["energy_hartree"] < 0
    assert document["provenance"]["method_label"].startswith("GFN2-xTB/ALPB(ethanol) [tblite")
    assert document["config"]["method"]["solvent"]["name"] == "ethanol"
    # the relaxed geometry is extended XYZ that ASE reads back, with its energy
    import ase.io
    from rdkit import Chem

    base = ase.io.read(out / molecules["methoxide"]["xyz_file"])
    assert base.info["energy_hartree"] == pytest.approx(molecules["methoxide"]["energy_hartree"])
    job = document["jobs"][0]
    # chloroethane: one beta-H class, the CH3, degeneracy 3, product ethylene
    assert [(b["degeneracy"], b["anti"]["product_smiles"]) for b in job["beta_hydrogens"]] == [(3, "C=C")]
    assert job["leaving_group"]["label"] == "Cl" and job["rule"]["rule_major"] == "C=C"
    # the scan trajectory is extended XYZ with energy and dihedral in every frame
    scan = job["beta_hydrogens"][0]["scans"][0]
    frames = ase.io.read(out / scan["xyz_file"], index=":")
    assert len(frames) == len(scan["points"]) == 24
    assert all("energy_hartree" in f.info and -180 < f.info["dihedral_deg"] <= 180 for f in frames)
    # the conformer ensemble is an SDF that RDKit reads, energies attached
    sdf = [m for m in Chem.SDMolSupplier(str(out / job["conformer_file"]), removeHs=False)]
    assert len(sdf) == len(job["conformers"]) and sdf[0].GetDoubleProp("energy_hartree") < 0
    assert min(c["energy_hartree"] for c in job["conformers"]) == pytest.approx(molecules["chloroethane"]["energy_hartree"])
    log = (out / "run.log").read_text().splitlines()
    assert "command:" in log[0] and "versions:" in log[1]
    # a finished folder is never overwritten without being asked
    again = elimscan("run", write(tmp_path, TINY), "--out", str(out))
    assert again.returncode == ExitCode.OUTPUT and "--overwrite" in again.stderr
    summary = elimscan("summary", str(out))
    assert "chloroethane" in summary.stdout and "1/1 jobs ok" in summary.stdout
    # the run wrote the report; 'report' rebuilds the CSV byte for byte without computing
    csv_before = (out / "summary.csv").read_bytes()
    assert (out / "report.html").stat().st_size > 0
    (out / "summary.csv").unlink()
    rebuilt = elimscan("report", str(out))
    assert rebuilt.returncode == ExitCode.OK, rebuilt.stderr
    assert (out / "summary.csv").read_bytes() == csv_before
    # check-results checks a kept file; a hand-broken copy names the offending path
    assert elimscan("check-results", str(out / "results.json")).returncode == ExitCode.OK
    broken = json.loads((out / "results.json").read_text())
    broken["jobs"][0]["beta_hydrogens"][0]["degeneracy"] = "three"
    (tmp_path / "broken.json").write_text(json.dumps(broken))
    bad = elimscan("check-results", str(tmp_path / "broken.json"))
    assert bad.returncode == ExitCode.CONFIG and "jobs[0].beta_hydrogens[0].degeneracy" in bad.stderr
    # asked to, a run replaces the finished folder (a cheap config of another name: the overwrite does not depend
    # on the settings, and the name shows that the new results replaced the old ones)
    cheap = TOY_SETTINGS + TINY.replace("name: tiny", "name: tiny-again").replace("paths: {approaches: [anti]}\n", "")
    forced = elimscan("run", write(tmp_path, cheap, "again.yaml"), "--out", str(out), "--overwrite")
    assert forced.returncode == ExitCode.OK, forced.stderr
    assert json.loads((out / "results.json").read_text())["config"]["name"] == "tiny-again"


@pytest.mark.xtb
def test_scf_failure_is_recorded_and_the_run_says_jobs_failed(tmp_path):
    text = TINY.replace("method: {", "method: {max_scf_iterations: 1, ")
    out = tmp_path / "out"
    done = elimscan("run", write(tmp_path, text), "--out", str(out))
    assert done.returncode == ExitCode.JOBS_FAILED
    assert "Traceback" not in done.stderr
    document = json.loads((out / "results.json").read_text())
    jsonschema.Draft202012Validator(SCHEMA).validate(document)
    failed = [m for m in document["molecules"] if m["status"] == "failed"]
    assert failed and all(m["error"]["error_type"] == "scf_not_converged" for m in failed)
    assert "SCF did not converge for" in done.stderr
    assert document["summary"]["n_jobs_failed"] == 1
    assert document["jobs"][0]["error"]["error_type"] in {"scf_not_converged", "structure_error"}


def test_missing_geometry_file_is_a_config_error(tmp_path):
    text = TINY.replace('smiles: "CCCl"}', 'smiles: "CCCl", geometry: nowhere.xyz}')
    done = elimscan("plan", write(tmp_path, text))
    assert done.returncode == ExitCode.CONFIG
    assert "cannot read geometry file" in done.stderr and "substrates.0.geometry" in done.stderr


@pytest.mark.xtb
def test_a_user_geometry_joins_the_ensemble(tmp_path):
    from rdkit import Chem
    from rdkit.Chem import AllChem

    mol = Chem.AddHs(Chem.MolFromSmiles("ClCC"))  # other atom order than the config's SMILES
    AllChem.EmbedMolecule(mol, randomSeed=9)
    (tmp_path / "mine.xyz").write_text(Chem.MolToXYZBlock(mol))
    text = TINY.replace('smiles: "CCCl"}', 'smiles: "CCCl", geometry: mine.xyz}')
    done = elimscan("run", write(tmp_path, text), "--out", str(tmp_path / "out"))
    assert done.returncode == ExitCode.OK, done.stderr
    document = json.loads((tmp_path / "out" / "results.json").read_text())
    assert document["config"]["substrates"][0]["geometry"] == "mine.xyz"
    # chloroethane has one conformer: the user's geometry relaxes onto it, and the merged conformer
    # keeps both origins in its label
    sources = [c["source"] for c in document["jobs"][0]["conformers"]]
    assert any("user" in s.split("+") for s in sources), sources
