"""The report files of the fixture runs, built once for every output test that asks for ``built``."""

from __future__ import annotations

import pytest

from elimscan.output.files import build_report_files

from reportfixture import ALL_RUNS, FIXTURES


@pytest.fixture(scope="session")
def built() -> dict[str, dict[str, bytes]]:
    """Return {run: report files} built once per session from the fixtures."""
    return {run: build_report_files(FIXTURES / run) for run in ALL_RUNS}
