"""The benchmark's record beside a job's verdict: how this level did on benchmark cases that ask the job's kinds of
choice.

From the record validation/validate.py writes with each page of the frozen model (analysis.benchmark_record; read
by output.files, passed in here), for the categories of the job's choices (analysis.choicekinds) at the level that
drove the job's mix: of the cases with a published major product, in how many the computed major was right, how
many the level left undecided, and how many the textbook rule got right; with how many whole cases (every published
share too) were right. When the job is undecided because its best alkenes lie within the method's uncertainty and
the level got at most half of such cases' major products right (at least MIN_CASES computed), it says that the
undecided verdict is the level's limit. Where the record holds the level's error of relative barriers on the
published alkene shares (at least MIN_SHARES with a finite error, from MIN_ERROR_CASES cases), it sets the job's
effective gap between its computed major and the next alkene beside that mean error; for a bulky base, how the
level did on the benchmark's bulky-base shifts. Pure rendering: no files.
"""

from __future__ import annotations

from collections.abc import Mapping

from elimscan.analysis.benchmark_record import chosen_page
from elimscan.analysis.choicekinds import ALKENE_KINDS, choice_kinds, constitution
from elimscan.analysis.headline import CLOSE_CALL, Headline
from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL
from elimscan.analysis.selectivity import ALKENES, MIN_ERROR_CASES, MIN_SHARES, gap_below_error
from elimscan.results.records import JobRecord

#: the benchmark category of a job's choice, in words
KIND_WORDS = {"open-chain-regio": "which alkene of an open chain (regiochemistry)",
              "ez-ratio": "E against Z from different hydrogens",
              "ring-competing": "a ring where two hydrogens can reach anti",
              "ring-single": "a ring where only one hydrogen can reach anti",
              "e2-vs-sn2": "E2 against SN2"}
#: the benchmark level of a job's energy_used, and its words (HTML, and plain ASCII for the terminal)
LEVEL_OF_ENERGY = {"electronic": "dE", "free": "dG"}
LEVEL_WORDS = {"dE": "GFN2-xTB \u0394E\u2021", "dG": "GFN2-xTB \u0394G\u2021 (quasi-RRHO, 1 M)"}
LEVEL_WORDS_ASCII = {"dE": "GFN2-xTB dE", "dG": "GFN2-xTB dG (quasi-RRHO, 1 M)"}
#: computed benchmark cases of a kind below which the note draws no conclusion from them (common practice: fewer
#: cases say too little)
MIN_CASES = 3


def _shape_ok(entry: Mapping) -> bool:
    """Return whether a record entry holds what the note reads (a record of another layout is no record)."""
    keys = ("cases", "major_cases", "major_computed", "major_right", "major_undecided", "right", "rule_cases",
            "rule_right", "rule_not_computed")
    levels = entry.get("levels")
    return isinstance(levels, Mapping) and all(
        isinstance(by_kind, Mapping) and all(isinstance(c, Mapping) and all(isinstance(c.get(k), int) for k in keys)
                                             for c in by_kind.values()) for by_kind in levels.values())


def _kind_counts(kind: str, c: Mapping[str, int]) -> str:
    """Return one category's counts in words."""
    text = (f"{KIND_WORDS[kind]}: {c['major_cases']} case(s) with a published major product, "
            f"{c['major_computed']} computed; the computed major right in {c['major_right']}, undecided in "
            f"{c['major_undecided']} (counted as not right)")
    if c["cases"]:
        text += f"; every published share within 20 points too in {c['right']} of {c['cases']}"
    if c["rule_cases"]:
        read = c["rule_cases"] - c["rule_not_computed"]
        text += f"; the textbook rule right in {c['rule_right']} of the {read} it was read on"
    return text


def _limit_kinds(job: JobRecord, headline: Headline | None, kinds: tuple[str, ...]) -> tuple[str, ...]:
    """Return the alkene kinds a close call of this job is about (E/Z when its two best alkenes differ only so)."""
    if headline is None or headline.why_undecided != CLOSE_CALL or not headline.computed_major \
            or not headline.runner_up:
        return ()
    same_form = constitution(headline.computed_major) == constitution(headline.runner_up)
    return tuple(k for k in kinds if k in ALKENE_KINDS and (k == "ez-ratio") == same_form)


