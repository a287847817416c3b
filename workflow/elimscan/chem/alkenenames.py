"""A plain-words description of an alkene from its SMILES: a name when one is known, E/Z and the substitution pattern.

``alkene_description("C/C=C/C")`` is ``"(E)-2-butene, 1,2-disubstituted"``; an alkene without a known name gets
a generated one, ``"(Z)-1,2-disubstituted alkene, in a ring"``. E/Z is RDKit's CIP label of the double bond
(the new labeller, ``rdCIPLabeler``); the pattern counts the heavy atoms on the two carbons of the C=C. Pure
functions of a SMILES string, RDKit only.
"""

from __future__ import annotations

from rdkit import Chem
from rdkit.Chem import rdCIPLabeler

__all__ = ["KNOWN_ALKENES", "alkene_description", "double_bond_stereo", "substitution_pattern"]

#: names of common alkenes (IUPAC-style names as commonly written, common practice), keyed by canonical SMILES
#: without stereo; E/Z and R/S are put in front from the SMILES itself
KNOWN_ALKENES: dict[str, str] = {
    "C=C": "ethene",
    "C=CC": "propene",
    "C=CCC": "1-butene",
    "CC=CC": "2-butene",
    "C=C(C)C": "2-methylpropene",
    "C=CCCC": "1-pentene",
    "CC=CCC": "2-pentene",
    "C=C(C)CC": "2-methyl-1-butene",
    "CC=C(C)C": "2-methyl-2-butene",
    "C=CC(C)C": "3-methyl-1-butene",
    "C=CCCCC": "1-hexene",
    "CC=CCCC": "2-hexene",
    "CCC=CCC": "3-hexene",
    "CC(C)=C(C)C": "2,3-dimethyl-2-butene",
    "C=C(C)C(C)C": "2,3-dimethyl-1-butene",
    "C=CC(C)(C)C": "3,3-dimethyl-1-butene",
    "C=C(C)CCC": "2-methyl-1-pentene",
    "CC=C(C)CC": "3-methyl-2-pentene",
    "CCC=C(C)C": "2-methyl-2-pentene",
    "C1=CCCC1": "cyclopentene",
    "C1=CCCCC1": "cyclohexene",
    "CC1=CCCCC1": "1-methylcyclohexene",
    "CC1C=CCCC1": "3-methylcyclohexene",
    "C=C1CCCCC1": "methylenecyclohexane",
    "C1=CC2CCC1C2": "bicyclo[2.2.1]hept-2-ene (norbornene)",
    "C=Cc1ccccc1": "styrene",
    "CC=Cc1ccccc1": "1-phenylpropene",
    "C=C(C)c1ccccc1": "2-phenylpropene",
}

#: words of the substitution pattern by the number of heavy atoms on the two alkene carbons
_PATTERN = {0: "unsubstituted", 1: "monosubstituted", 3: "trisubstituted", 4: "tetrasubstituted"}


def _alkene_bonds(mol: Chem.Mol) -> list[Chem.Bond]:
    """Return the non-aromatic C=C double bonds of a molecule."""
    return [b for b in mol.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE and not b.GetIsAromatic()
            and b.GetBeginAtom().GetAtomicNum() == 6 and b.GetEndAtom().GetAtomicNum() == 6]


def substitution_pattern(mol: Chem.Mol, bond: Chem.Bond) -> str:
    """Return the pattern of a C=C: 'monosubstituted', '1,1-disubstituted', '1,2-disubstituted', 'trisubstituted'…"""
    a, b = bond.GetBeginAtom(), bond.GetEndAtom()
    on_a = [n for n in a.GetNeighbors() if n.GetIdx() != b.GetIdx() and n.GetAtomicNum() != 1]
    on_b = [n for n in b.GetNeighbors() if n.GetIdx() != a.GetIdx() and n.GetAtomicNum() != 1]
    count = len(on_a) + len(on_b)
    if count == 2:
        return "1,1-disubstituted" if not on_a or not on_b else "1,2-disubstituted"
    return _PATTERN[count]


def double_bond_stereo(mol: Chem.Mol, bond: Chem.Bond) -> str:
    """Return 'E' or 'Z' for a C=C whose stereo the SMILES gives (CIP), '' when it has none."""
    return bond.GetPropsAsDict().get("_CIPCode", "") if bond.HasProp("_CIPCode") else ""


def _stereo_prefix(mol: Chem.Mol, bonds: list[Chem.Bond]) -> str:
    """Return '(E)-', '(R)-', '(2R,E)-'-like prefix from the CIP labels of the C=C bonds and stereocentres, or ''."""
    labels = [f"{a.GetIdx() + 1}{a.GetProp('_CIPCode')}" for a in mol.GetAtoms() if a.HasProp("_CIPCode")]
    stereo = [double_bond_stereo(mol, b) for b in bonds]
    stereo = [s for s in stereo if s]
    if len(labels) == 1:  # one stereocentre: no locant needed
        labels = [labels[0].lstrip("0123456789")]
    parts = labels + stereo
    return f"({','.join(parts)})-" if parts else ""


def alkene_description(smiles: str) -> str:
    """Return a short plain-words description of an alkene SMILES (name or generated); '' when it does not parse.

    Atom locants in an R/S prefix of several stereocentres number the SMILES atoms from 1.
    """
    mol = Chem.MolFromSmiles(smiles) if smiles else None
    if mol is None:
        return ""
    rdCIPLabeler.AssignCIPLabels(mol)
    bonds = _alkene_bonds(mol)
    if not bonds:
        return "no C=C double bond"
    prefix = _stereo_prefix(mol, bonds)
    flat = Chem.Mol(mol)
    Chem.RemoveStereochemistry(flat)
    name = KNOWN_ALKENES.get(Chem.MolToSmiles(flat))
    patterns = [substitution_pattern(mol, b) for b in bonds]
    if len(bonds) > 1:
        words = f"{len(bonds)} C=C bonds ({', '.join(patterns)})"
        return f"{prefix}{name}, {words}" if name else f"{prefix}{'diene' if len(bonds) == 2 else 'polyene'}, {words}"
    if name:
        return f"{prefix}{name}, {patterns[0]}"
    bond = bonds[0]
    where = []
    if bond.IsInRing():
        where.append("in a ring")
    elif bond.GetBeginAtom().IsInRing() or bond.GetEndAtom().IsInRing():
        where.append("on a ring")
    if any(n.GetIsAromatic() for a in (bond.GetBeginAtom(), bond.GetEndAtom()) for n in a.GetNeighbors()):
        where.append("conjugated with an aromatic ring")
    return f"{prefix}{patterns[0]} alkene" + "".join(f", {w}" for w in where)
