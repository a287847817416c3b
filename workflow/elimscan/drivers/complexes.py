"""The atoms that take part in an E2 or SN2 step, and the base-substrate complexes the paths start from.

Atom order in a complex: the substrate's atoms, then the base's. The basic atom is placed on the extension
of Cβ-H (E2) or behind C-alpha on the X->C-alpha line (SN2), the base turned about that line; each E2
complex is relaxed with H...B and the H-Cβ-Cα-X dihedral held. The engine is passed in; no file I/O.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from ase import Atoms
from ase.data import chemical_symbols, covalent_radii, vdw_radii

from elimscan.config import OptimizerConfig, PathConfig
from elimscan.errors import ComplexBondsError, ElimscanError
from elimscan.geometry import covalent_bonds, distance
from elimscan.results.flags import FAILED_ROTATION
from elimscan.units import KCAL_MOL_PER_HARTREE
from elimscan.drivers.relax import HeldDihedral, HeldDistance, HeldDistanceSum, relax


@dataclass(frozen=True)
class Reactive:
    """Indices (0-based, in the complex) of the atoms that take part: H, Cβ, Cα, X and the basic atom B."""

    h: int
    c_beta: int
    c_alpha: int
    x: int
    base: int

    def quad(self) -> tuple[int, int, int, int]:
        """Return the H-Cβ-Cα-X dihedral indices."""
        return (self.h, self.c_beta, self.c_alpha, self.x)

    def coordinate(self) -> HeldDistanceSum:
        """Return the driven combination d(Cβ-H) - d(B-H) + d(Cα-X) (target left open)."""
        return HeldDistanceSum(((self.c_beta, self.h, 1.0), (self.base, self.h, -1.0), (self.c_alpha, self.x, 1.0)))

    def distances(self, positions: np.ndarray) -> dict[str, float]:
        """Return the bond lengths that tell reactant, saddle and product apart (Å)."""
        return {"c_beta_h_A": distance(positions, self.c_beta, self.h), "base_h_A": distance(positions, self.base, self.h),
                "c_alpha_x_A": distance(positions, self.c_alpha, self.x), "base_c_alpha_A": distance(positions, self.base, self.c_alpha)}

    def side(self, positions: np.ndarray, criteria) -> str:
        """Return 'product' (alkene + conjugate acid + X-), 'reactant' or 'other' from the key distances."""
        d = self.distances(positions)
        if d["c_alpha_x_A"] >= criteria.product_c_x_min_A and d["base_h_A"] <= criteria.product_base_h_max_A:
            return "product"
        if d["base_h_A"] >= criteria.reactant_base_h_min_A and d["c_alpha_x_A"] <= criteria.reactant_c_x_max_A:
            return "reactant"
        return "other"


@dataclass(frozen=True)
class SubstitutionReactive:
    """Indices (0-based, in the complex) for backside substitution: nucleophile Nu, C-alpha and X."""

    nu: int
    c_alpha: int
    x: int

    def coordinate(self) -> HeldDistanceSum:
        """Return the driven combination d(Cα-X) - d(Cα-Nu) (target left open)."""
        return HeldDistanceSum(((self.c_alpha, self.x, 1.0), (self.c_alpha, self.nu, -1.0)))

    def distances(self, positions: np.ndarray) -> dict[str, float]:
        """Return d(Cα-X) and d(Cα-Nu) (Å)."""
        return {"c_alpha_x_A": distance(positions, self.c_alpha, self.x),
                "nu_c_alpha_A": distance(positions, self.nu, self.c_alpha)}

    def side(self, positions: np.ndarray, criteria) -> str:
        """Return 'product' (Nu-Cα bonded, X gone), 'reactant' or 'other' from the key distances."""
        d = self.distances(positions)
        if d["c_alpha_x_A"] >= criteria.product_c_x_min_A and d["nu_c_alpha_A"] <= criteria.substitution_bond_max_A:
            return "product"
        if d["nu_c_alpha_A"] >= criteria.substitution_reactant_min_A and d["c_alpha_x_A"] <= criteria.reactant_c_x_max_A:
            return "reactant"
        return "other"


@dataclass(frozen=True)
class ComplexResult:
    """The best base-substrate complex over the rotations tried, and every rotation's energy (hartree)."""

    atoms: Atoms
    energy_hartree: float
    rotation_deg: float
    energies_hartree: tuple[float, ...]
    n_gradients: int
    #: rotations whose relaxation failed (skipped while another succeeded), one note each
    failed_rotations: tuple[str, ...] = ()


