"""One self-contained HTML report of a run (no file I/O: the CLI writes what :func:`render_report` returns).

Everything is inline: plots as SVG, the substrate depiction as SVG, product depictions as base64 PNG, a
few lines of CSS (with print rules) and of JavaScript (sortable index table). A Content-Security-Policy
forbids any network load. Every string from the user or from results.json is escaped with ``html.escape``.
"""

from __future__ import annotations

import base64
import html
import re
from collections.abc import Mapping

from rdkit import Chem
from rdkit.Chem.Draw import rdMolDraw2D

from elimscan.plots import figure_svg, job_figures, plot_name
from elimscan.records import JobRecord, RunResult
from elimscan.tables import product_anti_penalty_kcal_mol

CAUTION = ("Computed predictions are not safety data. Strong bases (alkoxides, amides, hydrides) and alkyl halides "
           "and sulfonates are hazardous: corrosive, flammable, toxic, many of them alkylating agents. Plan and run "
           "any experiment under qualified supervision, with a proper risk assessment, and follow your local regulations.")

MEANING = (
    "All energies are GFN2-xTB electronic energies including the implicit-solvent term; they are not free energies.",
    "An anti (syn) cost is the lowest energy, above the substrate's global minimum, of any conformer or scan point "
    "with the H\u2013C\u03b2\u2013C\u03b1\u2013X dihedral in the anti (syn) window, in kcal/mol: the conformational price "
    "of putting that hydrogen where the rule needs it. It is not a barrier.",
    "\u201cnot reached\u201d means the geometry was never reached below the scan's energy cap.",
)
#: the last point of "Reading the numbers", without and with computed barriers in results.json
BARRIERS_ABSENT = ("Barriers (base\u2013substrate complexes, E2 paths) and a computed product mix were not computed in "
                   "this run: the product calls below are the geometric rule's, nothing more.")
BARRIERS_NOT_SHOWN = ("This run also computed barriers and a product mix; they are in results.json but this report does "
                      "not show them yet: the product calls below are the geometric rule's, nothing more.")

# RDKit's notes are byte strings drawn a character at a time: α and β go in as stand-ins, swapped afterwards
_GREEK_STAND_INS = {"^": "\u03b1", "`": "\u03b2"}

# our own highlight colours (RGB 0-1) for the substrate depiction
_DEPICT_X = (0.67, 0.87, 0.70)
_DEPICT_STATUS = {"anti accessible": (0.70, 0.82, 0.95), "syn only": (0.98, 0.85, 0.62), "blocked": (0.90, 0.72, 0.72)}

_STYLE = """
:root { --ink: #1c1c1c; --muted: #5a5a5a; --rule: #c9c9c9; --band: #f3f5f7; --warn: #fff4e0; --warn-edge: #c77700; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; color: var(--ink); margin: 0 auto;
       max-width: 1100px; padding: 1.2rem 1.5rem 3rem; line-height: 1.45; font-size: 15px; }
h1 { font-size: 1.6rem; margin: 0 0 .2rem; }
h2 { font-size: 1.3rem; border-bottom: 2px solid var(--ink); padding-bottom: .2rem; margin-top: 0; }
h3 { font-size: 1.05rem; margin: 1.4rem 0 .4rem; }
p.meta, .note, figcaption { color: var(--muted); font-size: .86rem; }
.caution { background: var(--warn); border-left: 5px solid var(--warn-edge); padding: .6rem .9rem; margin: 1rem 0; }
.caution strong { color: #8a4b00; }
section.job { border-top: 1px solid var(--rule); padding-top: 1.2rem; margin-top: 2rem; }
table { border-collapse: collapse; margin: .3rem 0 .8rem; font-size: .88rem; }
th, td { border-bottom: 1px solid var(--rule); padding: .25rem .55rem; text-align: left; vertical-align: middle; }
th { background: var(--band); }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
code, .smiles { font-family: "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: .85em; overflow-wrap: anywhere; }
table.sortable th { cursor: pointer; }
table.sortable th[aria-sort="ascending"]::after { content: " \\25B2"; }
table.sortable th[aria-sort="descending"]::after { content: " \\25BC"; }
.status-ok { color: #1e6b3a; font-weight: bold; }
.status-failed { color: #a3231b; font-weight: bold; }
.call-major { font-weight: bold; color: #1e6b3a; }
.call-forbidden { color: #a3231b; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: .15rem 1rem; margin: 0; font-size: .9rem; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; }
.top { display: flex; flex-wrap: wrap; gap: 1.5rem; align-items: flex-start; }
figure.substrate { max-width: 430px; }
figure { margin: .4rem 0; }
figure svg { max-width: 100%; height: auto; display: block; }
.newman { display: flex; flex-wrap: wrap; gap: .4rem; }
.newman figure { width: 215px; }
img.product { width: 150px; height: auto; display: block; }
.job-foot { margin-top: 1.2rem; padding-top: .5rem; border-top: 1px dashed var(--rule); font-size: .82rem; color: var(--muted); }
@page { size: A4; margin: 14mm; }
@media print {
  body { max-width: none; padding: 0; font-size: 10.5pt; }
  a { color: inherit; text-decoration: none; }
  section.job { break-before: page; border-top: none; margin-top: 0; }
  figure, table, .caution, .job-foot { break-inside: avoid; }
  h2, h3 { break-after: avoid; }
  table.sortable th::after { content: "" !important; }
}
"""