def _gap_against_error(selectivity: Mapping | None, level: str, headline: Headline | None) -> str:
    """Return the sentences setting this job's effective gap between its computed major and next alkene (kcal/mol)
    beside the level's mean absolute error of relative barriers on the benchmark's published alkene shares, or ''
    (no such gap, no such error in the record, or fewer than MIN_SHARES shares behind it)."""
    by_group = selectivity.get(level) if isinstance(selectivity, Mapping) else None
    s = by_group.get(ALKENES) if isinstance(by_group, Mapping) else None
    keys = ("n", "n_published", "n_from_memory", "n_cases", "n_unbounded", "n_within_uncertainty")
    if not isinstance(s, Mapping) or not all(isinstance(s.get(k), int) for k in keys) or s["n"] < MIN_SHARES \
            or s["n_cases"] < MIN_ERROR_CASES:
        return ""
    error = s.get("mean_abs_error_kcal_mol")
    if not isinstance(error, (int, float)) or headline is None or headline.product_gap_kcal_mol is None:
        return ""
    n, within, gap = s["n"], s["n_within_uncertainty"], headline.product_gap_kcal_mol
    unbounded = (f"; {s['n_unbounded']} more where a published alkene did not form or formed alone"
                 if s["n_unbounded"] else "")
    text = (f" On {n} of the benchmark's {s['n_published']} published alkene shares ({s['n_cases']} cases; "
            f"{s['n_from_memory']} of the {s['n_published']} values from memory{unbounded}) this level's relative "
            f"barriers missed by {error:.1f} kcal/mol on average ({within} of {n} within "
            f"{METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol). This job's computed major lies {gap:.1f} kcal/mol below "
            f"{headline.product_rival} (effective barriers, degeneracy counted): ")
    if gap_below_error(gap, error):
        return text + "less than that average error: an error of the usual size could reverse the two."
    if within < n:
        return text + (f"at least that average error, though {n - within} of the {n} benchmark shares were missed "
                       f"by more than {METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol.")
    return text + "at least that average error."


def _bulky_base_words(base_shift: Mapping | None, level: str) -> str:
    """Return the sentence on how this level did on the benchmark's bulky-base shifts, or '' (none computed)."""
    c = base_shift.get(level) if isinstance(base_shift, Mapping) else None
    keys = ("n_pairs", "n_computed", "n_resolved", "n_sign", "n_size_ok", "n_from_memory")
    if not isinstance(c, Mapping) or not all(isinstance(c.get(k), int) for k in keys) \
            or c["n_computed"] < MIN_ERROR_CASES:
        return ""
    return (f" For a bulky base: of the benchmark's {c['n_pairs']} pairs (ethoxide against a bulky base on one "
            f"substrate; {c['n_pairs'] - c['n_computed']} not computed, {c['n_from_memory']} with a published value "
            f"from memory), this level's shift toward the terminal alkene had the published sign and exceeded the "
            f"seed spread in {c['n_resolved']}, and was of the published size (within "
            f"{METHOD_UNCERTAINTY_KCAL_MOL:g} kcal/mol) in {c['n_size_ok']}; every published shift points that way, "
            "so the sign alone is agreement, not proof.")


def benchmark_note(job: JobRecord, record: Mapping | None, headline: Headline | None = None,
                   ascii_only: bool = False) -> str | None:
    """Return what the reference benchmark says of cases asking this job's kinds of choice, at the level that drove
    its mix (None without a record, or when the record counts no case of the job's kinds); ``headline``: the job's
    (analysis.headline), for the sentence on an undecided close call; ``ascii_only``: plain level names."""
    entry = chosen_page(record)
    level = LEVEL_OF_ENERGY.get(job.energy_used)
    if entry is None or not _shape_ok(entry):
        return None
    kinds = choice_kinds(job)
    by_kind = entry["levels"].get(level, {})
    found = [(kind, by_kind[kind]) for kind in kinds if kind in by_kind]
    if not found:
        return None
    words = (LEVEL_WORDS_ASCII if ascii_only else LEVEL_WORDS)[level]
    text = (f"Reference benchmark, cases asking this job's kinds of choice ({words}, base model "
            f"{entry.get('base_model')}, {len(entry.get('seeds') or [])} seed(s), majority of seeds; "
            f"{entry.get('page')}, scored {entry.get('date_utc')} at commit {entry.get('commit')}): "
            + "; ".join(_kind_counts(kind, counts) for kind, counts in found) + ".")
    if entry.get("jobs_finished") is not None and entry.get("jobs_finished") != entry.get("jobs"):
        text += (f" That run was unfinished ({entry['jobs_finished']} of {entry['jobs']} jobs): its unfinished cases "
                 "are not computed.")
    model = job.base_info.model if job.base_info is not None else None
    if model is None:
        text += " This job's base model is not recorded: whether the benchmark used it cannot be said."
    elif model not in (entry.get("job_base_models") or []):
        text += (f" This job's base model ({model}) is not among the benchmark's: the counts are of another model "
                 "of the base.")
    text += _gap_against_error(entry.get("selectivity"), level, headline)
    if job.base_info is not None and job.base_info.bulky:
        text += _bulky_base_words(entry.get("base_shift"), level)
    limits = [counts for kind, counts in found if kind in _limit_kinds(job, headline, kinds)]
    if limits and all(c["major_computed"] >= MIN_CASES and 2 * c["major_right"] <= c["major_computed"]
                      for c in limits):
        text += (" On such cases this level got at most half of the major products right: read this job's undecided "
                 "verdict as the level's limit, not as evidence that the alkenes form in similar amounts.")
    return text