def _rotation_matrix(axis: np.ndarray, angle_rad: float) -> np.ndarray:
    """Return the matrix of a right-handed rotation about a unit axis."""
    axis = axis / np.linalg.norm(axis)
    k = np.array([[0, -axis[2], axis[1]], [axis[2], 0, -axis[0]], [-axis[1], axis[0], 0]])
    return np.eye(3) + np.sin(angle_rad) * k + (1 - np.cos(angle_rad)) * k @ k


def _align(vector: np.ndarray, target: np.ndarray) -> np.ndarray:
    """Return a rotation matrix that turns ``vector`` onto ``target`` (both any length)."""
    a, b = vector / np.linalg.norm(vector), target / np.linalg.norm(target)
    cross, dot = np.cross(a, b), float(np.dot(a, b))
    if np.linalg.norm(cross) < 1e-8:
        if dot > 0:
            return np.eye(3)
        perpendicular = np.cross(a, [1.0, 0, 0]) if abs(a[0]) < 0.9 else np.cross(a, [0, 1.0, 0])
        return _rotation_matrix(perpendicular, np.pi)
    return _rotation_matrix(cross, np.arccos(np.clip(dot, -1.0, 1.0)))


#: covalent bond: closer than this times the sum of the covalent radii (Cordero et al., Dalton Trans. 2008, as ASE
#: carries them); 1.2 is common practice for reading bonds from coordinates
BOND_SCALE = 1.2
#: alkali and alkaline-earth metals: their contacts are ionic, never bonds the complex check should read
_IONIC = frozenset({3, 4, 11, 12, 19, 20, 37, 38, 55, 56})
#: van der Waals radius (Å) of an element ASE carries none for
_VDW_FALLBACK_A = 2.0
#: turns tried about the basic atom when a placed base clashes: axes on a Fibonacci sphere, angles in steps (deg)
_TURN_AXES = 200
_TURN_STEP_DEG = 10.0


def _vdw_radii_A(numbers: np.ndarray) -> np.ndarray:
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
    turns = [np.eye(3)] + [_rotation_matrix(axis, np.radians(angle)) for angle in angles for axis in axes]
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


def _clear_turn(substrate: Atoms, base_positions: np.ndarray, base_numbers: np.ndarray, basic: int, head_index: int,
                fraction: float) -> np.ndarray:
    """Return the base's positions (Å) turned about its basic atom by the smallest turn that keeps every base atom
    ``fraction`` x the summed van der Waals radii from every substrate atom (the basic atom's contact with
    ``head_index`` left out); unturned when already clear. When no turn of the coarse set is clear, turns of a few
    degrees about the clearest one are tried, and the clearest of all is kept when none is."""
    sub_radii, base_radii = _vdw_radii_A(substrate.numbers), _vdw_radii_A(base_numbers)
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


def bonds_changed(substrate: Atoms, complex_atoms: Atoms) -> str | None:
    """Return which covalent bonds of the substrate a complex broke or made (to itself or to the base), or None.

    Atom order in the complex: the substrate's atoms first; bonds at ``BOND_SCALE`` x the covalent radii; metal
    ions (ionic contacts) are left out. Atoms are named by element and 1-based number in the complex.
    """
    n = len(substrate)
    numbers = complex_atoms.numbers
    covalent = [i for i in range(len(complex_atoms)) if numbers[i] not in _IONIC]
    radii = np.array([covalent_radii[numbers[i]] for i in covalent])
    found = {(covalent[i], covalent[j]) for i, j in covalent_bonds(complex_atoms.positions[covalent], radii,
                                                                     BOND_SCALE)}
    found = {(i, j) for i, j in found if i < n}  # a bond among the base's own atoms is the base's business
    sub_covalent = [i for i in range(n) if substrate.numbers[i] not in _IONIC]
    sub_radii = np.array([covalent_radii[substrate.numbers[i]] for i in sub_covalent])
    before = {(sub_covalent[i], sub_covalent[j]) for i, j in covalent_bonds(substrate.positions[sub_covalent],
                                                                              sub_radii, BOND_SCALE)}

    def named(pair: tuple[int, int]) -> str:
        return "-".join(f"{chemical_symbols[numbers[i]]}{i + 1}" for i in pair)

    broken = sorted(before - found)
    made = sorted(found - before)
    if not broken and not made:
        return None
    parts = ([f"broke {', '.join(named(p) for p in broken)}"] if broken else []) + \
        ([f"made {', '.join(named(p) + (' (to the base)' if p[1] >= n else '') for p in made)}"] if made else [])
    return "; ".join(parts)


