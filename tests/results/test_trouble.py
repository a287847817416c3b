"""Numerical trouble is data: an SCF failure on one path, optimisations at their step limit, scan points far
above the cap, a job stuck in one stage. Each is recorded where it happened, everything else goes on, and
the summary counts it.

The batches compute on the toy engine of ``toyjobs.py`` (`--engine toyjobs:...`), which
scripts the trouble: ELIMSCAN_TOY_FAIL_SCF makes named structures raise the ScfConvergenceError that the
GFN2-xTB engine raises once its retry has failed too (that retry is tested in test_engine_retry.py and on
the real backend in test_engine_xtb.py); ELIMSCAN_TOY_STRETCH gives relaxations work to do (all, or those named with
ELIMSCAN_TOY_STRETCH_ON), so a small step limit is reached.
"""

from __future__ import annotations

import json
from pathlib import Path

from elimscan.cli import main
from elimscan.errors import ExitCode
from elimscan.output.files import validate_result_file
from elimscan.units import KCAL_MOL_PER_HARTREE
from toyjobs import TOY_SETTINGS

CONFIG = TOY_SETTINGS + """\
name: trouble
substrates:
  - {name: chloroethane, smiles: "CCCl"}
  - {name: 2-bromobutane, smiles: "C[C@H](Br)CC"}
bases:
  - {name: methoxide}
executor: {workers: 1}
"""


def run_batch(tmp_path: Path, capsys, monkeypatch, text: str = CONFIG, engine: str = "toyjobs:toy_engine",
              **env: str) -> tuple[int, str, dict]:
    """Run ``elimscan batch`` in this process on a toy engine; return (exit code, stderr, results.json or {})."""
    for name, value in env.items():
        monkeypatch.setenv(name, value)
    (tmp_path / "batch.yaml").write_text(text)
    code = main(["batch", str(tmp_path / "batch.yaml"), "--out", str(tmp_path / "out"), "--engine", engine])
    err = capsys.readouterr().err
    results = tmp_path / "out" / "results.json"
    if not results.exists():
        return code, err, {}
    assert validate_result_file(results) == []  # against the JSON Schema exported from records.py
    return code, err, json.loads(results.read_text())


def classes(document: dict, job_id: str) -> dict:
    job = next(j for j in document["jobs"] if j["job_id"] == job_id)
    return {b["class_id"]: b for b in job["beta_hydrogens"]}


def test_an_scf_failure_on_one_path_is_recorded_there_and_the_rest_goes_on(tmp_path, capsys, monkeypatch):
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, ELIMSCAN_TOY_FAIL_SCF="C4-H10 anti")
    assert code == ExitCode.OK, err  # the jobs themselves finished
    assert [j["status"] for j in document["jobs"]] == ["ok", "ok"]
    betas = classes(document, "2-bromobutane__methoxide")
    failed = betas["C4-H10"]["anti"]
    assert failed["path_status"] == "failed" and failed["error"]["error_type"] == "scf_not_converged"
    assert "2-bromobutane" in failed["error"]["error_message"] and failed["barrier_kcal_mol"] is None
    assert {cid: b["anti"]["path_status"] for cid, b in betas.items() if cid != "C4-H10"} == {"C1-H6": "ok",
                                                                                          "C4-H11": "ok"}
    assert classes(document, "chloroethane__methoxide")["C1-H4"]["anti"]["path_status"] == "ok"
    assert document["summary"]["trouble"] == {"path failed: scf_not_converged": 1}
    assert "numerical trouble recorded as data: path failed: scf_not_converged: 1" in err
    assert "Traceback" not in err
    # saddles are not refined in these settings ('not refined': a setting, no trouble); one whose refinement
    # failed verification counts, the others do not
    from elimscan.results.records import JobRecord
    from elimscan.results.trouble import count_trouble

    jobs = [JobRecord.model_validate(j) for j in document["jobs"]]
    assert all(b.anti.saddle_note.startswith("not refined") for j in jobs for b in j.beta_hydrogens
               if b.anti.path_status == "ok")
    beta = jobs[0].beta_hydrogens[0]
    collapsed = beta.anti.model_copy(update={"saddle_note": "two imaginary modes beyond 50 cm-1 (scripted)",
                                             "saddle_error_type": "saddle_wrong_modes"})
    jobs[0] = jobs[0].model_copy(update={"beta_hydrogens": (beta.model_copy(update={"anti": collapsed}),)})
    assert count_trouble(jobs) == {"path failed: scf_not_converged": 1, "saddle not verified: saddle_wrong_modes": 1}


