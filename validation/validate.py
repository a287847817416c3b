"""`make reference-cases`: run the reference benchmark of validation/cases.yaml and write its page.

A thin entry point. ``elimscan.analysis.benchmark_cases`` reads and checks the case file,
``benchmark_jobs`` turns every case x seed into a job of a batch config (one config per seed, temperature,
solvent and paths block), ``benchmark_scoring`` and ``benchmark_calibration`` score the finished job
records, and ``elimscan.output.benchmark_tables`` renders the page. The jobs run as ordinary resumable
``elimscan batch`` runs in the work folder (``--work``): run the same command again after a stop and only
unfinished jobs are computed; change a case and only its jobs run again.

Options: ``--work DIR`` (keep the batches; default a temporary folder), ``--no-compute`` (score what DIR
holds, also while another invocation still runs), ``--no-write`` (print the page only), ``--subset fast``
(a few small cases, one seed, writes VALIDATION-fast.md), ``--subset calibration`` (the calibration set only,
writes CALIBRATION.md), ``--base-model NAME`` (a candidate of ``elimscan.analysis.benchmark_models``; default the frozen
model of validation/model-freeze.yaml; pages of another model carry its name, e.g. VALIDATION-bare.md), ``--seeds N`` (the first N seeds
of each case), ``--workers N`` (local worker processes in all: N batches at once, one worker each), ``--cases ID,ID`` (a probe of a few cases of
the subset: the page is printed, not written), ``--records DIR`` / ``--no-records`` (the archive of finished jobs,
default validation/records), ``--archive-only`` (archive what DIR's batches finished, also while a run goes on).
"""

from __future__ import annotations

import argparse
import contextlib
import datetime as _dt
import json
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path

import yaml

from elimscan.analysis.barrierfloor import barrier_floor
from elimscan.analysis.benchmark_calibration import score_calibration
from elimscan.analysis.benchmark_cases import OutcomeCase, parse_cases
from elimscan.analysis.benchmark_jobs import (DFT_CALIBRATION_FUNCTIONALS, BatchGroup, batch_groups, benchmark_jobs,
                                              seeds_for)
from elimscan.analysis.benchmark_models import BASE_MODEL_CANDIDATES, UNNAMED_BASE_MODEL
from elimscan.analysis.benchmark_record import calibration_record, merged_record, page_record
from elimscan.analysis.benchmark_scoring import computed_levels, score_case
from elimscan.results.records import started_over
from elimscan.analysis.benchmark_summary import ModelSummary, summarise_model
from elimscan.analysis.stagegradients import stage_totals
from elimscan.atomicio import write_text_atomic
from elimscan.batch import runclock
from elimscan.batch.archive import ArchivedJob, archive_jobs, archived_keys, read_archived
from elimscan.batch.documents import INDEX_FILE
from elimscan.batch.plan import plan_batch
from elimscan.batch.store import STORE_FILE, JobStore
from elimscan.config import default_workers, parse_config
from elimscan.errors import OutputError
from elimscan.output.benchmark_tables import (LeftEstimate, RunInfo, left_estimate, progress_text, series_rows,
                                              validation_markdown)

HERE = Path(__file__).resolve().parent
#: a quick look (issue 17): five small test cases and the two rate constants that share their jobs, one seed
FAST_SUBSET = ("bromoethane-ethoxide", "2-bromopropane-ethoxide", "2-bromo-2-methylpropane-ethoxide",
               "2-bromobutane-ethoxide", "trans-2-methylcyclohexyl-chloride-ethoxide",
               "ethyl-bromide-ethoxide-sn2-rate", "isopropyl-bromide-ethoxide-e2-rate")
