"""validation/core_correction.py: the probe of the registered two-layer level correction judges its rows by the rule
registered in validation/model-freeze.yaml (mean |dG++ error| of the four rates below 3 kcal/mol, and no rate worse
than at GFN2-xTB), and cuts a cluster geometry to its substrate + alkoxide core.

BOOKKEEPING ROWS, NOT CHEMISTRY: the barriers below are invented to put the verdict on each side of the rule.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from ase.build import molecule

from scriptmodules import loaded_script  # tests/support

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def probe():
    with loaded_script(ROOT / "validation" / "core_correction.py", "core_correction") as module:
        yield module


def _rows(corrected_errors: list[float], gfn2_errors: list[float]) -> list[dict]:
    return [{"case": f"rate-{i}", "seed": 1, "paths": 1, "measured": 24.0, "gfn2": 24.0 + g, "corrected": 24.0 + c}
            for i, (c, g) in enumerate(zip(corrected_errors, gfn2_errors))]


def test_the_probe_page_judges_by_the_registered_rule(probe):
    passing = probe.page(_rows([-2.0, 1.5, -2.5, 2.9], [-6.2, -9.7, -9.1, -8.0]), "wb97x-3c", 1)
    assert "**passes**" in passing and "rates whose error grew: none" in passing
    worse = probe.page(_rows([-2.0, 1.5, -2.5, 0.5], [-6.2, -9.7, -9.1, -0.3]), "wb97x-3c", 1)  # one rate got worse
    assert "**fails**" in worse and "rates whose error grew: rate-3" in worse
    too_far = probe.page(_rows([-4.0, -3.5, -2.5, -2.9], [-6.2, -9.7, -9.1, -8.0]), "wb97x-3c", 1)  # mean 3.2
    assert "**fails**" in too_far
    unfinished = probe.page(_rows([-2.0, 1.5, -2.5], [-6.2, -9.7, -9.1]), "wb97x-3c", 1)
    assert "not judged" in unfinished


def test_the_core_is_the_substrate_and_the_base_of_a_cluster(probe):
    substrate, base, alcohol = molecule("CH3CH2Cl"), molecule("CH3O"), molecule("CH3OH")
    cluster = substrate + base + alcohol + alcohol  # a complex: the substrate, then the base model (base first)
    core = probe._core(cluster, len(substrate), len(base))
    assert core.get_chemical_formula() == (substrate + base).get_chemical_formula()
    assert probe._seed("alcohol-3-embedded--seed2-alpb-ethanol-328.15K") == 2 and probe._seed("bare-run") is None
    assert probe.summed_barrier_kcal_mol([(10.0, 1)], 300.0) == pytest.approx(10.0)
    # two equal paths: the channel is RT ln 2 lower than either
    assert probe.summed_barrier_kcal_mol([(10.0, 1), (10.0, 1)], 300.0) == pytest.approx(
        10.0 - 0.0019872 * 300.0 * 0.6931, abs=1e-3)


def test_the_registered_selection_is_the_lowest_path_of_each_product(probe):
    from elimscan.analysis.rule import PathBarrier

    paths = [PathBarrier("C1-H5", "anti", "C=CC", 5.3, 6), PathBarrier("C1-H5", "syn", "C=CC", 7.8, 6),
             PathBarrier("C3-H9", "anti", "C/C=C/C", 6.1, 1), PathBarrier("C3-H10", "anti", "C/C=C/C", 5.9, 1)]
    chosen = probe._lowest_per_product(paths)
    assert sorted((p.class_id, p.approach) for p in chosen) == [("C1-H5", "anti"), ("C3-H10", "anti")]
