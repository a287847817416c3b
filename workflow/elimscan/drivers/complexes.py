"""The atoms that take part in an E2 or SN2 step, and the base-substrate complexes the paths start from.

Atom order in a complex: the substrate's atoms, then the base's. The basic atom is placed on the extension
of Cβ-H (E2) or behind C-alpha on the X->C-alpha line (SN2), the base turned about that line; each E2
complex is relaxed with H...B and the H-Cβ-Cα-X dihedral held. The engine is passed in; no file I/O.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from ase import Atoms

from elimscan.config import OptimizerConfig, PathConfig
from elimscan.errors import ComplexBondsError, ElimscanError
from elimscan.geometry import distance, rotation_matrix
from elimscan.results.flags import FAILED_ROTATION
from elimscan.units import KCAL_MOL_PER_HARTREE
from elimscan.drivers.contacts import base_bonds_changed, bonds_changed, clear_turn
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


def _align(vector: np.ndarray, target: np.ndarray) -> np.ndarray:
    """Return a rotation matrix that turns ``vector`` onto ``target`` (both any length)."""
    a, b = vector / np.linalg.norm(vector), target / np.linalg.norm(target)
    cross, dot = np.cross(a, b), float(np.dot(a, b))
    if np.linalg.norm(cross) < 1e-8:
        if dot > 0:
            return np.eye(3)
        perpendicular = np.cross(a, [1.0, 0, 0]) if abs(a[0]) < 0.9 else np.cross(a, [0, 1.0, 0])
        return rotation_matrix(perpendicular, np.pi)
    return rotation_matrix(cross, np.arccos(np.clip(dot, -1.0, 1.0)))


def require_bonds_kept(substrate: Atoms, complex_atoms: Atoms, settings: PathConfig, name: str,
                       base: Atoms | None = None) -> None:
    """Raise ComplexBondsError naming the complex when its relaxation changed the substrate's bonds, or (given the
    free ``base``) the base's own bonds, proton moves inside the base aside (each when its setting checks it)."""
    changed = bonds_changed(substrate, complex_atoms) if settings.complex_bond_check else None
    if changed is None and base is not None and settings.complex_base_bond_check:
        changed = base_bonds_changed(base, complex_atoms)
    if changed is not None:
        raise ComplexBondsError(f"{name}: the relaxed complex {changed}: not a reactant complex")


def _place_along(substrate: Atoms, tail: np.ndarray, head: np.ndarray, base: Atoms, basic: int, distance_A: float,
                 rotation_deg: float, head_index: int, clearance: float | None = None) -> Atoms:
    """Return substrate + base with the basic atom on the tail->head line, ``distance_A`` beyond head.

    The base's own bonds point away from the substrate; ``rotation_deg`` turns it about that line. With a
    ``clearance`` (fraction of the summed van der Waals radii) a base that would sit on the substrate is turned
    about its basic atom until it does not (``contacts.clear_turn``; ``head_index`` is the atom the basic atom is placed at).
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
    moved = moved @ rotation_matrix(axis, np.radians(rotation_deg)).T
    placed = base.copy()
    placed.positions = moved + head + distance_A * axis
    if clearance is not None and len(base) > 1:
        placed.positions = clear_turn(substrate, placed.positions, placed.numbers, basic, head_index, clearance)
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
            require_bonds_kept(substrate, result.atoms, settings, f"{name} rotation {rotation:.0f}", base)
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
            require_bonds_kept(substrate, result.atoms, settings, f"{name} rotation {rotation:.0f}", base)
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
