"""Old results read with today's atom numbers: class labels of schema 0.7.0 and older (0-based) renumbered from 1.

Before result schema 0.7.1 a class was labelled 'C<beta carbon>-H<hydrogen>' with 0-based indices ('C0-H3').
Reading such a document, :func:`relabel_job` rewrites every label of a job (class ids, the classes an alkene
comes from, the rule's reasoning, notes and warnings) to the 1-based label of the same class ('C1-H4'); file
paths (keys ending in ``_file``) keep the names they were written with. Pure functions over JSON data.
"""

from __future__ import annotations

import re
from typing import Any

from elimscan.chem.atomgraph import class_label

__all__ = ["OLD_RESULT_VERSIONS", "OLD_JOB_COPY_VERSIONS", "class_map", "relabel_job", "relabel_text"]

#: result schema versions whose class labels number atoms from 0
OLD_RESULT_VERSIONS = frozenset({"0.7.0", "0.6.1", "0.6.0", "0.5.0", "0.4.0", "0.3.0"})
#: job-copy (job.json) schema versions whose class labels number atoms from 0
OLD_JOB_COPY_VERSIONS = frozenset({"0.1.0"})

_LABEL = re.compile(r"\bC\d+-H\d+\b")


def _index(beta: dict, name: str) -> int | None:
    """Return a 0-based index of a class record under its new or old key, or None."""
    value = beta.get(f"{name}0", beta.get(name))
    return value if isinstance(value, int) else None


def class_map(job: dict) -> dict[str, str]:
    """Return {old class id: 1-based label} for the beta-H classes of one job (JSON data)."""
    found = {}
    for beta in job.get("beta_hydrogens") or ():
        if not isinstance(beta, dict) or not isinstance(beta.get("class_id"), str):
            continue
        carbon, hydrogen = _index(beta, "beta_carbon_index"), _index(beta, "representative_index")
        if carbon is not None and hydrogen is not None:
            found[beta["class_id"]] = class_label(carbon, hydrogen)
    return found


def relabel_text(text: str, mapping: dict[str, str]) -> str:
    """Return ``text`` with every old class label in ``mapping`` replaced by its new one (one pass)."""
    return _LABEL.sub(lambda m: mapping.get(m.group(0), m.group(0)), text)


def _walk(value: Any, mapping: dict[str, str]) -> Any:
    """Return JSON data with the labels of every string replaced, file paths left as they are."""
    if isinstance(value, str):
        return relabel_text(value, mapping)
    if isinstance(value, list):
        return [_walk(v, mapping) for v in value]
    if isinstance(value, dict):
        return {k: v if k.endswith("_file") else _walk(v, mapping) for k, v in value.items()}
    return value


def relabel_job(job: Any) -> Any:
    """Return a job record (JSON data) of schema 0.7.0 or older with its class labels numbered from 1."""
    if not isinstance(job, dict):
        return job
    mapping = class_map(job)
    return _walk(job, mapping) if mapping else job
