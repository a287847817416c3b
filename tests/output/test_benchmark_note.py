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


def _with_anti(job, class_id: str, **changes):
    """Return the job with one class's anti block changed (bookkeeping: a shape the fixtures do not hold)."""
    betas = tuple(b.model_copy(update={"anti": b.anti.model_copy(update=changes)}) if b.class_id == class_id else b
                  for b in job.beta_hydrogens)
    return job.model_copy(update={"beta_hydrogens": betas})


def test_e_and_z_from_the_anti_and_syn_path_of_one_hydrogen_is_no_e_z_choice():
    # as in (2S,3R)-2-bromo-3-phenylbutane, whose only hydrogen on C3 gives Z anti and E syn (a stereospecific case
    # of the benchmark, Cram, J. Am. Chem. Soc. 1952, 74, 2137): both 2-butene classes made to give E when anti
    from reportfixture import result

    job = next(j for j in result("halobutane").jobs if j.job_id == "s-2-bromobutane__ethoxide")
    one = _with_anti(job, "C4-H11", product_smiles="C/C=C/C")
    assert "C/C=C\\C" in {p.smiles for p in one.products}  # Z still forms (by a syn path)
    assert choice_kinds(one) == ("open-chain-regio",)


def test_a_ring_alkene_against_an_exocyclic_one_is_no_category():
    # as in 1-bromo-1-methylcyclohexane (1-methylcyclohexene against methylenecyclohexane): the benchmark's ring
    # cases compare two alkenes inside the ring
    from reportfixture import result

    job = next(j for j in result("ring").jobs if j.job_id.startswith("cis"))
    mixed = _with_anti(job, "C2-H12", product_ring_position="exocyclic")
    assert choice_kinds(mixed) == ()


def test_constitution_drops_e_z_and_tetrahedral_marks():
    assert constitution("C/C=C/C") == constitution("C/C=C\\C") == "CC=CC"
    assert constitution("C[C@H]1C=CCCC1") == constitution("CC1C=CCCC1")
    with pytest.raises(ValueError, match="not a SMILES"):
        constitution("C1CC")


CLUSTER = "2 x CCO hydrogen-bonded + 1 x CCO in the second shell"


def _record(major_right: int, major_computed: int = 8, models=(CLUSTER,), finished: int = 111) -> dict:
    """Return a benchmark record (the layout validation/validate.py writes) with one open-chain and one E/Z count at
    dE: 8 cases with a published major, ``major_computed`` of them computed, ``major_right`` right."""
    counts = {"cases": 8, "right": 1, "undecided": 2, "not_computed": 8 - major_computed, "rule_cases": 8,
              "rule_right": 3, "rule_not_computed": 4, "major_cases": 8, "major_computed": major_computed,
              "major_right": major_right, "major_undecided": 2}
    entry = {"page": "validation/VALIDATION.md", "date_utc": "2026-12-07 06:00 UTC", "commit": "abc1234",
             "base_model": "alcohol-3-embedded", "job_base_models": list(models), "seeds": [1, 2, 3], "jobs": 111,
             "jobs_finished": finished, "levels": {"dE": {"open-chain-regio": counts, "ez-ratio": dict(counts)}}}
    return {"version": 1, "pages": {"VALIDATION.md": entry}}


def _bromobutane():
    from reportfixture import result

    return next(j for j in result("halobutane").jobs if j.job_id == "s-2-bromobutane__ethoxide")


def _close_call(job, runner_up: str):
    """Return the job's headline made a close call between its computed major and ``runner_up``."""
    from dataclasses import replace

    from elimscan.analysis.headline import CLOSE_CALL, UNDECIDED, job_headline

    return replace(job_headline(job), state=UNDECIDED, why_undecided=CLOSE_CALL, computed_major="C/C=C/C",
                   runner_up=runner_up)


def test_the_note_quotes_the_benchmark_counts_of_the_job_kinds_at_its_level():
    from elimscan.output.benchmark_note import benchmark_note

    job = _bromobutane()
    note = benchmark_note(job, _record(major_right=2))
    assert ("which alkene of an open chain (regiochemistry): 8 case(s) with a published major product, 8 computed; "
            "the computed major right in 2, undecided in 2 (counted as not right); every published share within 20 "
            "points too in 1 of 8; the textbook rule right in 3 of the 4 it was read on") in note
    assert "E against Z from different hydrogens: 8 case(s)" in note
    assert "GFN2-xTB \u0394E\u2021" in note
    assert "validation/VALIDATION.md, scored 2026-12-07 06:00 UTC at commit abc1234" in note
    assert "GFN2-xTB dE" in benchmark_note(job, _record(2), ascii_only=True)
    # the fixture's base is recorded as none: whether the benchmark used it cannot be said
    assert "base model is not recorded" in note
    cluster = job.model_copy(update={"base_info": job.base_info.model_copy(update={"model": CLUSTER})}) \
        if job.base_info is not None else None
    if cluster is not None:
        assert "not recorded" not in benchmark_note(cluster, _record(2)) and "not among" not in \
            benchmark_note(cluster, _record(2))
    unfinished = benchmark_note(job, _record(major_right=1, major_computed=3, finished=100))
    assert "8 case(s) with a published major product, 3 computed" in unfinished
    assert "That run was unfinished (100 of 111 jobs)" in unfinished
    # no record, a record of another layout or level, or a job whose choices the record does not count: no note
    assert benchmark_note(job, None) is None
    assert benchmark_note(job, {"version": 1, "pages": {"VALIDATION.md": {"levels": {"dE": {"ez-ratio": {}}}}}}) is None
    assert benchmark_note(job.model_copy(update={"energy_used": "free"}), _record(2)) is None
    ring = next(j for j in __import__("reportfixture").result("ring").jobs if j.job_id.startswith("trans"))
    assert benchmark_note(ring, _record(2)) is None


