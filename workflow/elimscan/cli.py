"""The ``elimscan`` command: info, validate, run, batch, status, summary, report. Orchestrates; computes nothing itself.

Logs go to stderr and to ``OUT/run.log``; results go only to files. Exit codes: see errors.ExitCode.
"""

from __future__ import annotations

import argparse
import json
import logging
import os
import shlex
import shutil
import signal
import sys
import time
from pathlib import Path

from elimscan import __version__
from elimscan.errors import ConfigError, ElimscanError, ExitCode, OutputError
from elimscan.engines.threads import configure_threads
from elimscan.versions import environment_versions

log = logging.getLogger("elimscan")

RESULTS_FILE = "results.json"
PARTIAL_FILE = "results.partial.json"
LOG_FILE = "run.log"


def _setup_logging(verbosity: int, log_file: Path | None = None) -> None:
    """Send log records to stderr (level by -v/-q) and, when given, to a log file (DEBUG, with tracebacks)."""
    root = logging.getLogger("elimscan")
    root.handlers.clear()
    root.setLevel(logging.DEBUG)
    root.propagate = False
    stderr = logging.StreamHandler(sys.stderr)
    stderr.setLevel({-1: logging.WARNING, 0: logging.INFO}.get(verbosity, logging.DEBUG))
    stderr.setFormatter(logging.Formatter("%(levelname)s %(message)s" if verbosity > 0 else "%(message)s"))
    root.addHandler(stderr)
    if log_file is not None:
        handler = logging.FileHandler(log_file, encoding="utf-8")
        handler.setLevel(logging.DEBUG)
        handler.setFormatter(logging.Formatter("%(asctime)s %(levelname)s %(name)s: %(message)s"))
        root.addHandler(handler)


def _read_config(path: str):
    """Return the validated config read from a YAML file; ConfigError names the file."""
    from elimscan.config import parse_config

    try:
        text = Path(path).read_text(encoding="utf-8")
    except OSError as err:
        raise ConfigError(f"cannot read config file '{path}': {err.strerror}") from err
    try:
        return parse_config(text, source=path)
    except ConfigError as err:
        located = ConfigError(f"{path}: " + str(err).replace(f"{path}: ", "", 1))  # the file named once, first
        located.key_path, located.line = err.key_path, err.line
        raise located from err


def _with_engine(config, args: argparse.Namespace):
    """Return the config with ``--engine`` as its method.engine_factory, checked to load (ConfigError if not)."""
    from pydantic import ValidationError

    from elimscan.config import MethodConfig
    from elimscan.engines.factory import load_engine_factory

    spec = getattr(args, "engine", None)
    if spec:
        try:
            method = MethodConfig.model_validate({**config.method.model_dump(), "engine_factory": spec})
        except ValidationError as err:
            raise ConfigError(f"--engine '{spec}': expected 'module:function'") from err
        config = config.model_copy(update={"method": method})
    if config.method.engine_factory:
        load_engine_factory(config.method.engine_factory)
    return config


def cmd_info(args: argparse.Namespace) -> int:
    """Print versions of Python and the libraries; return the exit code."""
    for name, version in environment_versions().items():
        print(f"{name:<17} {version}")
    return ExitCode.OK


def _located(cls, err: Exception, config_path: str, key_path: str, text: str):
    """Return an input error of class ``cls`` saying file, key path and YAML line before the message of ``err``."""
    from elimscan.config import key_line

    line = key_line(text, key_path)
    detail = getattr(err, "detail", err) if getattr(err, "key_path", None) == key_path else err
    located = cls(f"{config_path}, key '{key_path}'" + (f", line {line}" if line else "") + f": {detail}")
    located.key_path, located.line = key_path, line
    return located


def _plan_batch(config, config_path: str):
    """Return the batch plan of a config; an input error naming a key gets the file and the YAML line too."""
    from elimscan.batch.plan import plan_batch
    from elimscan.errors import InputError

    try:
        return plan_batch(config, config_path)
    except InputError as err:
        if not err.key_path or err.line is not None:
            raise
        try:
            text = Path(config_path).read_text(encoding="utf-8")
        except OSError:
            raise err from None
        raise _located(type(err), err, config_path, err.key_path, text) from err


