"""A job's base model in words, for the terminal and the report: what was computed, why, and its arrangements.

The words are read from the records alone: the job's ``base_info`` (model label and reason) and the relaxed
base's molecule record in the job's solvent (arrangements and their spread). Every field is optional, so a
result file written before elimscan recorded them still renders: the words then say what was not recorded.
"""

from __future__ import annotations

from dataclasses import dataclass

from elimscan.chem.modellabels import is_default_cluster, label_parts, molecule_name
from elimscan.config.molecules import DEFAULT_CLUSTER_EMBEDDINGS, DEFAULT_EXPLICIT_MOLECULES
from elimscan.results.documents import RunResult
from elimscan.results.records import JobRecord, MoleculeRecord

#: said where a result file holds no model label (written before base models were recorded)
MODEL_NOT_RECORDED = "not recorded (a result file from before elimscan recorded base models)"
#: said where a result file holds no reason for the model
REASON_NOT_RECORDED = "not recorded in this result file"
#: the one sentence on the explicit-solvent default, wherever a job was computed with it (text and report)
DEFAULT_MODEL_SENTENCE = (
    f"The default base model ({DEFAULT_EXPLICIT_MOLECULES} molecules of the base's own alcohol, or water, around an "
    f"alkoxide or hydroxide in a protic solvent, the lowest of {DEFAULT_CLUSTER_EMBEDDINGS} independent embeddings) "
    "was chosen on the measured basicity of alkoxides in solution (their order and the pKa gap between tert-butanol "
    "and methanol) and on how well three seeds agree on the calibration rates, and frozen before the benchmark's test "
    "set was scored under it (validation/model-freeze.yaml), never on product outcomes; it still leaves the "
    "calibration rates' free barriers 6\u201310 kcal/mol low at GFN2-xTB; write \u201cmodel: bare\u201d under a base "
    "to compute the free anion instead.")


@dataclass(frozen=True)
class BaseModelWords:
    """A job's base model as people read it: the model, why it was chosen, and its arrangements ('' for one)."""

    model: str
    reason: str
    arrangements: str


def _count(n: int, smiles: str) -> str:
    """Return '3 ethanol molecules' (or '1 molecule of CC(C)CO' for a molecule without a usual name)."""
    name = molecule_name(smiles)
    noun = "molecule" if n == 1 else "molecules"
    return f"{n} {name} {noun}" if name else f"{n} {noun} of {smiles}"


def model_words(label: str | None, where: bool = True) -> str | None:
    """Return a model label in words without the base's name, the label as written if unreadable, None for None.

    E.g. 'bare', 'K+ ion pair', '3 ethanol molecules (2 hydrogen-bonded to the basic atom, 1 in the second
    shell)'; ``where=False`` leaves out the brackets that say where the molecules sit.
    """
    if label is None:
        return None
    parts = label_parts(label)
    if parts is None:
        return label
    pieces = [f"{parts.counter_ion}+ ion pair"] if parts.counter_ion else []
    if parts.explicit_smiles is not None:
        placed = ", ".join(f"{count} {place}" for count, _, place in parts.groups)
        pieces.append(_count(parts.explicit, parts.explicit_smiles) + (f" ({placed})" if where else ""))
    else:
        pieces += [f"{_count(count, smiles)} {place}" if where else _count(count, smiles)
                   for count, smiles, place in parts.groups]
    return ", ".join(pieces) or "bare"


def named_model_words(base: str, label: str | None) -> str:
    """Return a base's model in words with its name, or that the model was not recorded.

    E.g. 'bare ethoxide', 'ethoxide with 3 ethanol molecules (...)', 'KOtBu as a K+ ion pair with 3 tert-butanol
    molecules (...)'.
    """
    words = model_words(label)
    if words is None:
        return f"{base}, {MODEL_NOT_RECORDED}"
    parts = label_parts(label)
    if parts is None:
        return f"{base}, model \u201c{label}\u201d"
    if words == "bare":
        return f"bare {base}"
    if parts.counter_ion:
        rest = words.removeprefix(f"{parts.counter_ion}+ ion pair").removeprefix(", ")
        return f"{base} as a {parts.counter_ion}+ ion pair" + (f" with {rest}" if rest else "")
    return f"{base} with {words}"


def base_molecule(result: RunResult, job: JobRecord) -> MoleculeRecord | None:
    """Return the relaxed-base record of a job (its base in its solvent), or None when the document holds none."""
    solvent = job.solvent or result.config.method.solvent
    bases = [m for m in result.molecules if m.role == "base" and m.name == job.base]
    same = [m for m in bases if (m.solvent or result.config.method.solvent) == solvent]
    return same[0] if same else (bases[0] if len(bases) == 1 else None)


def arrangement_words(record: MoleculeRecord | None) -> str:
    """Return the base model's arrangements in words when more than one was relaxed (spread in kcal/mol), else ''."""
    if record is None or record.arrangements is None or record.arrangements < 2:
        return ""
    spread = record.arrangement_spread_kcal_mol
    return (f"the lowest of {record.arrangements} relaxed starting clusters"
            + ("" if spread is None else f", which spread {spread:.2f} kcal/mol (highest minus lowest)"))


def base_model_words(result: RunResult, job: JobRecord) -> BaseModelWords:
    """Return the words of a job's base model, from its base_info and its base's molecule record."""
    record = base_molecule(result, job)
    info = job.base_info
    label = (info.model if info is not None else None) or (record.model if record is not None else None)
    reason = (info.model_reason if info is not None else None) or (record.model_reason if record is not None else None)
    return BaseModelWords(named_model_words(job.base, label), reason or REASON_NOT_RECORDED, arrangement_words(record))


def any_default_model(result: RunResult) -> bool:
    """Return True when a finished (ok) job of the run was computed with the explicit-solvent default base model.

    Read from each job's base_info alone (one pass over the jobs: every page of a large run asks).
    """
    return any(is_default_cluster(job.base_info.model, job.base_info.model_reason) for job in result.jobs
               if job.status == "ok" and job.base_info is not None)
