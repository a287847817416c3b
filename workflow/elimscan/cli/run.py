"""``elimscan run``: one config computed in this process into an output folder.

The folder is locked as a batch's is (one run or batch at a time). results.json is written first, through a
temporary file and a rename, so a finished run it replaces stays until the new one is complete; the other files
follow, each on its own: one that cannot be written is reported and the rest are kept.
"""

from __future__ import annotations

import argparse
import json
import logging
import shlex
import sys
import time
from pathlib import Path

from elimscan import __version__
from elimscan.cli.folders import (LOG_FILE, RESULTS_FILE, check_output, create_output, remove_previous_files,
                                  write_atomic, write_each)
from elimscan.cli.inputs import batch_only, check_inputs, read_config, warn_sizes, with_engine
from elimscan.cli.logs import setup_logging
from elimscan.cli.progress import RunProgress
from elimscan.engines.threads import configure_threads
from elimscan.errors import ConfigError, ExitCode, OutputError
from elimscan.versions import environment_versions

log = logging.getLogger("elimscan")


def cmd_run(args: argparse.Namespace) -> int:
    """Run a config into an output folder; return the exit code."""
    config = with_engine(read_config(args.config), args)
    if batch_only(config):
        raise ConfigError(f"{args.config} uses {' and '.join(batch_only(config))}, which only 'elimscan batch' reads; "
                          f"run it with: elimscan batch {args.config} --out DIR", key_path=batch_only(config)[0])
    if args.threads is None:  # before the backends load
        configure_threads(config.threads.per_process)
    geometries = check_inputs(config, args.config)  # every input error, at once, before any calculation
    from elimscan.batch.lock import FolderLock
    from elimscan.pipeline.names import job_id_of

    out = Path(args.out)
    check_output(out, args.overwrite)  # refusals that change nothing come first
    warn_sizes((job_id_of(s.name, b.name), s.smiles, b.smiles) for s, b in config.jobs())
    create_output(out)
    with FolderLock(out, "run"):  # one run or batch at a time per folder
        check_output(out, args.overwrite)  # again under the lock: another run may have finished meanwhile
        setup_logging(args.verbosity, out / LOG_FILE)
        log.debug("command: %s", shlex.join(sys.argv))
        log.debug("versions: %s", json.dumps(environment_versions()))
        return _compute_and_write(config, geometries, out)


#: the replay log of a run (``batch.replaylog``) in its output folder: a run killed half-way and started again in
#: the same folder is served the single points it had finished; removed once results.json is written
RUN_REPLAY_FILE = Path("replay") / "run.replay"


def _compute_and_write(config, geometries: dict[str, tuple[str, str]], out: Path) -> int:
    """Compute the run and write its files (results.json first); return the exit code."""
    from elimscan.batch.replaylog import ReplayLog, drop_empty_folder, remove_log
    from elimscan.engines.factory import make_engine
    from elimscan.output.files import load_benchmark_record
    from elimscan.output.text import summary_table
    from elimscan.pipeline.compute import run_steps
    from elimscan.pipeline.jobs import compute_run

    engine = make_engine(config.method)
    log.info("elimscan %s: %s, %d job(s), method %s", __version__, config.name, len(config.jobs()), engine.label)
    if config.method.solvent.model == "dielectric":
        log.warning("solvent model 'dielectric': tblite's ddX can abort the whole process on a failed calculation "
                    "(seen with tblite 0.8.0), and a single run then ends without results.json; 'elimscan batch' "
                    "runs each job in its own process and keeps the others")
    started = time.perf_counter()
    replay = ReplayLog(out / RUN_REPLAY_FILE)
    if len(replay):
        log.info("starting over: %d single point(s) finished by a stopped earlier run in this folder are served from "
                 "its replay log %s", len(replay), replay.path)
    progress = RunProgress(run_steps(config))  # one counter for the whole run
    try:
        result, files = compute_run(config, engine, progress, geometries, shlex.join(sys.argv), replay)
    finally:
        replay.close()
    progress.close()
    for record in result.molecules:
        if record.status != "ok" and record.error is not None:
            log.warning("%s '%s' failed: %s", record.role, record.name, record.error.error_message)
    replacing = (out / RESULTS_FILE).exists()
    try:  # the results first: a file that fails later cannot take them with it
        write_atomic(out / RESULTS_FILE, result.model_dump_json(indent=2) + "\n")
    except OutputError as err:
        kept = f"; the previous {RESULTS_FILE} is kept unchanged" if replacing else ""
        raise OutputError(f"{err}: the results of this run could not be saved{kept}") from err
    remove_log(out / RUN_REPLAY_FILE)  # the results are kept: the log has served its purpose
    drop_empty_folder((out / RUN_REPLAY_FILE).parent)
    if replay.served:
        log.info("%d single point(s) were served from the replay log of a stopped earlier run", replay.served)
    problems = remove_previous_files(out) if replacing else []
    problems += write_each(out, files)
    from elimscan.output.files import build_report_files

    try:
        problems += write_each(out, build_report_files(out))
    except OutputError as err:
        problems.append(str(err))
    log.info("%s", summary_table(result, load_benchmark_record()))
    for kind, count in result.summary.trouble.items():
        log.warning("numerical trouble recorded as data: %s: %d (see results.json)", kind, count)
    for problem in problems:
        log.warning("not written: %s", problem)
    if problems:
        raise OutputError(f"{len(problems)} file(s) could not be written (first: {problems[0]}); the results are "
                          f"complete in {out / RESULTS_FILE} and every other file was kept: after freeing space or "
                          f"fixing the folder, rebuild the report with: elimscan report {out}")
    log.info("wrote %s in %.1f s (%d xTB gradients, cache hit ratio %.2f)", out / RESULTS_FILE,
             time.perf_counter() - started, engine.stats.misses, engine.stats.hit_ratio)
    return ExitCode.JOBS_FAILED if result.summary.n_jobs_failed else ExitCode.OK
