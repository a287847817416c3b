"""Text renderings of results (no file I/O: the CLI writes what these return)."""

from __future__ import annotations

from elimscan.records import RunResult


def summary_table(result: RunResult) -> str:
    """Return a plain-text table of the run's molecules (energies in hartree) and jobs."""
    p = result.provenance
    lines = [
        f"elimscan {p.program_version} | {p.method_label}",
        f"{'role':<10}{'name':<22}{'formula':<12}{'status':<8}{'E / hartree':>16}{'gradients':>11}",
    ]
    for m in result.molecules:
        energy = f"{m.energy_hartree:.8f}" if m.energy_hartree is not None else "-"
        lines.append(f"{m.role:<10}{m.name[:21]:<22}{(m.formula or '-'):<12}{m.status:<8}{energy:>16}{(m.n_gradients or 0):>11}")
    lines.append("")
    for job in result.jobs:
        lines.append(f"job {job.job_id}: {job.status}")
        if job.error is not None:
            lines.append(f"    {job.error.error_type}: {job.error.error_message}")
    s = result.summary
    lines.append(f"{s.n_jobs_ok}/{s.n_jobs} jobs ok, {s.n_jobs_failed} failed")
    return "\n".join(lines)
