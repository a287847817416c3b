"""Log records of the command: to stderr (level by -v/-q) and to a log file in the output folder; the lines a
command prints to standard output (``echo``), where a full disk is an output error."""

from __future__ import annotations

import logging
import os
import sys
from pathlib import Path

from elimscan.output.logsetup import LogFileHandler, PrintableFormatter
from elimscan.errors import OutputError


def setup_logging(verbosity: int, log_file: Path | None = None) -> None:
    """Send log records to stderr (level by -v/-q) and, when given, to a log file (DEBUG, with tracebacks)."""
    root = logging.getLogger("elimscan")
    root.handlers.clear()
    root.setLevel(logging.DEBUG)
    root.propagate = False
    stderr = logging.StreamHandler(sys.stderr)
    stderr.setLevel({-1: logging.WARNING, 0: logging.INFO}.get(verbosity, logging.DEBUG))
    # names reach the terminal with control characters escaped (a name may carry terminal escape sequences)
    stderr.setFormatter(PrintableFormatter("%(levelname)s %(message)s" if verbosity > 0 else "%(message)s"))
    root.addHandler(stderr)
    if log_file is not None:
        handler = LogFileHandler(log_file)  # a full disk stops the log file with one line, not a traceback each
        handler.setLevel(logging.DEBUG)
        handler.setFormatter(logging.Formatter("%(asctime)s %(levelname)s %(name)s: %(message)s"))
        root.addHandler(handler)


def discard_stdout() -> None:
    """Point standard output at /dev/null (after its reader left or its disk filled: Python's exit flush would fail)."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError):
        pass


def echo(text: str) -> None:
    """Print a line to standard output; raise OutputError when it cannot be written (a closed pipe stays BrokenPipeError)."""
    try:
        print(text)
    except BrokenPipeError:
        raise
    except OSError as err:
        discard_stdout()
        raise OutputError(f"cannot write to standard output: {err.strerror or err}") from err


def echo_flush() -> None:
    """Flush standard output; raise OutputError when it cannot be written (a closed pipe stays BrokenPipeError)."""
    try:
        sys.stdout.flush()
    except BrokenPipeError:
        raise
    except OSError as err:
        discard_stdout()
        raise OutputError(f"cannot write to standard output: {err.strerror or err}") from err
