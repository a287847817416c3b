"""Report files of a finished output folder: reads results.json and the scan trajectories, returns the files.

This module reads (never writes): :func:`build_report_files` returns {relative path: bytes} for
``summary.csv``, ``report.html`` and ``plots/*.png``, and the CLI writes them. A run of at most
:data:`SINGLE_PAGE_MAX_JOBS` jobs gets one self-contained ``report.html``; a larger one an index ``report.html``
and one small page per job in ``report/`` (``html/batchpages``). Both link the structure files that exist and
show each saddle's imaginary mode in 3D from its saddle file. :func:`validate_result_file`
checks any result JSON against the JSON Schema exported by ``results/schema.py`` (the committed
``results-schema/`` files equal that export, which ``tests/results/test_schema.py`` enforces).
"""

from __future__ import annotations

import json
import logging
from collections.abc import Mapping, Sequence
from importlib import resources
from pathlib import Path

import ase.io
import jsonschema
from ase import Atoms
from pydantic import ValidationError

from elimscan.errors import OutputError
from elimscan.output.html.batchpages import batch_pages
from elimscan.output.html.page import render_report
from elimscan.output.html.structures import StructureLinks
from elimscan.output.plots.figures import figure_png, figure_svg
from elimscan.output.plots.jobplots import job_figures
from elimscan.output.plots.series import series_figures
from elimscan.results.documents import RunResult
from elimscan.results.schema import SCHEMA_MODELS, json_schema
from elimscan.output.tables import series_csv, summary_csv

RESULTS_FILE = "results.json"
CSV_FILE = "summary.csv"
SERIES_CSV_FILE = "series.csv"
HTML_FILE = "report.html"
#: the benchmark record installed with the package (elimscan/data/; validation/validate.py writes it)
BENCHMARK_RECORD_FILE = "benchmark_record.json"
#: runs with more jobs get an index page and one page per job instead of one page with every job
SINGLE_PAGE_MAX_JOBS = 4
#: a saddle file larger than this (bytes) gets no 3D view (a view is meant for a molecule, not a cluster run)
VIEW_MAX_BYTES = 400_000


def read_result(out_dir: str | Path) -> RunResult:
    """Return the validated RunResult of an output folder; raise OutputError naming the file when unusable."""
    path = Path(out_dir) / RESULTS_FILE
    text = _result_text(path)
    try:
        return RunResult.model_validate_json(text)
    except RecursionError as err:
        raise OutputError(f"'{path}' is not a valid elimscan result: its JSON nests too deep") from err
    except ValidationError as err:
        first = err.errors()[0]
        where = ".".join(str(p) for p in first["loc"]) or "(top level)"
        raise OutputError(f"'{path}' is not a valid elimscan result: {where}: {first['msg']}") from err


def _result_text(path: Path) -> str:
    """Return a result file's text; raise OutputError naming it when it cannot be read or is not UTF-8 text."""
    try:
        return path.read_text(encoding="utf-8")
    except OSError as err:
        raise OutputError(f"cannot read '{path}': {err.strerror or err}") from err
    except UnicodeDecodeError as err:
        raise OutputError(f"'{path}' is not an elimscan result: not UTF-8 text (byte 0x{err.object[err.start]:02x} "
                          f"at offset {err.start})") from err


def read_scan_frames(out_dir: str | Path, result: RunResult) -> dict[str, list[Atoms]]:
    """Return {xyz_file: frames} for every scan trajectory that exists inside ``out_dir`` and reads cleanly.

    A missing, unreadable or out-of-folder file is left out (its Newman projections are then omitted).
    """
    root = Path(out_dir).resolve()
    frames: dict[str, list[Atoms]] = {}
    for job in result.jobs:
        for beta in job.beta_hydrogens:
            for scan in beta.scans:
                rel = scan.xyz_file
                if not rel or rel in frames:
                    continue
                path = (root / rel).resolve()
                if not path.is_relative_to(root) or not path.is_file():
                    continue
                try:
                    images = ase.io.read(path, index=":", format="extxyz")
                except (OSError, ValueError, IndexError, KeyError):
                    continue
                needed = max(beta.representative_index, beta.beta_carbon_index,
                             job.leaving_group.c_alpha_index, job.leaving_group.leaving_atom_index)
                frames[rel] = [a for a in images if len(a) > needed]
    return frames


def _inside(root: Path, rel: str | None) -> Path | None:
    """Return the file ``rel`` inside ``root`` when it exists there (never outside it), else None."""
    if not rel:
        return None
    path = (root / rel).resolve()
    return path if path.is_relative_to(root) and path.is_file() else None


def structure_files(out_dir: str | Path, result: RunResult) -> tuple[frozenset[str], dict[str, list]]:
    """Return the structure files of the run that exist in ``out_dir`` (paths relative to it) and the frames
    {saddle file: [(symbols, positions in Å), ...]} of every saddle file that reads cleanly."""
    root = Path(out_dir).resolve()
    named: list[str | None] = []
    saddles: list[str] = []
    for job in result.jobs:
        named.append(job.conformer_file)
        blocks = [a for b in job.beta_hydrogens for a in (b.anti, b.syn)]
        blocks += [job.substitution] if job.substitution is not None else []
        for block in blocks:
            named += [block.path_file, block.saddle_file, getattr(block, "complex_file", None),
                      getattr(block, "product_file", None)]
            if block.saddle_file:
                saddles.append(block.saddle_file)
    present = frozenset(rel for rel in named if _inside(root, rel) is not None)
    frames: dict[str, list] = {}
    for rel in saddles:
        path = _inside(root, rel)
        if path is None or path.stat().st_size > VIEW_MAX_BYTES or rel in frames:
            continue
        try:
            images = ase.io.read(path, index=":", format="extxyz")
        except (OSError, ValueError, IndexError, KeyError):
            continue
        if images and all(len(a) == len(images[0]) for a in images):
            frames[rel] = [(a.get_chemical_symbols(), a.positions.tolist()) for a in images]
    return present, frames


