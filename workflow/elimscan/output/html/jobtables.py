"""The tables of a job section: beta-H classes with their barriers and notes, alkenes, isotope effects."""

from __future__ import annotations

import base64

from elimscan.chem.alkenenames import alkene_description
from elimscan.output.html.cells import ABSENT, DASH, anchor, barrier_text, esc, num_cell, percent_text
from elimscan.output.html.depictions import product_png
from elimscan.output.html.structures import StructureLinks, files_cell
from elimscan.output.html.words import KIE_SENTENCE
from elimscan.output.plots.figures import BARRIER_SHIFT_KCAL_MOL, signed
from elimscan.output.plots.paths import has_barriers
from elimscan.output.tables import product_anti_penalty_kcal_mol, product_lowest_barrier, product_paths
from elimscan.results.records import ApproachRecord, BetaHydrogenRecord, JobRecord


def _barrier_cells(approach: ApproachRecord, name: str, note: str) -> str:
    """Return the rel., abs. and ν‡ cells of one approach; ``note`` is its footnote mark (HTML) or ''."""
    if approach.path_status == "ok" and approach.barrier_kcal_mol is not None:
        cells = "".join(
            f'<td class="num barrier" data-approach="{name}" data-kind="{kind}" '
            f'data-key="{"" if value is None else f"{value:.3f}"}">{esc(barrier_text(value))}</td>'
            for kind, value in (("relative", approach.relative_barrier_kcal_mol), ("absolute", approach.barrier_kcal_mol)))
        frequency = "" if approach.imaginary_frequency_cm1 is None else f"{approach.imaginary_frequency_cm1:.1f}i"
        if approach.saddle_verified:
            return cells + f'<td class="num saddle saddle-verified" data-approach="{name}">{esc(frequency)}{note}</td>'
        title = approach.saddle_note or "not verified"
        return cells + (f'<td class="num saddle saddle-unverified" data-approach="{name}" title="{esc(title)}">'
                        f"unverified{note}{' ' + esc(frequency) if frequency else ''}</td>")
    word = "failed" if approach.path_status == "failed" else "not computed"
    cls = "path-failed" if approach.path_status == "failed" else "path-none"
    return (f'<td class="num {cls}" data-approach="{name}">\u2013</td><td class="num {cls}">\u2013</td>'
            f'<td class="num saddle {cls}" data-approach="{name}">{word}{note}</td>')


def _free_cells(approach: ApproachRecord, name: str) -> str:
    """Return the \u0394G\u2021 cell (kcal/mol, '\u2014' when absent) and the saddle-character cell of one approach."""
    value = approach.barrier_free_energy_kcal_mol
    character = approach.saddle_character
    label = ABSENT if character is None else character.label
    where = "" if character is None else (f' data-ch="{character.c_h_cleavage:.4f}" data-cx="{character.c_x_cleavage:.4f}"'
                                          f' title="C\u2013H cleavage {character.c_h_cleavage:.2f}, '
                                          f'C\u2013X cleavage {character.c_x_cleavage:.2f}"')
    return (f'<td class="num free-barrier" data-approach="{name}" data-key="{"" if value is None else f"{value:.3f}"}">'
            f"{esc(ABSENT if value is None else signed(value, 2))}</td>"
            f'<td class="character" data-approach="{name}"{where}>{esc(label)}</td>')


def atom_numbers(indices0: tuple[int, ...]) -> str:
    """Return 0-based atom indices as the atom numbers people read, from 1: '4, 5, 6'."""
    return ", ".join(str(i + 1) for i in indices0)


def smiles_with_name(smiles: str, suffix: str = "") -> str:
    """Return the cell content of an alkene: its SMILES (whole, wrapping) and its plain-words description (HTML)."""
    words = alkene_description(smiles)
    return (f'<span class="smiles">{esc(smiles)}</span>{esc(suffix)}'
            + (f'<br><span class="product-name">{esc(words)}</span>' if words else ""))


def call_class(call: str) -> str:
    """Return the CSS class of a rule call ('call-syn-only')."""
    return "call-" + call.replace(" ", "-")


