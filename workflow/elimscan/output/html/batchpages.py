"""The report of a large run as an index page (sortable, filterable) and one small page per job.

The index (``report.html``) is one table row per job with its outcome in words and a link to the job's page
(``report/<job>.html``). A job page holds the job's section as the single page does, with its plots as links to
the PNG files in ``plots/`` instead of inline SVG: that is what keeps it small. Every page forbids network loads.
"""

from __future__ import annotations

import hashlib

from elimscan.chem.alkenenames import alkene_description
from elimscan.config.names import safe_name
from elimscan.output.html.boxes import undecided_why, verdict_word
from elimscan.output.html.cells import barrier_text, esc, percent_text
from elimscan.output.html.jobsection import job_section
from elimscan.output.html.structures import VIEWER_SCRIPT, StructureLinks
from elimscan.output.html.style import CSP, SCRIPT, STYLE
from elimscan.output.html.words import CAUTION, reading_points, run_method_line
from elimscan.output.plots.jobplots import NEWMAN_TARGETS_DEG, drawn_kinds, newman_plot_name, plot_name
from elimscan.output.tables import job_solvent
from elimscan.results.documents import RunResult
from elimscan.results.records import JobRecord

#: the folder of the job pages, relative to the output folder
PAGES_FOLDER = "report"
#: longest job page name (characters, without '.html') taken from a job id as it stands
PAGE_NAME_MAX_CHARS = 80
#: a job page may load the PNG plots beside it (local files only: still no network)
JOB_PAGE_CSP = CSP.replace("img-src data:", "img-src data: 'self' file:")

#: the index's filter: a text box over every cell, and a choice of status and verdict
FILTER_SCRIPT = r"""
(function () {
  var box = document.getElementById("job-filter"), status = document.getElementById("status-filter");
  var verdict = document.getElementById("verdict-filter"), table = document.getElementById("job-index");
  var count = document.getElementById("job-count");
  function apply() {
    var words = box.value.toLowerCase().split(/\s+/).filter(Boolean), shown = 0;
    Array.prototype.forEach.call(table.tBodies[0].rows, function (row) {
      var text = row.textContent.toLowerCase();
      var ok = words.every(function (w) { return text.indexOf(w) >= 0; })
        && (!status.value || row.dataset.status === status.value)
        && (!verdict.value || row.dataset.verdict === verdict.value);
      row.hidden = !ok; if (ok) shown++;
    });
    count.textContent = shown + " of " + table.tBodies[0].rows.length + " jobs shown";
  }
  [box, status, verdict].forEach(function (e) { e.addEventListener("input", apply); });
  apply();
})();
"""


def job_page_name(job: JobRecord) -> str:
    """Return the output-relative path of a job's page, e.g. 'report/2-bromobutane__ethoxide.html'.

    A job id that is no file name as it stands (too long, or characters a file name cannot hold) is shortened
    and made unique by the start of its SHA-256: 'report/<first 60 characters>-<8 hex digits>.html'.
    """
    name = safe_name(job.job_id)
    if name != job.job_id or len(name) > PAGE_NAME_MAX_CHARS:
        name = f"{name[:60]}-{hashlib.sha256(job.job_id.encode()).hexdigest()[:8]}"
    return f"{PAGES_FOLDER}/{name}.html"


def image_assets(result: RunResult, job: JobRecord, plot_files: frozenset[str]) -> dict[str, str]:
    """Return {plot name: <img> tag} for the job's plots whose PNG is in ``plot_files`` (paths from the page)."""
    names = [plot_name(job.job_id, k) for k in drawn_kinds(job)]
    names += [newman_plot_name(job.job_id, b.class_id, g) for b in job.beta_hydrogens for g in NEWMAN_TARGETS_DEG]
    return {n: f'<img class="plot" src="../{esc(n)}.png" alt="{esc(n.split("/")[-1])}">'
            for n in names if f"{n}.png" in plot_files}


def _head(title: str, csp: str) -> list[str]:
    """Return the opening lines of a page: doctype, policy, title, style."""
    return ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
            f'<meta http-equiv="Content-Security-Policy" content="{csp}">',
            '<meta name="viewport" content="width=device-width, initial-scale=1">',
            f"<title>{esc(title)}</title>", f"<style>{STYLE}</style></head><body>"]


def render_job_page(result: RunResult, job: JobRecord, plot_files: frozenset[str], links: StructureLinks,
                    record: dict | None = None) -> str:
    """Return the page of one job (HTML text): its section with plots as PNG files, links and 3D views.

    ``plot_files``: the PNG files of the run (paths relative to the output folder); a plot not among them is
    reported missing as in the single page.
    """
    p = result.provenance
    parts = _head(f"elimscan: {job.job_id}", JOB_PAGE_CSP) + [
        f'<header><p class="meta"><a href="../report.html">\u2190 all jobs of {esc(result.config.name)}</a></p>',
        f'<p class="meta">elimscan {esc(p.program_version)} \u00b7 results written {esc(p.created_utc)}</p></header>',
        f'<aside class="caution" id="caution"><strong>Caution.</strong> {esc(CAUTION)}</aside>',
        job_section(result, job, image_assets(result, job, plot_files), {}, links, record),
        '<details><summary>Reading the numbers</summary><ul class="meaning">'
        + "".join(f"<li>{esc(m)}</li>" for m in reading_points(result)) + "</ul></details>",
        f"<script>{SCRIPT}{VIEWER_SCRIPT}</script></body></html>",
    ]
    return "\n".join(parts) + "\n"