PAGES = {"all": "VALIDATION", "fast": "VALIDATION-fast", "calibration": "CALIBRATION"}
#: one JSON line per invocation that computed in a work folder (its wall time, commit, subset and seeds)
RUN_LOG = "validate-runs.jsonl"
#: the invocation computing in a work folder now (its commit and base model), removed when it ends: --archive-only
#: run beside it archives its finished jobs under its commit
RUNNING_FILE = "validate-running.json"
#: held (fcntl.flock) by the invocation computing in a work folder: the OS drops it when the process dies
RUN_LOCK = "validate-running.lock"
#: the frozen base model: the last commit that changed its ``base_model:`` line is the freeze commit
FREEZE_FILE = HERE / "model-freeze.yaml"
#: the frozen model's counts per level and category, quoted by the report beside each job's verdict (package data)
RECORD_FILE = HERE.parent / "workflow" / "elimscan" / "data" / "benchmark_record.json"
#: finished jobs kept by key beside the code (elimscan.batch.archive): a machine that does not outlive a night
#: still adds to the benchmark, and a job archived here is never computed again
RECORDS = HERE / "records"


def _parse(argv: list[str] | None) -> argparse.Namespace:
    """Return the parsed command line."""
    parser = argparse.ArgumentParser(description="run the reference benchmark and write validation/VALIDATION.md")
    parser.add_argument("--work", type=Path, default=None,
                        help="keep the batch folders here and resume them (default: a temporary folder)")
    parser.add_argument("--no-compute", action="store_true", help="compute nothing: score the jobs finished in --work")
    parser.add_argument("--no-write", action="store_true", help="print the page, do not write it")
    parser.add_argument("--subset", choices=tuple(PAGES), default="all",
                        help="fast: %d small cases, one seed, page VALIDATION-fast.md; calibration: the calibration "
                        "set only, page CALIBRATION.md" % len(FAST_SUBSET))
    parser.add_argument("--base-model", choices=tuple(BASE_MODEL_CANDIDATES), default=frozen_model(),
                        help="model every base with this candidate (default: %(default)s, the frozen model)")
    parser.add_argument("--seeds", type=int, default=None, metavar="N",
                        help="run the first N seeds of each case (default: all of a case's seeds; fast: 1)")
    parser.add_argument("--workers", type=int, default=None, help="local worker processes in all: that many "
                        "batches at once, one worker each, the largest first (default: the core count)")
    parser.add_argument("--records", type=Path, default=RECORDS,
                        help="archive of finished jobs by key, read and added to (default: validation/records)")
    parser.add_argument("--no-records", action="store_true",
                        help="neither read nor add to the archive: compute everything in --work")
    parser.add_argument("--archive-only", action="store_true",
                        help="compute nothing and write no page: add the jobs that finished ok in --work's batches to the "
                        "archive (for a session that must end while a batch is still running)")
    parser.add_argument("--progress", action="store_true",
                        help="compute and write nothing: print how many of the jobs have finished in --work and the "
                        "archive, an estimate of the rest, and the invocation computing there now")
    parser.add_argument("--cases", default=None, metavar="ID,ID",
                        help="only these cases of the subset (a probe: the page is printed, never written)")
    parser.add_argument("--dft", default=None, choices=DFT_CALIBRATION_FUNCTIONALS, metavar="FUNCTIONAL",
                        help="also compute DFT single points with this level (%(choices)s) on the lowest GFN2-xTB "
                        "saddle of each product and on the free substrate and base (absolute barriers), in batches "
                        "and a page of their own; meant for the calibration set (overnight on two cores)")
    parser.add_argument("--engine", default=None, metavar="MODULE:FUNCTION",
                        help="compute with a plug-in engine instead of GFN2-xTB (for tests; part of each job's key)")
    args = parser.parse_args(argv)
    needs_work = [flag for flag, on in (("--no-compute", args.no_compute), ("--archive-only", args.archive_only),
                                        ("--progress", args.progress)) if on]
    if needs_work and args.work is None:
        parser.error(f"{needs_work[-1]} needs --work (the folder that holds the finished batches)")
    if args.progress and args.archive_only:
        parser.error("--progress only reads: it cannot go with --archive-only, which adds to the archive")
    if args.archive_only and args.no_records:
        parser.error("--archive-only adds to the archive: it cannot go with --no-records")
    if args.seeds is not None and args.seeds < 1:
        parser.error("--seeds must be at least 1")
    if args.no_records:
        args.records = None
    if args.cases is not None:
        args.cases = tuple(c.strip() for c in args.cases.split(",") if c.strip())
        args.no_write = True  # a page of a few cases must not replace the subset's page
    return args


