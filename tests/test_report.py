"""Report files (CSV, plots, HTML) and result validation, on two committed runs (fast tier: no GFN2-xTB).

The fixtures in tests/data/report-fixture/ are real outputs of ``elimscan run`` (results.json and the scan
trajectories it references) for configs/demo.yaml (``demo``) and configs/ring-demo.yaml (``ring``).
Checks against something outside elimscan: ASE's ``Atoms.get_dihedral`` for the Newman projections'
dihedrals, RDKit's bond graph from the SMILES for the bonds the projection draws, the stdlib csv and
HTML parsers for the files, jsonschema for validation, and headless Chromium for the page (skipped
when Chromium, chromedriver or selenium are not installed).
"""

from __future__ import annotations

import base64
import copy
import csv
import io
import json
import re
import shutil
from html.parser import HTMLParser
from pathlib import Path

import ase.io
import pytest
from rdkit import Chem

from elimscan.geometry import wrap_degrees
from elimscan.htmlreport import BARRIERS_ABSENT, BARRIERS_NOT_SHOWN, CAUTION, render_report
from elimscan.plots import (closest_frame, figure_svg, job_figures, newman_figure, newman_inputs, newman_view, plot_name,
                            product_figure, scan_figure)
from elimscan.records import RESULT_SCHEMA_VERSION, RunResult
from elimscan.reportfiles import build_report_files, read_scan_frames, validate_result_file
from elimscan.tables import SUMMARY_COLUMNS, summary_csv

FIXTURES = Path(__file__).resolve().parent / "data" / "report-fixture"
RUNS = ("demo", "ring")
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
    return {run: build_report_files(FIXTURES / run) for run in RUNS}


class _Page(HTMLParser):
    """Collects, per job section, its id, its beta-H rows, images and inline SVGs; and every resource URL."""

    def __init__(self) -> None:
        super().__init__()
        self.sections: list[dict] = []
        self.urls: list[str] = []
        self.text: list[str] = []
        self.meta: list[dict] = []
        self.index_links: list[str] = []
        self._in_index = False

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
            self.sections.append({"id": a.get("id"), "job": a.get("data-job"), "beta_rows": [], "img": [], "svg": 0})
        elif self.sections:
            here = self.sections[-1]
            if tag == "tr" and "beta-row" in (a.get("class") or "").split():
                here["beta_rows"].append(a.get("data-class"))
            if tag == "img":
                here["img"].append(a.get("src", ""))
            if tag == "svg":
                here["svg"] += 1

    def handle_endtag(self, tag):
        if tag == "table":
            self._in_index = False

    def handle_data(self, data):
        self.text.append(data)


def parse(html_text: str) -> _Page:
    page = _Page()
    page.feed(html_text)
    return page


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


def test_csv_keeps_a_failed_job_as_one_row():
    doc = raw("demo")
    failed = {"job_id": doc["jobs"][1]["job_id"], "substrate": doc["jobs"][1]["substrate"],
              "base": doc["jobs"][1]["base"], "status": "failed",
              "error": {"error_type": "scf_not_converged", "error_message": "SCF did not converge for 'x'"}}
    doc["jobs"][1] = failed
    rows = list(csv.DictReader(io.StringIO(summary_csv(RunResult.model_validate(doc)))))
    last = [r for r in rows if r["job_id"] == failed["job_id"]]
    assert len(last) == 1 and last[0]["job_status"] == "failed" and last[0]["product_smiles"] == ""
    assert last[0]["error"] == "scf_not_converged: SCF did not converge for 'x'"


# --- report files ------------------------------------------------------------------------------------


def test_rebuilding_gives_byte_identical_files(built):
    again = build_report_files(FIXTURES / "demo")
    assert sorted(again) == sorted(built["demo"])
    for name, content in again.items():
        assert content == built["demo"][name], name


@pytest.mark.parametrize("run", RUNS)
def test_report_files_are_the_csv_the_html_and_one_png_per_plot(run, built):
    doc = raw(run)
    files = built[run]
    expected = {"summary.csv", "report.html"}
    for job in doc["jobs"]:
        expected |= {f"plots/{job['job_id']}-scan.png", f"plots/{job['job_id']}-products.png"}
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
        assert section["svg"] == 1 + 2 + n_newman  # substrate, scan plot, product chart, projections
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
    # no resource from the network: every src/href is local (#anchor) or a data: URI
    for url in page.urls:
        assert url.startswith("#") or url.startswith("data:"), url
    assert not re.search(r"url\(\s*['\"]?\s*(https?:)?//", text)
    assert "@import" not in text
    csp = [m for m in page.meta if m.get("http-equiv") == "Content-Security-Policy"]
    assert csp and "default-src 'none'" in csp[0]["content"]


