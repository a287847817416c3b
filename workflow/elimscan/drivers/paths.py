"""Relaxed E2 and SN2 paths for one beta hydrogen, their flags, and the order of the saddle searches.

The reaction coordinate driven is q = d(Cβ-H) - d(B-H) + d(Cα-X) (Å), everything else relaxed (BFGS +
FixInternals: Sella cannot hold a combination of distances); the path maximum is the relaxed-path
estimate of the saddle. The saddle is refined and verified (``saddles``) from the highest path points;
when Sella fails there, it starts again from the maximum of a base-H distance scan, and then from the
climbing image of a CI-NEB (reactant complex to relaxed path end); a saddle that fails verification every
time is reported as an unverified estimate. The engine is passed in; no file I/O.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace

import numpy as np
from ase import Atoms

from elimscan.config import OptimizerConfig, PathConfig
from elimscan.errors import ElimscanError, GradientBudgetError
from elimscan.geometry import dihedral_deg, distance
from elimscan.units import KCAL_MOL_PER_HARTREE
from elimscan.results.flags import (E1CB_LIKE, END_NOT_PRODUCTS, FAILED_ROTATION, NOT_TO_PRODUCTS, OTHER_HYDROGEN, SN2_LIKE,
                                    UNFINISHED_ABOVE, UNFINISHED_MAXIMUM, WRONG_ISOMER, budget_spent_flag,
                                    no_barrier_reason)
from elimscan.drivers.budget import (STAGE_BASE_H, STAGE_COMPLEX, STAGE_END, STAGE_NEB, STAGE_PATH, STAGE_SADDLE,
                                     BudgetSpent, GradientBudget, path_budget)
from elimscan.drivers.complexes import (ComplexResult, Reactive, SubstitutionReactive, build_complex, complex_optimizer,
                                         place_backside, require_bonds_kept)
from elimscan.drivers.relax import HeldDihedral, HeldDistance, HeldDistanceSum, relax
from elimscan.drivers.saddles import BFGS, SaddleResult, base_h_scan_maximum, neb_climbing_image, refine_and_verify


@dataclass(frozen=True)
class PathPoint:
    """One point of the relaxed path: driven coordinate (Å), energy (hartree), geometry and key distances."""

    coordinate_A: float
    energy_hartree: float
    atoms: Atoms
    converged: bool
    distances: dict[str, float]


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
    #: the verified saddles (with their Hessians) of the starts counted in that combination, so that the free
    #: barrier is combined over the same starts (pipeline/energetics); empty when paths.combine is 'lowest'
    start_saddles: tuple[SaddleResult, ...] = ()
    #: the stage during which the path's gradient budget ran out (None: the path finished); a stopped path is
    #: an unfinished estimate and no barrier
    stopped_stage: str | None = None
    #: energy+gradient evaluations of each stage of the path (stage name -> count; stages without one left out),
    #: summed over every start tried
    stage_gradients: dict[str, int] = field(default_factory=dict)

    @property
    def estimate_hartree(self) -> float:
        """Return the relaxed-path maximum (hartree)."""
        return self.points[self.maximum_index].energy_hartree

    @property
    def reaches_products(self) -> bool | None:
        """Return False when the path was shown not to reach its products (or to form another isomer than the
        one it was computed for), None when its gradient budget stopped it before that was known, else True."""
        if NOT_TO_PRODUCTS in self.flags or any(flag.startswith(WRONG_ISOMER) for flag in self.flags):
            return False
        return None if self.stopped_stage is not None else True

    @property
    def counts_as_barrier(self) -> bool:
        """Return True when the path's top may decide a share (the one rule: ``flags.no_barrier_reason``)."""
        return no_barrier_reason(self.reaches_products, self.stopped_stage) is None

    @property
    def top_hartree(self) -> float:
        """Return the combined top of several starts if set, else the verified saddle energy if there is one,
        else the relaxed-path maximum (hartree)."""
        if self.combined_top_hartree is not None:
            return self.combined_top_hartree
        return self.saddle.energy_hartree if self.saddle.verified else self.estimate_hartree