def _group_keys(group: BatchGroup, work: Path) -> dict[str, tuple[str, str]]:
    """Return the job keys of a group's pairs: key -> (substrate, base) as named in its config."""
    config_file = work / f"{group.name}.yaml"
    plan = plan_batch(parse_config(yaml.safe_dump(group.config, sort_keys=False), str(config_file)), config_file)
    return {job.key: (job.substrate_name, job.base.name) for job in plan.jobs}


def _run_group(group: BatchGroup, work: Path, workers: int | None, records: Path | None, commit: str) -> None:
    """Run (or resume) one group's batch through the elimscan command, leaving out the pairs whose jobs are archived
    in ``records``, then archive its finished jobs; report a batch that could not run."""
    keys = _group_keys(group, work)
    archived = {keys[k] for k in archived_keys(records) & set(keys)} if records is not None else set()
    todo = [pair for pair in group.config["pairs"] if (pair["substrate"], pair["base"]) not in archived]
    if not todo:
        print(f"batch {group.name}: all {len(group.serves)} job(s) archived in {records}", file=sys.stderr, flush=True)
        return
    config = work / f"{group.name}.yaml"
    text = yaml.safe_dump({**group.config, "pairs": todo}, sort_keys=False)
    if not config.exists() or config.read_text() != text:
        config.write_text(text)
    command = [sys.executable, "-m", "elimscan", "batch", str(config), "--out", str(work / group.name), "-q"]
    if workers is not None:
        command += ["--workers", str(workers)]
    print(f"batch {group.name}: {len(todo)} job(s)" + (f" ({len(archived)} archived)" if archived else ""),
          file=sys.stderr, flush=True)
    done = subprocess.run(command, stderr=subprocess.PIPE, text=True)
    if done.returncode not in (0, 5):  # 5: finished with failed jobs (their records say why)
        tail = done.stderr.strip().splitlines()[-3:]
        print(f"batch {group.name} stopped with exit code {done.returncode}: {' / '.join(tail)}", file=sys.stderr)
    if records is not None:
        _archive_group(group, work, records, commit, keys)


def _run_groups(groups: list[BatchGroup], work: Path, workers: int | None, records: Path | None, commit: str) -> None:
    """Run every group's batch with ``workers`` local workers in all: that many batches at once, one worker each,
    the groups with the most jobs first (a group is one temperature and solvent of one seed, so most hold one to
    four jobs, and a batch of its own with two workers would leave one idle while its last job runs)."""
    slots = workers if workers is not None else default_workers()
    order = sorted(groups, key=lambda g: -len(g.config["pairs"]))  # stable: seed order among equals
    if slots <= 1:
        for group in order:
            _run_group(group, work, workers, records, commit)
        return
    with ThreadPoolExecutor(max_workers=slots) as pool:
        for done in [pool.submit(_run_group, group, work, 1, records, commit) for group in order]:
            done.result()


def _stored(group: BatchGroup, work: Path, keys: dict[str, tuple[str, str]]) -> tuple[dict, dict | None]:
    """Return the finished store rows of a group's batch by key, and its provenance ({} and None without a store)."""
    out = work / group.name
    if not (out / STORE_FILE).is_file():
        return {}, None
    with JobStore(out / STORE_FILE, read_only=True) as store:
        rows = store.finished(list(keys), with_records=True)
    index = out / INDEX_FILE
    return rows, (json.loads(index.read_text())["provenance"] if index.is_file() else None)


