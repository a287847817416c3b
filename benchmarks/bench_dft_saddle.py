"""DFT saddle re-optimisation benchmark (not part of ``make test``): the cost of ``dft.saddles: reoptimise`` on one
E2 saddle found at GFN2-xTB, and how far the saddle and its barrier move.

Reads an elimscan job folder (``saddle-<path>.xyz``, ``base-*.xyz``, ``conformers.sdf``), then at the DFT level
(default B3LYP-D3(BJ)/def2-SVPD, RI, IEF-PCM of ``--solvent``), one thread:
1. single points of the GFN2-xTB free substrate, free base and saddle (the single-point barrier);
2. relaxations of the free substrate and base (the DFT zero);
3. the saddle re-optimised with Sella from the GFN2-xTB Hessian, its analytic Hessian and the both-way check
   (``drivers.saddles.refine_and_verify``), with gradients and seconds as it goes.
``--gradient-only`` stops after one DFT energy + gradient of the GFN2-xTB saddle and prints its seconds and SCF
cycles (the unit cost of the rung; run it under ``/usr/bin/time -v`` for the peak memory). ``--basis`` swaps the
basis of the level for a cost comparison only: it bypasses DftConfig, so it also takes def2-svp, which the config
refuses for anionic bases.
Prints one line per event (flushed), so a log shows partial numbers if the run is stopped.
"""

from __future__ import annotations

import argparse
import dataclasses
import glob
import os
import time

from elimscan.engines.threads import configure_threads

configure_threads(1)

import ase.io  # noqa: E402
import numpy as np  # noqa: E402

from elimscan.config import DftConfig, MethodConfig, OptimizerConfig, PathConfig, SolventConfig  # noqa: E402
from elimscan.drivers.complexes import Reactive  # noqa: E402
from elimscan.drivers.hessian import finite_difference_hessian, harmonic_analysis  # noqa: E402
from elimscan.drivers.relax import relax  # noqa: E402
from elimscan.drivers.saddles import refine_and_verify  # noqa: E402
from elimscan.engines.dft import dft_level  # noqa: E402
from elimscan.engines.dftgradients import DftEngine  # noqa: E402
from elimscan.engines.factory import make_engine  # noqa: E402
from elimscan.units import EV_PER_HARTREE, KCAL_MOL_PER_HARTREE  # noqa: E402
from ase.calculators.calculator import all_changes  # noqa: E402

T0 = time.perf_counter()


def say(text: str) -> None:
    """Print one line stamped with wall and CPU seconds since the start, and flush (the machine may be shared)."""
    print(f"[{time.perf_counter() - T0:7.0f} s wall, {time.process_time():7.0f} s CPU] {text}", flush=True)


def distances(atoms, r: Reactive) -> str:
    """Return the key distances of an E2 geometry in words (Å)."""
    d = r.distances(atoms.positions)
    return (f"O-H {d['base_h_A']:.3f}, C-H {d['c_beta_h_A']:.3f}, C-X {d['c_alpha_x_A']:.3f}, "
            f"O-Calpha {d['base_c_alpha_A']:.3f} A")