def test_the_limit_sentence_only_for_a_close_call_on_a_kind_the_level_mostly_missed():
    from dataclasses import replace

    from elimscan.analysis.headline import AGREE, ALL_FAILED, job_headline
    from elimscan.output.benchmark_note import benchmark_note

    job = _bromobutane()
    limit = "read this job's undecided verdict as the level's limit"
    regio, ez = _close_call(job, "C=CCC"), _close_call(job, "C/C=C\\C")
    assert limit in benchmark_note(job, _record(major_right=4), regio)  # 4 of 8: at most half
    assert limit in benchmark_note(job, _record(major_right=4), ez)
    assert limit not in benchmark_note(job, _record(major_right=5), regio)  # most right
    assert limit not in benchmark_note(job, _record(major_right=0, major_computed=2), regio)  # too few computed
    decided = replace(job_headline(job), state=AGREE, why_undecided=None)
    assert limit not in benchmark_note(job, _record(major_right=2), decided)
    failed = replace(_close_call(job, "C=CCC"), why_undecided=ALL_FAILED)  # undecided, but not a close call
    assert limit not in benchmark_note(job, _record(major_right=2), failed)
    # a close call between E and Z is judged on the E/Z cases, one between constitutions on the regio cases
    record = _record(major_right=2)
    record["pages"]["VALIDATION.md"]["levels"]["dE"]["ez-ratio"]["major_right"] = 7
    assert limit in benchmark_note(job, record, regio) and limit not in benchmark_note(job, record, ez)


def test_the_report_shows_the_note_in_the_verdict_box():
    from elimscan.output.html.boxes import headline_box

    job = _bromobutane()
    html = headline_box(job, _record(major_right=2))
    assert '<p class="benchmark-record">Reference benchmark, cases asking this job' in html
    assert "benchmark-record" not in headline_box(job) and "benchmark-record" not in headline_box(job, {})


def test_the_terminal_summary_prints_the_note_under_the_verdict():
    from reportfixture import result

    from elimscan.output.text import job_table, summary_table

    run = result("halobutane")
    job = _bromobutane()
    lines = job_table(job, None, _record(major_right=2))
    [note] = [line for line in lines if line.startswith("  benchmark: ")]
    assert "the computed major right in 2" in note and note.isascii()
    assert lines.index(note) < next(i for i, line in enumerate(lines) if line.startswith("  leaving group"))
    assert "benchmark:" not in "\n".join(job_table(job))
    assert summary_table(run, _record(2)).count("  benchmark: ") == 2  # both 2-bromobutane jobs


def test_the_report_files_carry_the_installed_record_into_every_verdict(monkeypatch):
    from reportfixture import FIXTURES

    from elimscan.output import files

    monkeypatch.setattr(files, "load_benchmark_record", lambda: _record(major_right=2))
    page = files.build_report_files(FIXTURES / "halobutane")[files.HTML_FILE].decode()
    assert page.count('<p class="benchmark-record">') == 2  # the two 2-bromobutane jobs
    monkeypatch.setattr(files, "load_benchmark_record", lambda: None)
    page = files.build_report_files(FIXTURES / "halobutane")[files.HTML_FILE].decode()
    assert '<p class="benchmark-record">' not in page


def test_an_unreadable_installed_record_is_left_out_with_a_warning(monkeypatch, tmp_path, caplog):
    from elimscan.output import files

    (tmp_path / "data").mkdir()
    (tmp_path / "data" / files.BENCHMARK_RECORD_FILE).write_text("<<<<<<< merge\n")
    monkeypatch.setattr(files.resources, "files", lambda package: tmp_path)
    assert files.load_benchmark_record() is None
    assert "cannot be read" in caplog.text
    (tmp_path / "data" / files.BENCHMARK_RECORD_FILE).unlink()
    assert files.load_benchmark_record() is None


