"""Log handlers for the command line: terminal lines with names escaped, and a log file that survives a full disk.

``PrintableFormatter`` escapes control characters (terminal escape sequences in user-given names) in every
line it formats (``text.printable``). ``LogFileHandler`` is a log file in an output folder: when a write to it
fails (the disk filled up, a file-size limit), it says so once on stderr, in one line, and stops writing,
where ``logging.FileHandler`` prints a traceback with its call stack for every later record.
"""

from __future__ import annotations

import logging
import sys

from elimscan.atomicio import write_error
from elimscan.output.text import printable


class PrintableFormatter(logging.Formatter):
    """A formatter whose output is printable: each line escaped with ``text.printable`` (line breaks kept)."""

    def format(self, record: logging.LogRecord) -> str:
        """Return the formatted record with control characters escaped in every line."""
        return "\n".join(printable(line) for line in super().format(record).split("\n"))


class LogFileHandler(logging.FileHandler):
    """A UTF-8 log file that stops, with one line on stderr, at its first failed write (``failure`` holds it)."""

    def __init__(self, path, mode: str = "a"):
        super().__init__(path, mode=mode, encoding="utf-8")
        self.failure: OSError | None = None

    def emit(self, record: logging.LogRecord) -> None:
        """Write the record, unless an earlier write to this file failed."""
        if self.failure is None:
            super().emit(record)

    def handleError(self, record: logging.LogRecord) -> None:
        """Stop writing on an OSError and say so once on stderr (other errors: logging's usual report)."""
        error = sys.exc_info()[1]
        if not isinstance(error, OSError):
            super().handleError(record)
            return
        self.failure = error
        try:
            self.close()
        except OSError:  # flushing what is buffered fails the same way
            self.stream = None
        if sys.stderr is not None:
            sys.stderr.write(f"{printable(str(write_error(self.baseFilename, error)))}; the log file stops here, "
                             "messages go on on the terminal\n")
