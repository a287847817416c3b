"""Stereo of E2 substrates: open stereo filled in or refused, stereo read from 3D, ring conformers.

Pure functions of RDKit molecules (no file access, no printing); problems raise :class:`StructureError`.
Isotopomers labelled with ``LABEL_X``/``LABEL_C`` and compared by canonical SMILES tell apart atoms that
only stereo distinguishes (mirror images merged when the molecule is achiral).
"""

from __future__ import annotations

from rdkit import Chem, rdBase
from rdkit.Chem import rdDistGeom
from rdkit.Chem.EnumerateStereoisomers import EnumerateStereoisomers, StereoEnumerationOptions
from rdkit.Geometry import Point3D

from elimscan.errors import StructureError
from elimscan.chem.atomgraph import atom_name
from elimscan.chem.structures import force_field_minimize

__all__ = [
    "LABEL_C",
    "LABEL_X",
    "cleared_maps",
    "fill_open_stereo",
    "is_achiral",
    "isotopomer_key",
    "reflected",
    "ring_conformers",
    "smiles_from_3d",
]

RING_CONFORMERS = 30  # conformers searched when the C-beta-C-alpha bond is in a ring
MAX_OPEN_STEREO = 4  # more unspecified stereo elements than this are rejected outright
# Stereo fillings this far above the most stable one (MMFF94, kcal/mol) are discarded. A
# heuristic of this module: in/out bridgeheads of small bicycles come out 50+ kcal/mol higher,
# ordinary diastereomers within a few kcal/mol.
STRAIN_CUTOFF_KCAL = 25.0

LABEL_X = 1000  # isotope offsets that mark atoms when isotopomers are compared
LABEL_C = 2000


def cleared_maps(mol: Chem.Mol) -> Chem.Mol:
    """Return a copy of the molecule without atom-map numbers."""
    copy = Chem.Mol(mol)
    for atom in copy.GetAtoms():
        atom.SetAtomMapNum(0)
    return copy


def smiles_from_3d(mol: Chem.Mol, conf_id: int = -1) -> str:
    """Return canonical isomeric SMILES with stereo read from a conformer (H implicit)."""
    copy = Chem.Mol(mol)
    Chem.AssignStereochemistryFrom3D(copy, confId=conf_id)
    return Chem.MolToSmiles(Chem.RemoveHs(copy))


def reflected(mol: Chem.Mol) -> Chem.Mol:
    """Return a copy whose first conformer is mirrored through the yz plane."""
    copy = Chem.Mol(mol, False, mol.GetConformer().GetId())
    conf = copy.GetConformer()
    for i in range(copy.GetNumAtoms()):
        p = conf.GetAtomPosition(i)
        conf.SetAtomPosition(i, Point3D(-p.x, p.y, p.z))
    return copy


def isotopomer_key(mol3d: Chem.Mol, labels: dict[int, int], achiral: bool) -> str:
    """Return a canonical SMILES identifying the labelled isotopomer (mirror-merged if achiral)."""
    copy = Chem.Mol(mol3d)
    for index, offset in labels.items():
        atom = copy.GetAtomWithIdx(index)
        atom.SetIsotope(offset + atom.GetIsotope())
    key = smiles_from_3d(copy)
    if achiral:
        key = min(key, smiles_from_3d(reflected(copy)))
    return key


def is_achiral(mol3d: Chem.Mol) -> bool:
    """Return True when the 3D structure is superimposable on its mirror image (by SMILES)."""
    return smiles_from_3d(mol3d) == smiles_from_3d(reflected(mol3d))


def fill_open_stereo(mol: Chem.Mol, smiles: str, seed: int) -> tuple[Chem.Mol, list[int]]:
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
            begin, end = atom_name(bond.GetBeginAtom()), atom_name(bond.GetEndAtom())
            names.append(f"double bond {begin}={end} (E/Z)")
        else:
            names.append(f"{atom_name(mol.GetAtomWithIdx(info.centeredOn))} (stereocentre)")
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
        plain = cleared_maps(with_h)
        direct = smiles_from_3d(plain)
        key = min(direct, smiles_from_3d(reflected(plain)))
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
    atom.SetIsotope(LABEL_X + atom.GetIsotope())
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
