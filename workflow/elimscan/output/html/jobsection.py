"""One job's section of the report: verdict, facts and depiction, tables, the job's plots, projections, notes."""

from __future__ import annotations

from collections.abc import Callable, Mapping

from elimscan.output.basemodelwords import base_model_words
from elimscan.output.html.boxes import headline_box, substitution_box
from elimscan.output.html.cells import anchor, esc, figure_block, inline_svg
from elimscan.output.html.depictions import substrate_svg
from elimscan.output.html.jobtables import beta_table, isotope_table, product_table
from elimscan.output.html.structures import StructureLinks, saddle_views
from elimscan.output.html.words import CAUTION, ENERGY_WORDS, NO_BARRIERS_JOB, method_line
from elimscan.output.plots.figures import BARRIER_SHIFT_KCAL_MOL
from elimscan.output.plots.jobplots import NEWMAN_TARGETS_DEG, newman_plot_name, plot_name, shown_kinds
from elimscan.output.plots.paths import has_barriers
from elimscan.output.tables import job_solvent
from elimscan.results.documents import RunResult
from elimscan.results.records import JobRecord


#: heading (HTML), caption and the note when the figure is missing of each kind in plots.jobplots.JOB_PLOT_KINDS,
#: given whether the job has barriers
PLOT_WORDS: dict[str, Callable[[bool], tuple[str, str, str]]] = {
    "scan": lambda barriers: (
        "Dihedral scans",
        "Relative energy along each H\u2013C\u03b2\u2013C\u03b1\u2013X scan; shaded: the rule's anti and syn windows.",
        "No scan plot."),
    "products": lambda barriers: (
        "The rule\u2019s calls" + (" beside the computed shares" if barriers else ""),
        "The geometric rule's call on each alkene" + (
            f"; right: the computed share, the bar spanning the share when every barrier moves by "
            f"\u00b1{BARRIER_SHIFT_KCAL_MOL:g} kcal/mol." if barriers else "."), "No products."),
    "paths": lambda barriers: (
        "Relaxed E2 paths",
        "Energy along each relaxed path (colour: class; solid: anti, dashed: syn) above substrate + free base; "
        "diamonds at the path maximum: filled, verified saddle (at its energy); open, unverified "
        "(the path maximum).", "No path plot."),
    "profile": lambda barriers: (
        "Energy profile",
        "Every path with a barrier, E2 (class colour) and SN2 (black), through its stages above substrate + free base: "
        "the base\u2013substrate complex, the saddle (solid: verified; dashed: unverified, the relaxed-path maximum) and "
        "the product side (the last relaxed path point, products still together). Electronic energies, kcal/mol.",
        "No energy profile."),
    "character": lambda barriers: (
        "Saddle character",
        "Each verified E2 saddle (class and path) on the two cleavage axes, 1 \u2212 Pauling bond order "
        "with r\u2080 from the free substrate; dotted: both bonds breaking in step; the corners are the "
        "reactant, the alkene with the conjugate acid and X\u207b, and the two stepwise intermediates.",
        "No character plot."),
}


def plot_blocks(job: JobRecord, kinds: tuple[str, ...], assets: Mapping[str, str], own: Mapping[str, str]) -> list[str]:
    """Return heading and figure (or the note that it is missing) of each of ``kinds`` the job's section shows.

    A figure is taken from ``assets``, else from ``own`` (the plots the page drew itself).
    """
    blocks = []
    for kind in (k for k in kinds if k in shown_kinds(job)):
        key = plot_name(job.job_id, kind)
        heading, caption, missing = PLOT_WORDS[kind](has_barriers(job))
        blocks += [f"<h3>{heading}</h3>", figure_block(assets.get(key) or own.get(key), key.replace("/", "-"), caption, missing)]
    return blocks


