"""The wB97X-3c level of the DFT tier (Müller, Hansen & Grimme, J. Chem. Phys. 158, 014103 (2023)): the config
keeps the composite whole, and each of its three parts is checked against a source outside this project."""

from __future__ import annotations

import numpy as np
import pytest
from ase import Atoms

from elimscan.config import DftConfig, SolventConfig, parse_config
from elimscan.engines.dft import DftLevel, build_molecule, build_scf, dft_level
from elimscan.errors import ConfigError

#: bromoethane (8 atoms, Å; a GFN2-xTB-like staggered geometry, any reasonable one serves these checks)
BROMOETHANE = Atoms("CCBrHHHHH", positions=[
    (-1.3052, -0.4101, 0.0000), (0.0000, 0.3564, 0.0000), (1.6004, -0.7255, 0.0000),
    (-2.1451, 0.2899, 0.0000), (-1.3790, -1.0475, 0.8830), (-1.3790, -1.0475, -0.8830),
    (0.0800, 0.9909, 0.8860), (0.0800, 0.9909, -0.8860)])
#: ethoxide (8 atoms, Å), the anion of the calibration cases
ETHOXIDE = Atoms("CCOHHHHH", positions=[
    (0.7887, -0.0157, 0.0550), (-0.6937, 0.3851, 0.0143), (-1.4823, -0.6939, -0.2970),
    (1.3722, 0.8714, 0.3167), (0.9947, -0.8074, 0.7816), (1.1204, -0.3816, -0.9206),
    (-0.8932, 1.1870, -0.7540), (-0.9946, 0.8060, 1.0225)])
_TEXT = "substrates: [{name: s, smiles: CCBr}]\nbases: [{name: ethoxide}]\n"


def _composite(solvation: str = "none") -> DftLevel:
    return dft_level(DftConfig(enabled=True, functional="wb97x-3c", solvation=solvation),
                     SolventConfig(model="alpb", name="ethanol"))


# --- the config keeps the composite whole (no PySCF) ---------------------------------------------------------------


def test_the_composite_brings_its_own_basis_and_dispersion():
    for written in ("wb97x-3c", "wB97X-3c", "ωB97X-3c"):
        dft = parse_config(_TEXT + f"dft: {{enabled: true, functional: {written}}}\n").dft
        assert (dft.functional, dft.dispersion, dft.basis) == ("wb97x-3c", "d4", "vdzp")
    # writing the composite's own parts is allowed, in any case
    dft = parse_config(_TEXT + "dft: {enabled: true, functional: wb97x-3c, basis: vDZP, dispersion: D4}\n").dft
    assert (dft.functional, dft.dispersion, dft.basis) == ("wb97x-3c", "d4", "vdzp")


@pytest.mark.parametrize("other, named", [("basis: def2-svpd", "dft.basis 'def2-svpd'"),
                                          ("basis: def2-tzvp", "dft.basis 'def2-tzvp'"),
                                          ("dispersion: d3bj", "dft.dispersion 'd3bj'"),
                                          ("dispersion: none", "dft.dispersion 'none'")])
def test_the_composite_refuses_another_basis_or_dispersion_naming_the_input(other, named):
    with pytest.raises(ConfigError, match=f"line 3.*composite.*{named}.*leave"):
        parse_config(_TEXT + f"dft: {{enabled: true, functional: wb97x-3c, {other}}}\n")


def test_vdzp_is_refused_with_any_other_functional():
    for functional in ("b3lyp", "pbe0"):
        with pytest.raises(ConfigError, match="vdzp.*belongs to the composite level wb97x-3c"):
            parse_config(_TEXT + f"dft: {{enabled: true, functional: {functional}, basis: vdzp}}\n")


def test_existing_settings_are_read_as_before():
    # the defaults and every earlier level keep their values, so their job keys (pipeline/document.py) stay as they were
    assert DftConfig().model_dump()["functional"] == "b3lyp"
    dft = parse_config(_TEXT + "dft: {enabled: true, functional: pbe0, dispersion: d4, basis: def2-tzvpd}\n").dft
    assert (dft.functional, dft.dispersion, dft.basis) == ("pbe0", "d4", "def2-tzvpd")
    assert DftConfig(enabled=True).model_dump() == DftConfig.model_validate(
        {"enabled": True, "functional": "b3lyp", "dispersion": "d3bj", "basis": "def2-svpd"}).model_dump()


def test_the_basis_data_version_keys_only_jobs_that_use_it():
    from elimscan.config.dft import BSE_BASIS_KEYS
    from elimscan.engines.dftbasis import BSE_BASES
    from elimscan.versions import numeric_versions

    assert set(BSE_BASES) == BSE_BASIS_KEYS
    assert "basis-set-exchange" not in numeric_versions("tblite", dft=True)  # def2 levels: keys as before
    assert "basis-set-exchange" not in numeric_versions("tblite", dft=False, basis_data=True)
    assert "basis-set-exchange" in numeric_versions("tblite", dft=True, basis_data=True)


