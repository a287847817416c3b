"""Geminal hydrogens keep their labels across 3D structures of one substrate.

The two hydrogens of a CH2 group are told apart by index only. A fresh embedding (ETKDG keeps stereocentres but
not the places of a CH2's hydrogens) or a user's own structure may put atom i where the perceived structure has
atom j. Perception names each beta hydrogen's product (E or Z, for instance) from its own 3D structure, so a
swapped pair would compute one hydrogen's path under the other's product. The pair's handedness, the sign of the
volume spanned with the two other neighbours, tells the places apart; swapping the two coordinates restores the
labels without moving an atom.

Only the hydrogens' places relative to C-alpha decide a product's E/Z, so the pairs follow C-alpha: where C-alpha
is no stereocentre (3-bromopentane's CHBr between two ethyl groups), an embedding may give the mirror image of
the perceived labelled structure, whose every product is the same; the pairs are then matched to the mirror of
the perceived handedness, not swapped back into a structure that is neither. No I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from rdkit import Chem


@dataclass(frozen=True)
class GeminalPair:
    """Two hydrogens on one four-coordinate atom (0-based indices) and the atom's two other neighbours."""

    centre: int
    first_h: int
    second_h: int
    neighbours: tuple[int, int]


def geminal_pairs(mol: Chem.Mol) -> tuple[GeminalPair, ...]:
    """Return every atom with exactly four neighbours of which exactly two are hydrogens (explicit H in ``mol``)."""
    pairs = []
    for atom in mol.GetAtoms():
        neighbours = [n.GetIdx() for n in atom.GetNeighbors()]
        if len(neighbours) != 4:
            continue
        hydrogens = sorted(i for i in neighbours if mol.GetAtomWithIdx(i).GetAtomicNum() == 1)
        if len(hydrogens) != 2:
            continue
        others = sorted(i for i in neighbours if i not in hydrogens)
        pairs.append(GeminalPair(atom.GetIdx(), hydrogens[0], hydrogens[1], (others[0], others[1])))
    return tuple(pairs)


def handedness(positions: np.ndarray, pair: GeminalPair) -> float:
    """Return the signed volume (Å^3) spanned from the centre by the first hydrogen and the two other neighbours."""
    p = np.asarray(positions, dtype=float)
    origin = p[pair.centre]
    return float(np.linalg.det(np.array([p[pair.first_h] - origin, p[pair.neighbours[0]] - origin,
                                         p[pair.neighbours[1]] - origin])))


def centre_handedness(positions: np.ndarray, centre: int, neighbours: tuple[int, int, int]) -> float:
    """Return the signed volume (Å^3) spanned from ``centre`` by three of its neighbours, in the order given."""
    p = np.asarray(positions, dtype=float)
    return float(np.linalg.det(p[list(neighbours)] - p[centre]))


def anchor_neighbours(mol: Chem.Mol, c_alpha: int) -> tuple[int, int, int] | None:
    """Return three neighbours of C-alpha (lowest indices) that fix its handedness, or None when C-alpha carries
    two hydrogens (its own labels are arbitrary, and such a C-alpha forms no E/Z alkene)."""
    atom = mol.GetAtomWithIdx(c_alpha)
    neighbours = sorted(n.GetIdx() for n in atom.GetNeighbors())
    if len(neighbours) != 4 or sum(mol.GetAtomWithIdx(i).GetAtomicNum() == 1 for i in neighbours) > 1:
        return None
    return neighbours[0], neighbours[1], neighbours[2]


def match_geminal_labels(positions: np.ndarray, reference: np.ndarray, pairs: tuple[GeminalPair, ...],
                         anchor: tuple[int, tuple[int, int, int]] | None = None) -> tuple[np.ndarray, int]:
    """Return positions (Å) whose geminal hydrogens sit where ``reference`` has them, and how many pairs were swapped.

    A pair whose handedness differs in sign from the target has its two hydrogens' coordinates exchanged: the same
    structure, with the labels of ``reference``. The target is the reference's handedness, or its opposite when
    ``anchor`` (C-alpha and three of its neighbours, ``anchor_neighbours``) has the opposite handedness in
    ``positions``: a labelled mirror image keeps every product, so its pairs are matched to the mirror.
    """
    fixed = np.array(positions, dtype=float, copy=True)
    mirror = 1.0
    if anchor is not None and centre_handedness(fixed, *anchor) * centre_handedness(reference, *anchor) < 0:
        mirror = -1.0
    swapped = 0
    for pair in pairs:
        if handedness(fixed, pair) * handedness(reference, pair) * mirror < 0:
            fixed[[pair.first_h, pair.second_h]] = fixed[[pair.second_h, pair.first_h]]
            swapped += 1
    return fixed, swapped
