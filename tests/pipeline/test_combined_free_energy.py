"""The free barrier of an approach sampled from several starts (``paths.combine: boltzmann``), fast tier.

Several paths to one product from different starts (base rotations, backbone conformers) are parallel channels,
so their rate constants add: k = sum k_i, i.e. dG = -RT ln sum exp(-dG_i / RT) (transition-state theory; common
practice for conformer ensembles of a saddle). The electronic barrier was combined that way; the free barrier now
is too, over the starts' verified saddles. Checked against that sum computed here from scipy's gas constant
(CODATA), with the quasi-RRHO step replaced by a stand-in that returns a known free energy per saddle.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import pytest
import scipy.constants

from elimscan.pipeline import energetics
from elimscan.units import KCAL_MOL_PER_HARTREE

T_K = 328.15
#: free energy of each stand-in saddle above its electronic energy (hartree): any constant does
OFFSET_HARTREE = 0.05


def _saddle(energy_kcal_mol: float, verified: bool = True) -> SimpleNamespace:
    """Return a stand-in saddle at ``energy_kcal_mol`` above zero (verified, with a Hessian)."""
    return SimpleNamespace(atoms=object(), energy_hartree=energy_kcal_mol / KCAL_MOL_PER_HARTREE, verified=verified,
                           hessian_eV_A2=object())


@pytest.fixture
def free_energy(monkeypatch):
    """Return dG (kcal/mol) of a stand-in path from energetics, with the quasi-RRHO step replaced."""
    monkeypatch.setattr(energetics, "saddle_thermo",
                        lambda atoms, e, hessian, t, m: SimpleNamespace(free_energy_hartree=e + OFFSET_HARTREE))
    molecules = SimpleNamespace(multiplicity=1, relaxed=SimpleNamespace(record=SimpleNamespace(multiplicity=1)))

    def dg(saddle, start_saddles=()) -> float | None:
        path = SimpleNamespace(saddle=saddle, start_saddles=tuple(start_saddles))
        return energetics._saddle_free_energy(path, OFFSET_HARTREE, molecules, molecules, T_K)

    return dg


def test_the_free_barrier_of_sampled_starts_is_the_parallel_channel_sum(free_energy):
    """Three distinct saddles at 10, 10.5 and 12 kcal/mol give -RT ln sum exp(-dG/RT), below the lowest."""
    rt = scipy.constants.R * T_K / scipy.constants.calorie / 1000.0  # kcal/mol
    lowest, others = _saddle(10.0), [_saddle(10.5), _saddle(12.0)]
    expected = -rt * math.log(sum(math.exp(-g / rt) for g in (10.0, 10.5, 12.0)))
    combined = free_energy(lowest, [lowest, *others])
    assert combined == pytest.approx(expected, abs=2e-3)  # recorded to 3 decimals
    assert combined < 10.0 - 0.2  # the other two channels lower it by RT ln(1.51), about 0.27 kcal/mol
    assert free_energy(lowest) == pytest.approx(10.0, abs=1e-3)  # one start: its own saddle


def test_two_starts_that_reach_one_saddle_count_once(free_energy):
    """The same saddle reached from two rotations is one channel, not two (no spurious RT ln 2)."""
    lowest = _saddle(10.0)
    assert free_energy(lowest, [lowest, _saddle(10.0 + 1e-4)]) == pytest.approx(10.0, abs=1e-3)


def test_no_free_barrier_when_the_chosen_start_has_no_verified_saddle(free_energy):
    """As for a single path: the approach's own saddle must be verified, whatever its other starts hold."""
    assert free_energy(_saddle(10.0, verified=False), [_saddle(11.0)]) is None