def require_bonds_kept(substrate: Atoms, complex_atoms: Atoms, settings: PathConfig, name: str) -> None:
    """Raise ComplexBondsError naming the complex when its relaxation changed the substrate's bonds (when checked)."""
    if not settings.complex_bond_check:
        return
    changed = bonds_changed(substrate, complex_atoms)
    if changed is not None:
        raise ComplexBondsError(f"{name}: the relaxed complex {changed}: not a reactant complex")


def _place_along(substrate: Atoms, tail: np.ndarray, head: np.ndarray, base: Atoms, basic: int, distance_A: float,
                 rotation_deg: float, head_index: int | None = None, clearance: float | None = None) -> Atoms:
    """Return substrate + base with the basic atom on the tail->head line, ``distance_A`` beyond head.

    The base's own bonds point away from the substrate; ``rotation_deg`` turns it about that line. With a
    ``clearance`` (fraction of the summed van der Waals radii) a base that would sit on the substrate is turned
    about its basic atom until it does not (``_clear_turn``; ``head_index`` is the atom the basic atom is placed at).
    """
    axis = head - tail
    axis = axis / np.linalg.norm(axis)
    moved = base.positions - base.positions[basic]
    others = [i for i in range(len(base)) if i != basic]
    if others:
        nearest = sorted(others, key=lambda i: np.linalg.norm(moved[i]))[: min(3, len(others))]
        outward = np.mean(moved[nearest], axis=0)
        if np.linalg.norm(outward) > 1e-6:
            moved = moved @ _align(outward, axis).T
    moved = moved @ _rotation_matrix(axis, np.radians(rotation_deg)).T
    placed = base.copy()
    placed.positions = moved + head + distance_A * axis
    if clearance is not None and head_index is not None and len(base) > 1:
        placed.positions = _clear_turn(substrate, placed.positions, placed.numbers, basic, head_index, clearance)
    return substrate + placed


def place_base(substrate: Atoms, h: int, c_beta: int, base: Atoms, basic: int, distance_A: float,
               rotation_deg: float, clearance: float | None = None) -> Atoms:
    """Return substrate + base with the basic atom on the extension of Cβ-H, ``distance_A`` from H.

    The base's own bonds point away from the substrate; ``rotation_deg`` turns it about the Cβ-H axis;
    ``clearance`` as in ``_place_along``.
    """
    return _place_along(substrate, substrate.positions[c_beta], substrate.positions[h], base, basic, distance_A,
                        rotation_deg, h, clearance)


def place_backside(substrate: Atoms, c_alpha: int, x: int, base: Atoms, basic: int, distance_A: float,
                   rotation_deg: float, clearance: float | None = None) -> Atoms:
    """Return substrate + base with the nucleophilic atom behind C-alpha, on the X->C-alpha line, ``distance_A`` from C-alpha."""
    return _place_along(substrate, substrate.positions[x], substrate.positions[c_alpha], base, basic, distance_A,
                        rotation_deg, c_alpha, clearance)


def _relax_rotations(substrate: Atoms, base: Atoms, basic: int, reactive: Reactive, dihedral_target_deg: float,
                     engine, charge: int, multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig,
                     name: str) -> tuple[list[tuple[float, float, Atoms]], list[int], list[str], ElimscanError | None]:
    """Return every rotation relaxed with ``optimizer`` (energy in hartree, rotation in degrees, atoms), the
    gradients of each, the notes of failed rotations and the first failure (None when none failed)."""
    found, spent, failed = [], [], []
    first_error: ElimscanError | None = None
    for k in range(settings.base_rotations):
        rotation = 360.0 * k / settings.base_rotations
        start = place_base(substrate, reactive.h, reactive.c_beta, base, basic, settings.complex_distance_A, rotation,
                           settings.complex_clearance_vdw_fraction)
        calc = engine.calculator(charge, multiplicity, name=f"{name} rotation {rotation:.0f}")
        try:
            result = relax(start, calc, _complex_held(reactive, settings, dihedral_target_deg), optimizer)
            require_bonds_kept(substrate, result.atoms, settings, f"{name} rotation {rotation:.0f}")
        except ElimscanError as err:
            first_error = first_error or err
            failed.append(f"{FAILED_ROTATION} {rotation:.0f} deg of the complex failed ({err.error_type}); the other "
                          "rotations were used")
            continue
        spent.append(result.n_gradients)
        found.append((result.energy_hartree, rotation, result.atoms))
    return found, spent, failed, first_error


