"""Thermochemistry against ASE's IdealGasThermo and GoodVibes (independent implementations), isotope effects,
and GFN2-xTB isotope effect, dG and Hammett rho against experiment (expected failures while they disagree)."""

from __future__ import annotations

import numpy as np
import pytest
from ase import units
from ase.build import molecule
from ase.thermochemistry import IdealGasThermo

from elimscan.analysis.thermo import (bigeleisen_mayer, free_rotor_entropy_J_per_K, harmonic_entropy_J_per_K, thermochemistry,
                             vibrational_entropy_J_per_K)
from elimscan.units import EV_PER_HARTREE, KCAL_MOL_PER_HARTREE

# Water-like and methanol-like frequency sets (cm^-1); only their use as shared inputs matters here.
CASES = [("H2O", [1595.0, 3657.0, 3756.0], 2), ("CH3OH", [270.0, 1033.0, 1060.0, 1165.0, 1345.0, 1455.0, 1477.0,
                                                           1477.0, 2844.0, 2960.0, 3000.0, 3681.0], 1)]


@pytest.mark.parametrize("name, frequencies, sigma", CASES)
def test_rrho_free_energy_matches_ase_ideal_gas_thermo(name, frequencies, sigma):
    # Same frequencies, same geometry, switching off, 1 bar: G must agree to 0.01 kcal/mol (the check).
    atoms = molecule(name)
    ours = thermochemistry(atoms, np.array(frequencies), 0.0, 298.15, symmetry_number=sigma,
                           standard_state="1bar", switching_cm1=None)
    ase_thermo = IdealGasThermo(vib_energies=np.array(frequencies) * units.invcm, geometry="nonlinear",
                                potentialenergy=0.0, atoms=atoms, symmetrynumber=sigma, spin=0)
    theirs_eV = ase_thermo.get_gibbs_energy(298.15, 1e5, verbose=False)
    assert ours.free_energy_hartree * KCAL_MOL_PER_HARTREE == pytest.approx(
        theirs_eV / EV_PER_HARTREE * KCAL_MOL_PER_HARTREE, abs=0.01)
    theirs_h = ase_thermo.get_enthalpy(298.15, verbose=False)
    assert ours.enthalpy_hartree * KCAL_MOL_PER_HARTREE == pytest.approx(theirs_h / EV_PER_HARTREE * KCAL_MOL_PER_HARTREE, abs=0.01)


def test_standard_state_change_is_rt_ln_24_46():
    # 1 atm -> 1 M lowers the translational entropy by R ln(24.46) at 298.15 K: +1.89 kcal/mol in G
    # (common practice; RT ln(RT/p° per litre)).
    atoms = molecule("H2O")
    g_atm = thermochemistry(atoms, np.array(CASES[0][1]), 0.0, 298.15, standard_state="1atm").free_energy_hartree
    g_m = thermochemistry(atoms, np.array(CASES[0][1]), 0.0, 298.15, standard_state="1M").free_energy_hartree
    assert (g_m - g_atm) * KCAL_MOL_PER_HARTREE == pytest.approx(1.89, abs=0.01)


def test_quasi_rrho_limits():
    # High modes: w -> 1, the harmonic entropy; low modes: the free-rotor entropy, which stays finite
    # where the harmonic one diverges (Grimme, Chem. Eur. J. 2012, 18, 9955).
    high = np.array([1500.0])
    assert vibrational_entropy_J_per_K(high, 298.15) == pytest.approx(harmonic_entropy_J_per_K(high, 298.15)[0], rel=1e-6)
    for nu in (1.0, 5.0):
        low = np.array([nu])
        assert vibrational_entropy_J_per_K(low, 298.15) == pytest.approx(free_rotor_entropy_J_per_K(low, 298.15)[0], rel=1e-3)
        assert vibrational_entropy_J_per_K(low, 298.15) < harmonic_entropy_J_per_K(low, 298.15)[0]


