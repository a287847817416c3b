"""Counting the electronic barriers above zero over finished jobs (analysis/barrierfloor.py) and its page section.

BOOKKEEPING FIXTURES, NOT CHEMISTRY: the job records come from ``record`` in tests/support/benchmarkrecords.py
(invented barriers, some below zero on purpose); what is checked is which paths are counted and how they are named.
"""

from __future__ import annotations

from elimscan.analysis.barrierfloor import barrier_floor
from elimscan.output.benchmark_floor import LISTED, floor_section
from elimscan.results.flags import NOT_TO_PRODUCTS

from benchmarkrecords import record  # bookkeeping job records (tests/support)


def test_every_counted_path_is_read_once_and_the_ones_at_or_below_zero_are_named_lowest_first():
    below = record([("C3-H9", "anti", "C/C=C/C", 2.0, 1), ("C0-H5", "syn", "C=CCC", -1.5, 3),
                    # no barrier: its path never reached the alkene, so its top is not counted, however low
                    ("C3-H10", "anti", "C/C=C\\C", -9.0, 1, [NOT_TO_PRODUCTS])], sn2=0.0)
    above = record([("C3-H9", "anti", "C/C=C/C", 4.0, 1)], sn2=3.0)
    # the same job serving two case slots (a test case and a series member) is read once
    floor = barrier_floor({"case-a": {1: below, 2: above}, "series:member": {1: below}})
    assert (floor.n_jobs, floor.n_paths, floor.n_above_zero, floor.n_left_out) == (2, 5, 3, 1)
    assert [(b.slot, b.seed, b.path, b.barrier_kcal_mol) for b in floor.at_or_below_zero] == [
        ("case-a", 1, "C0-H5 syn to C=CCC", -1.5), ("case-a", 1, "SN2", 0.0)]  # zero is not above zero


def test_the_section_counts_above_and_below_and_lists_at_most_a_dozen():
    none_low = barrier_floor({"case-a": {1: record([("C3-H9", "anti", "C/C=C/C", 2.0, 1)])}})
    text = "\n".join(floor_section(none_low))
    assert "of the 1 counted paths" in text and "**1 lie above zero**" in text and "**0 at or below zero**." in text
    assert "| case slot |" not in text and "left out" not in text
    # a path left out as no barrier is counted beside the paths, not among them
    gone = record([("C3-H9", "anti", "C/C=C/C", 2.0, 1), ("C3-H10", "anti", "C/C=C\\C", -9.0, 1, [NOT_TO_PRODUCTS])])
    said = "\n".join(floor_section(barrier_floor({"case-a": {1: gone}})))
    assert "**1 lie above zero**" in said and "1 more path(s) were left out as no barrier" in said
    # copies of one job (the same job key) serving two slots count once
    copy = {**gone, "job_key": "k1"}
    assert barrier_floor({"a": {1: copy}, "b": {1: dict(copy)}}).n_paths == 1
    many = {f"case-{i:02d}": {1: record([("C3-H9", "anti", "C/C=C/C", -0.1 * (i + 1), 1)])} for i in range(LISTED + 3)}
    lines = floor_section(barrier_floor(many))
    rows = [line for line in lines if line.startswith("| case-")]
    assert len(rows) == LISTED and rows[0] == "| case-14 | 1 | C3-H9 anti to C/C=C/C | -1.50 |"
    assert lines[-1] == "… and 3 more, the highest -0.10 kcal/mol."
    assert floor_section(barrier_floor({})) == []