def test_html_escapes_user_strings():
    doc = raw("demo")
    evil = "<b>bad & \"name\"</b>"
    doc["config"]["name"] = evil
    doc["jobs"][0]["substrate"] = doc["molecules"][0]["name"] = doc["config"]["substrates"][0]["name"] = evil
    doc["jobs"][0]["products"][0]["reason"] = "<script>alert(1)</script>"
    text = render_report(RunResult.model_validate(doc), {})
    assert evil not in text and "<script>alert(1)" not in text
    assert "&lt;b&gt;bad &amp; &quot;name&quot;&lt;/b&gt;" in text
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in text


def test_html_says_whether_barriers_were_computed():
    # the fixtures carry barriers; the report does not show them, and says so instead of "not computed"
    words = " ".join(" ".join(parse(render_report(result("demo"), {})).text).split())
    assert BARRIERS_NOT_SHOWN in words and BARRIERS_ABSENT not in words
    doc = raw("demo")
    for job in doc["jobs"]:
        for b in job["beta_hydrogens"]:
            for approach in (b["anti"], b["syn"]):
                if "barrier_kcal_mol" in approach:
                    approach["barrier_kcal_mol"] = None
    words = " ".join(" ".join(parse(render_report(RunResult.model_validate(doc), {})).text).split())
    assert BARRIERS_ABSENT in words and BARRIERS_NOT_SHOWN not in words
    assert words.count("no barriers were computed for this job") == len(doc["jobs"])


def test_html_without_trajectories_still_has_scan_plots_and_says_why_projections_are_missing(tmp_path):
    shutil.copy(FIXTURES / "demo" / "results.json", tmp_path / "results.json")
    files = build_report_files(tmp_path)
    assert not any("newman" in name for name in files)
    page = parse(files["report.html"].decode("utf-8"))
    assert all(s["svg"] == 3 for s in page.sections)  # substrate, scans, products
    assert "the scan trajectory was not available" in " ".join(page.text)


def test_html_shows_a_failed_job():
    doc = raw("demo")
    doc["jobs"][1] = {"job_id": "broken__job", "substrate": "s-2-chloropentane", "base": "tert-butoxide",
                      "status": "failed", "error": {"error_type": "optimizer_failed", "error_message": "no convergence"}}
    page = parse(render_report(RunResult.model_validate(doc), {}))
    assert [s["job"] for s in page.sections] == [doc["jobs"][0]["job_id"], "broken__job"]
    assert page.sections[1]["beta_rows"] == [] and page.sections[1]["svg"] == 0
    assert "optimizer_failed: no convergence" in " ".join(page.text)


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
    atoms = ase.io.read(FIXTURES / "demo" / "substrates" / "s-2-chloropentane" / "scan-C3-H10-0.xyz", index=":")
    quad = (10, 3, 1, 2)
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
    products = result("demo").jobs[0].products
    assert len(product_figure(products).axes) == 1
    fig = product_figure(products, {products[0].smiles: (0.7, 0.6, 0.8)})
    assert len(fig.axes) == 2
    bars = [p for p in fig.axes[1].patches if p.get_width() > 0]
    assert [round(b.get_width(), 6) for b in bars] == [70.0]


def test_svg_is_byte_identical_on_rebuild_and_undated():
    job = result("demo").jobs[0]
    one = figure_svg(job_figures(job, 150.0, 30.0, 3.0, {})[plot_name(job.job_id, "scan")])
    two = figure_svg(job_figures(job, 150.0, 30.0, 3.0, {})[plot_name(job.job_id, "scan")])
    assert one == two
    assert "<dc:date>" not in one


# --- validation --------------------------------------------------------------------------------------


@pytest.mark.parametrize("run", RUNS)
def test_fixture_results_are_valid(run):
    assert raw(run)["schema_version"] == RESULT_SCHEMA_VERSION, REFRESH
    assert validate_result_file(FIXTURES / run / "results.json") == [], REFRESH


def test_broken_results_name_the_offending_paths(tmp_path):
    doc = copy.deepcopy(raw("demo"))
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
    missing = dict(raw("demo"))
    del missing["summary"]
    gone = tmp_path / "gone.json"
    gone.write_text(json.dumps(missing), encoding="utf-8")
    assert validate_result_file(gone) == ["(top level): 'summary' is a required property"]


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
        assert len(sizes) == sum(3 + 2 * len(j["beta_hydrogens"]) for j in doc["jobs"]) and min(sizes) > 50
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
