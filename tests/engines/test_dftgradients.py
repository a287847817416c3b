"""DFT gradients and analytic Hessians behind the engine contract (PySCF), and one real DFT saddle (F- + CH3F).

Runtimes measured 2026-12-03, one thread on the shared 2-core machine under a load of 8: contract 6 s; Hessian
against finite differences 102 s (about 30 s on a quiet machine); the F- + CH3F saddle 238 s.
"""

from __future__ import annotations

import time

import numpy as np
import pytest
from ase import Atoms

from elimscan.engines.dft import DftLevel

pytestmark = pytest.mark.dft


def _level(basis: str = "def2-svpd", eps: float | None = None, grid: int = 3) -> DftLevel:
    return DftLevel("b3lyp", "d3bj", basis, True, eps, None if eps is None else "water", grid, 60, 1e-10)


def test_engine_satisfies_the_contract_and_counts_gradients():
    pytest.importorskip("pyscf.dispersion")
    from elimscan.engines.contract import Engine
    from elimscan.engines.dftgradients import DftEngine

    engine = DftEngine(_level("sto-3g"))
    assert isinstance(engine, Engine)
    water = Atoms("OH2", positions=[(0, 0, 0), (0, 0.76, 0.59), (0, -0.76, 0.59)])
    water.calc = engine.calculator(0, 1, name="water")
    forces = water.get_forces()
    assert engine.stats.misses == 1 and len(engine.trace) == 1
    # Newton's third law: no net force on an isolated molecule (translational invariance; common practice), up to
    # the integration grid's error, since PySCF leaves out the grid response by default (measured 2026-12-03 on
    # water, 6-31G: 4e-4 eV/Å at grid level 3, 3e-3 eV/Å at level 1)
    assert np.abs(forces.sum(axis=0)).max() < 2e-3
    water.get_potential_energy()  # same geometry: no new gradient
    assert engine.stats.misses == 1


@pytest.mark.slow
def test_analytic_hessian_with_pcm_and_d3_matches_finite_differences_of_gradients():
    """PySCF 2.14's analytic Hessian (RI, IEF-PCM, D3(BJ)) against central differences of its own analytic gradients."""
    pytest.importorskip("pyscf.dispersion")
    from elimscan.drivers.hessian import finite_difference_hessian
    from elimscan.engines.dftgradients import DftEngine

    engine = DftEngine(_level("6-31g", eps=78.36))
    water = Atoms("OH2", positions=[(0, 0, 0.0), (0, 0.757, 0.587), (0, -0.757, 0.587)])
    start = time.perf_counter()
    analytic, counted = engine.hessian(water, 0, 1, name="water")
    seconds = time.perf_counter() - start
    numeric, n_grad = finite_difference_hessian(water, engine.calculator(0, 1, name="water fd"), 0.005)
    print(f"analytic Hessian {seconds:.1f} s; finite differences {n_grad} gradients")
    assert counted == 0 and analytic.shape == (9, 9)
    # central differences with a 0.005 Å step are good to about 1e-3 relative on stiff modes (common practice).
    # Measured 2026-12-03: 4.3e-4 of the largest element at grid level 3 with or without PCM, D3 and density
    # fitting alike (so each term is in the analytic Hessian); 3 % at grid level 1, where the gradients' missing
    # grid response dominates
    scale = np.abs(numeric).max()
    assert np.abs(analytic - numeric).max() < 2e-3 * scale


