"""The DFT saddle rung of a job (``dft.saddles: reoptimise``): GFN2-xTB saddles re-optimised and verified at DFT.

For each product (and SN2) the lowest verified GFN2-xTB saddle that counts as a barrier is refined with Sella at
the DFT level, started from its GFN2-xTB verification Hessian, and verified as the GFN2-xTB saddles are
(``drivers.saddles.refine_and_verify``: one imaginary mode from the analytic DFT Hessian, both-way check by the
key distances). Only verified DFT saddles enter the product mix; a saddle that fails is reported on its path.
Progress (gradients and seconds per stage) goes through ``drivers.budget.GradientBudget`` as the paths' does.
No file I/O.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence

import numpy as np
from ase import Atoms

from elimscan.config import RunConfig
from elimscan.drivers.budget import GradientBudget
from elimscan.drivers.relax import relax
from elimscan.drivers.saddles import SaddleResult, refine_and_verify
from elimscan.engines.dft import (DftJobResult, DftPoint, DftSaddle, SaddleCandidate, dft_fractions, prepare_level,
                                  relative_barriers, select_saddles, substitution_share)
from elimscan.engines.contract import PointLog
from elimscan.engines.dftgradients import DftEngine
from elimscan.errors import ElimscanError
from elimscan.results.failures import error_info
from elimscan.results.records import ErrorInfo
from elimscan.versions import installed_version

#: the stages of one DFT saddle, as the progress report names them
STAGE_SEARCH, STAGE_HESSIAN, STAGE_SIDES = "DFT saddle search", "DFT Hessian", "DFT both-way check"
#: method label of a re-optimised saddle
METHOD = "sella at DFT from the GFN2-xTB saddle and its Hessian"


def _shift_A(before: Atoms, after: Atoms | None) -> float | None:
    """Return the largest atom displacement between two geometries in the same frame (Å), None without one."""
    return None if after is None else round(float(np.linalg.norm(after.positions - before.positions, axis=1).max()), 3)


def _distances(reactive, atoms: Atoms | None) -> dict[str, float]:
    """Return the key distances of a geometry (Å, rounded to 0.001), empty without one."""
    return {} if atoms is None else {k: round(v, 3) for k, v in reactive.distances(atoms.positions).items()}


def reoptimise_saddle(cand: SaddleCandidate, reactive, engine: DftEngine, charge: int, multiplicity: int,
                      config: RunConfig, name: str, report: Callable[[str], None] | None = None
                      ) -> tuple[DftSaddle, DftPoint | None]:
    """Return one saddle re-optimised and verified at DFT (energies in hartree) and the DFT point at its start."""
    d = config.dft
    settings = config.paths.model_copy(update={"saddle": config.paths.saddle.model_copy(update={
        "fmax_eV_per_A": d.reoptimise_fmax_eV_per_A, "max_steps": d.reoptimise_max_steps})})
    engine.check_memory(cand.atoms, charge, multiplicity, "gradient", name)  # before hours of work, not during
    if d.reoptimise_hessian == "analytic":
        engine.check_memory(cand.atoms, charge, multiplicity, "hessian", name)
    budget = GradientBudget(engine, None, report)
    metered = budget.metered(engine)
    before, hessian_before, trace_before = engine.stats.misses, engine.hessian_seconds, len(engine.trace)
    start = time.perf_counter()
    hessian = None
    if d.reoptimise_hessian == "analytic":
        def hessian(atoms: Atoms) -> tuple[np.ndarray, int]:
            budget.enter(STAGE_HESSIAN)
            try:
                return engine.hessian(atoms, charge, multiplicity, name=name)
            finally:
                budget.enter(STAGE_SIDES)
    budget.enter(STAGE_SEARCH)
    result: SaddleResult = refine_and_verify(cand.atoms, reactive, metered, charge, multiplicity, settings,
                                             config.optimizer, name=name, method=METHOD,
                                             start_hessian_eV_A2=cand.hessian_eV_A2, hessian=hessian,
                                             side_chunk_steps=d.reoptimise_side_chunk_steps)
    seconds = round(time.perf_counter() - start, 1)
    n_gradients = engine.stats.misses - before
    if report is not None:
        report(f"DFT saddle {'verified' if result.verified else 'not verified'}: {n_gradients} gradients, {seconds:.0f} s")
    first = engine.trace[trace_before][1] if len(engine.trace) > trace_before else None
    saddle = DftSaddle(energy_hartree=result.energy_hartree, verified=result.verified, reason=result.reason,
                       error_type=result.error_type, imaginary_cm1=None if result.imaginary_cm1 is None
                       else round(result.imaginary_cm1, 1), other_imaginary_cm1=result.other_imaginary_cm1,
                       n_gradients=n_gradients, seconds=seconds,
                       hessian_seconds=round(engine.hessian_seconds - hessian_before, 1),
                       largest_shift_A=_shift_A(cand.atoms, result.atoms),
                       gfn2_distances_A=_distances(reactive, cand.atoms),
                       dft_distances_A=_distances(reactive, result.atoms))
    return saddle, first


def _relaxed_reactants(job: str, reactants: Sequence[tuple[str, Atoms, int, int]], engine: DftEngine,
                       config: RunConfig, report: Callable[[str], None] | None) -> tuple[float | None, list[str]]:
    """Return the DFT energy (hartree) of the free reactants relaxed at DFT, or None and the problems."""
    optimizer = config.optimizer.model_copy(update={"fmax_eV_per_A": config.dft.reoptimise_fmax_eV_per_A})
    total, problems = 0.0, []
    for what, atoms, q, mult in reactants:
        if report is not None:
            report(f"DFT relaxation of the free {what}")
        try:
            result = relax(atoms, engine.calculator(q, mult, name=f"job '{job}' free {what}"), (), optimizer)
        except ElimscanError as err:
            problems.append(str(err))
            continue
        if not result.converged:
            problems.append(f"the free {what} did not converge at DFT in {optimizer.max_steps} steps")
        total += result.energy_hartree
    return (None if problems else total), problems


def reoptimise_job(job: str, candidates: Sequence[SaddleCandidate], reactives: dict, charge: int, multiplicity: int,
                   charges: dict[str, int], config: RunConfig, reactants: Sequence[tuple[str, Atoms, int, int]] = (),
                   report: Callable[[str], None] | None = None, parallel_jobs: int = 1,
                   replay: PointLog | None = None) -> DftJobResult:
    """Return the DFT saddle rung of one job: re-optimised, verified saddles, barriers (kcal/mol) and product shares.

    ``reactives`` maps a path key to its key atoms (``drivers.complexes.Reactive`` or ``SubstitutionReactive``);
    gradients and Hessians found in ``replay`` (the job's replay log) are served from it.
    Never raises our errors: a skip, a refusal or a failure is the result's status.
    """
    start = time.perf_counter()
    d = config.dft
    level = prepare_level(job, charges, d, config.method.solvent, parallel_jobs)
    if isinstance(level, DftJobResult):
        return level
    label, version = level.label(), installed_version("pyscf")
    with_hessian = [c for c in candidates if c.hessian_eV_A2 is not None]
    no_saddle = sorted({c.product_smiles for c in candidates} - {c.product_smiles for c in with_hessian})
    chosen = select_saddles(with_hessian, d.reoptimise_per_product)
    base_result = dict(level=label, program_version=version, saddles_mode="reoptimise")
    if not chosen:
        return DftJobResult(status="failed", message=f"job '{job}': no verified GFN2-xTB saddle to re-optimise",
                            seconds=round(time.perf_counter() - start, 2), **base_result)
    engine = DftEngine(level, config.threads.per_process)
    engine.replay = replay
    saddles: dict[tuple[str, str], DftSaddle | ErrorInfo] = {}
    points: dict[tuple[str, str], DftPoint | ErrorInfo] = {}
    for k, cand in enumerate(chosen):
        name = f"job '{job}' {cand.key[0]} {cand.key[1]} DFT saddle"
        if report is not None:
            report(f"{job}: DFT saddle {k + 1}/{len(chosen)} ({cand.key[0]} {cand.key[1]}, {len(cand.atoms)} atoms, "
                   f"{label})")
        path_report = None if report is None else (lambda text, key=cand.key: report(f"{job} {key[0]} {key[1]}: {text}"))
        try:
            saddles[cand.key], first = reoptimise_saddle(cand, reactives[cand.key], engine, charge, multiplicity,
                                                         config, name, path_report)
        except ElimscanError as err:
            saddles[cand.key] = error_info(err)
            continue
        if first is not None:
            points[cand.key] = first
    energies = {key: s.energy_hartree for key, s in saddles.items()
                if isinstance(s, DftSaddle) and s.verified and s.energy_hartree is not None}
    failed = [key for key in saddles if key not in energies]
    common = dict(points=points, saddles=saddles, **base_result)
    if not energies:
        return DftJobResult(status="failed", message=f"job '{job}': no DFT saddle was verified; no DFT product mix",
                            seconds=round(time.perf_counter() - start, 2), **common)
    zero, zero_kind, notes = min(energies.values()), "lowest verified DFT saddle of the job", []
    if d.absolute_barriers and reactants:
        total, problems = _relaxed_reactants(job, reactants, engine, config, report)
        if total is None:
            notes.append("absolute barriers not available (" + "; ".join(problems) + "); barriers are relative")
        else:
            zero, zero_kind = total, "DFT-relaxed free substrate + free base"
    barriers = relative_barriers(energies, zero)
    done = ", ".join(f"{key[0]} {key[1]}" for key in energies)
    message = (f"{len(energies)} of {len(chosen)} saddles re-optimised and verified at {label} ({done}); barriers "
               f"above the {zero_kind}")
    if failed:
        why = "; ".join(f"{key[0]} {key[1]}: " + (s.reason if isinstance(s, DftSaddle) else s.error_message)
                        for key, s in saddles.items() if key in failed)
        message += f"; not verified and left out of the DFT product mix: {why}"
    if no_saddle:
        message += f"; no verified GFN2-xTB saddle to start from for {', '.join(no_saddle)} (left out)"
    return DftJobResult(status="partial" if failed or no_saddle else "ok", message="; ".join([message, *notes]),
                        barriers_kcal_mol=barriers, zero_kind=zero_kind, reference_energy_hartree=zero,
                        fractions=dft_fractions(chosen, barriers, config.method.temperature_K),
                        substitution_fraction=substitution_share(chosen, barriers, config.method.temperature_K),
                        seconds=round(time.perf_counter() - start, 2), **common)
