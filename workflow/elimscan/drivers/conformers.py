"""Conformer ensembles: seeded RDKit ETKDG embedding, force-field pre-optimisation, pruning,
forced chair forms of six-membered rings, GFN2-xTB relaxation with the engine passed in,
de-duplication and an energy window. No file I/O.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
from ase import Atoms
from rdkit import Chem
from rdkit.Chem import AllChem, rdMolDescriptors
from rdkit.Chem import rdMolTransforms as transforms

from elimscan.config import ConformerConfig, OptimizerConfig
from elimscan.errors import ElimscanError, StructureError
from elimscan.geometry import kabsch_rmsd, ring_torsions_deg, six_ring_shape
from elimscan.drivers.relax import relax
from elimscan.chem.geminal import anchor_neighbours, geminal_pairs, match_geminal_labels
from elimscan.chem.structures import mol_to_atoms
from elimscan.units import KCAL_MOL_PER_HARTREE

#: ideal chair torsion used as the target when a chair form is built on purpose (degrees; common practice)
CHAIR_TORSION_DEG = 55.0


@dataclass(frozen=True)
class Conformer:
    """One relaxed conformer: geometry (Å), energy (hartree), where it came from, its ring shapes."""

    conformer_id: int
    atoms: Atoms
    energy_hartree: float
    source: str
    ring_shapes: tuple[str, ...]


@dataclass(frozen=True)
class ConformerEnsemble:
    """Relaxed, de-duplicated conformers sorted by energy, and the failures met on the way."""

    conformers: tuple[Conformer, ...]
    failures: tuple[str, ...] = ()

    @property
    def lowest(self) -> Conformer:
        """Return the conformer of lowest energy."""
        return self.conformers[0]

    def relative_kcal_mol(self, conformer: Conformer) -> float:
        """Return a conformer's energy above the lowest one (kcal/mol)."""
        return (conformer.energy_hartree - self.lowest.energy_hartree) * KCAL_MOL_PER_HARTREE


def saturated_six_rings(mol: Chem.Mol) -> list[tuple[int, ...]]:
    """Return the six-membered rings made only of sp3 atoms, each in ring order."""
    rings = []
    for ring in mol.GetRingInfo().AtomRings():
        if len(ring) == 6 and all(mol.GetAtomWithIdx(i).GetHybridization() == Chem.HybridizationType.SP3 for i in ring):
            rings.append(tuple(ring))
    return rings


def ring_shapes(positions: np.ndarray, rings: Sequence[tuple[int, ...]]) -> tuple[str, ...]:
    """Return the shape ('chair', 'boat', 'twist-boat') of each saturated six-ring."""
    return tuple(six_ring_shape(ring_torsions_deg(positions, ring)) for ring in rings)


def embedding_count(mol: Chem.Mol, settings: ConformerConfig) -> int:
    """Return how many ETKDG embeddings to try, scaled with rotatable bonds and rings."""
    rotors = rdMolDescriptors.CalcNumRotatableBonds(mol)
    rings = rdMolDescriptors.CalcNumRings(mol)
    count = settings.base_embeddings + settings.per_rotatable_bond * rotors + settings.per_ring * rings
    return min(count, settings.max_embeddings)


def _force_field(mol: Chem.Mol, conf_id: int):
    """Return an MMFF94 force field for one conformer, or UFF where MMFF lacks parameters."""
    if AllChem.MMFFHasAllMoleculeParams(mol):
        return AllChem.MMFFGetMoleculeForceField(mol, AllChem.MMFFGetMoleculeProperties(mol), confId=conf_id)
    return AllChem.UFFGetMoleculeForceField(mol, confId=conf_id)


def _add_torsion_restraint(ff, quad: tuple[int, int, int, int], target_deg: float) -> None:
    """Add a stiff torsion restraint to an MMFF or UFF force field."""
    add = getattr(ff, "MMFFAddTorsionConstraint", None) or ff.UFFAddTorsionConstraint
    add(*quad, False, target_deg, target_deg, 1000.0)


