"""VALIDATION.md of the reference benchmark, rendered from its scores (pure: returns text, writes nothing).

The page: when, at which commit and how long the run took; per level the headline "computed right X/N,
rule right Y/M, undecided Z/N", then per category; the per-case table (experiment with its source, the
rule's call, the computed call per level with the mean mix over seeds, right/wrong/undecided, the spread
over seeds); the terminal-alkene share of each series' members; the bulky-base shift (``benchmark_baseshift``);
each published share as a free-energy
difference beside the computed one (``benchmark_selectivity``); the calibration errors; whether the counted
electronic barriers lie above zero (``benchmark_floor``); and where the jobs' gradients went, by stage of their paths
(``benchmark_stages``).
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from elimscan.analysis.barrierfloor import BarrierFloor
from elimscan.analysis.baseshift import member, published_terminal_percent
from elimscan.analysis.benchmark_calibration import DFT_LEVEL, CalibrationScore
from elimscan.analysis.benchmark_cases import (CATEGORIES, RULE_UNCERTAIN_CATEGORIES, SUBSTITUTION, HammettCase,
                                              IsotopeCase, OutcomeCase, RateCase, isomer_key)
from elimscan.analysis.benchmark_summary import ModelSummary
from elimscan.analysis.stagegradients import StageTotals
from elimscan.analysis.benchmark_scoring import (NOT_COMPUTED, NOT_SCORED, RIGHT, RULE_APPROACH, SHARE_TOLERANCE_POINTS,
                                                 WRONG, CaseScore, Headline, LevelScore, headline)
from elimscan.output.benchmark_note import LEVEL_WORDS_ASCII
from elimscan.output.benchmark_baseshift import base_shift_section
from elimscan.output.benchmark_floor import floor_section
from elimscan.output.benchmark_selectivity import selectivity_section
from elimscan.output.benchmark_stages import stage_section

#: how a level is named in the page
LEVEL_WORDS = {**LEVEL_WORDS_ASCII, "DFT//GFN2": "DFT//GFN2"}


@dataclass(frozen=True)
class RunInfo:
    """What the page says about the run: date, commit, timing (s), method, seeds and which cases ran."""

    date_utc: str
    commit: str
    wall_seconds: float
    job_seconds: float
    method: str
    seeds: tuple[int, ...]
    subset: str
    command: str
    n_jobs: int
    n_jobs_finished: int
    #: summed wall time (s) of the invocations that computed in this work folder, and how many there were
    compute_seconds: float = 0.0
    n_compute_runs: int = 0
    #: of the finished jobs, those that started over from a replay log after an interruption (their job time in
    #: ``job_seconds`` is their last run's only)
    n_replayed_jobs: int = 0
    #: of those, the invocations stopped before their end (killed: their time up to their last logged minute), and
    #: of these the ones of older code that logged no time
    n_interrupted_runs: int = 0
    n_time_unknown_runs: int = 0
    #: the benchmark candidate every base was modelled with (analysis/benchmark_models.py) and what it is
    base_model: str = "bare"
    base_model_words: str = "the free alkoxide in the continuum"
    #: the frozen model (validation/model-freeze.yaml) and the commit that froze it; None: nothing frozen yet
    frozen_model: str | None = None
    freeze_commit: str | None = None
    #: test cases whose outcome under the candidates was seen before the freeze (flagged in their rows)
    seen_before_freeze: tuple[str, ...] = ()
    #: commits of invocations that computed in this work folder but do not descend from the freeze commit
    computed_before_freeze: tuple[str, ...] = ()
    #: commits of every invocation that computed in this work folder for this model (the code behind the numbers)
    compute_commits: tuple[str, ...] = ()
    #: finished jobs read from the archive of job records (elimscan.batch.archive) rather than the work folder, the
    #: commits that computed them, and the archive's folder
    n_archived: int = 0
    archived_commits: tuple[str, ...] = ()
    records: str | None = None
    #: the unfinished jobs' estimated time, from each job's own case where it can be (None: the finished jobs' mean)
    left: LeftEstimate | None = None


def _code(smiles: str | None) -> str:
    """Return a SMILES as a Markdown code span ('none' for None)."""
    return "none" if smiles is None else f"`{smiles}`"


def _duration(seconds: float | None) -> str:
    """Return seconds as '3 h 05 min' or '12 min' ('-' for None)."""
    if seconds is None:
        return "-"
    minutes = round(seconds / 60.0)
    return f"{minutes // 60} h {minutes % 60:02d} min" if minutes >= 60 else f"{minutes} min"


def headline_line(scores: Sequence[CaseScore], level: str, category: str | Sequence[str] | None = None) -> str:
    """Return 'computed right X/N (on the rule's basis W/M), rule right Y/M, undecided Z/N' (and not computed, the
    rule's too) for one level."""
    h = headline(scores, level, category)
    text = (f"computed right {h.right}/{h.n} (on the rule's basis {h.right_major_only}/{h.rule_n}), "
            f"rule right {h.rule_right}/{h.rule_n}, undecided {h.undecided}/{h.n}")
    return text + (f", not computed {_not_computed(h)}" if h.not_computed or h.rule_not_computed else "")


