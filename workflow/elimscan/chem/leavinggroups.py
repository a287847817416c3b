"""Leaving groups of E2 substrates: what is recognised, which atoms leave, which group atom maps select.

Recognised: F, Cl, Br, I; C-O-SO2-R sulfonates (named OTs, ONs, OMs, OTf, else OSO2R); R-NR3+ and R-SR2+
onium ions; R-OH2+. Pure functions of RDKit molecules; problems raise :class:`StructureError`.
"""

from __future__ import annotations

from dataclasses import dataclass
from types import MappingProxyType

from rdkit import Chem

from elimscan.errors import StructureError
from elimscan.chem.atomgraph import atom_name, atom_number, heavy_neighbors, is_methyl, is_sp3_carbon
from elimscan.chem.stereo import LABEL_C, LABEL_X, isotopomer_key

__all__ = [
    "LeavingGroup",
    "apply_maps",
    "describe_candidate",
    "distinct_candidates",
    "find_leaving_groups",
    "no_leaving_group_error",
]

_HALOGENS = MappingProxyType({9: "F", 17: "Cl", 35: "Br", 53: "I"})

# Sulfonyl residues with a name of their own, matched on the sulfur atom (first atom).
_SULFONYL_LABELS: tuple[tuple[str, str], ...] = (
    ("OTs", "S-c1[cH][cH]c([CH3])[cH][cH]1"),
    ("ONs", "S-c1[cH][cH]c([N+](=O)[O-])[cH][cH]1"),
    ("OMs", "S-[CH3]"),
    ("OTf", "S-C(F)(F)F"),
)


@dataclass(frozen=True)
class LeavingGroup:
    """A leaving group X on the sp3 carbon C-alpha."""

    label: str  # Cl, Br, I, F, OTs, OMs, OTf, ONs, OSO2R, NMe3+, NR3+, SMe2+, SR2+, OH2+
    kind: str  # 'halide' | 'sulfonate' | 'onium' | 'oxonium'
    leaving_atom_index: int  # X: the atom bonded to C-alpha
    c_alpha_index: int
    group_atom_indices: tuple[int, ...]  # atoms (with H) that leave together with X
    map_number: int | None  # the atom-map number that selected this group, if any


def _group_atoms(mol: Chem.Mol, x: int, c_alpha: int) -> tuple[int, ...]:
    """Return the atoms leaving with X (X and its acyclic branches only, if X-C-alpha is cyclic)."""
    seen = {x}
    stack = [x]
    while stack:
        atom = mol.GetAtomWithIdx(stack.pop())
        for nbr in atom.GetNeighbors():
            j = nbr.GetIdx()
            if j not in seen and not (atom.GetIdx() == x and j == c_alpha):
                seen.add(j)
                stack.append(j)
    if c_alpha not in seen:
        return tuple(sorted(seen))
    # X is in a ring with C-alpha (e.g. a cyclic ammonium ion): only its acyclic branches leave.
    seen = {x}
    stack = [x]
    while stack:
        atom = mol.GetAtomWithIdx(stack.pop())
        for bond in atom.GetBonds():
            j = bond.GetOtherAtomIdx(atom.GetIdx())
            if j not in seen and j != c_alpha and not bond.IsInRing():
                seen.add(j)
                stack.append(j)
    return tuple(sorted(seen))


def _terminal_oxygen(s_atom: Chem.Atom, o_atom: Chem.Atom) -> bool:
    """Return True for an S=O (or S-O-) oxygen without other neighbours."""
    if o_atom.GetAtomicNum() != 8 or o_atom.GetDegree() != 1 or o_atom.GetTotalNumHs() != 0:
        return False
    bond = s_atom.GetOwningMol().GetBondBetweenAtoms(s_atom.GetIdx(), o_atom.GetIdx())
    return bond.GetBondType() == Chem.BondType.DOUBLE or o_atom.GetFormalCharge() == -1


