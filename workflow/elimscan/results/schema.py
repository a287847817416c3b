"""The JSON Schema files (draft 2020-12) exported from the result documents.

``python -m elimscan.results.schema DIR`` writes the schema files (``make schema``: into results-schema/).
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Any

from pydantic import BaseModel

from elimscan.results.documents import BatchIndex, FinishedJobCopy, RunResult

SCHEMA_BASE_URI = "https://elimscan.invalid/results-schema"

#: schema file name -> model
SCHEMA_MODELS: dict[str, type[BaseModel]] = {"result.schema.json": RunResult, "batch.schema.json": BatchIndex,
                                             "job.schema.json": FinishedJobCopy}


def json_schema(model: type[BaseModel], file_name: str) -> dict[str, Any]:
    """Return the draft 2020-12 JSON Schema of a result model, with $schema and $id."""
    schema = model.model_json_schema(mode="serialization")
    return {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "$id": f"{SCHEMA_BASE_URI}/{file_name}",
        **schema,
    }


def schema_text(file_name: str) -> str:
    """Return the JSON Schema text of one schema file (stable key order, trailing newline)."""
    return json.dumps(json_schema(SCHEMA_MODELS[file_name], file_name), indent=2, sort_keys=True) + "\n"


def write_schemas(folder: str | Path) -> list[Path]:
    """Write every schema file into ``folder``; return their paths."""
    out = Path(folder)
    out.mkdir(parents=True, exist_ok=True)
    paths = []
    for name in SCHEMA_MODELS:
        path = out / name
        path.write_text(schema_text(name), encoding="utf-8")
        paths.append(path)
    return paths


if __name__ == "__main__":
    for written in write_schemas(sys.argv[1] if len(sys.argv) > 1 else "results-schema"):
        print(written)