def build_chair(mol: Chem.Mol, conf_id: int, ring: tuple[int, ...], sign: int, steps: int = 10) -> int:
    """Return the id of a new conformer in which ``ring`` is a chair of the given torsion sign pattern.

    The ring torsions are walked from their current values to +-55 deg (alternating) in ``steps``
    force-field minimisations with stiff restraints, then released. sign=+1 and -1 are the two chairs.
    """
    new_id = mol.AddConformer(Chem.Conformer(mol.GetConformer(conf_id)), assignId=True)
    conf = mol.GetConformer(new_id)
    quads = [tuple(ring[(k + j) % 6] for j in range(4)) for k in range(6)]
    start = np.array([transforms.GetDihedralDeg(conf, *q) for q in quads])
    target = np.array([sign * CHAIR_TORSION_DEG * (-1) ** k for k in range(6)])
    for fraction in np.linspace(0.0, 1.0, steps + 1)[1:]:
        ff = _force_field(mol, new_id)
        for quad, value in zip(quads, (1 - fraction) * start + fraction * target):
            _add_torsion_restraint(ff, quad, float(value))
        ff.Minimize(maxIts=2000)
    _force_field(mol, new_id).Minimize(maxIts=5000)
    return new_id


def embed_conformers(mol: Chem.Mol, seed: int, settings: ConformerConfig) -> tuple[Chem.Mol, list[tuple[int, str]]]:
    """Return a copy of ``mol`` with force-field conformers and their (id, source), pruned by RMSD."""
    work = Chem.Mol(mol)
    work.RemoveAllConformers()
    params = AllChem.ETKDGv3()
    params.randomSeed = int(seed)
    params.pruneRmsThresh = settings.prune_rmsd_A
    ids = list(AllChem.EmbedMultipleConfs(work, embedding_count(mol, settings), params))
    if not ids:
        params.useRandomCoords = True
        ids = list(AllChem.EmbedMultipleConfs(work, embedding_count(mol, settings), params))
    if not ids:
        raise StructureError(f"RDKit could not embed '{Chem.MolToSmiles(Chem.RemoveHs(mol))}' in 3D")
    for conf_id in ids:
        _force_field(work, conf_id).Minimize(maxIts=2000)
    sources = [(i, "etkdg") for i in ids]
    if settings.ring_flip:
        for ring in saturated_six_rings(work):
            for sign in (1, -1):
                sources.append((build_chair(work, ids[0], ring, sign), f"chair{'+' if sign > 0 else '-'}"))
    return work, _prune(work, sources, settings.prune_rmsd_A)


class HeavyAtomMatcher:
    """Symmetry-aware heavy-atom RMSD: the smallest Kabsch RMSD over the molecule's automorphisms."""

    def __init__(self, mol: Chem.Mol, max_matches: int = 1000):
        heavy = Chem.RemoveHs(mol, sanitize=False)
        self.heavy_indices = [a.GetIdx() for a in mol.GetAtoms() if a.GetAtomicNum() > 1]
        matches = heavy.GetSubstructMatches(heavy, uniquify=False, useChirality=True, maxMatches=max_matches)
        # RemoveHs keeps heavy-atom order, so heavy-molecule index k is self.heavy_indices[k]
        self.permutations = [np.array([self.heavy_indices[k] for k in match]) for match in matches] or [
            np.array(self.heavy_indices)]

    def rmsd(self, positions_a: np.ndarray, positions_b: np.ndarray) -> float:
        """Return the lowest heavy-atom RMSD (Å) of b onto a over all symmetry permutations."""
        reference = np.asarray(positions_a)[self.heavy_indices]
        return min(kabsch_rmsd(reference, np.asarray(positions_b)[perm]) for perm in self.permutations)


def _prune(mol: Chem.Mol, sources: list[tuple[int, str]], threshold_A: float) -> list[tuple[int, str]]:
    """Return conformers ordered by force-field energy, dropping near-duplicates (symmetric heavy-atom RMSD)."""
    matcher = HeavyAtomMatcher(mol)
    energies = {cid: _force_field(mol, cid).CalcEnergy() for cid, _ in sources}
    kept: list[tuple[int, str]] = []
    for cid, source in sorted(sources, key=lambda item: energies[item[0]]):
        pos = mol.GetConformer(cid).GetPositions()
        if all(matcher.rmsd(mol.GetConformer(k).GetPositions(), pos) > threshold_A for k, _ in kept):
            kept.append((cid, source))
    return kept


