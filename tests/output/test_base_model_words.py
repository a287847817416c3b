"""The base model each job was computed with, and why, in the summary text and the report.

A small run on the toy engine of ``toyjobs.py`` (seconds, no GFN2-xTB): chloroethane in ALPB(ethanol) with NaOEt
(no ``model:``, two starting arrangements: the explicit-solvent default) and with ethoxide pinned ``model: bare``.
The toy numbers mean nothing; what is checked is that the words a chemist reads agree with the records the run
wrote (results.json read as plain JSON), and that a result file written before these fields existed (the
committed report fixture, result schema 0.4.0) still renders and says what it does not hold.
"""

from __future__ import annotations

import copy
import json
import re
from pathlib import Path

import pytest

from elimscan.config.molecules import DEFAULT_CLUSTER_EMBEDDINGS, DEFAULT_EXPLICIT_MOLECULES
from elimscan.output.basemodelwords import DEFAULT_MODEL_SENTENCE, MODEL_NOT_RECORDED, REASON_NOT_RECORDED
from elimscan.output.html.page import render_report
from elimscan.output.text import summary_table
from elimscan.results.documents import RunResult
from toyjobs import TOY_SETTINGS, toy_output

from reportfixture import blank_plots, raw, words_of

CONFIG = TOY_SETTINGS + """\
name: model-words
method: {solvent: ethanol}
substrates:
  - {name: chloroethane, smiles: "CCCl"}
bases:
  - {name: NaOEt, model: {arrangements: 2}}
  - {name: ethoxide, model: bare}
"""
DEFAULT_JOB, BARE_JOB = "chloroethane__NaOEt", "chloroethane__ethoxide"


@pytest.fixture(scope="module")
def run(tmp_path_factory) -> Path:
    """Return the output folder of the two-job toy run (results.json, report.html)."""
    return toy_output("run", CONFIG, tmp_path_factory.mktemp("model-words"))


def _doc(out: Path) -> dict:
    return json.loads((out / "results.json").read_text(encoding="utf-8"))


def _base_molecule(doc: dict, name: str) -> dict:
    (found,) = [m for m in doc["molecules"] if m["role"] == "base" and m["name"] == name]
    return found


def _job_block(text: str, job_id: str) -> list[str]:
    """Return the summary text's lines of one job (up to the blank line after it)."""
    start = text.index(f"job {job_id}: ")
    return text[start:].split("\n\n", 1)[0].splitlines()


def _section_words(html: str, job_id: str) -> str:
    """Return the text of one job's section of the report, whitespace made single spaces."""
    start = html.index(f'data-job="{job_id}"')
    return words_of(html[start:html.index("</section>", start)])


def test_a_job_with_the_default_model_names_its_molecules_arrangements_and_reason(run):
    doc = _doc(run)
    base = _base_molecule(doc, "NaOEt")
    # what the run computed, read from its own record: the ethoxide anion with three ethanols (its conjugate acid),
    # relaxed from two starting arrangements of each of the default's embeddings, with the reason resolve_base_model gave
    starts = 2 * DEFAULT_CLUSTER_EMBEDDINGS
    assert base["smiles"].split(".") == ["CC[O-]"] + ["CCO"] * DEFAULT_EXPLICIT_MOLECULES
    assert base["arrangements"] == starts == 10 and base["arrangement_spread_kcal_mol"] is not None
    assert base["model_reason"].startswith("default for an alkoxide in a protic solvent (ethanol)")
    spread = f"{base['arrangement_spread_kcal_mol']:.2f} kcal/mol"
    model = (f"NaOEt with {DEFAULT_EXPLICIT_MOLECULES} ethanol molecules (2 hydrogen-bonded to the basic atom, "
             "1 in the second shell)")
    arrangements = f"the lowest of {starts} relaxed starting clusters, which spread {spread} (highest minus lowest)"

    text = summary_table(RunResult.model_validate(doc))
    lines = _job_block(text, DEFAULT_JOB)
    at = next(k for k, line in enumerate(lines) if line.startswith("  base model: "))
    assert lines[at] == f"  base model: {model}; {arrangements}"
    assert lines[at + 1] == f"    why: {base['model_reason']}"
    assert text.count(DEFAULT_MODEL_SENTENCE) == 1  # said once for the run, not per job

    html = (run / "report.html").read_text(encoding="utf-8")
    section = _section_words(html, DEFAULT_JOB)
    assert f"base model {model}; {arrangements} why this base model {base['model_reason']}" in section
    reading = words_of(html[html.index('id="meaning"'):html.index("</ul>", html.index('id="meaning"'))])
    assert DEFAULT_MODEL_SENTENCE in reading and "model: bare" in DEFAULT_MODEL_SENTENCE