_SCRIPT = """
document.querySelectorAll("table.sortable").forEach(function (table) {
  var heads = table.tHead.rows[0].cells;
  Array.prototype.forEach.call(heads, function (th, col) {
    th.addEventListener("click", function () {
      var up = th.getAttribute("aria-sort") !== "ascending";
      Array.prototype.forEach.call(heads, function (h) { h.removeAttribute("aria-sort"); });
      th.setAttribute("aria-sort", up ? "ascending" : "descending");
      var key = function (row) { var c = row.cells[col]; return c.dataset.key !== undefined ? c.dataset.key : c.textContent.trim(); };
      var body = table.tBodies[0];
      var rows = Array.prototype.slice.call(body.rows);
      rows.sort(function (a, b) {
        var x = key(a), y = key(b), nx = parseFloat(x), ny = parseFloat(y);
        var order = (!isNaN(nx) && !isNaN(ny)) ? nx - ny : x.localeCompare(y);
        return up ? order : -order;
      });
      rows.forEach(function (row) { body.appendChild(row); });
    });
  });
});
"""

_CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'; script-src 'unsafe-inline'"


def has_barriers(job: JobRecord) -> bool:
    """Return True when any anti or syn approach of the job carries a computed barrier."""
    return any(getattr(a, "barrier_kcal_mol", None) is not None for b in job.beta_hydrogens for a in (b.anti, b.syn))


def esc(value: object) -> str:
    """Return ``value`` as text escaped for HTML element content and quoted attributes."""
    return html.escape(str(value), quote=True)


def _kcal(value: float | None) -> str:
    return "not reached" if value is None else f"{value:.2f}"


def _num_cell(value: float | None) -> str:
    key = "" if value is None else f"{value:.3f}"
    return f'<td class="num" data-key="{key}">{esc(_kcal(value))}</td>'


def inline_svg(svg: str, prefix: str) -> str:
    """Return SVG text ready to sit inside HTML: no XML prolog or metadata, every id prefixed with ``prefix``."""
    svg = re.sub(r"<\?xml[^>]*\?>", "", svg)
    svg = re.sub(r"<!DOCTYPE[^>]*>", "", svg)
    svg = re.sub(r"<metadata>.*?</metadata>", "", svg, flags=re.DOTALL)
    svg = re.sub(r"\bid=([\"'])(.*?)\1", lambda m: f'id="{prefix}-{m.group(2)}"', svg)
    svg = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{prefix}-{m.group(1)})", svg)
    svg = re.sub(r"((?:xlink:)?href)=([\"'])#(.*?)\2", lambda m: f'{m.group(1)}="#{prefix}-{m.group(3)}"', svg)
    return svg.strip()


# --- depictions ---------------------------------------------------------------------------------