def _sulfonate_residue(mol: Chem.Mol, o_atom: Chem.Atom) -> tuple[int, int] | None:
    """Return (carbon, sulfur) indices if the oxygen is the ester O of a C-O-SO2-R group."""
    if o_atom.GetAtomicNum() != 8 or o_atom.GetFormalCharge() != 0 or o_atom.GetDegree() != 2:
        return None
    nbrs = list(o_atom.GetNeighbors())
    carbons = [n for n in nbrs if n.GetAtomicNum() == 6]
    sulfurs = [n for n in nbrs if n.GetAtomicNum() == 16]
    if len(carbons) != 1 or len(sulfurs) != 1:
        return None
    s_atom = sulfurs[0]
    others = [n for n in s_atom.GetNeighbors() if n.GetIdx() != o_atom.GetIdx()]
    if s_atom.GetDegree() != 4 or sum(_terminal_oxygen(s_atom, n) for n in others) < 2:
        return None
    return carbons[0].GetIdx(), s_atom.GetIdx()


def _sulfonyl_label(mol: Chem.Mol, s_index: int) -> str:
    """Return the short name of the sulfonate whose sulfur is given ('OSO2R' if unnamed)."""
    for label, smarts in _SULFONYL_LABELS:
        pattern = Chem.MolFromSmarts(smarts)
        if any(match[0] == s_index for match in mol.GetSubstructMatches(pattern)):
            return label
    return "OSO2R"


def _all_candidates(mol: Chem.Mol) -> list[LeavingGroup]:
    """Return leaving-group candidates on any carbon (sp3 or not), in atom order."""
    found: list[LeavingGroup] = []
    sulfonyl_atoms: set[int] = set()

    def add(label: str, kind: str, x: int, c_alpha: int) -> None:
        """Append a candidate to ``found`` (returns nothing)."""
        map_number = mol.GetAtomWithIdx(x).GetAtomMapNum() or None
        group = _group_atoms(mol, x, c_alpha)
        found.append(LeavingGroup(label, kind, x, c_alpha, group, map_number))

    for atom in mol.GetAtoms():
        residue = _sulfonate_residue(mol, atom)
        if residue is not None:
            c_alpha, s_index = residue
            add(_sulfonyl_label(mol, s_index), "sulfonate", atom.GetIdx(), c_alpha)
            sulfonyl_atoms.update(_group_atoms(mol, atom.GetIdx(), c_alpha))
    for atom in mol.GetAtoms():
        z, charge, idx = atom.GetAtomicNum(), atom.GetFormalCharge(), atom.GetIdx()
        if idx in sulfonyl_atoms:
            continue
        heavy = heavy_neighbors(atom)
        single_c = [
            n
            for n in heavy
            if n.GetAtomicNum() == 6
            and mol.GetBondBetweenAtoms(idx, n.GetIdx()).GetBondType() == Chem.BondType.SINGLE
        ]
        n_h = atom.GetTotalNumHs(includeNeighbors=True)
        if z in _HALOGENS and charge == 0 and len(heavy) == 1 and len(single_c) == 1:
            carbon = single_c[0]
            other_halogens = [
                n
                for n in carbon.GetNeighbors()
                if n.GetAtomicNum() in _HALOGENS and n.GetIdx() != idx
            ]
            if z == 9 and other_halogens:
                continue  # C-F of CF2/CF3 groups: not treated as a leaving group
            add(_HALOGENS[z], "halide", idx, carbon.GetIdx())
        elif z == 8 and charge == 1 and n_h == 2 and len(heavy) == 1 and len(single_c) == 1:
            add("OH2+", "oxonium", idx, single_c[0].GetIdx())
        elif (z, charge) in ((7, 1), (16, 1)) and n_h == 0:
            n_carbons = 4 if z == 7 else 3
            if len(heavy) != n_carbons or len(single_c) != n_carbons:
                continue
            # A methyl on the onium atom has no beta carbon; it is C-alpha only if all are methyl.
            alphas = [c for c in single_c if not is_methyl(c)] or single_c[:1]
            for carbon in alphas:
                rest = [c for c in single_c if c.GetIdx() != carbon.GetIdx()]
                all_methyl = all(is_methyl(c) for c in rest)
                if z == 7:
                    label = "NMe3+" if all_methyl else "NR3+"
                else:
                    label = "SMe2+" if all_methyl else "SR2+"
                add(label, "onium", idx, carbon.GetIdx())
    return sorted(found, key=lambda c: (c.leaving_atom_index, c.c_alpha_index))


