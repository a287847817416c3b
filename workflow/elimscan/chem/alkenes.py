"""The alkene an E2 elimination gives at one H-Cbeta-Calpha-X dihedral, and how it is substituted.

E/Z and R/S of the product are read from 3D; substitution degree, conjugation, ring position and
Bredt's rule describe it. Pure functions of RDKit molecules; problems raise :class:`StructureError`.
"""

from __future__ import annotations

from dataclasses import dataclass

from rdkit import Chem
from rdkit.Chem import rdMolTransforms

from elimscan.errors import StructureError
from elimscan.chem.leavinggroups import LeavingGroup

__all__ = ["DEGREE_NAMES", "Alkene", "alkene_product"]

PERIPLANAR_TOLERANCE_DEG = 30.0  # Klyne-Prelog: (anti/syn)periplanar = 180/0 +- 30 degrees
# Bridgehead alkenes need S = a+b+c >= 7 in bicyclo[a.b.c] (Fawcett, Chem. Rev. 1950; from memory)
BREDT_MIN_S = 7

#: substitution degree of a C=C by the number of carbons on its two carbons (0 to 4)
DEGREE_NAMES = ("unsubstituted", "mono", "di", "tri", "tetra")


@dataclass(frozen=True)
class Alkene:
    """An alkene product of one elimination geometry."""

    smiles: str  # canonical isomeric SMILES, hydrogens implicit
    substitution: str  # 'unsubstituted' | 'mono' | 'di' | 'tri' | 'tetra'
    conjugated: bool  # with another C=C, C#C, C=O or an aromatic ring
    ring_position: str  # 'endocyclic' | 'exocyclic' | 'acyclic'
    possible: bool  # False for anti-Bredt alkenes
    note: str
    dihedral_deg: float | None = None  # H-Cbeta-Calpha-X dihedral the stereo was read from


def _angle_diff(a: float, b: float) -> float:
    """Return the absolute difference of two angles, in degrees (0-180)."""
    return abs((a - b + 180.0) % 360.0 - 180.0)


def _bredt_s(mol: Chem.Mol, a: int, b: int) -> int | None:
    """Return the least S = a+b+c of bridged bicycles with a=b at a bridgehead (None if none)."""
    rings = [set(r) for r in Chem.GetSymmSSSR(mol)]
    best: int | None = None
    for i, r1 in enumerate(rings):
        for r2 in rings[i + 1 :]:
            shared = r1 & r2
            if len(shared) < 3:  # two atoms shared = fused, one = spiro
                continue
            ends = {
                k
                for k in shared
                if sum(n.GetIdx() in shared for n in mol.GetAtomWithIdx(k).GetNeighbors()) == 1
            }
            in_pair = {a, b} <= r1 or {a, b} <= r2
            if in_pair and ends & {a, b}:
                s_number = len(r1 | r2) - 2
                best = s_number if best is None else min(best, s_number)
    return best


def _describe_alkene(product: Chem.Mol, cb: int, ca: int) -> tuple[str, bool, str, bool, str]:
    """Return (substitution, conjugated, ring_position, possible, note) of the cb=ca bond."""
    ends = (product.GetAtomWithIdx(cb), product.GetAtomWithIdx(ca))
    n_carbon = sum(
        n.GetAtomicNum() == 6
        for end in ends
        for n in end.GetNeighbors()
        if n.GetIdx() not in (cb, ca)
    )
    conjugated = False
    for end in ends:
        for nbr in end.GetNeighbors():
            if nbr.GetIdx() in (cb, ca):
                continue
            if nbr.GetIsAromatic():
                conjugated = True
            if nbr.GetAtomicNum() != 6:
                continue
            for bond in nbr.GetBonds():
                other = bond.GetOtherAtom(nbr)
                if other.GetIdx() == end.GetIdx():
                    continue
                if bond.GetBondType() in (Chem.BondType.DOUBLE, Chem.BondType.TRIPLE) and (
                    other.GetAtomicNum() in (6, 8)
                ):
                    conjugated = True
    bond = product.GetBondBetweenAtoms(cb, ca)
    if bond.IsInRing():
        ring_position = "endocyclic"
    elif ends[0].IsInRing() or ends[1].IsInRing():
        ring_position = "exocyclic"
    else:
        ring_position = "acyclic"
    possible, note = True, ""
    s_number = _bredt_s(product, cb, ca) if bond.IsInRing() else None
    if s_number is not None and s_number < BREDT_MIN_S:
        possible = False
        note = (
            f"anti-Bredt: double bond at a bridgehead of a bridged bicycle with "
            f"S = {s_number} < {BREDT_MIN_S} (Bredt's rule)"
        )
    elif s_number is not None:
        note = f"strained bridgehead alkene (S = {s_number})"
    return DEGREE_NAMES[min(n_carbon, 4)], conjugated, ring_position, possible, note