def test_a_job_pinned_bare_says_so_and_a_run_without_the_default_leaves_its_sentence_out(run):
    doc = _doc(run)
    base = _base_molecule(doc, "ethoxide")
    assert (base["smiles"], base["model"], base["model_reason"]) == ("CC[O-]", "bare", "bare base as configured")
    assert base["arrangements"] is None  # the bare base is relaxed once: no arrangement words

    lines = _job_block(summary_table(RunResult.model_validate(doc)), BARE_JOB)
    assert "  base model: bare ethoxide" in lines and "    why: bare base as configured" in lines
    section = _section_words((run / "report.html").read_text(encoding="utf-8"), BARE_JOB)
    assert "base model bare ethoxide why this base model bare base as configured" in section
    assert "arrangements" not in section.split("base model", 1)[1].split("conformers kept")[0]

    # the same run without its default job: the sentence on the default goes, the bare job's words stay
    only_bare = copy.deepcopy(doc)
    only_bare["jobs"] = [j for j in doc["jobs"] if j["job_id"] == BARE_JOB]
    only_bare["molecules"] = [m for m in doc["molecules"] if m["name"] != "NaOEt"]
    result = RunResult.model_validate(only_bare)
    text, html = summary_table(result), render_report(result, blank_plots(only_bare))
    assert DEFAULT_MODEL_SENTENCE not in text and DEFAULT_MODEL_SENTENCE not in words_of(html)
    assert "base model: bare ethoxide" in text and "base model bare ethoxide" in _section_words(html, BARE_JOB)


def test_the_comparison_names_both_models_in_words(run):
    text = summary_table(RunResult.model_validate(_doc(run)))
    row = next(line for line in text.splitlines() if line.strip().startswith("base model "))
    assert re.search(rf"{DEFAULT_EXPLICIT_MOLECULES} ethanol molecules +bare\s*$", row), row
    html = (run / "report.html").read_text(encoding="utf-8")
    start = html.index('id="compared"')
    assert f"base model {DEFAULT_EXPLICIT_MOLECULES} ethanol molecules bare" in words_of(
        html[start:html.index("</section>", start)])


def test_a_result_file_written_before_base_models_were_recorded_still_renders():
    doc = raw("halobutane")  # committed fixture, result schema 0.4.0: no model, model_reason or arrangements
    assert doc["schema_version"] == "0.4.0"
    assert not any(k in m for m in doc["molecules"] for k in ("model", "model_reason", "arrangements"))
    assert not any(k in j["base_info"] for j in doc["jobs"] for k in ("model", "model_reason"))
    result = RunResult.model_validate(doc)
    text, html = summary_table(result), render_report(result, blank_plots(doc))
    for job in doc["jobs"]:
        lines = _job_block(text, job["job_id"])
        assert f"  base model: {job['base']}, {MODEL_NOT_RECORDED}" in lines
        assert f"    why: {REASON_NOT_RECORDED}" in lines
        assert (f"base model {job['base']}, {MODEL_NOT_RECORDED} why this base model {REASON_NOT_RECORDED}"
                in _section_words(html, job["job_id"]))
    assert DEFAULT_MODEL_SENTENCE not in text and DEFAULT_MODEL_SENTENCE not in words_of(html)


def test_a_newer_file_without_the_reason_or_the_arrangements_keeps_what_it_has(run):
    # result schema 0.6.0 - 0.7.2 recorded the model label but neither the reason nor the arrangements
    doc = _doc(run)
    old = copy.deepcopy(doc)
    old["schema_version"] = "0.7.2"
    for molecule in old["molecules"]:
        for key in ("model_reason", "arrangements", "arrangement_spread_kcal_mol"):
            molecule.pop(key, None)
    for job in old["jobs"]:
        job["base_info"].pop("model_reason", None)
    result = RunResult.model_validate(old)
    lines = _job_block(summary_table(result), DEFAULT_JOB)
    assert (f"  base model: NaOEt with {DEFAULT_EXPLICIT_MOLECULES} ethanol molecules (2 hydrogen-bonded to the basic "
            "atom, 1 in the second shell)") in lines
    assert f"    why: {REASON_NOT_RECORDED}" in lines
    # without the reason the default cannot be told from a configured cluster: no sentence about the default
    html = render_report(result, blank_plots(old))
    assert DEFAULT_MODEL_SENTENCE not in words_of(html)
    assert f"base model NaOEt with {DEFAULT_EXPLICIT_MOLECULES} ethanol molecules" in _section_words(html, DEFAULT_JOB)