@pytest.mark.xtb
def test_quasi_rrho_agrees_with_goodvibes_on_gfn2_frequencies(gfn2_gas, tmp_path):
    # Independent implementation of the same scheme: GoodVibes 4.4.0 (Luchini, Alegre-Requena, Funes-Ardoiz &
    # Paton, F1000Research 2020, 9, 291), Grimme's quasi-RRHO entropy (Chem. Eur. J. 2012, 18, 9955, eqs. 3-7:
    # S_R = R [1/2 + ln sqrt(8 pi^3 mu' kT / h^2)], mu' = mu B_av / (mu + B_av), mu = h / (8 pi^2 nu),
    # w = 1 / (1 + (nu0 / nu)^4)). Real frequencies: a GFN2-xTB Hessian of 2-phenylethyl bromide in the gas
    # phase, whose phenyl and CH2Br torsions lie below nu0 = 100 cm^-1 (about 40, 70 and 80 cm^-1), so the
    # switching function decides part of the entropy. Same T (298.15 K), nu0 = 100 cm^-1, alpha = 4,
    # B_av = 1e-44 kg m^2 on both sides. GoodVibes functions called: thermo.calc_rrho_entropy,
    # thermo.calc_freerot_entropy (bav=thermo.GRIMME_BAV), thermo.calc_damp (per mode, J/mol/K), and
    # api.compute_thermo (whole molecule: qh_gibbs_free_energy, qh_entropy, enthalpy and the
    # plain-RRHO gibbs_free_energy, read from an extended XYZ written by ase_helper.write_thermo_extxyz)
    # with inertia="global": GoodVibes' other choice, inertia="conf", averages the molecule's own principal
    # moments for B_av (thermo.calc_avg_moment_of_inertia), which Grimme's fixed 1e-44 kg m^2 is not.
    # Convention differences, both far below the 0.01 kcal/mol compared: GoodVibes takes CODATA 2010
    # constants (ASE, which elimscan uses, 2014) and the most abundant isotope's mass for each atom
    # (elimscan: standard atomic weights, as ASE), which moves S_trans and S_rot by ~1e-3 cal/mol/K here.
    from goodvibes import thermo as gv_thermo
    from goodvibes.api import compute_thermo
    from goodvibes.ase_helper import write_thermo_extxyz

    from elimscan.config import OptimizerConfig
    from elimscan.drivers.freeenergy import minimum_hessian
    from elimscan.drivers.hessian import harmonic_analysis
    from elimscan.pipeline.compute import relax_molecule

    t, cutoff = 298.15, 100.0
    relaxed = relax_molecule("2-phenylethyl bromide", "substrate", "BrCCc1ccccc1", None, 1, gfn2_gas,
                             OptimizerConfig(fmax_eV_per_A=0.001), 20261202)
    assert relaxed.record.converged
    minimum = minimum_hessian(relaxed.atoms, relaxed.record.energy_hartree, gfn2_gas, 0, 1, 0.005)
    nu = harmonic_analysis(minimum.hessian_eV_A2, minimum.atoms).frequencies_cm1
    assert nu.min() > 0 and np.sum(nu < cutoff) >= 2, nu[:5]  # a minimum, with soft modes to switch

    # the vibrational entropy, mode by mode through GoodVibes' own functions (J/mol/K)
    s_ho = gv_thermo.calc_rrho_entropy(t, list(nu))
    s_fr = gv_thermo.calc_freerot_entropy(t, list(nu), bav=gv_thermo.GRIMME_BAV)
    w = gv_thermo.calc_damp(list(nu), cutoff)
    theirs_s_vib = sum(wi * h + (1 - wi) * f for wi, h, f in zip(w, s_ho, s_fr))
    ours_s_vib = vibrational_entropy_J_per_K(nu, t, switching_cm1=cutoff) * units._Nav
    assert ours_s_vib == pytest.approx(theirs_s_vib, rel=1e-5)
    assert ours_s_vib < sum(s_ho) - 1.0  # the switching lowers S below the harmonic value by > 1 J/mol/K here

    # the whole molecule at 1 M: entropy and the free-energy correction G - E (hartree)
    xyz = tmp_path / "pheb.extxyz"
    zpe_hartree = 0.5 * float(nu.sum()) * units.invcm / units.Hartree
    write_thermo_extxyz(str(xyz), minimum.atoms, minimum.energy_hartree, frequencies=list(nu), zpe=zpe_hartree,
                        symmno=1, linear_mol=False)
    theirs = compute_thermo(str(xyz), QS="grimme", QH=False, s_freq_cutoff=cutoff, temperature=t, concentration=1.0,
                            freq_scale_factor=1.0, zpe_scale_factor=1.0, inertia="global")
    ours = thermochemistry(minimum.atoms, nu, minimum.energy_hartree, t, standard_state="1M", switching_cm1=cutoff)
    ours_ho = thermochemistry(minimum.atoms, nu, minimum.energy_hartree, t, standard_state="1M", switching_cm1=None)
    to_kcal = KCAL_MOL_PER_HARTREE
    assert (ours.free_energy_hartree - minimum.energy_hartree) * to_kcal == pytest.approx(
        (theirs.qh_gibbs_free_energy - theirs.scf_energy) * to_kcal, abs=0.01)
    assert ours.entropy_hartree_per_K * t * to_kcal == pytest.approx(theirs.qh_entropy * t * to_kcal, abs=0.01)
    assert ours.enthalpy_hartree * to_kcal == pytest.approx(theirs.enthalpy * to_kcal, abs=0.01)
    # what the switching function alone changes in G: free of the mass and constant conventions above
    ours_switch = (ours.free_energy_hartree - ours_ho.free_energy_hartree) * to_kcal
    theirs_switch = (theirs.qh_gibbs_free_energy - theirs.gibbs_free_energy) * to_kcal  # their plain RRHO G
    print(f"lowest modes {np.round(nu[:4], 1)} cm^-1; G(qRRHO) - G(RRHO): elimscan {ours_switch:.4f}, "
          f"GoodVibes {theirs_switch:.4f} kcal/mol")
    assert ours_switch > 0.1  # low modes: the free-rotor entropy is smaller, G higher
    assert ours_switch == pytest.approx(theirs_switch, abs=1e-3)