def drive_path(complex_: ComplexResult, reactive: Reactive, engine, charge: int, multiplicity: int,
               settings: PathConfig, optimizer: OptimizerConfig, hold_dihedral_deg: float | None = None,
               name: str = "path", on_point: Callable[[PathPoint], None] | None = None) -> tuple[list[PathPoint], int]:
    """Return the relaxed path (points with the driven coordinate in Å) and the gradients it took.

    With ``settings.loose_fmax_eV_per_A`` every point is first relaxed to that force, then the points within
    ``settings.top_window_kcal_mol`` of the highest are relaxed on to ``optimizer.fmax_eV_per_A`` (``tighten_top``);
    past the top the path may go on several steps at a time (``settings.after_top_stride``). With
    ``settings.carry_hessian`` each point of the first pass starts from the BFGS Hessian the one before it ended with.
    ``on_point`` hears each point of the first pass as it is made.
    """
    coordinate = reactive.coordinate()
    q0 = coordinate.value(complex_.atoms.positions)
    points = [_complex_point(complex_, reactive)]
    calc = engine.calculator(charge, multiplicity, name=name)
    tight = optimizer.model_copy(update={"name": BFGS})
    loose = settings.loose_fmax_eV_per_A
    first = tight if loose is None else tight.model_copy(update={"fmax_eV_per_A": max(loose, tight.fmax_eV_per_A)})
    # by default every point starts from ASE's fresh Hessian: on an all-tight path, handing the previous point's
    # Hessian on took 62 % fewer gradients but let the base settle in another orientation at the top of one demo
    # path (0.43 kcal/mol higher); settings.carry_hessian hands it on in the first pass
    spent, k, hessians = 0, 0, [None]
    while k < settings.points:
        k = min(k + _stride(points, settings), settings.points)
        target = q0 + k * settings.step_A
        result = relax(points[-1].atoms, calc, _path_held(coordinate, target, reactive, hold_dihedral_deg), first,
                       start_hessian=hessians[-1] if settings.carry_hessian else None)
        spent += result.n_gradients
        point = PathPoint(target, result.energy_hartree, result.atoms, result.converged, reactive.distances(result.atoms.positions))
        points.append(point)
        hessians.append(result.hessian_eV_A2)
        if on_point is not None:
            on_point(point)
    if first is not tight:
        spent += tighten_top(points, reactive, calc, settings.top_window_kcal_mol, tight, hold_dihedral_deg, hessians)
    return points, spent


def _stride(points: Sequence[PathPoint], settings: PathConfig) -> int:
    """Return the steps to the next driven point: ``settings.after_top_stride`` once the last point lies more than
    ``settings.top_window_kcal_mol`` below the highest so far, else 1."""
    if settings.after_top_stride == 1 or len(points) < 2:
        return 1
    below_kcal_mol = (max(p.energy_hartree for p in points) - points[-1].energy_hartree) * KCAL_MOL_PER_HARTREE
    return settings.after_top_stride if below_kcal_mol > settings.top_window_kcal_mol else 1


def _path_held(coordinate: HeldDistanceSum, target_A: float, reactive: Reactive, hold_dihedral_deg: float | None
               ) -> list[HeldDistanceSum | HeldDihedral]:
    """Return the held coordinates of one driven point: the combination at ``target_A`` (Å), and the dihedral if held."""
    held: list[HeldDistanceSum | HeldDihedral] = [HeldDistanceSum(coordinate.terms, target_A)]
    if hold_dihedral_deg is not None:
        held.append(HeldDihedral(reactive.quad(), hold_dihedral_deg))
    return held