def find_leaving_groups(mol: Chem.Mol) -> list[LeavingGroup]:
    """Return the leaving-group candidates whose C-alpha is an sp3 carbon (atom order).

    Recognised: F, Cl, Br, I; C-O-SO2-R sulfonates (X = the ester O); R-NR3+ and
    R-SR2+ onium ions (X = N or S); R-OH2+. Fluorine of CF2/CF3 groups and halogens
    inside a sulfonyl residue are ignored. Pass the molecule with explicit hydrogens
    so that ``group_atom_indices`` include the hydrogens.
    """
    return [c for c in _all_candidates(mol) if is_sp3_carbon(mol.GetAtomWithIdx(c.c_alpha_index))]


def describe_candidate(mol: Chem.Mol, lg: LeavingGroup) -> str:
    """Return a one-line description of a candidate for error messages."""
    x = mol.GetAtomWithIdx(lg.leaving_atom_index)
    return f"{lg.label} (leaving {atom_name(x)}, C-alpha C atom {atom_number(lg.c_alpha_index)})"


def apply_maps(mol: Chem.Mol, candidates: list[LeavingGroup], smiles: str) -> list[LeavingGroup]:
    """Return the candidates selected by atom-map numbers (all of them if nothing is mapped)."""
    mapped = {a.GetIdx(): a.GetAtomMapNum() for a in mol.GetAtoms() if a.GetAtomMapNum()}
    if not mapped:
        return candidates
    leaving = {c.leaving_atom_index for c in candidates}
    onium_alpha = {c.c_alpha_index for c in candidates if c.kind == "onium"}
    listing = "; ".join(describe_candidate(mol, c) for c in candidates)
    for index, number in mapped.items():
        if index not in leaving and index not in onium_alpha:
            raise StructureError(
                f"SMILES {smiles!r}: atom map :{number} is on {atom_name(mol.GetAtomWithIdx(index))}, "
                f"which is not a leaving atom; put the map number on the leaving atom "
                f"(candidates: {listing})"
            )
    chosen = [
        c
        for c in candidates
        if c.leaving_atom_index in mapped or (c.kind == "onium" and c.c_alpha_index in mapped)
    ]
    if len({c.leaving_atom_index for c in chosen}) > 1:
        raise StructureError(
            f"SMILES {smiles!r}: atom maps mark more than one leaving group; mark exactly one "
            f"({'; '.join(describe_candidate(mol, c) for c in chosen)})"
        )
    alpha_marked = [c for c in chosen if c.c_alpha_index in mapped]
    if alpha_marked:
        chosen = alpha_marked
    return [
        LeavingGroup(
            c.label,
            c.kind,
            c.leaving_atom_index,
            c.c_alpha_index,
            c.group_atom_indices,
            mapped.get(c.c_alpha_index) if c in alpha_marked else mapped.get(c.leaving_atom_index),
        )
        for c in chosen
    ]


def distinct_candidates(
    mol3d: Chem.Mol, candidates: list[LeavingGroup], achiral: bool
) -> list[LeavingGroup]:
    """Return one candidate per symmetry class (stereo-aware; mirror images merged if achiral)."""
    kept: dict[str, LeavingGroup] = {}
    for c in candidates:
        labels = {c.leaving_atom_index: LABEL_X, c.c_alpha_index: LABEL_C}
        kept.setdefault(isotopomer_key(mol3d, labels, achiral), c)
    return list(kept.values())


def no_leaving_group_error(mol_h: Chem.Mol, smiles: str) -> StructureError:
    """Return the error for a molecule without a leaving group on an sp3 carbon."""
    elsewhere = _all_candidates(mol_h)
    if elsewhere:
        lg = elsewhere[0]
        ca = mol_h.GetAtomWithIdx(lg.c_alpha_index)
        kind = "aromatic" if ca.GetIsAromatic() else str(ca.GetHybridization()).lower()
        return StructureError(
            f"SMILES {smiles!r}: no beta hydrogen for E2: the leaving group {lg.label} "
            f"({atom_name(mol_h.GetAtomWithIdx(lg.leaving_atom_index))}) sits on C atom "
            f"{atom_number(lg.c_alpha_index)}, which is {kind}, not sp3 (aryl/vinyl substrates do not "
            f"undergo E2 at C-alpha)"
        )
    return StructureError(
        f"SMILES {smiles!r}: no leaving group found (looked for F, Cl, Br, I, sulfonates, "
        f"NR3+, SR2+ and OH2+ on an sp3 carbon)"
    )