def _archive_group(group: BatchGroup, work: Path, records: Path, commit: str, keys: dict[str, tuple[str, str]]) -> None:
    """Archive the group's jobs that finished ok in its batch (a failed job is tried again by the next run)."""
    rows, provenance = _stored(group, work, keys)
    written = archive_jobs(records, {key: ArchivedJob(json.loads(row.job_json), row.wall_seconds, provenance, commit)
                                     for key, row in rows.items() if row.status == "ok"})
    if written:
        print(f"batch {group.name}: {written} finished job(s) archived in {records}", file=sys.stderr, flush=True)


def read_run_log(work: Path) -> list[dict]:
    """Return the run-log entries of a work folder (one per invocation that computed there, oldest first)."""
    return runclock.read_run_log(work / RUN_LOG)


def settle_stale_run(work: Path) -> bool:
    """Log the running file of a computing invocation that was killed as interrupted and remove it; return whether
    there was one (a running invocation, paused or not, holds the folder's lock and is left alone)."""
    return runclock.settle_stale_run(work / RUNNING_FILE, work / RUN_LOG, work / RUN_LOCK)


def run_clock(work: Path, entry: dict, started: float) -> runclock.RunClock:
    """Return the clock of a computing invocation in ``work`` (its lock, heartbeat and run-log entry)."""
    return runclock.RunClock(work / RUNNING_FILE, work / RUN_LOG, work / RUN_LOCK, entry, started)


def _progress(groups: list[BatchGroup], work: Path, records: Path | None, what: str) -> int:
    """Print how far the groups' jobs got in ``work`` and the archive and who computes there now; return the exit
    code (2 when a batch store cannot be read)."""
    if not work.is_dir():
        print(f"note: {work} does not exist or is no folder: only the archive was read", file=sys.stderr)
    try:
        found = _collect(groups, work, records)
    except OutputError as err:  # a damaged store names itself
        print(f"error: {err}", file=sys.stderr)
        return 2
    running = runclock.running_entry(work / RUNNING_FILE, work / RUN_LOCK)
    print(progress_text(what, found.n_jobs, found.n_finished, found.n_archived, found.job_seconds, running, str(work),
                        found.n_failed, found.n_replayed, found.left()))
    return 0


def _runs_of(runs: list[dict], base_model: str, dft_functional: str | None) -> list[dict]:
    """Return the run-log entries of one base model and DFT level (entries written before either was logged count
    as the bare anion's, and as GFN2-xTB only)."""
    return [r for r in runs if r.get("base_model", UNNAMED_BASE_MODEL) == base_model and r.get("dft") == dft_functional]


def _archive_work(groups: list[BatchGroup], work: Path, records: Path, base_model: str,
                  dft_functional: str | None = None) -> int:
    """Archive the jobs that finished ok in a work folder's batches, under the commit of the invocation computing
    there now, else of the last one that computed there with this base model (its run log); return the exit code (2
    when the folder holds no batch)."""
    settle_stale_run(work)
    running = work / RUNNING_FILE
    runs = read_run_log(work)
    try:
        runs.append(json.loads(running.read_text()))
    except FileNotFoundError:  # none computes, or it ended just now: its entry is in the log
        runs = read_run_log(work)
    commits = [r["commit"] for r in _runs_of(runs, base_model, dft_functional)]
    present = [g for g in groups if (work / g.name / STORE_FILE).is_file()]
    if not present:
        print(f"error: {work} holds no batch of these cases under base model {base_model}", file=sys.stderr)
        return 2
    for group in present:
        _archive_group(group, work, records, commits[-1] if commits else "unknown", _group_keys(group, work))
    print(f"{len(archived_keys(records))} job(s) in {records}", file=sys.stderr)
    return 0


def _read_group(group: BatchGroup, work: Path, records: Path | None = None
                ) -> tuple[dict[tuple[str, str], tuple[dict, float | None]], dict | None, dict[tuple[str, str], str]]:
    """Return the finished job records of one group by (substrate, base) with their wall time (s), its provenance,
    and which of them came from the archive with the commit that computed each (the work folder's batch first)."""
    keys = _group_keys(group, work)
    rows, provenance = _stored(group, work, keys)
    found = {keys[key]: (json.loads(row.job_json), row.wall_seconds) for key, row in rows.items()}
    archived: dict[tuple[str, str], str] = {}
    if records is not None:  # an archived job (finished ok elsewhere) counts over a failed row of this folder
        failed_here = {key for key, row in rows.items() if row.status != "ok"}
        for key, job in read_archived(records, set(keys) - set(rows) | failed_here).items():
            found[keys[key]] = (job.job, job.wall_seconds)
            provenance = provenance or job.provenance
            archived[keys[key]] = job.commit
    return found, provenance, archived