@pytest.mark.xtb
@pytest.mark.slow
def test_identity_sn2_saddle_refined_at_dft_from_a_gfn2_hessian():
    """F- + CH3F (gas phase, small basis): Sella at DFT from a GFN2-xTB Hessian, verified like the GFN2-xTB saddles."""
    pytest.importorskip("pyscf.dispersion")
    from elimscan.config import MethodConfig, OptimizerConfig, PathConfig, SolventConfig
    from elimscan.drivers.complexes import SubstitutionReactive
    from elimscan.drivers.hessian import finite_difference_hessian
    from elimscan.drivers.saddles import refine_and_verify
    from elimscan.engines.dftgradients import DftEngine
    from elimscan.engines.factory import make_engine

    # a rough D3h start, slightly asymmetric so that the symmetry of the result is found, not inherited
    h = 1.07
    guess = Atoms("CFFHHH", positions=[(0, 0, 0.05), (0, 0, 1.95), (0, 0, -1.80), (h, 0, 0),
                                       (-h / 2, h * 3 ** 0.5 / 2, 0), (-h / 2, -h * 3 ** 0.5 / 2, 0)])
    xtb = make_engine(MethodConfig(solvent=SolventConfig(model="none")))
    start_hessian, _ = finite_difference_hessian(guess, xtb.calculator(-1, 1, name="gfn2 hessian"))
    engine = DftEngine(_level("6-31+g*", grid=2))
    reactive = SubstitutionReactive(1, 0, 2)  # Nu = F1, C-alpha = C0, X = F2
    settings = PathConfig()
    # gas phase: the leaving F- stays in an ion-dipole complex, C...F about 2.6 Å (from memory), short of the 3.0 Å
    # that marks a leaving group gone in solution; both sides are judged at 2.4 Å here, far from the saddle's ~1.85
    settings = settings.model_copy(update={"saddle": settings.saddle.model_copy(update={
        "fmax_eV_per_A": 0.02, "max_steps": 60, "product_c_x_min_A": 2.4, "substitution_reactant_min_A": 2.4})})
    start = time.perf_counter()
    saddle = refine_and_verify(guess, reactive, engine, -1, 1, settings, OptimizerConfig(), name="F- + CH3F",
                               start_hessian_eV_A2=start_hessian,
                               hessian=lambda a: engine.hessian(a, -1, 1, name="F- + CH3F"), side_chunk_steps=5)
    print(f"DFT saddle: {engine.stats.misses} gradients, {time.perf_counter() - start:.0f} s "
          f"(Hessian {engine.hessian_seconds:.0f} s); {saddle.reason}; imaginary {saddle.imaginary_cm1} cm-1")
    assert saddle.verified, saddle.reason
    d1 = saddle.atoms.get_distance(0, 1)
    d2 = saddle.atoms.get_distance(0, 2)
    print(f"C-F distances at the DFT saddle: {d1:.3f} {d2:.3f} A")
    # An identity SN2 saddle is symmetric (D3h), both C-F bonds equal (Gonzales, Allen & Schaefer, J. Phys. Chem. A
    # 2005, 109, 10613); its C-F distance is about 1.8-1.9 A at B3LYP and CCSD(T) (from memory), far from the
    # reactant's 1.4 A and the ion-dipole complex's 2.6 A
    assert abs(d1 - d2) < 0.02
    assert 1.7 < (d1 + d2) / 2 < 2.0
    # one imaginary mode, the F...C...F stretch: several hundred cm-1 (B3LYP about 600i, from memory)
    assert saddle.imaginary_cm1 > 300 and not saddle.other_imaginary_cm1
    # measured 2026-12-03 (one thread, busy machine): 17 DFT gradients, 237 s of which the analytic Hessian 59 s;
    # C-F 1.858 and 1.858 Å; 460i cm-1


def test_gradients_and_hessians_in_the_replay_log_are_served_without_pyscf(tmp_path, monkeypatch):
    # the DFT saddle rung of a job that starts over (batch.replaylog): its finished gradients and Hessians come back
    # bit for bit, and nothing is handed to PySCF
    pytest.importorskip("pyscf.dispersion")
    from elimscan.batch.replaylog import ReplayLog
    from elimscan.engines import dftgradients
    from elimscan.engines.dftgradients import DftEngine

    water = Atoms("OH2", positions=[(0, 0, 0), (0, 0.76, 0.59), (0, -0.76, 0.59)])
    first_log = ReplayLog(tmp_path / "job.replay")
    first = DftEngine(_level("sto-3g"), replay=first_log)
    point, _ = first.energy_gradient(water, 0, 1, "water")
    hessian, _ = first.hessian(water, 0, 1, "water")
    first_log.close()

    def no_pyscf(*args, **kwargs):
        raise AssertionError("PySCF was asked for a point the log holds")

    monkeypatch.setattr(dftgradients, "build_scf", no_pyscf)
    again = DftEngine(_level("sto-3g"), replay=ReplayLog(tmp_path / "job.replay"))
    served, density = again.energy_gradient(water, 0, 1, "water")
    assert served.energy_hartree == point.energy_hartree and density is None
    assert np.array_equal(served.gradient_hartree_per_bohr, point.gradient_hartree_per_bohr)
    assert np.array_equal(again.hessian(water, 0, 1, "water")[0], hessian)
    assert (again.stats.misses, again.stats.replayed, again.hessians) == (1, 1, 1)
    assert again.trace[0][1] == first.trace[0][1]
    moved = water.copy()
    moved.positions[0, 2] += 0.01
    with pytest.raises(AssertionError, match="PySCF was asked"):  # another geometry is computed
        again.energy_gradient(moved, 0, 1, "water")
