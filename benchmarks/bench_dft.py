"""DFT tier benchmark (``make bench``; not part of ``make test``): seconds per PySCF single point at ~20 atoms.

The structure is a 2-chlorobutane + methoxide complex (19 atoms, charge -1): the base's oxygen placed on the
extension of a C3-H bond, 1.3 Å from H, as at an early E2 saddle (built without GFN2-xTB, so the benchmark
times DFT alone). One single point at the tier's default level, B3LYP-D3(BJ)/def2-SVPD with density fitting
and IEF-PCM(methanol), one thread; ``--basis def2-tzvp`` times the check level instead, ``--functional wb97x-3c``
the wB97X-3c composite (its own vDZP basis and D4; ``--basis`` is then ignored).
Quote it as a figure for this machine, not a target.
"""

from __future__ import annotations

import argparse
import time

from elimscan.engines.threads import configure_threads

configure_threads(1)

from elimscan.config import DftConfig, SolventConfig  # noqa: E402
from elimscan.engines.dft import dft_level, missing_pyscf, single_point  # noqa: E402
from elimscan.engines.dftbasis import missing_basis_data  # noqa: E402
from elimscan.drivers.complexes import place_base  # noqa: E402
from elimscan.chem.structures import build_molecule  # noqa: E402

SEED = 20261202


def complex_atoms():
    """Return the 19-atom 2-chlorobutane + methoxide complex (Å) with the base 1.3 Å from a C3 hydrogen."""
    substrate = build_molecule("C[C@H](Cl)CC", SEED).atoms
    base = build_molecule("C[O-]", SEED).atoms
    c3 = 3  # SMILES order: C0 C1(Cl2) C3 C4
    h = next(i for i in range(len(substrate)) if substrate[i].symbol == "H" and substrate.get_distance(i, c3) < 1.2)
    oxygen = next(i for i in range(len(base)) if base[i].symbol == "O")
    return place_base(substrate, h, c3, base, oxygen, 1.3, 0.0)


def main() -> None:
    """Print seconds per DFT single point at ~20 atoms."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--basis", default=DftConfig().basis, choices=["def2-svpd", "def2-tzvp", "def2-tzvpd"])
    parser.add_argument("--functional", default=DftConfig().functional, choices=["b3lyp", "wb97x-3c"])
    args = parser.parse_args()
    chosen = ({"functional": args.functional} if args.functional == "wb97x-3c"
              else {"functional": args.functional, "basis": args.basis})
    config = DftConfig(enabled=True, **chosen)
    missing = missing_pyscf(config.dispersion) or missing_basis_data(config.basis)
    if missing is not None:
        print(f"bench_dft: {missing}")
        return
    atoms = complex_atoms()
    level = dft_level(config, SolventConfig(model="alpb", name="methanol"))
    start, cpu_start = time.perf_counter(), time.process_time()
    point = single_point(atoms, -1, 1, level, threads=1, name="2-chlorobutane + methoxide complex")
    wall, cpu = time.perf_counter() - start, time.process_time() - cpu_start
    print(f"DFT single point, {len(atoms)} atoms ({atoms.get_chemical_formula()}, charge -1), {level.label()}, 1 thread:")
    print(f"  {wall:.1f} s wall, {cpu:.1f} s CPU ({point.scf_cycles} SCF cycles{', second-order retry' if point.retried else ''}); "
          f"E = {point.energy_hartree:.6f} hartree, dispersion {point.dispersion_hartree:.6f} hartree")


if __name__ == "__main__":
    main()
