"""The run as a table: one CSV row per job and alkene (no file I/O: the CLI writes what this returns).

Columns of ``summary.csv``, in this order (only columns that hold data in this version):

====================================  =================================================================================
``job_id``                            the job (substrate x base), as in results.json
``job_status``                        ``ok`` or ``failed``
``substrate``                         substrate name from the config
``substrate_smiles``                  substrate SMILES as given
``base``                              base name from the config
``base_bulky``                        ``yes`` / ``no``: whether the rule counts the base as bulky (empty: failed job)
``leaving_group``                     label of the perceived leaving group (e.g. ``Cl``, ``OTs``)
``solvent_model``                     the job's implicit solvent model (``alpb``, ``gbsa`` or ``none``): its own in a
                                      batch over several solvents, else the config's
``solvent``                           the job's solvent name (empty for ``none``)
``product_smiles``                    the alkene
``product_description``               the alkene in plain words: its name when a common one is known, E/Z and the
                                      substitution pattern (``chem/alkenenames.alkene_description``)
``substitution``                      its substitution (``mono``, ``di``, ``tri``, ``tetra``)
``rule_call``                         the geometric rule's call: ``major``, ``minor``, ``syn only`` or ``blocked``
``via_classes``                       beta-H classes whose anti or syn elimination gives it, separated by ``;``
``anti_penalty_kcal_mol``             lowest anti penalty (kcal/mol, GFN2-xTB electronic, 2 decimals) of the classes
                                      whose *anti* elimination gives it; empty when none reaches anti below the cap
``lowest_barrier_kcal_mol``           lowest barrier dE‡ (kcal/mol, 3 decimals) of the computed anti and syn paths
                                      that give it: GFN2-xTB electronic energy above the substrate's global minimum
                                      plus the free base, same solvent (too low in absolute terms, can be negative);
                                      empty when no path giving it was computed
``lowest_relative_barrier_kcal_mol``  that path's barrier above the job's lowest barrier (kcal/mol, 3 decimals)
``lowest_free_barrier_kcal_mol``      lowest dG‡ (kcal/mol, 3 decimals) of the verified saddles that give it:
                                      quasi-RRHO free energy, 1 M, at the job's temperature_K, above the free
                                      substrate plus the free base; empty when none has a dG‡
``fraction``                          computed share (0-1, 4 decimals; Curtin-Hammett: class degeneracy x
                                      exp(-dE‡/RT) of every computed path at the job's temperature_K, summed per
                                      alkene; dG‡ instead of dE‡ when the job's ``energy_used`` is ``free``); empty
                                      when not computed
``fraction_low``                      lowest share when every barrier may move by +-1 kcal/mol (0-1, 4 decimals)
``fraction_high``                     highest share under the same moves (0-1, 4 decimals)
``elimination_fraction``              the job's share of all E2 paths against backside substitution (SN2), on
                                      every row of the job (0-1, 4 decimals); empty when SN2 was not computed
``computed_major``                    ``yes`` for the computed major alkene, ``no`` for the others, empty when the
                                      job has no computed major alkene
``verdict``                           the job's verdict, on every row of the job, in three states: ``agree`` (the
                                      rule's and the computed major alkene are the same), ``disagree``, or
                                      ``undecided`` (never a win; see ``undecided_why``)
``undecided_why``                     why the verdict is undecided (e.g. ``close call``: the best barriers to
                                      different alkenes lie within 1 kcal/mol; ``no path reached its products``),
                                      empty when it is decided
``rule_reason``                       the rule's reason for its call
``error``                             why the job failed (empty for an ok job)
====================================  =================================================================================

A config with substituent series also gets ``series.csv`` (:func:`series_csv`), one row per series member:

====================================  =================================================================================
``series``                            series name from the config
``base``                              the series' base
``solvent_model``, ``solvent``        the series' solvent (its own in a batch over several solvents, else the config's)
``energy_used``                       ``electronic`` (dE‡) or ``free`` (dG‡): which barriers were fitted
``substrate``                         the member
``sigma``                             its substituent constant (dimensionless, as in the config)
``status``                            ``ok`` or ``missing``
``job_id``                            the member's job (empty when missing)
``barrier_kcal_mol``                  the job's lowest E2 barrier of the kind in ``energy_used`` (kcal/mol, 3 decimals)
``barrier_source``                    ``verified saddle`` or ``relaxed-path maximum``
``path``                              the lowest path: beta-H class and approach
``log10_k_rel``                       log10(k/k0) from the barriers (4 decimals)
``rho``, ``r_squared``                the series' fitted slope and r² (4 decimals), on every row of the series; empty
                                      when too few members have a barrier
``note``                              why the member is missing (or the series' note)
====================================  =================================================================================

Rows follow results.json: jobs in order, and within a job the products in the rule's order (major,
minor, syn only, blocked). A failed job has one row with empty product columns, so no job is silently missing.
Numbers have fixed formatting and lines end in ``\\n``: the same results.json gives the same bytes.
"""

