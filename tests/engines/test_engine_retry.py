"""What the engine does when an SCF fails: one retry with more Fermi smearing, then back to the normal surface.

A failed SCF is retried at ``retry_electronic_temperature_K`` (1000 K by default); smearing helps a stuck SCF
converge but puts the energy on another surface, so the engine restarts at the normal temperature from the
converged smeared wavefunction and keeps the smeared point only when that restart fails too (counted in
``stats.hot_points``). The logic is tested on scripted backends; the restart itself on both real backends.
"""

from __future__ import annotations

import numpy as np
import pytest

from elimscan.engines.xtb import _SERIES, EngineSettings, XtbEngine
from elimscan.units import ANGSTROM_PER_BOHR


class _Scripted:
    """A backend series whose next SCFs fail at the temperatures (K) queued in ``failures`` (shared, consumed);
    a converged energy is -1 - 1e-6 T hartree, so the temperature used can be read from it."""

    def __init__(self, kelvin: float, failures: list[float]):
        self.kelvin, self.failures = kelvin, failures

    def set_electronic_temperature(self, kelvin: float) -> None:
        self.kelvin = kelvin

    def compute(self, positions_bohr):
        if self.failures and self.failures[0] == self.kelvin:
            self.failures.pop(0)
            raise RuntimeError("SCF is not converged")
        return -1.0 - 1e-6 * self.kelvin, np.zeros_like(positions_bohr)


def _engine(monkeypatch, failures: list[float]) -> XtbEngine:
    engine = XtbEngine(EngineSettings(electronic_temperature_K=300.0, retry_electronic_temperature_K=1000.0))
    monkeypatch.setattr(engine, "_new_series", lambda numbers, positions, charge, uhf, kelvin: _Scripted(kelvin, failures))
    return engine


def test_a_retried_point_is_brought_back_to_the_normal_temperature(embed, monkeypatch):
    # The first SCF fails at 300 K, the smeared one converges, and the restart at 300 K from that wavefunction
    # converges: the point is on the normal surface.
    engine = _engine(monkeypatch, [300.0])
    point = engine.single_point(embed("CC"), name="ethane")
    assert point.retried and point.electronic_temperature_K == 300.0
    assert point.energy_hartree == pytest.approx(-1.0003)
    assert engine.stats.retries == 1 and engine.stats.hot_points == 0


def test_a_point_that_converges_only_smeared_is_kept_and_counted(embed, monkeypatch):
    engine = _engine(monkeypatch, [300.0, 300.0])  # the restart at 300 K fails as well
    point = engine.single_point(embed("CC"), name="ethane")
    assert point.retried and point.electronic_temperature_K == 1000.0
    assert point.energy_hartree == pytest.approx(-1.001)
    assert engine.stats.retries == 1 and engine.stats.hot_points == 1


@pytest.mark.xtb
@pytest.mark.parametrize("backend", ["tblite", "xtb"])
def test_restart_at_the_normal_temperature_equals_a_fresh_calculation(embed, backend):
    # Independent check: a fresh SCF at 300 K. 5000 K is used for the smeared step so that its energy visibly
    # differs (hexatriene, a small HOMO-LUMO gap: 2.4 mEh measured), proving the temperature was really reset.
    atoms = embed("C=CC=CC=C")
    numbers, positions = atoms.numbers, atoms.positions / ANGSTROM_PER_BOHR
    settings = EngineSettings(backend=backend)
    fresh, _ = _SERIES[backend](settings, numbers, positions, 0, 0, 300.0).compute(positions)
    series = _SERIES[backend](settings, numbers, positions, 0, 0, 5000.0)
    smeared, _ = series.compute(positions)
    series.set_electronic_temperature(300.0)
    restarted, _ = series.compute(positions)
    assert abs(smeared - fresh) > 1e-4
    assert restarted == pytest.approx(fresh, abs=1e-8)
