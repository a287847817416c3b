"""Engine benchmark (``make bench``; not part of ``make test``). Prints figures measured in one run.

1. median ms per GFN2-xTB energy+gradient, tblite vs xtb-python, at about 15, 35 and 70 atoms (gas phase);
2. gradients and wall time per constrained dihedral-scan point, ASE BFGS + FixInternals vs Sella;
3. the cache hit ratio when a relaxation is repeated;
4. the cost of the dielectric-only continuum (ddX-CPCM at tert-butanol's ε) against ALPB(ethanol), tblite;
5. memory: resident memory a process keeps per constrained Sella scan point (internal coordinates) once warm.
   Goal: at most MEMORY_GOAL_MB per point. scipy 1.17.1's LSODA kept every solver's work arrays alive (about
   0.7 MB per Sella relaxation of a small molecule, several GB per benchmark job); elimscan pins scipy 1.16.3.
Quote ratios, not absolute times: they depend on the machine.
"""

from __future__ import annotations

import gc
import resource
import statistics
import sys
import time

from elimscan.engines.threads import configure_threads

configure_threads(1)

from elimscan.config import OptimizerConfig  # noqa: E402
from elimscan.engines.xtb import EngineSettings, XtbEngine  # noqa: E402
from elimscan.geometry import dihedral_deg  # noqa: E402
from elimscan.drivers.relax import HeldDihedral, relax  # noqa: E402
from elimscan.chem.structures import build_molecule  # noqa: E402
from elimscan.versions import installed_version  # noqa: E402

#: the memory goal of figure 5: resident MB a warm process may keep per constrained scan point (issue 19): a
#: benchmark job of about 5,000 Sella points then keeps under 0.5 GB
MEMORY_GOAL_MB = 0.1
SIZES = {"~15 atoms": "CC(Cl)CC", "~35 atoms": "CCCCCCCCCC(Cl)C", "~70 atoms": "CCCCCCCCCCCCCCCCCCCCC(Cl)C"}
REPEATS = 9


def median_ms_per_gradient(backend: str, atoms, solvent_model: str = "none", solvent_name: str | None = None) -> float:
    """Return the median wall time (ms) of one energy+gradient on a reused calculator."""
    engine = XtbEngine(EngineSettings(backend=backend, solvent_model=solvent_model, solvent_name=solvent_name))
    calc = engine.calculator()
    times = []
    for k in range(REPEATS):
        moved = atoms.copy()
        moved.positions[0, 0] += 1e-3 * (k + 1)  # new geometry each time: no cache hits
        moved.calc = calc
        start = time.perf_counter()
        moved.get_forces()
        times.append((time.perf_counter() - start) * 1e3)
    return statistics.median(times)


def scan_cost(optimizer: str, atoms, h: int, cb: int, ca: int, x: int, points: int = 12) -> tuple[float, float, float]:
    """Return (gradients per point, s per point, first-call s) of a 15-degree H-C-C-X scan."""
    engine = XtbEngine(EngineSettings())
    start_atoms = relax(atoms, engine.calculator(), ()).atoms
    phi0 = dihedral_deg(start_atoms.positions, h, cb, ca, x)
    current, grads, times = start_atoms, [], []
    first_call = None
    for k in range(1, points + 1):
        t0 = time.perf_counter()
        result = relax(current, engine.calculator(), [HeldDihedral((h, cb, ca, x), phi0 + 15.0 * k)],
                       OptimizerConfig(name=optimizer))
        elapsed = time.perf_counter() - t0
        if first_call is None:
            first_call = elapsed
        else:
            times.append(elapsed)
        grads.append(result.n_gradients)
        current = result.atoms
    return statistics.mean(grads), statistics.mean(times), first_call


def resident_mb() -> float:
    """Return this process's resident memory (MB, from /proc/self/statm; 0 where /proc is missing)."""
    try:
        pages = int(open("/proc/self/statm").read().split()[1])
    except OSError:
        return 0.0
    return pages * resource.getpagesize() / 2**20


def memory_per_scan_point(atoms, h: int, cb: int, ca: int, x: int, warm: int = 24, measured: int = 96) -> float:
    """Return the resident MB a process keeps per constrained Sella scan point after ``warm`` points (MB/point)."""
    engine = XtbEngine(EngineSettings())
    current = relax(atoms, engine.calculator(), ()).atoms
    phi0 = dihedral_deg(current.positions, h, cb, ca, x)
    before = 0.0
    for k in range(warm + measured):
        if k == warm:
            gc.collect()
            before = resident_mb()
        target = phi0 + 15.0 * (k % 24 + 1)
        current = relax(current, XtbEngine(EngineSettings()).calculator(), [HeldDihedral((h, cb, ca, x), target)]).atoms
    gc.collect()
    return (resident_mb() - before) / measured


