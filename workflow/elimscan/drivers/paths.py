"""Base-substrate complexes, relaxed E2 paths and verified saddles for one beta hydrogen.

Atom order in a complex: the substrate's atoms, then the base's. The reaction coordinate driven is
q = d(Cβ-H) - d(B-H) + d(Cα-X) (Å), everything else relaxed (BFGS + FixInternals: Sella cannot hold a
combination of distances); the path maximum is the relaxed-path estimate of the saddle. A first-order
saddle is then refined with Sella (order 1) and verified with a finite-difference Hessian (one imaginary
mode) and by relaxing both ways along that mode (reactant complex on one side, alkene + conjugate acid
+ X- on the other). When Sella fails from the path maximum, it starts again from the maximum of a base-H
distance scan, and then from the climbing image of a CI-NEB (reactant complex to relaxed path end); a
saddle that fails verification every time is reported as an unverified estimate. The engine is passed in;
no file I/O.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace

import numpy as np
from ase import Atoms

from elimscan.config import OptimizerConfig, PathConfig
from elimscan.errors import ElimscanError
from elimscan.geometry import dihedral_deg, distance
from elimscan.results.flags import FAILED_ROTATION, UNFINISHED_ABOVE, UNFINISHED_MAXIMUM
from elimscan.drivers.hessian import Vibrations, finite_difference_hessian, harmonic_analysis
from elimscan.drivers.relax import HeldDihedral, HeldDistance, HeldDistanceSum, relax
from elimscan.units import EV_PER_HARTREE

BFGS = "bfgs"


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


@dataclass(frozen=True)
class PathPoint:
    """One point of the relaxed path: driven coordinate (Å), energy (hartree), geometry and key distances."""

    coordinate_A: float
    energy_hartree: float
    atoms: Atoms
    converged: bool
    distances: dict[str, float]


@dataclass(frozen=True)
class SaddleResult:
    """The outcome of saddle refinement and verification."""

    atoms: Atoms | None
    energy_hartree: float | None
    verified: bool
    method: str
    imaginary_cm1: float | None
    other_imaginary_cm1: tuple[float, ...]
    reason: str
    mode: np.ndarray | None = field(default=None, repr=False)
    #: the verification Hessian (eV/Å^2), kept for free energies and isotope effects
    hessian_eV_A2: np.ndarray | None = field(default=None, repr=False, compare=False)
    #: why an unverified saddle failed, machine-readable (None: verified, or not attempted)
    error_type: str | None = None


@dataclass(frozen=True)
class PathResult:
    """One approach (anti or syn) for one beta hydrogen: complex, path, saddle, flags, gradients spent."""

    approach: str
    complex: ComplexResult
    points: tuple[PathPoint, ...]
    maximum_index: int
    saddle: SaddleResult
    flags: tuple[str, ...]
    n_gradients: int
    saddle_gradients: int = 0
    #: path tops (hartree) of every start tried for this approach (backbone conformers x orientations)
    start_tops_hartree: tuple[float, ...] = ()
    #: Boltzmann-combined top of those starts (hartree), when paths.combine is 'boltzmann'
    combined_top_hartree: float | None = None

    @property
    def estimate_hartree(self) -> float:
        """Return the relaxed-path maximum (hartree)."""
        return self.points[self.maximum_index].energy_hartree

    @property
    def top_hartree(self) -> float:
        """Return the combined top of several starts if set, else the verified saddle energy if there is one,
        else the relaxed-path maximum (hartree)."""
        if self.combined_top_hartree is not None:
            return self.combined_top_hartree
        return self.saddle.energy_hartree if self.saddle.verified else self.estimate_hartree


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


def _place_along(substrate: Atoms, tail: np.ndarray, head: np.ndarray, base: Atoms, basic: int, distance_A: float,
                 rotation_deg: float) -> Atoms:
    """Return substrate + base with the basic atom on the tail->head line, ``distance_A`` beyond head.

    The base's own bonds point away from the substrate; ``rotation_deg`` turns it about that line.
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
    return substrate + placed


def place_base(substrate: Atoms, h: int, c_beta: int, base: Atoms, basic: int, distance_A: float,
               rotation_deg: float) -> Atoms:
    """Return substrate + base with the basic atom on the extension of Cβ-H, ``distance_A`` from H.

    The base's own bonds point away from the substrate; ``rotation_deg`` turns it about the Cβ-H axis.
    """
    return _place_along(substrate, substrate.positions[c_beta], substrate.positions[h], base, basic, distance_A,
                        rotation_deg)


