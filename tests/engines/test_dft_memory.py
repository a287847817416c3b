"""The DFT tier's memory guard: the peak-memory estimate, the limit, the refusal before a calculation, and a real
single point that still runs under a sufficient limit."""

from __future__ import annotations

import numpy as np
import pytest
from ase import Atoms

from elimscan.config import BaseConfig, DftConfig, RunConfig, SolventConfig, SubstrateConfig
from elimscan.engines import dftmemory
from elimscan.engines.dft import DftLevel, SaddleCandidate, build_scf, refine_job, single_point
from elimscan.engines.dftmemory import check_memory, memory_limit_MB, peak_memory_estimate_GB, pyscf_target_MB
from elimscan.errors import DftMemoryError

#: water near its equilibrium geometry (Å)
WATER = Atoms("OH2", positions=[(0.0, 0.0, 0.117), (0.0, 0.757, -0.469), (0.0, -0.757, -0.469)])

#: the measurements of this project that calibrate the estimate (docs/method.md, "DFT saddles" and "Cost"):
#: one B3LYP-D3(BJ)/def2-SVP RI gradient with IEF-PCM on the 43-atom alcohol-3 saddle of bromoethane + ethoxide
#: (368 basis functions) peaked at 8.7 GB; one def2-SVPD single point on a 19-atom 2-chlorobutane + methoxide
#: complex (246 functions) at 1.8 GB; the analytic Hessian of a 16-atom saddle (224 functions) passed 3.4 GB.
#: The auxiliary counts (def2-universal-jkfit) are PySCF's, checked in test_sizes_of_the_calibration_complexes.
GRADIENT_43_ATOMS_GB, SINGLE_POINT_19_ATOMS_GB, HESSIAN_16_ATOMS_AT_LEAST_GB = 8.7, 1.8, 3.4
#: wB97X-3c single points with IEF-PCM(ethanol) at the GFN2-xTB saddles of bromoethane + bare ethoxide (SN2, 16 atoms,
#: 128 vDZP functions, 823 auxiliary) and 2-bromopropane + bare ethoxide (E2 anti, 19 atoms, 151 and 934): peak
#: resident memory of the process 0.84 and 1.08 GB (getrusage, measured 2026-12-04; docs/method.md)
SINGLE_POINT_VDZP_16_ATOMS_GB, SINGLE_POINT_VDZP_19_ATOMS_GB = 0.84, 1.08
#: def2-universal-jkfit over def2-SVP on the 43-atom calibration saddle: 1828 / 368 (counted below)
NO_RI_DEF2_SVP_RATIO = 1828 / 368


def _level(limit_MB: float | None, basis: str = "sto-3g", eps: float | None = None) -> DftLevel:
    return DftLevel("b3lyp", "none", basis, True, eps, None if eps is None else "water", 1, 50, 1e-8, limit_MB)


# --- the estimate --------------------------------------------------------------------------------------------------


def test_the_estimate_grows_with_every_size():
    base = peak_memory_estimate_GB(368, 1828, 43, "gradient", True)
    assert peak_memory_estimate_GB(557, 1828, 43, "gradient", True) > base  # more basis functions
    assert peak_memory_estimate_GB(368, 2500, 43, "gradient", True) > base  # more auxiliary functions
    assert peak_memory_estimate_GB(368, 1828, 56, "gradient", True) > base  # more atoms (PCM surface)
    assert peak_memory_estimate_GB(368, 1828, 43, "gradient", False) < base  # no PCM
    sizes = [peak_memory_estimate_GB(n, 5 * n, 20, "single point", False) for n in (50, 100, 200, 400, 800)]
    assert sizes == sorted(sizes) and len(set(sizes)) == len(sizes)
    ordered = [peak_memory_estimate_GB(368, 1828, 43, task, True) for task in ("single point", "gradient", "hessian")]
    assert ordered == sorted(ordered)