@dataclass
class Collected:
    """The finished jobs of one model's batches: records and wall times (s) by case slot and seed, and counts."""

    records: dict[str, dict[int, dict]] = field(default_factory=dict)
    seconds: dict[str, dict[int, float | None]] = field(default_factory=dict)
    provenance: dict | None = None
    #: commits that computed the jobs read from the archive, and how many jobs were read from it
    archived_commits: set[str] = field(default_factory=set)
    n_archived: int = 0
    n_jobs: int = 0
    n_finished: int = 0
    #: of the finished jobs, those that failed (scored as not computed)
    n_failed: int = 0
    job_seconds: float = 0.0
    #: of the finished jobs, those that started over from a replay log (their job time is their last run's only)
    n_replayed: int = 0
    #: every finished job record once, for where their gradients went
    finished: list[dict] = field(default_factory=list)
    #: the case slots each unfinished job serves, for the estimate of the time left
    unfinished_slots: list[list[str]] = field(default_factory=list)

    def jobs(self) -> list[dict]:
        """Return every finished job record (a job serving several slots appears once per slot)."""
        return [job for by_seed in self.records.values() for job in by_seed.values()]

    def left(self) -> LeftEstimate:
        """Return the unfinished jobs' estimated job time (s): from the wall times of their own cases' finished
        seeds that ran whole and ok (not failed, not started over from a replay log), else the finished jobs' mean."""
        whole = {slot: {seed: self.seconds[slot][seed] for seed, job in by_seed.items()
                        if job.get("status") == "ok" and not started_over(job)}
                 for slot, by_seed in self.records.items()}
        mean = self.job_seconds / self.n_finished if self.n_finished else 0.0
        return left_estimate(self.unfinished_slots, whole, mean)


def _collect(groups: list[BatchGroup], work: Path, records: Path | None = None) -> Collected:
    """Return the finished jobs of the groups' batches in the work folder and the archive (nothing computed)."""
    found = Collected()
    for group in groups:
        in_group, provenance, archived = _read_group(group, work, records)
        found.provenance = found.provenance or provenance
        found.n_jobs += len(group.serves)
        for pair, served in group.serves.items():
            if pair not in in_group:
                found.unfinished_slots.append([slot for slot, _ in served])
                continue
            job, wall = in_group[pair]
            found.n_finished += 1
            found.n_failed += job.get("status") != "ok"
            if pair in archived:
                found.n_archived += 1
                found.archived_commits.add(archived[pair])
            found.job_seconds += wall or 0.0
            found.n_replayed += started_over(job)
            found.finished.append(job)
            for slot, seed in served:
                found.records.setdefault(slot, {})[seed] = job
                found.seconds.setdefault(slot, {})[seed] = wall
    return found


def _score(chosen: list, found: Collected, seed_count: int | None, levels: list[str]) -> tuple[list, list]:
    """Return the test cases' scores and the calibration cases' errors from the collected jobs."""
    scores = [score_case(case, found.records.get(case.id, {}), seeds_for(case, seed_count), levels,
                         sum(s or 0.0 for s in found.seconds.get(case.id, {}).values()) or None)
              for case in chosen if isinstance(case, OutcomeCase)]
    calibration = [score_calibration(case, found.records, seeds_for(case, seed_count))
                   for case in chosen if not isinstance(case, OutcomeCase)]
    return scores, calibration


