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

from elimscan.config import SolventConfig
from elimscan.solvents import medium_label
from elimscan.output.plots import (BARRIER_SHIFT_KCAL_MOL, SERIES_BARRIER_WORDS, character_points, figure_svg, job_figures,
                            plot_name, rho_text, series_figure, series_plot_name, signed)
from elimscan.output.text import base_model_groups, model_mix, r_squared_text
from elimscan.results.documents import RunResult, SeriesRecord
from elimscan.results.records import ApproachRecord, BetaHydrogenRecord, JobRecord, SubstitutionRecord
from elimscan.output.tables import job_solvent, product_anti_penalty_kcal_mol, product_lowest_barrier, product_paths

CAUTION = ("Computed predictions are not safety data. Strong bases (alkoxides, amides, hydrides) and alkyl halides "
           "and sulfonates are hazardous: corrosive, flammable, toxic, many of them alkylating agents. Plan and run "
           "any experiment under qualified supervision, with a proper risk assessment, and follow your local regulations.")

MEANING = (
    "Unless marked \u0394G\u2021, all energies are GFN2-xTB electronic energies including the implicit-solvent term; "
    "they are not free energies.",
    "An anti (syn) cost is the lowest energy, above the substrate's global minimum, of any conformer or scan point "
    "with the H\u2013C\u03b2\u2013C\u03b1\u2013X dihedral in the anti (syn) window, in kcal/mol: the conformational price "
    "of putting that hydrogen where the rule needs it. It is not a barrier.",
    "\u201cnot reached\u201d means the geometry was never reached below the scan's energy cap.",
)
#: the last point of "Reading the numbers" when no job of the run has computed barriers
BARRIERS_ABSENT = ("Barriers (base\u2013substrate complexes, E2 paths) and a computed product mix were not computed in "
                   "this run: the product calls below are the geometric rule's, nothing more.")
#: said of a job without computed paths, in its verdict box and its foot
NO_BARRIERS_JOB = "no barriers were computed for this job"
DASH = "\u2013"
#: shown where an approach has no free-energy barrier or no saddle character
ABSENT = "\u2014"
#: the one sentence under a job's isotope-effect table
KIE_SENTENCE = ("Primary kinetic isotope effects k_H/k_D for the deuterium positions named, from the harmonic "
                "frequencies of the free substrate and of the saddle with isotopic masses (Bigeleisen\u2013Mayer), "
                "without and with Wigner\u2019s tunnelling correction: compare them with your own labelling experiments.")
#: what the two words of energy_used mean in the page
ENERGY_WORDS = {"electronic": "electronic barriers \u0394E\u2021", "free": "free-energy barriers \u0394G\u2021 (quasi-RRHO, 1 M)"}


