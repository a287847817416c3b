"""Output folders of the command: file names, a finished run refused, files written through a rename, results checked."""

from __future__ import annotations

import logging
from pathlib import Path

from elimscan.errors import OutputError

log = logging.getLogger("elimscan")

RESULTS_FILE = "results.json"
PARTIAL_FILE = "results.partial.json"
LOG_FILE = "run.log"


def prepare_output(out: Path, overwrite: bool) -> None:
    """Create the output folder; refuse one holding a finished run unless ``overwrite``."""
    from elimscan.batch.store import STORE_FILE

    if (out / STORE_FILE).exists():
        raise OutputError(f"output folder '{out}' holds a batch ({STORE_FILE}); 'elimscan run' needs a folder of its "
                          f"own (a batch folder is re-entered with: elimscan batch CONFIG --out {out})")
    finished = out / RESULTS_FILE
    if finished.exists() and not overwrite:
        raise OutputError(f"output folder '{out}' already holds a finished run ({RESULTS_FILE}); "
                          "choose another --out or pass --overwrite")
    try:
        out.mkdir(parents=True, exist_ok=True)
        probe = out / ".write-test"
        probe.write_text("ok", encoding="utf-8")
        probe.unlink()
        if finished.exists():
            finished.unlink()
    except OSError as err:
        raise OutputError(f"cannot write to output folder '{out}': {err.strerror or err}") from err


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