from __future__ import annotations

import csv
import io

from elimscan.analysis.headline import job_headline
from elimscan.chem.alkenenames import alkene_description
from elimscan.config import SolventConfig
from elimscan.results.documents import RunResult
from elimscan.results.records import ApproachRecord, BetaHydrogenRecord, JobRecord, ProductRecord, counts_as_barrier

SUMMARY_COLUMNS = ("job_id", "job_status", "substrate", "substrate_smiles", "base", "base_bulky", "leaving_group",
                   "solvent_model", "solvent", "product_smiles", "product_description", "substitution", "rule_call", "via_classes",
                   "anti_penalty_kcal_mol", "lowest_barrier_kcal_mol", "lowest_relative_barrier_kcal_mol",
                   "lowest_free_barrier_kcal_mol", "fraction", "fraction_low", "fraction_high", "elimination_fraction",
                   "computed_major", "verdict", "undecided_why",
                   "rule_reason", "error")


def _kcal(value: float | None) -> str:
    """Return a kcal/mol value with 2 decimals, or '' for none."""
    return "" if value is None else f"{value:.2f}"


def _barrier(value: float | None) -> str:
    """Return a barrier in kcal/mol with 3 decimals (as in results.json), or '' for none."""
    return "" if value is None else f"{value:.3f}"


def product_anti_penalty_kcal_mol(job: JobRecord, product: ProductRecord) -> float | None:
    """Return the lowest anti penalty (kcal/mol) among classes whose anti elimination gives ``product``, or None."""
    values = [b.anti_penalty_kcal_mol for b in job.beta_hydrogens
              if b.anti.product_possible and b.anti.product_smiles == product.smiles and b.anti_penalty_kcal_mol is not None]
    return min(values) if values else None


def product_paths(job: JobRecord, product: ProductRecord) -> list[tuple[BetaHydrogenRecord, str, ApproachRecord]]:
    """Return (class, 'anti' | 'syn', approach) of every computed path with a barrier (reaching its products) that
    gives ``product``."""
    found = []
    for beta in job.beta_hydrogens:
        for name, approach in (("anti", beta.anti), ("syn", beta.syn)):
            if (counts_as_barrier(approach) and approach.product_possible
                    and approach.product_smiles == product.smiles):
                found.append((beta, name, approach))
    return found


def product_lowest_barrier(job: JobRecord, product: ProductRecord) -> ApproachRecord | None:
    """Return the computed path with the lowest barrier (kcal/mol) among those giving ``product``, or None."""
    paths = product_paths(job, product)
    return min((a for _, _, a in paths), key=lambda a: a.barrier_kcal_mol) if paths else None


def product_lowest_free_barrier_kcal_mol(job: JobRecord, product: ProductRecord) -> float | None:
    """Return the lowest dG‡ (kcal/mol) among the computed paths giving ``product`` that have one, or None."""
    values = [a.barrier_free_energy_kcal_mol for _, _, a in product_paths(job, product)
              if a.barrier_free_energy_kcal_mol is not None]
    return min(values) if values else None


def job_elimination_fraction(job: JobRecord) -> float | None:
    """Return the job's E2 share (0-1) against SN2, or None when substitution was not computed."""
    return None if job.substitution is None else job.substitution.elimination_fraction


def _yes_no(value: bool | None) -> str:
    """Return 'yes', 'no' or '' for None."""
    return "" if value is None else ("yes" if value else "no")


def _four(value: float | None) -> str:
    """Return a number with 4 decimals (fractions 0-1, log10 k ratios, rho, r^2), or '' for none."""
    return "" if value is None else f"{value:.4f}"


def _solvent_cells(solvent: SolventConfig) -> dict[str, str]:
    """Return the solvent_model and solvent columns of a CSV row (solvent empty for gas phase)."""
    return {"solvent_model": solvent.model, "solvent": solvent.name if solvent.model != "none" and solvent.name else ""}


def job_solvent(result: RunResult, job: JobRecord) -> SolventConfig:
    """Return a job's implicit solvent: its own (a batch over several solvents) or else the config's method.solvent."""
    return getattr(job, "solvent", None) or result.config.method.solvent


