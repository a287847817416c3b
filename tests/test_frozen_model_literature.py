"""The frozen base model's calibration numbers against published values (issue 17 item 5, issue 18's goals).

The default base model of an alkoxide in its alcohol (``alcohol-3-embedded``, validation/model-freeze.yaml) is too
costly to recompute in the test suite (about 8 minutes per job and seed on two cores): these tests read the
numbers validation/validate.py wrote with the calibration page (``elimscan/data/benchmark_record.json``: every seed,
the commit that wrote them named in the entry). The published values are carried here with their sources. A
check that fails is a strict expected failure carrying the measured numbers; the goals are those of the issue:
free barriers within 3 kcal/mol of the measured rate constants and electronic barriers above zero, isotope effects
within 25 %, the Hammett rho within 0.7.
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest
import scipy.constants as sc
import yaml

from elimscan.analysis.benchmark_record import CALIBRATION_PAGE
from elimscan.output.files import load_benchmark_record

ROOT = Path(__file__).resolve().parents[1]

#: second-order rate constants, ethoxide in ethanol: (k2 / M^-1 s^-1, T / K, channel). Hughes, Ingold and
#: co-workers' alkyl bromides at 55 °C as tabulated in Ingold, Structure and Mechanism in Organic Chemistry, 2nd
#: ed., 1969 (from memory); 2-phenylethyl bromide near 30 °C: Saunders & Edison, J. Am. Chem. Soc. 1960, 82, 138
#: (from memory, "of order 1e-3")
RATES = {"ethyl-bromide-ethoxide-sn2-rate": (1.72e-3, 328.15, "SN2"),
         "isopropyl-bromide-ethoxide-e2-rate": (7.6e-5, 328.15, "E2"),
         "tert-butyl-bromide-ethoxide-e2-rate": (5.0e-4, 328.15, "E2"),
         "phenethyl-bromide-ethoxide-e2-rate": (1.0e-3, 303.15, "E2")}
#: k_H/k_D: PhCD2CH2Br + EtO- (Saunders & Edison, J. Am. Chem. Soc. 1960, 82, 138; from memory) and (CD3)2CHBr +
#: EtO- (Shiner, J. Am. Chem. Soc. 1952, 74, 5285; from memory)
ISOTOPE_EFFECTS = {"phenethyl-bromide-d2-kie": 7.1, "isopropyl-bromide-d6-kie": 6.7}
#: rho of para-X 2-arylethyl bromides + EtO- in ethanol (DePuy & Bishop, J. Am. Chem. Soc. 1960, 82, 2532; from memory)
RHO = 2.1


def _entry() -> dict:
    """Return the calibration page's entry of the package's benchmark record."""
    record = load_benchmark_record()
    assert record is not None, "elimscan/data/benchmark_record.json is missing: make calibration writes it"
    return record["pages"][CALIBRATION_PAGE]


def _estimate(case: str, label: str) -> dict:
    """Return one estimate (per-seed values, mean, spread, error) of a calibration case."""
    return _entry()["calibration"][case]["estimates"][label]


def eyring_kcal_mol(k2_per_M_per_s: float, temperature_K: float) -> float:
    """Return the free barrier (kcal/mol, 1 M standard state) of a second-order rate constant by Eyring's equation."""
    return sc.R * temperature_K * math.log(sc.k * temperature_K / (sc.h * k2_per_M_per_s)) / sc.calorie / 1e3


def test_the_record_holds_every_seed_of_the_frozen_model():
    entry = _entry()
    frozen = yaml.safe_load((ROOT / "validation" / "model-freeze.yaml").read_text())["base_model"]
    assert entry["base_model"] == frozen
    assert entry["jobs_finished"] == entry["jobs"] and len(entry["seeds"]) == 3, entry
    for case in (*RATES, *ISOTOPE_EFFECTS):
        for estimate in entry["calibration"][case]["estimates"].values():
            assert None not in estimate["per_seed"] and len(estimate["per_seed"]) == 3, (case, estimate)


def test_the_measured_free_barriers_are_eyrings():
    # an independent conversion (CODATA constants from scipy) of the rate constants the page compares with
    for case, (k2, temperature, _) in RATES.items():
        kept = _entry()["calibration"][case]
        assert kept["temperature_K"] == temperature
        assert kept["measured"] == pytest.approx(eyring_kcal_mol(k2, temperature), abs=0.01), case


def test_electronic_barriers_of_the_rates_lie_above_zero():
    # issue 18: "dE above zero everywhere" (a base too reactive meets the substrate without a barrier); checked on
    # the four rates, each seed with 0.5 kcal/mol of margin (measured 2026-12-05: seed means 2.7-5.0). Not on the
    # Hammett series: its 4-nitro member's syn saddle lies 4-5 kcal/mol below zero (docs/validation.md)
    for case, (_, _, channel) in RATES.items():
        values = _estimate(case, f"{channel} dE")["per_seed"]
        assert min(values) > 0.5, (case, values)


@pytest.mark.xfail(strict=True, raises=AssertionError, reason=(
    "measured (validation/CALIBRATION.md, 2026-12-05, three seeds, code 8644187, scipy 1.16.3): dG++ bromoethane SN2 "
    "17.24 against 23.42, 2-bromopropane E2 15.76 against 25.46, tert-butyl bromide E2 15.18 against 24.23, "
    "2-phenylethyl bromide E2 13.87 against 21.92 kcal/mol: 6.2-9.7 kcal/mol too low at GFN2-xTB"))
def test_free_barriers_match_the_measured_rates():
    for case, (k2, temperature, channel) in RATES.items():
        mean = _estimate(case, f"{channel} dG")["mean"]
        assert abs(mean - eyring_kcal_mol(k2, temperature)) <= 3.0, (case, mean)


@pytest.mark.parametrize("case", [
    pytest.param("phenethyl-bromide-d2-kie", marks=pytest.mark.xfail(strict=True, raises=AssertionError, reason=(
        "measured (validation/CALIBRATION.md, 2026-12-05, three seeds, code 8644187): harmonic k_H/k_D per seed "
        "5.219, 5.456, 5.348 against 7.1: seed 1 is 26.5 % low, outside the 25 % (the mean, 5.34 or 24.8 % low, "
        "lay inside by 0.2 points, against a spread over the seeds of 3.3 points, 0.24 in k_H/k_D); with "
        "Wigner's tunnelling correction 6.04-6.53"))),
    "isopropyl-bromide-d6-kie"])
def test_isotope_effect_matches_experiment_in_every_seed(case):
    # harmonic Bigeleisen-Mayer k_H/k_D within 25 % of the measured value in each of the three seeds, not only on
    # their mean: a mean inside by less than the seeds' spread is a knife-edge. Measured 2026-12-05: the d6 case
    # 5.165-5.438 against 6.7 (worst 22.9 % low)
    measured = ISOTOPE_EFFECTS[case]
    values = _estimate(case, "harmonic")["per_seed"]
    assert all(abs(v - measured) <= 0.25 * measured for v in values), (case, values)


@pytest.mark.xfail(strict=True, raises=AssertionError, reason=(
    "measured (validation/CALIBRATION.md, 2026-12-05, three seeds): rho +5.13 (dG++; seeds spread 1.38) against +2.1; "
    "the 4-nitro member's only barrier is a carbanion-like syn saddle (its anti path never reaches the alkene)"))
def test_hammett_rho_matches_experiment():
    mean = _estimate("phenethyl-bromide-hammett", "rho dG")["mean"]
    assert abs(mean - RHO) <= 0.7, mean