def _depiction_mol(smiles: str, keep_h: set[int]) -> tuple[Chem.Mol, dict[int, int]] | None:
    """Return the molecule with only the hydrogens in ``keep_h`` explicit, and {record index: drawn index}."""
    mol = Chem.MolFromSmiles(smiles) if smiles else None
    if mol is None or mol.GetNumAtoms() == 0:
        return None
    mol = Chem.AddHs(mol)  # the atom order of results.json: the SMILES atoms, then their hydrogens
    for atom in mol.GetAtoms():
        atom.SetIntProp("record_index", atom.GetIdx())
        atom.SetAtomMapNum(1 if atom.GetIdx() in keep_h else 0)
    params = Chem.RemoveHsParameters()
    params.removeMapped = False
    mol = Chem.RemoveHs(mol, params)
    for atom in mol.GetAtoms():
        atom.SetAtomMapNum(0)
    return mol, {a.GetIntProp("record_index"): a.GetIdx() for a in mol.GetAtoms()}


def substrate_svg(smiles: str, job: JobRecord, width: int = 420, height: int = 300) -> str:
    """Return an SVG depiction of the substrate: X, Cα and Cβ marked, each class's hydrogen labelled with its anti cost (kcal/mol)."""
    reps = {b.representative_index: b for b in job.beta_hydrogens}
    built = _depiction_mol(smiles, set(reps))
    if built is None or job.leaving_group is None:
        return ""
    mol, index = built
    lg = job.leaving_group
    needed = {lg.leaving_atom_index, lg.c_alpha_index, *reps, *(b.beta_carbon_index for b in job.beta_hydrogens)}
    if not needed <= set(index):  # the SMILES does not match the record's atoms
        return ""
    colours: dict[int, tuple[float, float, float]] = {}
    notes = {lg.leaving_atom_index: "X", lg.c_alpha_index: "^"}
    for b in job.beta_hydrogens:
        notes.setdefault(b.beta_carbon_index, "`")
        cost = "-" if b.anti_penalty_kcal_mol is None else f"{b.anti_penalty_kcal_mol:.2f}"  # ASCII only (see above)
        notes[b.representative_index] = f"{b.class_id}: {cost}"
        colours[index[b.representative_index]] = _DEPICT_STATUS.get(b.rule_status, (0.85, 0.85, 0.85))
    colours[index[lg.leaving_atom_index]] = _DEPICT_X
    for record_index, note in notes.items():
        if record_index in index:
            mol.GetAtomWithIdx(index[record_index]).SetProp("atomNote", note)
    bond = mol.GetBondBetweenAtoms(index[lg.leaving_atom_index], index[lg.c_alpha_index])
    drawer = rdMolDraw2D.MolDraw2DSVG(width, height, -1, -1, True)  # no FreeType: text stays text
    options = drawer.drawOptions()
    options.annotationFontScale = 0.62
    options.clearBackground = False
    options.padding = 0.12
    rdMolDraw2D.PrepareAndDrawMolecule(drawer, mol, highlightAtoms=list(colours), highlightAtomColors=colours,
                                       highlightBonds=[bond.GetIdx()] if bond else [],
                                       highlightBondColors={bond.GetIdx(): _DEPICT_X} if bond else {})
    drawer.FinishDrawing()
    svg = drawer.GetDrawingText()
    for stand_in, letter in _GREEK_STAND_INS.items():
        svg = re.sub(rf"(<text[^>]*class='note'[^>]*>){re.escape(stand_in)}(</text>)", rf"\g<1>{letter}\g<2>", svg)
    return svg


def product_png(smiles: str, width: int = 220, height: int = 140) -> bytes:
    """Return a small PNG depiction of an alkene (empty bytes when the SMILES does not parse)."""
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return b""
    drawer = rdMolDraw2D.MolDraw2DCairo(width, height)
    drawer.drawOptions().padding = 0.1
    rdMolDraw2D.PrepareAndDrawMolecule(drawer, mol)
    drawer.FinishDrawing()
    return drawer.GetDrawingText()


# --- sections -----------------------------------------------------------------------------------


def _anchor(job: JobRecord) -> str:
    return "job-" + re.sub(r"[^A-Za-z0-9_.-]", "_", job.job_id)