def barrier_meaning(temperatures_K: tuple[float, ...]) -> tuple[str, ...]:
    """Return the points of "Reading the numbers" that explain barriers and shares (Boltzmann temperatures in K)."""
    shift = f"{BARRIER_SHIFT_KCAL_MOL:g}"
    temperature = " and ".join(f"{t:g} K" for t in temperatures_K) or "the run's temperature"
    return (
        "Barriers \u0394E\u2021 are GFN2-xTB electronic energy differences in kcal/mol (with the implicit-solvent term), "
        "not free energies \u0394G\u2021: no zero-point, thermal or entropy terms.",
        "All barriers of a job share one zero: the substrate's global minimum plus the relaxed free base, in the same "
        "implicit solvent. \u201cabs.\u201d is a barrier above that zero; \u201crel.\u201d is the same barrier above the "
        "job's lowest barrier.",
        "Absolute GFN2-xTB barriers are typically too low, and because the base\u2013substrate complex is bound they can "
        "even be negative relative to the separated reactants. Read only relative values: a ranking of the beta hydrogens "
        "of one substrate with one base, not rate constants.",
        "A saddle is verified when it has exactly one imaginary mode (\u03bd\u2021, in cm\u207b\u00b9) and relaxing both "
        "ways along that mode reaches the base\u2013substrate complex on one side and the alkene products on the other. "
        "Otherwise the barrier is the highest point of the relaxed path, an estimate, and is marked unverified.",
        f"Computed shares (Curtin\u2013Hammett): every path weighs its number of equivalent hydrogens \u00d7 "
        f"exp(\u2212\u0394E\u2021/RT) at T = {temperature}, summed over the paths that give the same alkene. The range is "
        f"the share when every barrier may move by \u00b1{shift} kcal/mol in the least and in the most favourable "
        f"direction. A verdict is \u201cwithin method uncertainty\u201d when the best barriers to different alkenes lie "
        f"within {shift} kcal/mol of each other: GFN2-xTB cannot tell them apart.",
    )


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
img.product { width: 120px; height: auto; display: block; }
.wide { overflow-x: auto; }
table.beta th.group { text-align: center; border-bottom: 1px solid var(--ink); }
table.beta { font-size: .82rem; }
table.beta td.class { white-space: nowrap; }
table.beta td.smiles { font-size: .78rem; }
td.saddle-unverified { color: #7b2d8e; font-weight: bold; }
td.path-failed { color: #a3231b; }
tr.computed-major td.share { font-weight: bold; }
.tag { display: inline-block; font-size: .72rem; border: 1px solid currentColor; border-radius: 3px; padding: 0 .3rem;
       margin-left: .3rem; font-weight: bold; }
ol.path-notes { font-size: .82rem; color: var(--muted); margin-top: 0; }
.verdict { border: 2px solid var(--rule); border-radius: 4px; padding: .55rem .9rem; margin: .2rem 0 1rem; }
.verdict.verdict-agree { border-color: #1e6b3a; background: #eef7f1; }
.verdict.verdict-disagree { border-color: #a3231b; background: #fbefee; }
.verdict.verdict-none { border-color: #8c8c8c; background: var(--band); }
.verdict .badge { font-weight: bold; letter-spacing: .06em; padding: .05rem .5rem; border-radius: 3px; color: #fff; }
.verdict-agree .badge { background: #1e6b3a; }
.verdict-disagree .badge { background: #a3231b; }
.verdict-none .badge { background: #6b6b6b; }
.verdict .uncertain { font-weight: bold; color: #5b2c6f; border: 2px dashed #7b2d8e; padding: .05rem .5rem; margin-left: .5rem;
                      border-radius: 3px; }
.verdict p { margin: .35rem 0; }
.verdict dl.facts { margin: .4rem 0; }
.sn2 { border: 2px solid #5d6d7e; border-radius: 4px; padding: .55rem .9rem; margin: .4rem 0 1rem; background: var(--band); }
.sn2-sides { display: flex; flex-wrap: wrap; gap: 1rem; margin-top: .4rem; }
.sn2-side { flex: 1 1 14rem; border-left: 4px solid #5d6d7e; padding: .2rem .7rem; background: #fff; }
.sn2-side p { margin: .2rem 0; }
.sn2-split, .sn2-call { font-size: 1.05rem; font-weight: bold; }
table.kie { font-size: .82rem; }
.job-foot { margin-top: 1.2rem; padding-top: .5rem; border-top: 1px dashed var(--rule); font-size: .82rem; color: var(--muted); }
@page { size: A4; margin: 14mm; }
@media print {
  body { max-width: none; padding: 0; font-size: 10.5pt; }
  a { color: inherit; text-decoration: none; }
  section.job { break-before: page; border-top: none; margin-top: 0; }
  figure, table, .caution, .job-foot, .verdict, .sn2 { break-inside: avoid; }
  .wide { overflow: visible; }
  table.beta { font-size: 7.5pt; }
  table.beta th, table.beta td { padding: .15rem .3rem; }
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


def barrier_text(value: float | None) -> str:
    """Return a barrier (kcal/mol) as shown in the report: 2 decimals, typographic minus; '\u2013' for none."""
    return "\u2013" if value is None else signed(value, 2)


def percent_text(fraction: float | None) -> str:
    """Return a share (0-1) as shown in the report, in percent with 1 decimal, e.g. '38.4 %'; '\u2013' for none."""
    return "\u2013" if fraction is None else f"{100 * fraction:.1f} %"


def lowest_relative_barrier_kcal_mol(beta: BetaHydrogenRecord) -> float | None:
    """Return the lowest relative barrier (kcal/mol) of a class's computed anti and syn paths, or None."""
    values = [a.relative_barrier_kcal_mol for a in (beta.anti, beta.syn)
              if a.path_status == "ok" and a.relative_barrier_kcal_mol is not None]
    return min(values) if values else None


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
    """Return an SVG depiction of the substrate: X, Cα and Cβ marked, each class's hydrogen labelled in kcal/mol.

    The label is the class's lowest relative barrier when the job has barriers, else its anti cost.
    """
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
    barriers = has_barriers(job)
    for b in job.beta_hydrogens:
        notes.setdefault(b.beta_carbon_index, "`")
        value = lowest_relative_barrier_kcal_mol(b) if barriers else b.anti_penalty_kcal_mol
        cost = "-" if value is None else f"{value:.2f}"  # ASCII only (see above)
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


def method_line(result: RunResult, solvent: SolventConfig | None = None) -> str:
    """Return the method line: method, solvent model and solvent, backend and version, temperature (K).

    ``solvent`` is a job's own solvent (batches over several solvents); without it the config's is named.
    """
    m = result.config.method
    p = result.provenance
    s = solvent or m.solvent
    medium = ("gas phase (no implicit solvent)" if s.model == "none"
              else f"implicit solvent {medium_label(s.model, s.name)}")
    return (f"{m.hamiltonian}; {medium}; backend {p.backend} {p.backend_version}; "
            f"temperature {m.temperature_K:g} K (for Boltzmann weights, not used by the rule)")


def _index_table(result: RunResult) -> str:
    rows = []
    for n, job in enumerate(result.jobs):
        solvent = job_solvent(result, job)
        major = job.rule.rule_major if job.rule is not None and job.rule.rule_major else "\u2013"
        computed = job.verdict.computed_major if job.verdict is not None and job.verdict.computed_major else "\u2013"
        word = verdict_word(job)
        blocked = sum(b.rule_status != "anti accessible" for b in job.beta_hydrogens)
        rows.append(
            f'<tr><td data-key="{n:04d}"><a href="#{esc(_anchor(job))}">{esc(job.job_id)}</a></td>'
            f"<td>{esc(job.substrate)}</td><td>{esc(job.base)}</td>"
            f"<td>{esc(solvent.name if solvent.model != 'none' else 'gas phase')}</td>"
            f'<td class="status-{esc(job.status)}">{esc(job.status)}</td>'
            f'<td class="smiles">{esc(major)}</td><td class="smiles">{esc(computed)}</td>'
            f"<td>{esc(word)}{' (within method uncertainty)' if _uncertain(job) else ''}</td>"
            f'<td class="num">{len(job.beta_hydrogens)}</td><td class="num">{blocked}</td></tr>')
    return ('<h2 id="jobs">Jobs</h2>\n<p class="note">Click a column heading to sort.</p>\n'
            '<table class="sortable" id="job-index"><thead><tr><th>job</th><th>substrate</th><th>base</th>'
            '<th>solvent</th><th>status</th><th>rule\u2019s major alkene</th><th>computed major alkene</th>'
            '<th>verdict</th><th class="num">H classes</th>'
            '<th class="num">not anti-accessible</th></tr></thead>\n<tbody>\n' + "\n".join(rows) + "\n</tbody></table>")


def verdict_word(job: JobRecord) -> str:
    """Return the verdict as shown: 'AGREE', 'DISAGREE' or 'no verdict' (no computed major, or no rule major)."""
    v = job.verdict
    if v is None or v.computed_major is None or v.agreement is None:
        return "no verdict"
    return "AGREE" if v.agreement else "DISAGREE"


def _uncertain(job: JobRecord) -> bool:
    return job.verdict is not None and job.verdict.computed_major is not None and job.verdict.within_method_uncertainty


def _product_share(job: JobRecord, smiles: str | None) -> str:
    """Return ' (38.4 %, range 2.1–94.8 %)' for a product of the job, or '' when it has no computed share."""
    product = next((p for p in job.products if p.smiles == smiles), None)
    if product is None or product.fraction is None:
        return ""
    if product.fraction_range is None:
        return f" ({percent_text(product.fraction)})"
    low, high = product.fraction_range
    return f" ({percent_text(product.fraction)}, range {100 * low:.1f}\u2013{100 * high:.1f} %)"


def _verdict_box(job: JobRecord) -> str:
    v = job.verdict
    word = verdict_word(job)
    kind = {"AGREE": "agree", "DISAGREE": "disagree"}.get(word, "none")
    rule_major = v.rule_major if v is not None else job.rule.rule_major if job.rule is not None else None
    computed = v.computed_major if v is not None else None
    uncertain = _uncertain(job)
    if v is None or not has_barriers(job):
        words, reason = "The geometric rule\u2019s call stands alone", NO_BARRIERS_JOB
    elif computed is None:
        words, reason = "No computed major alkene", v.reason
    elif v.agreement is None:
        words, reason = "The rule names no major alkene; the barriers pick one", v.reason
    elif v.agreement:
        words, reason = "The geometric rule and the computed barriers pick the same major alkene", v.reason
    else:
        words, reason = "The computed barriers favour a different major alkene than the geometric rule", v.reason
    head = f'<span class="badge">{esc(word)}</span>'
    if uncertain:
        head += ' <span class="uncertain">within method uncertainty</span>'
    facts = (f'<dt>rule\u2019s major alkene</dt><dd class="smiles rule-major">{esc(rule_major or "none")}</dd>'
             f'<dt>computed major alkene</dt><dd class="computed-major"><span class="smiles">{esc(computed or "none")}</span>'
             f"{esc(_product_share(job, computed))}</dd>")
    parts = [f'<div class="verdict verdict-{kind}" data-rule-major="{esc(rule_major or "")}" '
             f'data-computed-major="{esc(computed or "")}" data-agreement="{esc(word)}" '
             f'data-within-uncertainty="{"yes" if uncertain else "no"}">',
             f'<p class="verdict-head">{head} {esc(words)}.</p>',
             f'<dl class="facts">{facts}</dl>',
             f'<p class="verdict-reason"><strong>Why:</strong> {esc(reason)}.</p>']
    if uncertain:
        parts.append(f'<p class="uncertain-note"><strong>Within method uncertainty:</strong> the best barriers to different '
                     f"alkenes lie within {BARRIER_SHIFT_KCAL_MOL:g} kcal/mol of each other, inside GFN2-xTB\u2019s error; "
                     "the computation does not decide between them.</p>")
    return "".join(parts) + "</div>"


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


def _isotope_table(job: JobRecord) -> str:
    """Return the small table of every class's kinetic isotope effects and its sentence, or '' when there are none."""
    rows = [f'<tr class="kie-row" data-class="{esc(b.class_id)}" data-approach="{esc(k.approach)}">'
            f"<td>{esc(b.class_id)}</td><td>{esc(k.approach)}</td><td>{esc(k.label)}</td>"
            f"<td>{esc(', '.join(map(str, k.deuterated_indices)))}</td>"
            f'<td class="num kie" data-key="{k.kh_kd:.3f}">{k.kh_kd:.2f}</td>'
            f'<td class="num kie-wigner" data-key="{k.kh_kd_wigner:.3f}">{k.kh_kd_wigner:.2f}</td>'
            f'<td class="num">{k.temperature_K:g}</td></tr>'
            for b in job.beta_hydrogens for k in b.isotope_effects]
    if not rows:
        return ""
    return ('<table class="kie"><thead><tr><th>class</th><th>path</th><th>deuterium at</th><th>D atoms (0-based)</th>'
            '<th class="num">k<sub>H</sub>/k<sub>D</sub></th><th class="num">with Wigner</th><th class="num">T (K)</th>'
            "</tr></thead>\n<tbody>\n" + "\n".join(rows) + "\n</tbody></table>"
            f'<p class="note kie-note">{esc(KIE_SENTENCE)}</p>')


def _substitution_box(job: JobRecord, sub: SubstitutionRecord) -> str:
    """Return the SN2 box of a job: product, barriers, verification, the E2 : SN2 split beside the textbook call."""
    if sub.path_status == "ok" and sub.barrier_kcal_mol is not None:
        frequency = "" if sub.imaginary_frequency_cm1 is None else f", \u03bd\u2021 {sub.imaginary_frequency_cm1:.1f}i cm\u207b\u00b9"
        check = ("verified saddle" if sub.saddle_verified else
                 f"not verified; the barrier is the {sub.barrier_source or 'relaxed-path maximum'}") + frequency
        if sub.saddle_note:
            check += f" ({sub.saddle_note})"
    elif sub.path_status == "failed":
        error = f"{sub.error.error_type}: {sub.error.error_message}" if sub.error else "no reason recorded"
        check = f"the path failed ({error})"
    else:
        check = "not computed"
    split = (ABSENT if sub.elimination_fraction is None or sub.substitution_fraction is None else
             f"E2 {percent_text(sub.elimination_fraction)} : SN2 {percent_text(sub.substitution_fraction)}")
    facts = [("SN2 product", f'<span class="smiles sn2-product">{esc(sub.product_smiles or "none")}</span>'),
             ("\u0394E\u2021 (kcal/mol)", f'<span class="sn2-barrier">{esc(barrier_text(sub.barrier_kcal_mol))}</span>'),
             ("\u0394G\u2021 (kcal/mol)", f'<span class="sn2-free-barrier">'
              f"{esc(ABSENT if sub.barrier_free_energy_kcal_mol is None else signed(sub.barrier_free_energy_kcal_mol, 2))}</span>"),
             ("saddle", f'<span class="sn2-saddle">{esc(check)}</span>')]
    dl = '<dl class="facts">' + "".join(f"<dt>{k}</dt><dd>{v}</dd>" for k, v in facts) + "</dl>"
    e2 = "" if sub.elimination_fraction is None else f"{sub.elimination_fraction:.4f}"
    sn2 = "" if sub.substitution_fraction is None else f"{sub.substitution_fraction:.4f}"
    return (f'<div class="sn2" data-elimination="{e2}" data-substitution="{sn2}" data-rule-call="{esc(sub.rule_call)}">'
            f"{dl}<div class=\"sn2-sides\"><div class=\"sn2-side sn2-computed\"><strong>Computed split</strong>"
            f"<p class=\"sn2-split\">{esc(split)}</p><p class=\"note\">on {esc(ENERGY_WORDS[job.energy_used])}</p></div>"
            f"<div class=\"sn2-side sn2-rule\"><strong>Textbook call</strong><p class=\"sn2-call\">{esc(sub.rule_call)}</p>"
            f"<p class=\"note sn2-reason\">{esc(sub.rule_reason)}</p></div></div></div>")


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


def _beta_table(job: JobRecord) -> str:
    barriers = has_barriers(job)
    rows, notes = [], []
    for b in job.beta_hydrogens:
        where = DASH
        if b.anti.dihedral_deg is not None:
            where = f"{b.anti.dihedral_deg:.0f}\u00b0, {b.anti.geometry_source or ''}"
        gives = {name: f'<td class="smiles">{esc(a.product_smiles)}{"" if a.product_possible else " (impossible)"}</td>'
                 for name, a in (("anti", b.anti), ("syn", b.syn))}
        cells = (f'<tr class="beta-row" data-class="{esc(b.class_id)}"><td class="class">{esc(b.class_id)}</td>'
                 f'<td data-key="{b.degeneracy}">{esc(", ".join(map(str, b.hydrogen_indices)))}</td>'
                 f"{_num_cell(b.anti_penalty_kcal_mol)}{_num_cell(b.syn_penalty_kcal_mol)}<td>{esc(b.rule_status)}</td>")
        for name, approach in (("anti", b.anti), ("syn", b.syn)):
            if barriers:
                text = _path_note(b, name, approach)
                mark = ""
                if text is not None:
                    notes.append(text)
                    mark = f'<sup><a href="#{esc(_anchor(job))}-note-{len(notes)}" class="note-mark">{len(notes)}</a></sup>'
                cells += _barrier_cells(approach, name, mark) + _free_cells(approach, name)
            cells += gives[name]
        rows.append(cells + f"<td>{esc(where)}</td></tr>")
    unit = "<br>kcal/mol"
    if barriers:
        approach_heads = (f'<th class="num">\u0394E\u2021 rel.{unit}</th><th class="num">\u0394E\u2021 abs.{unit}</th>'
                          '<th class="num">saddle<br>\u03bd\u2021 cm\u207b\u00b9</th>'
                          f'<th class="num">\u0394G\u2021{unit}</th><th>saddle character</th><th>gives</th>')
        head = ('<tr><th rowspan="2">class</th><th rowspan="2">equivalent H atoms</th>'
                '<th colspan="3" class="group">the rule: periplanar cost</th><th colspan="6" class="group">anti elimination</th>'
                '<th colspan="6" class="group">syn elimination</th><th rowspan="2">best anti geometry</th></tr>'
                f'<tr><th class="num">anti{unit}</th><th class="num">syn{unit}</th><th>status</th>'
                f"{approach_heads}{approach_heads}</tr>")
    else:
        head = ('<tr><th>class</th><th>equivalent H atoms</th>'
                f'<th class="num">anti cost{unit}</th><th class="num">syn cost{unit}</th>'
                "<th>status under the rule</th><th>anti gives</th><th>syn gives</th><th>best anti geometry</th></tr>")
    table = ('<div class="wide"><table class="beta"><thead>' + head + "</thead>\n<tbody>\n" + "\n".join(rows)
             + "\n</tbody></table></div>")
    if notes:
        table += ('<ol class="path-notes">' + "".join(
            f'<li id="{esc(_anchor(job))}-note-{n}">{esc(text)}</li>' for n, text in enumerate(notes, 1)) + "</ol>")
    return table


def _product_table(job: JobRecord) -> str:
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
            f'<tr class="{row_class}" data-smiles="{esc(p.smiles)}"><td>{picture}</td><td class="smiles">{esc(p.smiles)}</td>'
            f'<td>{esc(p.substitution)}</td><td class="call-{esc(p.rule_call)}">{esc(p.rule_call)}</td>{extra}'
            f"{_num_cell(product_anti_penalty_kcal_mol(job, p))}<td>{esc(', '.join(p.via_classes))}</td><td>{esc(p.reason)}</td></tr>")
    extra_heads = ""
    if barriers:
        extra_heads = ('<th class="num">computed share</th><th class="num">range<br>(barriers '
                       f'\u00b1{BARRIER_SHIFT_KCAL_MOL:g} kcal/mol)</th><th class="num">lowest \u0394E\u2021 rel.<br>kcal/mol</th>'
                       "<th>lowest path</th>")
    return ('<div class="wide"><table class="products"><thead><tr><th>structure</th><th>SMILES</th><th>substitution</th>'
            f'<th>rule\u2019s call</th>{extra_heads}<th class="num">lowest anti cost<br>kcal/mol</th><th>from classes</th>'
            "<th>why</th></tr></thead>\n<tbody>\n" + "\n".join(rows) + "\n</tbody></table></div>")


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
            "<p><strong>What the numbers are:</strong> GFN2-xTB electronic energies in kcal/mol. Anti and syn costs are "
            "conformational costs relative to this substrate's global minimum, not barriers; "
            f"{esc(barrier_words)}.</p>"
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
        picture = (f'<figure class="substrate">{inline_svg(depiction, _anchor(job) + "-substrate")}<figcaption>X: leaving group; '
                   + ("\u03b1/\u03b2: the carbons; each class's hydrogen carries its lowest relative barrier \u0394E\u2021 "
                      "(anti or syn) in kcal/mol (\u201c-\u201d: no computed path; " if barriers else
                      "\u03b1/\u03b2: the carbons; each class's hydrogen carries its anti cost in kcal/mol "
                      "(\u201c-\u201d: never reached below the cap; ")
                   + "blue: anti accessible, orange: syn only, red: blocked under the rule).</figcaption></figure>")
    scan_key, product_key = plot_name(job.job_id, "scan"), plot_name(job.job_id, "products")
    path_key = plot_name(job.job_id, "paths")
    path_svg = assets.get(path_key) or own.get(path_key)
    character_key = plot_name(job.job_id, "character")
    body = [
        _verdict_box(job),
        f'<div class="top">{picture}<div>{dl}</div></div>',
        "<h3>Beta hydrogens</h3>", _beta_table(job),
        '<p class="note">Cost: lowest energy with the hydrogen anti- (|\u03c6| \u2265 '
        f"{result.config.rule.anti_min_deg:g}\u00b0) or syn-periplanar (|\u03c6| \u2264 {result.config.rule.syn_max_deg:g}\u00b0) "
        "to the leaving group, above the global minimum. Class C3-H10 is the hydrogen H10 on C\u03b2 atom 3 and its "
        "equivalents; atom indices are 0-based as in results.json."
        + (" \u0394E\u2021: electronic barrier in kcal/mol, rel. above the job's lowest, abs. above the substrate's global "
           "minimum + free base; \u03bd\u2021: the saddle's imaginary frequency; the numbered notes explain unverified "
           "saddles, failed paths and flagged paths. \u0394G\u2021: quasi-RRHO free-energy barrier in kcal/mol (1 M), "
           "verified saddles only (\u201c\u2014\u201d otherwise); saddle character: see the map below."
           if barriers else "") + "</p>",
        _isotope_table(job),
        "<h3>Alkenes: the rule\u2019s call" + (" and the computed shares</h3>" if barriers else "</h3>"),
        _product_table(job),
    ]
    if barriers:
        body += [
            "<h3>Relaxed E2 paths</h3>",
            _figure(path_svg, path_key.replace("/", "-"),
                    "Energy along each relaxed path (colour: class; solid: anti, dashed: syn) above substrate + free base; "
                    "diamonds at the path maximum: filled, verified saddle (at its energy); open, unverified "
                    "(the path maximum).", "No path plot."),
        ]
        if character_points(job):
            body += [
                "<h3>Saddle character</h3>",
                _figure(assets.get(character_key) or own.get(character_key), character_key.replace("/", "-"),
                        "Each verified E2 saddle (class and path) on the two cleavage axes, 1 \u2212 Pauling bond order "
                        "with r\u2080 from the free substrate; dotted: both bonds breaking in step; the corners are the "
                        "reactant, the alkene with the conjugate acid and X\u207b, and the two stepwise intermediates.",
                        "No character plot."),
            ]
    if job.substitution is not None:
        body += ["<h3>Substitution (SN2) beside elimination</h3>", _substitution_box(job, job.substitution)]
    body += [
        "<h3>Dihedral scans</h3>",
        _figure(assets.get(scan_key) or own.get(scan_key), scan_key.replace("/", "-"),
                "Relative energy along each H\u2013C\u03b2\u2013C\u03b1\u2013X scan; shaded: the rule's anti and syn windows.",
                "No scan plot."),
        "<h3>The rule\u2019s calls" + (" beside the computed shares</h3>" if barriers else "</h3>"),
        _figure(assets.get(product_key) or own.get(product_key), product_key.replace("/", "-"),
                "The geometric rule's call on each alkene" + (
                    f"; right: the computed share, the bar spanning the share when every barrier moves by "
                    f"\u00b1{BARRIER_SHIFT_KCAL_MOL:g} kcal/mol." if barriers else "."), "No products."),
        "<h3>Down the C\u03b2\u2013C\u03b1 bond</h3>", _newman_block(job, assets),
        "<h3>How the rule reached its call</h3>",
        "<ol class=\"reasoning\">" + "".join(f"<li>{esc(line)}</li>" for line in rule.reasoning) + "</ol>",
    ]
    notes = [f"{b.class_id}, scan from {s.start}: {n}" for b in job.beta_hydrogens for s in b.scans for n in s.notes]
    if job.warnings or notes:
        body.append("<h3>Warnings and scan notes</h3><ul>" + "".join(f"<li>{esc(w)}</li>" for w in (*job.warnings, *notes)) + "</ul>")
    return head + "\n".join(body) + "\n" + foot + "</section>"


def _run_method_line(result: RunResult) -> str:
    """Return the method line of the whole run; when its jobs ran in several solvents, it says so."""
    solvents = {job_solvent(result, job) for job in result.jobs}
    if len(solvents) <= 1:
        return method_line(result, next(iter(solvents), None))
    return method_line(result) + "; the jobs ran in several solvents: each job's method line names its own"


def _barrier_points(result: RunResult) -> tuple[str, ...]:
    """Return the barrier points of "Reading the numbers": what they mean, or that none were computed."""
    jobs = [j for j in result.jobs if has_barriers(j)]
    if not jobs:
        return (BARRIERS_ABSENT,)
    temperatures = tuple(sorted({j.temperature_K for j in jobs if j.temperature_K is not None}))
    points = barrier_meaning(temperatures or (result.config.method.temperature_K,))
    if len(jobs) < len(result.jobs):
        points += ("Some jobs have no computed paths: their product calls are the geometric rule's only.",)
    return points + _new_field_points(result, jobs)


def energy_used_point(jobs: list[JobRecord]) -> str:
    """Return the point of "Reading the numbers" that says which barriers drove each job's product mix."""
    used = {j.energy_used for j in jobs}
    if len(used) == 1:
        kind = next(iter(used))
        text = f"The product mixes and the E2 : SN2 split were driven by {ENERGY_WORDS[kind]} in every job"
    else:
        text = "The product mixes were driven by " + "; ".join(
            f"{ENERGY_WORDS[j.energy_used]} in {j.job_id}" for j in jobs)
    if "free" in used:
        text += (": with free energies, read \u0394G\u2021 for \u0394E\u2021 in the share rule above, and paths "
                 "without a verified saddle (no \u0394G\u2021) are left out")
    return text + "."


def _new_field_points(result: RunResult, jobs: list[JobRecord]) -> tuple[str, ...]:
    """Return the points on energy_used, \u0394G\u2021, saddle character, isotope effects and substitution (those with data)."""
    approaches = [a for j in jobs for b in j.beta_hydrogens for a in (b.anti, b.syn)]
    points = [energy_used_point(jobs)]
    if any(a.barrier_free_energy_kcal_mol is not None for a in approaches) or any(
            j.substitution is not None and j.substitution.barrier_free_energy_kcal_mol is not None for j in jobs):
        points.append(
            "\u0394G\u2021 is a free energy of activation in kcal/mol for verified saddles only: ideal-gas "
            "thermochemistry from the Hessians of the free substrate, the free base and the saddle, harmonic enthalpies, "
            "Grimme\u2019s quasi-RRHO entropy for low modes, standard state 1 M, at the run\u2019s temperature, above the "
            "free substrate plus the free base. Rotational symmetry numbers are 1 on purpose: the path degeneracy already "
            "counts symmetry once. \u201c\u2014\u201d: no \u0394G\u2021 (no verified saddle).")
    if any(a.saddle_character is not None for a in approaches):
        points.append(
            "Saddle character: C\u03b2\u2013H and C\u03b1\u2013X cleavage are each 1 \u2212 the Pauling bond order "
            "exp((r\u2080 \u2212 r)/0.3 \u00c5), r at the saddle and r\u2080 from the free substrate: 0 is an intact bond, "
            "1 a broken one. C\u2013H cleavage well ahead of C\u2013X reads carbanion-like, C\u2013X well ahead "
            "carbocation-like, the two in step central; the map places each verified saddle on these two axes "
            "(a More O\u2019Ferrall\u2013Jencks diagram).")
    if any(b.isotope_effects for j in jobs for b in j.beta_hydrogens):
        points.append("k_H/k_D: " + KIE_SENTENCE)
    if any(j.substitution is not None for j in jobs):
        points.append(
            "Substitution (SN2): the base attacks C\u03b1 from the back, the product carries the Walden inversion, and "
            "its barrier shares the zero and the kind of the E2 barriers. The E2 : SN2 split comes from the same "
            "Boltzmann mix over all paths; the textbook call beside it (primary C\u03b1 with a small base: "
            "substitution; tertiary C\u03b1 or a bulky base: elimination; secondary: a mixture) is a rule of thumb.")
    return tuple(points)


#: the sentence under every substituent-series table
SERIES_SENTENCE = ("Each member's barrier is the lowest E2 barrier of its job (every beta-H class, anti and syn) above its "
                   "own substrate plus the free base; log\u2081\u2080(k/k\u2080) = \u2212(barrier \u2212 barrier of "
                   "k\u2080)/(RT ln 10), transition-state theory with one prefactor for all members, and \u03c1 is the "
                   "least-squares slope of log\u2081\u2080(k/k\u2080) against \u03c3. Compare the sign and size of "
                   "\u03c1 with a measured one; single values carry the method's uncertainty of about 1 kcal/mol.")


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
            + _figure(svg, key.replace("/", "-"), f"Hammett plot of {series.name}: log\u2081\u2080(k/k\u2080) against "
                      f"\u03c3 with the fitted line; right axis: the same points as {word} in kcal/mol.",
                      "No member has a barrier: no plot.") + "</div>")


def base_model_section(result: RunResult) -> str:
    """Return the report's comparison of base models (computed product shares per model), or '' when none."""
    blocks = []
    for group in base_model_groups(result.jobs):
        products, rows = model_mix(group)
        head = "".join(f'<th class="num smiles">{esc(s)}</th>' for s in products)
        body = "".join(
            f'<tr><td><a href="#{esc(_anchor(job))}">{esc(job.base)}</a></td><td>{esc(job.base_info.model or "bare")}</td>'
            + "".join(f'<td class="num">{esc(percent_text(shares.get(s)))}</td>' for s in products) + "</tr>"
            for job, shares in rows)
        blocks.append(f"<h3>{esc(group[0].substrate)} + {esc(group[0].base_info.smiles)}</h3>"
                      f"<table><thead><tr><th>job base</th><th>model</th>{head}</tr></thead><tbody>{body}</tbody></table>")
    if not blocks:
        return ""
    return ('<section id="base-models"><h2>Base models compared</h2>' + "".join(blocks)
            + '<p class="note">Computed Curtin\u2013Hammett shares of each alkene for one substrate and one base under '
            "each base model (bare anion, ion pair, explicit alcohol molecules). Barriers of different models are "
            "not on one scale (each model has its own reference energy); compare the shares.</p></section>")


def series_section(result: RunResult, assets: Mapping[str, str]) -> str:
    """Return the report's section of substituent series (Hammett fits), one block per series and solvent."""
    return ('<section class="series-section" id="series"><h2>Substituent series</h2>'
            + "".join(_series_block(s, assets) for s in result.series)
            + f'<p class="note">{esc(SERIES_SENTENCE)} * : relaxed-path maximum, saddle not verified.</p></section>')


def render_report(result: RunResult, assets: Mapping[str, str]) -> str:
    """Return the whole report as one self-contained HTML document (UTF-8 text).

    ``assets`` maps plot names (``plots.plot_name``) to SVG text; scan, path and product plots missing from it
    are drawn here from results.json alone, Newman projections (which need the scan trajectories) are left out.
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
        f'<p class="meta">Method: {esc(_run_method_line(result))}.</p>',
        f'<p class="meta">Command: <code>{esc(p.command_line)}</code></p></header>',
        f'<aside class="caution" id="caution"><strong>Caution.</strong> {esc(CAUTION)}</aside>',
        '<h2 id="meaning">Reading the numbers</h2><ul class="meaning">'
        + "".join(f"<li>{esc(m)}</li>" for m in (*MEANING, *_barrier_points(result))) + "</ul>",
    ]
    if result.summary.trouble:
        parts.append('<h2 id="trouble">Numerical trouble recorded as data</h2><ul class="meaning">'
                     + "".join(f"<li>{esc(kind)}: {count}</li>" for kind, count in result.summary.trouble.items())
                     + "</ul><p class=\"note\">Each is on its record in results.json (error_type, saddle_error_type, "
                     "scan point status); the other classes and jobs went on.</p>")
    if len(result.jobs) > 1:
        parts.append(_index_table(result))
    for job in result.jobs:
        own: dict[str, str] = {}
        if job.status == "ok":
            kinds = ("scan", "products", "paths") if has_barriers(job) else ("scan", "products")
            kinds += ("character",) if character_points(job) else ()
            if not all(plot_name(job.job_id, k) in assets for k in kinds):
                figures = job_figures(job, rule.anti_min_deg, rule.syn_max_deg, rule.energy_window_kcal_mol, {})
                own = {k: figure_svg(f) for k, f in figures.items() if k not in assets}
        parts.append(_job_section(result, job, assets, own))
    if result.series:
        parts.append(series_section(result, assets))
    parts.append(base_model_section(result))
    parts.append(f'<footer class="note"><p>Made by elimscan {esc(p.program_version)} from results.json '
                 f"(schema {esc(result.schema_name)} {esc(result.schema_version)}).</p></footer>")
    parts.append(f"<script>{_SCRIPT}</script></body></html>")
    return "\n".join(parts) + "\n"

