"""What one atom of an RDKit molecule is and what it is bonded to (pure functions, no 3D).

Atom indices are 0-based RDKit indices of the molecule with explicit hydrogens (``Chem.AddHs``); what a
person reads numbers atoms from 1 (:func:`atom_number`, :func:`atom_name`).
"""

from __future__ import annotations

from rdkit import Chem

__all__ = ["atom_name", "atom_number", "bonded_hydrogens", "class_label", "heavy_neighbors", "is_methyl",
           "is_sp3_carbon"]


def atom_number(index0: int) -> int:
    """Return the atom number a person reads (1-based) of a 0-based atom index."""
    return index0 + 1


def class_label(beta_carbon_index0: int, hydrogen_index0: int) -> str:
    """Return the label of a beta-H class, 'C3-H10': its beta carbon and representative H, numbered from 1."""
    return f"C{atom_number(beta_carbon_index0)}-H{atom_number(hydrogen_index0)}"


def atom_name(atom: Chem.Atom) -> str:
    """Return 'Br atom 5' for an atom: element symbol and its number from 1 (RDKit index + 1)."""
    return f"{atom.GetSymbol()} atom {atom_number(atom.GetIdx())}"


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
