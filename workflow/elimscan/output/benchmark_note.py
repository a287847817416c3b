"""The benchmark's record beside a job's verdict: how often this level got choices of the job's kinds right.

Reads the record validation/validate.py writes with each page of the frozen model (``elimscan/data/
benchmark_record.json``, analysis.benchmark_record) and says, for the categories of the job's choices
(analysis.choicekinds) at the level that drove the job's mix, how many benchmark cases the computation got right,
how many it left undecided, and how many the textbook rule got right. Where the computation decided at most half
of such cases right and the job is undecided, it says that the undecided verdict is the level's limit.
"""

from __future__ import annotations

import functools
import json
from collections.abc import Mapping
from pathlib import Path

from elimscan.analysis.benchmark_record import chosen_page
from elimscan.analysis.choicekinds import choice_kinds
from elimscan.results.records import JobRecord

#: where validation/validate.py writes the record (inside the package, so an installed elimscan carries it)
RECORD_PATH = Path(__file__).resolve().parents[1] / "data" / "benchmark_record.json"
#: the benchmark category of a job's choice, in words
KIND_WORDS = {"open-chain-regio": "which alkene of an open chain (regiochemistry)",
              "ez-ratio": "E against Z",
              "ring-competing": "a ring where two hydrogens can reach anti",
              "ring-single": "a ring where only one hydrogen can reach anti",
              "e2-vs-sn2": "E2 against SN2"}
#: the benchmark level of a job's energy_used, and its words
LEVEL_OF_ENERGY = {"electronic": "dE", "free": "dG"}
LEVEL_WORDS = {"dE": "GFN2-xTB \u0394E\u2021", "dG": "GFN2-xTB \u0394G\u2021 (quasi-RRHO, 1 M)"}


@functools.lru_cache(maxsize=4)
def load_record(path: Path = RECORD_PATH) -> dict | None:
    """Return the benchmark record as written by validation/validate.py; None when it is missing or unreadable."""
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None


def _kind_counts(kind: str, counts: Mapping[str, int]) -> str:
    """Return one category's counts in words."""
    text = (f"{KIND_WORDS[kind]}: computed right in {counts['right']} of {counts['cases']} cases, undecided in "
            f"{counts['undecided']} (counted as not right)")
    if counts["not_computed"]:
        text += f", not computed in {counts['not_computed']}"
    if counts["rule_cases"]:
        text += f"; the textbook rule right in {counts['rule_right']} of {counts['rule_cases']}"
    return text


def benchmark_note(job: JobRecord, record: Mapping | None, undecided: bool = False) -> str | None:
    """Return what the reference benchmark says of choices of this job's kinds at the level that drove its mix (None
    without a record, or when the job asks no choice the benchmark scores); ``undecided``: the job's verdict is."""
    entry = chosen_page(record)
    level = LEVEL_OF_ENERGY.get(job.energy_used)
    kinds = choice_kinds(job)
    by_kind = (entry or {}).get("levels", {}).get(level, {})
    found = [(kind, by_kind[kind]) for kind in kinds if kind in by_kind]
    if entry is None or not found:
        return None
    seeds = entry.get("seeds") or []
    text = (f"The reference benchmark on choices of this kind ({LEVEL_WORDS[level]}, base model "
            f"{entry.get('base_model')}, {len(seeds)} seed(s); {entry.get('page')} of {entry.get('date_utc')}, commit "
            f"{entry.get('commit')}): " + "; ".join(_kind_counts(kind, counts) for kind, counts in found) + ".")
    if entry.get("jobs_finished") is not None and entry.get("jobs_finished") != entry.get("jobs"):
        text += (f" That run was unfinished ({entry['jobs_finished']} of {entry['jobs']} jobs): its unfinished cases "
                 "count as not computed.")
    model = job.base_info.model if job.base_info is not None else None
    if model not in (entry.get("job_base_models") or []):
        text += (f" This job's base model ({model or 'not recorded'}) is not among the benchmark's: the counts are "
                 "of another model of the base.")
    decided_right = [counts["right"] * 2 <= counts["cases"] - counts["not_computed"] for _, counts in found
                     if counts["cases"] > counts["not_computed"]]
    if undecided and decided_right and all(decided_right):
        text += (" The benchmark shows that this level gets at most half of such choices right: read this job's "
                 "undecided verdict as the level's limit, not as evidence that the alkenes form in similar amounts.")
    return text