def isotope_table(job: JobRecord) -> str:
    """Return the small table of every class's kinetic isotope effects and its sentence, or '' when there are none."""
    rows = [f'<tr class="kie-row" data-class="{esc(b.class_id)}" data-approach="{esc(k.approach)}">'
            f"<td>{esc(b.class_id)}</td><td>{esc(k.approach)}</td><td>{esc(k.label)}</td>"
            f"<td>{esc(atom_numbers(k.deuterated_indices))}</td>"
            f'<td class="num kie" data-key="{k.kh_kd:.3f}">{k.kh_kd:.2f}</td>'
            f'<td class="num kie-wigner" data-key="{k.kh_kd_wigner:.3f}">{k.kh_kd_wigner:.2f}</td>'
            f'<td class="num">{k.temperature_K:g}</td></tr>'
            for b in job.beta_hydrogens for k in b.isotope_effects]
    if not rows:
        return ""
    return ('<table class="kie"><thead><tr><th>class</th><th>path</th><th>deuterium at</th><th>D atoms</th>'
            '<th class="num">k<sub>H</sub>/k<sub>D</sub></th><th class="num">with Wigner</th><th class="num">T (K)</th>'
            "</tr></thead>\n<tbody>\n" + "\n".join(rows) + "\n</tbody></table>"
            f'<p class="note kie-note">{esc(KIE_SENTENCE)}</p>')


def _path_note(beta: BetaHydrogenRecord, name: str, approach: ApproachRecord) -> str | None:
    """Return the footnote text of an approach (unverified saddle, failed path, flags), or None."""
    if approach.path_status == "failed":
        error = f"{approach.error.error_type}: {approach.error.error_message}" if approach.error else "no reason recorded"
        return f"{beta.class_id} {name}: the path failed ({error})."
    if approach.path_status != "ok":
        return None
    parts = []
    if not approach.saddle_verified:
        text = (f"saddle not verified ({approach.saddle_note or 'no reason recorded'}); the barrier is the "
                f"{approach.barrier_source or 'relaxed-path maximum'}")
        if approach.saddle_method:
            text += f" (search: {approach.saddle_method})"
        parts.append(text)
    if approach.flags:
        parts.append("flags: " + "; ".join(approach.flags))
    return f"{beta.class_id} {name}: " + ". ".join(parts) + "." if parts else None


def beta_table(job: JobRecord, links: StructureLinks | None = None) -> str:
    """Return the table of a job's beta-H classes: penalties (kcal/mol), rule status, barriers when computed, numbered notes."""
    barriers = has_barriers(job)
    rows, notes = [], []
    for position, b in enumerate(job.beta_hydrogens):
        where = DASH
        if b.anti.dihedral_deg is not None:
            where = f"{b.anti.dihedral_deg:.0f}\u00b0, {b.anti.geometry_source or ''}"
        gives = {name: f'<td class="gives">{smiles_with_name(a.product_smiles, "" if a.product_possible else " (impossible)")}</td>'
                 for name, a in (("anti", b.anti), ("syn", b.syn))}
        cells = (f'<tr class="beta-row" data-class="{esc(b.class_id)}"><td class="class">{esc(b.class_id)}</td>'
                 f'<td data-key="{b.degeneracy}">{esc(atom_numbers(b.hydrogen_indices))}</td>'
                 f"{num_cell(b.anti_penalty_kcal_mol)}{num_cell(b.syn_penalty_kcal_mol)}<td>{esc(b.rule_status)}</td>")
        for name, approach in (("anti", b.anti), ("syn", b.syn)):
            if barriers:
                text = _path_note(b, name, approach)
                mark = ""
                if text is not None:
                    notes.append(text)
                    mark = f'<sup><a href="#{esc(anchor(job))}-note-{len(notes)}" class="note-mark">{len(notes)}</a></sup>'
                cells += _barrier_cells(approach, name, mark) + _free_cells(approach, name)
            cells += gives[name]
        rows.append(cells + f"<td>{esc(where)}</td>{files_cell(job, position, links)}</tr>")
    unit = "<br>kcal/mol"
    if barriers:
        approach_heads = (f'<th class="num">\u0394E\u2021 rel.{unit}</th><th class="num">\u0394E\u2021 abs.{unit}</th>'
                          '<th class="num">saddle<br>\u03bd\u2021 cm\u207b\u00b9</th>'
                          f'<th class="num">\u0394G\u2021{unit}</th><th>saddle character</th><th>gives</th>')
        head = ('<tr><th rowspan="2">class</th><th rowspan="2">equivalent H atoms</th>'
                '<th colspan="3" class="group">the rule: periplanar penalty</th><th colspan="6" class="group">anti elimination</th>'
                '<th colspan="6" class="group">syn elimination</th><th rowspan="2">best anti geometry</th>'
                + ('<th rowspan="2">structure files</th>' if links is not None else "") + "</tr>"
                f'<tr><th class="num">anti{unit}</th><th class="num">syn{unit}</th><th>status</th>'
                f"{approach_heads}{approach_heads}</tr>")
    else:
        head = ('<tr><th>class</th><th>equivalent H atoms</th>'
                f'<th class="num">anti penalty{unit}</th><th class="num">syn penalty{unit}</th>'
                "<th>status under the rule</th><th>anti gives</th><th>syn gives</th><th>best anti geometry</th>"
                + ("<th>structure files</th>" if links is not None else "") + "</tr>")
    table = ('<div class="wide"><table class="beta"><thead>' + head + "</thead>\n<tbody>\n" + "\n".join(rows)
             + "\n</tbody></table></div>")
    if notes:
        table += ('<ol class="path-notes">' + "".join(
            f'<li id="{esc(anchor(job))}-note-{n}">{esc(text)}</li>' for n, text in enumerate(notes, 1)) + "</ol>")
    return table


