"""SMILES -> checked RDKit molecule -> seeded 3D embedding -> ase.Atoms (RDKit and ASE only, no I/O)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from ase import Atoms
from rdkit import Chem, RDLogger
from rdkit.Chem import AllChem, Descriptors, rdMolDescriptors

from elimscan.config.molecules import MAX_HEAVY_ATOMS, MAX_SMILES_CHARS
from elimscan.errors import StructureError

#: GFN2-xTB is parametrised for H to Rn (Bannwarth, Ehlert & Grimme, J. Chem. Theory Comput. 2019, 15, 1652).
MAX_ATOMIC_NUMBER_GFN2 = 86


@dataclass(frozen=True)
class BuiltMolecule:
    """A molecule built from SMILES: RDKit mol with explicit H and one conformer, and its ase.Atoms (Å)."""

    smiles: str
    mol: Chem.Mol
    atoms: Atoms
    formal_charge: int
    multiplicity: int


def parse_smiles(smiles: str, what: str = "molecule", add_hydrogens: bool = True) -> Chem.Mol:
    """Return the sanitised RDKit molecule (explicit H unless told not); raise StructureError naming the SMILES.

    Checks: one SMILES word (RDKit would silently drop text after a space), at most MAX_SMILES_CHARS characters and
    MAX_HEAVY_ATOMS heavy atoms, it parses and sanitises, no isotope labels, every element within GFN2-xTB's
    range, no unpaired electrons.
    """
    if not isinstance(smiles, str) or not smiles.strip():
        raise StructureError(f"{what}: empty or non-text SMILES {smiles!r}")
    if len(smiles) > MAX_SMILES_CHARS:
        raise StructureError(f"{what}: the SMILES has {len(smiles):,} characters; at most {MAX_SMILES_CHARS:,} are read")
    words = smiles.split()
    if len(words) > 1:
        raise StructureError(f"{what}: SMILES '{smiles}' holds a space: '{words[0]}' would be read and "
                             f"'{smiles.strip()[len(words[0]):].strip()}' silently dropped; give the SMILES alone "
                             "(the name goes under 'name')")
    RDLogger.DisableLog("rdApp.*")
    try:
        mol = Chem.MolFromSmiles(smiles)
    finally:
        RDLogger.EnableLog("rdApp.*")
    if mol is None:
        raise StructureError(f"{what}: cannot parse SMILES '{smiles}' (check brackets, ring closures and valences)")
    heavy = mol.GetNumHeavyAtoms()
    if heavy > MAX_HEAVY_ATOMS:
        raise StructureError(f"{what} '{smiles[:60]}...': {heavy} heavy atoms; at most {MAX_HEAVY_ATOMS} are computed")
    labelled = [f"{a.GetIsotope()}{a.GetSymbol()} atom {a.GetIdx() + 1}" for a in mol.GetAtoms() if a.GetIsotope()]
    if labelled:
        raise StructureError(f"{what} '{smiles}': isotope labels ({', '.join(labelled)}) are not read: every "
                             "structure is computed with natural masses, and k_H/k_D of each beta hydrogen is "
                             "computed on its own from the unlabelled molecule; give the SMILES without labels")
    if add_hydrogens:
        mol = Chem.AddHs(mol)
    for atom in mol.GetAtoms():
        if atom.GetAtomicNum() > MAX_ATOMIC_NUMBER_GFN2 or atom.GetAtomicNum() < 1:
            raise StructureError(
                f"{what} '{smiles}': element {atom.GetSymbol()} ({atom.GetSymbol()} atom {atom.GetIdx() + 1}) is outside "
                "GFN2-xTB's range H-Rn"
            )
    radicals = Descriptors.NumRadicalElectrons(mol)
    if radicals:
        atoms = [f"{a.GetSymbol()} atom {a.GetIdx() + 1}" for a in mol.GetAtoms() if a.GetNumRadicalElectrons()]
        electrons = sum(a.GetAtomicNum() for a in mol.GetAtoms()) - Chem.GetFormalCharge(mol)
        count = f"{electrons} electrons" + (", an odd count" if electrons % 2 else "")
        raise StructureError(
            f"{what} '{smiles}' has {radicals} unpaired electron(s) on {', '.join(atoms)} ({count}): "
            "elimscan handles closed-shell molecules; add the missing hydrogens or charges"
        )
    return mol


def check_charge(smiles: str, formal_charge: int, given: int | None, what: str = "molecule") -> int:
    """Return the total charge to use: the given one if it matches the structure, else raise StructureError."""
    if given is not None and given != formal_charge:
        raise StructureError(
            f"{what} '{smiles}': charge {given} does not match the structure, whose formal charges add up to {formal_charge}"
        )
    return formal_charge


def force_field_minimize(mol: Chem.Mol) -> list[float]:
    """Minimise every conformer in place with MMFF94 (UFF where MMFF lacks parameters); return energies (kcal/mol)."""
    RDLogger.DisableLog("rdApp.*")
    try:
        if AllChem.MMFFHasAllMoleculeParams(mol):
            results = AllChem.MMFFOptimizeMoleculeConfs(mol, maxIters=2000)
        elif AllChem.UFFHasAllMoleculeParams(mol):
            results = AllChem.UFFOptimizeMoleculeConfs(mol, maxIters=2000)
        else:
            results = []
    finally:
        RDLogger.EnableLog("rdApp.*")
    return [energy for _, energy in results]


def embed(mol: Chem.Mol, seed: int, what: str = "molecule") -> Chem.Mol:
    """Return a copy of ``mol`` with one seeded ETKDG conformer, pre-optimised with MMFF94 (or UFF)."""
    work = Chem.Mol(mol)
    params = AllChem.ETKDGv3()
    params.randomSeed = int(seed)
    RDLogger.DisableLog("rdApp.*")
    try:
        status = AllChem.EmbedMolecule(work, params)
        if status != 0:
            params.useRandomCoords = True
            status = AllChem.EmbedMolecule(work, params)
    finally:
        RDLogger.EnableLog("rdApp.*")
    if status != 0:
        raise StructureError(f"{what} '{Chem.MolToSmiles(Chem.RemoveHs(mol))}': RDKit could not embed a 3D structure")
    force_field_minimize(work)
    return work


def mol_to_atoms(mol: Chem.Mol, conf_id: int = -1) -> Atoms:
    """Return ase.Atoms (positions in Å) for one conformer of an RDKit molecule."""
    conf = mol.GetConformer(conf_id)
    numbers = [a.GetAtomicNum() for a in mol.GetAtoms()]
    return Atoms(numbers=numbers, positions=np.array(conf.GetPositions()))


def build_molecule(smiles: str, seed: int, charge: int | None = None, multiplicity: int = 1,
                   what: str = "molecule") -> BuiltMolecule:
    """Return the checked, embedded molecule for a SMILES with its total charge and multiplicity."""
    mol = parse_smiles(smiles, what)
    formal = Chem.GetFormalCharge(mol)
    total = check_charge(smiles, formal, charge, what)
    n_electrons = sum(a.GetAtomicNum() for a in mol.GetAtoms()) - total
    if (n_electrons + multiplicity - 1) % 2 != 0:
        raise StructureError(
            f"{what} '{smiles}': multiplicity {multiplicity} is impossible with {n_electrons} electrons"
        )
    embedded = embed(mol, seed, what)
    return BuiltMolecule(smiles, embedded, mol_to_atoms(embedded), total, multiplicity)


def formula(mol: Chem.Mol) -> str:
    """Return the Hill formula of a molecule."""
    return rdMolDescriptors.CalcMolFormula(mol)


def _skeleton(mol: Chem.Mol) -> Chem.Mol:
    """Return a copy with every bond single and no charges: connectivity only, for matching."""
    rw = Chem.RWMol()
    for atom in mol.GetAtoms():
        new = Chem.Atom(atom.GetAtomicNum())
        new.SetNoImplicit(True)
        rw.AddAtom(new)
    for bond in mol.GetBonds():
        rw.AddBond(bond.GetBeginAtomIdx(), bond.GetEndAtomIdx(), Chem.BondType.SINGLE)
    skeleton = rw.GetMol()
    skeleton.UpdatePropertyCache(strict=False)
    return skeleton


def atoms_from_geometry(mol: Chem.Mol, text: str, fmt: str, what: str = "substrate") -> Atoms:
    """Return a user's 3D structure (SDF or XYZ text) as ase.Atoms in the atom order of ``mol`` (explicit H, Å).

    The SMILES fixes connectivity and charge: the file must hold the same atoms with the same connectivity
    (from the SDF bonds, or perceived from XYZ distances) and the same stereochemistry.
    """
    from rdkit.Chem import rdDetermineBonds

    RDLogger.DisableLog("rdApp.*")
    try:
        if fmt == "sdf":
            other = Chem.MolFromMolBlock(text, removeHs=False, sanitize=False)
        elif fmt == "xyz":
            other = Chem.MolFromXYZBlock(text)
            if other is not None:
                rdDetermineBonds.DetermineConnectivity(other)
        else:
            raise StructureError(f"{what}: geometry format '{fmt}' is not supported (use .sdf or .xyz)")
    finally:
        RDLogger.EnableLog("rdApp.*")
    if other is None or other.GetNumConformers() == 0:
        raise StructureError(f"{what}: the geometry file cannot be read as {fmt.upper()}")
    ours = sorted(a.GetSymbol() for a in mol.GetAtoms())
    theirs = sorted(a.GetSymbol() for a in other.GetAtoms())
    if ours != theirs:
        raise StructureError(f"{what}: the geometry file holds {len(theirs)} atoms ({rdMolDescriptors.CalcMolFormula(other) if fmt == 'sdf' else ''.join(theirs)}), "
                             f"the SMILES {len(ours)} with hydrogens: they must be the same molecule")
    match = _skeleton(other).GetSubstructMatch(_skeleton(mol))
    if len(match) != mol.GetNumAtoms():
        raise StructureError(f"{what}: the geometry file's connectivity differs from the SMILES")
    positions = np.array(other.GetConformer().GetPositions())[list(match)]
    placed = Chem.Mol(mol)
    placed.RemoveAllConformers()
    conf = Chem.Conformer(mol.GetNumAtoms())
    for i, (x, y, z) in enumerate(positions):
        conf.SetAtomPosition(i, (float(x), float(y), float(z)))
    placed.AddConformer(conf, assignId=True)
    Chem.AssignStereochemistryFrom3D(placed)
    expected = Chem.MolToSmiles(Chem.RemoveHs(_without_maps(mol)))
    found = Chem.MolToSmiles(Chem.RemoveHs(_without_maps(placed)))
    if found != expected:
        raise StructureError(f"{what}: the geometry file is {found}, the SMILES says {expected} (stereochemistry differs)")
    return Atoms(numbers=[a.GetAtomicNum() for a in mol.GetAtoms()], positions=positions)


def _without_maps(mol: Chem.Mol) -> Chem.Mol:
    """Return a copy with atom-map numbers cleared."""
    copy = Chem.Mol(mol)
    for atom in copy.GetAtoms():
        atom.SetAtomMapNum(0)
    return copy
