"""The substitution (SN2) product of a substrate and a nucleophile, with inversion at C-alpha (RDKit only).

The nucleophile's basic atom takes the leaving atom's place in C-alpha's list of neighbours, so the
tetrahedral tag keeps its meaning; inverting that tag is the Walden inversion of backside attack.
"""

from __future__ import annotations

from rdkit import Chem

from elimscan.chem.perception import Substrate
from elimscan.chem.structures import parse_smiles

_INVERT = {Chem.ChiralType.CHI_TETRAHEDRAL_CW: Chem.ChiralType.CHI_TETRAHEDRAL_CCW,
           Chem.ChiralType.CHI_TETRAHEDRAL_CCW: Chem.ChiralType.CHI_TETRAHEDRAL_CW}


def substitution_product(substrate: Substrate, base_smiles: str, basic_index: int) -> str:
    """Return the canonical isomeric SMILES of the SN2 product (inversion at C-alpha), hydrogens implicit."""
    lg = substrate.leaving_group
    ca, x = lg.c_alpha_index, lg.leaving_atom_index
    rw = Chem.RWMol(substrate.mol)
    rw.RemoveAllConformers()
    nucleophile = parse_smiles(base_smiles, "base")
    basic = nucleophile.GetAtomWithIdx(basic_index)
    # the leaving atom becomes the nucleophile's basic atom: C-alpha's neighbour order is untouched
    new = Chem.Atom(basic.GetAtomicNum())
    new.SetFormalCharge(basic.GetFormalCharge() + 1)  # O- -> O, N -> N+ (ammonium), S- -> S
    new.SetNoImplicit(True)
    rw.ReplaceAtom(x, new)
    mapping = {basic_index: x}
    for atom in nucleophile.GetAtoms():
        if atom.GetIdx() != basic_index:
            copy = Chem.Atom(atom.GetAtomicNum())
            copy.SetFormalCharge(atom.GetFormalCharge())
            copy.SetNoImplicit(True)
            copy.SetChiralTag(atom.GetChiralTag())
            mapping[atom.GetIdx()] = rw.AddAtom(copy)
    for bond in nucleophile.GetBonds():
        rw.AddBond(mapping[bond.GetBeginAtomIdx()], mapping[bond.GetEndAtomIdx()], bond.GetBondType())
    centre = rw.GetAtomWithIdx(ca)
    centre.SetChiralTag(_INVERT.get(centre.GetChiralTag(), centre.GetChiralTag()))
    for index in sorted((i for i in lg.group_atom_indices if i != x), reverse=True):
        rw.RemoveAtom(index)
    for atom in rw.GetAtoms():
        atom.SetAtomMapNum(0)
    product = rw.GetMol()
    Chem.SanitizeMol(product)
    Chem.AssignStereochemistry(product, cleanIt=True, force=True)
    return Chem.MolToSmiles(Chem.RemoveHs(product))