def test_thermochemistry_refuses_imaginary_modes():
    with pytest.raises(ValueError, match="imaginary"):
        thermochemistry(molecule("H2O"), np.array([-500.0, 1595.0, 3657.0]), 0.0, 298.15)


def test_isotope_effect_of_identical_isotopologues_is_one_and_a_lost_stretch_gives_the_textbook_limit():
    same = np.array([1000.0, 1500.0, 3000.0])
    kie = bigeleisen_mayer(same, same, same, same, 1000.0, 1000.0, 298.15)
    assert kie.ratio == pytest.approx(1.0) and kie.ratio_wigner == pytest.approx(1.0)
    # A C-H stretch (2900 cm^-1, C-D 2100) that becomes the reaction coordinate (so the imaginary frequencies
    # scale like the stretch, as the Teller-Redlich product rule demands): k_H/k_D = exp(h c dnu / 2kT) ~ 6.9
    # at 298 K, the classic zero-point-energy limit (Westheimer, Chem. Rev. 1961, 61, 265; common practice).
    reactant_h, reactant_d = np.array([1500.0, 2900.0]), np.array([1500.0, 2100.0])
    saddle_h, saddle_d = np.array([1500.0]), np.array([1500.0])
    kie = bigeleisen_mayer(reactant_h, reactant_d, saddle_h, saddle_d, 1000.0 * 2900 / 2100, 1000.0, 298.15)
    # (exactly: sinh instead of exp/2 adds (1 - exp(-u)) factors of about 1e-4 here)
    assert kie.ratio == pytest.approx(np.exp(800.0 * 100 * units._c * units._hplanck / (2 * units._k * 298.15)), rel=1e-3)
    assert kie.ratio == pytest.approx(6.9, rel=0.02)
    # Wigner's correction raises k_H/k_D when the light isotopologue's imaginary frequency is higher
    assert kie.ratio_wigner > kie.ratio


#: k_H/k_D of PhCD2CH2Br + EtO- in ethanol (Saunders & Edison, J. Am. Chem. Soc. 1960, 82, 138; from memory)
KH_KD_PHENYLETHYL_BROMIDE = 7.1
#: dG++ of PhCH2CH2Br + EtO- in ethanol (kcal/mol) from k about 1e-3 M^-1 s^-1 near 30 C (Saunders & Edison
#: 1960; from memory) by Eyring at 1 M: RT ln(k_B T / h k) = 21.5 at 298 K (21.9 at 303 K)
DG_PHENYLETHYL_BROMIDE_KCAL_MOL = 21.5


