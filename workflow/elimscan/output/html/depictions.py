"""RDKit depictions: the substrate as SVG with its atoms numbered from 1 and its classes labelled, each alkene as a small PNG."""

from __future__ import annotations

import re

from rdkit import Chem
from rdkit.Chem.Draw import rdMolDraw2D

from elimscan.output.plots.paths import has_barriers
from elimscan.results.records import BetaHydrogenRecord, JobRecord

# RDKit's notes are byte strings drawn a character at a time: α and β go in as stand-ins, swapped afterwards
_GREEK_STAND_INS = {"^": "\u03b1", "`": "\u03b2"}

# our own highlight colours (RGB 0-1) for the substrate depiction
_DEPICT_X = (0.67, 0.87, 0.70)
_DEPICT_STATUS = {"anti accessible": (0.70, 0.82, 0.95), "syn only": (0.98, 0.85, 0.62), "blocked": (0.90, 0.72, 0.72)}


def lowest_relative_barrier_kcal_mol(beta: BetaHydrogenRecord) -> float | None:
    """Return the lowest relative barrier (kcal/mol) of a class's computed anti and syn paths, or None."""
    values = [a.relative_barrier_kcal_mol for a in (beta.anti, beta.syn)
              if a.path_status == "ok" and a.relative_barrier_kcal_mol is not None]
    return min(values) if values else None


def _depiction_mol(smiles: str, keep_h: set[int]) -> tuple[Chem.Mol, dict[int, int]] | None:
    """Return the molecule with only the hydrogens in ``keep_h`` explicit, and {record index: drawn index}."""
    mol = Chem.MolFromSmiles(smiles) if smiles else None
    if mol is None or mol.GetNumAtoms() == 0:
        return None
    mol = Chem.AddHs(mol)  # the atom order of results.json: the SMILES atoms, then their hydrogens
    for atom in mol.GetAtoms():
        atom.SetIntProp("record_index", atom.GetIdx())
        atom.SetAtomMapNum(1 if atom.GetIdx() in keep_h else 0)
    params = Chem.RemoveHsParameters()
    params.removeMapped = False
    mol = Chem.RemoveHs(mol, params)
    for atom in mol.GetAtoms():
        atom.SetAtomMapNum(0)
    return mol, {a.GetIntProp("record_index"): a.GetIdx() for a in mol.GetAtoms()}


def substrate_svg(smiles: str, job: JobRecord, width: int = 420, height: int = 300) -> str:
    """Return an SVG depiction of the substrate: every heavy atom numbered from 1, X, Cα and Cβ marked, each class's
    hydrogen labelled with its class and a value in kcal/mol.

    The value is the class's lowest relative barrier when the job has barriers, else its anti penalty. The numbers
    are those of the class labels and messages (RDKit's atom order with hydrogens, from 1).
    """
    reps = {b.representative_index: b for b in job.beta_hydrogens}
    built = _depiction_mol(smiles, set(reps))
    if built is None or job.leaving_group is None:
        return ""
    mol, index = built
    lg = job.leaving_group
    needed = {lg.leaving_atom_index, lg.c_alpha_index, *reps, *(b.beta_carbon_index for b in job.beta_hydrogens)}
    if not needed <= set(index):  # the SMILES does not match the record's atoms
        return ""
    colours: dict[int, tuple[float, float, float]] = {}
    notes = {record: str(record + 1) for record in index}  # every drawn atom carries its number
    notes[lg.leaving_atom_index] = f"X {lg.leaving_atom_index + 1}"
    notes[lg.c_alpha_index] = f"^ {lg.c_alpha_index + 1}"
    barriers = has_barriers(job)
    for b in job.beta_hydrogens:
        notes[b.beta_carbon_index] = f"` {b.beta_carbon_index + 1}"
        value = lowest_relative_barrier_kcal_mol(b) if barriers else b.anti_penalty_kcal_mol
        shown = "-" if value is None else f"{value:.2f}"  # ASCII only (see above)
        notes[b.representative_index] = f"{b.class_id}: {shown}"
        colours[index[b.representative_index]] = _DEPICT_STATUS.get(b.rule_status, (0.85, 0.85, 0.85))
    colours[index[lg.leaving_atom_index]] = _DEPICT_X
    for record_index, note in notes.items():
        if record_index in index:
            mol.GetAtomWithIdx(index[record_index]).SetProp("atomNote", note)
    bond = mol.GetBondBetweenAtoms(index[lg.leaving_atom_index], index[lg.c_alpha_index])
    drawer = rdMolDraw2D.MolDraw2DSVG(width, height, -1, -1, True)  # no FreeType: text stays text
    options = drawer.drawOptions()
    options.annotationFontScale = 0.62
    options.clearBackground = False
    options.padding = 0.12
    rdMolDraw2D.PrepareAndDrawMolecule(drawer, mol, highlightAtoms=list(colours), highlightAtomColors=colours,
                                       highlightBonds=[bond.GetIdx()] if bond else [],
                                       highlightBondColors={bond.GetIdx(): _DEPICT_X} if bond else {})
    drawer.FinishDrawing()
    svg = drawer.GetDrawingText()
    for stand_in, letter in _GREEK_STAND_INS.items():
        svg = re.sub(rf"(<text[^>]*class='note'[^>]*>){re.escape(stand_in)}(</text>)", rf"\g<1>{letter}\g<2>", svg)
    return svg


def product_png(smiles: str, width: int = 220, height: int = 140) -> bytes:
    """Return a small PNG depiction of an alkene (empty bytes when the SMILES does not parse)."""
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return b""
    drawer = rdMolDraw2D.MolDraw2DCairo(width, height)
    drawer.drawOptions().padding = 0.1
    rdMolDraw2D.PrepareAndDrawMolecule(drawer, mol)
    drawer.FinishDrawing()
    return drawer.GetDrawingText()
