"""The kernel sweep's reading of pytest's JUnit XML and its comparison of two demo results (no computation)."""

from __future__ import annotations

import importlib.util
from pathlib import Path

SCRIPT = Path(__file__).resolve().parent.parent / "benchmarks" / "kernel_sweep.py"
spec = importlib.util.spec_from_file_location("kernel_sweep", SCRIPT)
sweep = importlib.util.module_from_spec(spec)
spec.loader.exec_module(sweep)

JUNIT = """<?xml version="1.0" encoding="utf-8"?><testsuites><testsuite name="pytest">
<testcase classname="tests.drivers.test_a" name="test_ok" time="1.0"/>
<testcase classname="tests.test_a" name="test_bad" time="1.0"><failure message="assert 20 &lt; 20">x</failure></testcase>
<testcase classname="tests.test_b" name="test_known" time="1.0"><skipped type="pytest.xfail" message="measured 4.4"/></testcase>
<testcase classname="tests.test_b" name="test_gone" time="0.0"><skipped type="pytest.skip" message="no chromium"/></testcase>
</testsuite></testsuites>"""


def test_junit_outcomes_are_read_per_test(tmp_path):
    xml = tmp_path / "own.xml"
    xml.write_text(JUNIT)
    # keyed by the file's own name: tests.drivers.test_a and tests.test_a are the same test after a move
    assert sweep.outcomes(xml) == {"test_a::test_ok": "passed", "test_a::test_bad": "failed",
                                   "test_b::test_known": "xfailed", "test_b::test_gone": "skipped"}


def test_a_demo_comparison_reports_the_largest_moves_and_a_flipped_call():
    a = {"x + y": {"shares": {"C=CC": 60.0, "CC=C": 40.0}, "barriers": {"C1-H4 anti": 10.0, "C3-H9 anti": 11.0},
                   "call": "agree"}}
    b = {"x + y": {"shares": {"C=CC": 48.5, "CC=C": 51.5}, "barriers": {"C1-H4 anti": 10.4, "C3-H9 anti": 10.9},
                   "call": "undecided"}}
    (line,) = sweep.compare_demo(a, b)
    assert "up to 0.40 kcal/mol over 2 paths" in line and "up to 11.5 points" in line
    assert line.endswith("call agree -> undecided")
    assert sweep.compare_demo(a, a) == ["  x + y: barriers move up to 0.00 kcal/mol over 2 paths, shares up to 0.0 points"]


def test_verdicts_are_called_in_three_states():
    assert sweep.verdict_call({"agreement": True, "within_method_uncertainty": True}) == "undecided"
    assert sweep.verdict_call({"agreement": False, "within_method_uncertainty": False}) == "disagree"
    assert sweep.verdict_call({"agreement": True, "within_method_uncertainty": False}) == "agree"
    assert sweep.verdict_call(None) == "none"
