"""Beta-hydrogen classes of an E2 substrate: symmetry-equivalent hydrogens (stereo-aware) and their products.

Hydrogens are one class when labelling either gives the same isotopomer (mirror images merged for an
achiral substrate); a free CH3 rotor is one class. Each class carries the alkenes of its anti and syn
eliminations; ``zaitsev_ranks`` ranks the classes by the substitution of their anti products.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from rdkit import Chem

from elimscan.errors import StructureError
from elimscan.chem.alkenes import DEGREE_NAMES, Alkene, alkene_product
from elimscan.chem.atomgraph import atom_name, atom_number, bonded_hydrogens, class_label, is_methyl, is_sp3_carbon
from elimscan.chem.leavinggroups import LeavingGroup
from elimscan.chem.stereo import LABEL_X, cleared_maps, isotopomer_key, ring_conformers

__all__ = ["BetaHydrogenClass", "find_beta_classes", "no_beta_error", "zaitsev_ranks"]


@dataclass(frozen=True)
class BetaHydrogenClass:
    """Symmetry-equivalent beta hydrogens and the alkenes their anti/syn eliminations give."""

    class_id: str  # 'C<beta carbon>-H<representative H>', atoms numbered from 1 (a label)
    beta_carbon_index: int  # carbon of the representative hydrogen
    hydrogen_indices: tuple[int, ...]
    representative_index: int
    degeneracy: int
    anti_product: Alkene
    syn_product: Alkene


def no_beta_error(mol: Chem.Mol, lg: LeavingGroup, smiles: str) -> StructureError:
    """Return the error explaining why C-alpha has no usable beta hydrogen."""
    ca = mol.GetAtomWithIdx(lg.c_alpha_index)
    reasons = []
    for nbr in ca.GetNeighbors():
        if nbr.GetAtomicNum() == 1 or nbr.GetIdx() in lg.group_atom_indices:
            continue
        if nbr.GetAtomicNum() != 6:
            reasons.append(f"{atom_name(nbr)} is not carbon")
        elif not is_sp3_carbon(nbr):
            reasons.append(f"{atom_name(nbr)} is not sp3")
        else:
            reasons.append(f"{atom_name(nbr)} carries no hydrogen")
    why = "; ".join(reasons) if reasons else "C-alpha has no carbon neighbour"
    return StructureError(
        f"SMILES {smiles!r}: no beta hydrogen for E2 from {lg.label} on C-alpha C atom "
        f"{atom_number(lg.c_alpha_index)}: {why}"
    )


def find_beta_classes(
    mol3d: Chem.Mol, lg: LeavingGroup, achiral: bool, seed: int, smiles: str
) -> tuple[BetaHydrogenClass, ...]:
    """Return the beta-hydrogen classes of the substrate with their anti and syn products."""
    ca = mol3d.GetAtomWithIdx(lg.c_alpha_index)
    group = set(lg.group_atom_indices)
    betas = sorted(
        n.GetIdx()
        for n in ca.GetNeighbors()
        if n.GetIdx() not in group and is_sp3_carbon(n) and bonded_hydrogens(n)
    )
    if not betas:
        raise no_beta_error(mol3d, lg, smiles)
    plain = cleared_maps(mol3d)
    parent: dict[int, int] = {}
    keys: dict[str, list[int]] = {}
    for cb in betas:
        carbon = mol3d.GetAtomWithIdx(cb)
        methyl_key: dict[int, str] = {}  # isotope -> key: a free CH3 rotor is one class
        for h in bonded_hydrogens(carbon):
            parent[h] = cb
            isotope = mol3d.GetAtomWithIdx(h).GetIsotope()
            if is_methyl(carbon) and isotope in methyl_key:
                key = methyl_key[isotope]
            else:
                key = isotopomer_key(plain, {h: LABEL_X}, achiral)
                if is_methyl(carbon):
                    methyl_key[isotope] = key
            keys.setdefault(key, []).append(h)

    classes = []
    for members in keys.values():
        rep = min(members, key=lambda h: (parent[h], h))
        cb = parent[rep]
        in_ring = mol3d.GetBondBetweenAtoms(cb, ca.GetIdx()).IsInRing()
        source = ring_conformers(mol3d, rep, seed) if in_ring else mol3d
        anti = alkene_product(source, rep, cb, ca.GetIdx(), lg, 180.0)
        syn = alkene_product(source, rep, cb, ca.GetIdx(), lg, 0.0)
        classes.append(
            BetaHydrogenClass(
                class_id=class_label(cb, rep),
                beta_carbon_index=cb,
                hydrogen_indices=tuple(sorted(members)),
                representative_index=rep,
                degeneracy=len(members),
                anti_product=anti,
                syn_product=syn,
            )
        )
    return tuple(sorted(classes, key=lambda c: (c.beta_carbon_index, c.representative_index)))


def zaitsev_ranks(classes: Sequence[BetaHydrogenClass]) -> dict[str, str]:
    """Return class_id -> 'zaitsev', 'hofmann', 'zaitsev+hofmann', 'intermediate' or 'not possible'.

    Ranks by the substitution degree of each class's product among the possible products
    (Zaitsev = most substituted, Hofmann = least substituted); 'zaitsev+hofmann' when all
    share one degree; 'not possible' for anti-Bredt products, which are left out.
    """
    degree = {name: i for i, name in enumerate(DEGREE_NAMES)}
    possible = {
        c.class_id: degree[c.anti_product.substitution] for c in classes if c.anti_product.possible
    }
    ranks = {c.class_id: "not possible" for c in classes}
    if not possible:
        return ranks
    high, low = max(possible.values()), min(possible.values())
    for class_id, d in possible.items():
        if d == high and d == low:
            ranks[class_id] = "zaitsev+hofmann"
        elif d == high:
            ranks[class_id] = "zaitsev"
        elif d == low:
            ranks[class_id] = "hofmann"
        else:
            ranks[class_id] = "intermediate"
    return ranks
