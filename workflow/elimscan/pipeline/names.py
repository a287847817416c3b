"""File and folder names inside an output folder, relative to it, from user-given names."""

from __future__ import annotations

from elimscan.config.names import safe_name

__all__ = ["conformer_file_name", "job_id_of", "path_file_name", "safe_name", "scan_file_name"]


def scan_file_name(substrate: str, class_id: str, index: int) -> str:
    """Return the output-relative path of one scan trajectory."""
    return f"substrates/{safe_name(substrate)}/scan-{safe_name(class_id)}-{index}.xyz"


def conformer_file_name(substrate: str) -> str:
    """Return the output-relative path of a substrate's conformer SDF."""
    return f"substrates/{safe_name(substrate)}/conformers.sdf"


def path_file_name(job_id: str, class_id: str, approach: str, kind: str = "path") -> str:
    """Return the output-relative path of a path ('path') or saddle ('saddle') trajectory."""
    return f"jobs/{safe_name(job_id)}/{kind}-{safe_name(class_id)}-{approach}.xyz"


def job_id_of(substrate: str, base: str) -> str:
    """Return the id (and folder name under jobs/) of a job: its substrate's and base's file-name-safe names."""
    return f"{safe_name(substrate)}__{safe_name(base)}"
