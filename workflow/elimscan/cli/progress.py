"""Batch progress on stderr: a live status line on a terminal, else one plain line per finished job."""

from __future__ import annotations

import logging
import shutil
import sys

from elimscan.output.text import duration_text

log = logging.getLogger("elimscan")


class BatchProgress:
    """Shows batch progress on stderr: a live status line on a terminal, else one plain line per finished job."""

    def __init__(self, stream=None):
        self.stream = stream or sys.stderr
        handlers = logging.getLogger("elimscan").handlers
        quiet = bool(handlers) and handlers[0].level > logging.INFO
        self.live = hasattr(self.stream, "isatty") and self.stream.isatty() and not quiet
        self._shown = False

    def _clear(self) -> None:
        if self._shown:
            self.stream.write("\r\x1b[K")
            self.stream.flush()
            self._shown = False

    def __call__(self, event) -> None:
        counts = f"{event.n_ok} ok, {event.n_failed} failed, {event.n_left} left of {event.n_jobs}"
        eta = "" if event.eta_s is None else f", about {duration_text(event.eta_s)} left"
        if event.kind == "plan":
            log.debug("computing on %s", event.message)
            return
        if event.kind == "finish":
            self._clear()
            what = "ok" if event.status == "ok" else f"FAILED ({event.message})"
            log.info("[%s] %s %s in %s%s", counts, event.job_id, what, duration_text(event.seconds), eta)
        elif event.kind == "start":
            log.debug("%s started on %s", event.job_id, event.message)
        if self.live and event.kind in ("start", "step", "tick", "finish"):
            running = "; ".join(f"{job}: {step}" for job, step in event.running) or "-"
            width = shutil.get_terminal_size((120, 20)).columns
            line = f"[{counts}{eta}] {running}"
            self.stream.write("\r\x1b[K" + line[: max(20, width - 1)])
            self.stream.flush()
            self._shown = True

    def close(self) -> None:
        """Remove the live line."""
        self._clear()
