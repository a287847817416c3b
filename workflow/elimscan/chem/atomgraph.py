"""What one atom of an RDKit molecule is and what it is bonded to (pure functions, no 3D).

Atom indices are 0-based RDKit indices of the molecule with explicit hydrogens (``Chem.AddHs``).
"""

from __future__ import annotations

from rdkit import Chem

__all__ = ["atom_name", "bonded_hydrogens", "heavy_neighbors", "is_methyl", "is_sp3_carbon"]


def atom_name(atom: Chem.Atom) -> str:
    """Return 'Br atom 4' for an atom: element symbol and 0-based index."""
    return f"{atom.GetSymbol()} atom {atom.GetIdx()}"


def is_sp3_carbon(atom: Chem.Atom) -> bool:
    """Return True for a carbon with sp3 hybridisation."""
    return atom.GetAtomicNum() == 6 and atom.GetHybridization() == Chem.HybridizationType.SP3


def bonded_hydrogens(atom: Chem.Atom) -> list[int]:
    """Return the indices of the explicit hydrogen atoms bonded to an atom."""
    return sorted(n.GetIdx() for n in atom.GetNeighbors() if n.GetAtomicNum() == 1)


def heavy_neighbors(atom: Chem.Atom) -> list[Chem.Atom]:
    """Return the non-hydrogen neighbours of an atom."""
    return [n for n in atom.GetNeighbors() if n.GetAtomicNum() != 1]


def is_methyl(atom: Chem.Atom) -> bool:
    """Return True for a CH3 carbon with one heavy neighbour."""
    return (
        atom.GetAtomicNum() == 6
        and len(heavy_neighbors(atom)) == 1
        and atom.GetTotalNumHs(includeNeighbors=True) == 3
    )