def _major_cell(smiles: str | None) -> str:
    """Return a cell with an alkene's SMILES and name, or a dash."""
    if not smiles:
        return "<td>\u2013</td>"
    return f'<td><span class="smiles">{esc(smiles)}</span><br><span class="product-name">{esc(alkene_description(smiles))}</span></td>'


def _index_row(result: RunResult, job: JobRecord) -> str:
    """Return the index row of one job: link, substrate, base, solvent, status, the majors, verdict, E2 share."""
    solvent = job_solvent(result, job)
    word = verdict_word(job)
    rule_major = job.rule.rule_major if job.rule is not None else None
    computed = job.verdict.computed_major if job.verdict is not None else None
    e2 = job.substitution.elimination_fraction if job.substitution is not None else None
    lowest = [a.barrier_kcal_mol for b in job.beta_hydrogens for a in (b.anti, b.syn)
              if a.path_status == "ok" and a.barrier_kcal_mol is not None]
    low = min(lowest) if lowest else None
    return (f'<tr class="job-row" data-status="{esc(job.status)}" data-verdict="{esc(word)}">'
            f'<td><a class="job-link" href="{esc(job_page_name(job))}">{esc(job.job_id)}</a></td>'
            f"<td>{esc(job.substrate)}</td><td>{esc(job.base)}</td>"
            f"<td>{esc(solvent.name if solvent.model != 'none' else 'gas phase')}</td>"
            f'<td class="status-{esc(job.status)}">{esc(job.status)}</td>{_major_cell(rule_major)}{_major_cell(computed)}'
            f"<td>{esc(word)}{f' ({esc(why)})' if (why := undecided_why(job)) else ''}</td>"
            f'<td class="num" data-key="{"" if e2 is None else f"{e2:.4f}"}">{esc(percent_text(e2))}</td>'
            f'<td class="num" data-key="{"" if low is None else f"{low:.3f}"}">{esc(barrier_text(low))}</td>'
            f'<td class="num">{len(job.beta_hydrogens)}</td></tr>')


def render_index(result: RunResult) -> str:
    """Return the index page of a run (HTML text): one sortable, filterable row per job, linking its page."""
    p = result.provenance
    words = sorted({verdict_word(j) for j in result.jobs})
    options = "".join(f'<option value="{esc(w)}">{esc(w)}</option>' for w in words)
    parts = _head(f"elimscan report: {result.config.name}", CSP) + [
        f"<header><h1>E2 geometry report: {esc(result.config.name)}</h1>",
        f'<p class="meta">elimscan {esc(p.program_version)} \u00b7 results written {esc(p.created_utc)} \u00b7 '
        f"{result.summary.n_jobs_ok} of {result.summary.n_jobs} jobs ok</p>",
        f'<p class="meta">Method: {esc(run_method_line(result))}.</p></header>',
        f'<aside class="caution" id="caution"><strong>Caution.</strong> {esc(CAUTION)}</aside>',
        '<h2 id="jobs">Jobs</h2><p class="note">Click a heading to sort; type to filter (every word must appear in '
        "the row). Each job opens on a page of its own with its tables, plots, structure files and saddles in 3D.</p>",
        '<p><input id="job-filter" type="search" placeholder="filter, e.g. ethoxide disagree" aria-label="filter jobs">'
        '<select id="status-filter" aria-label="status"><option value="">any status</option>'
        '<option value="ok">ok</option><option value="failed">failed</option></select> '
        f'<select id="verdict-filter" aria-label="verdict"><option value="">any verdict</option>{options}</select> '
        '<span id="job-count" class="note"></span></p>',
        '<table class="sortable" id="job-index"><thead><tr><th>job</th><th>substrate</th><th>base</th><th>solvent</th>'
        "<th>status</th><th>rule\u2019s major alkene</th><th>computed major alkene</th><th>verdict</th>"
        '<th class="num">E2 share<br>(against SN2)</th><th class="num">lowest \u0394E\u2021<br>kcal/mol</th>'
        '<th class="num">H classes</th></tr></thead>\n<tbody>\n'
        + "\n".join(_index_row(result, j) for j in result.jobs) + "\n</tbody></table>",
        '<h2 id="meaning">Reading the numbers</h2><ul class="meaning">'
        + "".join(f"<li>{esc(m)}</li>" for m in reading_points(result)) + "</ul>",
        f'<footer class="note"><p>Made by elimscan {esc(p.program_version)} from results.json '
        f"(schema {esc(result.schema_name)} {esc(result.schema_version)}).</p></footer>",
        f"<script>{SCRIPT}{FILTER_SCRIPT}</script></body></html>",
    ]
    return "\n".join(parts) + "\n"


def batch_pages(result: RunResult, plot_files: frozenset[str], links: StructureLinks,
                record: dict | None = None) -> dict[str, str]:
    """Return {output-relative path: HTML text} of the index (report.html) and every job's page."""
    pages = {"report.html": render_index(result)}
    for job in result.jobs:
        pages[job_page_name(job)] = render_job_page(result, job, plot_files, links, record)
    return pages