def build_complex(substrate: Atoms, base: Atoms, basic: int, reactive: Reactive, dihedral_target_deg: float,
                  engine, charge: int, multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig,
                  name: str = "complex", rank: int = 0) -> ComplexResult:
    """Return the complex of ``rank`` (0: the lowest) over ``settings.base_rotations`` rotations, H...B and dihedral held.

    A rotation whose relaxation fails (SCF, a non-finite backend result, the optimiser) is skipped and noted
    while another rotation succeeds; when all fail, the first failure is raised.
    """
    found, energies, spent, failed = [], [], 0, []
    first_error: ElimscanError | None = None
    for k in range(settings.base_rotations):
        rotation = 360.0 * k / settings.base_rotations
        start = place_base(substrate, reactive.h, reactive.c_beta, base, basic, settings.complex_distance_A, rotation)
        calc = engine.calculator(charge, multiplicity, name=f"{name} rotation {rotation:.0f}")
        held = [HeldDistance((reactive.h, reactive.base), settings.complex_distance_A),
                HeldDihedral(reactive.quad(), dihedral_target_deg)]
        try:
            result = relax(start, calc, held, optimizer)
        except ElimscanError as err:
            first_error = first_error or err
            failed.append(f"{FAILED_ROTATION} {rotation:.0f} deg of the complex failed ({err.error_type}); the other "
                          "rotations were used")
            continue
        spent += result.n_gradients
        energies.append(result.energy_hartree)
        found.append((result.energy_hartree, rotation, result.atoms))
    if not found:
        raise first_error
    energy, rotation, atoms = sorted(found, key=lambda f: f[0])[min(rank, len(found) - 1)]
    return ComplexResult(atoms, energy, rotation, tuple(energies), spent, tuple(failed))


def drive_path(complex_: ComplexResult, reactive: Reactive, engine, charge: int, multiplicity: int,
               settings: PathConfig, optimizer: OptimizerConfig, hold_dihedral_deg: float | None = None,
               name: str = "path", on_point: Callable[[PathPoint], None] | None = None) -> tuple[list[PathPoint], int]:
    """Return the relaxed path (points with the driven coordinate in Å) and the gradients it took."""
    coordinate = reactive.coordinate()
    q0 = coordinate.value(complex_.atoms.positions)
    points = [PathPoint(q0, complex_.energy_hartree, complex_.atoms, True, reactive.distances(complex_.atoms.positions))]
    calc = engine.calculator(charge, multiplicity, name=name)
    bfgs = optimizer.model_copy(update={"name": BFGS})
    current, spent = complex_.atoms, 0
    for k in range(1, settings.points + 1):
        target = q0 + k * settings.step_A
        held = [HeldDistanceSum(coordinate.terms, target)]
        if hold_dihedral_deg is not None:
            held.append(HeldDihedral(reactive.quad(), hold_dihedral_deg))
        result = relax(current, calc, held, bfgs)
        spent += result.n_gradients
        point = PathPoint(target, result.energy_hartree, result.atoms, result.converged, reactive.distances(result.atoms.positions))
        points.append(point)
        if on_point is not None:
            on_point(point)
        current = result.atoms
    return points, spent


def _relax_to_side(atoms: Atoms, displacement: np.ndarray, reactive: Reactive, engine, charge: int, multiplicity: int,
                   criteria, optimizer: OptimizerConfig, name: str, chunk_steps: int = 20, max_chunks: int = 15) -> str:
    """Return the side ('reactant', 'product', 'other') reached by relaxing from a displaced saddle.

    Relaxes in chunks and stops as soon as the key distances say reactant or product.
    """
    atoms.positions = atoms.positions + displacement
    chunk = optimizer.model_copy(update={"name": BFGS, "max_steps": chunk_steps})
    calc = engine.calculator(charge, multiplicity, name=f"{name} side")
    side = "other"
    for _ in range(max_chunks):
        result = relax(atoms, calc, (), chunk)
        atoms = result.atoms
        side = reactive.side(atoms.positions, criteria)
        if side != "other" or result.converged:
            break
    return side