def phenylethyl_anti(jobs: dict):
    """Return the anti approach record and the beta,beta-d2 isotope effect of 2-phenylethyl bromide + ethoxide."""
    (benzylic,) = jobs["2-phenylethyl bromide"].beta_hydrogens
    (cd2,) = [k for k in benzylic.isotope_effects if k.label.startswith("D at every hydrogen")]
    return benzylic, cd2


@pytest.mark.xtb
@pytest.mark.slow
def test_2_phenylethyl_bromide_anti_saddle_is_verified_and_tunnelling_raises_kh_kd(ethoxide_e2_jobs):
    # What the two comparisons with experiment below stand on (the job: tests/analysis/conftest.py, shared with
    # test_character.py; narrowed there to anti paths, one base orientation and four conformer relaxations: the
    # path of its own with three orientations that this test computed before gave the same k_H/k_D 4.44 and
    # dG 2.5 kcal/mol): one class of two benzylic H (mirror images), both labelled, from a verified anti saddle
    # with its dG.
    benzylic, cd2 = phenylethyl_anti(ethoxide_e2_jobs)
    print(f"2-phenylethyl bromide + EtO-: k_H/k_D(CD2) {cd2.kh_kd:.2f} (Wigner {cd2.kh_kd_wigner:.2f}), "
          f"dG {benzylic.anti.barrier_free_energy_kcal_mol} kcal/mol, dE {benzylic.anti.barrier_kcal_mol} kcal/mol")
    assert benzylic.degeneracy == 2 and len(cd2.deuterated_indices) == 2 and cd2.approach == "anti"
    assert benzylic.anti.saddle_verified, benzylic.anti.saddle_note
    assert benzylic.anti.barrier_free_energy_kcal_mol is not None
    # Wigner's correction grows with the imaginary frequency, which deuterium lowers (Wigner, Z. Phys. Chem. B
    # 1932, 19, 203): measured 4.44 -> 4.75 (+7 %) on two OpenBLAS kernels alike (2026-12-03); 3 % is asked
    assert cd2.kh_kd_wigner > 1.03 * cd2.kh_kd


@pytest.mark.xtb
@pytest.mark.slow
@pytest.mark.xfail(strict=True, raises=AssertionError,
                   reason="computed k_H/k_D 4.44 (4.75 with Wigner's correction) against 7.1 (2026-12-03, "
                          "GFN2-xTB/ALPB(ethanol), harmonic Bigeleisen-Mayer, 298.15 K)")
def test_primary_isotope_effect_of_2_phenylethyl_bromide_d2_matches_experiment(ethoxide_e2_jobs):
    # PhCD2CH2Br + EtO- in ethanol: k_H/k_D about 7.1 (Saunders & Edison, J. Am. Chem. Soc. 1960, 82, 138; from
    # memory). The harmonic Bigeleisen-Mayer ratio the tool reports (kh_kd, CD2 label, verified anti saddle)
    # must lie within 25 %.
    _, cd2 = phenylethyl_anti(ethoxide_e2_jobs)
    assert abs(cd2.kh_kd - KH_KD_PHENYLETHYL_BROMIDE) <= 0.25 * KH_KD_PHENYLETHYL_BROMIDE, cd2


@pytest.mark.xtb
@pytest.mark.slow
@pytest.mark.xfail(strict=True, raises=AssertionError,
                   reason="computed dG++ 2.50 kcal/mol against 21.5 (2026-12-03, GFN2-xTB/ALPB(ethanol), quasi-RRHO, "
                          "1 M, above free substrate + free ethoxide): barriers above free ions far too low")
def test_free_barrier_of_2_phenylethyl_bromide_with_ethoxide_matches_the_measured_rate(ethoxide_e2_jobs):
    # PhCH2CH2Br + EtO- in ethanol: k about 1e-3 M^-1 s^-1 near 30 C, dG++ about 21.5 kcal/mol (Saunders &
    # Edison, J. Am. Chem. Soc. 1960, 82, 138; from memory). The quasi-RRHO dG the tool reports for the
    # verified anti saddle above free substrate + free base (1 M) must lie within 3 kcal/mol. GFN2-xTB barriers
    # above free anions are known to be far too low (README, "What the numbers mean").
    benzylic, _ = phenylethyl_anti(ethoxide_e2_jobs)
    dg = benzylic.anti.barrier_free_energy_kcal_mol
    assert abs(dg - DG_PHENYLETHYL_BROMIDE_KCAL_MOL) <= 3.0, dg


