"""The commands that compute nothing: info, status, summary, report, check-results (``plan`` is in plan.py)."""

from __future__ import annotations

import argparse
import logging
from pathlib import Path

from elimscan.cli.folders import RESULTS_FILE, checked_result_file, write_files
from elimscan.cli.logs import echo
from elimscan.errors import ExitCode, OutputError
from elimscan.versions import environment_versions

log = logging.getLogger("elimscan")


def cmd_info(args: argparse.Namespace) -> int:
    """Print versions of Python and the libraries; return the exit code."""
    for name, version in environment_versions().items():
        echo(f"{name:<17} {version}")
    return ExitCode.OK


def cmd_status(args: argparse.Namespace) -> int:
    """Print the state of a batch folder from its store (read-only, also while the batch runs); return the exit code."""
    from elimscan.batch.status import read_status, status_lines

    for line in status_lines(read_status(Path(args.out))):
        echo(line)
    return ExitCode.OK


def cmd_summary(args: argparse.Namespace) -> int:
    """Print the summary table of a finished output folder; return the exit code."""
    from elimscan.output.files import load_benchmark_record, read_result
    from elimscan.output.text import summary_table

    echo(summary_table(read_result(args.out), load_benchmark_record()))
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


def cmd_check_results(args: argparse.Namespace) -> int:
    """Check a results JSON file against the results schema; return the exit code (3 when it does not match)."""
    from elimscan.output.files import validate_result_file

    problems = validate_result_file(args.file)
    for problem in problems:
        log.error("%s: %s", args.file, problem)
    if problems:
        log.error("%s: %d problem(s)", args.file, len(problems))
        return ExitCode.CONFIG
    log.info("%s: matches the results schema", args.file)
    return ExitCode.OK


def cmd_validate_results(args: argparse.Namespace) -> int:
    """The old name of ``check-results``: print a one-line notice, then check; return the exit code."""
    log.warning("note: 'elimscan validate-results' is now 'elimscan check-results' (the old name still works for now)")
    return cmd_check_results(args)