def test_the_estimate_covers_the_measurements_of_this_project():
    """Calibration: the gradient at most 25 % above its measured peak and never below it (conservative); the single
    point and the Hessian not below what was measured (measured in this project, docs/method.md)."""
    gradient = peak_memory_estimate_GB(368, 1828, 43, "gradient", True)
    assert GRADIENT_43_ATOMS_GB <= gradient <= 1.25 * GRADIENT_43_ATOMS_GB
    assert peak_memory_estimate_GB(246, 796, 19, "single point", True) >= SINGLE_POINT_19_ATOMS_GB
    assert peak_memory_estimate_GB(224, 823, 16, "hessian", True) >= HESSIAN_16_ATOMS_AT_LEAST_GB
    assert peak_memory_estimate_GB(128, 823, 16, "single point", True) >= SINGLE_POINT_VDZP_16_ATOMS_GB
    assert peak_memory_estimate_GB(151, 934, 19, "single point", True) >= SINGLE_POINT_VDZP_19_ATOMS_GB
    # def2-SVPD on the 43-atom saddle (557 functions) passed 5.8 GB before it was stopped
    assert peak_memory_estimate_GB(557, 1828, 43, "gradient", True) > 5.8


@pytest.mark.xfail(strict=True, reason="measured 2.12 GB peak (getrusage, 2026-12-04) against an estimate of 2.02 GB: "
                                     "B3LYP-D3(BJ)/def2-SVPD single point with IEF-PCM on the 19-atom 2-bromopropane + "
                                     "bare ethoxide E2 saddle (260 functions, 934 auxiliary), run as the fifth "
                                     "calculation of one process, so earlier allocations may be part of the peak")
def test_the_estimate_covers_a_def2_svpd_single_point_on_the_19_atom_e2_saddle():
    """Measured in this project beside the wB97X-3c points (docs/method.md, 'DFT single points'): 2.12 GB peak."""
    assert peak_memory_estimate_GB(260, 934, 19, "single point", True) >= 2.12


def test_sizes_of_the_calibration_complexes():
    """The basis-function counts quoted in docs/method.md and the auxiliary counts used above, counted by PySCF (an
    independent library) for the complexes' compositions; atoms 4 Å apart, only the counts matter."""
    pytest.importorskip("pyscf")
    from pyscf import df, gto

    def counts(symbols: list[str], basis: str, charge: int) -> tuple[int, int]:
        mol = gto.M(atom=[(s, (4.0 * k, 0.0, 0.0)) for k, s in enumerate(symbols)], basis=basis, charge=charge,
                    spin=None, verbose=0)
        return mol.nao, df.make_auxmol(mol, df.make_auxbasis(mol)).nao

    alcohol_3 = ["C"] * 10 + ["H"] * 28 + ["O"] * 4 + ["Br"]  # bromoethane + ethoxide + three ethanols
    assert counts(alcohol_3, "def2-svp", -1) == (368, 1828)
    assert counts(alcohol_3, "def2-svpd", -1)[0] == 557
    assert counts(["C"] * 5 + ["H"] * 12 + ["O", "Cl"], "def2-svpd", -1) == (246, 796)  # 2-chlorobutane + methoxide
    assert counts(["C"] * 4 + ["H"] * 10 + ["O", "Br"], "def2-svpd", -1) == (224, 823)  # bromoethane + ethoxide


@pytest.mark.dft
def test_vdzp_sizes_and_its_no_ri_stand_in():
    """vDZP (wB97X-3c) on the calibration complexes: far fewer basis functions than def2-SVPD, the same fitting set
    (def2-universal-jkfit), counted by PySCF from basis-set-exchange's data; the no-RI stand-in per basis function is
    not below the real ratio, and the guard names the basis."""
    pytest.importorskip("basis_set_exchange")
    from pyscf import df

    from elimscan.engines.dft import build_molecule, guard_memory
    from elimscan.engines.dftmemory import no_ri_aux_per_basis

    level = DftLevel("wb97x-3c", "d4", "vdzp", True, None, None, 1, 50, 1e-8, 4000.0)
    for symbols, expected in ((["C"] * 4 + ["H"] * 10 + ["O", "Br"], (128, 823)),  # bromoethane + ethoxide
                              (["C"] * 5 + ["H"] * 12 + ["O", "Br"], (151, 934))):  # 2-bromopropane + ethoxide
        atoms = Atoms(symbols, positions=[(4.0 * k, 0.0, 0.0) for k in range(len(symbols))])
        mol = build_molecule(atoms, -1, 1, level)
        n_aux = df.make_auxmol(mol, "def2-universal-jkfit").nao
        assert (mol.nao, n_aux) == expected
        assert no_ri_aux_per_basis("vdzp") >= n_aux / mol.nao > NO_RI_DEF2_SVP_RATIO
        assert guard_memory(atoms, -1, 1, level, "single point", "x") == pytest.approx(
            peak_memory_estimate_GB(mol.nao, n_aux, len(atoms), "single point", False))
    with pytest.raises(DftMemoryError, match="vDZP, 151 basis functions, 934 auxiliary"):
        guard_memory(atoms, -1, 1, DftLevel(**{**level.__dict__, "memory_limit_MB": 10.0}), "single point", "x")


