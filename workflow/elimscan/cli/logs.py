"""Log records of the command: to stderr (level by -v/-q) and to a log file in the output folder."""

from __future__ import annotations

import logging
import sys
from pathlib import Path

from elimscan.output.logsetup import LogFileHandler, PrintableFormatter


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
