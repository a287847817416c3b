"""``elimscan batch``: the unfinished jobs of a config on worker processes or Dask, into a re-enterable folder."""

from __future__ import annotations

import argparse
import json
import logging
import os
import shlex
import signal
import sys
import time
from pathlib import Path

from elimscan.cli.folders import RESULTS_FILE, write_files
from elimscan.cli.inputs import check_batch_inputs, read_config, warn_sizes, with_engine
from elimscan.cli.logs import setup_logging
from elimscan.cli.progress import BatchProgress
from elimscan.engines.threads import configure_threads
from elimscan.errors import ConfigError, ExitCode
from elimscan.versions import environment_versions

log = logging.getLogger("elimscan")


def _raise_interrupt(signum, frame) -> None:
    raise KeyboardInterrupt(f"signal {signum}")


def cmd_batch(args: argparse.Namespace) -> int:
    """Run the unfinished jobs of a batch config into a (re-enterable) output folder; return the exit code."""
    config = with_engine(read_config(args.config), args)
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
    plan, _ = check_batch_inputs(config, args.config)  # every input error of the YAML stops here, before any calculation
    warn_sizes((job.job_id, job.substrate_smiles, job.base.smiles) for job in plan.jobs if job.input_error is None)
    out = Path(args.out)
    prepare_batch_folder(out, plan.input_files)  # an input among the batch's own files is refused
    # test hooks, see DEVELOPERS.md: kill the driver at a known point
    kill_after = os.environ.get("ELIMSCAN_TEST_KILL_AFTER_COMMITS")
    kill_at = os.environ.get("ELIMSCAN_TEST_KILL_AT")
    options = BatchOptions(retry_failed=args.retry_failed, rebuild_store=args.rebuild_store,
                           command_line=shlex.join(sys.argv),
                           kill_after_commits=int(kill_after) if kill_after else None,
                           kill_at=(kill_at.partition(":")[0], int(kill_at.partition(":")[2] or 1)) if kill_at else None)
    threads = args.threads or config.threads.per_process
    previous = signal.signal(signal.SIGTERM, _raise_interrupt)  # a scheduler's SIGTERM stops cleanly, like Ctrl-C
    progress = BatchProgress()
    try:
        with FolderLock(out, "batch"):
            prepare_batch_folder(out)  # again under the lock: a run may have finished into this folder meanwhile
            setup_logging(args.verbosity, out / BATCH_LOG)
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

                write_files(out, build_report_files(out))
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