def summary_rows(result: RunResult) -> list[dict[str, str]]:
    """Return the rows of summary.csv as {column: text}, one per job and product (one per failed job)."""
    smiles = {m.name: m.smiles for m in result.molecules if m.role == "substrate"}
    smiles.update({s.name: s.smiles for s in result.config.substrates if s.name not in smiles})
    rows = []
    for job in result.jobs:
        solvent = job_solvent(result, job)
        head = {
            "job_id": job.job_id, "job_status": job.status, "substrate": job.substrate,
            "substrate_smiles": smiles.get(job.substrate, ""), "base": job.base,
            "base_bulky": "" if job.base_info is None else ("yes" if job.base_info.bulky else "no"),
            "leaving_group": "" if job.leaving_group is None else job.leaving_group.label,
            **_solvent_cells(solvent),
        }
        error = "" if job.error is None else f"{job.error.error_type}: {job.error.error_message}"
        empty = dict.fromkeys(SUMMARY_COLUMNS[len(head):], "")
        if job.status != "ok" or not job.products:
            rows.append({**head, **empty, "error": error})
            continue
        verdict, headline = job.verdict, job_headline(job)
        for product in job.products:
            best = product_lowest_barrier(job, product)
            low, high = product.fraction_range if product.fraction_range is not None else (None, None)
            computed_major = None
            if verdict is not None and verdict.computed_major is not None:
                computed_major = product.smiles == verdict.computed_major
            rows.append({**head, "product_smiles": product.smiles,
                         "product_description": alkene_description(product.smiles), "substitution": product.substitution,
                         "rule_call": product.rule_call, "via_classes": ";".join(product.via_classes),
                         "anti_penalty_kcal_mol": _kcal(product_anti_penalty_kcal_mol(job, product)),
                         "lowest_barrier_kcal_mol": _barrier(None if best is None else best.barrier_kcal_mol),
                         "lowest_relative_barrier_kcal_mol": _barrier(None if best is None else best.relative_barrier_kcal_mol),
                         "lowest_free_barrier_kcal_mol": _barrier(product_lowest_free_barrier_kcal_mol(job, product)),
                         "fraction": _four(product.fraction), "fraction_low": _four(low), "fraction_high": _four(high),
                         "elimination_fraction": _four(job_elimination_fraction(job)),
                         "computed_major": _yes_no(computed_major),
                         "verdict": headline.state, "undecided_why": headline.why_undecided or "",
                         "rule_reason": product.reason, "error": error})
    return rows


SERIES_COLUMNS = ("series", "base", "solvent_model", "solvent", "energy_used", "substrate", "sigma", "status", "job_id",
                  "barrier_kcal_mol", "barrier_source", "path", "log10_k_rel", "rho", "r_squared", "note")


def series_rows(result: RunResult) -> list[dict[str, str]]:
    """Return the rows of series.csv as {column: text}, one per series member (barriers in kcal/mol)."""
    rows = []
    for series in result.series:
        solvent = series.solvent or result.config.method.solvent
        for point in series.points:
            rows.append({"series": series.name, "base": series.base, **_solvent_cells(solvent),
                         "energy_used": series.energy_used, "substrate": point.substrate, "sigma": f"{point.sigma:g}",
                         "status": point.status, "job_id": point.job_id or "",
                         "barrier_kcal_mol": _barrier(point.barrier_kcal_mol),
                         "barrier_source": point.barrier_source or "", "path": point.path or "",
                         "log10_k_rel": _four(point.log10_k_rel), "rho": _four(series.rho),
                         "r_squared": _four(series.r_squared), "note": point.note or series.note or ""})
    return rows


#: First characters with which a spreadsheet reads a cell as a formula (OWASP "CSV injection"; common practice)
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def neutral_cell(text: str) -> str:
    """Return a CSV cell a spreadsheet will not run as a formula: text starting like one gets a leading "'".

    Numbers (which may start with - or +) are left as they are: a spreadsheet reads them as numbers.
    """
    if not text.startswith(FORMULA_STARTS):
        return text
    try:
        float(text)
    except ValueError:
        return "'" + text
    return text


def _csv_text(columns: tuple[str, ...], rows: list[dict[str, str]]) -> str:
    """Return CSV text with a header of ``columns`` and one line per row (lines end in '\\n'), cells neutralised."""
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=columns, lineterminator="\n")
    writer.writeheader()
    writer.writerows({k: neutral_cell(v) if isinstance(v, str) else v for k, v in row.items()} for row in rows)
    return buffer.getvalue()


def series_csv(result: RunResult) -> str:
    """Return series.csv as text: a header and one row per series member (columns in the module docstring)."""
    return _csv_text(SERIES_COLUMNS, series_rows(result))


def summary_csv(result: RunResult) -> str:
    """Return summary.csv as text: a header and one row per job x product (columns in the module docstring)."""
    return _csv_text(SUMMARY_COLUMNS, summary_rows(result))