def method_line(result: RunResult) -> str:
    """Return the method line: method, solvent model and solvent, backend and version, temperature (K)."""
    m = result.config.method
    p = result.provenance
    solvent = "gas phase (no implicit solvent)" if m.solvent.model == "none" else f"{m.solvent.model.upper()} implicit solvent, {m.solvent.name}"
    return (f"{m.hamiltonian}; {solvent}; backend {p.backend} {p.backend_version}; "
            f"temperature {m.temperature_K:g} K (for Boltzmann weights, not used by the rule)")


def _index_table(result: RunResult) -> str:
    solvent = result.config.method.solvent
    rows = []
    for n, job in enumerate(result.jobs):
        major = job.rule.rule_major if job.rule is not None and job.rule.rule_major else "\u2013"
        blocked = sum(b.rule_status != "anti accessible" for b in job.beta_hydrogens)
        rows.append(
            f'<tr><td data-key="{n:04d}"><a href="#{esc(_anchor(job))}">{esc(job.job_id)}</a></td>'
            f"<td>{esc(job.substrate)}</td><td>{esc(job.base)}</td>"
            f"<td>{esc(solvent.name if solvent.model != 'none' else 'gas phase')}</td>"
            f'<td class="status-{esc(job.status)}">{esc(job.status)}</td>'
            f'<td class="smiles">{esc(major)}</td>'
            f'<td class="num">{len(job.beta_hydrogens)}</td><td class="num">{blocked}</td></tr>')
    return ('<h2 id="jobs">Jobs</h2>\n<p class="note">Click a column heading to sort.</p>\n'
            '<table class="sortable" id="job-index"><thead><tr><th>job</th><th>substrate</th><th>base</th>'
            '<th>solvent</th><th>status</th><th>rule\u2019s major alkene</th><th class="num">H classes</th>'
            '<th class="num">not anti-accessible</th></tr></thead>\n<tbody>\n' + "\n".join(rows) + "\n</tbody></table>")


def _beta_table(job: JobRecord) -> str:
    rows = []
    for b in job.beta_hydrogens:
        where = "\u2013"
        if b.anti.dihedral_deg is not None:
            where = f"{b.anti.dihedral_deg:.0f}\u00b0, {b.anti.geometry_source or ''}"
        rows.append(
            f'<tr class="beta-row" data-class="{esc(b.class_id)}"><td>{esc(b.class_id)}</td>'
            f'<td class="num">{b.beta_carbon_index}</td><td>{esc(", ".join(map(str, b.hydrogen_indices)))}</td>'
            f'<td class="num">{b.degeneracy}</td>{_num_cell(b.anti_penalty_kcal_mol)}{_num_cell(b.syn_penalty_kcal_mol)}'
            f"<td>{esc(b.rule_status)}</td>"
            f'<td class="smiles">{esc(b.anti.product_smiles)}{"" if b.anti.product_possible else " (impossible)"}</td>'
            f'<td class="smiles">{esc(b.syn.product_smiles)}{"" if b.syn.product_possible else " (impossible)"}</td>'
            f"<td>{esc(where)}</td></tr>")
    return ('<table class="beta"><thead><tr><th>class</th><th class="num">C\u03b2</th><th>H atoms</th>'
            '<th class="num">equivalent H</th><th class="num">anti cost<br>kcal/mol</th><th class="num">syn cost<br>kcal/mol</th>'
            "<th>status under the rule</th><th>anti gives</th><th>syn gives</th><th>best anti geometry</th></tr></thead>\n"
            "<tbody>\n" + "\n".join(rows) + "\n</tbody></table>")


def _product_table(job: JobRecord) -> str:
    rows = []
    for p in job.products:
        png = product_png(p.smiles)
        picture = (f'<img class="product" alt="{esc(p.smiles)}" src="data:image/png;base64,{base64.b64encode(png).decode("ascii")}">'
                   if png else "")
        rows.append(
            f'<tr class="product-row"><td>{picture}</td><td class="smiles">{esc(p.smiles)}</td><td>{esc(p.substitution)}</td>'
            f'<td class="call-{esc(p.rule_call)}">{esc(p.rule_call)}</td>{_num_cell(product_anti_penalty_kcal_mol(job, p))}'
            f"<td>{esc(', '.join(p.via_classes))}</td><td>{esc(p.reason)}</td></tr>")
    return ('<table class="products"><thead><tr><th>structure</th><th>SMILES</th><th>substitution</th>'
            '<th>rule\u2019s call</th><th class="num">lowest anti cost<br>kcal/mol</th><th>from classes</th><th>why</th></tr></thead>\n'
            "<tbody>\n" + "\n".join(rows) + "\n</tbody></table>")