def newman_block(job: JobRecord, assets: Mapping[str, str]) -> str:
    """Return the job's Newman projections found in ``assets``, with what they show and which are missing."""
    parts, absent = [], []
    for b in job.beta_hydrogens:
        for geometry in NEWMAN_TARGETS_DEG:
            key = newman_plot_name(job.job_id, b.class_id, geometry)
            if key in assets:
                parts.append(f'<figure class="newman-figure">{inline_svg(assets[key], key.replace("/", "-"))}</figure>')
            else:
                absent.append(f"{b.class_id} ({geometry})")
    text = ('<p class="note">Looking from C\u03b2 (front: bonds from the centre) to C\u03b1 (back: bonds from the circle), '
            "drawn from the scan frame whose H\u2013C\u03b2\u2013C\u03b1\u2013X dihedral is closest to 180\u00b0 (anti) "
            "or 0\u00b0 (syn); the marked H and X are in colour and the printed dihedral is measured on that frame.</p>")
    if absent:
        text += f'<p class="note">No projection for {esc(", ".join(absent))}: the scan trajectory was not available.</p>'
    return text + '<div class="newman">' + "".join(parts) + "</div>"


def job_section(result: RunResult, job: JobRecord, assets: Mapping[str, str], own: Mapping[str, str],
                links: StructureLinks | None = None, record: dict | None = None) -> str:
    """Return one job's section: plots from ``assets``, else ``own`` (drawn by the page); a failed job says why.

    With ``links`` the tables link the job's structure files and its saddles get 3D views; with ``record`` (the
    benchmark record, analysis.benchmark_record) its verdict carries the benchmark's counts for its kinds of choice.
    """
    head = (f'<section class="job" id="{esc(anchor(job))}" data-job="{esc(job.job_id)}">\n'
            f"<h2>{esc(job.substrate)} with {esc(job.base)}</h2>\n"
            f'<p class="meta">job <code>{esc(job.job_id)}</code> \u00b7 status <span class="status-{esc(job.status)}">'
            f"{esc(job.status)}</span></p>\n")
    if has_barriers(job):
        barrier_words = ("barriers \u0394E\u2021 are electronic energy differences above this substrate's global minimum "
                         "plus the free base (abs.) or above the job's lowest barrier (rel.), not free energies; "
                         "read only the relative values")
        if job.temperature_K is not None:
            barrier_words += f"; shares are Boltzmann weights at {job.temperature_K:g} K"
        barrier_words += f" on {ENERGY_WORDS[job.energy_used]}"
    else:
        barrier_words = NO_BARRIERS_JOB
    foot = (f'<div class="job-foot"><p><strong>Method:</strong> {esc(method_line(result, job_solvent(result, job)))}.</p>'
            "<p><strong>What the numbers are:</strong> GFN2-xTB electronic energies in kcal/mol. Anti and syn penalties are "
            "conformational penalties relative to this substrate's global minimum, not barriers; "
            f"{esc(barrier_words)}.</p>"
            f'<p class="caution-line"><strong>Caution:</strong> {esc(CAUTION)}</p></div>\n')
    if job.status != "ok" or job.leaving_group is None or job.base_info is None or job.rule is None:
        error = job.error.error_type + ": " + job.error.error_message if job.error else "the record is incomplete"
        return head + f'<p class="status-failed">This job failed: {esc(error)}</p>\n' + foot + "</section>"
    smiles = next((m.smiles for m in result.molecules if m.role == "substrate" and m.name == job.substrate), None)
    smiles = smiles or next((s.smiles for s in result.config.substrates if s.name == job.substrate), "")
    lg, base, rule = job.leaving_group, job.base_info, job.rule
    model = base_model_words(result, job)
    depiction = substrate_svg(smiles, job)
    facts = [
        ("substrate SMILES", f'<span class="smiles">{esc(smiles)}</span>'),
        ("leaving group", f"{esc(lg.label)} ({esc(lg.kind)}), atom {lg.leaving_atom_index + 1}, on C\u03b1 atom {lg.c_alpha_index + 1}"
         + (f", map number {lg.map_number}" if lg.map_number is not None else "")),
        ("base", f"{esc(job.base)}: {'bulky' if base.bulky else 'not bulky'} ({esc(base.bulky_reason)})"),
        ("base model", esc(model.model + (f"; {model.arrangements}" if model.arrangements else ""))),
        ("why this base model", esc(model.reason)),
        ("conformers kept", str(len(job.conformers)) + (
            f' (<a class="structure-link" href="{esc(href)}">conformers.sdf</a>)'
            if links is not None and (href := links.href(job.conformer_file)) else "")),
        ("rule\u2019s major alkene", f'<span class="smiles">{esc(rule.rule_major or "none")}</span>'),
        ("shift to the less substituted alkene", "yes" if rule.hofmann_shift else "no"),
        ("rule\u2019s energy window", f"{rule.energy_window_kcal_mol:g} kcal/mol"),
    ]
    barriers = has_barriers(job)
    if barriers:
        if job.reference_energy_hartree is not None:
            facts.append(("zero of the barriers", f"{job.reference_energy_hartree:.6f} hartree (substrate + free base)"))
        if job.barrier_kind:
            facts.append(("barriers", esc(job.barrier_kind)))
        if job.temperature_K is not None:
            facts.append(("Boltzmann weights at", f"{job.temperature_K:g} K"))
        facts.append(("product mix from", esc(ENERGY_WORDS[job.energy_used])))
    dl = '<dl class="facts">' + "".join(f"<dt>{k}</dt><dd>{v}</dd>" for k, v in facts) + "</dl>"
    picture = ""
    if depiction:
        picture = (f'<figure class="substrate">{inline_svg(depiction, anchor(job) + "-substrate")}<figcaption>X: leaving group; '
                   + ("\u03b1/\u03b2: the carbons; each class's hydrogen carries its lowest relative barrier \u0394E\u2021 "
                      "(anti or syn) in kcal/mol (\u201c-\u201d: no computed path; " if barriers else
                      "\u03b1/\u03b2: the carbons; each class's hydrogen carries its anti penalty in kcal/mol "
                      "(\u201c-\u201d: never reached below the cap; ")
                   + "blue: anti accessible, orange: syn only, red: blocked under the rule).</figcaption></figure>")
    body = [
        headline_box(job, record),
        f'<div class="top">{picture}<div>{dl}</div></div>',
        "<h3>Beta hydrogens</h3>", beta_table(job, links),
        '<p class="note">Penalty: lowest energy with the hydrogen anti- (|\u03c6| \u2265 '
        f"{result.config.rule.anti_min_deg:g}\u00b0) or syn-periplanar (|\u03c6| \u2264 {result.config.rule.syn_max_deg:g}\u00b0) "
        "to the leaving group, above the global minimum. Class C3-H10 is the hydrogen H10 on C\u03b2 atom 3 and its "
        "equivalents; atoms are numbered from 1 as in the drawing (the *_index0 fields of results.json count from 0)."
        + (" \u0394E\u2021: electronic barrier in kcal/mol, rel. above the job's lowest, abs. above the substrate's global "
           "minimum + free base; \u03bd\u2021: the saddle's imaginary frequency; the numbered notes explain unverified "
           "saddles, failed paths and flagged paths. \u0394G\u2021: quasi-RRHO free-energy barrier in kcal/mol (1 M), "
           "verified saddles only (\u201c\u2014\u201d otherwise); saddle character: see the map below."
           if barriers else "") + "</p>",
        isotope_table(job),
        "<h3>Alkenes: the rule\u2019s call" + (" and the computed shares</h3>" if barriers else "</h3>"),
        product_table(job),
    ]
    body += plot_blocks(job, ("paths", "profile", "character"), assets, own)
    body.append(saddle_views(job, links))
    if job.substitution is not None:
        body += ["<h3>Substitution (SN2) beside elimination</h3>", substitution_box(job, job.substitution)]
    body += plot_blocks(job, ("scan", "products"), assets, own)
    body += [
        "<h3>Down the C\u03b2\u2013C\u03b1 bond</h3>", newman_block(job, assets),
        "<h3>How the rule reached its call</h3>",
        "<ol class=\"reasoning\">" + "".join(f"<li>{esc(line)}</li>" for line in rule.reasoning) + "</ol>",
    ]
    notes = [f"{b.class_id}, scan from {s.start}: {n}" for b in job.beta_hydrogens for s in b.scans for n in s.notes]
    if job.warnings or notes:
        body.append("<h3>Warnings and scan notes</h3><ul>" + "".join(f"<li>{esc(w)}</li>" for w in (*job.warnings, *notes)) + "</ul>")
    return head + "\n".join(body) + "\n" + foot + "</section>"
