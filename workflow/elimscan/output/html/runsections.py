"""The report's sections over all jobs: the sortable job index, substituent series and base models compared."""

from __future__ import annotations

from collections.abc import Mapping

from elimscan.output.html.boxes import undecided_why, verdict_word
from elimscan.output.html.cells import ABSENT, anchor, barrier_text, esc, figure_block
from elimscan.output.html.words import SERIES_SENTENCE
from elimscan.output.plots.figures import figure_svg, signed
from elimscan.output.plots.series import SERIES_BARRIER_WORDS, rho_text, series_figure, series_plot_name
from elimscan.output.tables import job_solvent
from elimscan.output.comparison import comparison_rows, header_rows, score_line
from elimscan.output.text import r_squared_text, run_comparisons
from elimscan.results.documents import RunResult, SeriesRecord


def index_table(result: RunResult) -> str:
    """Return the sortable index of all jobs: substrate, base, solvent, status, major alkenes, verdict, class counts."""
    rows = []
    for n, job in enumerate(result.jobs):
        solvent = job_solvent(result, job)
        major = job.rule.rule_major if job.rule is not None and job.rule.rule_major else "\u2013"
        computed = job.verdict.computed_major if job.verdict is not None and job.verdict.computed_major else "\u2013"
        word = verdict_word(job)
        blocked = sum(b.rule_status != "anti accessible" for b in job.beta_hydrogens)
        rows.append(
            f'<tr><td data-key="{n:04d}"><a href="#{esc(anchor(job))}">{esc(job.job_id)}</a></td>'
            f"<td>{esc(job.substrate)}</td><td>{esc(job.base)}</td>"
            f"<td>{esc(solvent.name if solvent.model != 'none' else 'gas phase')}</td>"
            f'<td class="status-{esc(job.status)}">{esc(job.status)}</td>'
            f'<td class="smiles">{esc(major)}</td><td class="smiles">{esc(computed)}</td>'
            f'<td class="state-{esc(word.lower())}">{esc(word)}{esc(f" ({undecided_why(job)})" if undecided_why(job) else "")}</td>'
            f'<td class="num">{len(job.beta_hydrogens)}</td><td class="num">{blocked}</td></tr>')
    return ('<h2 id="jobs">Jobs</h2>\n<p class="note">Click a column heading to sort.</p>\n'
            '<table class="sortable" id="job-index"><thead><tr><th>job</th><th>substrate</th><th>base</th>'
            '<th>solvent</th><th>status</th><th>rule\u2019s major alkene</th><th>computed major alkene</th>'
            '<th>verdict</th><th class="num">H classes</th>'
            '<th class="num">not anti-accessible</th></tr></thead>\n<tbody>\n' + "\n".join(rows) + "\n</tbody></table>")