def _not_computed(h: Headline) -> str:
    """Return 'K/N' cases not computed, with ' (rule K/M)' when the rule also lacks calls (it reads them from jobs)."""
    return f"{h.not_computed}/{h.n}" + (f" (rule {h.rule_not_computed}/{h.rule_n})" if h.rule_not_computed else "")


def count_rows(scores: Sequence[CaseScore], levels: Sequence[str], categories: Sequence[str] | None) -> list[str]:
    """Return a Markdown table of the counts per level (and per category when given), undecided in its own column."""
    first = "| category | level |" if categories is not None else "| level |"
    rows = [first + " computed right | computed right on the rule's basis | rule right | undecided (not right) | "
            "not computed |", "|---|" + ("---|" if categories is not None else "") + "---|---|---|---|---|"]
    for category in categories if categories is not None else [None]:
        for level in levels:
            h = headline(scores, level, category)
            lead = f"| {category} | {LEVEL_WORDS[level]} |" if category is not None else f"| {LEVEL_WORDS[level]} |"
            rows.append(f"{lead} {h.right}/{h.n} | {h.right_major_only}/{h.rule_n} | {h.rule_right}/{h.rule_n} | "
                        f"{h.undecided}/{h.n} | {_not_computed(h)} |")
    return rows


def source_words(case: OutcomeCase | RateCase | IsotopeCase | HammettCase) -> str:
    """Return a case's source as the page shows it: the citation, '(from memory)', and where the value was seen."""
    memory = " (from memory)" if case.from_memory else ""
    seen = f"; value seen in: {case.seen_in}" if case.seen_in else ""
    return f"{case.source}{memory}{seen}"


def _experiment(score: CaseScore) -> str:
    """Return the experiment cell: major, published shares, E2 share, approach, and the source."""
    e = score.case.expected
    parts = []
    if e.major is not None:
        parts.append(f"major {_code(isomer_key(e.major))}" if e.major != SUBSTITUTION else "major substitution")
    if e.alkene_shares_percent:
        parts.append(", ".join(f"{_code(isomer_key(s))} {v:g} %" for s, v in e.alkene_shares_percent.items())
                     + " of alkenes")
    if e.e2_percent is not None:
        parts.append(f"E2 {e.e2_percent:g} %")
    if e.approach is not None:
        parts.append(f"{e.approach} path")
    return "; ".join(parts) + f" — {source_words(score.case)}"


def _rule_cell(score: CaseScore) -> str:
    """Return the rule's cell: its call(s) over the seeds and its outcome."""
    calls = Counter(score.rule_calls)
    shown = ", ".join(_code(c) + (f" ({n})" if len(calls) > 1 else "") for c, n in calls.most_common()) or "-"
    outcome = "not scored (no published major)" if score.rule_outcome == NOT_SCORED else score.rule_outcome
    expected = score.case.expected
    if (score.rule_outcome == WRONG and expected.major is not None and calls
            and calls.most_common(1)[0][0] == isomer_key(expected.major)
            and expected.approach not in (None, RULE_APPROACH)):
        # the right product by the wrong path: say so, or the cell shows the expected product beside "wrong"
        return f"**{outcome}**: {shown}; why: the rule's path is {RULE_APPROACH}, the case's {expected.approach}"
    return f"**{outcome}**: {shown}"


