"""The benchmark's counts per level and category, in the form the report reads beside a job's verdict.

validation/validate.py writes this record (package data, ``elimscan/data/benchmark_record.json``) with each page of
the frozen model, from the same scores as the page; the report reads the counts of the categories a job's choices
belong to (analysis.choicekinds). Pure: builds and reads plain dicts; the files are written and read elsewhere.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from elimscan.analysis.benchmark_cases import CATEGORIES
from elimscan.analysis.benchmark_scoring import CaseScore, headline

#: the layout of the record; a reader meets an unknown one as no record at all
RECORD_VERSION = 1
#: the pages whose record the report reads, the full benchmark's first
RECORD_PAGES = ("VALIDATION.md", "VALIDATION-fast.md")


def page_record(scores: Sequence[CaseScore], levels: Sequence[str], about: Mapping[str, object]) -> dict:
    """Return one page's record: ``about`` (page, date, commit, base model, job base models, seeds, jobs) and, per
    level and category with cases, the headline counts (cases, right, undecided, not computed; the rule's)."""
    counts: dict[str, dict[str, dict[str, int]]] = {}
    for level in levels:
        for category in CATEGORIES:
            h = headline(scores, level, category)
            if h.n:
                counts.setdefault(level, {})[category] = {
                    "cases": h.n, "right": h.right, "undecided": h.undecided, "not_computed": h.not_computed,
                    "rule_cases": h.rule_n, "rule_right": h.rule_right, "rule_not_computed": h.rule_not_computed}
    return {**about, "levels": counts}


def merged_record(existing: Mapping | None, page: str, entry: Mapping) -> dict:
    """Return the whole record with one page's entry set (the other pages' entries kept; an unknown layout dropped)."""
    pages = dict(existing["pages"]) if existing and existing.get("version") == RECORD_VERSION else {}
    pages[page] = dict(entry)
    return {"version": RECORD_VERSION, "pages": pages}


def chosen_page(record: Mapping | None) -> dict | None:
    """Return the entry the report quotes: the full benchmark's page if recorded, else the fast subset's; None when
    the record is missing or of an unknown layout."""
    if not record or record.get("version") != RECORD_VERSION:
        return None
    pages = record.get("pages") or {}
    return next((dict(pages[name]) for name in RECORD_PAGES if name in pages), None)