def base_h_scan_maximum(complex_: ComplexResult, reactive: Reactive, engine, charge: int, multiplicity: int,
                        settings: PathConfig, optimizer: OptimizerConfig, hold_dihedral_deg: float | None,
                        name: str = "base-H scan", end_A: float = 1.0, step_A: float = 0.1) -> Atoms | None:
    """Return the highest interior point of a scan that shortens d(base-H) toward ``end_A`` (Å), or None."""
    start = distance(complex_.atoms.positions, reactive.base, reactive.h)
    targets = np.arange(start - step_A, end_A - 1e-9, -step_A)
    calc = engine.calculator(charge, multiplicity, name=name)
    bfgs = optimizer.model_copy(update={"name": BFGS})
    current, frames = complex_.atoms, []
    for target in targets:
        held = [HeldDistance((reactive.base, reactive.h), float(target))]
        if hold_dihedral_deg is not None:
            held.append(HeldDihedral(reactive.quad(), hold_dihedral_deg))
        result = relax(current, calc, held, bfgs)
        frames.append((result.energy_hartree, result.atoms))
        current = result.atoms
    if len(frames) < 3:
        return None
    top = int(np.argmax([e for e, _ in frames]))
    return frames[top][1] if 0 < top < len(frames) - 1 else None


def neb_climbing_image(reactant: Atoms, product: Atoms, engine, charge: int, multiplicity: int,
                       settings: PathConfig, name: str = "neb") -> tuple[Atoms | None, str]:
    """Return the climbing image of a CI-NEB between two end points (None if it has no interior top) and a note.

    The end points are not moved; images start from an IDPP interpolation; FIRE drives the band. The image is
    only a starting guess: the caller refines and verifies it, since a converged band can still climb to a
    false maximum.
    """
    from ase.mep import NEB
    from ase.optimize import FIRE

    s = settings.saddle
    images = [reactant.copy() for _ in range(s.neb_images - 1)] + [product.copy()]
    calc = engine.calculator(charge, multiplicity, name=name)
    for image in images:
        image.calc = calc
    band = NEB(images, climb=True, method="improvedtangent", allow_shared_calculator=True)
    band.interpolate(method="idpp")
    try:
        converged = bool(FIRE(band, logfile=None).run(fmax=s.neb_fmax_eV_per_A, steps=s.neb_max_steps))
        energies = [image.get_potential_energy() for image in images]
    except ElimscanError as err:
        return None, f"CI-NEB failed: {err.error_type}"
    top = int(np.argmax(energies))
    if top in (0, len(images) - 1):
        return None, "CI-NEB has no interior maximum"
    guess = images[top].copy()
    guess.calc = None
    return guess, ("CI-NEB converged" if converged else f"CI-NEB not converged in {s.neb_max_steps} steps") + \
        f"; climbing image {top} of {len(images) - 1}"


def neb_end_points(complex_: ComplexResult, points: list[PathPoint], reactive: Reactive, engine, charge: int,
                   multiplicity: int, optimizer: OptimizerConfig, criteria, name: str = "neb end"
                   ) -> tuple[Atoms, Atoms] | None:
    """Return (reactant complex, freely relaxed path end) when the end relaxes to products, else None."""
    calc = engine.calculator(charge, multiplicity, name=name)
    end = relax(points[-1].atoms, calc, (), optimizer.model_copy(update={"name": BFGS})).atoms
    if reactive.side(end.positions, criteria) != "product":
        return None
    return complex_.atoms, end


