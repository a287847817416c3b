"""Known failures as data: one of our errors becomes the ``ErrorInfo`` a record carries."""

from __future__ import annotations

from elimscan.errors import ElimscanError
from elimscan.results.records import ErrorInfo


def error_info(err: ElimscanError) -> ErrorInfo:
    """Return the ErrorInfo record (error_type, error_message) of one of our errors."""
    return ErrorInfo(error_type=err.error_type, error_message=str(err))