def _check_structures(config, config_path: str) -> None:
    """Raise StructureError (file, key path and YAML line) for the first substrate or base that cannot be used.

    Substrates are perceived in full (leaving group, maps, beta hydrogens), no base may be its job's
    substrate, and bases need a basic atom: all before any calculation.
    """
    from elimscan.errors import StructureError
    from elimscan.chem.inputcheck import (check_base, check_pair, check_substrate, gas_phase_ion_problem,
                                          modelled_charge)

    try:
        text = Path(config_path).read_text(encoding="utf-8")
    except OSError:
        text = ""
    charges: dict[str, int] = {}
    for index, item in enumerate(config.substrates):
        try:
            charge = check_substrate(item.smiles, item.charge, item.multiplicity, f"substrate '{item.name}'", config.seed)
        except StructureError as err:
            raise _located(StructureError, err, config_path, f"substrates.{index}.smiles", text) from err
        charges[f"substrate '{item.name}'"] = charge
    base_index = {b.name: i for i, b in enumerate(config.bases)}
    for substrate, base in config.jobs():
        try:
            check_pair(substrate.name, substrate.smiles, base.name, base.smiles)
        except StructureError as err:
            raise _located(StructureError, err, config_path, f"bases.{base_index[base.name]}.smiles", text) from err
    for index, item in enumerate(config.bases):
        try:
            charge = check_base(item.smiles, item.charge, item.multiplicity, f"base '{item.name}'")
        except StructureError as err:
            raise _located(StructureError, err, config_path, f"bases.{index}.smiles", text) from err
        charges[f"base '{item.name}'"] = modelled_charge(charge, item.model.counter_ion)
    problem = gas_phase_ion_problem(config.method.solvent.model, charges)
    if problem is not None:
        raise _located(ConfigError, problem, config_path, "method.solvent.model", text)


def _batch_only(config) -> list[str]:
    """Return the batch-only keys a config uses (substrates_file, solvents)."""
    return [key for key in ("substrates_file", "solvents") if getattr(config, key) is not None]


def cmd_validate(args: argparse.Namespace) -> int:
    """Check a config (and its SMILES) without computing; return the exit code."""
    config = _with_engine(_read_config(args.config), args)
    if _batch_only(config):
        plan = _plan_batch(config, args.config)
        for job in plan.jobs:
            if job.input_error is not None:
                log.warning("job %s will fail: %s", job.job_id, job.input_error.error_message)
        log.info("%s: valid batch config (%d jobs, %d of them fail on their input)", args.config, len(plan.jobs),
                 plan.n_input_failures)
        return ExitCode.OK
    _check_structures(config, args.config)
    from elimscan.batch.inputs import read_geometries

    read_geometries(config, Path(args.config).parent)
    log.info("%s: valid (%d substrates, %d bases, %d jobs)", args.config, len(config.substrates),
             len(config.bases), len(config.jobs()))
    return ExitCode.OK


def _prepare_output(out: Path, overwrite: bool) -> None:
    """Create the output folder; refuse one holding a finished run unless ``overwrite``."""
    from elimscan.batch.store import STORE_FILE

    if (out / STORE_FILE).exists():
        raise OutputError(f"output folder '{out}' holds a batch ({STORE_FILE}); 'elimscan run' needs a folder of its "
                          f"own (a batch folder is re-entered with: elimscan batch CONFIG --out {out})")
    finished = out / RESULTS_FILE
    if finished.exists() and not overwrite:
        raise OutputError(f"output folder '{out}' already holds a finished run ({RESULTS_FILE}); "
                          "choose another --out or pass --overwrite")
    try:
        out.mkdir(parents=True, exist_ok=True)
        probe = out / ".write-test"
        probe.write_text("ok", encoding="utf-8")
        probe.unlink()
        if finished.exists():
            finished.unlink()
    except OSError as err:
        raise OutputError(f"cannot write to output folder '{out}': {err.strerror or err}") from err


def _write_atomic(path: Path, text: str) -> None:
    """Write text to ``path`` through a temporary file and a rename (never a half-written file)."""
    from elimscan.atomicio import write_text_atomic

    write_text_atomic(path, text)