def _figure(svg: str | None, prefix: str, caption: str, missing: str) -> str:
    if not svg:
        return f'<p class="note">{esc(missing)}</p>'
    return f'<figure>{inline_svg(svg, prefix)}<figcaption>{esc(caption)}</figcaption></figure>'


def _newman_block(job: JobRecord, assets: Mapping[str, str]) -> str:
    parts, absent = [], []
    for b in job.beta_hydrogens:
        for geometry in ("anti", "syn"):
            key = plot_name(job.job_id, f"newman-{b.class_id}-{geometry}")
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


def _job_section(result: RunResult, job: JobRecord, assets: Mapping[str, str], own: Mapping[str, str]) -> str:
    head = (f'<section class="job" id="{esc(_anchor(job))}" data-job="{esc(job.job_id)}">\n'
            f"<h2>{esc(job.substrate)} with {esc(job.base)}</h2>\n"
            f'<p class="meta">job <code>{esc(job.job_id)}</code> \u00b7 status <span class="status-{esc(job.status)}">'
            f"{esc(job.status)}</span></p>\n")
    foot = (f'<div class="job-foot"><p><strong>Method:</strong> {esc(method_line(result))}.</p>'
            "<p><strong>What the numbers are:</strong> GFN2-xTB electronic energies (kcal/mol, relative to this substrate's "
            "global minimum). Anti and syn costs are conformational costs, not barriers; "
            f"{'the barriers of this job are in results.json, not shown here' if has_barriers(job) else 'no barriers were computed for this job'}.</p>"
            f'<p class="caution-line"><strong>Caution:</strong> {esc(CAUTION)}</p></div>\n')
    if job.status != "ok" or job.leaving_group is None or job.base_info is None or job.rule is None:
        error = job.error.error_type + ": " + job.error.error_message if job.error else "the record is incomplete"
        return head + f'<p class="status-failed">This job failed: {esc(error)}</p>\n' + foot + "</section>"
    smiles = next((m.smiles for m in result.molecules if m.role == "substrate" and m.name == job.substrate), None)
    smiles = smiles or next((s.smiles for s in result.config.substrates if s.name == job.substrate), "")
    lg, base, rule = job.leaving_group, job.base_info, job.rule
    depiction = substrate_svg(smiles, job)
    facts = [
        ("substrate SMILES", f'<span class="smiles">{esc(smiles)}</span>'),
        ("leaving group", f"{esc(lg.label)} ({esc(lg.kind)}), atom {lg.leaving_atom_index}, on C\u03b1 {lg.c_alpha_index}"
         + (f", map number {lg.map_number}" if lg.map_number is not None else "")),
        ("base", f"{esc(job.base)}: {'bulky' if base.bulky else 'not bulky'} ({esc(base.bulky_reason)})"),
        ("conformers kept", str(len(job.conformers))),
        ("rule\u2019s major alkene", f'<span class="smiles">{esc(rule.rule_major or "none")}</span>'),
        ("shift to the less substituted alkene", "yes" if rule.hofmann_shift else "no"),
        ("rule\u2019s energy window", f"{rule.energy_window_kcal_mol:g} kcal/mol"),
    ]
    dl = '<dl class="facts">' + "".join(f"<dt>{k}</dt><dd>{v}</dd>" for k, v in facts) + "</dl>"
    picture = ""
    if depiction:
        picture = (f'<figure class="substrate">{inline_svg(depiction, _anchor(job) + "-substrate")}<figcaption>X: leaving group; '
                   "\u03b1/\u03b2: the carbons; each class's hydrogen carries its anti cost in kcal/mol "
                   "(\u201c-\u201d: never reached below the cap; blue: anti accessible, orange: syn only, red: blocked).</figcaption></figure>")
    scan_key, product_key = plot_name(job.job_id, "scan"), plot_name(job.job_id, "products")
    body = [
        f'<div class="top">{picture}<div>{dl}</div></div>',
        "<h3>Beta hydrogens</h3>", _beta_table(job),
        '<p class="note">Cost: lowest energy with the hydrogen anti- (|\u03c6| \u2265 '
        f"{result.config.rule.anti_min_deg:g}\u00b0) or syn-periplanar (|\u03c6| \u2264 {result.config.rule.syn_max_deg:g}\u00b0) "
        "to the leaving group, above the global minimum; atom indices are 0-based as in results.json.</p>",
        "<h3>Alkenes and the rule\u2019s call</h3>", _product_table(job),
        "<h3>Dihedral scans</h3>",
        _figure(assets.get(scan_key) or own.get(scan_key), scan_key.replace("/", "-"),
                "Relative energy along each H\u2013C\u03b2\u2013C\u03b1\u2013X scan; shaded: the rule's anti and syn windows.",
                "No scan plot."),
        "<h3>The rule\u2019s calls</h3>",
        _figure(assets.get(product_key) or own.get(product_key), product_key.replace("/", "-"),
                "The geometric rule's call on each alkene.", "No products."),
        "<h3>Down the C\u03b2\u2013C\u03b1 bond</h3>", _newman_block(job, assets),
        "<h3>How the rule reached its call</h3>",
        "<ol class=\"reasoning\">" + "".join(f"<li>{esc(line)}</li>" for line in rule.reasoning) + "</ol>",
    ]
    notes = [f"{b.class_id}, scan from {s.start}: {n}" for b in job.beta_hydrogens for s in b.scans for n in s.notes]
    if job.warnings or notes:
        body.append("<h3>Warnings and scan notes</h3><ul>" + "".join(f"<li>{esc(w)}</li>" for w in (*job.warnings, *notes)) + "</ul>")
    return head + "\n".join(body) + "\n" + foot + "</section>"