# --- the limit -----------------------------------------------------------------------------------------------------


def test_the_default_limit_is_a_share_of_the_available_memory_divided_among_the_parallel_jobs(monkeypatch):
    monkeypatch.setattr(dftmemory, "available_memory_MB", lambda: 10000.0)
    assert memory_limit_MB(None, 1) == pytest.approx(dftmemory.DEFAULT_MEMORY_SHARE * 10000.0)
    assert memory_limit_MB(None, 2) == pytest.approx(dftmemory.DEFAULT_MEMORY_SHARE * 5000.0)
    assert memory_limit_MB(3000, 4) == 3000.0  # a setting is taken as it is
    monkeypatch.setattr(dftmemory, "available_memory_MB", lambda: None)
    assert memory_limit_MB(None, 1) is None  # unknown: no guard


def test_available_memory_agrees_with_the_kernel_counters():
    # os.sysconf's physical pages (POSIX, independent of /proc/meminfo): what is available never exceeds the total
    import os

    available = dftmemory.available_memory_MB()
    if available is None:
        pytest.skip("no /proc/meminfo here")
    total_MB = os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE") / 1e6
    assert 0.0 <= available <= total_MB


def test_pyscf_gets_a_share_of_the_limit_never_above_its_own_default():
    assert pyscf_target_MB(None) == 4000  # pyscf.lib.param.MAX_MEMORY, PySCF's default
    assert pyscf_target_MB(5000) == 2000
    assert pyscf_target_MB(64000) == 4000


def test_the_setting_must_be_positive():
    from elimscan.config import parse_config
    from elimscan.errors import ConfigError

    text = "substrates: [{name: s, smiles: CCCl}]\nbases: [{name: hydroxide}]\ndft: {enabled: true, memory_limit_MB: %s}\n"
    for bad in ("0", "-100"):
        with pytest.raises(ConfigError, match="dft.memory_limit_MB"):
            parse_config(text % bad)
    assert parse_config(text % "16000").dft.memory_limit_MB == 16000.0
    assert parse_config(text % "null").dft.memory_limit_MB is None


# that the setting changes no job key: tests/pipeline/test_shared_rules.py, beside the other key checks


def test_the_tier_shares_the_default_limit_among_the_local_workers():
    from elimscan.config import ExecutorConfig
    from elimscan.pipeline.dfttier import parallel_jobs

    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),), bases=(BaseConfig(name="hydroxide"),))
    assert parallel_jobs(config.model_copy(update={"executor": ExecutorConfig(workers=3)})) == 3
    dask = ExecutorConfig(kind="dask", address="tcp://10.0.0.5:8786")
    assert parallel_jobs(config.model_copy(update={"executor": dask})) == 1


# --- the refusal ---------------------------------------------------------------------------------------------------


def test_the_guard_names_the_calculation_and_the_setting():
    with pytest.raises(DftMemoryError) as caught:
        check_memory("job 'x' C1 anti saddle", "def2-SVPD", 557, 1828, 43, "gradient", True, 4000.0)
    message = str(caught.value)
    for part in ("job 'x' C1 anti saddle", "def2-SVPD", "557 basis functions", "1828 auxiliary", "43 atoms",
                 "estimate is 11.6 GB", "limit is 4.0 GB", "dft.memory_limit_MB"):
        assert part in message, part
    assert caught.value.error_type == "dft_memory_limit"
    assert check_memory("small", "STO-3G", 7, None, 3, "single point", False, 4000.0) < 4.0
    assert check_memory("no limit known", "def2-SVPD", 557, 1828, 43, "hessian", True, None) > 4.0


