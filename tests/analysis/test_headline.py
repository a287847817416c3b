"""The headline of a job and the comparison of a substrate's jobs (fast tier: records built here, no GFN2-xTB).

The records are bookkeeping fixtures (tests/support/jobrecords.py: hand-set barriers, elimscan's own shares);
what they are checked against from outside: the gas constant of scipy.constants (CODATA) for the ratio a
gap implies, and the published outcomes of the reference benchmark (validation/cases.yaml, values copied
here with their sources) for what a chemist expects the headline to put first. The committed GFN2-xTB run of
(S)-2-bromobutane with ethoxide and tert-butoxide (tests/data/report-fixture/halobutane) is scored against
those published outcomes at the end.
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest
import scipy.constants

from elimscan.analysis import headline as hl
from elimscan.analysis import rulebasis as rb
from elimscan.analysis.comparison import compare_substrates, score_experiment
from elimscan.analysis.rule import ClassFacts, Periplanar, rule_verdict
from elimscan.chem.alkenes import Alkene
from elimscan.config import ExperimentConfig, RuleConfig
from elimscan.output.comparison import comparison_rows, comparison_text, score_line
from elimscan.output.headline import headline_lines, headline_sentences, verdict_sentence
from elimscan.output.html.boxes import headline_box
from elimscan.output.html.style import STYLE
from elimscan.results.documents import RunResult

from jobrecords import T, approach, beta, job

HALOBUTANE = Path(__file__).resolve().parents[1] / "data" / "report-fixture" / "halobutane"
#: 2-bromobutane + NaOEt/EtOH: 81 % 2-butenes, 19 % 1-butene (J. G. Smith, Organic Chemistry); trans major from
#: memory (the paper it was cited to, Brown & Klimisch, J. Am. Chem. Soc. 1966, 88, 1425, covers potassium
#: tert-butoxide only), as in validation/cases.yaml
ETHOXIDE_OBSERVED = ExperimentConfig(major="C/C=C/C", alkene_shares={"C=CCC": 19},
                                     source="J. G. Smith, Organic Chemistry; trans major from memory")
#: 2-bromobutane + KOtBu: 33 % 1-butene (J. G. Smith, Organic Chemistry), as in validation/cases.yaml
TERT_BUTOXIDE_OBSERVED = ExperimentConfig(alkene_shares={"C=CCC": 33}, source="J. G. Smith, Organic Chemistry")


def butene_job(base: str, one: float, trans: float, cis: float, bulky: bool = False, reaches: bool = True):
    """Return a 2-bromobutane-like job with its three anti barriers (kcal/mol; 1-butene, E- and Z-2-butene)."""
    betas = [beta("C1-H5", 3, approach("C=CCC", "mono", one, reaches=reaches)),
             beta("C3-H9", 1, approach("C/C=C/C", "di", trans, penalty=0.7)),
             beta("C3-H10", 1, approach("C/C=C\\C", "di", cis))]
    rule_major = "C=CCC" if bulky else "C/C=C/C"
    calls = {s: ("major" if s == rule_major else "minor") for s in ("C=CCC", "C/C=C/C", "C/C=C\\C")}
    return job(betas, calls, rule_major, substrate="2-bromobutane", base=base, bulky=bulky)


def bromoethane_job(e2: float = 10.0, sn2: float = 8.0, sn2_reaches: bool = True):
    """Return a bromoethane + methoxide-like job: one class (ethene only) and an SN2 path (kcal/mol)."""
    return job([beta("C0-H3", 3, approach("C=C", "unsubstituted", e2))], {"C=C": "major"}, "C=C",
               substrate="bromoethane", base="methoxide", sn2=sn2, sn2_reaches=sn2_reaches, textbook="substitution")


def test_substitution_as_the_main_channel_comes_first():
    record = bromoethane_job()
    h = hl.job_headline(record)
    # bookkeeping fixture shaped like experiment: a primary bromide with a small alkoxide gives mostly ether (about
    # 1 % ethene with ethoxide in ethanol at 55 °C, Hughes, Ingold and co-workers, J. Chem. Soc. 1948; from memory,
    # as in validation/cases.yaml); the headline names that channel first, whatever the alkene verdict says
    assert h.channel.main == hl.SN2 and h.channel.sn2_fraction > 0.9
    assert h.channel.gap_kcal_mol == pytest.approx(-2.0) and not h.channel.close
    sentences = headline_sentences(h)
    assert list(sentences)[0] == "channel"
    assert sentences["channel"].startswith("Main channel: substitution (SN2), E2 ")
    assert "SN2 product CCOC" in sentences["channel"] and "textbook call: substitution" in sentences["channel"]
    assert "minor channel" in sentences["mix"]
    # the alkene verdict stays, said to be about the minor channel
    assert h.state == hl.AGREE and verdict_sentence(h).startswith("AGREE (on the alkene of the minor E2 channel)")
    lines = headline_lines(h)
    assert lines[0].startswith("  > Main channel: substitution (SN2)")
    # an SN2 path that does not reach its product decides no split: E2 is not named the main channel by default
    blocked = hl.job_headline(bromoethane_job(sn2_reaches=False))
    assert blocked.channel.main is None and blocked.channel.why_none == "no products"
    assert headline_sentences(blocked)["channel"].startswith("E2 against SN2 not decided: its path did not reach")
    assert blocked.paths_left_out == 1
    assert "AGAINST the textbook call" not in sentences["channel"]


def test_a_main_channel_against_the_textbook_call_says_so():
    """A primary bromide with a small alkoxide substitutes (about 1 % ethene, Hughes, Ingold and co-workers 1948,
    from memory); a model that makes E2 the main channel (as the Na+ contact pair did at GFN2-xTB: 100 % E2)
    is against that call, and the headline says so even when the alkene verdict agrees."""
    h = hl.job_headline(bromoethane_job(e2=8.0, sn2=12.0))
    channel = headline_sentences(h)["channel"]
    assert h.channel.main == hl.E2 and h.state == hl.AGREE
    assert channel.startswith("Main channel: elimination (E2)") and channel.endswith("AGAINST the textbook call.")


def test_a_single_possible_alkene_says_so():
    h = hl.job_headline(bromoethane_job())
    assert h.rule_criteria == (rb.SINGLE_ALKENE,)
    assert headline_sentences(h)["rule"] == "Rule's major alkene C=C: only one alkene can form."
    # the rule's own reason (stored on the product record) says the same
    ethene = Alkene("C=C", "unsubstituted", False, "acyclic", True, "")
    only = ClassFacts("C0-H3", ethene, ethene, Periplanar("anti", 0.0, 180.0, "conformer"),
                      Periplanar("syn", 1.4, 0.0, "scan"))
    verdict = rule_verdict([only], RuleConfig(), False, "halide", "Br")
    assert verdict.products[0].reason == "only one alkene can form"


def test_the_rule_names_what_decided_it():
    zaitsev = hl.job_headline(butene_job("ethoxide", 12.0, 10.0, 11.0))
    assert zaitsev.rule_criteria == (rb.DEGREE, rb.E_BEFORE_Z)
    assert "the most substituted of the anti-reachable alkenes (Zaitsev), then E before Z" in headline_sentences(zaitsev)["rule"]
    hofmann = hl.job_headline(butene_job("tert-butoxide", 10.0, 12.0, 12.5, bulky=True))
    assert hofmann.rule_criteria == (rb.HOFMANN_SHIFT,) and hofmann.shift_reason == "bulky base"
    assert "least substituted of the anti-reachable alkenes (Hofmann shift: bulky base)" in headline_sentences(hofmann)["rule"]


def test_a_decided_call_carries_the_gap_and_the_ratio_it_implies():
    h = hl.job_headline(butene_job("ethoxide", 13.0, 10.0, 11.5))
    assert (h.state, h.computed_major, h.runner_up) == (hl.AGREE, "C/C=C/C", "C/C=C\\C")
    assert h.gap_kcal_mol == pytest.approx(1.5)
    # exp(ddE / RT) with CODATA's gas constant and the thermochemical calorie (scipy.constants)
    expected = math.exp(1.5 * 1000 * scipy.constants.calorie / (scipy.constants.R * T))
    assert h.implied_ratio == pytest.approx(expected, rel=1e-4)
    assert headline_sentences(h)["gap"].startswith(f"\u0394\u0394E\u2021 1.50 kcal/mol between the best paths to C/C=C/C "
                                                   f"and C/C=C\\C: about {expected:.0f} : 1 at 298.15 K")
    disagree = hl.job_headline(butene_job("ethoxide", 9.0, 11.0, 11.5))
    assert disagree.state == hl.DISAGREE and disagree.computed_major == "C=CCC"
    assert "DISAGREE" in headline_box(disagree_record := butene_job("ethoxide", 9.0, 11.0, 11.5))
    assert 'class="verdict headline verdict-disagree"' in headline_box(disagree_record)


def test_undecided_is_grey_says_why_and_is_never_a_win():
    record = butene_job("ethoxide", 12.0, 10.0, 10.4)  # E and Z within 1 kcal/mol
    h = hl.job_headline(record)
    assert (h.state, h.why_undecided) == (hl.UNDECIDED, hl.CLOSE_CALL)
    assert h.computed_major == "C/C=C/C" and h.rule_major == "C/C=C/C"  # the same alkene, and still no agreement
    sentence = verdict_sentence(h)
    assert sentence.startswith("UNDECIDED: the best barriers to C/C=C/C and C/C=C\\C lie within 1 kcal/mol")
    assert "AGREE" not in sentence.replace("UNDECIDED", "")
    box = headline_box(record)
    assert 'data-state="undecided"' in box and 'data-why-undecided="close call"' in box
    assert "verdict-agree" not in box and "verdict-disagree" not in box
    assert ".verdict-undecided .badge { background: #6b6b6b; }" in STYLE  # grey, not the green or red of a call
    # no path reaches its products: nothing decides, whatever the tops say
    lost = hl.job_headline(butene_job("ethoxide", 5.0, 10.0, 10.4, reaches=False))
    assert lost.computed_major == "C/C=C/C" and lost.paths_left_out == 1  # the lower 1-butene top is no barrier
    nothing = [beta("C0-H3", 3, approach("C=C", "unsubstituted", 5.0, reaches=False))]
    none = hl.job_headline(job(nothing, {"C=C": "major"}, "C=C"))
    assert (none.state, none.why_undecided, none.computed_major) == (hl.UNDECIDED, hl.NONE_REACHED, None)
    assert "no computed path reached its products" in verdict_sentence(none)
    # no paths at all: the rule's call stands alone, undecided
    bare = hl.job_headline(job([beta("C0-H3", 3, approach("C=C", "unsubstituted"))], {"C=C": "major"}, "C=C"))
    assert (bare.state, bare.why_undecided) == (hl.UNDECIDED, hl.NO_PATHS)


def test_a_free_energy_mix_reads_its_own_barriers():
    betas = [beta("C1-H5", 3, approach("C=CCC", "mono", 10.0, free=20.0)),
             beta("C3-H9", 1, approach("C/C=C/C", "di", 12.0, free=18.0, penalty=0.7))]
    record = job(betas, {"C/C=C/C": "major", "C=CCC": "minor"}, "C/C=C/C", energy_used="free")
    h = hl.job_headline(record)
    assert h.computed_major == "C/C=C/C" and h.gap_kcal_mol == pytest.approx(2.0) and h.state == hl.AGREE
    assert headline_sentences(h)["gap"].startswith("\u0394\u0394G\u2021 2.00 kcal/mol")


def test_two_bases_side_by_side_with_experiment_scored():
    ethoxide = butene_job("ethoxide", 12.0, 10.0, 11.5)  # trans clearly first
    tert_butoxide = butene_job("tert-butoxide", 10.0, 10.3, 11.0, bulky=True)  # 1-butene and trans within 1 kcal/mol
    other = bromoethane_job()  # another substrate with one job: no comparison
    experiments = {"2-bromobutane": {"ethoxide": ETHOXIDE_OBSERVED, "tert-butoxide": TERT_BUTOXIDE_OBSERVED}}
    (comparison,) = compare_substrates([ethoxide, other, tert_butoxide], experiments, lambda j: "alpb ethanol")
    assert comparison.substrate == "2-bromobutane" and [c.base for c in comparison.columns] == ["ethoxide", "tert-butoxide"]
    assert set(comparison.alkenes) == {"C=CCC", "C/C=C/C", "C/C=C\\C"}
    rows = {row.label.split(" (")[0] if row.key == "alkene" else row.label: row for row in comparison_rows(comparison)}
    assert rows["C/C=C/C"].label == "C/C=C/C ((E)-2-butene, 1,2-disubstituted)"  # a readable name beside the SMILES
    trans_cells = [cell.text for cell in rows["C/C=C/C"].cells]
    assert all(text.endswith("%") or ")" in text for text in trans_cells)
    assert rows["C=CCC"].cells[0].text.endswith("; exp. 19 %") and rows["C=CCC"].cells[1].text.endswith("; exp. 33 %")
    assert [c.kind for c in rows["rule against barriers"].cells] == [hl.AGREE, hl.UNDECIDED]
    ratio = math.exp(1.5 * 1000 * scipy.constants.calorie / (scipy.constants.R * T))
    assert rows["major to closest rival (kcal/mol)"].cells[0].text == f"\u0394\u0394E\u2021 1.50, {ratio:.0f} : 1"
    # ethoxide: trans-2-butene major and 1-butene within 20 points of 19 % (the benchmark's tolerance): right
    # tert-butoxide names no major, so its 1-butene share alone is judged: 79 % computed against 33 %, wrong
    assert [c.score.outcome for c in comparison.columns] == ["right", "wrong"]
    assert comparison.columns[1].score.reasons == ("C=CCC 79.2 % of alkenes, published 33 % (46.2 points off)",)
    assert comparison.columns[0].score.rule_outcome == "right"
    assert comparison.columns[1].score.rule_outcome == "not scored"
    text = "\n".join(comparison_text(comparison))
    assert "compared: 2-bromobutane (2 jobs" in text and "ethoxide" in text and "tert-butoxide" in text
    assert "J. G. Smith, Organic Chemistry" in text


def test_undecided_scores_count_as_not_right():
    # the observation names a major (trans-2-butene); a computed close call between E and Z is undecided
    close = butene_job("ethoxide", 12.0, 10.0, 10.4)
    score = score_experiment(close, ETHOXIDE_OBSERVED)
    assert score.outcome == "undecided" and score.rule_outcome == "right"
    (comparison,) = compare_substrates([close], {"2-bromobutane": {"ethoxide": ETHOXIDE_OBSERVED}}, lambda j: "gas phase")
    assert score_line(comparison).startswith("against experiment: computed right in 0 of 1 jobs (0 wrong, 1 undecided "
                                             "and counted as not right")


def test_the_committed_two_base_run_against_experiment():
    # BOOKKEEPING ON A FIXED RUN, NOT A CLAIM ABOUT GFN2-xTB: the scoring of the committed run of (S)-2-bromobutane
    # with ethoxide and tert-butoxide (tests/data/report-fixture/halobutane, v0.1.0, never recomputed). Both calls
    # lie within the method's uncertainty (the fixture's README), so neither counts as right. Its numbers predate
    # the fix that kept geminal hydrogens' labels through conformers (b46f90d): its (E)- and (Z)-2-butene saddles
    # carry each other's names, and both share verdicts sit within about one point of the 20-point limit (tert-
    # butoxide right at 18.9 points off, ethoxide 19.4 off), so this test checks how the limit is applied to
    # fixed numbers, with the points off in the reasons, and nothing about the chemistry.
    run = RunResult.model_validate_json((HALOBUTANE / "results.json").read_text(encoding="utf-8"))
    experiments = {"s-2-bromobutane": {"ethoxide": ETHOXIDE_OBSERVED, "tert-butoxide": TERT_BUTOXIDE_OBSERVED}}
    (comparison,) = compare_substrates(run.jobs, experiments, lambda j: "alpb ethanol")
    assert [c.headline.state for c in comparison.columns] == [hl.UNDECIDED, hl.UNDECIDED]
    ethoxide, tert_butoxide = comparison.columns
    assert ethoxide.score.outcome == "undecided"
    # no major given: judged on the 1-butene share alone, 51.9 % computed against 33 %, inside the 20 points
    one_butene = next(a.share for a in tert_butoxide.headline.alkenes if a.smiles == "C=CCC")
    assert one_butene == pytest.approx(0.519, abs=1e-3) and tert_butoxide.score.outcome == "right"
    assert [c.score.rule_outcome for c in comparison.columns] == ["right", "not scored"]