def tighten_top(points: list[PathPoint], reactive: Reactive, calc, window_kcal_mol: float, tight: OptimizerConfig,
                hold_dihedral_deg: float | None = None, hessians: Sequence[np.ndarray | None] | None = None) -> int:
    """Relax driven points on to ``tight`` (in place, each from its own geometry and, when given, the BFGS Hessian its
    looser relaxation ended with), highest first among those within ``window_kcal_mol`` of the path top, until the
    next lies below the highest tightened one; return the gradients it took.

    Relaxing on only lowers a point, so a loose point below a tightened one cannot be the top: the path top and its
    energy come out as if every point had been relaxed tightly, without relaxing them all.
    """
    top = points[path_top_index(points)].energy_hartree
    coordinate, spent, highest = reactive.coordinate(), 0, None
    order = sorted(range(1, len(points)), key=lambda k: points[k].energy_hartree, reverse=True)
    for k in order:
        if (top - points[k].energy_hartree) * KCAL_MOL_PER_HARTREE > window_kcal_mol:
            break
        if highest is not None and points[k].energy_hartree < highest:
            break
        target = points[k].coordinate_A
        result = relax(points[k].atoms, calc, _path_held(coordinate, target, reactive, hold_dihedral_deg), tight,
                       start_hessian=None if hessians is None else hessians[k])
        spent += result.n_gradients
        points[k] = PathPoint(target, result.energy_hartree, result.atoms, result.converged,
                              reactive.distances(result.atoms.positions))
        if result.converged:
            highest = result.energy_hartree if highest is None else max(highest, result.energy_hartree)
    return spent


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
        flags.append(E1CB_LIKE)
    if d["base_c_alpha_A"] < 2.2 and d["base_h_A"] > 1.3:
        flags.append(SN2_LIKE)
    positions = end.atoms.positions
    if other_hydrogens:
        nearest = min(other_hydrogens, key=lambda i: distance(positions, reactive.base, i))
        if distance(positions, reactive.base, nearest) < distance(positions, reactive.base, reactive.h) - 0.2:
            flags.append(f"{OTHER_HYDROGEN} (atom {nearest})")
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


def neb_end_points(complex_: ComplexResult, points: list[PathPoint], reactive: Reactive, engine, charge: int,
                   multiplicity: int, optimizer: OptimizerConfig, criteria, name: str = "neb end"
                   ) -> tuple[Atoms, Atoms] | None:
    """Return (reactant complex, freely relaxed path end) when the end relaxes to products, else None."""
    calc = engine.calculator(charge, multiplicity, name=name)
    end = relax(points[-1].atoms, calc, (), optimizer.model_copy(update={"name": BFGS})).atoms
    if reactive.side(end.positions, criteria) != "product":
        return None
    return complex_.atoms, end


