"""The commands that compute nothing: info, validate, status, summary, report, validate-results."""

from __future__ import annotations

import argparse
import logging
from pathlib import Path

from elimscan.cli.folders import RESULTS_FILE, checked_result_file, write_files
from elimscan.cli.inputs import (batch_only, check_models, check_structures, plan_located, read_config, warn_sizes,
                                 with_engine)
from elimscan.cli.logs import echo
from elimscan.errors import ExitCode, OutputError
from elimscan.versions import environment_versions

log = logging.getLogger("elimscan")


def cmd_info(args: argparse.Namespace) -> int:
    """Print versions of Python and the libraries; return the exit code."""
    for name, version in environment_versions().items():
        echo(f"{name:<17} {version}")
    return ExitCode.OK


def cmd_validate(args: argparse.Namespace) -> int:
    """Check a config (its SMILES, base models and geometry files) without computing; return the exit code."""
    from elimscan.batch.inputs import read_geometries
    from elimscan.pipeline.names import job_id_of

    config = with_engine(read_config(args.config), args)
    if batch_only(config):
        plan = plan_located(config, args.config)
        check_models(config, args.config, read_geometries(config, Path(args.config).parent))
        for job in plan.jobs:
            if job.input_error is not None:
                log.warning("job %s will fail: %s", job.job_id, job.input_error.error_message)
        warn_sizes((job.job_id, job.substrate_smiles, job.base.smiles) for job in plan.jobs if job.input_error is None)
        log.info("%s: valid batch config (%d jobs, %d of them fail on their input)", args.config, len(plan.jobs),
                 plan.n_input_failures)
        return ExitCode.OK
    check_structures(config, args.config)
    check_models(config, args.config, read_geometries(config, Path(args.config).parent))
    warn_sizes((job_id_of(s.name, b.name), s.smiles, b.smiles) for s, b in config.jobs())
    log.info("%s: valid (%d substrates, %d bases, %d jobs)", args.config, len(config.substrates),
             len(config.bases), len(config.jobs()))
    return ExitCode.OK


def cmd_status(args: argparse.Namespace) -> int:
    """Print the state of a batch folder from its store (read-only, also while the batch runs); return the exit code."""
    from elimscan.batch.status import read_status, status_lines

    for line in status_lines(read_status(Path(args.out))):
        echo(line)
    return ExitCode.OK


def cmd_summary(args: argparse.Namespace) -> int:
    """Print the summary table of a finished output folder; return the exit code."""
    from elimscan.output.files import read_result
    from elimscan.output.text import summary_table

    echo(summary_table(read_result(args.out)))
    return ExitCode.OK


def cmd_report(args: argparse.Namespace) -> int:
    """Rebuild summary.csv, plots/*.png and report.html of a finished output folder without computing; return the exit code."""
    from elimscan.output.files import build_report_files

    out = Path(args.out)
    if not (out / RESULTS_FILE).exists() and (out / "batch.sqlite").exists():
        raise OutputError(f"the batch in '{out}' has not finished yet (no {RESULTS_FILE}); finish it with "
                          f"'elimscan batch CONFIG --out {out}', follow it with 'elimscan status {out}'")
    checked_result_file(out / RESULTS_FILE)
    files = build_report_files(out)
    write_files(out, files)
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
