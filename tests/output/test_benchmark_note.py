"""The benchmark's record beside a job's verdict: the job's kinds of choice, and the note the report prints.

A job's kinds of choice are read as the benchmark's categories of the same substrate and base.

The categories of validation/cases.yaml were set from what the literature cases ask (e.g. cis-2-methylcyclohexyl
chloride: two ring hydrogens can reach anti and compete, Hughes, Ingold and co-workers, J. Chem. Soc. 1948; the
trans isomer: only one can). The report fixtures are real elimscan runs of those substrates: a job must be
recognised as the case of the same substrate and base is categorised (the categories a single job cannot show,
base-size and leaving-group series, aside). The note's records are bookkeeping inputs in the layout
validation/validate.py writes (not chemistry): the tests check that the note quotes them faithfully.
"""

from __future__ import annotations

from pathlib import Path

import pytest
import yaml

from elimscan.analysis.choicekinds import JOB_KINDS, choice_kinds, constitution

ROOT = Path(__file__).resolve().parents[2]
#: fixture job id -> benchmark case id of the same substrate and base
SAME_CASE = {"s-2-bromobutane__ethoxide": "2-bromobutane-ethoxide",
             "trans-2-methylcyclohexyl-chloride__ethoxide": "trans-2-methylcyclohexyl-chloride-ethoxide",
             "cis-2-methylcyclohexyl-chloride__ethoxide": "cis-2-methylcyclohexyl-chloride-ethoxide"}


def _case_categories() -> dict[str, set[str]]:
    cases = yaml.safe_load((ROOT / "validation" / "cases.yaml").read_text())
    out = {}
    for case in cases["test"]:
        category = case["category"]
        out[case["id"]] = {category} if isinstance(category, str) else set(category)
    return out


@pytest.mark.parametrize("run", ["halobutane", "ring"])
def test_a_job_is_the_kind_of_choice_its_benchmark_case_is(run):
    from reportfixture import result

    categories = _case_categories()
    seen = 0
    for job in result(run).jobs:
        if job.job_id in SAME_CASE:
            expected = categories[SAME_CASE[job.job_id]] & set(JOB_KINDS)
            assert set(choice_kinds(job)) == expected, job.job_id
            seen += 1
    assert seen == (1 if run == "halobutane" else 2)


def test_an_sn2_path_makes_an_e2_against_sn2_choice_and_one_alkene_no_regio_choice():
    from reportfixture import result

    [job] = result("primary").jobs  # bromoethane + methoxide: ethene only, SN2 computed
    assert choice_kinds(job) == ("e2-vs-sn2",)
    failed = job.model_copy(update={"status": "failed"})
    assert choice_kinds(failed) == ()


def test_constitution_drops_e_z_and_tetrahedral_marks():
    assert constitution("C/C=C/C") == constitution("C/C=C\\C") == "CC=CC"
    assert constitution("C[C@H]1C=CCCC1") == constitution("CC1C=CCCC1")
    with pytest.raises(ValueError, match="not a SMILES"):
        constitution("C1CC")


CLUSTER = "2 x CCO hydrogen-bonded + 1 x CCO in the second shell"


def _record(right: int, undecided: int, not_computed: int = 0, models=(CLUSTER,)):
    """Return a benchmark record (the layout validation/validate.py writes) with one open-chain count at dE."""
    counts = {"cases": 8, "right": right, "undecided": undecided, "not_computed": not_computed, "rule_cases": 8,
              "rule_right": 6, "rule_not_computed": 0}
    entry = {"page": "validation/VALIDATION.md", "date_utc": "2026-12-07 06:00 UTC", "commit": "abc1234",
             "base_model": "alcohol-3-embedded", "job_base_models": list(models), "seeds": [1, 2, 3], "jobs": 111,
             "jobs_finished": 111 if not not_computed else 100, "levels": {"dE": {"open-chain-regio": counts}}}
    return {"version": 1, "pages": {"VALIDATION.md": entry}}


def test_the_note_quotes_the_benchmark_counts_of_the_job_kinds_at_its_level():
    from reportfixture import result

    from elimscan.output.benchmark_note import benchmark_note

    job = next(j for j in result("halobutane").jobs if j.job_id == "s-2-bromobutane__ethoxide")
    note = benchmark_note(job, _record(right=2, undecided=4), undecided=True)
    assert "which alkene of an open chain (regiochemistry): computed right in 2 of 8 cases, undecided in 4" in note
    assert "the textbook rule right in 6 of 8" in note and "GFN2-xTB \u0394E\u2021" in note
    assert "validation/VALIDATION.md of 2026-12-07 06:00 UTC, commit abc1234" in note
    assert "the level's limit" in note  # at most half right and this job undecided
    assert "the level's limit" not in benchmark_note(job, _record(right=2, undecided=4), undecided=False)
    assert "the level's limit" not in benchmark_note(job, _record(right=6, undecided=1), undecided=True)
    # the fixture's base is the bare anion (no model recorded): not the benchmark's model, and said so
    assert "is not among the benchmark's" in note
    assert "not among" not in benchmark_note(job, _record(2, 4, models=(job.base_info.model,)))
    unfinished = benchmark_note(job, _record(right=1, undecided=2, not_computed=5))
    assert "not computed in 5" in unfinished and "That run was unfinished (100 of 111 jobs)" in unfinished
    # no record, a record of another level, or a job whose choices the record does not count: no note
    assert benchmark_note(job, None) is None
    assert benchmark_note(job.model_copy(update={"energy_used": "free"}), _record(2, 4)) is None
    ring = next(j for j in result("ring").jobs if j.job_id.startswith("trans"))
    assert benchmark_note(ring, _record(2, 4)) is None


def test_the_report_shows_the_note_in_the_verdict_box():
    from reportfixture import result

    from elimscan.output.html.boxes import headline_box

    job = next(j for j in result("halobutane").jobs if j.job_id == "s-2-bromobutane__ethoxide")
    html = headline_box(job, _record(right=2, undecided=4))
    assert '<p class="benchmark-record">The reference benchmark on choices of this kind' in html
    assert "benchmark-record" not in headline_box(job, {"version": 1, "pages": {}})


def test_the_terminal_summary_prints_the_note_under_the_verdict():
    from reportfixture import result

    from elimscan.output.text import job_table, summary_table

    run = result("halobutane")
    job = next(j for j in run.jobs if j.job_id == "s-2-bromobutane__ethoxide")
    lines = job_table(job, None, _record(right=2, undecided=4))
    [note] = [line for line in lines if line.startswith("  benchmark: ")]
    assert "computed right in 2 of 8 cases" in note
    assert lines.index(note) < next(i for i, line in enumerate(lines) if line.startswith("  leaving group"))
    assert "benchmark:" not in "\n".join(job_table(job))
    assert summary_table(run, _record(2, 4)).count("  benchmark: ") == 2  # both 2-bromobutane jobs