def main() -> None:
    """Run the benchmark on one job folder and print its numbers."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("folder")
    parser.add_argument("--path", default="C0-H3-anti")
    parser.add_argument("--solvent", default="ethanol")
    parser.add_argument("--reactive", default="3,0,1,2,10", help="indices h,c_beta,c_alpha,x,base in the complex")
    parser.add_argument("--charge", type=int, default=-1)
    parser.add_argument("--skip-reactant-relax", action="store_true")
    parser.add_argument("--reactant-energies", type=float, nargs=2, metavar=("SUBSTRATE", "BASE"),
                        help="DFT single points of the GFN2-xTB substrate and base from an earlier run (hartree)")
    parser.add_argument("--gradient-only", action="store_true",
                        help="one DFT energy + gradient of the GFN2-xTB saddle, then stop")
    parser.add_argument("--basis", help="basis for a cost comparison only (bypasses DftConfig; e.g. def2-svp)")
    args = parser.parse_args()
    saddle_gfn2 = ase.io.read(os.path.join(args.folder, f"saddle-{args.path}.xyz"), index=0)
    base = ase.io.read(glob.glob(os.path.join(args.folder, "base-*.xyz"))[0], index=0)
    substrate = ase.io.read(os.path.join(args.folder, "conformers.sdf"), index=0)
    r = Reactive(*map(int, args.reactive.split(",")))
    solvent = SolventConfig(model="alpb", name=args.solvent)
    level = dft_level(DftConfig(enabled=True), solvent)
    if args.basis:
        level = dataclasses.replace(level, basis=args.basis.strip().lower())
    dft = DftEngine(level, threads=1)
    config0 = DftConfig(enabled=True, saddles="reoptimise")
    say(f"level {dft.label}; complex {saddle_gfn2.get_chemical_formula()} ({len(saddle_gfn2)} atoms)")
    say(f"GFN2-xTB saddle: {distances(saddle_gfn2, r)}")

    def timed_point(atoms, charge, what):
        start = time.perf_counter()
        e = dft.single_point(atoms, charge, 1, name=what).energy_hartree
        say(f"single point {what}: {e:.6f} hartree, {time.perf_counter() - start:.1f} s (energy + gradient)")
        return e

    if args.gradient_only:
        start, cpu = time.perf_counter(), time.process_time()
        point = dft.single_point(saddle_gfn2, args.charge, 1, name="GFN2-xTB saddle")
        _, trace = dft.trace[-1]
        say(f"one gradient of the GFN2-xTB saddle: E {point.energy_hartree:.6f} hartree, {trace.scf_cycles} SCF "
            f"cycles (retried {trace.retried}), {time.perf_counter() - start:.1f} s wall, "
            f"{time.process_time() - cpu:.1f} s CPU, largest force {np.abs(point.forces_eV_per_A).max():.3f} eV/A")
        return
    if args.reactant_energies:
        e_sub, e_base = args.reactant_energies
        say(f"single points of the GFN2-xTB substrate and base given: {e_sub:.6f}, {e_base:.6f} hartree")
    else:
        e_sub = timed_point(substrate, 0, "GFN2-xTB substrate")
        e_base = timed_point(base, args.charge, "GFN2-xTB base")
    e_ts_sp = timed_point(saddle_gfn2, args.charge, "GFN2-xTB saddle")
    say(f"single-point barrier at the GFN2-xTB geometries: {(e_ts_sp - e_sub - e_base) * KCAL_MOL_PER_HARTREE:.2f} kcal/mol")

    zero = e_sub + e_base
    if not args.skip_reactant_relax:
        zero = 0.0
        for atoms, q, what in ((substrate, 0, "substrate"), (base, args.charge, "base")):
            before = dft.stats.misses
            start = time.perf_counter()
            result = relax(atoms, dft.calculator(q, 1, name=what), (), OptimizerConfig(fmax_eV_per_A=config0.reoptimise_fmax_eV_per_A))
            zero += result.energy_hartree
            say(f"DFT relaxation of the free {what}: {result.energy_hartree:.6f} hartree, converged {result.converged}, "
                f"{dft.stats.misses - before} gradients, {time.perf_counter() - start:.0f} s")
        say(f"single-point barrier above the DFT-relaxed reactants: {(e_ts_sp - zero) * KCAL_MOL_PER_HARTREE:.2f} kcal/mol")

    xtb = make_engine(MethodConfig(solvent=solvent))
    start = time.perf_counter()
    h_gfn2, n = finite_difference_hessian(saddle_gfn2, xtb.calculator(args.charge, 1, name="gfn2 hessian"))
    vib = harmonic_analysis(h_gfn2, saddle_gfn2)
    say(f"GFN2-xTB Hessian (the pipeline passes the verified saddle's; recomputed here): {n} xTB gradients, "
        f"{time.perf_counter() - start:.1f} s, imaginary {vib.imaginary(0.0)[:3]} cm-1")

    config = DftConfig(enabled=True, saddles="reoptimise")
    settings = PathConfig()
    settings = settings.model_copy(update={"saddle": settings.saddle.model_copy(update={
        "fmax_eV_per_A": config.reoptimise_fmax_eV_per_A, "max_steps": config.reoptimise_max_steps})})
    calc_energies: list[float] = []

    class Logging:
        """The DFT engine with a line per gradient."""

        label, stats = dft.label, dft.stats

        def calculator(self, charge=0, multiplicity=1, name="structure"):
            inner = dft.calculator(charge, multiplicity, name)
            original = inner.calculate

            def calculate(atoms=None, properties=None, system_changes=all_changes):
                t, c = time.perf_counter(), time.process_time()
                original(atoms, properties, system_changes)
                e = inner.results["energy"] / EV_PER_HARTREE
                calc_energies.append(e)
                say(f"  {name}: gradient {dft.stats.misses}, {time.perf_counter() - t:.1f} s ({time.process_time() - c:.1f} s CPU), E {e:.6f} hartree "
                    f"({(e - zero) * KCAL_MOL_PER_HARTREE:+.2f} kcal/mol), {distances(inner.atoms, r)}")
            inner.calculate = calculate
            return inner

        def single_point(self, *a, **k):
            return dft.single_point(*a, **k)

    def hessian(atoms):
        t = time.perf_counter()
        say("analytic DFT Hessian ...")
        result = dft.hessian(atoms, args.charge, 1, name="saddle")
        say(f"analytic DFT Hessian: {time.perf_counter() - t:.0f} s")
        return result

    before, start = dft.stats.misses, time.perf_counter()
    saddle = refine_and_verify(saddle_gfn2, r, Logging(), args.charge, 1, settings, OptimizerConfig(),
                               name="DFT saddle", method="sella from the GFN2-xTB saddle",
                               start_hessian_eV_A2=h_gfn2, hessian=hessian,
                               side_chunk_steps=config.reoptimise_side_chunk_steps)
    total = time.perf_counter() - start
    say(f"DFT saddle: verified {saddle.verified} ({saddle.reason}); imaginary {saddle.imaginary_cm1} cm-1, "
        f"others {saddle.other_imaginary_cm1}")
    say(f"cost: {dft.stats.misses - before} gradients, {total:.0f} s total, "
        f"{(total - dft.hessian_seconds) / max(1, dft.stats.misses - before):.1f} s per gradient, "
        f"analytic Hessian {dft.hessian_seconds:.0f} s")
    if saddle.atoms is not None:
        say(f"DFT saddle: {distances(saddle.atoms, r)}; E {saddle.energy_hartree:.6f} hartree")
        say(f"DFT barrier {(saddle.energy_hartree - zero) * KCAL_MOL_PER_HARTREE:.2f} kcal/mol vs single point "
            f"{(e_ts_sp - zero) * KCAL_MOL_PER_HARTREE:.2f} kcal/mol (same zero)")
        shift = np.linalg.norm(saddle.atoms.positions - saddle_gfn2.positions, axis=1)
        say(f"largest atom shift {shift.max():.3f} A (no re-alignment; Sella keeps the frame)")


if __name__ == "__main__":
    main()
