"""The run as a table: one CSV row per job and alkene (no file I/O: the CLI writes what this returns).

Columns of ``summary.csv``, in this order (only columns that hold data in this version):

==============================  =====================================================================
``job_id``                      the job (substrate x base), as in results.json
``job_status``                  ``ok`` or ``failed``
``substrate``                   substrate name from the config
``substrate_smiles``            substrate SMILES as given
``base``                        base name from the config
``base_bulky``                  ``yes`` / ``no``: whether the rule counts the base as bulky (empty for a failed job)
``leaving_group``               label of the perceived leaving group (e.g. ``Cl``, ``OTs``)
``solvent_model``               implicit solvent model (``alpb``, ``gbsa`` or ``none``)
``solvent``                     solvent name (empty for ``none``)
``product_smiles``              the alkene
``substitution``                its substitution (``mono``, ``di``, ``tri``, ``tetra``)
``rule_call``                   the geometric rule's call: ``major``, ``minor`` or ``forbidden``
``via_classes``                 beta-H classes whose anti or syn elimination gives it, separated by ``;``
``anti_penalty_kcal_mol``       lowest anti penalty (kcal/mol, GFN2-xTB electronic, 2 decimals) of the classes
                                whose *anti* elimination gives it; empty when none reaches anti below the cap
``rule_reason``                 the rule's reason for its call
``error``                       why the job failed (empty for an ok job)
==============================  =====================================================================

Rows follow results.json: jobs in order, and within a job the products in the rule's order (major,
minor, forbidden). A failed job has one row with empty product columns, so no job is silently missing.
Numbers have fixed formatting and lines end in ``\\n``: the same results.json gives the same bytes.
"""

from __future__ import annotations

import csv
import io

from elimscan.records import JobRecord, ProductRecord, RunResult

SUMMARY_COLUMNS = ("job_id", "job_status", "substrate", "substrate_smiles", "base", "base_bulky", "leaving_group",
                   "solvent_model", "solvent", "product_smiles", "substitution", "rule_call", "via_classes",
                   "anti_penalty_kcal_mol", "rule_reason", "error")


def _kcal(value: float | None) -> str:
    """Return a kcal/mol value with 2 decimals, or '' for none."""
    return "" if value is None else f"{value:.2f}"


def product_anti_penalty_kcal_mol(job: JobRecord, product: ProductRecord) -> float | None:
    """Return the lowest anti penalty (kcal/mol) among classes whose anti elimination gives ``product``, or None."""
    values = [b.anti_penalty_kcal_mol for b in job.beta_hydrogens
              if b.anti.product_possible and b.anti.product_smiles == product.smiles and b.anti_penalty_kcal_mol is not None]
    return min(values) if values else None


def summary_rows(result: RunResult) -> list[dict[str, str]]:
    """Return the rows of summary.csv as {column: text}, one per job and product (one per failed job)."""
    smiles = {m.name: m.smiles for m in result.molecules if m.role == "substrate"}
    smiles.update({s.name: s.smiles for s in result.config.substrates if s.name not in smiles})
    solvent = result.config.method.solvent
    rows = []
    for job in result.jobs:
        head = {
            "job_id": job.job_id, "job_status": job.status, "substrate": job.substrate,
            "substrate_smiles": smiles.get(job.substrate, ""), "base": job.base,
            "base_bulky": "" if job.base_info is None else ("yes" if job.base_info.bulky else "no"),
            "leaving_group": "" if job.leaving_group is None else job.leaving_group.label,
            "solvent_model": solvent.model, "solvent": solvent.name if solvent.model != "none" and solvent.name else "",
        }
        error = "" if job.error is None else f"{job.error.error_type}: {job.error.error_message}"
        empty = dict.fromkeys(SUMMARY_COLUMNS[len(head):], "")
        if job.status != "ok" or not job.products:
            rows.append({**head, **empty, "error": error})
            continue
        for product in job.products:
            rows.append({**head, "product_smiles": product.smiles, "substitution": product.substitution,
                         "rule_call": product.rule_call, "via_classes": ";".join(product.via_classes),
                         "anti_penalty_kcal_mol": _kcal(product_anti_penalty_kcal_mol(job, product)),
                         "rule_reason": product.reason, "error": error})
    return rows


def summary_csv(result: RunResult) -> str:
    """Return summary.csv as text: a header and one row per job x product (columns in the module docstring)."""
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=SUMMARY_COLUMNS, lineterminator="\n")
    writer.writeheader()
    writer.writerows(summary_rows(result))
    return buffer.getvalue()
