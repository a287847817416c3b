"""Report files (CSV, plots, HTML) and result validation, on three committed runs (fast tier: no GFN2-xTB).

The fixtures in tests/data/report-fixture/ are real outputs of ``elimscan run`` (results.json and the scan
trajectories it references) for configs/halobutane-bases.yaml (``halobutane``: every saddle verified),
configs/ring-demo.yaml (``ring``: two unverified saddles, flagged paths, anti paths not computed) and a small
bromoethane + methoxide run (``primary``: free energies, saddle character, isotope effects, substitution).
Checks against something outside elimscan: ASE's ``Atoms.get_dihedral`` for the Newman projections'
dihedrals, RDKit's bond graph from the SMILES for the bonds the projection draws, the CODATA gas constant
(scipy.constants) for the Curtin-Hammett shares, the stdlib csv and HTML parsers for the files, jsonschema
for validation, and headless Chromium for the page (skipped when Chromium, chromedriver or selenium are
not installed). Every number the page shows is compared with the raw JSON (read without our models).
"""

from __future__ import annotations

import base64
import copy
import csv
import inspect
import io
import json
import math
import re
import shutil
import typing
from html.parser import HTMLParser
from pathlib import Path

import ase.io
import pytest
import scipy.constants
from rdkit import Chem

from elimscan.analysis.rule import compare_verdicts, fraction_ranges
from elimscan.geometry import wrap_degrees
from elimscan.output.html.depictions import substrate_svg
from elimscan.output.html.jobsection import PLOT_WORDS
from elimscan.output.html.page import render_report
from elimscan.output.html.words import BARRIERS_ABSENT, CAUTION, NO_BARRIERS_JOB
from elimscan.output.plots.figures import BARRIER_SHIFT_KCAL_MOL, figure_svg
from elimscan.output.plots.jobplots import JOB_PLOT_KINDS, drawn_kinds, job_figures, plot_name, shown_kinds
from elimscan.output.plots.newman import closest_frame, newman_figure, newman_inputs, newman_view
from elimscan.output.plots.paths import path_figure
from elimscan.output.plots.products import product_figure
from elimscan.output.plots.scans import scan_figure
from elimscan.results.records import RESULT_SCHEMA_VERSION, JobRecord, RunResult
from elimscan.output.files import build_report_files, read_scan_frames, validate_result_file
from elimscan.output.tables import SUMMARY_COLUMNS, summary_csv

FIXTURES = Path(__file__).resolve().parent / "data" / "report-fixture"
RUNS = ("halobutane", "ring")
#: the run with the v0.5 fields (barrier_free_energy_kcal_mol, saddle_character, isotope_effects, substitution)
PRIMARY = "primary"
ALL_RUNS = (*RUNS, PRIMARY)
REFRESH = "results.json of the fixture no longer matches records.py: refresh it (tests/data/report-fixture/README.md)"


def raw(run: str) -> dict:
    """Return results.json of a fixture run as plain JSON (not through our models)."""
    return json.loads((FIXTURES / run / "results.json").read_text(encoding="utf-8"))


def result(run: str) -> RunResult:
    """Return the RunResult of a fixture run."""
    return RunResult.model_validate_json((FIXTURES / run / "results.json").read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def built() -> dict[str, dict[str, bytes]]:
    """Return {run: report files} built once per module from the fixtures."""
    return {run: build_report_files(FIXTURES / run) for run in ALL_RUNS}


class _Page(HTMLParser):
    """Collects, per job section, its id, its beta-H rows, images, inline SVGs, the cells, notes and verdict box
    (attributes and text); and every resource URL."""

    CAPTURED = ("td", "li", "div", "tr")
    BLOCKS = ("p", "div", "dt", "dd", "li", "td", "th", "tr", "br", "dl", "ol", "ul")  # a browser breaks the text there

    def __init__(self) -> None:
        super().__init__()
        self.sections: list[dict] = []
        self.urls: list[str] = []
        self.text: list[str] = []
        self.meta: list[dict] = []
        self.index_links: list[str] = []
        self._in_index = False
        self._open: list[dict] = []  # captured elements still open, innermost last

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        for name in ("src", "href", "xlink:href", "data", "poster", "srcset", "action"):
            if a.get(name):
                self.urls.append(a[name])
        if tag == "meta":
            self.meta.append(a)
        if tag == "table" and a.get("id") == "job-index":
            self._in_index = True
        if tag == "a" and self._in_index:
            self.index_links.append(a.get("href", ""))
        if tag == "section" and "job" in (a.get("class") or "").split():
            self.sections.append({"id": a.get("id"), "job": a.get("data-job"), "beta_rows": [], "img": [], "svg": 0,
                                  "elements": [], "svg_ids": []})
        elif self.sections:
            here = self.sections[-1]
            if tag == "tr" and "beta-row" in (a.get("class") or "").split():
                here["beta_rows"].append(a.get("data-class"))
            if tag == "img":
                here["img"].append(a.get("src", ""))
            if tag == "svg":
                here["svg"] += 1
            if a.get("id"):
                here["svg_ids"].append(a["id"])
            if tag in self.BLOCKS:
                self._space()
            if tag in self.CAPTURED:
                element = {"tag": tag, "attrs": a, "classes": (a.get("class") or "").split(), "text": [],
                           "row": self._row()}
                here["elements"].append(element)
                self._open.append(element)

    def _row(self) -> dict | None:
        return next((e for e in reversed(self._open) if e["tag"] == "tr"), None)

    def _space(self) -> None:
        for element in self._open:
            element["text"].append(" ")

    def handle_endtag(self, tag):
        if tag == "table":
            self._in_index = False
        if tag in self.BLOCKS:
            self._space()
        if tag in self.CAPTURED:
            for k in range(len(self._open) - 1, -1, -1):
                if self._open[k]["tag"] == tag:
                    self._open[k]["text"] = " ".join("".join(self._open[k]["text"]).split())
                    del self._open[k]
                    break

    def handle_data(self, data):
        self.text.append(data)
        for element in self._open:
            element["text"].append(data)


def parse(html_text: str) -> _Page:
    page = _Page()
    page.feed(html_text)
    return page


def elements(section: dict, tag: str, cls: str) -> list[dict]:
    """Return the captured elements of a section with this tag and class, in page order."""
    return [e for e in section["elements"] if e["tag"] == tag and cls in e["classes"]]


def words_of(html_text: str) -> str:
    """Return the page's text with whitespace runs made single spaces."""
    return " ".join(" ".join(parse(html_text).text).split())


def approaches(job: dict):
    """Yield (class record, 'anti' | 'syn', approach record) of a raw JSON job."""
    for beta in job["beta_hydrogens"]:
        for name in ("anti", "syn"):
            yield beta, name, beta[name]


def computed(job: dict) -> list[tuple[dict, str, dict]]:
    """Return the approaches of a raw JSON job whose path was computed (status ok, with a barrier)."""
    return [(b, n, a) for b, n, a in approaches(job) if a.get("path_status") == "ok" and a.get("barrier_kcal_mol") is not None]


def shown_barrier(value: float) -> str:
    """Return how the page prints a barrier: 2 decimals, U+2212 for minus (-0.00 prints as 0.00)."""
    text = f"{value:.2f}"
    return ("0.00" if text == "-0.00" else text).replace("-", "\u2212")


def blank_plots(doc: dict) -> dict[str, str]:
    """Return placeholder SVGs for every scan, path and product plot of a raw document (pages that need no real plots)."""
    return {plot_name(j["job_id"], kind): "<svg></svg>" for j in doc["jobs"] for kind in ("scan", "paths", "products")}


def strip_barriers(doc: dict) -> dict:
    """Return a copy of a raw results document as a run without paths writes it (no barriers, no shares)."""
    doc = copy.deepcopy(doc)
    for job in doc["jobs"]:
        for _, _, approach in approaches(job):
            for key in ("barrier_kcal_mol", "relative_barrier_kcal_mol", "barrier_source", "relaxed_path_estimate_kcal_mol",
                        "imaginary_frequency_cm1", "saddle_note", "saddle_method", "complex_energy_kcal_mol",
                        "complex_rotation_spread_kcal_mol", "n_gradients", "path_file", "saddle_file", "error"):
                approach[key] = None
            approach.update(path_status="not computed", saddle_verified=False, flags=[], path=[])
        for product in job["products"]:
            product["fraction"] = product["fraction_range"] = None
        job["verdict"] = {"rule_major": job["rule"]["rule_major"], "computed_major": None, "agreement": None,
                          "within_method_uncertainty": False, "reason": "no barrier could be computed"}
    return doc


# --- CSV ---------------------------------------------------------------------------------------------


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
        assert row["agreement"] == {True: "yes", False: "no", None: ""}[verdict["agreement"]]
        assert row["within_method_uncertainty"] == ("yes" if verdict["within_method_uncertainty"] else "no")
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
           "computed_major", "agreement", "within_method_uncertainty")
    assert rows and all(row[c] == "" for row in rows for c in new)


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


