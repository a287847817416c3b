"""The committed fixture runs of the output tests and the helpers that read them and the report page.

The fixtures in tests/data/report-fixture/ are real outputs of ``elimscan run`` (results.json and the scan
trajectories it references) for configs/halobutane-bases.yaml (``halobutane``: every saddle verified),
configs/ring-demo.yaml (``ring``: two unverified saddles, flagged paths, anti paths not computed) and a small
bromoethane + methoxide run (``primary``: free energies, saddle character, isotope effects, substitution).
Raw JSON is read without our models, so that every number the page shows can be compared with it; the page
is read with the stdlib HTML parser.
"""

from __future__ import annotations

import copy
import json
import re
import shutil
from html.parser import HTMLParser
from pathlib import Path

import pytest

from elimscan.output.plots.jobplots import plot_name
from elimscan.results.documents import RunResult

FIXTURES = Path(__file__).resolve().parent.parent / "data" / "report-fixture"
RUNS = ("halobutane", "ring")
#: the run with the v0.5 fields (barrier_free_energy_kcal_mol, saddle_character, isotope_effects, substitution)
PRIMARY = "primary"
ALL_RUNS = (*RUNS, PRIMARY)
REFRESH = "results.json of the fixture no longer matches records.py: refresh it (tests/data/report-fixture/README.md)"


#: result schema versions whose class labels count atoms from 0 (the labels of 0.7.1 and later count from 1)
ZERO_BASED_LABELS = ("0.7.0", "0.6.1", "0.6.0", "0.5.0", "0.4.0", "0.3.0")


def _renumbered(value, labels: dict[str, str]):
    """Return JSON data with every whole-word class label in ``labels`` replaced; keys ending in _file untouched."""
    if isinstance(value, str):
        return re.sub(r"\bC\d+-H\d+\b", lambda m: labels.get(m.group(0), m.group(0)), value)
    if isinstance(value, list):
        return [_renumbered(v, labels) for v in value]
    if isinstance(value, dict):
        return {k: v if k.endswith("_file") else _renumbered(v, labels) for k, v in value.items()}
    return value


def raw(run: str) -> dict:
    """Return results.json of a fixture run as plain JSON (not through our models), class labels numbered from 1.

    The fixtures were written with 0-based labels ('C0-H3'); the report shows the label of the same class from
    its 0-based index fields + 1 ('C1-H4'), so this helper renumbers them on its own for the comparisons.
    """
    doc = json.loads((FIXTURES / run / "results.json").read_text(encoding="utf-8"))
    if doc["schema_version"] in ZERO_BASED_LABELS:
        jobs = []
        for job in doc["jobs"]:
            labels = {b["class_id"]: f"C{b['beta_carbon_index0'] + 1}-H{b['representative_index0'] + 1}"
                      for b in job.get("beta_hydrogens") or ()}
            jobs.append(_renumbered(job, labels))
        doc["jobs"] = jobs
    return doc


def result(run: str) -> RunResult:
    """Return the RunResult of a fixture run."""
    return RunResult.model_validate_json((FIXTURES / run / "results.json").read_text(encoding="utf-8"))


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


def shown_free(value: float | None) -> str:
    """Return how the page prints a \u0394G\u2021: like a barrier, or an em dash when absent."""
    return "\u2014" if value is None else shown_barrier(value)


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


def browser(profile: Path):
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
