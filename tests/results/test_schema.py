"""The committed JSON Schema files are exactly what the result models export (draft 2020-12)."""

from __future__ import annotations

import json
from pathlib import Path

import jsonschema
import pytest

from elimscan.results.schema import SCHEMA_MODELS, schema_text

ROOT = Path(__file__).resolve().parents[2]


@pytest.mark.parametrize("file_name", sorted(SCHEMA_MODELS))
def test_committed_schema_is_current(file_name):
    committed = (ROOT / "results-schema" / file_name).read_text()
    assert committed == schema_text(file_name), "run 'make schema' and commit results-schema/"


@pytest.mark.parametrize("file_name", sorted(SCHEMA_MODELS))
def test_schema_is_valid_draft_2020_12_and_closed(file_name):
    schema = json.loads((ROOT / "results-schema" / file_name).read_text())
    jsonschema.Draft202012Validator.check_schema(schema)
    assert schema["$schema"].endswith("2020-12/schema") and schema["$id"].endswith(file_name)
    assert schema["additionalProperties"] is False
    assert all(d.get("additionalProperties") is False for d in schema["$defs"].values() if d.get("type") == "object")
