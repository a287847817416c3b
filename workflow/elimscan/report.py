"""Text renderings of results (no file I/O: the CLI writes what these return)."""

from __future__ import annotations

from elimscan.records import JobRecord, RunResult


def _kcal(value: float | None) -> str:
    return "-" if value is None else f"{value:.2f}"


def job_table(job: JobRecord) -> list[str]:
    """Return the lines of one job's table: beta-H classes with penalties (kcal/mol) and rule calls."""
    lines = [f"job {job.job_id}: {job.status}"]
    if job.status != "ok":
        if job.error is not None:
            lines.append(f"    {job.error.error_type}: {job.error.error_message}")
        return lines
    lg = job.leaving_group
    base = job.base_info
    lines.append(f"  leaving group {lg.label} (atom {lg.leaving_atom_index}, C-alpha {lg.c_alpha_index}); "
                 f"base {'bulky' if base.bulky else 'not bulky'} ({base.bulky_reason}); {len(job.conformers)} conformers")
    lines.append(f"  {'class':<12}{'deg':>4}  {'anti product':<24}{'anti pen':>9}{'syn pen':>9}"
                 f"{'dE anti':>9}{'dE syn':>9}  rule status")
    for b in job.beta_hydrogens:
        lines.append(f"  {b.class_id:<12}{b.degeneracy:>4}  {b.anti.product_smiles[:23]:<24}"
                     f"{_kcal(b.anti_penalty_kcal_mol):>9}{_kcal(b.syn_penalty_kcal_mol):>9}"
                     f"{_barrier(b.anti):>9}{_barrier(b.syn):>9}  {b.rule_status}")
    lines.append("  pen: lowest anti-/syn-periplanar energy above the global minimum; dE: barrier above substrate + free base")
    lines.append("  (kcal/mol, GFN2-xTB electronic energies; * = relaxed-path estimate, saddle not verified; read relative values)")
    lines.append(f"  {'rule':<10}{'product':<28}{'subst':<6}{'computed':>9}  {'range':<13} why (rule)")
    for p in job.products:
        fraction = "-" if p.fraction is None else f"{p.fraction:.0%}"
        spread = "" if p.fraction_range is None else f"{p.fraction_range[0]:.0%}-{p.fraction_range[1]:.0%}"
        lines.append(f"  {p.rule_call:<10}{p.smiles[:27]:<28}{p.substitution:<6}{fraction:>9}  {spread:<13} {p.reason}")
    if job.verdict is not None:
        flag = {True: "AGREE", False: "DISAGREE", None: "n/a"}[job.verdict.agreement]
        lines.append(f"  verdict: rule {job.verdict.rule_major} | computed {job.verdict.computed_major} | {flag}: {job.verdict.reason}")
    return lines


def _barrier(block) -> str:
    if block.barrier_kcal_mol is None:
        return {"failed": "failed", "ok": "-"}.get(block.path_status, "-")
    return f"{block.barrier_kcal_mol:.2f}{'' if block.saddle_verified else '*'}"


def summary_table(result: RunResult) -> str:
    """Return a plain-text summary of the run: molecules (energies in hartree), then each job's table."""
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
        lines.extend(job_table(job))
    s = result.summary
    lines.append(f"\n{s.n_jobs_ok}/{s.n_jobs} jobs ok, {s.n_jobs_failed} failed")
    return "\n".join(lines)
