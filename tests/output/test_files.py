"""The report files of an output folder and result validation against the JSON Schema (jsonschema), on the fixtures."""

from __future__ import annotations

import copy
import json
import shutil
import typing

import pytest

from elimscan.output.files import build_report_files, validate_result_file
from elimscan.results.documents import RESULT_SCHEMA_VERSION, RunResult

from reportfixture import ALL_RUNS, FIXTURES, PRIMARY, REFRESH, RUNS, computed, parse, raw


@pytest.mark.parametrize("run", ("ring", PRIMARY))
def test_rebuilding_gives_byte_identical_files(run, built):
    again = build_report_files(FIXTURES / run)
    assert sorted(again) == sorted(built[run])
    for name, content in again.items():
        assert content == built[run][name], name


@pytest.mark.parametrize("run", RUNS)
def test_report_files_are_the_csv_the_html_and_one_png_per_plot(run, built):
    doc = raw(run)
    files = built[run]
    expected = {"summary.csv", "report.html"}
    for job in doc["jobs"]:
        expected |= {f"plots/{job['job_id']}-scan.png", f"plots/{job['job_id']}-products.png"}
        if computed(job):
            expected |= {f"plots/{job['job_id']}-paths.png", f"plots/{job['job_id']}-profile.png"}
        for b in job["beta_hydrogens"]:
            expected |= {f"plots/{job['job_id']}-newman-{b['class_id']}-{g}.png" for g in ("anti", "syn")}
    assert set(files) == expected
    for name in expected - {"summary.csv", "report.html"}:
        assert files[name][:8] == b"\x89PNG\r\n\x1a\n", name


def test_html_without_trajectories_still_has_scan_plots_and_says_why_projections_are_missing(tmp_path):
    shutil.copy(FIXTURES / "halobutane" / "results.json", tmp_path / "results.json")
    files = build_report_files(tmp_path)
    assert not any("newman" in name for name in files)
    page = parse(files["report.html"].decode("utf-8"))
    assert all(s["svg"] == 5 for s in page.sections)  # substrate, paths, energy profile, scans, products
    assert "the scan trajectory was not available" in " ".join(page.text)


# --- validation --------------------------------------------------------------------------------------


@pytest.mark.parametrize("run", ALL_RUNS)
def test_fixture_results_are_valid(run):
    # a fixture may be of an older schema version as long as records.py still reads that version
    accepted = typing.get_args(RunResult.model_fields["schema_version"].annotation)
    assert RESULT_SCHEMA_VERSION in accepted and raw(run)["schema_version"] in accepted, REFRESH
    assert validate_result_file(FIXTURES / run / "results.json") == [], REFRESH


def test_broken_results_name_the_offending_paths(tmp_path):
    doc = copy.deepcopy(raw("halobutane"))
    doc["jobs"][0]["beta_hydrogens"][0]["degeneracy"] = "three"
    doc["jobs"][1]["beta_hydrogens"][2]["anti_penalty_kcal_mol"] = "low"
    doc["jobs"][1]["products"][0]["rule_call"] = "likely"
    path = tmp_path / "results.json"
    path.write_text(json.dumps(doc), encoding="utf-8")
    problems = validate_result_file(path)
    assert len(problems) == 3, problems
    assert any(p.startswith("jobs[0].beta_hydrogens[0].degeneracy: ") and "integer" in p for p in problems)
    assert any(p.startswith("jobs[1].beta_hydrogens[2].anti_penalty_kcal_mol: ") for p in problems)
    assert any(p.startswith("jobs[1].products[0].rule_call: ") and "likely" in p for p in problems)


def test_validation_reports_unreadable_and_foreign_documents(tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text("{not json", encoding="utf-8")
    assert validate_result_file(bad)[0].startswith("(file): not JSON")
    other = tmp_path / "other.json"
    other.write_text(json.dumps({"schema_name": "something.else"}), encoding="utf-8")
    assert "not an elimscan result document" in validate_result_file(other)[0]
    missing = dict(raw("halobutane"))
    del missing["summary"]
    gone = tmp_path / "gone.json"
    gone.write_text(json.dumps(missing), encoding="utf-8")
    assert validate_result_file(gone) == ["(top level): 'summary' is a required property"]