def _with_selectivity(record: dict, n: int = 11, error: float = 1.3, within: int = 4, unbounded: int = 0) -> dict:
    """Return the record with a dE selectivity entry (alkenes) of ``n`` finite errors of mean |error| ``error``."""
    alkenes = {"n_published": 15, "n_from_memory": 13, "n": n, "n_cases": 7, "n_unbounded": unbounded,
               "n_not_computed": 15 - n - unbounded, "mean_error_kcal_mol": 0.0, "mean_abs_error_kcal_mol": error,
               "n_within_uncertainty": within}
    record["pages"]["VALIDATION.md"]["selectivity"] = {"dE": {"alkenes": alkenes, "E2 vs SN2": dict(
        alkenes, n=0, mean_abs_error_kcal_mol=None)}}
    return record


def test_the_effective_gap_is_set_beside_the_levels_error_of_relative_barriers():
    from dataclasses import replace

    from elimscan.analysis.headline import job_headline
    from elimscan.output.benchmark_note import benchmark_note

    job = _bromobutane()
    record = _with_selectivity(_record(major_right=2))
    close = replace(job_headline(job), product_rival="C=CCC", product_gap_kcal_mol=0.6)
    note = benchmark_note(job, record, close)
    assert ("On 11 of the benchmark's 15 published alkene shares (7 cases; 13 of the 15 values from memory) this "
            "level's relative barriers missed by 1.3 kcal/mol on average (4 of 11 within 1 kcal/mol). This job's "
            "computed major lies 0.6 kcal/mol below C=CCC (effective barriers, degeneracy counted): less than that "
            "average error: an error of the usual size could reverse the two.") in note
    wide = benchmark_note(job, record, replace(close, product_gap_kcal_mol=2.5))
    assert ("lies 2.5 kcal/mol below C=CCC (effective barriers, degeneracy counted): at least that average error, "
            "though 7 of the 11 benchmark shares were missed by more than 1 kcal/mol.") in wide
    # a gap equal to the error is not called smaller; every share within: no 'though'
    assert "at least that average error." in benchmark_note(job, _with_selectivity(_record(2), within=11),
                                                             replace(close, product_gap_kcal_mol=1.3))
    assert "2 more where a published alkene did not form or formed alone" in benchmark_note(
        job, _with_selectivity(_record(2), unbounded=2), close)
    # too few finite errors or cases, no alkene entry (only E2 vs SN2 shares, or an older record), no rival: none
    assert "published alkene shares" not in benchmark_note(job, _with_selectivity(_record(2), n=2), close)
    one_case = _with_selectivity(_record(2))
    one_case["pages"]["VALIDATION.md"]["selectivity"]["dE"]["alkenes"]["n_cases"] = 1
    assert "published alkene shares" not in benchmark_note(job, one_case, close)
    only_channel = _with_selectivity(_record(2))
    only_channel["pages"]["VALIDATION.md"]["selectivity"]["dE"].pop("alkenes")
    assert "published alkene shares" not in benchmark_note(job, only_channel, close)
    assert "published alkene shares" not in benchmark_note(job, _record(2), close)
    assert "published alkene shares" not in benchmark_note(job, record, replace(close, product_gap_kcal_mol=None))
    assert "published alkene shares" not in benchmark_note(job, record, None)


def test_the_effective_gap_is_the_ratio_of_the_jobs_own_shares():
    # degeneracy counted: the effective gap between the computed major and its rival is RT ln of the ratio of the
    # shares the pipeline wrote into the record (another code path), so it is never negative for the major
    import math

    from elimscan.analysis.headline import job_headline
    from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K

    job = _bromobutane()
    headline = job_headline(job)
    shares = {p.smiles: p.fraction for p in job.products}
    expected = BOLTZMANN_KCAL_MOL_PER_K * job.temperature_K * math.log(
        shares[headline.computed_major] / shares[headline.product_rival])
    assert headline.product_gap_kcal_mol == pytest.approx(expected, abs=0.01) and headline.product_gap_kcal_mol >= 0.0


def test_a_bulky_base_job_hears_how_the_level_did_on_the_bulky_base_shifts():
    from elimscan.output.benchmark_note import benchmark_note

    job = _bromobutane()
    assert job.base_info is not None  # the fixture records its base
    record = _record(major_right=2)
    record["pages"]["VALIDATION.md"]["base_shift"] = {"dE": {"n_pairs": 4, "n_computed": 2, "n_resolved": 2,
                                                             "n_sign": 2, "n_size_ok": 1, "n_from_memory": 3}}
    bulky = job.model_copy(update={"base_info": job.base_info.model_copy(update={"bulky": True})})
    small = job.model_copy(update={"base_info": job.base_info.model_copy(update={"bulky": False})})
    said = ("For a bulky base: of the benchmark's 4 pairs (ethoxide against a bulky base on one substrate; 2 not "
            "computed, 3 with a published value from memory), this level's shift toward the terminal alkene had the "
            "published sign and exceeded the seed spread in 2, and was of the published size (within 1 kcal/mol) in "
            "1; every published shift points that way, so the sign alone is agreement, not proof.")
    assert said in benchmark_note(bulky, record)
    assert "For a bulky base" not in benchmark_note(small, record)
    record["pages"]["VALIDATION.md"]["base_shift"]["dE"]["n_computed"] = 1  # below the floor of two
    assert "For a bulky base" not in benchmark_note(bulky, record)
