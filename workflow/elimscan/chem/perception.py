"""Perception of E2 substrates: leaving group, C-alpha, beta-hydrogen classes, alkene products.

Everything here is a pure function of a SMILES string or an RDKit molecule: no file
access, no printing. Problems with the input raise :class:`StructureError`; advisories
are returned as strings in ``Substrate.warnings`` (and also issued as
:class:`StereoWarning` through :mod:`warnings`).

Atom indices are 0-based RDKit indices of the molecule with explicit hydrogens
(``Chem.AddHs``): heavy atoms in SMILES order, then hydrogens.
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field
from types import MappingProxyType

from rdkit import Chem, rdBase
from rdkit.Chem import rdDistGeom, rdMolTransforms
from rdkit.Chem.EnumerateStereoisomers import EnumerateStereoisomers, StereoEnumerationOptions
from rdkit.Geometry import Point3D

from elimscan.errors import StructureError
from elimscan.chem.structures import embed, force_field_minimize, parse_smiles

__all__ = [
    "Alkene",
    "BetaHydrogenClass",
    "LeavingGroup",
    "StereoWarning",
    "Substrate",
    "alkene_product",
    "find_leaving_groups",
    "perceive_substrate",
    "ring_conformers",
    "zaitsev_ranks",
]

RING_CONFORMERS = 30  # conformers searched when the C-beta-C-alpha bond is in a ring
PERIPLANAR_TOLERANCE_DEG = 30.0  # Klyne-Prelog: (anti/syn)periplanar = 180/0 +- 30 degrees
MAX_OPEN_STEREO = 4  # more unspecified stereo elements than this are rejected outright
# Stereo fillings this far above the most stable one (MMFF94, kcal/mol) are discarded. A
# heuristic of this module: in/out bridgeheads of small bicycles come out 50+ kcal/mol higher,
# ordinary diastereomers within a few kcal/mol.
STRAIN_CUTOFF_KCAL = 25.0
# Bridgehead alkenes need S = a+b+c >= 7 in bicyclo[a.b.c] (Fawcett, Chem. Rev. 1950; from memory)
BREDT_MIN_S = 7

_DEGREE_NAMES = ("unsubstituted", "mono", "di", "tri", "tetra")
_HALOGENS = MappingProxyType({9: "F", 17: "Cl", 35: "Br", 53: "I"})
_LABEL_X = 1000  # isotope offsets that mark atoms when isotopomers are compared
_LABEL_C = 2000

# Sulfonyl residues with a name of their own, matched on the sulfur atom (first atom).
_SULFONYL_LABELS: tuple[tuple[str, str], ...] = (
    ("OTs", "S-c1[cH][cH]c([CH3])[cH][cH]1"),
    ("ONs", "S-c1[cH][cH]c([N+](=O)[O-])[cH][cH]1"),
    ("OMs", "S-[CH3]"),
    ("OTf", "S-C(F)(F)F"),
)


class StereoWarning(UserWarning):
    """Issued when an unspecified stereocentre only selects an enantiomer."""


@dataclass(frozen=True)
class LeavingGroup:
    """A leaving group X on the sp3 carbon C-alpha."""

    label: str  # Cl, Br, I, F, OTs, OMs, OTf, ONs, OSO2R, NMe3+, NR3+, SMe2+, SR2+, OH2+
    kind: str  # 'halide' | 'sulfonate' | 'onium' | 'oxonium'
    leaving_atom_index: int  # X: the atom bonded to C-alpha
    c_alpha_index: int
    group_atom_indices: tuple[int, ...]  # atoms (with H) that leave together with X
    map_number: int | None  # the atom-map number that selected this group, if any


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


@dataclass(frozen=True)
class BetaHydrogenClass:
    """Symmetry-equivalent beta hydrogens and the alkenes their anti/syn eliminations give."""

    class_id: str  # 'C<beta carbon>-H<representative H>'
    beta_carbon_index: int  # carbon of the representative hydrogen
    hydrogen_indices: tuple[int, ...]
    representative_index: int
    degeneracy: int
    anti_product: Alkene
    syn_product: Alkene


@dataclass(frozen=True)
class Substrate:
    """A perceived E2 substrate with one 3D conformer."""

    smiles: str  # the SMILES as given
    mol: Chem.Mol = field(compare=False)  # explicit H, one 3D conformer, stereo from 3D, maps kept
    formal_charge: int
    leaving_group: LeavingGroup
    beta_classes: tuple[BetaHydrogenClass, ...]
    warnings: tuple[str, ...]
    canonical_smiles: str = ""  # canonical isomeric SMILES of the structure used (maps cleared)


# --------------------------------------------------------------------------- helpers


def _name(atom: Chem.Atom) -> str:
    """Return 'Br atom 4' for an atom: element symbol and 0-based index."""
    return f"{atom.GetSymbol()} atom {atom.GetIdx()}"


def _is_sp3_carbon(atom: Chem.Atom) -> bool:
    """Return True for a carbon with sp3 hybridisation."""
    return atom.GetAtomicNum() == 6 and atom.GetHybridization() == Chem.HybridizationType.SP3


def _hydrogens(atom: Chem.Atom) -> list[int]:
    """Return the indices of the explicit hydrogen atoms bonded to an atom."""
    return sorted(n.GetIdx() for n in atom.GetNeighbors() if n.GetAtomicNum() == 1)


def _heavy_neighbors(atom: Chem.Atom) -> list[Chem.Atom]:
    """Return the non-hydrogen neighbours of an atom."""
    return [n for n in atom.GetNeighbors() if n.GetAtomicNum() != 1]


def _is_methyl(atom: Chem.Atom) -> bool:
    """Return True for a CH3 carbon with one heavy neighbour."""
    return (
        atom.GetAtomicNum() == 6
        and len(_heavy_neighbors(atom)) == 1
        and atom.GetTotalNumHs(includeNeighbors=True) == 3
    )


def _angle_diff(a: float, b: float) -> float:
    """Return the absolute difference of two angles, in degrees (0-180)."""
    return abs((a - b + 180.0) % 360.0 - 180.0)


def _cleared_maps(mol: Chem.Mol) -> Chem.Mol:
    """Return a copy of the molecule without atom-map numbers."""
    copy = Chem.Mol(mol)
    for atom in copy.GetAtoms():
        atom.SetAtomMapNum(0)
    return copy


def _smiles_from_3d(mol: Chem.Mol, conf_id: int = -1) -> str:
    """Return canonical isomeric SMILES with stereo read from a conformer (H implicit)."""
    copy = Chem.Mol(mol)
    Chem.AssignStereochemistryFrom3D(copy, confId=conf_id)
    return Chem.MolToSmiles(Chem.RemoveHs(copy))


def _reflected(mol: Chem.Mol) -> Chem.Mol:
    """Return a copy whose first conformer is mirrored through the yz plane."""
    copy = Chem.Mol(mol, False, mol.GetConformer().GetId())
    conf = copy.GetConformer()
    for i in range(copy.GetNumAtoms()):
        p = conf.GetAtomPosition(i)
        conf.SetAtomPosition(i, Point3D(-p.x, p.y, p.z))
    return copy


def _isotopomer_key(mol3d: Chem.Mol, labels: dict[int, int], achiral: bool) -> str:
    """Return a canonical SMILES identifying the labelled isotopomer (mirror-merged if achiral)."""
    copy = Chem.Mol(mol3d)
    for index, offset in labels.items():
        atom = copy.GetAtomWithIdx(index)
        atom.SetIsotope(offset + atom.GetIsotope())
    key = _smiles_from_3d(copy)
    if achiral:
        key = min(key, _smiles_from_3d(_reflected(copy)))
    return key


def _is_achiral(mol3d: Chem.Mol) -> bool:
    """Return True when the 3D structure is superimposable on its mirror image (by SMILES)."""
    return _smiles_from_3d(mol3d) == _smiles_from_3d(_reflected(mol3d))


# --------------------------------------------------------------------------- leaving groups


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
        heavy = _heavy_neighbors(atom)
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
            alphas = [c for c in single_c if not _is_methyl(c)] or single_c[:1]
            for carbon in alphas:
                rest = [c for c in single_c if c.GetIdx() != carbon.GetIdx()]
                all_methyl = all(_is_methyl(c) for c in rest)
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
    return [c for c in _all_candidates(mol) if _is_sp3_carbon(mol.GetAtomWithIdx(c.c_alpha_index))]


def _describe(mol: Chem.Mol, lg: LeavingGroup) -> str:
    """Return a one-line description of a candidate for error messages."""
    x = mol.GetAtomWithIdx(lg.leaving_atom_index)
    return f"{lg.label} (leaving {_name(x)}, C-alpha C atom {lg.c_alpha_index})"


def _apply_maps(mol: Chem.Mol, candidates: list[LeavingGroup], smiles: str) -> list[LeavingGroup]:
    """Return the candidates selected by atom-map numbers (all of them if nothing is mapped)."""
    mapped = {a.GetIdx(): a.GetAtomMapNum() for a in mol.GetAtoms() if a.GetAtomMapNum()}
    if not mapped:
        return candidates
    leaving = {c.leaving_atom_index for c in candidates}
    onium_alpha = {c.c_alpha_index for c in candidates if c.kind == "onium"}
    listing = "; ".join(_describe(mol, c) for c in candidates)
    for index, number in mapped.items():
        if index not in leaving and index not in onium_alpha:
            raise StructureError(
                f"SMILES {smiles!r}: atom map :{number} is on {_name(mol.GetAtomWithIdx(index))}, "
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
            f"({'; '.join(_describe(mol, c) for c in chosen)})"
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


def _distinct_candidates(
    mol3d: Chem.Mol, candidates: list[LeavingGroup], achiral: bool
) -> list[LeavingGroup]:
    """Return one candidate per symmetry class (stereo-aware; mirror images merged if achiral)."""
    kept: dict[str, LeavingGroup] = {}
    for c in candidates:
        labels = {c.leaving_atom_index: _LABEL_X, c.c_alpha_index: _LABEL_C}
        kept.setdefault(_isotopomer_key(mol3d, labels, achiral), c)
    return list(kept.values())


# --------------------------------------------------------------------------- input checks


def _check_fragments(mol: Chem.Mol, smiles: str) -> None:
    """Raise StructureError for multi-fragment input (a salt with its counter-ion)."""
    fragments = Chem.GetMolFrags(mol)
    if len(fragments) > 1:
        raise StructureError(
            f"SMILES {smiles!r} holds {len(fragments)} separate molecules; give the substrate "
            f"alone, without counter-ions"
        )


def _fill_open_stereo(mol: Chem.Mol, smiles: str, seed: int) -> tuple[Chem.Mol, list[int]]:
    """Return the molecule with open stereo filled in and the centres whose choice is arbitrary.

    The second item lists unspecified stereocentres whose choice only picks an
    enantiomer ([] if nothing was open). Raises StructureError when unspecified stereo
    changes the answer: an unspecified double bond, or open centres whose fillings give
    different diastereomers. Fillings that cannot be embedded in 3D, or lie more than
    STRAIN_CUTOFF_KCAL above the most stable one (in/out bridgeheads), do not count.
    """
    infos = list(Chem.FindPotentialStereo(Chem.Mol(mol)))
    open_ = [i for i in infos if i.specified != Chem.StereoSpecified.Specified]
    if not open_:
        return mol, []
    names: list[str] = []
    for info in open_:
        if info.type == Chem.StereoType.Bond_Double:
            bond = mol.GetBondWithIdx(info.centeredOn)
            begin, end = _name(bond.GetBeginAtom()), _name(bond.GetEndAtom())
            names.append(f"double bond {begin}={end} (E/Z)")
        else:
            names.append(f"{_name(mol.GetAtomWithIdx(info.centeredOn))} (stereocentre)")
    problem = f"SMILES {smiles!r}: stereochemistry left unspecified where it changes the products"
    advice = "specify it (@/@@ for centres, / and \\ for double bonds)"
    if len(open_) > MAX_OPEN_STEREO or any(i.type == Chem.StereoType.Bond_Double for i in open_):
        raise StructureError(f"{problem}: {', '.join(names)}; {advice}")

    fillings: list[tuple[float, int, Chem.Mol, str, str]] = []  # energy, order, isomer, smiles, key
    options = StereoEnumerationOptions(onlyUnassigned=True, unique=True)
    for order, isomer in enumerate(EnumerateStereoisomers(Chem.Mol(mol), options=options)):
        with_h = Chem.AddHs(isomer)
        params = rdDistGeom.ETKDGv3()
        params.randomSeed = seed
        with rdBase.BlockLogs():
            status = rdDistGeom.EmbedMolecule(with_h, params)
        if status != 0:
            continue  # geometrically impossible (e.g. an inverted small-ring bridgehead)
        energies = force_field_minimize(with_h)
        plain = _cleared_maps(with_h)
        direct = _smiles_from_3d(plain)
        key = min(direct, _smiles_from_3d(_reflected(plain)))
        fillings.append((energies[0] if energies else 0.0, order, isomer, direct, key))
    if not fillings:
        raise StructureError(f"SMILES {smiles!r}: no stereoisomer could be embedded in 3D")
    lowest = min(f[0] for f in fillings)
    kept = [f for f in fillings if f[0] - lowest <= STRAIN_CUTOFF_KCAL]
    keys = {f[4] for f in kept}
    if len(keys) > 1:
        raise StructureError(
            f"{problem}: {', '.join(names)} (the choices give {len(keys)} diastereomers); {advice}"
        )
    chosen = min(kept, key=lambda f: (f[0], f[1]))[2]
    arbitrary = [i.centeredOn for i in open_] if len({f[3] for f in kept}) > 1 else []
    return chosen, arbitrary


def _embed(mol: Chem.Mol, seed: int, smiles: str) -> Chem.Mol:
    """Return a copy with one ETKDG conformer (stereo tags from 3D), or raise StructureError."""
    copy = embed(mol, seed, f"substrate {smiles!r}")
    Chem.AssignStereochemistryFrom3D(copy)
    return copy


def ring_conformers(mol3d: Chem.Mol, h_index: int, seed: int) -> Chem.Mol:
    """Return a copy with up to RING_CONFORMERS relaxed conformers that keep H's place.

    The hydrogen is isotope-labelled and stereo is read from the first conformer of
    ``mol3d`` before embedding, so every conformer keeps that hydrogen on the same face
    (a fresh embedding may otherwise swap geminal hydrogens). The label stays on the
    returned copy; it disappears with the hydrogen in :func:`alkene_product`.
    """
    copy = Chem.Mol(mol3d, False, mol3d.GetConformers()[0].GetId())
    for atom in copy.GetAtoms():
        atom.SetAtomMapNum(0)
    atom = copy.GetAtomWithIdx(h_index)
    atom.SetIsotope(_LABEL_X + atom.GetIsotope())
    Chem.AssignStereochemistryFrom3D(copy)
    copy.RemoveAllConformers()
    params = rdDistGeom.ETKDGv3()
    params.randomSeed = seed
    with rdBase.BlockLogs():
        ids = rdDistGeom.EmbedMultipleConfs(copy, RING_CONFORMERS, params)
    if not len(ids):
        copy = Chem.Mol(mol3d, False, mol3d.GetConformers()[0].GetId())
    force_field_minimize(copy)
    return copy


# --------------------------------------------------------------------------- products


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
    return _DEGREE_NAMES[min(n_carbon, 4)], conjugated, ring_position, possible, note


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
            f"alkene from removing H atom {h_index} and {leaving.label} is not valid: {err}"
        ) from err
    Chem.AssignStereochemistryFrom3D(product, confId=conf_id)
    smiles = Chem.MolToSmiles(Chem.RemoveHs(product))
    substitution, conjugated, position, possible, note = _describe_alkene(product, new_cb, new_ca)
    note = "; ".join(n for n in (note, geometry_note) if n)
    return Alkene(smiles, substitution, conjugated, position, possible, note, round(achieved, 1))


def zaitsev_ranks(classes: Sequence[BetaHydrogenClass]) -> dict[str, str]:
    """Return class_id -> 'zaitsev', 'hofmann', 'zaitsev+hofmann', 'intermediate' or 'not possible'.

    Ranks by the substitution degree of each class's product among the possible products
    (Zaitsev = most substituted, Hofmann = least substituted); 'zaitsev+hofmann' when all
    share one degree; 'not possible' for anti-Bredt products, which are left out.
    """
    degree = {name: i for i, name in enumerate(_DEGREE_NAMES)}
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


# --------------------------------------------------------------------------- beta hydrogens


def _no_beta_error(mol: Chem.Mol, lg: LeavingGroup, smiles: str) -> StructureError:
    """Return the error explaining why C-alpha has no usable beta hydrogen."""
    ca = mol.GetAtomWithIdx(lg.c_alpha_index)
    reasons = []
    for nbr in ca.GetNeighbors():
        if nbr.GetAtomicNum() == 1 or nbr.GetIdx() in lg.group_atom_indices:
            continue
        if nbr.GetAtomicNum() != 6:
            reasons.append(f"{_name(nbr)} is not carbon")
        elif not _is_sp3_carbon(nbr):
            reasons.append(f"{_name(nbr)} is not sp3")
        else:
            reasons.append(f"{_name(nbr)} carries no hydrogen")
    why = "; ".join(reasons) if reasons else "C-alpha has no carbon neighbour"
    return StructureError(
        f"SMILES {smiles!r}: no beta hydrogen for E2 from {lg.label} on C-alpha C atom "
        f"{lg.c_alpha_index}: {why}"
    )


def _beta_classes(
    mol3d: Chem.Mol, lg: LeavingGroup, achiral: bool, seed: int, smiles: str
) -> tuple[BetaHydrogenClass, ...]:
    """Return the beta-hydrogen classes of the substrate with their anti and syn products."""
    ca = mol3d.GetAtomWithIdx(lg.c_alpha_index)
    group = set(lg.group_atom_indices)
    betas = sorted(
        n.GetIdx()
        for n in ca.GetNeighbors()
        if n.GetIdx() not in group and _is_sp3_carbon(n) and _hydrogens(n)
    )
    if not betas:
        raise _no_beta_error(mol3d, lg, smiles)
    plain = _cleared_maps(mol3d)
    parent: dict[int, int] = {}
    keys: dict[str, list[int]] = {}
    for cb in betas:
        carbon = mol3d.GetAtomWithIdx(cb)
        methyl_key: dict[int, str] = {}  # isotope -> key: a free CH3 rotor is one class
        for h in _hydrogens(carbon):
            parent[h] = cb
            isotope = mol3d.GetAtomWithIdx(h).GetIsotope()
            if _is_methyl(carbon) and isotope in methyl_key:
                key = methyl_key[isotope]
            else:
                key = _isotopomer_key(plain, {h: _LABEL_X}, achiral)
                if _is_methyl(carbon):
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
                class_id=f"C{cb}-H{rep}",
                beta_carbon_index=cb,
                hydrogen_indices=tuple(sorted(members)),
                representative_index=rep,
                degeneracy=len(members),
                anti_product=anti,
                syn_product=syn,
            )
        )
    return tuple(sorted(classes, key=lambda c: (c.beta_carbon_index, c.representative_index)))


# --------------------------------------------------------------------------- entry point


def _no_leaving_group_error(mol_h: Chem.Mol, smiles: str) -> StructureError:
    """Return the error for a molecule without a leaving group on an sp3 carbon."""
    elsewhere = _all_candidates(mol_h)
    if elsewhere:
        lg = elsewhere[0]
        ca = mol_h.GetAtomWithIdx(lg.c_alpha_index)
        kind = "aromatic" if ca.GetIsAromatic() else str(ca.GetHybridization()).lower()
        return StructureError(
            f"SMILES {smiles!r}: no beta hydrogen for E2: the leaving group {lg.label} "
            f"({_name(mol_h.GetAtomWithIdx(lg.leaving_atom_index))}) sits on C atom "
            f"{lg.c_alpha_index}, which is {kind}, not sp3 (aryl/vinyl substrates do not "
            f"undergo E2 at C-alpha)"
        )
    return StructureError(
        f"SMILES {smiles!r}: no leaving group found (looked for F, Cl, Br, I, sulfonates, "
        f"NR3+, SR2+ and OH2+ on an sp3 carbon)"
    )


def check_substrate_topology(smiles: str) -> None:
    """Raise StructureError when a SMILES cannot be an E2 substrate by its graph alone (no 3D; milliseconds).

    The checks of ``perceive_substrate`` that need no embedding: parsing, one fragment, a leaving group on an
    sp3 carbon, atom maps, several topologically distinct leaving groups, a beta hydrogen. What only 3D
    can tell (unspecified stereo that matters, stereo-distinct leaving groups) is left to the full perception.
    """
    mol = parse_smiles(smiles, "substrate", add_hydrogens=False)
    _check_fragments(mol, smiles)
    mol_h = Chem.AddHs(mol)
    candidates = find_leaving_groups(mol_h)
    if not candidates:
        raise _no_leaving_group_error(mol_h, smiles)
    candidates = _apply_maps(mol_h, candidates, smiles)
    ranks = list(Chem.CanonicalRankAtoms(_cleared_maps(mol_h), breakTies=False))
    distinct = {(ranks[c.leaving_atom_index], ranks[c.c_alpha_index]): c for c in candidates}
    if len(distinct) > 1 and len({c.leaving_atom_index for c in candidates}) > 1:
        raise StructureError(
            f"SMILES {smiles!r}: several leaving groups: {'; '.join(_describe(mol_h, c) for c in distinct.values())}; "
            "mark the leaving atom that leaves with an atom-map number, e.g. [Cl:1]"
        )
    lg = candidates[0]
    group = set(lg.group_atom_indices)
    ca = mol_h.GetAtomWithIdx(lg.c_alpha_index)
    if not any(n.GetIdx() not in group and _is_sp3_carbon(n) and _hydrogens(n) for n in ca.GetNeighbors()):
        raise _no_beta_error(mol_h, lg, smiles)


def perceive_substrate(smiles: str, seed: int = 20261202) -> Substrate:
    """Return the perceived E2 substrate (leaving group, beta-H classes, products) of a SMILES.

    ``seed`` fixes the ETKDG embeddings, so the result is reproducible.
    """
    mol = parse_smiles(smiles, "substrate", add_hydrogens=False)
    _check_fragments(mol, smiles)
    formal_charge = Chem.GetFormalCharge(mol)
    mol_h = Chem.AddHs(mol)
    candidates = find_leaving_groups(mol_h)
    if not candidates:
        raise _no_leaving_group_error(mol_h, smiles)
    candidates = _apply_maps(mol_h, candidates, smiles)
    mol, open_centres = _fill_open_stereo(mol, smiles, seed)
    mol3d = _embed(Chem.AddHs(mol), seed, smiles)
    plain = _cleared_maps(mol3d)
    canonical = _smiles_from_3d(plain)
    achiral = _is_achiral(plain)
    notes: list[str] = []
    if open_centres:
        where = ", ".join(_name(mol.GetAtomWithIdx(i)) for i in open_centres)
        message = (
            f"SMILES {smiles!r}: stereocentre {where} is unspecified; it only selects an "
            f"enantiomer, which an achiral base cannot tell apart; continuing with {canonical}"
        )
        notes.append(message)
        warnings.warn(message, StereoWarning, stacklevel=2)
    if len(candidates) > 1:
        candidates = _distinct_candidates(plain, candidates, achiral)
    if len(candidates) > 1:
        if len({c.leaving_atom_index for c in candidates}) == 1:
            advice = (
                "the onium ion can lose any of these alkyl groups: mark C-alpha with an "
                "atom-map number, e.g. [CH2:1]"
            )
        else:
            advice = "mark the leaving atom that leaves with an atom-map number, e.g. [Cl:1]"
        raise StructureError(
            f"SMILES {smiles!r}: several leaving groups: "
            f"{'; '.join(_describe(mol_h, c) for c in candidates)}; {advice}"
        )
    leaving_group = candidates[0]
    classes = _beta_classes(mol3d, leaving_group, achiral, seed, smiles)
    return Substrate(
        smiles=smiles,
        mol=mol3d,
        formal_charge=formal_charge,
        leaving_group=leaving_group,
        beta_classes=classes,
        warnings=tuple(notes),
        canonical_smiles=canonical,
    )
