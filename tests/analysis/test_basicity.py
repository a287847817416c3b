"""Relative pKa from a proton-exchange energy (analysis/basicity.py).

Checked against the thermodynamic identity dG = RT ln(10) dpKa with the gas constant from CODATA 2018
(R = 8.314462618 J/(mol K), 1 cal = 4.184 J), computed here independently of elimscan's units module.
"""

from __future__ import annotations

import math

import pytest

from elimscan.analysis.basicity import exchange_energy_kcal_mol, relative_pka

R_KCAL = 8.314462618 / 4184.0  # CODATA 2018 gas constant in kcal/(mol K)
HARTREE_KCAL = 627.509474  # CODATA 2018 hartree in kcal/mol (4.3597447222071e-18 J x N_A / 4184)


def test_one_pka_unit_is_rt_ln10_at_298_k():
    # 1.364 kcal/mol per pKa unit at 298.15 K (common practice)
    per_unit = R_KCAL * 298.15 * math.log(10.0)
    assert per_unit == pytest.approx(1.3642, abs=2e-4)
    assert relative_pka(per_unit, 298.15) == pytest.approx(1.0, rel=1e-6)
    assert relative_pka(-2 * per_unit, 298.15) == pytest.approx(-2.0, rel=1e-6)
    with pytest.raises(ValueError, match="temperature"):
        relative_pka(1.0, 0.0)


def test_the_exchange_is_balanced_with_the_explicit_molecules():
    # tert-butoxide with two tert-butanol against methoxide with two methanol: three alcohols change sides
    e_tbuo, e_tbuoh, e_meo, e_meoh = -40.0, -20.5, -18.0, -9.2
    for n in (0, 2):
        expected = (e_tbuo + (n + 1) * e_meoh - e_meo - (n + 1) * e_tbuoh) * HARTREE_KCAL
        assert exchange_energy_kcal_mol(e_tbuo, e_tbuoh, e_meo, e_meoh, n) == pytest.approx(expected, rel=1e-7)
    # the same molecule on both sides exchanges nothing
    assert exchange_energy_kcal_mol(e_meo, e_meoh, e_meo, e_meoh, 3) == pytest.approx(0.0, abs=1e-9)
    with pytest.raises(ValueError, match="n_explicit"):
        exchange_energy_kcal_mol(e_tbuo, e_tbuoh, e_meo, e_meoh, -1)


def _relative_pka_tert_butanol(model: dict) -> float:
    """pKa(tert-butanol) - pKa(methanol) under a base model, GFN2-xTB/ALPB(ethanol), one starting arrangement."""
    from elimscan.chem.basemodels import conjugate_acid_smiles
    from elimscan.chem.bases import describe_base
    from elimscan.config import BaseConfig, MethodConfig, OptimizerConfig, RunConfig, SubstrateConfig
    from elimscan.engines.factory import make_engine
    from elimscan.pipeline.compute import relax_base, relax_molecule

    method = MethodConfig(solvent={"model": "alpb", "name": "ethanol"})
    engine = make_engine(method)
    energies = {}
    for name, smiles in (("methoxide", "C[O-]"), ("tert-butoxide", "CC(C)(C)[O-]")):
        item = BaseConfig(name=name, smiles=smiles, model=model)
        config = RunConfig(seed=1, method=method, bases=(item,), substrates=(SubstrateConfig(name="x", smiles="CCBr"),))
        base, _ = relax_base(item, engine, config)
        acid = relax_molecule(name, "base", conjugate_acid_smiles(smiles, describe_base(smiles).basic_atom_index), 0, 1,
                              engine, OptimizerConfig(), 1)
        assert base.record.status == "ok" and acid.record.status == "ok"
        energies[name] = (base.record.energy_hartree, acid.record.energy_hartree)
    de = exchange_energy_kcal_mol(*energies["tert-butoxide"], *energies["methoxide"], model.get("explicit", 0))
    return relative_pka(de, 298.15)


@pytest.mark.xtb
def test_two_hydrogen_bonded_alcohols_give_the_solution_basicity_of_tert_butoxide():
    """pKa(tBuOH) - pKa(MeOH): +3.2 in DMSO (Bordwell, Acc. Chem. Res. 1988, 21, 456; from memory), +2.5 in
    water (textbook tables; from memory); the gas-phase order is the reverse. Within 1 pKa unit of the DMSO
    value with two explicit alcohols (measured 3.3 at the commit that added this test); the bare anion in the
    continuum measured 5.7, 2.5 units too basic: the explicit molecules hold solvation the continuum misses."""
    with_alcohols = _relative_pka_tert_butanol({"explicit": 2})
    assert 2.2 <= with_alcohols <= 4.2, with_alcohols
    bare = _relative_pka_tert_butanol({"explicit": 0})
    assert bare > with_alcohols + 1.0, (bare, with_alcohols)  # measured 5.7 against 3.3
