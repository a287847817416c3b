"""Text renderings of results (no file I/O: the CLI writes what these return)."""

from __future__ import annotations

import unicodedata

from elimscan.analysis.comparison import SubstrateComparison, compare_substrates
from elimscan.analysis.headline import job_headline
from elimscan.chem.alkenenames import alkene_description
from elimscan.output.benchmark_note import benchmark_note
from elimscan.output.basemodelwords import DEFAULT_MODEL_SENTENCE, BaseModelWords, any_default_model, base_model_words
from elimscan.output.comparison import comparison_text
from elimscan.output.headline import headline_lines
from elimscan.results.documents import RunResult, SeriesRecord
from elimscan.results.records import JobRecord


#: Unicode categories a terminal may act on instead of showing: controls (C0, DEL, C1: escape sequences),
#: format characters (bidirectional overrides, zero-width marks), line and paragraph separators, and lone
#: surrogates (which cannot even be encoded for the terminal)
_UNPRINTABLE_CATEGORIES = frozenset({"Cc", "Cf", "Zl", "Zp", "Cs"})


def _escaped(char: str) -> str:
    code = ord(char)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}" if code < 0x10000 else f"\\U{code:08x}"


def printable(text: str) -> str:
    """Return ``text`` (a user-given name or message) safe for a terminal: control, format, separator and
    surrogate characters written as Python escapes (ESC as \\x1b, U+202E as \\u202e), everything else unchanged."""
    if text.isprintable():  # the common case: nothing to escape (isprintable is False for every category above)
        return text
    return "".join(_escaped(c) if unicodedata.category(c) in _UNPRINTABLE_CATEGORIES else c for c in text)


def duration_text(seconds: float | None) -> str:
    """Return a short human duration of ``seconds`` ('45 s', '12 min', '3.5 h'; 'unknown' for None)."""
    if seconds is None:
        return "unknown"
    if seconds < 90:
        return f"{seconds:.0f} s"
    if seconds < 5400:
        return f"{seconds / 60:.0f} min"
    return f"{seconds / 3600:.1f} h"


def _kcal(value: float | None) -> str:
    return "-" if value is None else f"{value:.2f}"


def r_squared_text(r_squared: float | None) -> str:
    """Return a fit's r² as shown in the reports and plots (3 decimals), or why there is none."""
    return "undefined (all barriers equal)" if r_squared is None else f"{r_squared:.3f}"


def base_model_lines(model: BaseModelWords) -> list[str]:
    """Return the lines naming a job's base model, its arrangements (spread in kcal/mol) and why it was chosen."""
    return [f"  base model: {printable(model.model)}" + (f"; {model.arrangements}" if model.arrangements else ""),
            f"    why: {printable(model.reason)}"]


def job_table(job: JobRecord, model: BaseModelWords | None = None, record: dict | None = None) -> list[str]:
    """Return the lines of one job's table: beta-H classes with penalties (kcal/mol) and rule calls.

    Atoms are numbered from 1; SMILES are never cut: a long one pushes its row's columns right. With ``model``
    the base model follows the leaving group and the base; with ``record`` (analysis.benchmark_record) the
    benchmark's counts for the job's kinds of choice follow its verdict.
    """
    lines = [f"job {job.job_id}: {job.status}"]
    if job.status == "ok" and job.rule is not None:
        headline = job_headline(job)
        lines.extend(headline_lines(headline))
        note = benchmark_note(job, record, headline, ascii_only=True)
        if note:
            lines.append(f"  benchmark: {printable(note)}")
    if job.status != "ok":
        if job.error is not None:
            lines.append(f"    {job.error.error_type}: {job.error.error_message}")
        return lines
    lg = job.leaving_group
    base = job.base_info
    lines.append(f"  leaving group {lg.label} (atom {lg.leaving_atom_index + 1}, C-alpha atom {lg.c_alpha_index + 1}); "
                 f"base {'bulky' if base.bulky else 'not bulky'} ({base.bulky_reason}); {len(job.conformers)} conformers")
    if model is not None:
        lines.extend(base_model_lines(model))
    lines.append(f"  {'class':<12}{'degeneracy':>10}{'anti penalty':>13}{'syn penalty':>12}"
                 f"{'dE anti':>9}{'dE syn':>9}  {'rule status':<16}anti product")
    for b in job.beta_hydrogens:
        lines.append(f"  {b.class_id:<12}{b.degeneracy:>10}"
                     f"{_kcal(b.anti_penalty_kcal_mol):>13}{_kcal(b.syn_penalty_kcal_mol):>12}"
                     f"{_barrier(b.anti):>9}{_barrier(b.syn):>9}  {b.rule_status:<16}{b.anti.product_smiles}")
    lines.append("  penalty: lowest anti-/syn-periplanar energy above the global minimum; dE: barrier above substrate + "
                 "free base; degeneracy: equivalent hydrogens of the class")
    lines.append("  (kcal/mol, GFN2-xTB electronic energies; * = relaxed-path estimate, saddle not verified; read relative values)")
    lines.append(f"  {'rule':<10}{'computed':>9}  {'range':<13} product (SMILES, name) / why (rule)")
    for p in job.products:
        fraction = "-" if p.fraction is None else f"{p.fraction:.0%}"
        spread = "" if p.fraction_range is None else f"{p.fraction_range[0]:.0%}-{p.fraction_range[1]:.0%}"
        lines.append(f"  {p.rule_call:<10}{fraction:>9}  {spread:<13} {p.smiles}  {alkene_description(p.smiles)}")
        lines.append(f"  {'':<35}why: {p.reason}")
    if job.verdict is not None:
        lines.append(f"  barriers against the rule: {job.verdict.reason}")
    return lines


