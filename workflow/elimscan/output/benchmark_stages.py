"""The benchmark page's section on where the jobs' gradients went, by stage of their paths (pure: returns text).

From ``analysis.stagegradients.StageTotals``: per stage the gradients, their share and the mean per path; what was
left out is said under the table.
"""

from __future__ import annotations

from elimscan.analysis.stagegradients import StageTotals


def stage_section(totals: StageTotals) -> list[str]:
    """Return the lines of the section "Where the gradients went" (none when no finished job carries stage counts)."""
    if totals.n_jobs == 0:
        return []
    whole = sum(totals.by_stage.values())
    lines = ["", "## Where the gradients went", "",
             f"Summed over the {totals.n_jobs} finished job(s) whose records carry the gradients of each stage of "
             f"their paths ({totals.n_paths} paths: every E2 approach and the SN2 path; {whole:,} gradients): the "
             "share of each stage and its mean per path. Wall time per stage is not in the records (they hold only "
             "what the same inputs reproduce); each batch's log gives it, stage by stage.", "",
             "| stage | gradients | share | mean per path |", "|---|---|---|---|"]
    for stage, count in sorted(totals.by_stage.items(), key=lambda kv: -kv[1]):
        lines.append(f"| {stage} | {count:,} | {100.0 * count / whole:.0f} % | {count / totals.n_paths:.0f} |")
    if totals.n_without:
        lines += ["", f"Left out: {totals.n_without} finished job(s) whose records carry no stage counts (computed "
                  "by code before schema 0.8.12)."]
    return lines
