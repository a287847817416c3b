"""summary.csv of the fixture runs against the raw JSON, read with the stdlib csv parser (fast tier: no GFN2-xTB)."""

from __future__ import annotations

import csv
import io

import pytest

from elimscan.output.html.page import render_report
from elimscan.output.tables import SUMMARY_COLUMNS, summary_csv
from elimscan.results.documents import RunResult
from elimscan.results.records import JobRecord

from reportfixture import ALL_RUNS, PRIMARY, RUNS, blank_plots, computed, parse, raw, result, strip_barriers


@pytest.mark.parametrize("run", RUNS)
def test_csv_is_deterministic_and_matches_the_built_file(run, built):
    first, second = summary_csv(result(run)), summary_csv(result(run))
    assert first == second
    assert built[run]["summary.csv"] == first.encode("utf-8")
    assert first.endswith("\n") and "\r" not in first


@pytest.mark.parametrize("run", RUNS)
def test_every_csv_row_is_a_product_of_its_job_in_the_json(run):
    doc = raw(run)
    rows = list(csv.DictReader(io.StringIO(summary_csv(result(run)))))
    assert tuple(rows[0].keys()) == SUMMARY_COLUMNS
    jobs = {j["job_id"]: j for j in doc["jobs"]}
    assert len(rows) == sum(len(j["products"]) for j in doc["jobs"])
    for row in rows:
        job = jobs[row["job_id"]]
        products = {p["smiles"]: p for p in job["products"]}
        assert row["product_smiles"] in products, row
        product = products[row["product_smiles"]]
        assert (row["rule_call"], row["substitution"]) == (product["rule_call"], product["substitution"])
        assert row["via_classes"].split(";") == product["via_classes"]
        assert (row["solvent_model"], row["solvent"]) == (doc["config"]["method"]["solvent"]["model"],
                                                          doc["config"]["method"]["solvent"]["name"])
        # the lowest anti penalty of the classes whose anti elimination gives this alkene, from the raw JSON
        penalties = [b["anti_penalty_kcal_mol"] for b in job["beta_hydrogens"]
                     if b["anti"]["product_smiles"] == row["product_smiles"] and b["anti_penalty_kcal_mol"] is not None]
        assert row["anti_penalty_kcal_mol"] == (f"{min(penalties):.2f}" if penalties else "")
        # the new columns, from the raw JSON: shares, the job's verdict and the lowest path to this alkene
        assert row["fraction"] == f"{product['fraction']:.4f}"
        assert (row["fraction_low"], row["fraction_high"]) == tuple(f"{v:.4f}" for v in product["fraction_range"])
        assert float(row["fraction_low"]) <= float(row["fraction"]) <= float(row["fraction_high"])
        verdict = job["verdict"]
        assert row["computed_major"] == ("yes" if row["product_smiles"] == verdict["computed_major"] else "no")
        # one verdict column in three states (undecided is never a win), read here from the raw JSON's two flags
        expected = ("undecided" if verdict["within_method_uncertainty"] or verdict["agreement"] is None
                    else "agree" if verdict["agreement"] else "disagree")
        assert row["verdict"] == expected
        assert (row["undecided_why"] != "") == (expected == "undecided")
        paths = [a for _, _, a in computed(job) if a["product_smiles"] == row["product_smiles"] and a["product_possible"]]
        best = min(paths, key=lambda a: a["barrier_kcal_mol"]) if paths else None
        assert row["lowest_barrier_kcal_mol"] == ("" if best is None else f"{best['barrier_kcal_mol']:.3f}")
        assert row["lowest_relative_barrier_kcal_mol"] == ("" if best is None else f"{best['relative_barrier_kcal_mol']:.3f}")
    # every job has a computed major alkene in these runs: exactly one 'yes' per job
    for job_id in jobs:
        assert [r["computed_major"] for r in rows if r["job_id"] == job_id].count("yes") == 1


def test_csv_leaves_the_new_columns_empty_without_barriers():
    rows = list(csv.DictReader(io.StringIO(summary_csv(RunResult.model_validate(strip_barriers(raw("ring")))))))
    new = ("lowest_barrier_kcal_mol", "lowest_relative_barrier_kcal_mol", "fraction", "fraction_low", "fraction_high",
           "computed_major")
    assert rows and all(row[c] == "" for row in rows for c in new)
    # without barriers the verdict is undecided, and says why
    assert all(row["verdict"] == "undecided" and row["undecided_why"] for row in rows)


