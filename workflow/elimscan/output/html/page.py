"""The whole self-contained report page of a run: head, caution, "Reading the numbers", sections, script."""

from __future__ import annotations

from collections.abc import Mapping

from elimscan.output.html.cells import esc
from elimscan.output.html.jobsection import job_section
from elimscan.output.html.runsections import comparison_section, index_table, series_section
from elimscan.output.html.structures import VIEWER_SCRIPT, StructureLinks
from elimscan.output.html.style import CSP, SCRIPT, STYLE
from elimscan.output.html.words import CAUTION, reading_points, run_method_line
from elimscan.output.plots.figures import figure_svg
from elimscan.output.plots.jobplots import drawn_kinds, job_figures, plot_name
from elimscan.results.documents import RunResult


def own_plots(result: RunResult, job, assets: Mapping[str, str]) -> dict[str, str]:
    """Return {plot name: SVG} of the job's plots missing from ``assets``, drawn from results.json alone."""
    rule = result.config.rule
    if all(plot_name(job.job_id, k) in assets for k in drawn_kinds(job)):
        return {}
    figures = job_figures(job, rule.anti_min_deg, rule.syn_max_deg, rule.energy_window_kcal_mol, {})
    return {k: figure_svg(f) for k, f in figures.items() if k not in assets}


def render_report(result: RunResult, assets: Mapping[str, str], links: StructureLinks | None = None,
                  record: dict | None = None) -> str:
    """Return the whole report as one self-contained HTML document (UTF-8 text).

    ``assets`` maps plot names (``plots.jobplots.plot_name``) to SVG text; the plots of
    ``plots.jobplots.JOB_PLOT_KINDS`` missing from it are drawn here from results.json alone, Newman
    projections (which need the scan trajectories) are left out. With ``links`` the tables link the structure
    files and each saddle with frames gets a 3D view. With ``record`` (the benchmark record) each verdict carries
    the benchmark's counts for the job's kinds of choice.
    """
    p = result.provenance
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f'<meta http-equiv="Content-Security-Policy" content="{CSP}">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>elimscan report: {esc(result.config.name)}</title>",
        f"<style>{STYLE}</style></head><body>",
        f"<header><h1>E2 geometry report: {esc(result.config.name)}</h1>",
        f'<p class="meta">elimscan {esc(p.program_version)} \u00b7 results written {esc(p.created_utc)} \u00b7 '
        f"seed {result.seeds.rdkit_embedding} \u00b7 {result.summary.n_jobs_ok} of {result.summary.n_jobs} jobs ok</p>",
        f'<p class="meta">Method: {esc(run_method_line(result))}.</p>',
        f'<p class="meta">Command: <code>{esc(p.command_line)}</code></p></header>',
        f'<aside class="caution" id="caution"><strong>Caution.</strong> {esc(CAUTION)}</aside>',
        '<h2 id="meaning">Reading the numbers</h2><ul class="meaning">'
        + "".join(f"<li>{esc(m)}</li>" for m in reading_points(result)) + "</ul>",
    ]
    if result.summary.trouble:
        parts.append('<h2 id="trouble">Numerical trouble recorded as data</h2><ul class="meaning">'
                     + "".join(f"<li>{esc(kind)}: {count}</li>" for kind, count in result.summary.trouble.items())
                     + "</ul><p class=\"note\">Each is on its record in results.json (error_type, saddle_error_type, "
                     "scan point status); the other classes and jobs went on.</p>")
    if len(result.jobs) > 1:
        parts.append(index_table(result))
    parts.append(comparison_section(result))
    for job in result.jobs:
        parts.append(job_section(result, job, assets, own_plots(result, job, assets), links, record))
    if result.series:
        parts.append(series_section(result, assets))
    parts.append(f'<footer class="note"><p>Made by elimscan {esc(p.program_version)} from results.json '
                 f"(schema {esc(result.schema_name)} {esc(result.schema_version)}).</p></footer>")
    parts.append(f"<script>{SCRIPT}{VIEWER_SCRIPT if links is not None else ''}</script></body></html>")
    return "\n".join(parts) + "\n"