def _figures(result: RunResult, frames: Mapping[str, Sequence[Atoms]]) -> dict:
    """Return {plot name: matplotlib Figure} for every job of the run."""
    rule = result.config.rule
    figures = {}
    for job in result.jobs:
        figures.update(job_figures(job, rule.anti_min_deg, rule.syn_max_deg, rule.energy_window_kcal_mol, frames))
    figures.update(series_figures(result.series))
    return figures


def load_assets(out_dir: str | Path) -> dict[str, str]:
    """Return {plot name: SVG text} for every plot of the run in ``out_dir``, Newman projections included."""
    result = read_result(out_dir)
    return {name: figure_svg(fig) for name, fig in _figures(result, read_scan_frames(out_dir, result)).items()}


def load_benchmark_record() -> dict | None:
    """Return the benchmark record installed with elimscan (analysis.benchmark_record; written by
    validation/validate.py), None when it is absent; an unreadable one is logged and left out."""
    path = resources.files("elimscan") / "data" / BENCHMARK_RECORD_FILE
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        return None
    except (OSError, ValueError) as err:
        logging.getLogger(__name__).warning("the benchmark record %s cannot be read (%s): reports leave the "
                                            "benchmark's counts out", path, err)
        return None


def build_report_files(out_dir: str | Path, single_page_max_jobs: int = SINGLE_PAGE_MAX_JOBS) -> dict[str, bytes]:
    """Return {path relative to out_dir: content} for summary.csv (series.csv), report.html (with report/*.html for
    more than ``single_page_max_jobs`` jobs) and plots/*.png, from results.json and the structure files beside it
    (and the installed benchmark record, quoted under each verdict)."""
    result = read_result(out_dir)
    record = load_benchmark_record()
    figures = _figures(result, read_scan_frames(out_dir, result))
    files: dict[str, bytes] = {}
    assets: dict[str, str] = {}
    for name, fig in figures.items():
        assets[name] = figure_svg(fig)
        files[f"{name}.png"] = figure_png(fig)
    files[CSV_FILE] = summary_csv(result).encode("utf-8")
    if result.series:
        files[SERIES_CSV_FILE] = series_csv(result).encode("utf-8")
    present, frames = structure_files(out_dir, result)
    if len(result.jobs) <= single_page_max_jobs:
        files[HTML_FILE] = render_report(result, assets, StructureLinks("", present, frames), record).encode("utf-8")
    else:
        plots = frozenset(name for name in files if name.startswith("plots/"))
        for name, page in batch_pages(result, plots, StructureLinks("../", present, frames), record).items():
            files[name] = page.encode("utf-8")
    return dict(sorted(files.items()))


def _json_path(parts: Sequence[object]) -> str:
    """Return a JSON path like 'jobs[0].beta_hydrogens[0].degeneracy' ('(top level)' for the document)."""
    text = ""
    for part in parts:
        text += f"[{part}]" if isinstance(part, int) else (f".{part}" if text else str(part))
    return text or "(top level)"


def _schema_for(document: object) -> tuple[str, dict] | None:
    """Return (schema file name, schema) matching the document's schema_name, or None."""
    name = document.get("schema_name") if isinstance(document, dict) else None
    for file_name, model in SCHEMA_MODELS.items():
        field = model.model_fields.get("schema_name")
        if field is not None and field.default == name:
            return file_name, json_schema(model, file_name)
    return None


def validate_result_file(path: str | Path) -> list[str]:
    """Return the problems of a result JSON file against its JSON Schema, each naming the JSON path; [] when valid."""
    try:
        document = json.loads(_result_text(Path(path)))
    except OutputError as err:
        return [f"(file): {err}"]
    except json.JSONDecodeError as err:
        return [f"(file): not JSON: {err.msg} at line {err.lineno}, column {err.colno}"]
    except RecursionError:
        return ["(file): the JSON nests too deep to be an elimscan result"]
    found = _schema_for(document)
    if found is None:
        known = sorted(str(m.model_fields["schema_name"].default) for m in SCHEMA_MODELS.values() if "schema_name" in m.model_fields)
        name = document.get("schema_name") if isinstance(document, dict) else None
        return [f"schema_name: {name!r} is not an elimscan result document (known: {', '.join(known)})"]
    _, schema = found
    validator = jsonschema.Draft202012Validator(schema)
    problems = []
    try:
        for error in validator.iter_errors(document):
            message = error.message
            if error.validator in ("anyOf", "oneOf") and error.context:
                message = jsonschema.exceptions.best_match(error.context).message
            problems.append(f"{_json_path(error.absolute_path)}: {message}")
    except RecursionError:
        problems.append("(file): the JSON nests too deep to be an elimscan result")
    return sorted(set(problems))