def alkene_product(
    mol: Chem.Mol,
    h_index: int,
    c_beta: int,
    c_alpha: int,
    leaving: LeavingGroup,
    dihedral_deg: float,
) -> Alkene:
    """Return the alkene formed when H and X leave at an H-Cbeta-Calpha-X dihedral (degrees).

    ``mol`` has explicit hydrogens and at least one 3D conformer. If the Cbeta-Calpha
    bond is acyclic, the dihedral of the first conformer is set to ``dihedral_deg``;
    otherwise the conformer whose dihedral is closest to it is used. E/Z and R/S of the
    product are read from that geometry.
    """
    x = leaving.leaving_atom_index
    if leaving.c_alpha_index != c_alpha:
        raise ValueError(f"leaving group sits on atom {leaving.c_alpha_index}, not on {c_alpha}")
    bond = mol.GetBondBetweenAtoms(c_beta, c_alpha)
    if bond is None or mol.GetBondBetweenAtoms(h_index, c_beta) is None:
        raise ValueError(f"atoms {h_index}-{c_beta}-{c_alpha} are not a bonded H-C-C chain")
    if mol.GetBondBetweenAtoms(c_alpha, x) is None or mol.GetNumConformers() == 0:
        raise ValueError("X must be bonded to C-alpha and the molecule must have a 3D conformer")
    if bond.IsInRing():
        measured = {
            conf.GetId(): rdMolTransforms.GetDihedralDeg(conf, h_index, c_beta, c_alpha, x)
            for conf in mol.GetConformers()
        }
        conf_id = min(measured, key=lambda k: (_angle_diff(measured[k], dihedral_deg), k))
        work = Chem.Mol(mol, False, conf_id)
        achieved = measured[conf_id]
        near = _angle_diff(achieved, dihedral_deg) <= PERIPLANAR_TOLERANCE_DEG
        reach = "reachable" if near else "not reachable"
        geometry_note = (
            f"Cbeta-Calpha bond in a ring: target {dihedral_deg:.0f} deg {reach}; closest "
            f"H-Cbeta-Calpha-X dihedral in {len(measured)} conformer(s) is {achieved:.0f} deg"
        )
    else:
        work = Chem.Mol(mol, False, mol.GetConformers()[0].GetId())
        conf = work.GetConformer()
        rdMolTransforms.SetDihedralDeg(conf, h_index, c_beta, c_alpha, x, float(dihedral_deg))
        achieved = rdMolTransforms.GetDihedralDeg(conf, h_index, c_beta, c_alpha, x)
        geometry_note = ""
    return _read_alkene(work, h_index, c_beta, c_alpha, leaving, achieved, geometry_note)


def alkene_at_geometry(mol: Chem.Mol, positions, h_index: int, c_beta: int, c_alpha: int,
                       leaving: LeavingGroup) -> Alkene:
    """Return the alkene formed when H and X leave, E/Z and R/S read from ``positions`` (Å, the substrate's atoms
    first, in ``mol``'s order; e.g. a path's end or saddle) without moving an atom."""
    work = Chem.Mol(mol, False, mol.GetConformers()[0].GetId()) if mol.GetNumConformers() else Chem.Mol(mol)
    if not work.GetNumConformers():
        work.AddConformer(Chem.Conformer(work.GetNumAtoms()), assignId=True)
    conf = work.GetConformer()
    for index in range(work.GetNumAtoms()):
        conf.SetAtomPosition(index, [float(v) for v in positions[index]])
    achieved = rdMolTransforms.GetDihedralDeg(conf, h_index, c_beta, c_alpha, leaving.leaving_atom_index)
    return _read_alkene(work, h_index, c_beta, c_alpha, leaving, achieved, "")


def _read_alkene(work: Chem.Mol, h_index: int, c_beta: int, c_alpha: int, leaving: LeavingGroup, achieved: float,
                 geometry_note: str) -> Alkene:
    """Return the alkene of ``work``'s conformer once H and X leave (E/Z and R/S from that geometry)."""
    x = leaving.leaving_atom_index
    conf_id = work.GetConformer().GetId()
    for atom in work.GetAtoms():
        atom.SetAtomMapNum(0)

    rw = Chem.RWMol(work)
    rw.RemoveBond(c_alpha, x)
    rw.RemoveBond(c_beta, h_index)
    x_atom = rw.GetAtomWithIdx(x)
    x_atom.SetFormalCharge(x_atom.GetFormalCharge() - 1)  # X leaves with the C-X electron pair
    rw.GetBondBetweenAtoms(c_beta, c_alpha).SetBondType(Chem.BondType.DOUBLE)
    keep = next(f for f in Chem.GetMolFrags(rw, sanitizeFrags=False) if c_alpha in f)
    drop = sorted(set(range(rw.GetNumAtoms())) - set(keep), reverse=True)
    for index in drop:
        rw.RemoveAtom(index)
    new_cb = c_beta - sum(d < c_beta for d in drop)
    new_ca = c_alpha - sum(d < c_alpha for d in drop)
    product = rw.GetMol()
    try:
        Chem.SanitizeMol(product)
    except Exception as err:  # RDKit raises several MolSanitizeException subclasses
        raise StructureError(
            f"alkene from removing H atom {h_index + 1} and {leaving.label} is not valid: {err}"
        ) from err
    Chem.AssignStereochemistryFrom3D(product, confId=conf_id)
    smiles = Chem.MolToSmiles(Chem.RemoveHs(product))
    substitution, conjugated, position, possible, note = _describe_alkene(product, new_cb, new_ca)
    note = "; ".join(n for n in (note, geometry_note) if n)
    return Alkene(smiles, substitution, conjugated, position, possible, note, round(achieved, 1))