#: rho of ArCH2CH2Br + EtO- in ethanol (DePuy & Bishop, J. Am. Chem. Soc. 1960, 82, 2532; from memory)
RHO_ARYLETHYL_BROMIDES = 2.1


@pytest.fixture(scope="session")
def arylethyl_series():
    """Return the Hammett record of four para-X 2-arylethyl bromides + ethoxide (GFN2-xTB, ALPB ethanol)."""
    # sigma_p: OMe -0.27, H 0, Cl 0.23, CF3 0.54 (Hansch, Leo & Taft, Chem. Rev. 1991, 91, 165, from memory).
    # Relaxed-path estimates of the anti path (saddles not refined, to keep the run short), taken through the
    # whole chain: run, job records, the config's series and its record (elimscan.analysis.series).
    from elimscan.analysis.series import series_records
    from elimscan.config import (BaseConfig, MethodConfig, PathConfig, RunConfig, SaddleConfig, SeriesConfig,
                                 SeriesMemberConfig, SolventConfig, SubstrateConfig)
    from elimscan.engines.xtb import EngineSettings, XtbEngine
    from elimscan.pipeline.compute import run_config
    from elimscan.pipeline.jobs import job_record

    sigma_p = {"COc1ccc(CCBr)cc1": -0.27, "BrCCc1ccccc1": 0.0, "Clc1ccc(CCBr)cc1": 0.23, "FC(F)(F)c1ccc(CCBr)cc1": 0.54}
    series = SeriesConfig(name="para-X 2-arylethyl bromides", base="ethoxide",
                          members=tuple(SeriesMemberConfig(substrate=s, sigma=v) for s, v in sigma_p.items()))
    config = RunConfig(method=MethodConfig(solvent=SolventConfig(model="alpb", name="ethanol")),
                       paths=PathConfig(approaches=("anti",), substitution=False, saddle=SaddleConfig(refine=False)),
                       substrates=tuple(SubstrateConfig(name=s, smiles=s) for s in sigma_p),
                       bases=(BaseConfig(name="ethoxide", model="bare"),), series=(series,))
    engine = XtbEngine(EngineSettings.from_method(config.method))
    outcome = run_config(config, engine)
    jobs = [job_record(s, b, outcome, config) for s, b in outcome.jobs]
    (record,) = series_records(config.series, jobs, config.method.temperature_K, config.analysis.energy)
    summary = [(p.substrate, p.sigma, p.barrier_kcal_mol, p.path) for p in record.points]
    print(f"rho {record.rho}, r^2 {record.r_squared}: {summary}")
    return record


@pytest.mark.xtb
@pytest.mark.slow
def test_hammett_series_of_2_arylethyl_bromides_fits_every_member(arylethyl_series):
    # What the comparison below stands on: every member has a barrier of its benzylic anti path in the fit.
    assert arylethyl_series.n_fitted == 4, arylethyl_series
    assert all(p.path.endswith(" anti") for p in arylethyl_series.points)
    assert arylethyl_series.rho is not None


@pytest.mark.xtb
@pytest.mark.slow
@pytest.mark.xfail(strict=True, raises=AssertionError,
                   reason="computed rho +4.56 (r^2 0.97) against +2.1 (2026-12-03, GFN2-xTB/ALPB(ethanol), "
                          "relaxed-path dE of the anti paths, 298.15 K)")
def test_hammett_rho_of_2_arylethyl_bromides_matches_experiment(arylethyl_series):
    # ArCH2CH2Br + EtO- in ethanol: electron-withdrawing para groups speed E2, rho about +2.1 (DePuy & Bishop,
    # J. Am. Chem. Soc. 1960, 82, 2532, from memory). The computed rho must lie within 0.7 of it. Measured
    # 2026-12-03 (alike under OpenBLAS Haswell and SkylakeX): dE OMe -5.71, H -6.72, Cl -8.15, CF3 -10.72 kcal/mol.
    assert abs(arylethyl_series.rho - RHO_ARYLETHYL_BROMIDES) <= 0.7, arylethyl_series