def main() -> int:
    print("elimscan engine benchmark (one run; GFN2-xTB gas phase, 1 thread)")
    print("\n1. median ms per energy+gradient (reused calculator)")
    print(f"{'size':<12}{'atoms':>6}{'tblite ms':>11}{'xtb ms':>9}{'xtb/tblite':>12}")
    for label, smiles in SIZES.items():
        atoms = build_molecule(smiles, seed=1).atoms
        t_tb, t_x = median_ms_per_gradient("tblite", atoms), median_ms_per_gradient("xtb", atoms)
        print(f"{label:<12}{len(atoms):>6}{t_tb:>11.1f}{t_x:>9.1f}{t_x / t_tb:>12.2f}")

    # (SMILES, C-beta, C-alpha, X): 2-chlorobutane (14 atoms) and 2-chloroundecane (35 atoms)
    for smiles, cb, ca, x in (("CC(Cl)CC", 3, 1, 2), ("CC(Cl)CCCCCCCCC", 3, 1, 2)):
        atoms = build_molecule(smiles, seed=1).atoms
        print(f"\n2. constrained H-C-C-Cl scan of {smiles} ({len(atoms)} atoms), 12 points of 15 degrees")
        h = next(i for i in range(len(atoms)) if atoms.numbers[i] == 1 and atoms.get_distance(i, cb) < 1.2)
        rows = {optimizer: scan_cost(optimizer, atoms, h, cb, ca, x) for optimizer in ("bfgs", "sella")}
        print(f"{'optimizer':<10}{'gradients/point':>17}{'s/point':>10}{'first point s':>15}")
        for optimizer, (g, t, first) in rows.items():
            print(f"{optimizer:<10}{g:>17.1f}{t:>10.3f}{first:>15.2f}")
        print(f"ratio sella/bfgs: gradients {rows['sella'][0] / rows['bfgs'][0]:.2f}, "
              f"time per point {rows['sella'][1] / rows['bfgs'][1]:.2f}")
    atoms = build_molecule("CC(Cl)CC", seed=1).atoms

    print("\n3. cache: the same relaxation twice on one engine")
    engine = XtbEngine(EngineSettings())
    relax(atoms, engine.calculator(), ())
    relax(atoms, engine.calculator(), ())
    print(f"hits {engine.stats.hits}, misses {engine.stats.misses}, hit ratio {engine.stats.hit_ratio:.2f}")

    print("\n4. implicit solvent: ms per energy+gradient, tblite, ALPB(ethanol) vs ddX-CPCM(tert-butanol, ε 12.47)")
    print(f"{'size':<12}{'atoms':>6}{'ALPB ms':>9}{'ddX ms':>9}{'ddX/ALPB':>10}")
    for label, smiles in (("~15 atoms", "CC(Cl)CC"), ("~30 atoms", "CCCCCCCC(Cl)C"), ("~56 atoms", "CCCCCCCCCCCCCCCC(Cl)C")):
        atoms = build_molecule(smiles, seed=1).atoms
        alpb = median_ms_per_gradient("tblite", atoms, "alpb", "ethanol")
        ddx = median_ms_per_gradient("tblite", atoms, "dielectric", "tert-butanol")
        print(f"{label:<12}{len(atoms):>6}{alpb:>9.1f}{ddx:>9.1f}{ddx / alpb:>10.1f}")

    atoms = build_molecule("CC(Cl)CC", seed=1).atoms
    cb, ca, x = 3, 1, 2  # 2-chlorobutane's C-beta, C-alpha and Cl, as in figure 2
    h = next(i for i in range(len(atoms)) if atoms.numbers[i] == 1 and atoms.get_distance(i, cb) < 1.2)
    per_point = memory_per_scan_point(atoms, h, cb, ca, x)
    print(f"\n5. memory kept per constrained Sella scan point (scipy {installed_version('scipy')}; 96 points after 24 warm)")
    print(f"{per_point:.3f} MB per point (goal <= {MEMORY_GOAL_MB} MB: {'met' if per_point <= MEMORY_GOAL_MB else 'MISSED'})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