def _neb_fallback(saddle: SaddleResult, ends: tuple[Atoms, Atoms] | None, reactive: Reactive, engine,
                  charge: int, multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig, name: str
                  ) -> SaddleResult:
    """Return the saddle refined from a CI-NEB climbing image if verified, else ``saddle`` with the reason added."""
    if ends is None:
        return _keep_first_failure(saddle, SaddleResult(None, None, False, "ci-neb", None, (),
                                                        END_NOT_PRODUCTS,
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


def _unverified_end(saddle: SaddleResult, complex_: ComplexResult, points: list[PathPoint], reactive, engine,
                    charge: int, multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig, name: str,
                    budget: GradientBudget) -> tuple[SaddleResult, tuple[str, ...]]:
    """Return (saddle, flags) for a path without a verified saddle: whether its freely relaxed end reaches the
    products (else the NOT_TO_PRODUCTS flag: the top is no barrier), then the CI-NEB fallback when it is on.

    A verified saddle needs neither: its both-way check already connects it to the products.
    """
    if saddle.verified:
        return saddle, ()
    budget.enter(STAGE_END)
    ends = neb_end_points(complex_, points, reactive, engine, charge, multiplicity, optimizer, settings.saddle,
                          name=f"{name} end")
    if settings.saddle.refine and settings.saddle.neb_fallback:  # last resort: a climbing-image NEB seeds Sella
        budget.enter(STAGE_NEB)
        saddle = _neb_fallback(saddle, ends, reactive, engine, charge, multiplicity, settings, optimizer, name)
    return saddle, (() if ends is not None or saddle.verified else (NOT_TO_PRODUCTS,))


def _stopped(approach: str, complex_: ComplexResult, points: list[PathPoint], spent: BudgetSpent,
             budget: GradientBudget, flags: tuple[str, ...], n_gradients: int, saddle_gradients: int) -> PathResult:
    """Return a path stopped by its gradient budget: the points so far, no saddle, and the flag naming the stage."""
    flag = budget_spent_flag(spent.stage, spent.spent, spent.limit, budget.stage_counts())
    saddle = SaddleResult(None, None, False, "none", None, (), f"stopped: {spent}")
    return PathResult(approach, complex_, tuple(points), path_top_index(points), saddle, flags + (flag,), n_gradients,
                      saddle_gradients, stopped_stage=spent.stage, stage_gradients=budget.stage_counts())


def _open_budget(engine, settings: PathConfig, start: Atoms, base: Atoms, on_stage: Callable[[str], None] | None
                 ) -> tuple[GradientBudget, object]:
    """Return the path's gradient budget and the engine its stages use (metered with a limit or a report)."""
    budget = GradientBudget(engine, path_budget(settings.gradient_budget_per_atom, len(start) + len(base)), on_stage)
    return budget, budget.metered(engine)


def _no_complex(name: str, spent: BudgetSpent) -> GradientBudgetError:
    """Return the error of a path whose budget ran out before its complex was relaxed (nothing to estimate)."""
    return GradientBudgetError(f"{name}: {spent}, before the complex was relaxed "
                               "(raise paths.gradient_budget_per_atom)")


def _complex_point(complex_: ComplexResult, reactive) -> PathPoint:
    """Return the relaxed complex as the first point of a driven path (coordinate in Å, energy in hartree)."""
    return PathPoint(reactive.coordinate().value(complex_.atoms.positions), complex_.energy_hartree, complex_.atoms,
                     True, reactive.distances(complex_.atoms.positions))


def compute_path(start: Atoms, base: Atoms, basic: int, reactive: Reactive, approach: str, engine, charge: int,
                 multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig, other_hydrogens: tuple[int, ...],
                 name: str = "path", orientation_rank: int = 0, on_stage: Callable[[str], None] | None = None
                 ) -> PathResult:
    """Return the complex, relaxed path, saddle and flags of one approach ('anti' or 'syn') for one hydrogen.

    A path that spends its gradient budget (``path_budget``) stops there and comes back flagged as an unfinished
    estimate (``stopped_stage``); one stopped before its complex was relaxed raises ``GradientBudgetError``.
    ``on_stage`` hears each stage and its gradients and seconds (``budget.GradientBudget``).
    """
    misses0 = engine.stats.misses
    budget, metered = _open_budget(engine, settings, start, base, on_stage)
    syn = approach == "syn"
    hold = settings.syn_dihedral_deg if syn else None
    dihedral = settings.syn_dihedral_deg if syn else dihedral_deg(start.positions, *reactive.quad())
    budget.enter(STAGE_COMPLEX)
    try:
        complex_ = build_complex(start, base, basic, reactive, dihedral, metered, charge, multiplicity, settings,
                                 optimizer, name=f"{name} complex", rank=orientation_rank)
    except BudgetSpent as spent:
        raise _no_complex(name, spent) from spent
    points = [_complex_point(complex_, reactive)]
    before_saddle = None
    try:
        budget.enter(STAGE_PATH)
        points, _ = drive_path(complex_, reactive, metered, charge, multiplicity, settings, optimizer,
                               hold_dihedral_deg=hold, name=f"{name} path", on_point=points.append)
        top = path_top_index(points)
        before_saddle = engine.stats.misses
        if not settings.saddle.refine:
            saddle = SaddleResult(None, None, False, "none", None, (), "not refined (paths.saddle.refine is false)")
        else:
            budget.enter(STAGE_SADDLE)
            saddle = refine_from_path(points, top, reactive, metered, charge, multiplicity, settings, optimizer, name)
            if not saddle.verified:  # fallback: the maximum of a base-H distance scan as the starting guess
                budget.enter(STAGE_BASE_H)
                guess = base_h_scan_maximum(complex_, reactive, metered, charge, multiplicity, settings, optimizer,
                                            hold, name=f"{name} base-H scan")
                if guess is not None:
                    second = refine_and_verify(guess, reactive, metered, charge, multiplicity, settings, optimizer,
                                               name=f"{name} saddle", method="sella from the base-H scan maximum")
                    saddle = _keep_first_failure(saddle, second, "the base-H scan maximum")
        saddle, to_products = _unverified_end(saddle, complex_, points, reactive, metered, charge, multiplicity,
                                              settings, optimizer, name, budget)
    except BudgetSpent as spent:
        flags = complex_.failed_rotations + tuple(maximum_flags(points, path_top_index(points)))
        return _stopped(approach, complex_, points, spent, budget, flags, engine.stats.misses - misses0,
                        0 if before_saddle is None else engine.stats.misses - before_saddle)
    flags = complex_.failed_rotations + path_flags(points, top, reactive, other_hydrogens, syn) + to_products
    return PathResult(approach, complex_, tuple(points), top, saddle, flags, engine.stats.misses - misses0,
                      engine.stats.misses - before_saddle, stage_gradients=budget.stage_counts())


def compute_substitution_path(start: Atoms, base: Atoms, basic: int, reactive: SubstitutionReactive, engine,
                              charge: int, multiplicity: int, settings: PathConfig, optimizer: OptimizerConfig,
                              name: str = "substitution", on_stage: Callable[[str], None] | None = None,
                              orientation_rank: int = 0) -> PathResult:
    """Return the complex, relaxed path and verified saddle of backside substitution at C-alpha (SN2).

    The path starts from the complex of ``orientation_rank`` (0: the lowest) among ``settings.base_rotations``
    rotations of the nucleophile about the Nu...C-alpha axis, as an E2 path does (``paths.orientation_paths``).
    The gradient budget and ``on_stage`` work as in ``compute_path``.
    """
    misses0 = engine.stats.misses
    budget, metered = _open_budget(engine, settings, start, base, on_stage)
    found, energies, spent_complex, failed, first_error = [], [], 0, [], None
    complex_settings = complex_optimizer(settings, optimizer)
    budget.enter(STAGE_COMPLEX)
    try:
        for k in range(settings.base_rotations):
            rotation = 360.0 * k / settings.base_rotations
            placed = place_backside(start, reactive.c_alpha, reactive.x, base, basic, settings.substitution_distance_A,
                                    rotation, settings.complex_clearance_vdw_fraction)
            held = [HeldDistance((reactive.nu, reactive.c_alpha), settings.substitution_distance_A)]
            try:
                result = relax(placed, metered.calculator(charge, multiplicity,
                                                          name=f"{name} complex rotation {rotation:.0f}"),
                               held, complex_settings)
                require_bonds_kept(start, result.atoms, settings, f"{name} complex rotation {rotation:.0f}",
                                   base)
            except ElimscanError as err:  # as for an E2 complex: a failed rotation is skipped while another succeeds
                first_error = first_error or err
                failed.append(f"{FAILED_ROTATION} {rotation:.0f} deg of the complex failed ({err.error_type}); the "
                              "other rotations were used")
                continue
            spent_complex += result.n_gradients
            energies.append(result.energy_hartree)
            found.append((result.energy_hartree, rotation, result.atoms))
    except BudgetSpent as spent:
        raise _no_complex(name, spent) from spent
    if not found:
        raise first_error
    energy, rotation, atoms = sorted(found, key=lambda f: f[0])[min(orientation_rank, len(found) - 1)]
    complex_ = ComplexResult(atoms, energy, rotation, tuple(energies), spent_complex, tuple(failed))
    points = [_complex_point(complex_, reactive)]
    before_saddle = None
    try:
        budget.enter(STAGE_PATH)
        points, _ = drive_path(complex_, reactive, metered, charge, multiplicity, settings, optimizer,
                               name=f"{name} path", on_point=points.append)
        top = path_top_index(points)
        before_saddle = engine.stats.misses
        if settings.saddle.refine:
            budget.enter(STAGE_SADDLE)
            saddle = refine_from_path(points, top, reactive, metered, charge, multiplicity, settings, optimizer, name)
        else:
            saddle = SaddleResult(None, None, False, "none", None, (), "not refined")
        saddle, to_products = _unverified_end(saddle, complex_, points, reactive, metered, charge, multiplicity,
                                              settings, optimizer, name, budget)
    except BudgetSpent as spent:
        return _stopped("substitution", complex_, points, spent, budget,
                        tuple(maximum_flags(points, path_top_index(points))), engine.stats.misses - misses0,
                        0 if before_saddle is None else engine.stats.misses - before_saddle)
    flags = tuple(maximum_flags(points, top)) + to_products
    return PathResult("substitution", complex_, tuple(points), top, saddle, flags, engine.stats.misses - misses0,
                      engine.stats.misses - before_saddle, stage_gradients=budget.stage_counts())