@pytest.mark.skipif("solvent" not in JobRecord.model_fields, reason="job records carry no solvent of their own")
def test_a_job_in_its_own_solvent_is_reported_in_it():
    # a batch over several solvents records each job's solvent; the CSV and the page name it, not the config's
    doc = raw("halobutane")
    doc["jobs"][1]["solvent"] = {"model": "alpb", "name": "water"}
    res = RunResult.model_validate(doc)
    rows = list(csv.DictReader(io.StringIO(summary_csv(res))))
    assert {(r["job_id"], r["solvent"]) for r in rows} == {(doc["jobs"][0]["job_id"], "ethanol"),
                                                            (doc["jobs"][1]["job_id"], "water")}
    page = parse(render_report(res, blank_plots(doc)))
    words = " ".join(" ".join(page.text).split())
    assert "the jobs ran in several solvents" in words
    foots = [" ".join(e["text"] for e in s["elements"] if e["tag"] == "div" and "job-foot" in e["classes"])
             for s in page.sections]
    assert "implicit solvent ALPB(ethanol)" in foots[0] and "implicit solvent ALPB(water)" in foots[1]


def test_csv_keeps_a_failed_job_as_one_row():
    doc = raw("halobutane")
    failed = {"job_id": doc["jobs"][1]["job_id"], "substrate": doc["jobs"][1]["substrate"],
              "base": doc["jobs"][1]["base"], "status": "failed",
              "error": {"error_type": "scf_not_converged", "error_message": "SCF did not converge for 'x'"}}
    doc["jobs"][1] = failed
    rows = list(csv.DictReader(io.StringIO(summary_csv(RunResult.model_validate(doc)))))
    last = [r for r in rows if r["job_id"] == failed["job_id"]]
    assert len(last) == 1 and last[0]["job_status"] == "failed" and last[0]["product_smiles"] == ""
    assert last[0]["error"] == "scf_not_converged: SCF did not converge for 'x'"


@pytest.mark.parametrize("run", ALL_RUNS)
def test_csv_free_barrier_and_elimination_columns_match_the_json(run):
    doc = raw(run)
    rows = list(csv.DictReader(io.StringIO(summary_csv(result(run)))))
    assert tuple(rows[0].keys()) == SUMMARY_COLUMNS
    jobs = {j["job_id"]: j for j in doc["jobs"]}
    for row in rows:
        job = jobs[row["job_id"]]
        free = [a["barrier_free_energy_kcal_mol"] for _, _, a in computed(job)
                if a["product_smiles"] == row["product_smiles"] and a["product_possible"]
                and a.get("barrier_free_energy_kcal_mol") is not None]
        assert row["lowest_free_barrier_kcal_mol"] == (f"{min(free):.3f}" if free else "")
        sub = job.get("substitution")
        assert row["elimination_fraction"] == ("" if not sub else f"{sub['elimination_fraction']:.4f}")
    if run == PRIMARY:
        assert all(r["lowest_free_barrier_kcal_mol"] and r["elimination_fraction"] for r in rows)


@pytest.mark.parametrize("text, expected", [
    ("=HYPERLINK(\"http://example.org\")", "'=HYPERLINK(\"http://example.org\")"),
    ("+cmd", "'+cmd"), ("-2+3", "'-2+3"), ("@SUM(A1)", "'@SUM(A1)"), ("\tx", "'\tx"),
    ("-3.2500", "-3.2500"), ("+1", "+1"), ("1e-3", "1e-3"), ("ethoxide", "ethoxide"), ("", ""),
])
def test_cells_that_start_like_a_formula_are_neutralised_and_numbers_are_not(text, expected):
    # common practice (OWASP, "CSV injection"): a cell starting with = + - @ tab or CR gets a leading quote
    from elimscan.output.tables import neutral_cell
    assert neutral_cell(text) == expected


def test_a_user_name_that_looks_like_a_formula_reaches_summary_csv_neutralised():
    doc = raw(PRIMARY)
    hostile = "=HYPERLINK(\"http://example.org\",\"open\")"
    doc["jobs"][0]["substrate"] = hostile
    rows = list(csv.DictReader(io.StringIO(summary_csv(RunResult.model_validate(doc)))))
    first = [r for r in rows if r["job_id"] == doc["jobs"][0]["job_id"]]
    assert first and all(r["substrate"] == "'" + hostile for r in first)
    numbers = [r["lowest_barrier_kcal_mol"] for r in rows if r["lowest_barrier_kcal_mol"]]
    assert numbers and all(float(n) == float(n.lstrip("'")) and not n.startswith("'") for n in numbers)
