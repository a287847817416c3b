"""Our numpy geometry against independent implementations: ASE (dihedrals) and RDKit (RMSD)."""

from __future__ import annotations

import numpy as np
import pytest
from ase import Atoms

from elimscan.geometry import classify_dihedral, dihedral_deg, dihedral_gradient_rad, kabsch_rmsd, wrap_degrees


def test_dihedral_matches_ase_on_random_quadruples(rng):
    # ASE's Atoms.get_dihedral is an independent implementation (returns [0, 360)).
    for _ in range(200):
        pts = rng.normal(size=(4, 3)) * 1.5
        ours = dihedral_deg(pts, 0, 1, 2, 3)
        theirs = Atoms("H4", positions=pts).get_dihedral(0, 1, 2, 3)
        assert -180.0 < ours <= 180.0
        assert wrap_degrees(ours - theirs) == pytest.approx(0.0, abs=1e-8)


def test_dihedral_sign_follows_iupac_convention():
    # IUPAC (Moss, Pure Appl. Chem. 1996, 68, 2193): clockwise rotation of the front bond onto the
    # back bond, viewed along b->c, is positive. Here a=(1,0,0) on b at origin, c on +z, d=(0,1,z).
    pts = np.array([[1.0, 0, 0], [0, 0, 0], [0, 0, 1.5], [0, 1.0, 1.5]])
    assert dihedral_deg(pts, 0, 1, 2, 3) == pytest.approx(90.0)
    pts[3] = [-1.0, 0, 1.5]
    assert dihedral_deg(pts, 0, 1, 2, 3) == pytest.approx(180.0)


def test_dihedral_gradient_matches_finite_differences(rng):
    pts = rng.normal(size=(4, 3)) * 1.5
    analytic = dihedral_gradient_rad(pts, 0, 1, 2, 3)
    step = 1e-6
    for i in range(4):
        for k in range(3):
            plus, minus = pts.copy(), pts.copy()
            plus[i, k] += step
            minus[i, k] -= step
            numeric = np.radians(wrap_degrees(dihedral_deg(plus, 0, 1, 2, 3) - dihedral_deg(minus, 0, 1, 2, 3))) / (2 * step)
            assert numeric == pytest.approx(analytic[i, k], abs=1e-5)


@pytest.mark.parametrize("angle, expected", [(180.0, "anti"), (-155.0, "anti"), (149.9, "gauche"), (60.0, "gauche"),
                                             (-30.0, "syn"), (0.0, "syn"), (390.0, "syn"), (-200.0, "anti")])
def test_classify_dihedral_windows(angle, expected):
    # Windows |phi| >= 150 anti, <= 30 syn: common practice for "periplanar" (Klyne-Prelog +-30 deg).
    assert classify_dihedral(angle) == expected


def test_kabsch_rmsd_matches_rdkit(embed):
    from rdkit import Chem
    from rdkit.Chem import AllChem, rdMolAlign

    mol = Chem.AddHs(Chem.MolFromSmiles("CC(Cl)CCO"))
    cids = AllChem.EmbedMultipleConfs(mol, 2, randomSeed=7)
    probe, ref = mol.GetConformer(cids[0]).GetPositions(), mol.GetConformer(cids[1]).GetPositions()
    amap = [(i, i) for i in range(mol.GetNumAtoms())]
    theirs = rdMolAlign.AlignMol(Chem.Mol(mol), mol, prbCid=cids[0], refCid=cids[1], atomMap=amap)
    assert kabsch_rmsd(probe, ref) == pytest.approx(theirs, abs=1e-6)
    assert kabsch_rmsd(probe, probe) == pytest.approx(0.0, abs=1e-7)