def cmd_run(args: argparse.Namespace) -> int:
    """Run a config into an output folder; return the exit code."""
    config = _with_engine(_read_config(args.config), args)
    if _batch_only(config):
        raise ConfigError(f"{args.config} uses {' and '.join(_batch_only(config))}, which only 'elimscan batch' reads; "
                          f"run it with: elimscan batch {args.config} --out DIR", key_path=_batch_only(config)[0])
    if args.threads is None:  # before the backends load
        configure_threads(config.threads.per_process)
    _check_structures(config, args.config)  # input errors stop the run before any calculation
    from elimscan.batch.inputs import read_geometries

    geometries = read_geometries(config, Path(args.config).parent)
    out = Path(args.out)
    _prepare_output(out, args.overwrite)
    _setup_logging(args.verbosity, out / LOG_FILE)
    log.debug("command: %s", shlex.join(sys.argv))
    log.debug("versions: %s", json.dumps(environment_versions()))

    from elimscan.engines.factory import make_engine
    from elimscan.output.text import summary_table
    from elimscan.pipeline.jobs import compute_run
    from elimscan.pipeline.outcome import DETAIL

    engine = make_engine(config.method)
    log.info("elimscan %s: %s, %d job(s), method %s", __version__, config.name, len(config.jobs()), engine.label)
    if config.method.solvent.model == "dielectric":
        log.warning("solvent model 'dielectric': tblite's ddX can abort the whole process on a failed calculation "
                    "(seen with tblite 0.8.0), and a single run then ends without results.json; 'elimscan batch' "
                    "runs each job in its own process and keeps the others")
    started = time.perf_counter()

    def progress(done: int, total: int, message: str) -> None:
        elapsed = time.perf_counter() - started
        if done == DETAIL:
            log.info("    %s (%.1f s elapsed)", message, elapsed)
            return
        left = f", about {elapsed / done * (total - done):.0f} s left" if 0 < done < total else ""
        log.info("[%d/%d] %s (%.1f s elapsed%s)", min(done + 1, total), total, message, elapsed, left)

    result, files = compute_run(config, engine, progress, geometries, shlex.join(sys.argv))
    for record in result.molecules:
        if record.status != "ok" and record.error is not None:
            log.warning("%s '%s' failed: %s", record.role, record.name, record.error.error_message)
    _write_files(out, files)
    n_failed = result.summary.n_jobs_failed
    _write_atomic(out / RESULTS_FILE, result.model_dump_json(indent=2) + "\n")
    from elimscan.output.files import build_report_files

    try:
        _write_files(out, build_report_files(out))
    except OutputError as err:  # the results are safe: say so, and how to get the report later
        raise OutputError(f"{err}; the results are complete in {out / RESULTS_FILE}: after freeing space, "
                          f"rebuild the report with: elimscan report {out}") from err
    log.info("%s", summary_table(result))
    for kind, count in result.summary.trouble.items():
        log.warning("numerical trouble recorded as data: %s: %d (see results.json)", kind, count)
    log.info("wrote %s in %.1f s (%d xTB gradients, cache hit ratio %.2f)", out / RESULTS_FILE,
             time.perf_counter() - started, engine.stats.misses, engine.stats.hit_ratio)
    return ExitCode.JOBS_FAILED if n_failed else ExitCode.OK


def _duration(seconds: float | None) -> str:
    """Return a short human duration ('45 s', '12 min', '3.5 h')."""
    if seconds is None:
        return "unknown"
    if seconds < 90:
        return f"{seconds:.0f} s"
    if seconds < 5400:
        return f"{seconds / 60:.0f} min"
    return f"{seconds / 3600:.1f} h"


class _BatchProgress:
    """Shows batch progress on stderr: a live status line on a terminal, else one plain line per finished job."""

    def __init__(self, stream=None):
        self.stream = stream or sys.stderr
        handlers = logging.getLogger("elimscan").handlers
        quiet = bool(handlers) and handlers[0].level > logging.INFO
        self.live = hasattr(self.stream, "isatty") and self.stream.isatty() and not quiet
        self._shown = False

    def _clear(self) -> None:
        if self._shown:
            self.stream.write("\r\x1b[K")
            self.stream.flush()
            self._shown = False

    def __call__(self, event) -> None:
        counts = f"{event.n_ok} ok, {event.n_failed} failed, {event.n_left} left of {event.n_jobs}"
        eta = "" if event.eta_s is None else f", about {_duration(event.eta_s)} left"
        if event.kind == "plan":
            log.debug("computing on %s", event.message)
            return
        if event.kind == "finish":
            self._clear()
            what = "ok" if event.status == "ok" else f"FAILED ({event.message})"
            log.info("[%s] %s %s in %s%s", counts, event.job_id, what, _duration(event.seconds), eta)
        elif event.kind == "start":
            log.debug("%s started on %s", event.job_id, event.message)
        if self.live and event.kind in ("start", "step", "tick", "finish"):
            running = "; ".join(f"{job}: {step}" for job, step in event.running) or "-"
            width = shutil.get_terminal_size((120, 20)).columns
            line = f"[{counts}{eta}] {running}"
            self.stream.write("\r\x1b[K" + line[: max(20, width - 1)])
            self.stream.flush()
            self._shown = True

    def close(self) -> None:
        """Remove the live line."""
        self._clear()


