"""The frozen base model's product mixes on the benchmark's test cases against published outcomes (issue 17 item 5).

Like tests/test_frozen_model_literature.py these read the numbers validation/validate.py wrote with the frozen
model's fast benchmark page (``elimscan/data/benchmark_record.json``, entry VALIDATION-fast.md; pinned, so that the
measured numbers below stay the ones read): three seeds per case, recomputing them would take about an hour. The
published values are carried here with their sources. A check that fails against its cited value becomes a strict
expected failure carrying the measured numbers.
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest
import scipy.constants as sc
import yaml

from elimscan.analysis.rule import METHOD_UNCERTAINTY_KCAL_MOL
from elimscan.output.files import load_benchmark_record

ROOT = Path(__file__).resolve().parents[1]
#: the levels the benchmark scores without the DFT tier: GFN2-xTB electronic and quasi-RRHO free barriers
LEVELS = ("dE", "dG")

#: 2-bromobutane + sodium ethoxide in ethanol: 81 % 2-butenes, i.e. 19 % 1-butene of the alkenes (J. G. Smith,
#: Organic Chemistry, 5th ed., problem 11.43, as seen); the issue's bound on the computed 1-butene share is 35 %
BUTENE_CASE = "2-bromobutane-ethoxide"
ONE_BUTENE, E_2_BUTENE, Z_2_BUTENE = "C=CCC", "C/C=C/C", "C/C=C\\C"
ONE_BUTENE_BOUND = 0.35


#: the page whose numbers these tests read
PAGE = "VALIDATION-fast.md"


def _page() -> dict:
    """Return the record's entry of the frozen model's fast benchmark page."""
    record = load_benchmark_record()
    assert record is not None and PAGE in record["pages"], f"no {PAGE} in elimscan/data/benchmark_record.json"
    return record["pages"][PAGE]


def _level(case: str, level: str) -> dict:
    """Return one test case's entry at one level (majority outcome, per-seed outcomes, mean shares 0-1, spread)."""
    return _page()["cases"][case]["levels"][level]


def test_the_page_is_the_frozen_models_with_every_seed_of_the_case():
    entry = _page()
    frozen = yaml.safe_load((ROOT / "validation" / "model-freeze.yaml").read_text())["base_model"]
    assert entry["base_model"] == frozen and len(entry["seeds"]) == 3, entry["page"]
    for level in LEVELS:
        outcomes = _level(BUTENE_CASE, level)["seed_outcomes"]
        assert len(outcomes) == 3 and "not computed" not in outcomes, (level, outcomes)


#: measured 2026-12-05 (validation/VALIDATION-fast.md, three seeds, code 877a7f8 and archived jobs of 6cd6088/8644187)
MEASURED = "validation/VALIDATION-fast.md, 2026-12-05, three seeds"


@pytest.mark.parametrize("level", [
    pytest.param("dE", marks=pytest.mark.xfail(strict=True, raises=AssertionError, reason=(
        f"measured ({MEASURED}): 1-butene 4.2, 16.9 and 38.5 % of the alkenes at dE in seeds 1-3 against at most "
        "35 % (published 19 %): seed 3 is over the bound (the mean, 19.9 %, passed; one seed in three above the "
        "bound with a spread of 34 points is no check on the mean)"))),
    pytest.param("dG", marks=pytest.mark.xfail(strict=True, raises=AssertionError, reason=(
        f"measured ({MEASURED}): 1-butene 10.0, 18.5 and 79.7 % of the alkenes at dG (quasi-RRHO) in seeds 1-3 "
        "against at most 35 % (published 19 %): seed 3 puts 1-butene on top; mean 36.1 %")))])
def test_one_butene_is_a_minor_product_of_2_bromobutane_in_every_seed(level):
    # Zaitsev with a small base: 19 % 1-butene published; the issue asks for at most 35 %. Judged seed by seed (as
    # the E/Z test below): a mean that passes while one seed of three fails rests on the seeds' spread
    for shares in _level(BUTENE_CASE, level)["seed_shares"]:
        assert shares is not None, level
        alkenes = sum(v for k, v in shares.items() if k != "substitution")
        assert alkenes > 0 and shares.get(ONE_BUTENE, 0.0) / alkenes <= ONE_BUTENE_BOUND, (level, shares)


#: the least share of the (E) isomer among the 2-butenes that counts as "E major" in a seed: the share that puts
#: the (Z) isomer's effective barrier (its paths Boltzmann-summed) the method's uncertainty above the (E)'s at
#: 298.15 K. That is elimscan's 1 kcal/mol close call applied to effective barriers, as validation/model-freeze.yaml
#: registers it for the next freeze (this freeze's pages compare best single paths); a smaller lead is no call
E_OF_2_BUTENES_LEAST = 1.0 / (1.0 + math.exp(-METHOD_UNCERTAINTY_KCAL_MOL / (sc.R * 298.15 / sc.calorie / 1e3)))


@pytest.mark.parametrize("level", [
    pytest.param("dE", marks=pytest.mark.xfail(strict=True, raises=AssertionError, reason=(
        f"measured ({MEASURED}): (E) 86.1, 79.3 and 92.9 % of the 2-butenes at dE in seeds 1-3 against at least "
        "84.4 % (a 1 kcal/mol lead): seed 2's lead is 0.79 kcal/mol, inside the close call"))),
    pytest.param("dG", marks=pytest.mark.xfail(strict=True, raises=AssertionError, reason=(
        f"measured ({MEASURED}): (E) 90.1, 94.0 and 76.4 % of the 2-butenes at dG in seeds 1-3 against at least "
        "84.4 % (a 1 kcal/mol lead): seed 3's lead is 0.70 kcal/mol, inside the close call")))])
def test_trans_2_butene_is_the_major_2_butene_in_every_seed(level):
    # the E alkene major among the 2-butenes: from memory, not seen in a source with numbers (validation/cases.yaml;
    # the paper it was cited to, Brown & Klimisch, J. Am. Chem. Soc. 1966, 88, 1425, covers potassium tert-butoxide
    # only); judged seed by seed on the 2-butenes alone, so that a seed's swing toward 1-butene is not read as an E/Z
    # swing. The least share was 60 % (0.24 kcal/mol, well inside the tool's own close call) until 2026-12-05, when
    # a review found it let seeds count as "E major" that elimscan itself would call undecided
    for shares in _level(BUTENE_CASE, level)["seed_shares"]:
        assert shares is not None, level
        e, z = shares.get(E_2_BUTENE, 0.0), shares.get(Z_2_BUTENE, 0.0)
        assert e + z > 0 and e / (e + z) >= E_OF_2_BUTENES_LEAST, (level, shares)
