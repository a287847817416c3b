"""`run` and `batch` build results.json with one builder: on the same one-job config the two documents are
equal apart from times, the command line and folder names (toy engine, so the numbers are the toy model's)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

from toyjobs import TOY_SETTINGS, without_timings

ROOT = Path(__file__).resolve().parents[2]
TESTS = Path(__file__).resolve().parents[1]
CONFIG = TOY_SETTINGS + """\
name: one-job
substrates:
  - {name: 2-chloropropane, smiles: "CC(C)Cl"}
bases:
  - {name: methoxide}
executor: {workers: 1}
"""
#: what may differ: when and how each document was made
VOLATILE = {"created_utc", "command_line"}
#: fields that name an output file: a batch keeps each job's files in a folder of its own
FILE_FIELDS = {"conformer_file", "xyz_file", "path_file", "saddle_file", "complex_file", "product_file"}


def _elimscan(*args: str) -> subprocess.CompletedProcess:
    path = os.pathsep.join([str(TESTS / "support"), str(ROOT / "workflow"), os.environ.get("PYTHONPATH", "")])
    return subprocess.run([sys.executable, "-m", "elimscan", *args, "--engine", "toyjobs:toy_engine"],
                          capture_output=True, text=True, timeout=300, env={**os.environ, "PYTHONPATH": path})


def _document(out: Path) -> dict:
    document = without_timings(json.loads((out / "results.json").read_text()))
    document["provenance"] = {k: v for k, v in document["provenance"].items() if k not in VOLATILE}
    return document


def _differences(a, b, where: str = "") -> list[str]:
    """Return the paths at which two JSON values differ."""
    if where.rsplit(".", 1)[-1] in FILE_FIELDS and isinstance(a, str) and isinstance(b, str):
        return [] if Path(a).name == Path(b).name else [f"{where}: {a!r} != {b!r}"]
    if isinstance(a, dict) and isinstance(b, dict):
        return [d for k in sorted(set(a) | set(b)) for d in _differences(a.get(k), b.get(k), f"{where}.{k}")]
    if isinstance(a, list) and isinstance(b, list) and len(a) == len(b):
        return [d for i, (x, y) in enumerate(zip(a, b)) for d in _differences(x, y, f"{where}[{i}]")]
    return [] if a == b else [f"{where}: {a!r} != {b!r}"[:300]]


def test_run_and_batch_write_the_same_results_for_one_job(tmp_path):
    config = tmp_path / "one.yaml"
    config.write_text(CONFIG)
    run = _elimscan("run", str(config), "--out", str(tmp_path / "run"))
    assert run.returncode == 0, run.stderr
    batch = _elimscan("batch", str(config), "--out", str(tmp_path / "batch"))
    assert batch.returncode == 0, batch.stderr
    differences = _differences(_document(tmp_path / "run"), _document(tmp_path / "batch"))
    assert not differences, "\n".join(differences)