def _compare_models(chosen: list, seed_count: int | None, args: argparse.Namespace, work: Path,
                    page: tuple[Collected, list[str], list, list]) -> list[ModelSummary]:
    """Return one summary per candidate base model and level, for every model with a finished job in the work folder
    (``page``: the page's own model already collected and scored, not read again)."""
    summaries = []
    for model in BASE_MODEL_CANDIDATES:
        if model == args.base_model:
            found, levels, scores, calibration = page
        else:
            groups = batch_groups(benchmark_jobs(chosen, seed_count), engine_factory=args.engine, base_model=model,
                                  dft_functional=args.dft)
            found = _collect(groups, work, args.records)
            if not found.n_finished:
                continue
            levels = computed_levels(found.jobs()) or ["dE"]
            scores, calibration = _score(chosen, found, seed_count, levels)
        if not found.n_finished:
            continue
        summaries += [summarise_model(model, level, scores, calibration, found.n_jobs, found.n_finished)
                      for level in levels]
    return summaries


def _write_record(page: str, info: RunInfo, scores: list, levels: list[str], found: Collected,
                  calibration: list | None = None) -> None:
    """Write the frozen model's numbers of this page into the package's benchmark record (the other pages' entries
    kept): the test cases' counts per level and category, which the report quotes beside each job's verdict, their
    outcomes, and the calibration cases' errors. The tests compare the last two with published values."""
    models = sorted({job["base_info"]["model"] for job in found.jobs() if (job.get("base_info") or {}).get("model")})
    about = {"page": f"validation/{page}", "date_utc": info.date_utc, "commit": info.commit,
             "base_model": info.base_model, "base_model_words": info.base_model_words, "job_base_models": models,
             "seeds": list(info.seeds), "jobs": info.n_jobs, "jobs_finished": info.n_jobs_finished,
             "method": info.method}
    entry = {**page_record(scores, levels, about), "calibration": calibration_record(calibration or [])}
    try:
        existing = json.loads(RECORD_FILE.read_text())
    except FileNotFoundError:
        existing = None
    except ValueError as err:  # e.g. merge markers: the other pages' entries are written again by their next run
        print(f"warning: {RECORD_FILE} is not JSON ({err}): written anew with this page only", file=sys.stderr)
        existing = None
    RECORD_FILE.parent.mkdir(parents=True, exist_ok=True)
    write_text_atomic(RECORD_FILE, json.dumps(merged_record(existing, page, entry), indent=1, sort_keys=True) + "\n")
    print(f"wrote {RECORD_FILE}", file=sys.stderr)


def page_path(subset: str, base_model: str, dft_functional: str | None = None,
              seeds_below_cases: int | None = None) -> Path:
    """Return the page a subset, base model and DFT level write (the frozen model's pages carry no model name; a
    DFT level's pages carry its name; a run on fewer seeds than its cases' own, ``seeds_below_cases``, carries
    '-seedsN', so that it never overwrites a page of every seed)."""
    suffix = "" if base_model == frozen_model() else f"-{base_model}"
    suffix += "" if dft_functional is None else f"-dft-{dft_functional}"
    suffix += "" if seeds_below_cases is None else f"-seeds{seeds_below_cases}"
    return HERE / f"{PAGES[subset]}{suffix}.md"


def fewer_seeds(seed_count: int | None, chosen: list) -> int | None:
    """Return ``seed_count`` when it is below the most seeds any chosen case asks for, else None."""
    most = max((len(case.seeds) for case in chosen), default=0)
    return seed_count if seed_count is not None and seed_count < most else None


def _rejoined(pieces: tuple[str, ...], ids: set[str]) -> tuple[str, ...]:
    """Return the case ids of a comma-split --cases list, pieces joined again where an id holds a comma itself
    (2-bromo-2,3-dimethylbutane-ethoxide); a piece that joins into no id is kept as given."""
    out: list[str] = []
    i = 0
    while i < len(pieces):
        for j in range(len(pieces), i, -1):  # the longest run of pieces that is an id
            if ",".join(pieces[i:j]) in ids:
                out.append(",".join(pieces[i:j]))
                i = j
                break
        else:
            out.append(pieces[i])
            i += 1
    return tuple(out)


