"""Bases (RDKit only, no I/O): the basic atom and whether the geometric rule counts a base as bulky."""

from __future__ import annotations

from dataclasses import dataclass

from rdkit import Chem

from elimscan.errors import StructureError
from elimscan.chem.structures import parse_smiles


@dataclass(frozen=True)
class BaseInfo:
    """A base's basic atom (0-based index, explicit-H molecule), its charge and the rule's bulkiness call."""

    smiles: str
    basic_atom_index: int
    formal_charge: int
    bulky: bool
    bulky_reason: str


def find_basic_atom(mol: Chem.Mol, smiles: str) -> int:
    """Return the index of the basic atom: an atom-mapped atom, else the anionic O or N, else a neutral sp2/sp3 N."""
    mapped = [a.GetIdx() for a in mol.GetAtoms() if a.GetAtomMapNum()]
    if len(mapped) == 1:
        return mapped[0]
    if len(mapped) > 1:
        raise StructureError(f"base '{smiles}': more than one atom carries a map number; mark only the basic atom")
    anions = [a.GetIdx() for a in mol.GetAtoms() if a.GetFormalCharge() < 0 and a.GetSymbol() in ("O", "N", "C", "S")]
    if len(anions) == 1:
        return anions[0]
    if len(anions) > 1:
        raise StructureError(f"base '{smiles}': several anionic atoms ({', '.join(map(str, anions))}); "
                             "mark the basic one with an atom map number, e.g. [O-:1]")
    # neutral amine/imine N, or a pyridine-type aromatic N (two ring neighbours, no H)
    nitrogens = [a for a in mol.GetAtoms() if a.GetSymbol() == "N" and a.GetFormalCharge() == 0
                 and (not a.GetIsAromatic() or (a.GetTotalNumHs() == 0 and a.GetDegree() == 2))]
    # amidines/guanidines: the imine nitrogen (N=C) is the basic one
    imines = [a.GetIdx() for a in nitrogens if any(b.GetBondType() == Chem.BondType.DOUBLE for b in a.GetBonds())]
    if len(imines) == 1:
        return imines[0]
    if len(nitrogens) == 1:
        return nitrogens[0].GetIdx()
    raise StructureError(f"base '{smiles}': no basic atom found (an anionic O or N, or one neutral amine/imine N); "
                         "mark it with an atom map number")


def _branching(atom: Chem.Atom) -> int:
    """Return the number of carbon neighbours of an atom."""
    return sum(1 for n in atom.GetNeighbors() if n.GetSymbol() == "C")


def judge_bulky(mol: Chem.Mol, basic: int) -> tuple[bool, str]:
    """Return (bulky, reason) for the rule's Hofmann shift: tertiary alkoxide, branched amide, di-ortho pyridine.

    Classes from standard textbooks (common practice): tert-butoxide-type alkoxides, LDA-type dialkylamides
    with branched alkyls, and 2,6-disubstituted pyridines (2,6-lutidine type).
    """
    atom = mol.GetAtomWithIdx(basic)
    heavy = [n for n in atom.GetNeighbors() if n.GetAtomicNum() > 1]
    if atom.GetSymbol() == "O" and len(heavy) == 1 and heavy[0].GetSymbol() == "C" and _branching(heavy[0]) >= 3:
        return True, "tertiary alkoxide (tert-butoxide type)"
    if atom.GetSymbol() == "N" and not atom.GetIsAromatic():
        branched = [n for n in heavy if n.GetSymbol() == "C" and _branching(n) >= 2]
        if len(branched) >= 2 or any(n.GetSymbol() == "Si" for n in heavy):
            return True, "amide with two branched or silyl groups (LDA / HMDS type)"
    if atom.GetSymbol() == "N" and atom.GetIsAromatic() and len(heavy) == 2:
        ortho = sum(1 for ring_atom in heavy for n in ring_atom.GetNeighbors()
                    if n.GetIdx() != basic and not n.IsInRing() and n.GetAtomicNum() > 1)
        if ortho >= 2:
            return True, "pyridine substituted on both ortho positions (2,6-lutidine type)"
    return False, "not sterically demanding at the basic atom"


def describe_base(smiles: str, bulky_flag: bool | None = None) -> BaseInfo:
    """Return the base's basic atom, charge and bulkiness (the user's ``bulky`` flag wins when given)."""
    mol = parse_smiles(smiles, "base")
    basic = find_basic_atom(mol, smiles)
    bulky, reason = judge_bulky(mol, basic)
    if bulky_flag is not None:
        bulky, reason = bulky_flag, f"marked bulky: {str(bulky_flag).lower()} in the config"
    return BaseInfo(smiles, basic, Chem.GetFormalCharge(mol), bulky, reason)
