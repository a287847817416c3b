"""Contacts between a placed base and the substrate, and the covalent bonds a complex must keep.

Pure numpy with ASE's element tables (covalent radii of Cordero et al., Dalton Trans. 2008; van der Waals radii):
no engine, no file I/O. Lengths in Å; a contact is a distance over the sum of two radii (unitless).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from ase import Atoms
from ase.data import chemical_symbols, covalent_radii, vdw_radii

from elimscan.geometry import covalent_bonds, rotation_matrix


#: covalent bond: closer than this times the sum of the covalent radii (Cordero et al., Dalton Trans. 2008, as ASE
#: carries them); 1.2 is common practice for reading bonds from coordinates
BOND_SCALE = 1.2
#: alkali and alkaline-earth metals: their contacts are ionic, never bonds the complex check should read
_IONIC = frozenset({3, 4, 11, 12, 19, 20, 37, 38, 55, 56})
#: elements whose bond to hydrogen may move inside a base cluster: a proton handed between the alkoxide and its
#: alcohols (or amines) is the same species, not a broken base
_PROTON_HOLDERS = frozenset({7, 8, 16})
#: van der Waals radius (Å) of an element ASE carries none for
_VDW_FALLBACK_A = 2.0
#: turns tried about the basic atom when a placed base clashes: axes on a Fibonacci sphere, angles in steps (deg)
_TURN_AXES = 200
_TURN_STEP_DEG = 10.0


def vdw_radii_A(numbers: np.ndarray) -> np.ndarray:
    """Return the van der Waals radii (Å) of atomic numbers (ASE's table, 2.0 Å where it has none)."""
    radii = np.array([vdw_radii[z] for z in numbers], dtype=float)
    return np.where(np.isfinite(radii), radii, _VDW_FALLBACK_A)


@lru_cache(maxsize=2)
def _turns(step_deg: float = _TURN_STEP_DEG, largest_deg: float = 180.0) -> np.ndarray:
    """Return rotation matrices about the origin (shape k x 3 x 3), the identity first, then by increasing angle
    (``step_deg`` apart, up to ``largest_deg``)."""
    k = np.arange(_TURN_AXES) + 0.5
    polar, azimuth = np.arccos(1 - 2 * k / _TURN_AXES), np.pi * (1 + 5 ** 0.5) * k
    axes = np.stack([np.sin(polar) * np.cos(azimuth), np.sin(polar) * np.sin(azimuth), np.cos(polar)], axis=1)
    angles = np.arange(step_deg, largest_deg + 1e-9, step_deg)
    turns = [np.eye(3)] + [rotation_matrix(axis, np.radians(angle)) for angle in angles for axis in axes]
    return np.array(turns)


def _worst_contacts(substrate: Atoms, sub_radii: np.ndarray, turned: np.ndarray, base_radii: np.ndarray, basic: int,
                    head_index: int, chunk: int = 256) -> np.ndarray:
    """Return, for each turned base (k x n x 3, Å), its closest substrate contact over the summed radii (in chunks of
    ``chunk`` turns, so memory stays a few MB)."""
    sums = sub_radii[:, None] + base_radii[None, :]
    worst = np.empty(len(turned))
    for start in range(0, len(turned), chunk):
        part = turned[start:start + chunk]
        gaps = np.linalg.norm(part[:, None, :, :] - substrate.positions[None, :, None, :], axis=-1)
        ratios = gaps / sums
        ratios[:, head_index, basic] = np.inf
        worst[start:start + chunk] = ratios.min(axis=(1, 2))
    return worst


def clear_turn(substrate: Atoms, base_positions: np.ndarray, base_numbers: np.ndarray, basic: int, head_index: int,
                fraction: float) -> np.ndarray:
    """Return the base's positions (Å) turned about its basic atom by the smallest turn that keeps every base atom
    ``fraction`` x the summed van der Waals radii from every substrate atom (the basic atom's contact with
    ``head_index`` left out); unturned when already clear. When no turn of the coarse set is clear, turns of a few
    degrees about the clearest one are tried, and the clearest of all is kept when none is."""
    sub_radii, base_radii = vdw_radii_A(substrate.numbers), vdw_radii_A(base_numbers)
    pivot = base_positions[basic]

    def turned_by(turns: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        turned = pivot + np.einsum("kij,nj->kni", turns, base_positions - pivot)
        return turned, _worst_contacts(substrate, sub_radii, turned, base_radii, basic, head_index)

    coarse = _turns()
    turned, worst = turned_by(coarse)
    clear = np.flatnonzero(worst >= fraction)
    if clear.size:
        return turned[clear[0]]
    clearest = coarse[int(np.argmax(worst))]
    turned, worst = turned_by(np.einsum("kij,jl->kil", _turns(_TURN_STEP_DEG / 4, _TURN_STEP_DEG / 2), clearest))
    clear = np.flatnonzero(worst >= fraction)
    return turned[clear[0] if clear.size else int(np.argmax(worst))]


def _bonds_of(numbers: np.ndarray, positions: np.ndarray) -> set[tuple[int, int]]:
    """Return the covalent bonds (index pairs, i < j) at ``BOND_SCALE`` x the covalent radii, metal ions left out."""
    covalent = [i for i in range(len(numbers)) if numbers[i] not in _IONIC]
    radii = np.array([covalent_radii[numbers[i]] for i in covalent])
    return {(covalent[i], covalent[j]) for i, j in covalent_bonds(positions[covalent], radii, BOND_SCALE)}


def _broke_made(broken: list, made: list, named, note=lambda pair: "") -> str:
    """Return 'broke A-B, ...; made C-D, ...' for bond pairs, each named by ``named`` (``note`` adds to a made one)."""
    parts = ([f"broke {', '.join(named(p) for p in broken)}"] if broken else []) + \
        ([f"made {', '.join(named(p) + note(p) for p in made)}"] if made else [])
    return "; ".join(parts)


def bonds_changed(substrate: Atoms, complex_atoms: Atoms) -> str | None:
    """Return which covalent bonds of the substrate a complex broke or made (to itself or to the base), or None.

    Atom order in the complex: the substrate's atoms first; bonds at ``BOND_SCALE`` x the covalent radii; metal
    ions (ionic contacts) are left out. Atoms are named by element and 1-based number in the complex.
    """
    n = len(substrate)
    numbers = complex_atoms.numbers
    # a bond among the base's own atoms is base_bonds_changed's business
    found = {(i, j) for i, j in _bonds_of(numbers, complex_atoms.positions) if i < n}
    before = _bonds_of(substrate.numbers, substrate.positions)

    def named(pair: tuple[int, int]) -> str:
        return "-".join(f"{chemical_symbols[numbers[i]]}{i + 1}" for i in pair)

    broken = sorted(before - found)
    made = sorted(found - before)
    if not broken and not made:
        return None
    return _broke_made(broken, made, named, lambda pair: " (to the base)" if pair[1] >= n else "")


def base_bonds_changed(base: Atoms, complex_atoms: Atoms) -> str | None:
    """Return which covalent bonds of the base's own a complex broke or made, or None.

    The base's atoms are the complex's last ``len(base)`` (named by element and 1-based number in the complex). A
    hydrogen moving between the base's O, N or S atoms (a proton handed along the hydrogen bonds of an alkoxide
    and its alcohols) is not counted: the cluster is the same species. Anything else (a C-H or C-O bond broken, two
    alcohols joined, a lone hydrogen) is a base that is no longer itself.
    """
    offset = len(complex_atoms) - len(base)
    numbers = base.numbers

    def polar_h(pair: tuple[int, int]) -> bool:
        elements = {int(numbers[pair[0]]), int(numbers[pair[1]])}
        return 1 in elements and bool(elements & _PROTON_HOLDERS)

    before = _bonds_of(numbers, base.positions)
    after = _bonds_of(numbers, complex_atoms.positions[offset:])
    broken = sorted(p for p in before - after if not polar_h(p))
    made = sorted(p for p in after - before if not polar_h(p))
    if not broken and not made:
        return None

    def named(pair: tuple[int, int]) -> str:
        return "-".join(f"{chemical_symbols[numbers[i]]}{i + offset + 1}" for i in pair)

    return "changed the base's own bonds: " + _broke_made(broken, made, named)
