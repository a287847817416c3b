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
    lines.append(f"  {'class':<12}{'deg':>4}  {'anti product':<24}{'anti pen':>9}{'syn pen':>9}  rule status")
    for b in job.beta_hydrogens:
        lines.append(f"  {b.class_id:<12}{b.degeneracy:>4}  {b.anti.product_smiles[:23]:<24}"
                     f"{_kcal(b.anti_penalty_kcal_mol):>9}{_kcal(b.syn_penalty_kcal_mol):>9}  {b.rule_status}")
    lines.append("  penalties: lowest anti-/syn-periplanar energy above the global minimum, kcal/mol (GFN2-xTB, electronic)")
    for p in job.products:
        lines.append(f"  {p.rule_call:<10}{p.smiles:<28}{p.substitution:<6} {p.reason}")
    return lines


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