def complex_optimizer(settings: PathConfig, optimizer: OptimizerConfig) -> OptimizerConfig:
    """Return the optimiser settings of the complex relaxations: ``optimizer`` under ``settings.complex_optimizer``'s
    name when that is set (force limit in eV/Å, step limit and rigid rotation kept), else ``optimizer`` itself."""
    if settings.complex_optimizer is None or settings.complex_optimizer == optimizer.name:
        return optimizer
    return optimizer.model_copy(update={"name": settings.complex_optimizer})


def _complex_held(reactive: Reactive, settings: PathConfig, dihedral_target_deg: float) -> list:
    """Return the coordinates held in a complex: H...B at complex_distance_A (Å) and H-Cβ-Cα-X at the target (deg)."""
    return [HeldDistance((reactive.h, reactive.base), settings.complex_distance_A),
            HeldDihedral(reactive.quad(), dihedral_target_deg)]


def build_complex(substrate: Atoms, base: Atoms, basic: int, reactive: Reactive, dihedral_target_deg: float,
                  engine, charge: int, multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig,
                  name: str = "complex", rank: int = 0) -> ComplexResult:
    """Return the complex of ``rank`` (0: the lowest) over ``settings.base_rotations`` rotations, H...B and dihedral held.

    A rotation whose relaxation fails (SCF, a non-finite backend result, the optimiser) is skipped and noted
    while another rotation succeeds; when all fail, the first failure is raised. With
    ``settings.complex_screen_fmax_eV_per_A`` every rotation is first relaxed with BFGS to that force only, ranked
    on those energies (``energies_hartree`` are then the screened ones), and only the chosen rotation is relaxed on
    with ``optimizer`` (the next-ranked one when that fails). ``settings.complex_optimizer``, when set, replaces
    ``optimizer``'s name (``complex_optimizer``).
    """
    optimizer = complex_optimizer(settings, optimizer)
    screen = settings.complex_screen_fmax_eV_per_A
    if screen is None:
        found, spent, failed, first_error = _relax_rotations(substrate, base, basic, reactive, dihedral_target_deg,
                                                             engine, charge, multiplicity, settings, optimizer, name)
        if not found:
            raise first_error
        energy, rotation, atoms = sorted(found, key=lambda f: f[0])[min(rank, len(found) - 1)]
        return ComplexResult(atoms, energy, rotation, tuple(f[0] for f in found), sum(spent), tuple(failed))
    loose = OptimizerConfig(name="bfgs", fmax_eV_per_A=screen, max_steps=optimizer.max_steps,
                            rigid_rotation_above_deg=optimizer.rigid_rotation_above_deg)
    found, spent, failed, first_error = _relax_rotations(substrate, base, basic, reactive, dihedral_target_deg,
                                                         engine, charge, multiplicity, settings, loose,
                                                         f"{name} screen")
    if not found:
        raise first_error
    ranked = sorted(found, key=lambda f: f[0])
    window_hartree = settings.complex_screen_window_kcal_mol / KCAL_MOL_PER_HARTREE
    within = max(min(rank, len(ranked) - 1) + 1, sum(1 for f in ranked if f[0] - ranked[0][0] <= window_hartree))
    total, finished = sum(spent), []
    # the rotations within the window (at least rank + 1 of them) are relaxed on; when all of those fail, the
    # next-ranked ones are tried one at a time
    for index, (_, rotation, screened) in enumerate(ranked):
        if index >= within and finished:
            break
        calc = engine.calculator(charge, multiplicity, name=f"{name} rotation {rotation:.0f}")
        try:
            result = relax(screened, calc, _complex_held(reactive, settings, dihedral_target_deg), optimizer)
            require_bonds_kept(substrate, result.atoms, settings, f"{name} rotation {rotation:.0f}")
        except ElimscanError as err:
            first_error = first_error or err
            failed.append(f"{FAILED_ROTATION} {rotation:.0f} deg of the complex failed ({err.error_type}); the other "
                          "rotations were used")
            continue
        total += result.n_gradients
        finished.append((result.energy_hartree, rotation, result.atoms))
    if not finished:
        raise first_error
    energy, rotation, atoms = sorted(finished, key=lambda f: f[0])[min(rank, len(finished) - 1)]
    return ComplexResult(atoms, energy, rotation, tuple(f[0] for f in found), total, tuple(failed))
