"""Perception of E2 substrates: the leaving group, its beta-hydrogen classes and their alkene products.

Everything here is a pure function of a SMILES string: no file access, no printing. Problems with the
input raise :class:`StructureError`; advisories are returned as strings in ``Substrate.warnings`` (and
also issued as :class:`StereoWarning` through :mod:`warnings`). The parts live in ``leavinggroups``,
``stereo``, ``alkenes`` and ``betahydrogens``; this module puts them together.

Atom indices are 0-based RDKit indices of the molecule with explicit hydrogens
(``Chem.AddHs``): heavy atoms in SMILES order, then hydrogens.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

from rdkit import Chem

from elimscan.errors import StructureError
from elimscan.chem.atomgraph import atom_name, bonded_hydrogens, is_sp3_carbon
from elimscan.chem.betahydrogens import BetaHydrogenClass, find_beta_classes, no_beta_error
from elimscan.chem.leavinggroups import (LeavingGroup, apply_maps, describe_candidate, distinct_candidates,
                                         find_leaving_groups, no_leaving_group_error)
from elimscan.chem.stereo import cleared_maps, fill_open_stereo, is_achiral, smiles_from_3d
from elimscan.chem.structures import embed, parse_smiles

__all__ = ["StereoWarning", "Substrate", "check_substrate_topology", "perceive_substrate"]


class StereoWarning(UserWarning):
    """Issued when an unspecified stereocentre only selects an enantiomer."""


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


def _check_fragments(mol: Chem.Mol, smiles: str) -> None:
    """Raise StructureError for multi-fragment input (a salt with its counter-ion)."""
    fragments = Chem.GetMolFrags(mol)
    if len(fragments) > 1:
        raise StructureError(
            f"SMILES {smiles!r} holds {len(fragments)} separate molecules; give the substrate "
            f"alone, without counter-ions"
        )


def _embed(mol: Chem.Mol, seed: int, smiles: str) -> Chem.Mol:
    """Return a copy with one ETKDG conformer (stereo tags from 3D), or raise StructureError."""
    copy = embed(mol, seed, f"substrate {smiles!r}")
    Chem.AssignStereochemistryFrom3D(copy)
    return copy


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
        raise no_leaving_group_error(mol_h, smiles)
    candidates = apply_maps(mol_h, candidates, smiles)
    ranks = list(Chem.CanonicalRankAtoms(cleared_maps(mol_h), breakTies=False))
    distinct = {(ranks[c.leaving_atom_index], ranks[c.c_alpha_index]): c for c in candidates}
    if len(distinct) > 1 and len({c.leaving_atom_index for c in candidates}) > 1:
        raise StructureError(
            f"SMILES {smiles!r}: several leaving groups: {'; '.join(describe_candidate(mol_h, c) for c in distinct.values())}; "
            "mark the leaving atom that leaves with an atom-map number, e.g. [Cl:1]"
        )
    lg = candidates[0]
    group = set(lg.group_atom_indices)
    ca = mol_h.GetAtomWithIdx(lg.c_alpha_index)
    if not any(n.GetIdx() not in group and is_sp3_carbon(n) and bonded_hydrogens(n) for n in ca.GetNeighbors()):
        raise no_beta_error(mol_h, lg, smiles)


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
        raise no_leaving_group_error(mol_h, smiles)
    candidates = apply_maps(mol_h, candidates, smiles)
    mol, open_centres = fill_open_stereo(mol, smiles, seed)
    mol3d = _embed(Chem.AddHs(mol), seed, smiles)
    plain = cleared_maps(mol3d)
    canonical = smiles_from_3d(plain)
    achiral = is_achiral(plain)
    notes: list[str] = []
    if open_centres:
        where = ", ".join(atom_name(mol.GetAtomWithIdx(i)) for i in open_centres)
        message = (
            f"SMILES {smiles!r}: stereocentre {where} is unspecified; it only selects an "
            f"enantiomer, which an achiral base cannot tell apart; continuing with {canonical}"
        )
        notes.append(message)
        warnings.warn(message, StereoWarning, stacklevel=2)
    if len(candidates) > 1:
        candidates = distinct_candidates(plain, candidates, achiral)
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
            f"{'; '.join(describe_candidate(mol_h, c) for c in candidates)}; {advice}"
        )
    leaving_group = candidates[0]
    classes = find_beta_classes(mol3d, leaving_group, achiral, seed, smiles)
    return Substrate(
        smiles=smiles,
        mol=mol3d,
        formal_charge=formal_charge,
        leaving_group=leaving_group,
        beta_classes=classes,
        warnings=tuple(notes),
        canonical_smiles=canonical,
    )