def render_report(result: RunResult, assets: Mapping[str, str]) -> str:
    """Return the whole report as one self-contained HTML document (UTF-8 text).

    ``assets`` maps plot names (``plots.plot_name``) to SVG text; scan and product plots missing from it are
    drawn here from results.json alone, Newman projections (which need the scan trajectories) are left out.
    """
    rule = result.config.rule
    p = result.provenance
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f'<meta http-equiv="Content-Security-Policy" content="{_CSP}">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>elimscan report: {esc(result.config.name)}</title>",
        f"<style>{_STYLE}</style></head><body>",
        f"<header><h1>E2 geometry report: {esc(result.config.name)}</h1>",
        f'<p class="meta">elimscan {esc(p.program_version)} \u00b7 results written {esc(p.created_utc)} \u00b7 '
        f"seed {result.seeds.rdkit_embedding} \u00b7 {result.summary.n_jobs_ok} of {result.summary.n_jobs} jobs ok</p>",
        f'<p class="meta">Method: {esc(method_line(result))}.</p>',
        f'<p class="meta">Command: <code>{esc(p.command_line)}</code></p></header>',
        f'<aside class="caution" id="caution"><strong>Caution.</strong> {esc(CAUTION)}</aside>',
        '<h2 id="meaning">Reading the numbers</h2><ul class="meaning">'
        + "".join(f"<li>{esc(m)}</li>" for m in (*MEANING, BARRIERS_NOT_SHOWN if any(map(has_barriers, result.jobs))
                                                  else BARRIERS_ABSENT)) + "</ul>",
    ]
    if len(result.jobs) > 1:
        parts.append(_index_table(result))
    for job in result.jobs:
        own: dict[str, str] = {}
        if job.status == "ok":
            if not all(k in assets for k in (plot_name(job.job_id, "scan"), plot_name(job.job_id, "products"))):
                figures = job_figures(job, rule.anti_min_deg, rule.syn_max_deg, rule.energy_window_kcal_mol, {})
                own = {k: figure_svg(f) for k, f in figures.items() if k not in assets}
        parts.append(_job_section(result, job, assets, own))
    parts.append(f'<footer class="note"><p>Made by elimscan {esc(p.program_version)} from results.json '
                 f"(schema {esc(result.schema_name)} {esc(result.schema_version)}).</p></footer>")
    parts.append(f"<script>{_SCRIPT}</script></body></html>")
    return "\n".join(parts) + "\n"

