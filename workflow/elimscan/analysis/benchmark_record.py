"""The frozen model's benchmark numbers in machine-readable form: counts per level and category, each test case's
outcome and shares, and the calibration set's errors.

validation/validate.py writes this record (package data, ``elimscan/data/benchmark_record.json``) with each page of
the frozen model, from the same scores as the page; the report reads the counts of the categories a job's choices
belong to (analysis.choicekinds), and the tests compare the case and calibration numbers with published values.
Pure: builds and reads plain dicts; the files are written and read elsewhere.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import asdict

from elimscan.analysis.baseshift import base_shifts, shift_counts
from elimscan.analysis.benchmark_calibration import CalibrationScore
from elimscan.analysis.benchmark_cases import CATEGORIES
from elimscan.analysis.benchmark_scoring import NOT_COMPUTED, NOT_SCORED, RIGHT, UNDECIDED, CaseScore, headline
from elimscan.analysis.selectivity import GROUPS, case_checks, summarise_selectivity

#: the layout of the record; a reader meets an unknown one as no record at all
RECORD_VERSION = 1
#: the pages whose record the report reads, the full benchmark's first
RECORD_PAGES = ("VALIDATION.md", "VALIDATION-fast.md")
#: the calibration page's entry (rates, isotope effects, Hammett rho of the frozen model, all seeds; read by the
#: tests that compare them with the published values)
CALIBRATION_PAGE = "CALIBRATION.md"


def _case_entry(score: CaseScore) -> dict:
    """Return one test case's outcome per level: majority outcome (and on the rule's basis), each seed's outcome and
    shares of all products (0-1; None for a seed without a mix), the mean shares of all products and of the
    published alkenes (0-1), the mean E2 share and the spread (points)."""
    levels = {level: {"outcome": ls.outcome, "outcome_major_only": ls.outcome_major_only,
                      "seed_outcomes": [s.outcome for s in ls.seeds],
                      "seed_shares": [dict(s.mix.shares) if s.mix is not None else None for s in ls.seeds],
                      "mean_shares": ls.mean_shares,
                      "mean_alkene_shares": ls.mean_alkene_shares, "mean_e2_fraction": ls.mean_e2_fraction,
                      "spread_points": ls.spread_points}
              for level, ls in score.levels.items()}
    return {"rule_outcome": score.rule_outcome, "levels": levels}


def page_record(scores: Sequence[CaseScore], levels: Sequence[str], about: Mapping[str, object]) -> dict:
    """Return one page's record: ``about`` (page, date, commit, base model, job base models, seeds, jobs); per
    level and category with cases, the headline counts (cases, right, undecided, not computed; the rule's); per
    level the selectivity errors (kcal/mol) and the bulky-base shift counts; and per test case its outcome and mean
    shares at each level."""
    counts: dict[str, dict[str, dict[str, int]]] = {}
    for level in levels:
        for category in CATEGORIES:
            h = headline(scores, level, category)
            if not h.n:
                continue
            major = [s.levels[level].outcome_major_only for s in scores if category in s.case.category]
            counts.setdefault(level, {})[category] = {
                "cases": h.n, "right": h.right, "undecided": h.undecided, "not_computed": h.not_computed,
                "rule_cases": h.rule_n, "rule_right": h.rule_right, "rule_not_computed": h.rule_not_computed,
                # on the rule's basis (the major product and path geometry only), of the cases with a published major
                "major_cases": sum(m != NOT_SCORED for m in major),
                "major_computed": sum(m not in (NOT_SCORED, NOT_COMPUTED) for m in major),
                "major_right": major.count(RIGHT), "major_undecided": major.count(UNDECIDED)}
    shifts = base_shifts(scores, levels)
    return {**about, "levels": counts, "selectivity": selectivity_record(scores, levels),
            "base_shift": {level: asdict(shift_counts(shifts, level)) for level in levels} if shifts else {},
            "cases": {score.case.id: _case_entry(score) for score in scores}}


def selectivity_record(scores: Sequence[CaseScore], levels: Sequence[str]) -> dict:
    """Return per level and group ('alkenes', 'E2 vs SN2') the errors of the published shares as free-energy
    differences (analysis.selectivity): the counts, mean and mean absolute error (kcal/mol, None without one)."""
    out: dict[str, dict[str, dict]] = {}
    for level in levels:
        by_case = case_checks(scores, level)
        for group in GROUPS:
            s = summarise_selectivity(by_case, level, group)
            out.setdefault(level, {})[group] = {
                "n_published": s.n_published, "n_from_memory": s.n_from_memory, "n": s.n, "n_cases": s.n_cases,
                "n_unbounded": s.n_unbounded, "n_not_computed": s.n_not_computed,
                "mean_error_kcal_mol": s.mean_error_kcal_mol, "mean_abs_error_kcal_mol": s.mean_abs_error_kcal_mol,
                "n_within_uncertainty": s.n_within_uncertainty, "median_spread_kcal_mol": s.median_spread_kcal_mol,
                "largest_spread_kcal_mol": s.largest_spread_kcal_mol}
    return out


def calibration_record(calibration: Sequence[CalibrationScore]) -> dict:
    """Return a page's calibration entries by case: what was measured (quantity, unit, value, temperature in K) and
    each estimate's per-seed values, mean, spread and error (unit of the case: kcal/mol for rates and rho, percent
    of the measured value for isotope effects)."""
    return {score.case.id: {
        "quantity": score.quantity, "unit": score.unit, "measured": score.measured,
        "temperature_K": score.case.temperature_K, "error_unit": score.error_unit,
        "estimates": {e.label: {"per_seed": list(e.per_seed), "mean": e.mean, "spread": e.spread, "error": e.error}
                      for e in score.estimates}} for score in calibration}


def merged_record(existing: Mapping | None, page: str, entry: Mapping) -> dict:
    """Return the whole record with one page's entry set: the other pages' entries kept when they are of the same
    base model (a page of an earlier frozen model is dropped), an unknown layout dropped."""
    pages = dict(existing["pages"]) if existing and existing.get("version") == RECORD_VERSION else {}
    pages = {name: kept for name, kept in pages.items() if kept.get("base_model") == entry.get("base_model")}
    pages[page] = dict(entry)
    return {"version": RECORD_VERSION, "pages": pages}


def chosen_page(record: Mapping | None) -> dict | None:
    """Return the entry the report quotes: the full benchmark's page if recorded, else the fast subset's; None when
    the record is missing or of an unknown layout."""
    if not record or record.get("version") != RECORD_VERSION:
        return None
    pages = record.get("pages") or {}
    return next((dict(pages[name]) for name in RECORD_PAGES if name in pages), None)
