"""A job's section of the report against the raw JSON: verdict box, barrier, share, ΔG‡ and character cells,
footnotes, isotope effects and the SN2 box; the JSON shares against the CODATA gas constant (scipy.constants).
"""

from __future__ import annotations

import inspect
import math
import re

import pytest
import scipy.constants

from elimscan.analysis.rule import compare_verdicts, fraction_ranges
from elimscan.output.html.page import render_report
from elimscan.output.plots.figures import BARRIER_SHIFT_KCAL_MOL
from elimscan.results.documents import RunResult

from reportfixture import ALL_RUNS, PRIMARY, RUNS, approaches, blank_plots, computed, elements, parse, raw, shown_barrier, shown_free, words_of


# --- barriers, shares and the verdict on the page ----------------------------------------------------


@pytest.mark.parametrize("run", RUNS)
def test_headline_box_states_the_json_verdict_in_three_states(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    seen = set()
    for section, job in zip(page.sections, doc["jobs"]):
        v = job["verdict"]
        boxes = elements(section, "div", "verdict")
        assert len(boxes) == 1
        box = boxes[0]
        assert section["elements"].index(box) == 0  # the first thing in the section after its heading
        # a call within the method's uncertainty is undecided: grey, never the green or red of a decided call
        state = ("undecided" if v["within_method_uncertainty"] or v["agreement"] is None
                 else "agree" if v["agreement"] else "disagree")
        assert box["attrs"]["data-state"] == state and f"verdict-{state}" in box["classes"]
        assert ("verdict-agree" in box["classes"] or "verdict-disagree" in box["classes"]) == (state != "undecided")
        assert (box["attrs"]["data-rule-major"], box["attrs"]["data-computed-major"]) == (v["rule_major"], v["computed_major"])
        # the words a reader sees say the same: the state's word, each computed share, why it is undecided
        assert f"{state.upper()} " in box["text"]
        for product in job["products"]:
            assert f"{product['smiles']} {100 * product['fraction']:.1f} %" in box["text"]
        if state == "undecided":
            assert box["attrs"]["data-why-undecided"] == "close call"
            assert "lie within 1 kcal/mol of each other, inside the method's uncertainty" in box["text"]
        assert f"Barriers against the rule: {v['reason']}." in box["text"]
        seen.add(state)
    # the fixtures hold the cases that matter
    assert {"halobutane": {"undecided"}, "ring": {"agree", "undecided"}}[run] == seen


def test_headline_names_substitution_first_when_it_is_the_main_channel(built):
    # bromoethane + methoxide: the committed run computed E2 2.8 % : SN2 97.2 % (the fixture's README)
    doc = raw(PRIMARY)
    (section,) = parse(built[PRIMARY]["report.html"].decode("utf-8")).sections
    (box,) = elements(section, "div", "verdict")
    assert box["attrs"]["data-main-channel"] == "SN2"
    sub = doc["jobs"][0]["substitution"]
    assert box["text"].startswith(f"Main channel: substitution (SN2), E2 {100 * sub['elimination_fraction']:.1f} % : "
                                  f"SN2 {100 * sub['substitution_fraction']:.1f} %")
    assert "minor channel" in box["text"] and "only one alkene can form" in box["text"]


@pytest.mark.parametrize("run", RUNS)
def test_barrier_cells_equal_the_json_values(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        cells = elements(section, "td", "barrier")
        expected = []
        for beta, name, approach in computed(job):
            expected += [(beta["class_id"], name, "relative", shown_barrier(approach["relative_barrier_kcal_mol"])),
                         (beta["class_id"], name, "absolute", shown_barrier(approach["barrier_kcal_mol"]))]
        found = [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"], c["attrs"]["data-kind"], c["text"])
                 for c in cells]
        assert found == expected
        # relative barriers: the job's lowest is 0.00, none below it
        relative = [a["relative_barrier_kcal_mol"] for _, _, a in computed(job)]
        assert min(relative) == 0.0 and "0.00" in [c["text"] for c in cells if c["attrs"]["data-kind"] == "relative"]
        # imaginary frequencies of verified saddles, as in the JSON
        verified = [a for _, _, a in computed(job) if a["saddle_verified"]]
        cells = elements(section, "td", "saddle-verified")
        assert len(cells) == len(verified)
        for cell, a in zip(cells, verified):  # the frequency, then a note number when the path is flagged
            assert re.fullmatch(re.escape(f"{a['imaginary_frequency_cm1']:.1f}i") + (r"\d+" if a["flags"] else ""), cell["text"])
        # approaches without a path say so
        missing = [(b["class_id"], n) for b, n, a in approaches(job) if a["path_status"] == "not computed"]
        assert [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"])
                for c in elements(section, "td", "saddle") if c["text"] == "not computed"] == missing


def test_every_unverified_saddle_is_marked_with_its_note(built):
    doc = raw("ring")
    page = parse(built["ring"]["report.html"].decode("utf-8"))
    total = 0
    for section, job in zip(page.sections, doc["jobs"]):
        unverified = [(b, n, a) for b, n, a in computed(job) if not a["saddle_verified"]]
        marked = elements(section, "td", "saddle-unverified")
        assert [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"]) for c in marked] == [
            (b["class_id"], n) for b, n, _ in unverified]
        notes = {e["attrs"]["id"]: e["text"] for e in section["elements"] if e["tag"] == "li" and "-note-" in e["attrs"].get("id", "")}
        for cell, (beta, name, approach) in zip(marked, unverified):
            assert cell["attrs"]["title"] == approach["saddle_note"]  # the tooltip
            assert cell["text"].startswith("unverified")
            if approach["imaginary_frequency_cm1"] is not None:
                assert cell["text"].endswith(f"{approach['imaginary_frequency_cm1']:.1f}i")
            # the footnote the cell points at names the class, the note, the barrier's source and the flags
            number = re.search(r"unverified(\d+)", cell["text"]).group(1)
            note = notes[f"{section['id']}-note-{number}"]
            assert note.startswith(f"{beta['class_id']} {name}: saddle not verified ({approach['saddle_note']})")
            assert approach["barrier_source"] == "relaxed-path maximum" and "relaxed-path maximum" in note
            assert all(flag in note for flag in approach["flags"])
            total += 1
    assert total == 2  # trans C5-H19 syn and cis C1-H11 syn (tests/data/report-fixture/README.md)


def test_flags_and_failed_paths_get_numbered_notes():
    doc = raw("halobutane")
    job = doc["jobs"][0]
    flagged = job["beta_hydrogens"][0]["anti"]  # a verified saddle, given a flag here
    flagged["flags"] = ["base bonded to C-alpha (SN2-like)"]
    failed = job["beta_hydrogens"][1]["syn"]  # a path that failed: no barrier, an error instead
    for key in ("barrier_kcal_mol", "relative_barrier_kcal_mol", "barrier_source", "relaxed_path_estimate_kcal_mol",
                "imaginary_frequency_cm1", "saddle_note", "path_file", "saddle_file"):
        failed[key] = None
    failed.update(path_status="failed", saddle_verified=False, path=[],
                  error={"error_type": "optimizer_failed", "error_message": "path point 7 did not converge"})
    page = parse(render_report(RunResult.model_validate(doc), blank_plots(doc)))
    section = page.sections[0]
    notes = [e["text"] for e in section["elements"] if e["tag"] == "li" and "-note-" in e["attrs"].get("id", "")]
    assert notes == [f"{job['beta_hydrogens'][0]['class_id']} anti: flags: base bonded to C-alpha (SN2-like).",
                     f"{job['beta_hydrogens'][1]['class_id']} syn: the path failed (optimizer_failed: path point 7 did "
                     "not converge)."]
    saddles = {(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"]): c["text"]
               for c in elements(section, "td", "saddle")}
    assert saddles[(job["beta_hydrogens"][0]["class_id"], "anti")] == f"{flagged['imaginary_frequency_cm1']:.1f}i1"
    assert saddles[(job["beta_hydrogens"][1]["class_id"], "syn")] == "failed2"
    # the failed path has no barrier cells, the others keep theirs
    assert len(elements(section, "td", "barrier")) == 2 * (len(computed(job)))


@pytest.mark.parametrize("run", RUNS)
def test_share_cells_are_the_json_fractions_and_add_up_to_100_percent(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        fractions = [p["fraction"] for p in job["products"]]
        # the Curtin-Hammett shares of one job add up to 1; each is rounded to 4 decimals in the JSON
        assert sum(fractions) == pytest.approx(1.0, abs=len(fractions) * 0.5e-4)
        cells = elements(section, "td", "share")
        assert [c["row"]["attrs"]["data-smiles"] for c in cells] == [p["smiles"] for p in job["products"]]
        shown = [float(re.match(r"([\d.]+) %", c["text"]).group(1)) for c in cells]
        assert shown == [round(100 * f, 1) for f in fractions]
        assert sum(shown) == pytest.approx(100.0, abs=len(shown) * 0.05)
        ranges = elements(section, "td", "share-range")
        for cell, product in zip(ranges, job["products"]):
            low, high = product["fraction_range"]
            assert cell["text"] == f"{100 * low:.1f}\u2013{100 * high:.1f} %"
            assert low <= product["fraction"] <= high
        # the computed major carries the tag, and only it
        tagged = [c["row"]["attrs"]["data-smiles"] for c in cells if "computed major" in c["text"]]
        assert tagged == [job["verdict"]["computed_major"]]


@pytest.mark.parametrize("run", RUNS)
def test_json_shares_are_a_curtin_hammett_mix_of_the_barriers(run):
    # independent recomputation: weight = degeneracy x exp(-dE/RT) per path, summed per alkene (Curtin-Hammett:
    # J. I. Seeman, Chem. Rev. 1983, 83, 83, from memory), R from CODATA via scipy.constants, 1 kcal = 4184 J
    # (thermochemical calorie). Barriers are rounded to 3 decimals in the JSON, shares to 4: hence the tolerance.
    rt = scipy.constants.R * raw(run)["config"]["method"]["temperature_K"] / 4184.0
    for job in raw(run)["jobs"]:
        paths = [(a["product_smiles"], a["barrier_kcal_mol"], b["degeneracy"]) for b, _, a in computed(job)]

        def shares(shift):
            weights = {}
            for smiles, barrier, degeneracy in paths:
                weights[smiles] = weights.get(smiles, 0.0) + degeneracy * math.exp(-(barrier + shift(smiles)) / rt)
            return {k: w / sum(weights.values()) for k, w in weights.items()}

        mix = shares(lambda smiles: 0.0)
        for product in job["products"]:
            assert product["fraction"] == pytest.approx(mix[product["smiles"]], abs=1e-3), product["smiles"]
            s = product["smiles"]
            low = shares(lambda x: BARRIER_SHIFT_KCAL_MOL if x == s else -BARRIER_SHIFT_KCAL_MOL)[s]
            high = shares(lambda x: -BARRIER_SHIFT_KCAL_MOL if x == s else BARRIER_SHIFT_KCAL_MOL)[s]
            assert product["fraction_range"] == pytest.approx([low, high], abs=1e-3), s


def test_the_report_states_the_shift_that_analysis_uses():
    # the page prints BARRIER_SHIFT_KCAL_MOL; results.json does not carry it, analysis has it as defaults
    assert inspect.signature(fraction_ranges).parameters["delta_kcal_mol"].default == BARRIER_SHIFT_KCAL_MOL
    assert inspect.signature(compare_verdicts).parameters["close_kcal_mol"].default == BARRIER_SHIFT_KCAL_MOL


# --- free energies, saddle character, isotope effects and substitution ------------------------------


def test_primary_fixture_holds_the_new_fields():
    # the tests below would pass vacuously on a run without these fields
    job = raw(PRIMARY)["jobs"][0]
    assert [a["barrier_free_energy_kcal_mol"] is not None for _, _, a in computed(job)] == [True]
    assert any(a["saddle_character"] for _, _, a in approaches(job))
    assert sum(len(b["isotope_effects"]) for b in job["beta_hydrogens"]) == 2
    assert job["substitution"]["path_status"] == "ok" and job["energy_used"] == "electronic"


@pytest.mark.parametrize("run", ALL_RUNS)
def test_free_barrier_and_character_cells_equal_the_json(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        found = [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"], c["text"])
                 for c in elements(section, "td", "free-barrier")]
        assert found == [(b["class_id"], n, shown_free(a.get("barrier_free_energy_kcal_mol"))) for b, n, a in approaches(job)]
        labels = [(c["row"]["attrs"]["data-class"], c["attrs"]["data-approach"], c["text"])
                  for c in elements(section, "td", "character")]
        assert labels == [(b["class_id"], n, a["saddle_character"]["label"] if a.get("saddle_character") else "\u2014")
                          for b, n, a in approaches(job)]


@pytest.mark.parametrize("run", ALL_RUNS)
def test_isotope_table_lists_every_isotope_effect_of_the_json(run, built):
    doc = raw(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        rows = [[e["text"] for e in section["elements"] if e["tag"] == "td" and e["row"] is r]
                for r in elements(section, "tr", "kie-row")]
        expected = [[b["class_id"], k["approach"], k["label"], ", ".join(str(i + 1) for i in k["deuterated_indices0"]),
                     f"{k['kh_kd']:.2f}", f"{k['kh_kd_wigner']:.2f}", f"{k['temperature_K']:g}"]
                    for b in job["beta_hydrogens"] for k in b.get("isotope_effects", ())]
        assert rows == expected
        assert bool(expected) == (run == PRIMARY)
    # the one sentence that explains the table is there exactly when a table is
    words = words_of(built[run]["report.html"].decode("utf-8"))
    assert ("compare them with your own labelling experiments" in words) == (run == PRIMARY)


def test_isotope_effects_of_the_fixture_are_primary_and_semiclassical():
    # a primary H/D effect is above 1, below the semiclassical ceiling of about 7 at 298 K without tunnelling
    # (Westheimer, Chem. Rev. 1961, 61, 265, from memory); Wigner's correction 1 + (h nu / kT)^2 / 24 (Wigner,
    # Z. Phys. Chem. B 1932, 19, 203, from memory) is larger for H than for D, so it can only raise k_H/k_D
    for beta in raw(PRIMARY)["jobs"][0]["beta_hydrogens"]:
        for k in beta["isotope_effects"]:
            assert 1.0 < k["kh_kd"] < 7.5 and k["kh_kd_wigner"] > k["kh_kd"], k


def test_substitution_box_shows_the_json_split_and_call(built):
    doc = raw(PRIMARY)
    page = parse(built[PRIMARY]["report.html"].decode("utf-8"))
    for section, job in zip(page.sections, doc["jobs"]):
        sub = job["substitution"]
        boxes = elements(section, "div", "sn2")
        assert len(boxes) == 1
        box = boxes[0]
        assert (box["attrs"]["data-elimination"], box["attrs"]["data-substitution"]) == (
            f"{sub['elimination_fraction']:.4f}", f"{sub['substitution_fraction']:.4f}")
        assert sub["elimination_fraction"] + sub["substitution_fraction"] == pytest.approx(1.0, abs=1e-4)
        split = f"E2 {100 * sub['elimination_fraction']:.1f} % : SN2 {100 * sub['substitution_fraction']:.1f} %"
        assert f"Computed split {split}" in box["text"]
        assert f"Textbook call {sub['rule_call']} {sub['rule_reason']}" in box["text"]
        assert box["attrs"]["data-rule-call"] == sub["rule_call"]
        assert f"SN2 product {sub['product_smiles']}" in box["text"]
        assert f"\u0394E\u2021 (kcal/mol) {shown_barrier(sub['barrier_kcal_mol'])}" in box["text"]
        assert f"\u0394G\u2021 (kcal/mol) {shown_free(sub['barrier_free_energy_kcal_mol'])}" in box["text"]
        assert ("verified saddle" in box["text"]) == sub["saddle_verified"] and sub["saddle_note"] in box["text"]
        # the textbook's call for a primary C-alpha and a small base (common practice): substitution wins
        assert sub["rule_call"] == "substitution" and sub["substitution_fraction"] > sub["elimination_fraction"]
    # runs without substitution show no box
    for run in RUNS:
        assert all(elements(s, "div", "sn2") == [] for s in parse(built[run]["report.html"].decode("utf-8")).sections)