def refine_and_verify(guess: Atoms, reactive: Reactive, engine, charge: int, multiplicity: int,
                      settings: PathConfig, optimizer: OptimizerConfig, name: str = "saddle",
                      method: str = "sella") -> SaddleResult:
    """Return a Sella-refined saddle from ``guess`` with its verification (Hessian and both-way relaxation)."""
    from sella import Sella  # loads jax: imported only when a saddle is refined

    s = settings.saddle
    work = guess.copy()
    work.calc = engine.calculator(charge, multiplicity, name=name)
    try:
        hessian_function = None
        if s.exact_initial_hessian:  # a finite-difference start: far more robust on flat saddles (SN2)
            hessian_function = lambda a: finite_difference_hessian(  # noqa: E731
                a, engine.calculator(charge, multiplicity, name=f"{name} start hessian"), s.hessian_step_A)[0]
        opt = Sella(work, order=1, internal=True, logfile=None, hessian_function=hessian_function)
        converged = bool(opt.run(fmax=s.fmax_eV_per_A, steps=s.max_steps))
        energy = work.get_potential_energy() / EV_PER_HARTREE
    except ElimscanError as err:
        return SaddleResult(None, None, False, method, None, (), f"saddle search failed: {err.error_type}",
                            error_type="saddle_search_failed")
    except (RuntimeError, np.linalg.LinAlgError, ValueError) as err:
        return SaddleResult(None, None, False, method, None, (), f"saddle search failed: {err}",
                            error_type="saddle_search_failed")
    atoms = work.copy()
    atoms.calc = None
    if not converged:
        return SaddleResult(atoms, energy, False, method, None, (), f"Sella did not converge in {s.max_steps} steps",
                            error_type="saddle_not_converged")
    hessian, n_grad = finite_difference_hessian(atoms, engine.calculator(charge, multiplicity, name=f"{name} hessian"),
                                                s.hessian_step_A)
    vib: Vibrations = harmonic_analysis(hessian, atoms, n_gradients=n_grad)
    imaginary = sorted(vib.imaginary(0.0), reverse=True)
    main = imaginary[0] if imaginary else None
    others = tuple(round(float(v), 1) for v in imaginary[1:] if v > s.other_imaginary_max_cm1)
    if main is None or main < s.imaginary_min_cm1:
        return SaddleResult(atoms, energy, False, method, None if main is None else float(main), others,
                            "no imaginary mode above the threshold: the search collapsed to a minimum",
                            error_type="saddle_collapsed")
    if others:
        return SaddleResult(atoms, energy, False, method, float(main), others,
                            f"{len(others) + 1} imaginary modes: not a first-order saddle",
                            error_type="saddle_wrong_modes")
    mode = vib.modes[0]
    sides = [_relax_to_side(atoms.copy(), sign * s.displacement_A * mode, reactive, engine, charge, multiplicity,
                            s, optimizer, name) for sign in (+1, -1)]
    if sorted(sides) != ["product", "reactant"]:
        return SaddleResult(atoms, energy, False, method, float(main), others,
                            f"relaxing both ways along the mode gave {sides[0]} and {sides[1]}, not reactant and product",
                            error_type="saddle_not_connected")
    return SaddleResult(atoms, energy, True, method, float(main), others,
                        "one imaginary mode; connects the reactant complex with the products", mode, hessian)




def path_top_index(points: Sequence[PathPoint]) -> int:
    """Return the index of the path's highest point among finished relaxations (all points if none finished).

    An unfinished constrained relaxation can stray into another region (seen: one linear-algebra kernel
    left the last point of a path unfinished 24 kcal/mol above its neighbour), so its energy bounds that
    point from above but is not a point of the path; it is never preferred over a finished point.
    """
    energies = [p.energy_hartree for p in points]
    finished = [k for k, p in enumerate(points) if p.converged]
    if not finished:
        return int(np.argmax(energies))
    return max(finished, key=lambda k: energies[k])


def maximum_flags(points: Sequence[PathPoint], maximum_index: int) -> list[str]:
    """Return warnings about the path maximum itself: an end point, an unfinished relaxation, or an
    unfinished point above it that was not taken as the top."""
    flags = []
    if maximum_index in (0, len(points) - 1):
        flags.append("no interior maximum along the path: the estimate is an end point")
    if not points[maximum_index].converged:
        flags.append(UNFINISHED_MAXIMUM)
    above = [k for k, p in enumerate(points)
             if not p.converged and p.energy_hartree > points[maximum_index].energy_hartree]
    if above and points[maximum_index].converged:
        flags.append(f"{UNFINISHED_ABOVE} (driven point{'s' if len(above) > 1 else ''} "
                     f"{', '.join(str(k) for k in above)} of {len(points) - 1})")
    return flags


def path_flags(points: list[PathPoint], maximum_index: int, reactive: Reactive, other_hydrogens: tuple[int, ...],
               syn: bool) -> tuple[str, ...]:
    """Return warnings about the maximum and about competing outcomes read from the path's end geometry."""
    flags = maximum_flags(points, maximum_index)
    end = points[-1]
    d = end.distances
    if d["base_h_A"] <= 1.15 and d["c_alpha_x_A"] < 2.4:
        flags.append("proton transferred without C-X cleavage (E1cb-like)")
    if d["base_c_alpha_A"] < 2.2 and d["base_h_A"] > 1.3:
        flags.append("base bonded to C-alpha (SN2-like)")
    positions = end.atoms.positions
    if other_hydrogens:
        nearest = min(other_hydrogens, key=lambda i: distance(positions, reactive.base, i))
        if distance(positions, reactive.base, nearest) < distance(positions, reactive.base, reactive.h) - 0.2:
            flags.append(f"the base took another hydrogen (atom {nearest})")
    phi = dihedral_deg(points[maximum_index].atoms.positions, *reactive.quad())
    if not syn and abs(phi) < 120:
        flags.append(f"the path rotated away from anti (H-C-C-X {phi:.0f} deg at the maximum)")
    return tuple(flags)