def _chosen(subset: str, calibration: list, test: list, only: tuple[str, ...] | None = None) -> list:
    """Return the cases a subset runs: all, the fast few, or the calibration set (only the ids ``only`` when given;
    ValueError names an id the subset does not hold)."""
    chosen = list(calibration) if subset == "calibration" else \
        [c for c in (*calibration, *test) if subset == "all" or c.id in FAST_SUBSET]
    if only is None:
        return chosen
    only = _rejoined(only, {c.id for c in (*calibration, *test)})
    unknown = sorted(set(only) - {c.id for c in chosen})
    if unknown:
        raise ValueError(f"--cases: {', '.join(unknown)} not in the {subset} subset (ids of validation/cases.yaml)")
    return [c for c in chosen if c.id in only]


def _freeze_file() -> dict:
    """Return validation/model-freeze.yaml as read ({} while nothing is frozen)."""
    return yaml.safe_load(FREEZE_FILE.read_text()) if FREEZE_FILE.is_file() else {}


def frozen_model() -> str:
    """Return the frozen base model of validation/model-freeze.yaml (the bare anion while nothing is frozen)."""
    return str(_freeze_file().get("base_model", UNNAMED_BASE_MODEL))


def _git(*words: str) -> subprocess.CompletedProcess:
    """Return the finished git command run in this checkout (never raises on a git error)."""
    return subprocess.run(["git", "-C", str(HERE), *words], capture_output=True, text=True)


def _freeze(run_commits: list[str]) -> dict:
    """Return the RunInfo fields of the model freeze: model, freeze commit, flagged cases, runs older than it."""
    data = _freeze_file()
    if not data:
        return {}
    last = _git("log", "-1", "--format=%h", "-G", "^base_model:", "--", str(FREEZE_FILE)).stdout.strip()
    commit = last or "not committed"
    older = tuple(c for c in run_commits if not last or
                  _git("merge-base", "--is-ancestor", last, c.removesuffix("-dirty")).returncode != 0)
    return {"frozen_model": str(data["base_model"]), "freeze_commit": commit,
            "seen_before_freeze": tuple(data.get("seen_before_freeze") or ()), "computed_before_freeze": older}


#: files this script (and basicity.py) writes into the checkout: changes to them do not make the code '-dirty'
WRITTEN_FILES = (":(top,exclude,glob)validation/*.md", ":(top,exclude)workflow/elimscan/data/benchmark_record.json")


def _commit() -> str:
    """Return the short commit of the checkout ('-dirty' with uncommitted changes to tracked files other than the
    pages the benchmark writes, so a page written by one invocation does not mark the next one's code as changed)."""
    head = _git("rev-parse", "--short", "HEAD")
    if head.returncode:
        return "unknown"
    changed = _git("diff", "--quiet", "HEAD", "--", ":/", *WRITTEN_FILES).returncode
    return head.stdout.strip() + ("-dirty" if changed else "")