def _level_cell(score: CaseScore, level: str) -> str:
    """Return one level's cell: outcome, the seeds' majors, the mean mix, the judged shares and why not right."""
    ls: LevelScore = score.levels[level]
    majors = Counter(s.mix.major for s in ls.seeds if s.mix is not None)
    parts = [f"**{ls.outcome}**"]
    if majors:
        parts.append("top " + ", ".join(_code(m) + (f" ({n} seed{'s' if n > 1 else ''})" if len(majors) > 1 else "")
                                         for m, n in majors.most_common()))
        parts.append("mix " + (", ".join(f"{_code(p)} {100 * f:.0f} %" for p, f in ls.mean_shares.items())
                                or "none counted (no seed has a barrier for every product)"))
    judged = [f"{_code(isomer_key(s))} {100 * ls.mean_alkene_shares[isomer_key(s)]:.0f} % of alkenes"
              for s in score.case.expected.alkene_shares_percent if isomer_key(s) in ls.mean_alkene_shares]
    if ls.mean_e2_fraction is not None and score.case.expected.e2_percent is not None:
        judged.append(f"E2 {100 * ls.mean_e2_fraction:.0f} %")
    if judged:
        parts.append(("judged (mean over seeds; each seed is judged alone) " if ls.outcome != NOT_COMPUTED else
                      "shown, not judged (the finished seeds' mean) ") + ", ".join(judged))
    reasons = sorted({r for s in ls.seeds if s.outcome == ls.outcome for r in s.reasons})
    if ls.outcome != RIGHT and reasons:
        parts.append("why: " + "; ".join(reasons))
    left = sorted({p for s in ls.seeds if s.mix is not None for p in s.mix.left_out})
    if left:
        parts.append("left out (no barrier: did not reach its products, or stopped by its budget): " + "; ".join(left))
    if ls.note:
        parts.append(ls.note)
    return "; ".join(parts)


def _spread_cell(score: CaseScore, levels: Sequence[str]) -> str:
    """Return the seed spread of each level (largest max - min of a product share, points)."""
    cells = [f"{level} {score.levels[level].spread_points:.0f}" for level in levels
             if score.levels[level].spread_points is not None]
    return ", ".join(cells) or "-"


def series_rows(scores: Sequence[CaseScore], levels: Sequence[str]) -> list[str]:
    """Return Markdown rows: the terminal-alkene share (mean over seeds) of each series member per level."""
    rows = ["| series | case | published terminal share | " + " | ".join(LEVEL_WORDS[lv] for lv in levels) + " |",
            "|---|---|---|" + "---|" * len(levels)]
    for name in sorted({s.case.series for s in scores if s.case.series}):
        for score in (s for s in scores if s.case.series == name):
            terminal = published_terminal_percent(score.case)
            published = "-" if terminal is None else f"{terminal:g} %"
            cells = []
            for level in levels:
                values = member(score, level).terminal_fractions
                cell = f"{100 * sum(values) / len(values):.0f} %" + (
                    f" ({100 * (max(values) - min(values)):.0f})" if len(values) > 1 else "") if values else "-"
                if values and score.levels[level].outcome == NOT_COMPUTED:
                    cell += f" [{len(values)} of {len(score.levels[level].seeds)} seeds; not scored]"
                cells.append(cell)
            rows.append(f"| {name} | {score.case.id} | {published} | " + " | ".join(cells) + " |")
    return rows


def _number(value: float | None, digits: int = 1) -> str:
    """Return a number with ``digits`` decimals, '-' for None."""
    return "-" if value is None else f"{value:.{digits}f}"


def calibration_rows(calibration: Sequence[CalibrationScore]) -> list[str]:
    """Return Markdown rows of the calibration errors (one row per case and estimate)."""
    rows = ["| case | measured | computed | mean (spread over seeds) | error | source |", "|---|---|---|---|---|---|"]
    for score in calibration:
        unit = f" {score.unit}" if score.unit else ""
        for estimate in score.estimates:
            spread = f" ({_number(estimate.spread, 2)})" if estimate.spread is not None else ""
            error = "-" if estimate.error is None else f"{estimate.error:+.1f}{' ' + score.error_unit if score.error_unit else ''}"
            rows.append(f"| {score.case.id} ({score.case.temperature_K:g} K) | {score.quantity}: {score.measured:.2f}{unit} | "
                        f"{estimate.label} | {_number(estimate.mean, 2)}{spread} | {error} | "
                        f"{source_words(score.case)} |")
    return rows


