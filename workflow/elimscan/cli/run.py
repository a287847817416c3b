"""``elimscan run``: one config computed in this process into an output folder."""

from __future__ import annotations

import argparse
import json
import logging
import shlex
import sys
import time
from pathlib import Path

from elimscan import __version__
from elimscan.cli.folders import LOG_FILE, RESULTS_FILE, prepare_output, write_atomic, write_files
from elimscan.cli.inputs import batch_only, check_structures, read_config, with_engine
from elimscan.cli.logs import setup_logging
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
    check_structures(config, args.config)  # input errors stop the run before any calculation
    from elimscan.batch.inputs import read_geometries

    geometries = read_geometries(config, Path(args.config).parent)
    out = Path(args.out)
    prepare_output(out, args.overwrite)
    setup_logging(args.verbosity, out / LOG_FILE)
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
    write_files(out, files)
    n_failed = result.summary.n_jobs_failed
    write_atomic(out / RESULTS_FILE, result.model_dump_json(indent=2) + "\n")
    from elimscan.output.files import build_report_files

    try:
        write_files(out, build_report_files(out))
    except OutputError as err:  # the results are safe: say so, and how to get the report later
        raise OutputError(f"{err}; the results are complete in {out / RESULTS_FILE}: after freeing space, "
                          f"rebuild the report with: elimscan report {out}") from err
    log.info("%s", summary_table(result))
    for kind, count in result.summary.trouble.items():
        log.warning("numerical trouble recorded as data: %s: %d (see results.json)", kind, count)
    log.info("wrote %s in %.1f s (%d xTB gradients, cache hit ratio %.2f)", out / RESULTS_FILE,
             time.perf_counter() - started, engine.stats.misses, engine.stats.hit_ratio)
    return ExitCode.JOBS_FAILED if n_failed else ExitCode.OK