def _series_block(series: SeriesRecord, assets: Mapping[str, str]) -> str:
    """Return one series: its table of members, the fitted line in words and the Hammett plot."""
    word = SERIES_BARRIER_WORDS[series.energy_used]
    rows = []
    for point in series.points:
        rows.append(f'<tr class="series-row" data-status="{esc(point.status)}"><td>{esc(point.substrate)}</td>'
                    f'<td class="num">{esc(signed(point.sigma, 2))}</td>'
                    f'<td class="num">{esc(barrier_text(point.barrier_kcal_mol))}</td>'
                    f"<td>{esc(point.path or ABSENT)}{'' if point.barrier_source != 'relaxed-path maximum' else ' *'}</td>"
                    f'<td class="num">{esc(ABSENT if point.log10_k_rel is None else signed(point.log10_k_rel, 2))}</td>'
                    f"<td>{esc(point.note or '')}</td></tr>")
    if series.rho is not None:
        fit = (f"\u03c1 = {rho_text(series.rho)}, r\u00b2 = {r_squared_text(series.r_squared)}, from {series.n_fitted} members; "
               f"k\u2080: {series.reference_substrate}")
    else:
        fit = f"no fit: {series.note}"
    solvent = f", {series.solvent.model} {series.solvent.name or ''}".rstrip() if series.solvent is not None else ""
    key = series_plot_name(series)
    svg = assets.get(key)
    if svg is None and any(p.status == "ok" for p in series.points):
        svg = figure_svg(series_figure(series))
    source = f" \u03c3 values: {series.sigma_source}." if series.sigma_source else ""
    return (f'<div class="series" data-series="{esc(series.name)}"><h3>{esc(series.name)} with {esc(series.base)}'
            f"{esc(solvent)}</h3>"
            f'<p class="series-fit"><strong>{esc(fit)}</strong> ({esc(word)}, {series.temperature_K:g} K).{esc(source)}</p>'
            '<table class="series-table"><thead><tr><th>substrate</th><th class="num">\u03c3</th>'
            f'<th class="num">{esc(word)}<br>kcal/mol</th><th>lowest path</th><th class="num">log\u2081\u2080(k/k\u2080)</th>'
            "<th>note</th></tr></thead>\n<tbody>\n" + "\n".join(rows) + "\n</tbody></table>"
            + figure_block(svg, key.replace("/", "-"), f"Hammett plot of {series.name}: log\u2081\u2080(k/k\u2080) against "
                           f"\u03c3 with the fitted line; right axis: the same points as {word} in kcal/mol.",
                           "No member has a barrier: no plot.") + "</div>")


def series_section(result: RunResult, assets: Mapping[str, str]) -> str:
    """Return the report's section of substituent series (Hammett fits), one block per series and solvent."""
    return ('<section class="series-section" id="series"><h2>Substituent series</h2>'
            + "".join(_series_block(s, assets) for s in result.series)
            + f'<p class="note">{esc(SERIES_SENTENCE)} * : relaxed-path maximum, saddle not verified.</p></section>')


def comparison_section(result: RunResult) -> str:
    """Return the report's comparison of each substrate across bases, solvents and base models (one table each,
    a column per job, observations and scores where the config holds them), or '' when no substrate has one."""
    blocks = []
    anchors = {job.job_id: anchor(job) for job in result.jobs}
    for comparison in run_comparisons(result):
        heads = header_rows(comparison)
        thead = ("<tr><th></th>" + "".join(f'<th><a href="#{esc(anchors[c.job_id])}">{esc(c.base)}</a></th>'
                                          for c in comparison.columns) + "</tr>"
                 + "".join(f'<tr><th class="row">{esc(row.label)}</th>'
                           + "".join(f"<th>{esc(cell.text)}</th>" for cell in row.cells) + "</tr>" for row in heads[1:]))
        body = "".join(
            f'<tr data-row="{esc(row.key)}"><th class="row{" smiles" if row.key == "alkene" else ""}">{esc(row.label)}</th>'
            + "".join(f'<td class="{esc(("state-" + cell.kind) if row.key == "verdict" else cell.kind)}">{esc(cell.text)}</td>'
                      for cell in row.cells) + "</tr>"
            for row in comparison_rows(comparison))
        score = score_line(comparison)
        blocks.append(f'<div class="comparison" data-substrate="{esc(comparison.substrate)}"><h3>{esc(comparison.substrate)}</h3>'
                      f'<div class="wide"><table class="compare"><thead>{thead}</thead><tbody>{body}</tbody></table></div>'
                      + (f'<p class="score-line"><strong>{esc(score[0].upper() + score[1:])}</strong></p>' if score else "")
                      + "</div>")
    if not blocks:
        return ""
    return ('<section id="compared"><h2>Each substrate across bases, solvents and base models</h2>'
            '<p class="note">One column per job. Alkene rows: the computed share of the alkenes, in brackets the share '
            "when every barrier moves by \u00b11 kcal/mol, and the observed share where the config gives one (exp.). "
            "The gap: best barrier of the computed major alkene\u2019s closest rival minus its own, with the ratio it "
            "implies at the job\u2019s temperature. A score counts undecided as not right; the rule is scored in its own "
            "row.</p>" + "".join(blocks) + "</section>")