def saddle_starts(points: Sequence[PathPoint], top: int, count: int) -> list[int]:
    """Return the indices of up to ``count`` interior path points to start Sella from: the top first, then the
    other finished interior points, highest first."""
    interior = range(1, len(points) - 1)
    if top not in interior:
        return []
    others = sorted((k for k in interior if k != top and points[k].converged),
                    key=lambda k: points[k].energy_hartree, reverse=True)
    return [top] + others[:count - 1]


def refine_from_path(points: Sequence[PathPoint], top: int, reactive, engine, charge: int, multiplicity: int,
                     settings: PathConfig, optimizer: OptimizerConfig, name: str) -> SaddleResult:
    """Return the first verified saddle refined from the path's highest interior points (see ``saddle_starts``),
    else the first start's failure with the number of further starts that failed."""
    starts = saddle_starts(points, top, settings.saddle.path_point_starts)
    if not starts:
        return SaddleResult(None, None, False, "none", None, (), "no interior maximum along the path",
                            error_type="no_interior_maximum")
    first = None
    for rank, k in enumerate(starts):
        method = "sella from the path maximum" if rank == 0 else f"sella from driven point {k} (path start {rank + 1})"
        saddle = refine_and_verify(points[k].atoms, reactive, engine, charge, multiplicity, settings, optimizer,
                                   name=f"{name} saddle", method=method)
        if saddle.verified:
            return saddle
        first = saddle if first is None or first.atoms is None else first
    if len(starts) == 1:
        return first
    return replace(first, reason=f"{first.reason}; {len(starts) - 1} more start(s) from the path also failed")


def _keep_first_failure(first: SaddleResult, second: SaddleResult, source: str) -> SaddleResult:
    """Return ``second`` if it is verified or ``first`` has no geometry, else ``first`` with both reasons."""
    if second.verified or first.atoms is None:
        return second
    return SaddleResult(first.atoms, first.energy_hartree, False, first.method, first.imaginary_cm1,
                        first.other_imaginary_cm1, f"{first.reason}; fallback from {source} also failed: "
                        f"{second.reason}", first.mode, error_type=first.error_type)


def _neb_fallback(saddle: SaddleResult, complex_: ComplexResult, points: list[PathPoint], reactive: Reactive, engine,
                  charge: int, multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig, name: str
                  ) -> SaddleResult:
    """Return the saddle refined from a CI-NEB climbing image if verified, else ``saddle`` with the reason added."""
    ends = neb_end_points(complex_, points, reactive, engine, charge, multiplicity, optimizer, settings.saddle,
                          name=f"{name} neb end")
    if ends is None:
        return _keep_first_failure(saddle, SaddleResult(None, None, False, "ci-neb", None, (),
                                                        "the path end did not relax to products",
                                                        error_type="saddle_not_connected"), "a CI-NEB")
    guess, note = neb_climbing_image(*ends, engine, charge, multiplicity, settings, name=f"{name} neb")
    if guess is None:
        return _keep_first_failure(saddle, SaddleResult(None, None, False, "ci-neb", None, (), note,
                                                        error_type="neb_failed"), "a CI-NEB")
    third = refine_and_verify(guess, reactive, engine, charge, multiplicity, settings, optimizer,
                              name=f"{name} saddle", method="sella from the CI-NEB climbing image")
    if third.verified:
        return SaddleResult(third.atoms, third.energy_hartree, True, third.method, third.imaginary_cm1,
                            third.other_imaginary_cm1, f"{third.reason} ({note})", third.mode, third.hessian_eV_A2)
    return _keep_first_failure(saddle, third, f"a CI-NEB climbing image ({note})")