def product_table(job: JobRecord) -> str:
    """Return the table of a job's alkenes: depiction, the rule's call, computed shares and lowest barriers (kcal/mol)."""
    barriers = has_barriers(job)
    computed = job.verdict.computed_major if job.verdict is not None else None
    rows = []
    for p in job.products:
        png = product_png(p.smiles)
        picture = (f'<img class="product" alt="{esc(p.smiles)}" src="data:image/png;base64,{base64.b64encode(png).decode("ascii")}">'
                   if png else "")
        extra = ""
        if barriers:
            low, high = p.fraction_range if p.fraction_range is not None else (None, None)
            span = "\u2013" if low is None else f"{100 * low:.1f}\u2013{100 * high:.1f} %"
            best = product_lowest_barrier(job, p)
            via = ""
            if best is not None:
                found = next((b.class_id, n) for b, n, a in product_paths(job, p) if a is best)
                via = f"{found[0]} {found[1]}"
            tag = '<span class="tag">computed major</span>' if p.smiles == computed else ""
            extra = (f'<td class="num share" data-key="{"" if p.fraction is None else f"{p.fraction:.4f}"}">'
                     f"{esc(percent_text(p.fraction))}{tag}</td>"
                     f'<td class="num share-range" data-low="{"" if low is None else f"{low:.4f}"}" '
                     f'data-high="{"" if high is None else f"{high:.4f}"}">{esc(span)}</td>'
                     f'<td class="num lowest-barrier" data-key="{"" if best is None else f"{best.relative_barrier_kcal_mol:.3f}"}">'
                     f"{esc(barrier_text(None if best is None else best.relative_barrier_kcal_mol))}</td>"
                     f"<td>{esc(via or 'no computed path')}</td>")
        row_class = "product-row computed-major" if barriers and p.smiles == computed else "product-row"
        rows.append(
            f'<tr class="{row_class}" data-smiles="{esc(p.smiles)}"><td>{picture}</td><td class="alkene">{smiles_with_name(p.smiles)}</td>'
            f'<td>{esc(p.substitution)}</td><td class="{call_class(p.rule_call)}">{esc(p.rule_call)}</td>{extra}'
            f"{num_cell(product_anti_penalty_kcal_mol(job, p))}<td>{esc(', '.join(p.via_classes))}</td><td>{esc(p.reason)}</td></tr>")
    extra_heads = ""
    if barriers:
        extra_heads = ('<th class="num">computed share</th><th class="num">range<br>(barriers '
                       f'\u00b1{BARRIER_SHIFT_KCAL_MOL:g} kcal/mol)</th><th class="num">lowest \u0394E\u2021 rel.<br>kcal/mol</th>'
                       "<th>lowest path</th>")
    return ('<div class="wide"><table class="products"><thead><tr><th>structure</th><th>alkene (SMILES and name)</th><th>substitution</th>'
            f'<th>rule\u2019s call</th>{extra_heads}<th class="num">lowest anti penalty<br>kcal/mol</th><th>from classes</th>'
            "<th>why</th></tr></thead>\n<tbody>\n" + "\n".join(rows) + "\n</tbody></table></div>")
