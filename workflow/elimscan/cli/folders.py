"""Output folders of the command: file names, a finished run refused, files written through a rename (each on its
own: one that fails does not stop the others), a replaced run's files removed, results checked."""

from __future__ import annotations

import logging
from pathlib import Path

from elimscan.errors import OutputError

log = logging.getLogger("elimscan")

RESULTS_FILE = "results.json"
LOG_FILE = "run.log"
#: what a run writes besides results.json and run.log: report files, and files of these suffixes in these folders
REPORT_FILES = ("summary.csv", "series.csv", "report.html")
RUN_FOLDERS = ("jobs", "substrates", "structures", "plots", "report")
RUN_SUFFIXES = (".xyz", ".sdf", ".png", ".html")


def check_output(out: Path, overwrite: bool) -> None:
    """Raise OutputError when ``out`` holds a batch, or a finished run and not ``overwrite``; change nothing."""
    from elimscan.batch.store import STORE_FILE

    if (out / STORE_FILE).exists():
        raise OutputError(f"output folder '{out}' holds a batch ({STORE_FILE}); 'elimscan run' needs a folder of its "
                          f"own (a batch folder is re-entered with: elimscan batch CONFIG --out {out})")
    if (out / RESULTS_FILE).exists() and not overwrite:
        raise OutputError(f"output folder '{out}' already holds a finished run ({RESULTS_FILE}); "
                          "choose another --out or pass --overwrite")


def create_output(out: Path) -> None:
    """Create the output folder and check that it takes files (a finished run in it stays until replaced)."""
    try:
        out.mkdir(parents=True, exist_ok=True)
        probe = out / ".write-test"
        probe.write_text("ok", encoding="utf-8")
        probe.unlink()
    except OSError as err:
        raise OutputError(f"cannot write to output folder '{out}': {err.strerror or err}") from err


def remove_previous_files(out: Path) -> list[str]:
    """Remove a replaced run's trajectories, structures, plots and report from ``out``; return the problems."""
    problems = []
    doomed = [out / name for name in REPORT_FILES]
    for folder in RUN_FOLDERS:
        if (out / folder).is_dir():
            doomed += [p for p in (out / folder).rglob("*") if p.suffix in RUN_SUFFIXES and not p.is_dir()]
    for path in doomed:
        try:
            path.unlink(missing_ok=True)
        except OSError as err:
            problems.append(f"cannot remove the replaced run's '{path}': {err.strerror or err}")
    return problems


def write_each(out: Path, files: dict[str, bytes]) -> list[str]:
    """Write {relative path: content} into ``out``, each atomically; return the problems of files not written.

    A file that cannot be written (a read-only subfolder, a name too long, a full disk) does not stop the others.
    """
    from elimscan.atomicio import write_bytes_atomic

    problems = []
    for rel, content in files.items():
        try:
            write_bytes_atomic(out / rel, content)
        except OutputError as err:
            problems.append(str(err))
    return problems


def write_atomic(path: Path, text: str) -> None:
    """Write text to ``path`` through a temporary file and a rename (never a half-written file)."""
    from elimscan.atomicio import write_text_atomic

    write_text_atomic(path, text)


def write_files(out: Path, files: dict[str, bytes]) -> None:
    """Write {relative path: content} into the output folder, each through a temporary file and a rename."""
    from elimscan.atomicio import write_bytes_atomic

    for rel, content in files.items():
        write_bytes_atomic(out / rel, content)


def checked_result_file(path: Path) -> None:
    """Raise OutputError when ``path`` is missing or does not match the results schema (problems are logged)."""
    from elimscan.output.files import validate_result_file

    if not path.is_file():
        raise OutputError(f"'{path}' not found: give an output folder of a finished run")
    problems = validate_result_file(path)
    for problem in problems:
        log.error("%s: %s", path, problem)
    if problems:
        raise OutputError(f"'{path}' does not match the results schema ({len(problems)} problem(s), listed above)")
