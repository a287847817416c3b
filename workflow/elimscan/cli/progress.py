"""Progress on stderr: the batch's live status line on a terminal (else one plain line per finished job), and the
run's one counter over all its steps with the time left from measured steps."""

from __future__ import annotations

import logging
import shutil
import sys
import time
from collections.abc import Callable

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


class RunProgress:
    """The run's one counter: '[k/n] step (elapsed, about T left)' over substrates, bases and jobs, to the log.

    ``kinds`` names every step in order ('substrate', 'base', 'job'; pipeline.compute.run_steps). The time left is
    the measured mean duration of each kind times the steps of that kind still to come, shown only once every kind
    still to come has a finished step (a substrate's time says nothing about a job's paths).
    """

    def __init__(self, kinds: list[str], clock: Callable[[], float] = time.perf_counter):
        self.kinds = list(kinds)
        self.clock = clock
        self.started = clock()
        self.durations_s: dict[str, list[float]] = {}
        self._current: tuple[int, float] | None = None

    def _finish_current(self, now: float) -> None:
        if self._current is not None:
            step, began = self._current
            self.durations_s.setdefault(self.kinds[step], []).append(now - began)
            self._current = None

    def eta_s(self, step: int) -> float | None:
        """Return the time left (s) with step ``step`` (0-based) starting now, or None before it can be measured."""
        left = 0.0
        for kind in self.kinds[step:]:
            measured = self.durations_s.get(kind)
            if not measured:
                return None
            left += sum(measured) / len(measured)
        return left

    def __call__(self, done: int, total: int, message: str) -> None:
        """Log one step's start ('[k/n] ...') or, with done == DETAIL (-1), a sub-step message."""
        now = self.clock()
        elapsed = duration_text(now - self.started)
        if done < 0:
            log.info("    %s (%s elapsed)", message, elapsed)
            return
        self._finish_current(now)
        self._current = (done, now)
        eta = self.eta_s(done) if done < len(self.kinds) else None
        left = "" if eta is None else f", about {duration_text(eta)} left"
        log.info("[%d/%d] %s (%s elapsed%s)", done + 1, total, message, elapsed, left)

    def close(self) -> None:
        """Count the last step as finished."""
        self._finish_current(self.clock())