def main(argv: list[str] | None = None) -> int:
    """Run the benchmark's batches, score them and write the page; return the exit code."""
    started, commit = time.perf_counter(), _commit()  # the code that runs is the code at the start
    started_utc = _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")
    args = _parse(argv)
    cases = parse_cases((HERE / "cases.yaml").read_text())
    try:
        chosen = _chosen(args.subset, list(cases.calibration), list(cases.test), args.cases)
    except ValueError as err:
        print(f"error: {err}", file=sys.stderr)
        return 2
    seed_count = args.seeds if args.seeds is not None else (1 if args.subset == "fast" else None)
    groups = sorted(batch_groups(benchmark_jobs(chosen, seed_count), engine_factory=args.engine,
                                 base_model=args.base_model, dft_functional=args.dft),
                    key=lambda g: (g.config["seed"], g.name))  # seed 1 of every case first
    below = fewer_seeds(seed_count, chosen)
    page = page_path(args.subset, args.base_model, args.dft, below)
    if args.archive_only:
        return _archive_work(groups, args.work, args.records, args.base_model, args.dft)
    if args.progress:
        return _progress(groups, args.work, args.records, f"{page.name} "
                         f"({args.subset} cases), base model {args.base_model}")
    with tempfile.TemporaryDirectory() as tmp:
        work = args.work or Path(tmp)
        work.mkdir(parents=True, exist_ok=True)
        if args.no_compute:
            settle_stale_run(work)
        else:
            entry = {"started_utc": started_utc, "commit": commit, "subset": args.subset, "seeds": seed_count,
                     "base_model": args.base_model, "dft": args.dft,
                     "workers": args.workers if args.workers is not None else default_workers()}
            with contextlib.ExitStack() as stack:  # an interrupted invocation counts its wall time too
                try:
                    stack.enter_context(run_clock(work, entry, started))
                except OutputError as err:  # another invocation computes in this work folder
                    print(f"error: {err}", file=sys.stderr)
                    return 2
                _run_groups(groups, work, args.workers, args.records, commit)
        runs = _runs_of(read_run_log(work), args.base_model, args.dft)
        found = _collect(groups, work, args.records)
        levels = computed_levels(found.jobs()) or ["dE"]
        scores, calibration = _score(chosen, found, seed_count, levels)
        models = _compare_models(chosen, seed_count, args, work, (found, levels, scores, calibration))
    tests = [c for c in chosen if isinstance(c, OutcomeCase)]
    provenance, n_jobs, n_finished, job_seconds = found.provenance, found.n_jobs, found.n_finished, found.job_seconds
    method = (f"{provenance['method_label']} ({provenance['backend']} {provenance['backend_version']}, elimscan "
              f"{provenance['program_version']})") if provenance else "no finished batch"
    all_seeds = sorted({s for case in chosen for s in seeds_for(case, seed_count)})
    info = RunInfo(date_utc=_dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"), commit=commit,
                   wall_seconds=time.perf_counter() - started, job_seconds=job_seconds, n_replayed_jobs=found.n_replayed,
                   method=method,
                   compute_seconds=sum(r["wall_seconds"] for r in runs), n_compute_runs=len(runs),
                   n_interrupted_runs=sum(1 for r in runs if r.get("interrupted")),
                   n_time_unknown_runs=sum(1 for r in runs if r.get("time_unknown")),
                   seeds=tuple(all_seeds), subset={"all": "all cases", "calibration": "the calibration set only"}.get(
                       args.subset, f"fast subset ({len(tests)} test and {len(chosen) - len(tests)} calibration cases)"),
                   base_model=args.base_model, base_model_words=BASE_MODEL_CANDIDATES[args.base_model][1],
                   command="python validation/validate.py " + " ".join(argv if argv is not None else sys.argv[1:]),
                   n_jobs=n_jobs, n_jobs_finished=n_finished, compute_commits=tuple(r["commit"] for r in runs),
                   n_archived=found.n_archived, archived_commits=tuple(sorted(found.archived_commits)),
                   left=found.left(),
                   records=str(args.records.relative_to(HERE.parent)) if args.records is not None and
                   args.records.is_relative_to(HERE.parent) else str(args.records),
                   **_freeze([r["commit"] for r in runs] + sorted(found.archived_commits)))
    text = validation_markdown(info, scores, calibration, levels, models, stage_totals(found.finished),
                               barrier_floor(found.records))
    if not args.no_write:
        write_text_atomic(page, text)
        print(f"wrote {page}", file=sys.stderr)
        # the package's record (what the tests and the report read) holds pages of every seed only, never a
        # plug-in's toy numbers
        if args.base_model == info.frozen_model and args.dft is None and args.engine is None and below is None:
            _write_record(page.name, info, scores, levels, found, calibration)
    if args.no_write:  # the whole page, its series table included
        print(text)
    else:
        print("\n".join(series_rows(scores, levels)) if any(s.case.series for s in scores)
              else "(no series in these cases)")
        print("\n".join(line for line in text.splitlines() if line.startswith("- **")))
    return 0


if __name__ == "__main__":
    sys.exit(main())
