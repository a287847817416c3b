"""Saddles refined with Sella from a guess and verified, and the guesses of the fallbacks.

A first-order saddle is refined with Sella (order 1, started from a one-sided finite-difference Hessian) and
verified with a central finite-difference Hessian (one imaginary mode) and by relaxing both ways along that
mode (reactant complex on one side, alkene + conjugate acid + X- on the other). The fallback guesses: the
maximum of a base-H distance scan, and the climbing image of a CI-NEB between two end points. The engine is
passed in; no file I/O.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from ase import Atoms

from elimscan.config import OptimizerConfig, PathConfig
from elimscan.errors import ElimscanError
from elimscan.geometry import distance
from elimscan.drivers.complexes import ComplexResult, Reactive
from elimscan.drivers.hessian import Vibrations, finite_difference_hessian, forward_difference_hessian, harmonic_analysis
from elimscan.drivers.relax import HeldDihedral, HeldDistance, relax
from elimscan.units import EV_PER_HARTREE

#: optimizer name of the relaxations off the saddle and along the scans (ASE BFGS, with FixInternals when holding)
BFGS = "bfgs"


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


def _relax_to_side(atoms: Atoms, displacement: np.ndarray, reactive: Reactive, engine, charge: int, multiplicity: int,
                   criteria, optimizer: OptimizerConfig, name: str, chunk_steps: int = 20, max_chunks: int = 15) -> str:
    """Return the side ('reactant', 'product', 'other') reached by relaxing from a displaced saddle.

    Relaxes in chunks and stops as soon as the key distances say reactant or product. (Starting BFGS from the
    saddle's Hessian was tried: the benchmark job's checks took 40 % more gradients, not fewer.)
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


#: a Hessian provider: (atoms) -> (Hessian in eV/Å^2, gradients it cost)
HessianFunction = Callable[[Atoms], tuple[np.ndarray, int]]


def refine_and_verify(guess: Atoms, reactive: Reactive, engine, charge: int, multiplicity: int,
                      settings: PathConfig, optimizer: OptimizerConfig, name: str = "saddle",
                      method: str = "sella", start_hessian_eV_A2: np.ndarray | None = None,
                      hessian: HessianFunction | None = None, side_chunk_steps: int = 20) -> SaddleResult:
    """Return a Sella-refined saddle from ``guess`` with its verification (Hessian and both-way relaxation).

    ``start_hessian_eV_A2`` (a Hessian of the guess, e.g. from a cheaper method) replaces the finite-difference
    start; ``hessian`` replaces the central finite-difference Hessian of the verification (an analytic one);
    ``side_chunk_steps`` is how often the both-way relaxations look at the key distances.
    """
    from sella import Sella  # loads jax: imported only when a saddle is refined

    s = settings.saddle
    work = guess.copy()
    work.calc = engine.calculator(charge, multiplicity, name=name)
    try:
        hessian_function = None
        if start_hessian_eV_A2 is not None:  # handed out again if Sella rebuilds its coordinates
            hessian_function = lambda a: start_hessian_eV_A2  # noqa: E731
        elif s.exact_initial_hessian:  # a finite-difference start (one-sided): far more robust on flat saddles (SN2)
            hessian_function = lambda a: forward_difference_hessian(  # noqa: E731
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
    try:
        hessian_matrix, n_grad = (hessian(atoms) if hessian is not None else finite_difference_hessian(
            atoms, engine.calculator(charge, multiplicity, name=f"{name} hessian"), s.hessian_step_A))
    except ElimscanError as err:
        return SaddleResult(atoms, energy, False, method, None, (), f"saddle Hessian failed: {err.error_type}",
                            error_type="saddle_search_failed")
    vib: Vibrations = harmonic_analysis(hessian_matrix, atoms, n_gradients=n_grad)
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
                            s, optimizer, name, chunk_steps=side_chunk_steps) for sign in (+1, -1)]
    if sorted(sides) != ["product", "reactant"]:
        return SaddleResult(atoms, energy, False, method, float(main), others,
                            f"relaxing both ways along the mode gave {sides[0]} and {sides[1]}, not reactant and product",
                            error_type="saddle_not_connected")
    return SaddleResult(atoms, energy, True, method, float(main), others,
                        "one imaginary mode; connects the reactant complex with the products", mode, hessian_matrix)
