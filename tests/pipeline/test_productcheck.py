"""A path whose own geometry forms another alkene isomer than the one it was computed for is no barrier.

E/Z is read from the geometry by RDKit (an independent library). The case is 2-bromobutane, whose two C3
hydrogens give (E)- and (Z)-2-butene when anti to Br (both isomers form with alkoxides: Brown & Klimisch, J. Am.
Chem. Soc. 1966, 88, 1425); a path computed for one of them under the other's name is what a swap of the two
hydrogens' places produced before conformers kept their labels (chem/geminal.py).
"""

from __future__ import annotations

import warnings

import numpy as np
from ase import Atoms
from rdkit.Chem import rdMolTransforms

from elimscan.chem.perception import perceive_substrate
from elimscan.drivers.complexes import ComplexResult
from elimscan.drivers.paths import PathPoint, PathResult
from elimscan.drivers.saddles import SaddleResult
from elimscan.pipeline.productcheck import checked_isomer, formed_alkene
from elimscan.results.flags import WRONG_ISOMER, no_barrier_reason


def _substrate():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return perceive_substrate("CCC(C)Br", seed=1)


def _path_ending_at(positions: np.ndarray, symbols) -> PathResult:
    atoms = Atoms(symbols, positions=positions)
    complex_ = ComplexResult(atoms, -1.0, 0.0, (-1.0,), 0)
    points = (PathPoint(0.0, -1.0, atoms, True, {}), PathPoint(3.0, -1.1, atoms, True, {}))
    saddle = SaddleResult(None, None, False, "none", None, (), "not refined")
    return PathResult("anti", complex_, points, 0, saddle, (), 10)


def _anti_geometry(substrate, beta_class) -> np.ndarray:
    mol = substrate.mol
    conf = mol.GetConformer()
    lg = substrate.leaving_group
    rdMolTransforms.SetDihedralDeg(conf, beta_class.representative_index, beta_class.beta_carbon_index,
                                   lg.c_alpha_index, lg.leaving_atom_index, 180.0)
    return conf.GetPositions()


def test_a_path_that_forms_its_own_isomer_passes_and_one_that_forms_the_other_is_no_barrier():
    substrate = _substrate()
    symbols = [a.GetSymbol() for a in substrate.mol.GetAtoms()]
    internal = [c for c in substrate.beta_classes if c.anti_product.smiles in ("C/C=C/C", "C/C=C\\C")]
    assert sorted(c.anti_product.smiles for c in internal) == ["C/C=C/C", "C/C=C\\C"]
    for beta_class in internal:
        positions = _anti_geometry(substrate, beta_class)
        path = _path_ending_at(positions, symbols)
        named = beta_class.anti_product.smiles
        assert formed_alkene(substrate, beta_class, path) == named
        kept = checked_isomer(path, substrate, beta_class, named)
        assert kept.flags == () and kept.counts_as_barrier
        other = next(c.anti_product.smiles for c in internal if c is not beta_class)
        flagged = checked_isomer(path, substrate, beta_class, other)
        assert flagged.flags[-1].startswith(WRONG_ISOMER) and named in flagged.flags[-1]
        assert flagged.reaches_products is False and not flagged.counts_as_barrier
        assert no_barrier_reason(flagged.reaches_products, flagged.stopped_stage) is not None


def test_swapped_geminal_hydrogens_are_caught_from_the_geometry():
    # the failure the labels fix removed: in a conformer whose two C3 hydrogens trade places, turning the path's
    # hydrogen anti to Br turns the chain the other way, and the path forms the other isomer
    substrate = _substrate()
    symbols = [a.GetSymbol() for a in substrate.mol.GetAtoms()]
    beta_class = next(c for c in substrate.beta_classes if c.anti_product.smiles == "C/C=C/C")
    partner = next(c for c in substrate.beta_classes
                   if c.beta_carbon_index == beta_class.beta_carbon_index and c is not beta_class)
    conf = substrate.mol.GetConformer()
    swapped = conf.GetPositions()
    h, other = beta_class.representative_index, partner.representative_index
    swapped[[h, other]] = swapped[[other, h]]
    for index, position in enumerate(swapped):
        conf.SetAtomPosition(index, position.tolist())
    path = _path_ending_at(_anti_geometry(substrate, beta_class), symbols)
    assert formed_alkene(substrate, beta_class, path) == "C/C=C\\C"
    assert not checked_isomer(path, substrate, beta_class, "C/C=C/C").counts_as_barrier
