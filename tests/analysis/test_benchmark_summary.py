"""The base-model comparison of the benchmark page (analysis/benchmark_summary.py, output/benchmark_tables.py).

BOOKKEEPING FIXTURES, NOT CHEMISTRY: job records from tests/support/benchmarkrecords.py with invented barriers;
the rate constant is a placeholder. These tests check counting and averaging rules only.
"""

from __future__ import annotations

from elimscan.analysis.benchmark_calibration import score_calibration
from elimscan.analysis.benchmark_cases import Molecule, RateCase
from elimscan.analysis.benchmark_scoring import score_case
from elimscan.analysis.benchmark_summary import rate_errors_kcal_mol, summarise_model
from elimscan.config import SolventConfig
from elimscan.output.benchmark_tables import model_rows

from benchmarkrecords import case, record


def _rate(k2: float) -> RateCase:
    """Return a bookkeeping SN2 rate case (placeholder k2, 298.15 K, seeds 1 and 2)."""
    return RateCase(id="rate", kind="rate", substrate=Molecule(name="s", smiles="CCBr"), base=Molecule(name="ethoxide"),
                    solvent=SolventConfig(), temperature_K=298.15, seeds=(1, 2), channel="SN2", k2_M_s=k2,
                    source="bookkeeping fixture", from_memory=False)


def test_a_model_line_counts_the_test_set_and_averages_the_rate_errors():
    right = record([("C3-H9", "anti", "C/C=C/C", 0.0, 1), ("C0-H5", "anti", "C=CCC", 3.0, 3)])
    close = record([("C3-H9", "anti", "C/C=C/C", 0.0, 1), ("C0-H5", "anti", "C=CCC", 0.2, 3)])
    scores = [score_case(case(major="C/C=C/C", seeds=(1, 2)), {1: right, 2: close}, (1, 2), ["dE"])]
    # SN2 electronic barriers of 10 and 12 kcal/mol over the two seeds against the placeholder k2
    jobs = {"rate": {1: record([("C3-H9", "anti", "C/C=C/C", 20.0, 1)], sn2=10.0),
                     2: record([("C3-H9", "anti", "C/C=C/C", 20.0, 1)], sn2=12.0)}}
    calibration = [score_calibration(_rate(1.0e-3), jobs, (1, 2))]
    errors = rate_errors_kcal_mol(calibration, "dE")
    assert len(errors) == 1  # one estimate: the mean over the two seeds
    line = summarise_model("alcohol-3", "dE", scores, calibration, n_jobs=4, n_jobs_finished=4)
    assert line.n_rates == 1 and abs(line.rate_mean_error_kcal_mol - errors[0]) < 1e-9
    assert line.rate_mean_abs_error_kcal_mol == abs(errors[0])
    # one seed right and one undecided: a split majority is undecided, and undecided is not right
    assert (line.counts.right, line.counts.undecided, line.counts.n) == (0, 1, 1)
    assert line.largest_spread_points is not None and line.largest_spread_points > 10
    rows = model_rows([line, summarise_model("bare", "dE", scores, [], 4, 2)], frozen="alcohol-3")
    assert rows[2].startswith("| `alcohol-3` (frozen) | GFN2-xTB dE | 0/1 | ") and f"{errors[0]:+.1f}" in rows[2]
    assert rows[3].startswith("| `bare` | GFN2-xTB dE |") and "| - |" in rows[3] and rows[3].endswith("| 2 of 4 |")


def test_no_rate_estimate_gives_no_error_rather_than_zero():
    line = summarise_model("bare", "dG", [], [], n_jobs=0, n_jobs_finished=0)
    assert line.rate_mean_error_kcal_mol is None and line.n_rates == 0 and line.largest_spread_points is None
    # no test case on the page (the calibration set only): counts are not shown as 0/0
    assert model_rows([line], frozen=None)[2].startswith("| `bare` | GFN2-xTB dG (quasi-RRHO, 1 M) | - | - | - | - | - |")
