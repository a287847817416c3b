"""Numerical trouble of a run, counted from its job records (pure, no I/O): what the summary reports.

Known failures are data on the records (a failed job, a failed anti or syn path of one beta-H class with
its ``error_type``, a saddle refinement that did not verify, failed or capped scan points); this module
only counts them, so a user sees at a glance what to look at in ``results.json``.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable

from elimscan.results.flags import FAILED_ROTATION
from elimscan.results.records import JobRecord

#: saddle notes that mean "not attempted" (a setting), not trouble
_NOT_ATTEMPTED = "not refined"


#: the summary.trouble key of single points kept at the retry electronic temperature
RETRY_TEMPERATURE = "single point at retry electronic temperature"
#: the summary.trouble key of paths (E2 and SN2) stopped by their gradient budget (paths.gradient_budget_per_atom)
BUDGET_STOPPED_KIND = "path stopped by its gradient budget"


def count_trouble(jobs: Iterable[JobRecord], retry_temperature_points: int = 0) -> dict[str, int]:
    """Return {kind of trouble: count} over the jobs, sorted by kind; {} when nothing went wrong.

    ``retry_temperature_points`` adds the run-wide count of a single run (one engine for all its jobs).
    """
    counts: Counter[str] = Counter()
    counts[RETRY_TEMPERATURE] += retry_temperature_points
    for job in jobs:
        counts[RETRY_TEMPERATURE] += job.retry_temperature_points
        if job.status != "ok":
            counts[f"job failed: {job.error.error_type if job.error else 'failed'}"] += 1
            continue
        for beta in job.beta_hydrogens:
            for approach in (beta.anti, beta.syn):
                if approach.path_status == "failed":
                    counts[f"path failed: {approach.error.error_type if approach.error else 'failed'}"] += 1
                elif approach.budget_spent_in is not None:
                    counts[BUDGET_STOPPED_KIND] += 1
                elif (approach.path_status == "ok" and not approach.saddle_verified
                      and not (approach.saddle_note or "").startswith(_NOT_ATTEMPTED)):
                    why = approach.saddle_error_type
                    counts["saddle not verified" + (f": {why}" if why else "")] += 1
                counts["complex orientation failed"] += sum(f.startswith(FAILED_ROTATION) for f in approach.flags)
            for scan in beta.scans:
                for point in scan.points:
                    if point.status == "failed":
                        counts["scan point failed"] += 1
                    elif point.status == "above_cap":
                        counts["scan point above cap"] += 1
        if job.substitution is not None and job.substitution.budget_spent_in is not None:
            counts[BUDGET_STOPPED_KIND] += 1
    return dict(sorted((kind, n) for kind, n in counts.items() if n))
