"""The ``elimscan`` command: info, plan, run, batch, status, summary, report, check-results. Orchestrates; computes nothing itself.

Logs go to stderr and to ``OUT/run.log``; results go only to files. Exit codes: see errors.ExitCode. With
``batch/``, the only code that reads files named by the user or writes output folders.

- ``parser``: ``build_parser`` (every subcommand and option) and ``main`` (dispatch, exit codes, an error as
  one line without a traceback)
- ``logs``: log records to stderr (``-v``/``-q``) and to the output folder's log file; ``echo`` to standard output
- ``inputs``: the config read (size-bounded, UTF-8), the ``--engine`` plug-in checked, every molecule, base model
  and geometry file checked before any calculation, size warnings, the batch plan; input errors located by file,
  key path and YAML line
- ``folders``: output file names, a finished run refused without ``--overwrite``, files written through a
  rename (each on its own), a replaced run's files removed, a results file checked against its schema
- ``run``: ``elimscan run`` (one config in this process, under the folder lock; results.json written first)
- ``batch``: ``elimscan batch`` (executor options from the command line, the folder lock, SIGTERM as Ctrl-C)
- ``progress``: the batch's live status line on a terminal, one line per finished job elsewhere; the run's one
  counter over all its steps, with a time left once a step of each kind still to come has been measured
- ``plan``: ``elimscan plan`` (every input problem at once, then per substrate the leaving group, beta-H classes
  with 1-based atom numbers and their alkenes, the jobs and a rough time from measured costs, to standard output);
  ``validate`` is its old name
- ``commands``: the other commands that compute nothing: info, status, summary, report, check-results (old name
  validate-results)
"""

from __future__ import annotations

from elimscan.cli.parser import build_parser, main

__all__ = ["build_parser", "main"]