def _dft_rate_words(calibration: Sequence[CalibrationScore]) -> str:
    """Return the sentence on the DFT rate levels when an estimate is at one, else ''."""
    if not any(DFT_LEVEL in e.label for score in calibration for e in score.estimates):
        return ""
    return (" DFT//GFN2 (rates whose jobs hold absolute DFT barriers, above the DFT free substrate + free base): the "
            "DFT single point's electronic barrier; dG(DFT//GFN2): that barrier plus the GFN2-xTB quasi-RRHO term "
            "of the same saddle (its free minus its electronic barrier).")


def _stopped_words(info: RunInfo) -> str:
    """Return the clause on invocations stopped before their end ('' when none was)."""
    if not info.n_interrupted_runs:
        return ""
    unknown = (f"; {info.n_time_unknown_runs} of them, of older code, logged no time and count as 0"
               if info.n_time_unknown_runs else "")
    return f" ({info.n_interrupted_runs} of them stopped before the end, counted up to their last logged minute{unknown})"


@dataclass(frozen=True)
class LeftEstimate:
    """The unfinished jobs' estimated job time (s), and how many of them were estimated from their own case's
    finished seeds (the rest at the finished jobs' mean)."""

    seconds: float
    n_from_own_case: int


def left_estimate(unfinished_slots: Sequence[Sequence[str]], seconds_by_slot: Mapping[str, Mapping[int, float | None]],
                  mean_seconds: float) -> LeftEstimate:
    """Return the estimated job time (s) of the unfinished jobs, each given by the case slots it serves: the mean
    time of those slots' finished seeds where there are any (seeds of one case differ, up to eightfold in the full
    run, but jobs of different cases differ more), else ``mean_seconds``."""
    total, own = 0.0, 0
    for slots in unfinished_slots:
        peers = [t for slot in slots for t in (seconds_by_slot.get(slot) or {}).values() if t]
        if peers:
            total, own = total + sum(peers) / len(peers), own + 1
        else:
            total += mean_seconds
    return LeftEstimate(total, own)


def remaining_clause(n_jobs: int, n_finished: int, job_seconds: float, left: LeftEstimate | None = None) -> str:
    """Return the clause estimating the unfinished jobs' time (``job_seconds``: the finished jobs' summed wall time
    in s; ``left``: an estimate from each job's own case where given, else the finished jobs' mean; '' when none is
    left)."""
    n_left = n_jobs - n_finished
    if n_left <= 0:
        return ""
    if n_finished == 0 or job_seconds <= 0:
        return f"; {n_left} job(s) left, no finished job to estimate their time from"
    mean = job_seconds / n_finished
    if left is not None and left.n_from_own_case:
        rest = n_left - left.n_from_own_case
        return (f"; the {n_left} job(s) left would take about {_duration(left.seconds)} of job time "
                f"({left.n_from_own_case} of them at the mean of their own case's finished seeds" + (
                    f", {rest} at the finished jobs' mean of {_duration(mean)}" if rest else "")
                + "; a rough estimate: jobs differ in size, even seeds of one case)")
    return (f"; the {n_left} job(s) left would take about {_duration(n_left * mean)} of job time at the finished jobs' "
            f"mean of {_duration(mean)} (a rough estimate: jobs differ in size)")


def _remaining(info: RunInfo) -> str:
    """Return the page's clause estimating the unfinished jobs' time ('' when none is left)."""
    return remaining_clause(info.n_jobs, info.n_jobs_finished, info.job_seconds, info.left)


def replayed_clause(n_replayed: int, table: bool = False) -> str:
    """Return the clause that marks the summed job time as low when jobs started over from a replay log ('' if none);
    ``table``: the page's table of cases marks their cases' times with '≥'."""
    marked = "; their cases' times are marked ≥ in the table" if table else ""
    return (f" ({n_replayed} of the jobs started over from a replay log after an interruption: their time is their "
            f"last run's, so the sum and the estimates from it are low{marked})") if n_replayed else ""