def test_a_single_point_over_the_limit_is_refused_before_any_scf(monkeypatch):
    pytest.importorskip("pyscf")
    import elimscan.engines.dft as dft

    monkeypatch.setattr(dft, "build_scf", lambda *a, **k: pytest.fail("an SCF was set up over the limit"))
    with pytest.raises(DftMemoryError, match=r"water saddle: DFT single point not started.*sto-3g, 7 basis functions"):
        single_point(WATER, 0, 1, _level(1.0), name="water saddle")


def test_a_refused_single_point_is_data_and_the_tier_carries_on():
    """The tier with a 1 MB limit: every single point refused, recorded on its path, the job's DFT status failed
    with the refusal as its error; nothing raises."""
    pytest.importorskip("pyscf")
    candidates = [SaddleCandidate(("C1", "anti"), "C=C", 1, -1.0, WATER),
                  SaddleCandidate(("C1", "syn"), "C=C", 1, -0.9, WATER)]
    result = refine_job("water + water", candidates, 0, 1, {}, DftConfig(enabled=True, dispersion="none",
                        memory_limit_MB=1.0), SolventConfig(model="alpb", name="water"), 298.15)
    assert result.status == "failed" and result.error.error_type == "dft_memory_limit"
    assert set(result.points) == {("C1", "anti"), ("C1", "syn")}
    assert all(p.error_type == "dft_memory_limit" and "water + water" in p.error_message and "def2-SVPD" in p.error_message
               for p in result.points.values())


def test_the_saddle_rung_refuses_before_its_first_gradient():
    """dft.saddles: reoptimise with a 1 MB limit: the saddle is refused before Sella starts (no gradient spent)."""
    pytest.importorskip("pyscf")
    from elimscan.pipeline.dftsaddles import reoptimise_job

    config = RunConfig(substrates=(SubstrateConfig(name="s", smiles="CCCl"),), bases=(BaseConfig(name="hydroxide"),),
                       dft=DftConfig(enabled=True, dispersion="none", saddles="reoptimise", memory_limit_MB=1.0))
    cand = SaddleCandidate(("C1", "anti"), "C=C", 1, -1.0, WATER, hessian_eV_A2=np.eye(9))
    result = reoptimise_job("water + water", [cand], {("C1", "anti"): None}, 0, 1, {}, config)
    (refused,) = result.saddles.values()
    assert result.status == "failed" and refused.error_type == "dft_memory_limit"
    assert "DFT gradient not started" in refused.error_message and not result.points


# --- a real single point under a sufficient limit ------------------------------------------------------------------


@pytest.mark.dft
def test_a_single_point_under_a_sufficient_limit_runs_and_gives_pyscf_s_own_energy():
    """Water, B3LYP/STO-3G (RI) in IEF-PCM: with a 2 GB limit PySCF gets an 800 MB target and the energy equals
    PySCF's own at its default target, computed here without elimscan's wrapper (1e-8 hartree)."""
    pytest.importorskip("pyscf")
    from pyscf import dft, gto

    level = _level(2000.0, eps=78.36)
    mf = build_scf(WATER, 0, 1, level)
    assert mf.mol.max_memory == mf.max_memory == mf.with_df.max_memory == mf.with_solvent.max_memory == 800
    point = single_point(WATER, 0, 1, level, name="water")
    mol = gto.M(atom=[(s, tuple(p)) for s, p in zip(WATER.get_chemical_symbols(), WATER.positions)], basis="sto-3g",
                unit="Angstrom", verbose=0)
    mf = dft.RKS(mol)
    mf.xc, mf.grids.level, mf.conv_tol = "b3lyp", 1, 1e-10
    mf = mf.density_fit().PCM()
    mf.with_solvent.method, mf.with_solvent.eps = "IEF-PCM", 78.36
    assert point.energy_hartree == pytest.approx(mf.kernel(), abs=1e-7)