def test_the_label_names_the_composite_once():
    assert _composite("pcm").label() == "wB97X-3c (RI), IEF-PCM(ethanol, eps 24.85)"
    b3lyp = dft_level(DftConfig(enabled=True), SolventConfig(model="alpb", name="ethanol"))
    assert b3lyp.label() == "B3LYP-D3(BJ)/def2-SVPD (RI), IEF-PCM(ethanol, eps 24.85)"


# --- each part against a source outside the project (PySCF, basis-set-exchange, dftd4) -----------------------------


@pytest.mark.dft
def test_vdzp_from_basis_set_exchange_is_a_polarised_valence_double_zeta_set_with_ecps():
    """vDZP as the paper's title describes it, 'a molecule-optimized polarized valence double-zeta basis set':
    per atom two contracted s (and for C, O, Br two p) functions for the valence shells and one polarisation shell
    (p on H, d elsewhere: 5 spherical functions, BSE lists the set as 'gto_spherical'), the core replaced by an ECP (C and O: 1s², 2 electrons; Br: [Ar]3d¹⁰,
    28 electrons)."""
    pytest.importorskip("basis_set_exchange")
    pytest.importorskip("pyscf")
    molecule = ETHOXIDE + Atoms("Br", positions=[(4.0, 0.0, 0.0)])  # ethoxide and a bromide ion, 4 Å apart
    mol = build_molecule(molecule, -2, 1, DftLevel("wb97x-3c", "d4", "vdzp", True, None, None, 1, 50, 1e-8))
    functions = {"H": 2 + 3, "C": 2 + 2 * 3 + 5, "O": 2 + 2 * 3 + 5, "Br": 2 + 2 * 3 + 5}
    core = {"H": 0, "C": 2, "O": 2, "Br": 28}
    per_atom = np.diff(mol.aoslice_by_atom()[:, 2:4], axis=1).ravel()
    for k, symbol in enumerate(molecule.get_chemical_symbols()):
        assert per_atom[k] == functions[symbol], symbol
        assert mol.atom_nelec_core(k) == core[symbol], symbol
    valence = sum(molecule.get_atomic_numbers()) + 2 - sum(core[s] for s in molecule.get_chemical_symbols())
    assert sum(mol.nelec) == valence


@pytest.mark.dft
def test_the_functional_is_wb97x_v_without_vv10_as_pyscf_defines_the_composite():
    """PySCF's own table of composites (pyscf.scf.dispersion.parse_dft, PySCF 2.14) spells wB97X-3c as
    ('wb97x-v', nlc False, 'd4:wb97x-3c'); the tier's SCF object must be set up the same."""
    dispersion = pytest.importorskip("pyscf.scf.dispersion")
    pytest.importorskip("basis_set_exchange")
    mf = build_scf(BROMOETHANE, 0, 1, _composite())
    assert (mf.xc, mf.nlc, mf.disp) == dispersion.parse_dft("wb97x-3c")
    assert mf.with_df.auxbasis == "def2-universal-jkfit"


@pytest.mark.dft
@pytest.mark.parametrize("name, atoms, charge", [("bromoethane", BROMOETHANE, 0), ("ethoxide", ETHOXIDE, -1)])
def test_the_d4_energy_agrees_with_the_dftd4_project_api_and_the_published_parameters(name, atoms, charge):
    """The dispersion energy the tier adds (pyscf-dispersion's D4 library, method 'wb97x-3c') equals that of the D4
    project's own Python API (dftd4 4.3.1, an independent build) with its 'wb97x-3c' entry and with the five
    parameters written out: s6 1.0, s8 0.0, a1 0.2464, a2 4.737, s9 1.0 (Müller, Hansen & Grimme, J. Chem. Phys.
    158, 014103 (2023), as in the authors' ORCA setup script, github.com/grimme-lab/wB97X-3c, and in dftd4's
    parameter table, src/dftd4/param.f90)."""
    interface = pytest.importorskip("dftd4.interface")
    pytest.importorskip("pyscf.dispersion")
    pytest.importorskip("basis_set_exchange")
    from ase.units import Bohr

    mf = build_scf(atoms, charge, 1, _composite())
    ours = float(mf.get_dispersion())
    model = interface.DispersionModel(atoms.get_atomic_numbers(), atoms.positions / Bohr, charge=float(charge))
    by_name = model.get_dispersion(interface.DampingParam(method="wb97x-3c"), grad=False)["energy"]
    written = model.get_dispersion(interface.DampingParam(s6=1.0, s8=0.0, a1=0.2464, a2=4.737, s9=1.0),
                                   grad=False)["energy"]
    assert by_name == pytest.approx(written, abs=1e-10)
    assert ours < 0.0
    assert ours == pytest.approx(by_name, abs=1e-7), f"{name}: PySCF {ours:.9f}, dftd4 {by_name:.9f} hartree"
    # and not wB97X's own D4 parameters: the composite's are a different fit
    wb97x = model.get_dispersion(interface.DampingParam(method="wb97x"), grad=False)["energy"]
    assert abs(wb97x - ours) > 1e-4