def progress_text(what: str, n_jobs: int, n_finished: int, n_archived: int, job_seconds: float,
                  running: Mapping | None, work: str, n_failed: int = 0, n_replayed: int = 0,
                  left: LeftEstimate | None = None) -> str:
    """Return how far a benchmark run got, for a chemist checking on it: ``what`` (subset and base model), jobs
    finished of all (of them from the archive, failed, and started over from a replay log), their summed job time
    (``job_seconds``, s), the estimate of the rest, and the invocation computing in ``work`` now (``running``: its
    running-file entry, or None)."""
    archived = f", {n_archived} of them read from the archive" if n_archived else ""
    failed = (f", {n_failed} of them failed (scored as not computed; a computing run tries them again)"
              if n_failed else "")
    text = (f"{what}: {n_finished} of {n_jobs} job(s) finished{archived}{failed}, {_duration(job_seconds)} of job time"
            + replayed_clause(n_replayed) + remaining_clause(n_jobs, n_finished, job_seconds, left) + ".")
    if running is None:
        return text + f" No invocation computes in {work} now."
    model = running.get("base_model") or "an unnamed base model"
    seeds = running.get("seeds")
    workers = running.get("workers")
    n_left = n_jobs - n_finished
    if isinstance(workers, int) and workers > 0 and n_left > 0 and n_finished and job_seconds > 0:
        if left is not None and left.n_from_own_case:
            text += (f" On its {workers} worker(s) that is about {_duration(left.seconds / workers)} of wall time if "
                     "they stay busy (a batch's last jobs may leave one idle; larger jobs left make it longer).")
        else:
            text += (f" On its {workers} worker(s) that is about "
                     f"{_duration(n_left * job_seconds / n_finished / workers)} of wall time at the mean so far, if "
                     "they stay busy (a batch's last jobs may leave one idle; larger jobs left make it longer).")
    return (text + f" Computing in {work} now: pid {running.get('pid')} on {running.get('host')}, commit "
            f"{running.get('commit')}, subset {running.get('subset') or 'all'}, "
            f"{f'first {seeds} seed(s)' if seeds else 'every seed'}, base model {model}, "
            f"started {running.get('started_utc')}, "
            f"{_duration(float(running.get('wall_seconds') or 0.0))} so far (pauses left out), last heard "
            f"{running.get('updated_utc')}.")


def freeze_line(info: RunInfo) -> str:
    """Return the page's line on the model freeze: which model, which commit, and whether this page uses it."""
    if info.frozen_model is None or info.freeze_commit is None:
        return "- model freeze: **no model frozen yet** (validation/model-freeze.yaml is missing): nothing here may be read as a test of a chosen model"
    which = ("**the frozen model**" if info.base_model == info.frozen_model
             else f"**not the frozen model** (`{info.base_model}` is a candidate reported beside it)")
    line = (f"- model freeze: `{info.frozen_model}` frozen at commit `{info.freeze_commit}` "
            f"(validation/model-freeze.yaml: chosen on basicity and calibration physics, before the test set ran "
            f"under it); this page: {which}")
    if info.computed_before_freeze:
        line += (f"; **{len(info.computed_before_freeze)} computing invocation(s) ran code older than the freeze** "
                 f"(commits {', '.join(sorted(set(info.computed_before_freeze)))})")
    return line


def model_rows(summaries: Sequence[ModelSummary], frozen: str | None) -> list[str]:
    """Return Markdown rows comparing base models: counts per level, rate and selectivity errors (kcal/mol), seed
    spread."""
    rows = ["| base model | level | computed right | rule right | undecided (not right) | not computed | "
            "rate ΔG‡ error: mean (mean of abs), kcal/mol | selectivity ΔΔG‡ error: mean of abs over shares with one, "
            "kcal/mol | "
            "largest seed spread (points) | jobs finished |",
            "|---|---|---|---|---|---|---|---|---|---|"]
    for m in summaries:
        c = m.counts
        name = f"`{m.model}`" + (" (frozen)" if m.model == frozen else "")
        error = (f"{m.rate_mean_error_kcal_mol:+.1f} ({m.rate_mean_abs_error_kcal_mol:.1f}) over {m.n_rates}"
                 if m.rate_mean_error_kcal_mol is not None and m.rate_mean_abs_error_kcal_mol is not None else "-")
        counts = (f"{c.right}/{c.n} | {c.rule_right}/{c.rule_n} | {c.undecided}/{c.n} | {_not_computed(c)}"
                  if c.n else "- | - | - | -")  # no test case on the page: nothing was scored
        selectivity = (f"{m.selectivity_mean_abs_error_kcal_mol:.1f} over {m.n_selectivity} of "
                       f"{m.n_selectivity_published}" if m.selectivity_mean_abs_error_kcal_mol is not None else "-")
        if m.n_selectivity_unbounded:
            selectivity += f" (+{m.n_selectivity_unbounded} unbounded)"
        rows.append(f"| {name} | {LEVEL_WORDS[m.level]} | {counts} | {error} | {selectivity} | "
                    f"{_number(m.largest_spread_points, 0)} | "
                    f"{m.n_jobs_finished} of {m.n_jobs} |")
    return rows


