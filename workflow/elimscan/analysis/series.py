"""Substituent series from finished job records: each member's lowest E2 barrier against its sigma (pure).

A member's barrier is the lowest E2 barrier of its job (every beta-H class, anti and syn) of the kind the
run's ``analysis.energy`` names: the electronic dE or, for ``free``, the quasi-RRHO dG of verified saddles.
Barriers become log10(k/k0) = -(barrier - barrier of k0) / (RT ln 10) (transition-state theory with a
common prefactor), k0 being the member with sigma 0 when it has a barrier, else the first member with one,
and :func:`elimscan.analysis.rule.hammett_fit` fits the slope rho and r^2. A member without a finished job or
without a barrier is a point with ``status: missing`` and a note; the fit uses the others.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from elimscan.analysis.rule import hammett_fit
from elimscan.config import SERIES_MIN_MEMBERS, SeriesConfig, SolventConfig
from elimscan.results.documents import SeriesPointRecord, SeriesRecord
from elimscan.results.records import JobRecord, counts_as_barrier
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K


def log10_rate_ratio(barrier_kcal_mol: float, reference_kcal_mol: float, temperature_K: float) -> float:
    """Return log10(k/k0) = -(barrier - reference) / (RT ln 10) for barriers in kcal/mol at temperature_K (K)."""
    return (reference_kcal_mol - barrier_kcal_mol) / (BOLTZMANN_KCAL_MOL_PER_K * temperature_K * math.log(10.0))


def lowest_e2_barrier(job: JobRecord, energy: str) -> tuple[float, str, str] | None:
    """Return (barrier in kcal/mol, 'class approach', barrier source) of a job's lowest E2 path, or None.

    ``energy`` is 'electronic' (barrier_kcal_mol) or 'free' (barrier_free_energy_kcal_mol, verified saddles only).
    """
    found = []
    for beta in job.beta_hydrogens:
        for name in ("anti", "syn"):
            approach = getattr(beta, name)
            value = approach.barrier_free_energy_kcal_mol if energy == "free" else approach.barrier_kcal_mol
            if counts_as_barrier(approach) and value is not None:
                source = "verified saddle" if energy == "free" else (approach.barrier_source or "relaxed-path maximum")
                found.append((value, f"{beta.class_id} {name}", source))
    return min(found, key=lambda item: item[0]) if found else None


def _missing_note(job: JobRecord | None, energy: str, base: str) -> str:
    """Return why a member has no barrier."""
    if job is None:
        return f"no finished job of this substrate with base '{base}'"
    if job.status != "ok":
        error = job.error.error_type if job.error is not None else "failed"
        return f"job {job.job_id} failed ({error})"
    if energy == "free":
        return f"job {job.job_id} has no verified E2 saddle with a free energy"
    return f"job {job.job_id} has no computed E2 barrier"


def series_record(series: SeriesConfig, jobs: Sequence[JobRecord], temperature_K: float, energy: str,
                  solvent: SolventConfig | None = None) -> SeriesRecord:
    """Return one series' record: each member's barrier (kcal/mol) and log10(k/k0), with rho and r^2 when >= 3 members have one.

    ``jobs`` are job records of the run; only those with the series' base and the given ``solvent`` count.
    """
    by_substrate = {j.substrate: j for j in jobs if j.base == series.base and j.solvent == solvent}
    found: list[tuple[int, float, str, str]] = []  # (member index, barrier, path, source)
    for index, member in enumerate(series.members):
        job = by_substrate.get(member.substrate)
        best = lowest_e2_barrier(job, energy) if job is not None and job.status == "ok" else None
        if best is not None:
            found.append((index, *best))
    zero_sigma = [k for k, item in enumerate(found) if series.members[item[0]].sigma == 0.0]
    reference = zero_sigma[0] if zero_sigma else 0
    fit, note = None, None
    distinct_sigma = len({series.members[item[0]].sigma for item in found})
    if len(found) < SERIES_MIN_MEMBERS or distinct_sigma < 2:
        note = (f"{len(found)} of {len(series.members)} members have a barrier: a fit needs at least "
                f"{SERIES_MIN_MEMBERS} with two different sigma values")
    else:
        fit = hammett_fit([series.members[item[0]].sigma for item in found], [item[1] for item in found],
                          temperature_K, reference_index=reference)
    log_k = {item[0]: log10_rate_ratio(item[1], found[reference][1], temperature_K) for item in found}
    points = []
    by_index = {item[0]: item for item in found}
    for index, member in enumerate(series.members):
        job = by_substrate.get(member.substrate)
        item = by_index.get(index)
        if item is None:
            points.append(SeriesPointRecord(substrate=member.substrate, sigma=member.sigma, status="missing",
                                            job_id=job.job_id if job is not None else None,
                                            note=_missing_note(job, energy, series.base)))
            continue
        points.append(SeriesPointRecord(substrate=member.substrate, sigma=member.sigma, status="ok", job_id=job.job_id,
                                        barrier_kcal_mol=round(item[1], 3), barrier_source=item[3], path=item[2],
                                        log10_k_rel=round(log_k[index], 4)))
    return SeriesRecord(
        name=series.name, base=series.base, solvent=solvent, energy_used="free" if energy == "free" else "electronic",
        temperature_K=temperature_K, sigma_source=series.sigma_source,
        reference_substrate=series.members[found[reference][0]].substrate if found else None,
        points=tuple(points), n_fitted=len(found) if fit is not None else 0,
        rho=None if fit is None else round(fit.rho, 4), intercept=None if fit is None else round(fit.intercept, 4),
        r_squared=None if fit is None or fit.r_squared is None else round(fit.r_squared, 4), note=note)


def series_records(series: Sequence[SeriesConfig], jobs: Sequence[JobRecord], temperature_K: float,
                   energy: str) -> tuple[SeriesRecord, ...]:
    """Return a record per series and per solvent the jobs ran in (one solvent: one record each)."""
    solvents: list[SolventConfig | None] = []
    for job in jobs:
        if job.solvent not in solvents:
            solvents.append(job.solvent)
    return tuple(series_record(item, jobs, temperature_K, energy, solvent)
                 for item in series for solvent in (solvents or [None]))