def test_one_failed_base_rotation_of_a_complex_is_skipped_and_flagged(tmp_path, capsys, monkeypatch):
    # Seen with ddX-CPCM: a non-finite energy in one of the base orientations tried for a complex. The other
    # orientations carry the path; only when every orientation fails does the path fail.
    text = CONFIG.replace("base_rotations: 1", "base_rotations: 3")
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, text,
                                    ELIMSCAN_TOY_FAIL_SCF="C4-H10 anti complex rotation 120")
    assert code == ExitCode.OK, err
    anti = classes(document, "2-bromobutane__methoxide")["C4-H10"]["anti"]
    assert anti["path_status"] == "ok" and anti["barrier_kcal_mol"] is not None
    assert "base rotation 120 deg of the complex failed (scf_not_converged); the other rotations were used" in anti["flags"]
    assert document["summary"]["trouble"] == {"complex orientation failed": 1}
    (tmp_path / "all").mkdir()
    code, err, document = run_batch(tmp_path / "all", capsys, monkeypatch, text,
                                    ELIMSCAN_TOY_FAIL_SCF="C4-H10 anti complex rotation")
    anti = classes(document, "2-bromobutane__methoxide")["C4-H10"]["anti"]
    assert anti["path_status"] == "failed" and anti["error"]["error_type"] == "scf_not_converged"


def test_relaxations_at_their_step_limit_are_failed_scan_points_counted_in_the_summary(tmp_path, capsys, monkeypatch):
    text = CONFIG.replace("fmax_eV_per_A: 0.05}", "fmax_eV_per_A: 0.05, max_steps: 2}")
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, text, ELIMSCAN_TOY_STRETCH="1.05",
                                    ELIMSCAN_TOY_STRETCH_ON="scan")  # conformers that did not converge are dropped
    assert code == ExitCode.OK, err
    points = [p for j in document["jobs"] for b in j["beta_hydrogens"] for s in b["scans"] for p in s["points"]]
    n_failed = sum(p["status"] == "failed" for p in points)
    assert n_failed > 0 and any(p["status"] == "ok" for p in points)
    assert document["summary"]["trouble"].get("scan point failed") == n_failed
    notes = [n for j in document["jobs"] for b in j["beta_hydrogens"] for s in b["scans"] for n in s["notes"]]
    assert any("optimisation hit its step limit" in n for n in notes), notes


def test_conformers_that_did_not_finish_relaxing_are_not_kept(tmp_path, capsys, monkeypatch):
    # An unfinished relaxation is no minimum: it must not join the ensemble (nor set the zero of the barriers).
    text = CONFIG.replace("fmax_eV_per_A: 0.05}", "fmax_eV_per_A: 0.05, max_steps: 2}")
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, text, ELIMSCAN_TOY_STRETCH="1.05",
                                    ELIMSCAN_TOY_STRETCH_ON="conformer")
    assert code == ExitCode.JOBS_FAILED, err
    for job in document["jobs"]:
        assert job["status"] == "failed" and job["error"]["error_type"] == "optimization_failed"
        assert "none of" in job["error"]["error_message"] and "did not converge" in job["error"]["error_message"]


def test_a_scan_point_below_every_conformer_is_reported(tmp_path, capsys, monkeypatch):
    # dE is measured from the lowest geometry seen (scan points included), dG from the lowest conformer: when a
    # scan finds a lower geometry the conformer search missed a minimum, and the job says so.
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, ELIMSCAN_TOY_LOWER="scan:1.0")
    assert code == ExitCode.OK, err
    for job in document["jobs"]:
        below = (min(c["energy_hartree"] for c in job["conformers"]) - job["global_minimum_hartree"]) * KCAL_MOL_PER_HARTREE
        assert below > 0.9  # 1 kcal/mol, less the toy scan point's own height above its minimum
        assert any(f"lies {below:.2f} kcal/mol below the lowest conformer" in w for w in job["warnings"]), job["warnings"]
    monkeypatch.delenv("ELIMSCAN_TOY_LOWER")
    (tmp_path / "plain").mkdir()
    code, err, document = run_batch(tmp_path / "plain", capsys, monkeypatch)
    assert code == ExitCode.OK, err
    assert not any("below the lowest conformer" in w for job in document["jobs"] for w in job["warnings"])


def test_charged_reactants_in_the_dielectric_only_continuum_carry_its_warning(tmp_path, capsys, monkeypatch):
    # The limits measured against ALPB (tests/engines/test_engine_xtb.py, strict expected failures) travel with the job.
    text = CONFIG + "method: {solvent: {model: dielectric, name: tert-butanol}}\n"
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, text)
    assert code == ExitCode.OK, err
    (tmp_path / "run.yaml").write_text(text)  # a single run also says that a crash in ddX would lose it
    assert main(["run", str(tmp_path / "run.yaml"), "--out", str(tmp_path / "single"),
                 "--engine", "toyjobs:hot_point_engine"]) == ExitCode.OK
    assert "tblite's ddX can abort the whole process" in capsys.readouterr().err
    for job in document["jobs"]:  # methoxide is an anion
        assert any("solvent model 'dielectric'" in w and "8-13 kcal/mol" in w for w in job["warnings"])
    neutral = text.replace("bases:\n  - {name: methoxide}", "bases:\n  - {name: ammonia, smiles: N}")
    (tmp_path / "neutral").mkdir()
    code, err, document = run_batch(tmp_path / "neutral", capsys, monkeypatch, neutral)
    assert code == ExitCode.OK, err
    assert not any("solvent model 'dielectric'" in w for job in document["jobs"] for w in job["warnings"])