def _test_sections(info: RunInfo, scores: Sequence[CaseScore], levels: Sequence[str]) -> list[str]:
    """Return the page's lines on the test cases: headline, per category, per case and the series."""
    lines = ["## Headline", ""]
    for level in levels:
        lines.append(f"- **{LEVEL_WORDS[level]}**: {headline_line(scores, level)}")
    uncertain = [s for s in scores if any(c in s.case.category for c in RULE_UNCERTAIN_CATEGORIES)]
    rest = [s for s in scores if s not in uncertain]
    if uncertain:
        lines += ["", "Where the computation is meant to add most to the rule "
                  f"({', '.join(RULE_UNCERTAIN_CATEGORIES)}: "
                  "the categories named from issue 18's words as those where the rule's call is ambiguous, fixed "
                  "when 48 of the full run's 111 jobs had been seen, not from their outcomes; "
                  f"{len(uncertain)} cases, each counted once), and the other {len(rest)}:", ""]
        lines += [f"- **{LEVEL_WORDS[level]}**: {headline_line(uncertain, level)}; the other cases: "
                  + (headline_line(rest, level) if rest else "none") for level in levels]
    lines += ["", *count_rows(scores, levels, None)]
    lines += ["", "## Per category", "", "A case counts once in each of its categories.", "",
              *count_rows(scores, levels, [c for c in CATEGORIES if any(c in s.case.category for s in scores)])]
    lines += ["", "## Test cases", "",
              "| case | experiment — source | rule | " + " | ".join(LEVEL_WORDS[lv] for lv in levels)
              + " | seed spread (points: largest max − min of any product's share of all products) "
              "| job time |", "|---|---|---|" + "---|" * len(levels) + "---|---|"]
    for score in scores:
        seen = " (outcome seen before the freeze)" if score.case.id in info.seen_before_freeze else ""
        lines.append(f"| {score.case.id}{seen} | {_experiment(score)} | {_rule_cell(score)} | "
                     + " | ".join(_level_cell(score, lv) for lv in levels)
                     + f" | {_spread_cell(score, levels)} | {'≥ ' if score.time_partial else ''}"
                       f"{_duration(score.wall_seconds)} |")
    if any(s.case.series for s in scores):
        lines += ["", "## Series: terminal-alkene share of the alkenes", "",
                  "Mean over seeds of the terminal alkene's share of the alkenes (in brackets its max − min over "
                  "seeds, points; the seed spread column of the test cases measures shares of all products "
                  "instead).", "", *series_rows(scores, levels)]
    shift = base_shift_section(scores, levels, LEVEL_WORDS)
    selectivity = selectivity_section(scores, levels, LEVEL_WORDS)
    return lines + (["", *shift] if shift else []) + (["", *selectivity] if selectivity else [])


