"""The command line's log handlers: terminal lines with control characters escaped, a log file that stops with one
line on stderr when its disk fills up (instead of a traceback per record)."""

from __future__ import annotations

import errno
import logging
import os

from elimscan.output.logsetup import LogFileHandler, PrintableFormatter


class _FullDisk:
    """A stream whose every write and flush fails as on a full disk."""

    def write(self, text):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    def flush(self):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    def close(self):
        pass


def _logger(name: str, handler: logging.Handler) -> logging.Logger:
    logger = logging.getLogger(f"elimscan.test.{name}")
    logger.handlers[:] = [handler]
    logger.propagate = False
    logger.setLevel(logging.DEBUG)
    return logger


def test_a_log_file_on_a_full_disk_stops_with_one_line_and_no_traceback(tmp_path, capsys):
    path = tmp_path / "batch.log"
    handler = LogFileHandler(path)
    logger = _logger("full", handler)
    logger.info("before the disk filled up")
    handler.stream.close()
    handler.stream = _FullDisk()
    for n in range(5):
        logger.info("record %d", n)
    err = capsys.readouterr().err
    assert err == (f"disk full while writing '{path}': No space left on device; the log file stops here, messages go "
                   "on on the terminal\n")
    assert path.read_text() == "before the disk filled up\n"
    assert isinstance(handler.failure, OSError) and handler.failure.errno == errno.ENOSPC
    handler.close()


def test_the_terminal_formatter_escapes_names_in_every_line(capsys):
    import io

    stream = io.StringIO()
    handler = logging.StreamHandler(stream)
    handler.setFormatter(PrintableFormatter("%(message)s"))
    logger = _logger("printable", handler)
    logger.warning("job %s will fail: substrate '%s'", "x__methoxide", "\x1b[2Jx\u202e")
    logger.info("two lines\nkept apart")
    assert stream.getvalue() == "job x__methoxide will fail: substrate '\\x1b[2Jx\\u202e'\ntwo lines\nkept apart\n"
