"""The conformational analysis of a substrate: the conformer search and the H-C-C-X dihedral scans."""

from __future__ import annotations

from pydantic import Field

from elimscan.config.frozen import Frozen

#: every count of the conformer search (embeddings, relaxations) is at most this: beyond it the search would
#: run out of memory or time before any path is computed
MAX_CONFORMER_COUNT = 1000


class ConformerConfig(Frozen):
    """Conformer search: seeded ETKDG embedding, pruning, GFN2-xTB relaxation, de-duplication."""

    #: embeddings = base + per rotatable bond + per ring, capped at max_embeddings
    base_embeddings: int = Field(6, ge=1, le=MAX_CONFORMER_COUNT)
    per_rotatable_bond: int = Field(4, ge=0, le=MAX_CONFORMER_COUNT)
    per_ring: int = Field(4, ge=0, le=MAX_CONFORMER_COUNT)
    max_embeddings: int = Field(40, ge=1, le=MAX_CONFORMER_COUNT)
    #: force-field geometries closer than this heavy-atom RMSD (Å) are pruned before xTB
    prune_rmsd_A: float = Field(0.25, gt=0)
    #: after GFN2-xTB: same conformer when both energy and heavy-atom RMSD are this close
    duplicate_energy_kcal_mol: float = Field(0.05, gt=0)
    duplicate_rmsd_A: float = Field(0.25, gt=0)
    #: conformers more than this above the lowest are dropped (kcal/mol)
    energy_window_kcal_mol: float = Field(10.0, gt=0)
    #: build both chair forms of every saturated six-membered ring on purpose
    ring_flip: bool = True
    #: xTB relaxations of conformers at most (the lowest force-field energies first); the forced chair forms
    #: of saturated six-membered rings are always relaxed and count first, plus at least one other start, so
    #: a molecule with many rings can exceed this number
    max_relaxations: int = Field(12, ge=1, le=MAX_CONFORMER_COUNT)


class ScanConfig(Frozen):
    """H-C-C-X dihedral scans."""

    step_deg: float = Field(15.0, gt=0, le=60)
    #: a scan branch stops once a point is this far above the scan's start (kcal/mol)
    energy_cap_kcal_mol: float = Field(25.0, gt=0)
    #: around anti and syn in rings: how far past the target a local scan goes (degrees)
    ring_window_deg: float = Field(30.0, ge=0)