def _raise_interrupt(signum, frame) -> None:
    raise KeyboardInterrupt(f"signal {signum}")


def cmd_batch(args: argparse.Namespace) -> int:
    """Run the unfinished jobs of a batch config into a (re-enterable) output folder; return the exit code."""
    config = _with_engine(_read_config(args.config), args)
    if args.threads is None:  # before anything loads a backend or BLAS
        configure_threads(config.threads.per_process)
    from elimscan.batch.driver import BatchOptions, run_batch
    from elimscan.batch.lock import FolderLock, prepare_batch_folder
    from elimscan.batch.worker import LOG_FILE as BATCH_LOG

    executor = config.executor
    update = {}
    if args.scheduler:
        update.update(kind="dask", address=args.scheduler)
    if args.workers is not None:
        update["workers"] = args.workers
    if args.time_limit is not None:
        update["time_limit_seconds"] = args.time_limit
    if args.stage_time_limit is not None:
        update["stage_time_limit_seconds"] = args.stage_time_limit
    if update:
        from pydantic import ValidationError

        from elimscan.config import ExecutorConfig

        try:
            executor = ExecutorConfig.model_validate({**executor.model_dump(), **update})
        except ValidationError as err:
            raise ConfigError(f"command-line options: {err.errors()[0]['msg'].removeprefix('Value error, ')}",
                              key_path="executor") from err
        config = config.model_copy(update={"executor": executor})
    plan = _plan_batch(config, args.config)  # input errors in the YAML stop here, before any calculation
    out = Path(args.out)
    prepare_batch_folder(out)
    # test hooks, see DEVELOPERS.md: kill the driver at a known point
    kill_after = os.environ.get("ELIMSCAN_TEST_KILL_AFTER_COMMITS")
    kill_at = os.environ.get("ELIMSCAN_TEST_KILL_AT")
    options = BatchOptions(retry_failed=args.retry_failed, command_line=shlex.join(sys.argv),
                           kill_after_commits=int(kill_after) if kill_after else None,
                           kill_at=(kill_at.partition(":")[0], int(kill_at.partition(":")[2] or 1)) if kill_at else None)
    threads = args.threads or config.threads.per_process
    previous = signal.signal(signal.SIGTERM, _raise_interrupt)  # a scheduler's SIGTERM stops cleanly, like Ctrl-C
    progress = _BatchProgress()
    try:
        with FolderLock(out):
            _setup_logging(args.verbosity, out / BATCH_LOG)
            log.debug("command: %s", shlex.join(sys.argv))
            log.debug("versions: %s", json.dumps(environment_versions()))
            started = time.perf_counter()
            try:
                outcome = run_batch(plan, out, executor, threads, options, progress)
            except KeyboardInterrupt:
                progress.close()
                log.error("interrupted: every finished job is kept in %s; run the same command again to resume",
                          out / "batch.sqlite")
                raise
            progress.close()
            if outcome.n_computed == 0:
                log.info("nothing to compute: all %d job(s) of this config are finished in %s", outcome.n_jobs, out)
            if outcome.complete:
                from elimscan.output.files import build_report_files

                _write_files(out, build_report_files(out))
            for job_id, error in outcome.failures:
                log.warning("failed: %s: %s: %s", job_id, error.error_type, error.error_message)
            for kind, count in outcome.trouble.items():
                log.warning("numerical trouble recorded as data: %s: %d (see results.json)", kind, count)
            log.info("batch %s: %d ok, %d failed of %d job(s) (%d computed now, %d reused) in %.1f s; wrote %s",
                     config.name, outcome.n_ok, outcome.n_failed, outcome.n_jobs, outcome.n_computed,
                     outcome.n_reused, time.perf_counter() - started, out / RESULTS_FILE)
    finally:
        signal.signal(signal.SIGTERM, previous)
    return ExitCode.JOBS_FAILED if outcome.n_failed else ExitCode.OK