def test_scan_points_above_the_cap_are_counted(tmp_path, capsys, monkeypatch):
    text = CONFIG.replace("scan: {step_deg: 60}", "scan: {step_deg: 60, energy_cap_kcal_mol: 0.01}")
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, text)
    assert code == ExitCode.OK, err
    points = [p for j in document["jobs"] for b in j["beta_hydrogens"] for s in b["scans"] for p in s["points"]]
    n_capped = sum(p["status"] == "above_cap" for p in points)
    assert n_capped > 0
    assert all(p["relative_energy_kcal_mol"] is not None for p in points if p["status"] == "above_cap")
    assert document["summary"]["trouble"].get("scan point above cap") == n_capped


def test_a_job_stuck_in_one_stage_is_stopped_at_the_stage_limit(tmp_path, capsys, monkeypatch):
    text = CONFIG.replace('  - {name: 2-bromobutane, smiles: "C[C@H](Br)CC"}\n', "").replace(
        "executor: {workers: 1}", "executor: {workers: 1, time_limit_seconds: 600, stage_time_limit_seconds: 4}")
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, text, engine="toyjobs:stuck_engine")
    assert code == ExitCode.JOBS_FAILED, err
    error = document["jobs"][0]["error"]
    assert error["error_type"] == "stage_time_limit"
    # the stuck stage is the base's relaxation (step 2 of 3, substrate, base, the job's paths: one counter per job)
    assert "longer than the stage time limit of 4 s in step 2/3: base 'methoxide'" in error["error_message"]
    assert document["summary"]["trouble"] == {"job failed: stage_time_limit": 1}
    assert "Traceback" not in err


def test_single_points_kept_at_the_retry_temperature_are_counted_per_job_and_in_the_summary(
        tmp_path, capsys, monkeypatch):
    # Such a point lies on a smeared surface (see test_engine_retry.py for the restart that usually avoids it):
    # a batch counts it on the job that computed it, a single run over the whole run.
    code, err, document = run_batch(tmp_path, capsys, monkeypatch, engine="toyjobs:hot_point_engine",
                                    ELIMSCAN_TOY_HOT_ON="chloroethane")
    assert code == ExitCode.OK, err
    counts = {job["job_id"]: job["retry_temperature_points"] for job in document["jobs"]}
    assert counts["chloroethane__methoxide"] > 0 and counts["2-bromobutane__methoxide"] == 0
    key = "single point at retry electronic temperature"
    assert document["summary"]["trouble"] == {key: counts["chloroethane__methoxide"]}
    assert key in err  # and the log says so
    (tmp_path / "run.yaml").write_text(CONFIG)
    assert main(["run", str(tmp_path / "run.yaml"), "--out", str(tmp_path / "single"),
                 "--engine", "toyjobs:hot_point_engine"]) == ExitCode.OK
    single = json.loads((tmp_path / "single" / "results.json").read_text())
    assert single["summary"]["trouble"][key] > 0
    assert all(job["retry_temperature_points"] == 0 for job in single["jobs"])  # one engine: run-wide only


def test_an_scf_failure_in_the_base_hessian_fails_the_base_and_keeps_the_run(tmp_path, capsys, monkeypatch):
    # A single run (one engine for all jobs): the failure is recorded on the base and on its jobs, naming the
    # base; nothing else is lost and results.json is written.
    monkeypatch.setenv("ELIMSCAN_TOY_FAIL_SCF", "base 'methoxide' hessian")
    (tmp_path / "run.yaml").write_text(CONFIG)
    code = main(["run", str(tmp_path / "run.yaml"), "--out", str(tmp_path / "out"), "--engine", "toyjobs:toy_engine"])
    assert code == ExitCode.JOBS_FAILED, capsys.readouterr().err
    document = json.loads((tmp_path / "out" / "results.json").read_text())
    base = next(m for m in document["molecules"] if m["role"] == "base")
    assert base["status"] == "failed" and base["error"]["error_type"] == "scf_not_converged"
    assert all(m["status"] == "ok" for m in document["molecules"] if m["role"] == "substrate")
    assert [j["status"] for j in document["jobs"]] == ["failed", "failed"]
    assert all("methoxide" in j["error"]["error_message"] for j in document["jobs"])