def validation_markdown(info: RunInfo, scores: Sequence[CaseScore], calibration: Sequence[CalibrationScore],
                        levels: Sequence[str], models: Sequence[ModelSummary] = (),
                        stages: StageTotals | None = None, floor: BarrierFloor | None = None) -> str:
    """Return the whole VALIDATION.md text of one benchmark run (``stages``: where its jobs' gradients went)."""
    unfinished = info.n_jobs - info.n_jobs_finished
    lines = ["# elimscan reference benchmark", "",
             "Written by `validation/validate.py` (`make reference-cases`, or `make reference-cases-fast` for the fast "
             "subset) from `validation/cases.yaml`; never edited by hand. Re-running the same command rewrites this "
             "page.", "",
             f"- run: {info.date_utc}, commit `{info.commit}`, {info.method}",
             f"- base model: `{info.base_model}` ({info.base_model_words}), for every base of every case",
             freeze_line(info),
             f"- cases: {info.subset}; seeds {', '.join(map(str, info.seeds))}; {info.n_jobs_finished} of {info.n_jobs} "
             f"jobs finished" + (f" (**{unfinished} not finished: those seeds count as not computed; a case needs a "
                                  "majority of its seeds**)" if unfinished else ""),
             f"- wall time: {_duration(info.compute_seconds)} over the {info.n_compute_runs} invocation(s) that computed "
             f"in this work folder, pauses left out" + _stopped_words(info) + (f" (code: commit {', '.join(f'`{c}`' for c in sorted(set(info.compute_commits)))})"
                                      if info.compute_commits else "")
             + f" (this one: {_duration(info.wall_seconds)}); the jobs it scored took "
             f"{_duration(info.job_seconds)} summed over jobs" + replayed_clause(info.n_replayed_jobs, table=True) + _remaining(info),
             *([f"- archived jobs: {info.n_archived} of the finished jobs were read from `{info.records}` (computed "
                f"by commit {', '.join(f'`{c}`' for c in info.archived_commits)} on earlier machines; a job's key holds "
                "every input and setting that changes its numbers)"] if info.n_archived else []),
             f"- command: `{info.command}`", "",
             "How to read it. Levels: dE, GFN2-xTB electronic barriers; dG, quasi-RRHO free barriers of verified saddles "
             "(1 M; a path without one has no barrier at that level); DFT//GFN2, DFT single points on the GFN2-xTB "
             "tops (only on a run with the DFT tier on, `validate.py --dft`). The mix is elimscan's Curtin–Hammett share "
             "over every E2 path and the SN2 path; a path whose record says it is no barrier (it did not reach its "
             "products, or its gradient budget stopped it) is left out and named; a product that a computed path leads "
             "to but that has no counted barrier at a level (its paths failed, or their saddles were not verified) "
             "makes that seed not computed there. Products are compared "
             "as exact isomers (E/Z compared, tetrahedral stereo not). **right**: the expected major product, every "
             f"published share within ±{SHARE_TOLERANCE_POINTS:g} percentage points (alkene shares of the alkenes, E2 of "
             "E2 + SN2; a published share under 20 % is met by any computed share from 0 to the published one + 20), "
             "and the expected path geometry where the case names one. **wrong**, before anything else: a published "
             "share missed by more than that, however close the top products lie. "
             "**undecided**: the top products lie within the method's uncertainty: their best single paths' barriers "
             "closer than 1 kcal/mol (path degeneracy not counted: a product that six equivalent hydrogens lead to is "
             "compared on its best one, although the mix counts all six), or, where the case names the geometry, the "
             "best syn and anti paths' effective barriers (degeneracy counted, minus RT ln g) closer than 1 kcal/mol; "
             "it counts as not right. Each "
             "case ran once per seed; the majority of seeds decides, a split is undecided, and the mix shown is the "
             "mean over seeds, its spread the largest max − min of a share (points). The rule (anti-periplanar "
             "hydrogen, Zaitsev or Hofmann, textbook E2/SN2 call) is scored on the same cases, on its major product "
             "and its anti path (a textbook call of a mixture on a case that asks for the E2 share is undecided); it "
             "names no shares, so the computed side is also counted on the rule's basis (major product and path "
             "geometry only); a case without a published major is scored on its shares on the computed side only, "
             "neither for the rule nor on the rule's basis. The rule's call is read from each finished job (its "
             "conformers and scans decide which hydrogens can reach anti), so a case whose jobs have not finished "
             "has no rule call yet either.", ""]
    if scores:
        lines += _test_sections(info, scores, levels)
    else:
        lines += ["## Headline", "", "No product outcome is scored on this page: it holds calibration cases only "
                  "(rate constants, isotope effects, Hammett rho), whose errors are listed below."]
    if models:
        lines += ["", "## Base models compared", "",
                  "Every candidate base model with finished jobs in this work folder, scored on the same cases and "
                  "seeds as this page (a model's unfinished jobs count as not computed). The model was frozen on "
                  "basicity and calibration physics before the test set was scored (see the model freeze above); "
                  "the other rows are reported beside it, never used to choose it.", "",
                  *model_rows(models, info.frozen_model)]
    if calibration:
        lines += ["", "## Calibration set (errors only, never scored right or wrong)", "",
                  "Rate: ΔG‡ from the measured k2 by Eyring's equation (1 M, CODATA 2018) against the Boltzmann sum "
                  "over the channel's paths (dE: an electronic barrier set against a free one). Isotope effect: "
                  "k_H/k_D of the class on the named carbon (error in % of the measured value). Hammett: rho fitted "
                  "to the members' E2 channel barriers." + _dft_rate_words(calibration), "",
                  *calibration_rows(calibration)]
    if floor is not None:
        lines += floor_section(floor)
    if stages is not None:
        lines += stage_section(stages)
    return "\n".join(lines) + "\n"