def build_ensemble(
    mol: Chem.Mol,
    engine,
    charge: int,
    multiplicity: int,
    seed: int,
    settings: ConformerConfig = ConformerConfig(),
    optimizer: OptimizerConfig = OptimizerConfig(),
    extra: Sequence[tuple[Atoms, str]] = (),
    name: str = "substrate",
    on_progress: Callable[[int, int, str], None] | None = None,
    c_alpha: int | None = None,
) -> ConformerEnsemble:
    """Return the GFN2-xTB conformer ensemble of ``mol`` (explicit H) with ``engine`` passed in.

    ``extra`` adds user geometries (same atom order) with a source label. Energies in hartree. When ``mol`` has a
    conformer (the perceived structure), every candidate's geminal hydrogens are given that conformer's labels,
    as seen from ``c_alpha`` (``perceived_labels``): the products perception named for each hydrogen stay its own.
    """
    work, sources = embed_conformers(mol, seed, settings)
    rings = saturated_six_rings(mol)
    chairs = [s for s in sources if s[1].startswith("chair")]
    ordinary = [s for s in sources if not s[1].startswith("chair")]
    chosen = chairs + ordinary[: max(settings.max_relaxations - len(chairs), 1)]
    candidates = [(mol_to_atoms(work, cid), source) for cid, source in chosen] + list(extra)
    if mol.GetNumConformers():
        candidates = [(perceived_labels(atoms, mol, c_alpha), source) for atoms, source in candidates]
    relaxed: list[tuple[Atoms, float, str]] = []
    failures: list[str] = []
    first_error: ElimscanError | None = None
    for k, (atoms, source) in enumerate(candidates):
        if on_progress is not None:
            on_progress(k, len(candidates), f"relaxing conformer {k + 1} of {name} ({source})")
        try:
            result = relax(atoms, engine.calculator(charge, multiplicity, name=f"{name} conformer {k}"), (), optimizer,
                           raise_on_step_limit=True)  # an unfinished relaxation is no conformer (nor a minimum)
        except ElimscanError as err:
            failures.append(f"conformer {k} ({source}): {err}")
            first_error = first_error or err
            continue
        relaxed.append((result.atoms, result.energy_hartree, source))
    if not relaxed:  # keep the kind of the failure (e.g. scf_not_converged) for the record
        raise type(first_error)(f"{name}: none of {len(candidates)} conformers could be relaxed; first failure: {first_error}") from first_error
    return ConformerEnsemble(_deduplicate(relaxed, rings, HeavyAtomMatcher(mol), settings), tuple(failures))


def perceived_labels(atoms: Atoms, mol: Chem.Mol, c_alpha: int | None = None) -> Atoms:
    """Return a copy of ``atoms`` whose geminal hydrogens carry the labels of ``mol``'s first conformer (Å), as
    seen from C-alpha when its index is given (``geminal.match_geminal_labels``)."""
    fixed = atoms.copy()
    neighbours = anchor_neighbours(mol, c_alpha) if c_alpha is not None else None
    fixed.positions, _ = match_geminal_labels(atoms.positions, mol.GetConformer().GetPositions(), geminal_pairs(mol),
                                              None if neighbours is None else (c_alpha, neighbours))
    return fixed


def _deduplicate(relaxed: list[tuple[Atoms, float, str]], rings: Sequence[tuple[int, ...]], matcher: HeavyAtomMatcher,
                 settings: ConformerConfig) -> tuple[Conformer, ...]:
    """Return unique conformers within the energy window, sorted by energy, with ids from 0."""
    relaxed = sorted(relaxed, key=lambda item: item[1])
    lowest = relaxed[0][1]
    unique: list[tuple[Atoms, float, str]] = []
    for atoms, energy, source in relaxed:
        if (energy - lowest) * KCAL_MOL_PER_HARTREE > settings.energy_window_kcal_mol:
            continue
        twin = next((k for k, (a, e, _) in enumerate(unique)
                     if abs(energy - e) * KCAL_MOL_PER_HARTREE < settings.duplicate_energy_kcal_mol
                     and matcher.rmsd(a.positions, atoms.positions) < settings.duplicate_rmsd_A), None)
        if twin is None:
            unique.append((atoms, energy, source))
        elif source not in unique[twin][2].split("+"):  # a duplicate keeps every origin in its label
            a, e, label = unique[twin]
            unique[twin] = (a, e, f"{label}+{source}")
    return tuple(
        Conformer(k, atoms, energy, source, ring_shapes(atoms.positions, rings)) for k, (atoms, energy, source) in enumerate(unique)
    )