def cmd_status(args: argparse.Namespace) -> int:
    """Print the state of a batch folder from its store (read-only, also while the batch runs); return the exit code."""
    from elimscan.batch.status import read_status

    status = read_status(Path(args.out))
    if status.config_name is None:
        print(f"{status.out}: a batch store without runs")
        return ExitCode.OK
    if status.holder:
        state = f"running ({status.holder})"
    else:
        state = {"finished": "finished", "interrupted": "interrupted (Ctrl-C or SIGTERM); run the batch again to resume",
                 "stopped": "stopped without finishing (killed?); run the batch again to resume"}.get(
            status.run_state, "stopped without finishing (killed?); run the batch again to resume")
    print(f"batch '{status.config_name}' in {status.out}: {state}")
    print(f"  last started {status.run_started_utc} on {status.executor}")
    print(f"  jobs: {status.n_ok} ok, {status.n_failed} failed, {status.n_left} not finished, of {status.n_jobs}")
    if status.mean_job_seconds is not None:
        eta = f"; about {_duration(status.eta_s)} left" if status.eta_s is not None else ""
        print(f"  mean time per computed job: {_duration(status.mean_job_seconds)}{eta}")
    for job_id, worker, since, step in status.running:
        print(f"  running: {job_id} on {worker or '?'} since {since}: {step or 'starting'}")
    for job_id, error_type, message in status.failures:
        print(f"  failed: {job_id}: {error_type}: {message}")
    return ExitCode.OK


def cmd_summary(args: argparse.Namespace) -> int:
    """Print the summary table of a finished output folder; return the exit code."""
    from pydantic import ValidationError

    from elimscan.results.documents import RunResult
    from elimscan.output.text import summary_table

    path = Path(args.out) / RESULTS_FILE
    try:
        result = RunResult.model_validate_json(path.read_text(encoding="utf-8"))
    except OSError as err:
        raise OutputError(f"cannot read '{path}': {err.strerror or err}") from err
    except ValidationError as err:
        raise OutputError(f"'{path}' is not a valid elimscan result: {err.errors()[0]['msg']}") from err
    print(summary_table(result))
    return ExitCode.OK


def _write_files(out: Path, files: dict[str, bytes]) -> None:
    """Write {relative path: content} into the output folder, each through a temporary file and a rename."""
    from elimscan.atomicio import write_bytes_atomic

    for rel, content in files.items():
        write_bytes_atomic(out / rel, content)


def _checked_result_file(path: Path) -> None:
    """Raise OutputError when ``path`` is missing or does not match the results schema (problems are logged)."""
    from elimscan.output.files import validate_result_file

    if not path.is_file():
        raise OutputError(f"'{path}' not found: give an output folder of a finished run")
    problems = validate_result_file(path)
    for problem in problems:
        log.error("%s: %s", path, problem)
    if problems:
        raise OutputError(f"'{path}' does not match the results schema ({len(problems)} problem(s), listed above)")


def cmd_report(args: argparse.Namespace) -> int:
    """Rebuild summary.csv, plots/*.png and report.html of a finished output folder without computing; return the exit code."""
    from elimscan.output.files import build_report_files

    out = Path(args.out)
    if not (out / RESULTS_FILE).exists() and (out / "batch.sqlite").exists():
        raise OutputError(f"the batch in '{out}' has not finished yet (no {RESULTS_FILE}); finish it with "
                          f"'elimscan batch CONFIG --out {out}', follow it with 'elimscan status {out}'")
    _checked_result_file(out / RESULTS_FILE)
    files = build_report_files(out)
    _write_files(out, files)
    n_plots = sum(name.startswith("plots/") for name in files)
    log.info("wrote %s, %s and %d plot(s)", out / "report.html", out / "summary.csv", n_plots)
    return ExitCode.OK


def cmd_validate_results(args: argparse.Namespace) -> int:
    """Check a results JSON file against the results schema; return the exit code (3 when it does not match)."""
    from elimscan.output.files import validate_result_file

    problems = validate_result_file(args.file)
    for problem in problems:
        log.error("%s: %s", args.file, problem)
    if problems:
        log.error("%s: %d problem(s)", args.file, len(problems))
        return ExitCode.CONFIG
    log.info("%s: valid", args.file)
    return ExitCode.OK


