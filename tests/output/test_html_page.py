"""The whole report page: sections, caution and method, escaping, Reading the numbers, failed jobs, trouble.

Read with the stdlib HTML parser, and in headless Chromium (skipped when Chromium, chromedriver or selenium are
not installed).
"""

from __future__ import annotations

import base64
import re

import pytest

from elimscan.output.html.page import render_report
from elimscan.output.html.words import BARRIERS_ABSENT, CAUTION, NO_BARRIERS_JOB
from elimscan.results.documents import RunResult

from reportfixture import PRIMARY, RUNS, blank_plots, browser, computed, elements, parse, raw, result, strip_barriers, words_of


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
        # substrate, path plot, energy profile, scan plot, product chart, projections (the fixtures' jobs all have paths)
        assert section["svg"] == 1 + 4 + n_newman
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
    # the same run without paths: the rule's calls alone, said once per job in its headline and once in its foot
    stripped = strip_barriers(doc)
    blanks = {k: v for k, v in blank_plots(stripped).items() if not k.endswith("-paths")}  # a path plot would be drawn
    page = parse(render_report(RunResult.model_validate(stripped), blanks))
    words = " ".join(" ".join(page.text).split())
    assert BARRIERS_ABSENT in words and "T = 298.15 K" not in words
    assert words.count(NO_BARRIERS_JOB) == len(stripped["jobs"])
    assert words.count("UNDECIDED No paths were computed, the rule's call stands alone") == len(stripped["jobs"])
    for section in page.sections:
        assert elements(section, "td", "barrier") == [] and elements(section, "td", "share") == []
        assert [(v["attrs"]["data-state"], v["attrs"]["data-why-undecided"])
                for v in elements(section, "div", "verdict")] == [("undecided", "no paths computed")]
        assert section["svg"] == 3  # substrate, scans, products: no path plot drawn (and no trajectories given)


def test_html_shows_a_failed_job():
    doc = raw("halobutane")
    doc["jobs"][1] = {"job_id": "broken__job", "substrate": "s-2-bromobutane", "base": "tert-butoxide",
                      "status": "failed", "error": {"error_type": "optimizer_failed", "error_message": "no convergence"}}
    page = parse(render_report(RunResult.model_validate(doc), {}))
    assert [s["job"] for s in page.sections] == [doc["jobs"][0]["job_id"], "broken__job"]
    assert page.sections[1]["beta_rows"] == [] and page.sections[1]["svg"] == 0
    assert "optimizer_failed: no convergence" in " ".join(page.text)


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


def test_report_renders_in_headless_chromium(tmp_path, built):
    doc = raw("ring")
    page = tmp_path / "report.html"
    page.write_bytes(built["ring"]["report.html"])
    driver = browser(tmp_path / "profile")
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
        assert len(sizes) == sum(5 + 2 * len(j["beta_hydrogens"]) for j in doc["jobs"]) and min(sizes) > 50
        # the headline is laid out first in each section, in the JSON's state (a call within the method's uncertainty
        # is undecided, its badge grey); unverified saddles carry their note
        boxes = driver.execute_script(
            "return Array.from(document.querySelectorAll('section.job'), s => { var b = s.querySelector('div.verdict');"
            " var r = b.getBoundingClientRect(); var t = s.querySelector('table.beta').getBoundingClientRect();"
            " var c = getComputedStyle(b.querySelector('.badge')).backgroundColor;"
            " return [b.dataset.state, r.height > 20 && r.top < t.top, c]; });")
        states = ["undecided" if j["verdict"]["within_method_uncertainty"] else "agree" if j["verdict"]["agreement"]
                  else "disagree" for j in doc["jobs"]]
        assert [b[:2] for b in boxes] == [[state, True] for state in states]
        grey = {"rgb(107, 107, 107)"}
        assert all((b[2] in grey) == (b[0] == "undecided") for b in boxes), boxes
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
        # a run of one substrate with two bases: the two stand side by side above the job sections, one column
        # per base, each linking to its section, with the headline's state in the verdict row
        other = tmp_path / "two-bases.html"
        other.write_bytes(built["halobutane"]["report.html"])
        driver.get(other.as_uri())
        compared = driver.execute_script(
            "var c = document.getElementById('compared'); var j = document.querySelector('section.job');"
            " var t = c.querySelector('table.compare');"
            " return [c.getBoundingClientRect().bottom < j.getBoundingClientRect().top,"
            " Array.from(t.rows[0].cells, x => x.textContent).slice(1),"
            " Array.from(t.querySelectorAll('a'), a => !!document.getElementById(a.hash.slice(1))),"
            " Array.from(t.querySelectorAll('tr[data-row=verdict] td'), x => x.className)];")
        two = raw("halobutane")["jobs"]
        assert compared == [True, [j["base"] for j in two], [True, True], ["state-undecided", "state-undecided"]]
    finally:
        driver.quit()