def compute_path(start: Atoms, base: Atoms, basic: int, reactive: Reactive, approach: str, engine, charge: int,
                 multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig, other_hydrogens: tuple[int, ...],
                 name: str = "path", orientation_rank: int = 0) -> PathResult:
    """Return the complex, relaxed path, saddle and flags of one approach ('anti' or 'syn') for one hydrogen."""
    misses0 = engine.stats.misses
    syn = approach == "syn"
    dihedral = settings.syn_dihedral_deg if syn else dihedral_deg(start.positions, *reactive.quad())
    complex_ = build_complex(start, base, basic, reactive, dihedral, engine, charge, multiplicity, settings, optimizer,
                             name=f"{name} complex", rank=orientation_rank)
    points, _ = drive_path(complex_, reactive, engine, charge, multiplicity, settings, optimizer,
                           hold_dihedral_deg=settings.syn_dihedral_deg if syn else None, name=f"{name} path")
    top = path_top_index(points)
    before_saddle = engine.stats.misses
    if not settings.saddle.refine:
        saddle = SaddleResult(None, None, False, "none", None, (), "not refined (paths.saddle.refine is false)")
    else:
        saddle = refine_from_path(points, top, reactive, engine, charge, multiplicity, settings, optimizer, name)
        if not saddle.verified:  # fallback: the maximum of a base-H distance scan as the starting guess
            guess = base_h_scan_maximum(complex_, reactive, engine, charge, multiplicity, settings, optimizer,
                                        settings.syn_dihedral_deg if syn else None, name=f"{name} base-H scan")
            if guess is not None:
                second = refine_and_verify(guess, reactive, engine, charge, multiplicity, settings, optimizer,
                                           name=f"{name} saddle", method="sella from the base-H scan maximum")
                saddle = _keep_first_failure(saddle, second, "the base-H scan maximum")
        if not saddle.verified and settings.saddle.neb_fallback:  # last resort: a climbing-image NEB seeds Sella
            saddle = _neb_fallback(saddle, complex_, points, reactive, engine, charge, multiplicity, settings,
                                   optimizer, name)
    flags = complex_.failed_rotations + path_flags(points, top, reactive, other_hydrogens, syn)
    return PathResult(approach, complex_, tuple(points), top, saddle, flags, engine.stats.misses - misses0,
                      engine.stats.misses - before_saddle)


def place_backside(substrate: Atoms, c_alpha: int, x: int, base: Atoms, basic: int, distance_A: float,
                   rotation_deg: float) -> Atoms:
    """Return substrate + base with the nucleophilic atom behind C-alpha, on the X->C-alpha line, ``distance_A`` from C-alpha."""
    return _place_along(substrate, substrate.positions[x], substrate.positions[c_alpha], base, basic, distance_A,
                        rotation_deg)


def compute_substitution_path(start: Atoms, base: Atoms, basic: int, reactive: SubstitutionReactive, engine,
                              charge: int, multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig,
                              name: str = "substitution") -> PathResult:
    """Return the complex, relaxed path and verified saddle of backside substitution at C-alpha (SN2)."""
    misses0 = engine.stats.misses
    best, energies, spent = None, [], 0
    for k in range(settings.base_rotations):
        rotation = 360.0 * k / settings.base_rotations
        placed = place_backside(start, reactive.c_alpha, reactive.x, base, basic, settings.substitution_distance_A, rotation)
        held = [HeldDistance((reactive.nu, reactive.c_alpha), settings.substitution_distance_A)]
        result = relax(placed, engine.calculator(charge, multiplicity, name=f"{name} complex"), held, optimizer)
        spent += result.n_gradients
        energies.append(result.energy_hartree)
        if best is None or result.energy_hartree < best[1]:
            best = (result.atoms, result.energy_hartree, rotation)
    complex_ = ComplexResult(best[0], best[1], best[2], tuple(energies), spent)
    points, _ = drive_path(complex_, reactive, engine, charge, multiplicity, settings, optimizer, name=f"{name} path")
    top = path_top_index(points)
    before_saddle = engine.stats.misses
    if settings.saddle.refine:
        saddle = refine_from_path(points, top, reactive, engine, charge, multiplicity, settings, optimizer, name)
    else:
        saddle = SaddleResult(None, None, False, "none", None, (), "not refined")
    if settings.saddle.refine and not saddle.verified and settings.saddle.neb_fallback:
        saddle = _neb_fallback(saddle, complex_, points, reactive, engine, charge, multiplicity, settings, optimizer,
                               name)
    flags = tuple(maximum_flags(points, top))
    return PathResult("substitution", complex_, tuple(points), top, saddle, flags, engine.stats.misses - misses0,
                      engine.stats.misses - before_saddle)