def build_parser() -> argparse.ArgumentParser:
    """Return the argument parser of the elimscan command."""
    parser = argparse.ArgumentParser(prog="elimscan", description="GFN2-xTB barriers for every beta hydrogen of an E2 elimination, beside the geometric rule.")
    parser.add_argument("--version", action="version", version=f"elimscan {__version__}")
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("-v", "--verbose", dest="verbosity", action="store_const", const=1, default=0, help="more log output")
    common.add_argument("-q", "--quiet", dest="verbosity", action="store_const", const=-1, help="warnings and errors only")
    common.add_argument("--threads", type=int, default=None, help="OpenMP/BLAS threads per process (default: config, else 1)")
    sub = parser.add_subparsers(dest="command", required=True)
    p = sub.add_parser("info", parents=[common], help="print versions of Python, RDKit, ASE, numpy, the xTB backends, Sella, Dask "
                                                        "and the optional PySCF")
    p.set_defaults(func=cmd_info)
    p = sub.add_parser("validate", parents=[common], help="check a config without computing")
    p.add_argument("config")
    p.add_argument("--engine", default=None, metavar="MODULE:FUNCTION",
                   help="compute with a plug-in engine made by this factory instead of GFN2-xTB "
                        "(overrides method.engine_factory; see DEVELOPERS.md)")
    p.set_defaults(func=cmd_validate)
    p = sub.add_parser("run", parents=[common], help="run a config into an output folder")
    p.add_argument("config")
    p.add_argument("--out", required=True, help="output folder (refused if it holds a finished run)")
    p.add_argument("--overwrite", action="store_true", help="replace a finished run in --out")
    p.add_argument("--engine", default=None, metavar="MODULE:FUNCTION",
                   help="compute with a plug-in engine made by this factory instead of GFN2-xTB "
                        "(overrides method.engine_factory; see DEVELOPERS.md)")
    p.set_defaults(func=cmd_run)
    p = sub.add_parser("batch", parents=[common], help="run many jobs, resumable: computes only the jobs not yet "
                                                          "finished in --out")
    p.add_argument("config")
    p.add_argument("--out", required=True, help="batch output folder (created, or re-entered to resume)")
    p.add_argument("--workers", type=int, default=None,
                   help="local worker processes, one job each (default: executor.workers, else the core count)")
    p.add_argument("--time-limit", type=float, default=None, metavar="SECONDS",
                   help="stop a job running longer than this and record it as failed "
                        "(default: executor.time_limit_seconds, 14400)")
    p.add_argument("--stage-time-limit", type=float, default=None, metavar="SECONDS",
                   help="stop a job that stays longer than this in one stage (a substrate, a base, a job's paths) "
                        "and record it as failed (default: executor.stage_time_limit_seconds, none)")
    p.add_argument("--scheduler", default=None, metavar="ADDRESS",
                   help="send the jobs to this existing Dask scheduler (e.g. tcp://host:8786) instead of local workers")
    p.add_argument("--retry-failed", action="store_true", help="compute the jobs that failed before again")
    p.add_argument("--engine", default=None, metavar="MODULE:FUNCTION",
                   help="compute with a plug-in engine made by this factory instead of GFN2-xTB "
                        "(overrides method.engine_factory; see DEVELOPERS.md)")
    p.set_defaults(func=cmd_batch)
    p = sub.add_parser("status", parents=[common], help="summarise a running or finished batch folder (read-only)")
    p.add_argument("out", help="batch output folder")
    p.set_defaults(func=cmd_status)
    p = sub.add_parser("summary", parents=[common], help="print the summary table of a finished output folder")
    p.add_argument("out")
    p.set_defaults(func=cmd_summary)
    p = sub.add_parser("report", parents=[common], help="rebuild summary.csv, plots and report.html of a finished output folder")
    p.add_argument("out", help="output folder holding results.json")
    p.set_defaults(func=cmd_report)
    p = sub.add_parser("validate-results", parents=[common], help="check a results JSON file against the results schema")
    p.add_argument("file")
    p.set_defaults(func=cmd_validate_results)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the elimscan command line; return the process exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    configure_threads(args.threads or 1)
    _setup_logging(args.verbosity)
    try:
        return int(args.func(args))
    except ElimscanError as err:
        log.debug("error details", exc_info=True)
        log.error("error (%s): %s", err.error_type, err)
        return int(err.exit_code)
    except KeyboardInterrupt:
        log.error("interrupted")
        return 130
    except Exception:  # a bug: keep the traceback in the log file, a short line on the terminal
        log.debug("unexpected error", exc_info=True)
        log.error("unexpected internal error; the traceback is in the log file (run.log or batch.log in the "
                  "output folder) if one was opened, or rerun with -v",
                  exc_info=logging.getLogger("elimscan").handlers[0].level <= logging.DEBUG)
        return int(ExitCode.INTERNAL)


if __name__ == "__main__":
    sys.exit(main())
