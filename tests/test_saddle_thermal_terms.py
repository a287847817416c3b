"""validation/saddle_thermal_terms.py: the split of the E2 - SN2 thermal term, and which saddles it compares.

The split is checked against hand arithmetic on the thermochemistry of two sets of real frequencies (ZPE =
h c Σν / 2, CODATA 2018 constants through ASE); the job records are BOOKKEEPING FIXTURES, NOT CHEMISTRY (invented
barriers that decide which saddle is chosen).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from ase.build import molecule

from elimscan.analysis.thermo import thermochemistry
from elimscan.results.flags import NOT_TO_PRODUCTS

from scriptmodules import loaded_script  # tests/support

ROOT = Path(__file__).resolve().parents[1]
H_C_CM_KCAL_MOL = 6.62607015e-34 * 2.99792458e10 * 6.02214076e23 / 4184.0  # kcal/mol per cm^-1 (CODATA 2018)


@pytest.fixture(scope="module")
def tool():
    with loaded_script(ROOT / "validation" / "saddle_thermal_terms.py", "saddle_thermal_terms") as module:
        yield module


def test_the_split_adds_up_and_its_zpe_is_half_h_c_sum_nu(tool):
    atoms = molecule("CH3CH2OH")
    stiff = np.linspace(300.0, 3000.0, 3 * len(atoms) - 6)
    soft = stiff.copy()
    soft[-1] = 1200.0  # a 3000 cm^-1 stretch turned into a 1200 cm^-1 mode: 1800 cm^-1 less, 2.57 kcal/mol of ZPE
    e2 = thermochemistry(atoms, soft, -10.0, 328.15)
    sn2 = thermochemistry(atoms, stiff, -10.001, 328.15)
    d = tool.thermal_split_kcal_mol(e2, sn2)
    assert d["zpe"] == pytest.approx(-0.5 * 1800.0 * H_C_CM_KCAL_MOL, rel=1e-4)
    assert d["electronic"] == pytest.approx(0.001 * 627.5094740631, rel=1e-6)
    assert d["zpe"] + d["heat"] + d["minus_TS"] == pytest.approx(d["thermal"], abs=1e-9)
    # heat content above the ZPE of the one changed mode, by hand: h c nu / (exp(x) - 1) at x = h c nu / kT
    kt_cm = 0.6950348 * 328.15  # kT in cm^-1 (Boltzmann constant 0.6950348 cm^-1/K, CODATA 2018)
    heat = [nu / np.expm1(nu / kt_cm) for nu in (1200.0, 3000.0)]
    assert d["heat"] == pytest.approx((heat[0] - heat[1]) * H_C_CM_KCAL_MOL, rel=1e-3)
    # -T S of that mode (harmonic above the 100 cm^-1 switch): -RT [x/(e^x - 1) - ln(1 - e^-x)]
    rt = 8.314462618 / 4184.0 * 328.15
    s_over_r = [x / np.expm1(x) - np.log1p(-np.exp(-x)) for x in (1200.0 / kt_cm, 3000.0 / kt_cm)]
    assert d["minus_TS"] == pytest.approx(-rt * (s_over_r[0] - s_over_r[1]), rel=1e-2)


def _block(barrier, verified=True, flags=()):
    return {"path_status": "ok", "barrier_kcal_mol": barrier, "saddle_verified": verified, "flags": list(flags)}


def test_the_lowest_verified_e2_saddle_that_is_a_barrier_is_compared_with_the_sn2_one(tool):
    job = {"beta_hydrogens": [
        {"class_id": "C1-H4", "anti": _block(5.0), "syn": _block(2.0, verified=False)},
        {"class_id": "C2-H7", "anti": _block(1.0, flags=(NOT_TO_PRODUCTS,)), "syn": _block(4.0)}],
        "substitution": _block(3.0)}
    # the unverified syn saddle and the path that does not reach its products are left out
    assert tool.saddle_names(job) == ("saddle-C2-H7-syn", "saddle-substitution-backside")
    assert tool.saddle_names({**job, "substitution": _block(3.0, verified=False)}) is None
    # an SN2 path that does not reach its products is no barrier: nothing to compare
    assert tool.saddle_names({**job, "substitution": _block(3.0, flags=(NOT_TO_PRODUCTS,))}) is None


def test_the_recorded_thermal_term_and_the_charge_come_from_the_job_record(tool):
    e2 = {**_block(4.0), "barrier_free_energy_kcal_mol": 13.0}   # thermal +9.0
    sn2 = {**_block(3.0), "barrier_free_energy_kcal_mol": 15.5}  # thermal +12.5
    job = {"beta_hydrogens": [{"class_id": "C1-H4", "anti": e2, "syn": _block(9.0)}], "substitution": sn2}
    assert tool.recorded_thermal_kcal_mol(job) == pytest.approx(-3.5)
    # an onium substrate with an alkoxide: neutral, not the base's -1
    assert tool.total_charge([{"role": "substrate", "charge": 1}, {"role": "base", "charge": -1}]) == 0
    page = tool.page(["| row |"], "abc1234", "2026-12-05 16:00 UTC", "python validation/saddle_thermal_terms.py x")
    assert "never edited by hand" in page and "commit `abc1234`" in page and page.rstrip().endswith("| row |")
