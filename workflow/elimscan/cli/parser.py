"""The command's options (``build_parser``) and ``main``: dispatch, exit codes, errors without a traceback."""

from __future__ import annotations

import argparse
import logging
import shlex
import sys

from elimscan import __version__
from elimscan.cli.batch import cmd_batch
from elimscan.cli.commands import (cmd_check_results, cmd_info, cmd_report, cmd_status, cmd_summary,
                                   cmd_validate_results)
from elimscan.cli.plan import cmd_plan, cmd_validate
from elimscan.cli.logs import discard_stdout, echo_flush, setup_logging
from elimscan.cli.run import cmd_run
from elimscan.engines.threads import configure_threads
from elimscan.errors import ElimscanError, ExitCode

log = logging.getLogger("elimscan")


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
    for name, func, text in (("plan", cmd_plan, "check a config without computing (every problem at once) and print "
                                                 "what a run would do: leaving groups, beta-H classes and their "
                                                 "alkenes, jobs and a rough time"),
                             ("validate", cmd_validate, "old name of 'plan'")):
        p = sub.add_parser(name, parents=[common], help=text)
        p.add_argument("config")
        p.add_argument("--costs", default=None, metavar="DIR",
                       help="estimate the time from the finished jobs of this batch folder (its batch.json) instead "
                            "of the one measured job")
        p.add_argument("--engine", default=None, metavar="MODULE:FUNCTION",
                       help="compute with a plug-in engine made by this factory instead of GFN2-xTB "
                            "(overrides method.engine_factory; see DEVELOPERS.md)")
        p.set_defaults(func=func)
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
    p.add_argument("--rebuild-store", action="store_true",
                   help="the folder's store is damaged: move it aside and rebuild it from the job folders' job.json "
                        "files whose checksums hold, then resume")
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
    for name, func, text in (("check-results", cmd_check_results, "check a results JSON file against the results schema"),
                             ("validate-results", cmd_validate_results, "old name of 'check-results'")):
        p = sub.add_parser(name, parents=[common], help=text)
        p.add_argument("file")
        p.set_defaults(func=func)
    return parser


def _internal_error_hint(args: argparse.Namespace, argv: list[str]) -> str:
    """Return where the traceback of an unexpected error is: the open log file, else the command to rerun with -v."""
    for handler in logging.getLogger("elimscan").handlers:
        if isinstance(handler, logging.FileHandler):
            return f"the traceback is in {handler.baseFilename}"
    if args.verbosity > 0:
        return "the traceback is above"
    rest = [a for a in argv if a not in ("-q", "--quiet")]  # a later -q would silence the -v
    at = rest.index(args.command) + 1 if args.command in rest else len(rest)
    return f"see the traceback with: {shlex.join(['elimscan', *rest[:at], '-v', *rest[at:]])}"


def _stdout_closed() -> int:
    """Return the exit code for a reader that closed standard output early (``| head``): no message, no traceback."""
    discard_stdout()
    return int(ExitCode.PIPE_CLOSED)


def main(argv: list[str] | None = None) -> int:
    """Run the elimscan command line; return the process exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    args = parser.parse_args(argv)
    configure_threads(args.threads or 1)
    setup_logging(args.verbosity)
    try:
        code = int(args.func(args))
        echo_flush()
        return code
    except BrokenPipeError:
        return _stdout_closed()
    except ElimscanError as err:
        log.debug("error details", exc_info=True)
        log.error("error (%s): %s", err.error_type, err)
        return int(err.exit_code)
    except KeyboardInterrupt:
        log.error("interrupted")
        return 130
    except Exception:  # a bug: keep the traceback in the log file, a short line on the terminal
        log.debug("unexpected error", exc_info=True)
        log.error("unexpected internal error (a bug); %s", _internal_error_hint(args, argv))
        return int(ExitCode.INTERNAL)