def _barrier(block) -> str:
    if block.barrier_kcal_mol is None:
        return {"failed": "failed", "ok": "-"}.get(block.path_status, "-")
    return f"{block.barrier_kcal_mol:.2f}{'' if block.saddle_verified else '*'}"


def series_table(series: SeriesRecord) -> list[str]:
    """Return the lines of one substituent series: sigma, lowest E2 barrier (kcal/mol), log10(k/k0), and the fit."""
    kind = "dG" if series.energy_used == "free" else "dE"
    solvent = f" in {series.solvent.model} {series.solvent.name or ''}".rstrip() if series.solvent is not None else ""
    lines = [f"series {series.name}: base {series.base}{solvent}, {kind} at {series.temperature_K:g} K"]
    lines.append(f"  {'substrate':<28}{'sigma':>7}{kind + ' kcal/mol':>13}{'log10 k/k0':>12}  path / note")
    for p in series.points:
        log_k = "-" if p.log10_k_rel is None else f"{p.log10_k_rel:+.2f}"
        mark = "*" if p.barrier_source == "relaxed-path maximum" else ""
        lines.append(f"  {p.substrate[:27]:<28}{p.sigma:>+7.2f}{_kcal(p.barrier_kcal_mol) + mark:>13}{log_k:>12}  "
                     f"{p.path or p.note or ''}")
    if series.rho is not None:
        lines.append(f"  rho {series.rho:+.2f}, r^2 {r_squared_text(series.r_squared)} ({series.n_fitted} members; k0: "
                     f"{series.reference_substrate}; * = relaxed-path estimate)")
    else:
        lines.append(f"  no fit: {series.note}")
    if series.sigma_source:
        lines.append(f"  sigma values: {series.sigma_source}")
    return lines


def solvent_text(result: RunResult, job: JobRecord) -> str:
    """Return a job's implicit solvent as shown: 'alpb ethanol', or 'gas phase'."""
    solvent = job.solvent or result.config.method.solvent
    return "gas phase" if solvent.model == "none" else f"{solvent.model} {solvent.name}"


def run_comparisons(result: RunResult) -> tuple[SubstrateComparison, ...]:
    """Return the comparison of each substrate of a run with more than one job, with the config's observations."""
    experiments = {s.name: s.experiment for s in result.config.substrates if s.experiment}
    return compare_substrates(result.jobs, experiments, lambda job: solvent_text(result, job))


def summary_table(result: RunResult, record: dict | None = None) -> str:
    """Return a plain-text summary of the run: molecules (energies in hartree), then each job's table (with the
    benchmark's counts for its kinds of choice when ``record``, analysis.benchmark_record, is given)."""
    p = result.provenance
    lines = [
        f"elimscan {p.program_version} | {p.method_label}",
        f"{'role':<10}{'name':<22}{'formula':<12}{'status':<8}{'E / hartree':>16}",
    ]
    for m in result.molecules:
        energy = f"{m.energy_hartree:.8f}" if m.energy_hartree is not None else "-"
        lines.append(f"{m.role:<10}{m.name[:21]:<22}{(m.formula or '-'):<12}{m.status:<8}{energy:>16}")
    for job in result.jobs:
        lines.append("")
        lines.extend(job_table(job, base_model_words(result, job), record))
    for series in result.series:
        lines.append("")
        lines.extend(series_table(series))
    for comparison in run_comparisons(result):
        lines.append("")
        lines.extend(printable(line) for line in comparison_text(comparison))  # sources are user-given text
    if any_default_model(result):
        lines += ["", DEFAULT_MODEL_SENTENCE]
    s = result.summary
    lines.append(f"\n{s.n_jobs_ok}/{s.n_jobs} jobs ok, {s.n_jobs_failed} failed")
    lines.extend(trouble_lines(s.trouble))
    return "\n".join(lines)


def trouble_lines(trouble: dict[str, int]) -> list[str]:
    """Return the lines listing numerical trouble recorded as data (kind: count), or none."""
    if not trouble:
        return []
    return ["numerical trouble recorded as data (see results.json):",
            *(f"  {kind}: {count}" for kind, count in trouble.items())]