# --- report files ------------------------------------------------------------------------------------


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
            expected.add(f"plots/{job['job_id']}-paths.png")
        for b in job["beta_hydrogens"]:
            expected |= {f"plots/{job['job_id']}-newman-{b['class_id']}-{g}.png" for g in ("anti", "syn")}
    assert set(files) == expected
    for name in expected - {"summary.csv", "report.html"}:
        assert files[name][:8] == b"\x89PNG\r\n\x1a\n", name


@pytest.mark.parametrize("run", RUNS)
def test_html_has_a_section_per_job_and_a_row_per_beta_class(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    assert [s["job"] for s in page.sections] == [j["job_id"] for j in doc["jobs"]]
    for section, job in zip(page.sections, doc["jobs"]):
        assert section["beta_rows"] == [b["class_id"] for b in job["beta_hydrogens"]]
        # one PNG depiction per product, each a decodable base64 PNG; plots and the substrate as inline SVG
        assert len(section["img"]) == len(job["products"])
        for src in section["img"]:
            assert src.startswith("data:image/png;base64,")
        n_newman = 2 * len(job["beta_hydrogens"])
        assert section["svg"] == 1 + 3 + n_newman  # substrate, path plot, scan plot, product chart, projections
    if len(doc["jobs"]) > 1:  # the index links to every section
        assert page.index_links == [f"#{s['id']}" for s in page.sections]


@pytest.mark.parametrize("run", RUNS)
def test_html_carries_the_caution_and_the_method_and_loads_nothing(run, built):
    text = built[run]["report.html"].decode("utf-8")
    page = parse(text)
    words = " ".join(" ".join(page.text).split())
    assert "Computed predictions are not safety data" in words and CAUTION in words
    assert "qualified supervision" in words and "local regulations" in words
    doc = raw(run)
    assert doc["provenance"]["backend_version"] in words and doc["config"]["method"]["solvent"]["name"] in words
    assert "not barriers" in words and "electronic energies" in words and "not free energies" in words
    assert "not free energies \u0394G\u2021" in words and "typically too low" in words and "negative" in words
    # no resource from the network: every src/href is local (#anchor) or a data: URI
    for url in page.urls:
        assert url.startswith("#") or url.startswith("data:"), url
    assert not re.search(r"url\(\s*['\"]?\s*(https?:)?//", text)
    assert "@import" not in text
    csp = [m for m in page.meta if m.get("http-equiv") == "Content-Security-Policy"]
    assert csp and "default-src 'none'" in csp[0]["content"]


def test_html_escapes_user_strings():
    doc = raw("halobutane")
    evil = "<b>bad & \"name\"</b>"
    doc["config"]["name"] = evil
    doc["jobs"][0]["substrate"] = doc["molecules"][0]["name"] = doc["config"]["substrates"][0]["name"] = evil
    doc["jobs"][0]["products"][0]["reason"] = "<script>alert(1)</script>"
    text = render_report(RunResult.model_validate(doc), blank_plots(doc))
    assert evil not in text and "<script>alert(1)" not in text
    assert "&lt;b&gt;bad &amp; &quot;name&quot;&lt;/b&gt;" in text
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in text


def test_html_says_whether_barriers_were_computed():
    # with barriers: what they mean is explained, with the Boltzmann temperature of the JSON and the ±1 kcal/mol ranges
    doc = raw("halobutane")
    words = words_of(render_report(result("halobutane"), blank_plots(doc)))
    assert BARRIERS_ABSENT not in words and "does not show them" not in words and NO_BARRIERS_JOB not in words
    assert {j["temperature_K"] for j in doc["jobs"]} == {298.15} and "T = 298.15 K" in words
    for phrase in ("not free energies \u0394G\u2021", "substrate's global minimum plus the relaxed free base, in the same "
                   "implicit solvent", "typically too low", "negative relative to the separated reactants",
                   "Read only relative values", "\u00b11 kcal/mol"):
        assert phrase in words, phrase
    # the same run without paths: the rule's calls alone, said once per job in its verdict box and once in its foot
    stripped = strip_barriers(doc)
    blanks = {k: v for k, v in blank_plots(stripped).items() if not k.endswith("-paths")}  # a path plot would be drawn
    page = parse(render_report(RunResult.model_validate(stripped), blanks))
    words = " ".join(" ".join(page.text).split())
    assert BARRIERS_ABSENT in words and "T = 298.15 K" not in words
    assert words.count(NO_BARRIERS_JOB) == 2 * len(stripped["jobs"])
    for section in page.sections:
        assert elements(section, "td", "barrier") == [] and elements(section, "td", "share") == []
        assert [v["attrs"]["data-agreement"] for v in elements(section, "div", "verdict")] == ["no verdict"]
        assert section["svg"] == 3  # substrate, scans, products: no path plot drawn (and no trajectories given)


def test_html_without_trajectories_still_has_scan_plots_and_says_why_projections_are_missing(tmp_path):
    shutil.copy(FIXTURES / "halobutane" / "results.json", tmp_path / "results.json")
    files = build_report_files(tmp_path)
    assert not any("newman" in name for name in files)
    page = parse(files["report.html"].decode("utf-8"))
    assert all(s["svg"] == 4 for s in page.sections)  # substrate, paths, scans, products
    assert "the scan trajectory was not available" in " ".join(page.text)


def test_html_shows_a_failed_job():
    doc = raw("halobutane")
    doc["jobs"][1] = {"job_id": "broken__job", "substrate": "s-2-bromobutane", "base": "tert-butoxide",
                      "status": "failed", "error": {"error_type": "optimizer_failed", "error_message": "no convergence"}}
    page = parse(render_report(RunResult.model_validate(doc), {}))
    assert [s["job"] for s in page.sections] == [doc["jobs"][0]["job_id"], "broken__job"]
    assert page.sections[1]["beta_rows"] == [] and page.sections[1]["svg"] == 0
    assert "optimizer_failed: no convergence" in " ".join(page.text)


# --- barriers, shares and the verdict on the page ----------------------------------------------------


@pytest.mark.parametrize("run", RUNS)
def test_verdict_box_states_the_json_verdict(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    seen = set()
    for section, job in zip(page.sections, doc["jobs"]):
        v = job["verdict"]
        boxes = elements(section, "div", "verdict")
        assert len(boxes) == 1
        box = boxes[0]
        assert section["elements"].index(box) == 0  # the first thing in the section after its heading
        word = {True: "AGREE", False: "DISAGREE", None: "no verdict"}[v["agreement"]]
        assert (box["attrs"]["data-rule-major"], box["attrs"]["data-computed-major"]) == (v["rule_major"], v["computed_major"])
        assert box["attrs"]["data-agreement"] == word and f"verdict-{word.lower()}" in box["classes"]
        assert box["attrs"]["data-within-uncertainty"] == ("yes" if v["within_method_uncertainty"] else "no")
        # the words a reader sees say the same: the badge, both SMILES, the computed share, the reason
        assert box["text"].startswith(word + " ")
        assert f"rule\u2019s major alkene {v['rule_major']}" in box["text"]
        share = next(p["fraction"] for p in job["products"] if p["smiles"] == v["computed_major"])
        assert f"computed major alkene {v['computed_major']} ({100 * share:.1f} %" in box["text"]
        assert f"Why: {v['reason']}." in box["text"]
        assert ("within method uncertainty" in box["text"]) == v["within_method_uncertainty"]
        seen.add((word, v["within_method_uncertainty"]))
    # the fixtures hold the cases that matter
    assert {"halobutane": {("DISAGREE", True), ("AGREE", True)},
            "ring": {("AGREE", False), ("DISAGREE", True)}}[run] == seen


@pytest.mark.parametrize("run", RUNS)
def test_barrier_cells_equal_the_json_values(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        cells = elements(section, "td", "barrier")
        expected = []
        for beta, name, approach in computed(job):
            expected += [(beta["class_id"], name, "relative", shown_barrier(approach["relative_barrier_kcal_mol"])),
                         (beta["class_id"], name, "absolute", shown_barrier(approach["barrier_kcal_mol"]))]
        found = [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"], c["attrs"]["data-kind"], c["text"])
                 for c in cells]
        assert found == expected
        # relative barriers: the job's lowest is 0.00, none below it
        relative = [a["relative_barrier_kcal_mol"] for _, _, a in computed(job)]
        assert min(relative) == 0.0 and "0.00" in [c["text"] for c in cells if c["attrs"]["data-kind"] == "relative"]
        # imaginary frequencies of verified saddles, as in the JSON
        verified = [a for _, _, a in computed(job) if a["saddle_verified"]]
        cells = elements(section, "td", "saddle-verified")
        assert len(cells) == len(verified)
        for cell, a in zip(cells, verified):  # the frequency, then a note number when the path is flagged
            assert re.fullmatch(re.escape(f"{a['imaginary_frequency_cm1']:.1f}i") + (r"\d+" if a["flags"] else ""), cell["text"])
        # approaches without a path say so
        missing = [(b["class_id"], n) for b, n, a in approaches(job) if a["path_status"] == "not computed"]
        assert [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"])
                for c in elements(section, "td", "saddle") if c["text"] == "not computed"] == missing


def test_every_unverified_saddle_is_marked_with_its_note(built):
    doc = raw("ring")
    page = parse(built["ring"]["report.html"].decode("utf-8"))
    total = 0
    for section, job in zip(page.sections, doc["jobs"]):
        unverified = [(b, n, a) for b, n, a in computed(job) if not a["saddle_verified"]]
        marked = elements(section, "td", "saddle-unverified")
        assert [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"]) for c in marked] == [
            (b["class_id"], n) for b, n, _ in unverified]
        notes = {e["attrs"]["id"]: e["text"] for e in section["elements"] if e["tag"] == "li" and "-note-" in e["attrs"].get("id", "")}
        for cell, (beta, name, approach) in zip(marked, unverified):
            assert cell["attrs"]["title"] == approach["saddle_note"]  # the tooltip
            assert cell["text"].startswith("unverified")
            if approach["imaginary_frequency_cm1"] is not None:
                assert cell["text"].endswith(f"{approach['imaginary_frequency_cm1']:.1f}i")
            # the footnote the cell points at names the class, the note, the barrier's source and the flags
            number = re.search(r"unverified(\d+)", cell["text"]).group(1)
            note = notes[f"{section['id']}-note-{number}"]
            assert note.startswith(f"{beta['class_id']} {name}: saddle not verified ({approach['saddle_note']})")
            assert approach["barrier_source"] == "relaxed-path maximum" and "relaxed-path maximum" in note
            assert all(flag in note for flag in approach["flags"])
            total += 1
    assert total == 2  # trans C5-H19 syn and cis C1-H11 syn (tests/data/report-fixture/README.md)


def test_flags_and_failed_paths_get_numbered_notes():
    doc = raw("halobutane")
    job = doc["jobs"][0]
    flagged = job["beta_hydrogens"][0]["anti"]  # a verified saddle, given a flag here
    flagged["flags"] = ["base bonded to C-alpha (SN2-like)"]
    failed = job["beta_hydrogens"][1]["syn"]  # a path that failed: no barrier, an error instead
    for key in ("barrier_kcal_mol", "relative_barrier_kcal_mol", "barrier_source", "relaxed_path_estimate_kcal_mol",
                "imaginary_frequency_cm1", "saddle_note", "path_file", "saddle_file"):
        failed[key] = None
    failed.update(path_status="failed", saddle_verified=False, path=[],
                  error={"error_type": "optimizer_failed", "error_message": "path point 7 did not converge"})
    page = parse(render_report(RunResult.model_validate(doc), blank_plots(doc)))
    section = page.sections[0]
    notes = [e["text"] for e in section["elements"] if e["tag"] == "li" and "-note-" in e["attrs"].get("id", "")]
    assert notes == [f"{job['beta_hydrogens'][0]['class_id']} anti: flags: base bonded to C-alpha (SN2-like).",
                     f"{job['beta_hydrogens'][1]['class_id']} syn: the path failed (optimizer_failed: path point 7 did "
                     "not converge)."]
    saddles = {(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"]): c["text"]
               for c in elements(section, "td", "saddle")}
    assert saddles[(job["beta_hydrogens"][0]["class_id"], "anti")] == f"{flagged['imaginary_frequency_cm1']:.1f}i1"
    assert saddles[(job["beta_hydrogens"][1]["class_id"], "syn")] == "failed2"
    # the failed path has no barrier cells, the others keep theirs
    assert len(elements(section, "td", "barrier")) == 2 * (len(computed(job)))


@pytest.mark.parametrize("run", RUNS)
def test_share_cells_are_the_json_fractions_and_add_up_to_100_percent(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        fractions = [p["fraction"] for p in job["products"]]
        # the Curtin-Hammett shares of one job add up to 1; each is rounded to 4 decimals in the JSON
        assert sum(fractions) == pytest.approx(1.0, abs=len(fractions) * 0.5e-4)
        cells = elements(section, "td", "share")
        assert [c["row"]["attrs"]["data-smiles"] for c in cells] == [p["smiles"] for p in job["products"]]
        shown = [float(re.match(r"([\d.]+) %", c["text"]).group(1)) for c in cells]
        assert shown == [round(100 * f, 1) for f in fractions]
        assert sum(shown) == pytest.approx(100.0, abs=len(shown) * 0.05)
        ranges = elements(section, "td", "share-range")
        for cell, product in zip(ranges, job["products"]):
            low, high = product["fraction_range"]
            assert cell["text"] == f"{100 * low:.1f}\u2013{100 * high:.1f} %"
            assert low <= product["fraction"] <= high
        # the computed major carries the tag, and only it
        tagged = [c["row"]["attrs"]["data-smiles"] for c in cells if "computed major" in c["text"]]
        assert tagged == [job["verdict"]["computed_major"]]


@pytest.mark.parametrize("run", RUNS)
def test_json_shares_are_a_curtin_hammett_mix_of_the_barriers(run):
    # independent recomputation: weight = degeneracy x exp(-dE/RT) per path, summed per alkene (Curtin-Hammett:
    # J. I. Seeman, Chem. Rev. 1983, 83, 83, from memory), R from CODATA via scipy.constants, 1 kcal = 4184 J
    # (thermochemical calorie). Barriers are rounded to 3 decimals in the JSON, shares to 4: hence the tolerance.
    rt = scipy.constants.R * raw(run)["config"]["method"]["temperature_K"] / 4184.0
    for job in raw(run)["jobs"]:
        paths = [(a["product_smiles"], a["barrier_kcal_mol"], b["degeneracy"]) for b, _, a in computed(job)]

        def shares(shift):
            weights = {}
            for smiles, barrier, degeneracy in paths:
                weights[smiles] = weights.get(smiles, 0.0) + degeneracy * math.exp(-(barrier + shift(smiles)) / rt)
            return {k: w / sum(weights.values()) for k, w in weights.items()}

        mix = shares(lambda smiles: 0.0)
        for product in job["products"]:
            assert product["fraction"] == pytest.approx(mix[product["smiles"]], abs=1e-3), product["smiles"]
            s = product["smiles"]
            low = shares(lambda x: BARRIER_SHIFT_KCAL_MOL if x == s else -BARRIER_SHIFT_KCAL_MOL)[s]
            high = shares(lambda x: -BARRIER_SHIFT_KCAL_MOL if x == s else BARRIER_SHIFT_KCAL_MOL)[s]
            assert product["fraction_range"] == pytest.approx([low, high], abs=1e-3), s


def test_the_report_states_the_shift_that_analysis_uses():
    # the page prints BARRIER_SHIFT_KCAL_MOL; results.json does not carry it, analysis has it as defaults
    assert inspect.signature(fraction_ranges).parameters["delta_kcal_mol"].default == BARRIER_SHIFT_KCAL_MOL
    assert inspect.signature(compare_verdicts).parameters["close_kcal_mol"].default == BARRIER_SHIFT_KCAL_MOL


def _notes(svg: str) -> str:
    """Return the atom notes of an RDKit SVG depiction as one string (RDKit draws them a character at a time)."""
    return "".join(re.findall(r"<text[^>]*class='note'[^>]*>([^<]*)</text>", svg))


@pytest.mark.parametrize("run", RUNS)
def test_depiction_labels_each_class_with_its_lowest_relative_barrier(run):
    doc, res = raw(run), result(run)
    smiles = {m["name"]: m["smiles"] for m in doc["molecules"]}
    for job, record in zip(doc["jobs"], res.jobs):
        svg = _notes(substrate_svg(smiles[job["substrate"]], record))
        for beta in job["beta_hydrogens"]:
            values = [a["relative_barrier_kcal_mol"] for _, _, a in computed({"beta_hydrogens": [beta]})]
            label = f"{beta['class_id']}: {min(values):.2f}" if values else f"{beta['class_id']}: -"
            assert label in svg, label
    # without barriers the label is the anti cost, as before
    stripped = RunResult.model_validate(strip_barriers(doc))
    for job, record in zip(doc["jobs"], stripped.jobs):
        svg = _notes(substrate_svg(smiles[job["substrate"]], record))
        for beta in job["beta_hydrogens"]:
            cost = beta["anti_penalty_kcal_mol"]
            assert f"{beta['class_id']}: {'-' if cost is None else f'{cost:.2f}'}" in svg


@pytest.mark.parametrize("run", RUNS)
def test_path_plot_has_a_line_per_path_and_a_mark_per_saddle(run, built):
    doc, res = raw(run), result(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for job, record, section in zip(doc["jobs"], res.jobs, page.sections):
        paths = computed(job)
        ax = path_figure(record).axes[0]
        lines = {ln.get_gid(): ln for ln in ax.get_lines() if ln.get_gid()}
        assert sorted(k for k in lines if k.startswith("path-")) == sorted(f"path-{b['class_id']}-{n}" for b, n, _ in paths)
        assert sorted(k for k in lines if k.startswith("saddle-")) == sorted(f"saddle-{b['class_id']}-{n}" for b, n, _ in paths)
        for beta, name, approach in paths:
            line = lines[f"path-{beta['class_id']}-{name}"]
            assert list(line.get_xdata()) == [p["coordinate_A"] for p in approach["path"]]
            assert list(line.get_ydata()) == [p["relative_energy_kcal_mol"] for p in approach["path"]]
            assert line.get_linestyle() == ("-" if name == "anti" else "--")
            mark = lines[f"saddle-{beta['class_id']}-{name}"]
            top = max(approach["path"], key=lambda p: p["relative_energy_kcal_mol"])
            energy = approach["barrier_kcal_mol"] if approach["barrier_source"] == "verified saddle" \
                else approach["relaxed_path_estimate_kcal_mol"]
            assert (mark.get_xdata()[0], mark.get_ydata()[0]) == (top["coordinate_A"], energy)
            assert (mark.get_markerfacecolor() == "white") == (not approach["saddle_verified"])  # open: unverified
            assert line.get_color() == mark.get_markeredgecolor()
        # the page carries this plot: one element per path and per saddle in the section's inline SVG
        ids = [i for i in section["svg_ids"] if re.search(r"-(path|saddle)-C\d+-H\d+-(anti|syn)$", i)]
        assert len([i for i in ids if "-path-" in i]) == len(paths) == len([i for i in ids if "-saddle-" in i])


# --- plots -------------------------------------------------------------------------------------------


def _label_number(svg: str) -> float:
    """Return the dihedral printed in a Newman SVG ('... = −174.2°'), as a float in degrees."""
    found = re.findall(r"=\s*([\u2212\-]?\d+\.\d)\u00b0", svg)
    assert len(found) == 1, found
    return float(found[0].replace("\u2212", "-"))


@pytest.mark.parametrize("run", RUNS)
def test_newman_dihedral_and_bonds_agree_with_ase_and_rdkit(run):
    res = result(run)
    frames = read_scan_frames(FIXTURES / run, res)
    smiles = {m.name: m.smiles for m in res.molecules}
    checked = 0
    for job in res.jobs:
        graph = Chem.AddHs(Chem.MolFromSmiles(smiles[job.substrate]))  # atom order of results.json
        for beta in job.beta_hydrogens:
            for target in (180.0, 0.0):
                atoms, quad, _ = newman_inputs(beta, job, frames, target)
                h, cb, ca, x = quad
                reference = wrap_degrees(atoms.get_dihedral(h, cb, ca, x))  # ASE: an independent implementation
                view = newman_view(atoms, *quad)
                svg = figure_svg(newman_figure(view, atoms.get_chemical_symbols(), "t"))
                assert _label_number(svg) == pytest.approx(reference, abs=0.051)
                # drawn from the coordinates: X sits the dihedral clockwise from H (IUPAC sign)
                spoke_x = next(s for s in view.back if s.index == x)
                spoke_h = next(s for s in view.front if s.index == h)
                assert spoke_h.angle_deg == pytest.approx(0.0, abs=1e-9)
                assert wrap_degrees(spoke_x.angle_deg - reference) == pytest.approx(0.0, abs=1e-6)
                # the bonds drawn are the SMILES bonds (RDKit's graph), whatever the geometry
                assert {s.index for s in view.front} == {n.GetIdx() for n in graph.GetAtomWithIdx(cb).GetNeighbors()} - {ca}
                assert {s.index for s in view.back} == {n.GetIdx() for n in graph.GetAtomWithIdx(ca).GetNeighbors()} - {cb}
                # the frame used is the one closest to the target among all frames of the class, by ASE
                pool = [a for s in beta.scans for a in ase.io.read(FIXTURES / run / s.xyz_file, index=":")]
                best = min(abs(wrap_degrees(a.get_dihedral(h, cb, ca, x) - target)) for a in pool)
                assert abs(wrap_degrees(reference - target)) == pytest.approx(best, abs=1e-9)
                checked += 1
    assert checked == 2 * sum(len(j.beta_hydrogens) for j in res.jobs)


def test_closest_frame_picks_the_nearest_dihedral_across_the_wrap():
    atoms = ase.io.read(FIXTURES / "halobutane" / "substrates" / "s-2-bromobutane" / "scan-C3-H9-0.xyz", index=":")
    quad = (9, 3, 1, 2)
    k = closest_frame(atoms, quad, 180.0)
    # the scan holds -177.26° and 167.74°: -177.26 is 2.74° from 180 across the wrap
    assert wrap_degrees(atoms[k].get_dihedral(*quad)) == pytest.approx(-177.26, abs=0.01)


def test_scan_plot_draws_every_point_of_the_json():
    res = result("ring")
    job = res.jobs[0]
    fig = scan_figure(job, 150.0, 30.0, 3.0)
    ax = fig.axes[0]
    drawn = set()
    for line in ax.get_lines():
        for xv, yv in zip(line.get_xdata(), line.get_ydata()):
            if -180.0 < xv <= 180.0:
                drawn.add((round(float(xv), 2), round(float(yv), 3)))
    for beta in job.beta_hydrogens:
        for scan in beta.scans:
            for p in scan.points:
                if p.relative_energy_kcal_mol is not None:
                    assert (p.dihedral_deg, p.relative_energy_kcal_mol) in drawn, (beta.class_id, p)
    caps = [ln for ln in ax.get_lines() if ln.get_marker() == "x" and len(ln.get_xdata())]
    assert sum(len(ln.get_xdata()) for ln in caps) == sum(
        p.status == "above_cap" for b in job.beta_hydrogens for s in b.scans for p in s.points)
    spans = sorted(round(p.get_x(), 6) for p in ax.patches)  # anti and syn windows from the values given
    assert spans == [-180.0, -30.0, 150.0]


def test_product_chart_draws_fractions_only_when_given():
    products = result("halobutane").jobs[0].products
    assert len(product_figure(products).axes) == 1
    fig = product_figure(products, {products[0].smiles: (0.7, 0.6, 0.8)})
    assert len(fig.axes) == 2
    bars = [p for p in fig.axes[1].patches if p.get_width() > 0]
    assert [round(b.get_width(), 6) for b in bars] == [70.0]


def test_svg_is_byte_identical_on_rebuild_and_undated():
    job = result("halobutane").jobs[0]
    one = figure_svg(job_figures(job, 150.0, 30.0, 3.0, {})[plot_name(job.job_id, "scan")])
    two = figure_svg(job_figures(job, 150.0, 30.0, 3.0, {})[plot_name(job.job_id, "scan")])
    assert one == two
    assert "<dc:date>" not in one


@pytest.mark.parametrize("run", ALL_RUNS)
def test_the_plot_files_and_the_report_hold_the_kinds_of_one_table(run, built):
    # plots.jobplots.JOB_PLOT_KINDS alone says which plots a job has: the PNG files, the page built from them
    # and the page that draws its plots itself (no assets given) hold the same kinds
    res = result(run)
    assert set(PLOT_WORDS) == {k.kind for k in JOB_PLOT_KINDS}
    drawn = {plot_name(j.job_id, k) for j in res.jobs for k in drawn_kinds(j)}
    assert {n.removesuffix(".png") for n in built[run] if n.endswith(".png") and "-newman-" not in n} == drawn
    for page in (parse(built[run]["report.html"].decode("utf-8")), parse(render_report(res, {}))):
        for job, section in zip(res.jobs, page.sections):
            prefixes = {k.kind: plot_name(job.job_id, k.kind).replace("/", "-") + "-" for k in JOB_PLOT_KINDS}
            inline = {k for k, prefix in prefixes.items() if any(i.startswith(prefix) for i in section["svg_ids"])}
            assert inline == set(drawn_kinds(job)) & set(shown_kinds(job)) == set(drawn_kinds(job))


def test_barriers_without_path_points_keep_the_path_heading_and_say_there_is_no_plot():
    # results written before the path points were kept: barriers, so the heading, but nothing to draw
    doc = raw("halobutane")
    for job in doc["jobs"]:
        for _, _, approach in approaches(job):
            approach["path"] = []
    res = RunResult.model_validate(doc)
    assert all("paths" in shown_kinds(j) and "paths" not in drawn_kinds(j) for j in res.jobs)
    assert words_of(render_report(res, {})).count("Relaxed E2 paths No path plot.") == len(res.jobs)


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


# --- free energies, saddle character, isotope effects and substitution ------------------------------


def shown_free(value: float | None) -> str:
    """Return how the page prints a \u0394G\u2021: like a barrier, or an em dash when absent."""
    return "\u2014" if value is None else shown_barrier(value)


def test_primary_fixture_holds_the_new_fields():
    # the tests below would pass vacuously on a run without these fields
    job = raw(PRIMARY)["jobs"][0]
    assert [a["barrier_free_energy_kcal_mol"] is not None for _, _, a in computed(job)] == [True]
    assert any(a["saddle_character"] for _, _, a in approaches(job))
    assert sum(len(b["isotope_effects"]) for b in job["beta_hydrogens"]) == 2
    assert job["substitution"]["path_status"] == "ok" and job["energy_used"] == "electronic"


@pytest.mark.parametrize("run", ALL_RUNS)
def test_free_barrier_and_character_cells_equal_the_json(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        found = [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"], c["text"])
                 for c in elements(section, "td", "free-barrier")]
        assert found == [(b["class_id"], n, shown_free(a.get("barrier_free_energy_kcal_mol"))) for b, n, a in approaches(job)]
        labels = [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"], c["text"])
                  for c in elements(section, "td", "character")]
        assert labels == [(b["class_id"], n, a["saddle_character"]["label"] if a.get("saddle_character") else "\u2014")
                          for b, n, a in approaches(job)]


@pytest.mark.parametrize("run", ALL_RUNS)
def test_isotope_table_lists_every_isotope_effect_of_the_json(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        rows = [[e["text"] for e in section["elements"] if e["tag"] == "td" and e["row"] is r]
                for r in elements(section, "tr", "kie-row")]
        expected = [[b["class_id"], k["approach"], k["label"], ", ".join(map(str, k["deuterated_indices"])),
                     f"{k['kh_kd']:.2f}", f"{k['kh_kd_wigner']:.2f}", f"{k['temperature_K']:g}"]
                    for b in job["beta_hydrogens"] for k in b.get("isotope_effects", ())]
        assert rows == expected
        assert bool(expected) == (run == PRIMARY)
    # the one sentence that explains the table is there exactly when a table is
    words = words_of(built[run]["report.html"].decode("utf-8"))
    assert ("compare them with your own labelling experiments" in words) == (run == PRIMARY)


def test_isotope_effects_of_the_fixture_are_primary_and_semiclassical():
    # a primary H/D effect is above 1, below the semiclassical ceiling of about 7 at 298 K without tunnelling
    # (Westheimer, Chem. Rev. 1961, 61, 265, from memory); Wigner's correction 1 + (h nu / kT)^2 / 24 (Wigner,
    # Z. Phys. Chem. B 1932, 19, 203, from memory) is larger for H than for D, so it can only raise k_H/k_D
    for beta in raw(PRIMARY)["jobs"][0]["beta_hydrogens"]:
        for k in beta["isotope_effects"]:
            assert 1.0 < k["kh_kd"] < 7.5 and k["kh_kd_wigner"] > k["kh_kd"], k


def test_substitution_box_shows_the_json_split_and_call(built):
    doc = raw(PRIMARY)
    page = parse(built[PRIMARY]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        sub = job["substitution"]
        boxes = elements(section, "div", "sn2")
        assert len(boxes) == 1
        box = boxes[0]
        assert (box["attrs"]["data-elimination"], box["attrs"]["data-substitution"]) == (
            f"{sub['elimination_fraction']:.4f}", f"{sub['substitution_fraction']:.4f}")
        assert sub["elimination_fraction"] + sub["substitution_fraction"] == pytest.approx(1.0, abs=1e-4)
        split = f"E2 {100 * sub['elimination_fraction']:.1f} % : SN2 {100 * sub['substitution_fraction']:.1f} %"
        assert f"Computed split {split}" in box["text"]
        assert f"Textbook call {sub['rule_call']} {sub['rule_reason']}" in box["text"]
        assert box["attrs"]["data-rule-call"] == sub["rule_call"]
        assert f"SN2 product {sub['product_smiles']}" in box["text"]
        assert f"\u0394E\u2021 (kcal/mol) {shown_barrier(sub['barrier_kcal_mol'])}" in box["text"]
        assert f"\u0394G\u2021 (kcal/mol) {shown_free(sub['barrier_free_energy_kcal_mol'])}" in box["text"]
        assert ("verified saddle" in box["text"]) == sub["saddle_verified"] and sub["saddle_note"] in box["text"]
        # the textbook's call for a primary C-alpha and a small base (common practice): substitution wins
        assert sub["rule_call"] == "substitution" and sub["substitution_fraction"] > sub["elimination_fraction"]
    # runs without substitution show no box
    for run in RUNS:
        assert all(elements(s, "div", "sn2") == [] for s in parse(built[run]["report.html"].decode("utf-8")).sections)


@pytest.mark.parametrize("run", ALL_RUNS)
def test_character_plot_has_a_point_per_saddle_with_a_character(run, built):
    doc, res = raw(run), result(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    total = 0
    for job, record, section in zip(doc["jobs"], res.jobs, page.sections):
        expected = {f"character-{b['class_id']}-{n}": (a["saddle_character"]["c_h_cleavage"],
                                                       a["saddle_character"]["c_x_cleavage"])
                    for b, n, a in approaches(job) if a["saddle_verified"] and a.get("saddle_character")}
        name = plot_name(job["job_id"], "character")
        figures = job_figures(record, 150.0, 30.0, 3.0, {})
        assert (name in figures) == bool(expected)
        assert (f"{name}.png" in built[run]) == bool(expected)
        if not expected:
            continue
        ax = figures[name].axes[0]
        points = {ln.get_gid(): (ln.get_xdata()[0], ln.get_ydata()[0]) for ln in ax.get_lines()
                  if (ln.get_gid() or "").startswith("character-C")}
        assert points == expected
        assert all(0.0 <= v <= 1.0 for xy in points.values() for v in xy)
        assert (ax.get_xlim(), ax.get_ylim()) == ((-0.05, 1.05), (-0.05, 1.05))
        corners = " ".join(t.get_text() for t in ax.texts)
        for words in ("reactant", "alkene + conjugate acid + X", "carbanion intermediate", "carbocation intermediate"):
            assert words in corners, words
        # and the page carries it: one inline-SVG element per point
        ids = [i for i in section["svg_ids"] if re.search(r"-character-C\d+-H\d+-(anti|syn)$", i)]
        assert len(ids) == len(expected)
        total += len(expected)
    assert (total > 0) == (run == PRIMARY)


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


def test_reading_the_numbers_explains_the_new_fields(built):
    words = words_of(built[PRIMARY]["report.html"].decode("utf-8"))
    for phrase in ("driven by electronic barriers \u0394E\u2021 in every job", "quasi-RRHO", "standard state 1 M",
                   "Rotational symmetry numbers are 1", "path degeneracy already counts symmetry once",
                   "1 \u2212 the Pauling bond order", "r\u2080 from the free substrate", "More O\u2019Ferrall\u2013Jencks"):
        assert phrase in words, phrase
    assert CAUTION in words
    # a run whose mix was driven by free energies says so instead
    doc = raw(PRIMARY)
    doc["jobs"][0]["energy_used"] = "free"
    words = words_of(render_report(RunResult.model_validate(doc), {}))
    assert "driven by free-energy barriers \u0394G\u2021 (quasi-RRHO, 1 M) in every job" in words
    assert "driven by electronic barriers" not in words


# --- the page in a browser ---------------------------------------------------------------------------


def _browser(profile: Path):
    """Return a headless Chromium WebDriver with a fresh profile folder, or skip the test saying what is missing."""
    try:
        from selenium import webdriver
        from selenium.webdriver.chrome.service import Service
    except ImportError:
        pytest.skip("selenium is not installed (make browser-deps installs it with Chromium and chromedriver)")
    chromium = next((shutil.which(n) for n in ("chromium", "chromium-browser") if shutil.which(n)), None)
    driver_path = shutil.which("chromedriver")
    if chromium is None or driver_path is None:
        pytest.skip("Chromium or chromedriver not found on PATH (Debian: apt-get install chromium chromium-driver)")
    options = webdriver.ChromeOptions()
    options.binary_location = chromium
    for flag in ("--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-dev-shm-usage",
                 "--window-size=1200,900", f"--user-data-dir={profile}"):
        options.add_argument(flag)
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    return webdriver.Chrome(service=Service(executable_path=driver_path), options=options)


def test_report_renders_in_headless_chromium(tmp_path, built):
    doc = raw("ring")
    page = tmp_path / "report.html"
    page.write_bytes(built["ring"]["report.html"])
    driver = _browser(tmp_path / "profile")
    try:
        driver.get(page.as_uri())
        sections = driver.execute_script("return Array.from(document.querySelectorAll('section.job'), s => s.dataset.job);")
        assert sections == [j["job_id"] for j in doc["jobs"]]
        rows = driver.execute_script(
            "return Array.from(document.querySelectorAll('section.job'), s => s.querySelectorAll('tr.beta-row').length);")
        assert rows == [len(j["beta_hydrogens"]) for j in doc["jobs"]]
        # every image decoded, every inline SVG laid out with a size
        images = driver.execute_script("return Array.from(document.images, i => [i.complete, i.naturalWidth]);")
        assert len(images) == sum(len(j["products"]) for j in doc["jobs"])
        assert all(done and width > 0 for done, width in images)
        sizes = driver.execute_script("return Array.from(document.querySelectorAll('section.job svg'), "
                                      "s => s.getBoundingClientRect().width);")
        assert len(sizes) == sum(4 + 2 * len(j["beta_hydrogens"]) for j in doc["jobs"]) and min(sizes) > 50
        # the verdict box is laid out first in each section, with the JSON's word; unverified saddles carry their note
        boxes = driver.execute_script(
            "return Array.from(document.querySelectorAll('section.job'), s => { var b = s.querySelector('div.verdict');"
            " var r = b.getBoundingClientRect(); var t = s.querySelector('table.beta').getBoundingClientRect();"
            " return [b.dataset.agreement, r.height > 20 && r.top < t.top]; });")
        assert boxes == [[{True: "AGREE", False: "DISAGREE", None: "no verdict"}[j["verdict"]["agreement"]], True]
                         for j in doc["jobs"]]
        titles = driver.execute_script("return Array.from(document.querySelectorAll('td.saddle-unverified'), c => c.title);")
        assert titles == [a["saddle_note"] for j in doc["jobs"] for _, _, a in computed(j) if not a["saddle_verified"]]
        # nothing fetched but data: URIs
        fetched = driver.execute_script("return performance.getEntriesByType('resource').map(e => e.name);")
        assert all(name.startswith("data:") for name in fetched), fetched
        # the index sorts by a clicked column: 'not anti-accessible' counts, ascending then descending
        blocked = {j["job_id"]: sum(b["rule_status"] != "anti accessible" for b in j["beta_hydrogens"]) for j in doc["jobs"]}
        heading = driver.execute_script("return Array.from(document.querySelectorAll('#job-index th')).pop();")
        order = "return Array.from(document.querySelectorAll('#job-index tbody tr'), r => r.cells[0].textContent);"
        heading.click()
        assert driver.execute_script(order) == sorted(blocked, key=lambda k: (blocked[k], k))
        heading.click()
        assert [blocked[k] for k in driver.execute_script(order)] == sorted(blocked.values(), reverse=True)
        # index links point at existing sections
        assert driver.execute_script(
            "return Array.from(document.querySelectorAll('#job-index a'), a => !!document.getElementById(a.hash.slice(1)));"
        ) == [True] * len(doc["jobs"])
        # printable: the print CSS starts every job on a new page (so at least one page more than jobs)
        pdf = base64.b64decode(driver.print_page())
        assert pdf.startswith(b"%PDF") and len(re.findall(rb"/Type\s*/Page\b(?!s)", pdf)) >= 1 + len(doc["jobs"])
        errors = [e for e in driver.get_log("browser") if e.get("level") == "SEVERE"]
        assert errors == []
    finally:
        driver.quit()


def test_numerical_trouble_is_listed_in_the_summary_text_and_the_report():
    from elimscan.output.text import summary_table

    doc = raw("halobutane")
    assert not doc["summary"].get("trouble")  # every saddle of this fixture verified: nothing to list
    plain = RunResult.model_validate(doc)
    assert "numerical trouble" not in summary_table(plain) and 'id="trouble"' not in render_report(plain, blank_plots(doc))
    doc["summary"]["trouble"] = {"saddle not verified: saddle_collapsed": 2, "scan point above cap": 5}
    troubled = RunResult.model_validate(doc)
    text = summary_table(troubled)
    assert "  saddle not verified: saddle_collapsed: 2" in text and "  scan point above cap: 5" in text
    page = render_report(troubled, blank_plots(doc))
    assert 'id="trouble"' in page and "saddle not verified: saddle_collapsed: 2" in page
