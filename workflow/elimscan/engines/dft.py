"""Optional DFT single points on the GFN2-xTB saddles of a job: the only module that imports PySCF.

Under Curtin-Hammett the saddles alone set the product mix, so the tier computes the lowest few saddles of
each product (by GFN2-xTB energy) and, only when absolute barriers are asked for, the free substrate and
free base. PySCF is an optional extra: without it the tier is skipped with a message, never an error of the
job. PySCF failures are translated into elimscan's errors here, chained with ``from``; a failed single point
is data on its path, and the job goes on.
"""

from __future__ import annotations

import dataclasses
import hashlib
import importlib
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np
from ase import Atoms

from elimscan.analysis.rule import PathBarrier, product_fractions
from elimscan.config import DftConfig, SolventConfig
from elimscan.engines.dftbasis import (COMPOSITE_SETUP, auxiliary_basis, missing_basis_data, pyscf_basis,
                                       pyscf_functional)
from elimscan.engines.dftmemory import check_memory, memory_limit_MB, pyscf_target_MB
from elimscan.engines.contract import PointLog
from elimscan.errors import DftError, DftRefusedError, DftUnavailableError, ElimscanError
from elimscan.results.failures import error_info
from elimscan.results.records import ErrorInfo
from elimscan.solvents import DIELECTRIC_SOLVENTS, canonical_solvent_name
from elimscan.units import KCAL_MOL_PER_HARTREE
from elimscan.versions import installed_version

#: Static dielectric constants (25 °C) for our canonical ALPB solvent names (the solvents of the ``dielectric``
#: model, and ethanol, methanol and water, have theirs in solvents.DIELECTRIC_SOLVENTS: one entry per solvent,
#: from the same database), from the Minnesota Solvent Descriptor
#: Database (Winget, Dolney, Giesen, Cramer & Truhlar, University of Minnesota, 1999/2010; the solvent
#: descriptors of SMD, Marenich, Cramer & Truhlar, J. Phys. Chem. B 2009, 113, 6378). Furan, phenol and
#: water-saturated octanol are not in that database: give ``dft.dielectric_constant`` for them.
DIELECTRIC_CONSTANTS: dict[str, float] = {
    "acetone": 20.493,
    "acetonitrile": 35.688,
    "aniline": 6.8882,
    "benzaldehyde": 18.220,
    "benzene": 2.2706,
    "ch2cl2": 8.93,
    "chcl3": 4.7113,
    "cs2": 2.6105,
    "dioxane": 2.2099,
    "dmf": 37.219,
    "dmso": 46.826,
    "ether": 4.2400,
    "ethylacetate": 5.9867,
    "hexadecane": 2.0402,
    "hexane": 1.8819,
    "nitromethane": 36.562,
    "octanol": 9.8629,
    "thf": 7.4257,
    "toluene": 2.3741,
}

#: how our names are written in labels (ASCII 'w' for omega: labels go into logs, CSV and file names)
_FUNCTIONAL_LABELS = {"b3lyp": "B3LYP", "pbe0": "PBE0", "wb97x-3c": "wB97X-3c"}
_DISPERSION_LABELS = {"d3bj": "-D3(BJ)", "d4": "-D4", "none": ""}
_BASIS_LABELS = {"def2-svpd": "def2-SVPD", "def2-tzvp": "def2-TZVP", "def2-tzvpd": "def2-TZVPD", "vdzp": "vDZP"}
#: what to install when PySCF is missing
INSTALL_HINT = "pip install 'elimscan[dft]' (PySCF and pyscf-dispersion)"

#: progress callback: a one-line message
Report = Callable[[str], None]


@dataclass(frozen=True)
class DftLevel:
    """Everything that changes a DFT number: functional, dispersion, basis, fitting, solvent (ε; None = gas)."""

    functional: str
    dispersion: str
    basis: str
    density_fit: bool
    dielectric_constant: float | None
    solvent_name: str | None
    grid_level: int
    max_scf_cycles: int
    scf_tolerance_hartree: float
    #: peak memory a calculation may take (MB; None = no guard): changes no number, only whether one is started
    memory_limit_MB: float | None = field(default=None, compare=False)

    def label(self) -> str:
        """Return a one-line label such as 'B3LYP-D3(BJ)/def2-SVPD (RI), IEF-PCM(methanol, eps 32.61)' or, for a
        composite level whose name holds its dispersion and basis, 'wB97X-3c (RI), IEF-PCM(ethanol, eps 24.85)'."""
        solvent = ("gas phase" if self.dielectric_constant is None
                   else f"IEF-PCM({self.solvent_name or 'user'}, eps {self.dielectric_constant:.2f})")
        fit = " (RI)" if self.density_fit else ""
        if self.functional in COMPOSITE_SETUP:
            return f"{_FUNCTIONAL_LABELS[self.functional]}{fit}, {solvent}"
        return (f"{_FUNCTIONAL_LABELS[self.functional]}{_DISPERSION_LABELS[self.dispersion]}/"
                f"{_BASIS_LABELS.get(self.basis, self.basis)}{fit}, {solvent}")


@dataclass(frozen=True)
class DftPoint:
    """One converged DFT single point: total energy incl. dispersion and solvation (hartree), parts and cost."""

    energy_hartree: float
    dispersion_hartree: float
    solvation_hartree: float
    scf_cycles: int
    seconds: float
    retried: bool = False


@dataclass(frozen=True)
class SaddleCandidate:
    """A path top to refine: its key, the alkene it gives, class degeneracy, GFN2-xTB energy (hartree), geometry."""

    key: tuple[str, str]
    product_smiles: str
    degeneracy: int
    gfn2_energy_hartree: float
    atoms: Atoms = field(compare=False, repr=False)
    #: "e2" (an alkene's path) or "sn2" (the backside substitution path, its own product)
    kind: str = "e2"
    #: the GFN2-xTB verification Hessian of a verified saddle (eV/Å^2); None for a relaxed-path maximum
    hessian_eV_A2: np.ndarray | None = field(default=None, compare=False, repr=False)


@dataclass(frozen=True)
class DftSaddle:
    """A saddle re-optimised at DFT: energy (hartree), verification, key distances (Å), gradients and seconds."""

    energy_hartree: float | None
    verified: bool
    reason: str
    error_type: str | None
    imaginary_cm1: float | None
    other_imaginary_cm1: tuple[float, ...]
    n_gradients: int
    seconds: float
    hessian_seconds: float
    #: largest atom displacement from the GFN2-xTB saddle (Å, same frame)
    largest_shift_A: float | None
    #: key distances of the GFN2-xTB and of the DFT saddle (name -> Å)
    gfn2_distances_A: dict[str, float] = field(default_factory=dict)
    dft_distances_A: dict[str, float] = field(default_factory=dict)


@dataclass(frozen=True)
class DftJobResult:
    """The DFT tier of one job: status, message, level, single points by path key, zero and the product mix."""

    status: str  # ok, partial, skipped, refused, failed
    message: str
    level: str | None = None
    program_version: str | None = None
    points: dict[tuple[str, str], DftPoint | ErrorInfo] = field(default_factory=dict)
    #: barriers by path key (kcal/mol) above ``zero_kind``
    barriers_kcal_mol: dict[tuple[str, str], float] = field(default_factory=dict)
    zero_kind: str | None = None
    reference_energy_hartree: float | None = None
    fractions: dict[str, float] = field(default_factory=dict)
    #: share of the substitution saddle against every computed saddle (None: no SN2 saddle computed)
    substitution_fraction: float | None = None
    seconds: float = 0.0
    error: ErrorInfo | None = None
    #: 'single-point' or 'reoptimise' (dft.saddles); with 'reoptimise' the barriers and shares come from ``saddles``
    saddles_mode: str = "single-point"
    #: saddles re-optimised at DFT by path key (or why the re-optimisation failed)
    saddles: dict[tuple[str, str], DftSaddle | ErrorInfo] = field(default_factory=dict)


def missing_pyscf(dispersion: str) -> str | None:
    """Return why the tier cannot run here (PySCF or its dispersion package cannot be imported), else None."""
    needed = ["pyscf", "pyscf.dft", "pyscf.solvent"] + (["pyscf.dispersion"] if dispersion != "none" else [])
    for name in needed:
        try:
            importlib.import_module(name)
        except ImportError as err:
            what = "pyscf-dispersion" if name == "pyscf.dispersion" else "PySCF"
            return f"DFT tier skipped: {what} cannot be imported ({err}); install it with {INSTALL_HINT}"
    return None


def dielectric_constant(solvent: SolventConfig, override: float | None) -> float | None:
    """Return the dielectric constant for IEF-PCM (dimensionless), None for the gas phase; raise if unknown."""
    if override is not None:
        return override
    if solvent.model == "none" or not solvent.name:
        return None
    name = canonical_solvent_name(solvent.name)
    if name in DIELECTRIC_CONSTANTS:
        return DIELECTRIC_CONSTANTS[name]
    if name in DIELECTRIC_SOLVENTS:
        return DIELECTRIC_SOLVENTS[name].epsilon
    known = sorted({*DIELECTRIC_CONSTANTS, *DIELECTRIC_SOLVENTS})
    raise DftRefusedError(f"no dielectric constant known for solvent '{solvent.name}' (known: {', '.join(known)}); "
                          "give dft.dielectric_constant")


def dft_level(config: DftConfig, solvent: SolventConfig, parallel_jobs: int = 1) -> DftLevel:
    """Return the DFT level of a job in ``solvent``: the config's choices, the solvent's ε (None = gas) and the memory
    limit in MB (``dft.memory_limit_MB``, else a share of the available memory divided among ``parallel_jobs``)."""
    eps = None if config.solvation == "none" else dielectric_constant(solvent, config.dielectric_constant)
    name = None if eps is None or config.dielectric_constant is not None or solvent.name is None \
        else canonical_solvent_name(solvent.name)
    return DftLevel(config.functional, config.dispersion, config.basis, config.density_fit, eps, name,
                    config.grid_level, config.max_scf_cycles, config.scf_tolerance_hartree,
                    memory_limit_MB(config.memory_limit_MB, parallel_jobs))


def check_free_ions(job: str, charges: dict[str, int], level: DftLevel) -> None:
    """Raise DftRefusedError naming the job when a gas-phase DFT level meets a charged substrate or base."""
    ions = [f"{what} (charge {q:+d})" for what, q in charges.items() if q]
    if level.dielectric_constant is None and ions:
        raise DftRefusedError(
            f"job '{job}': gas-phase DFT refused, the complex holds a free ion ({', '.join(ions)}); ion-dipole "
            "binding would dominate the saddle energies. Use dft.solvation: pcm with a solvent")


def select_saddles(candidates: Sequence[SaddleCandidate], per_product: int) -> list[SaddleCandidate]:
    """Return the lowest ``per_product`` candidates (GFN2-xTB energy) of each product, lowest first overall."""
    chosen: list[SaddleCandidate] = []
    for product in sorted({c.product_smiles for c in candidates}):
        mine = sorted((c for c in candidates if c.product_smiles == product), key=lambda c: c.gfn2_energy_hartree)
        chosen.extend(mine[:per_product])
    return sorted(chosen, key=lambda c: c.gfn2_energy_hartree)


def relative_barriers(energies: dict[tuple[str, str], float], zero_hartree: float) -> dict[tuple[str, str], float]:
    """Return each energy above ``zero_hartree`` in kcal/mol (rounded to 0.001)."""
    return {key: round((e - zero_hartree) * KCAL_MOL_PER_HARTREE, 3) for key, e in energies.items()}


def dft_fractions(candidates: Sequence[SaddleCandidate], barriers: dict[tuple[str, str], float],
                  temperature_K: float) -> dict[str, float]:
    """Return alkene shares from the DFT barriers (kcal/mol) of the computed E2 saddles, degeneracy-weighted."""
    paths = [PathBarrier(c.key[0], c.key[1], c.product_smiles, barriers[c.key], c.degeneracy)
             for c in candidates if c.key in barriers and c.kind == "e2"]
    return product_fractions(paths, temperature_K)


def substitution_share(candidates: Sequence[SaddleCandidate], barriers: dict[tuple[str, str], float],
                       temperature_K: float) -> float | None:
    """Return the share of the SN2 saddle against every computed saddle (E2 and SN2), or None without both kinds."""
    computed = [c for c in candidates if c.key in barriers]
    if not any(c.kind == "sn2" for c in computed) or not any(c.kind == "e2" for c in computed):
        return None
    paths = [PathBarrier(c.key[0], c.key[1], c.kind, barriers[c.key], c.degeneracy) for c in computed]
    return product_fractions(paths, temperature_K)["sn2"]


def import_pyscf():
    """Return PySCF's gto, dft and lib modules (imported on first use); raise DftUnavailableError."""
    try:
        from pyscf import dft, gto, lib
        import pyscf.solvent  # noqa: F401  (registers .PCM on the SCF classes)
    except ImportError as err:
        raise DftUnavailableError(f"PySCF cannot be imported: {err}; install it with {INSTALL_HINT}") from err
    return gto, dft, lib


def build_molecule(atoms: Atoms, charge: int, multiplicity: int, level: DftLevel):
    """Return the PySCF molecule of one geometry (Å) in ``level``'s basis (with its ECPs where the basis has them,
    engines/dftbasis.py), with PySCF's memory target (MB) set."""
    gto, _, _ = import_pyscf()
    symbols = atoms.get_chemical_symbols()
    basis, ecp = pyscf_basis(level.basis, symbols)
    extra = {} if ecp is None else {"ecp": ecp}
    return gto.M(atom=[(s, tuple(p)) for s, p in zip(symbols, atoms.positions)],
                 unit="Angstrom", basis=basis, charge=charge, spin=multiplicity - 1, verbose=0,
                 max_memory=pyscf_target_MB(level.memory_limit_MB), **extra)


def guard_memory(atoms: Atoms, charge: int, multiplicity: int, level: DftLevel, task: str, name: str) -> float:
    """Return the peak-memory estimate (GB) of one calculation ('single point', 'gradient', 'hessian') at ``level``;
    raise DftMemoryError naming ``name`` when it exceeds the level's limit, DftError when the basis cannot be built."""
    try:
        mol = build_molecule(atoms, charge, multiplicity, level)
        n_aux = None
        if level.density_fit:
            from pyscf import df

            n_aux = int(df.make_auxmol(mol, auxiliary_basis(level.basis) or df.make_auxbasis(mol)).nao)
    except (RuntimeError, ValueError, KeyError) as err:
        raise DftError(f"{name}: PySCF setup failed ({type(err).__name__}: {err})") from err
    return check_memory(name, _BASIS_LABELS.get(level.basis, level.basis), int(mol.nao), n_aux, len(atoms), task,
                        level.dielectric_constant is not None, level.memory_limit_MB, basis_key=level.basis)


def build_scf(atoms: Atoms, charge: int, multiplicity: int, level: DftLevel):
    """Return an unconverged PySCF mean-field object for one geometry (Å) at ``level`` (RKS/UKS, DF, PCM as asked)."""
    _, dft, _ = import_pyscf()
    mol = build_molecule(atoms, charge, multiplicity, level)
    mf = (dft.RKS(mol) if multiplicity == 1 else dft.UKS(mol))
    xc, nlc, disp = pyscf_functional(level.functional, level.dispersion)
    mf.xc = xc
    if nlc is not None:  # a composite that drops its functional's VV10 part (wB97X-3c: wB97X-V without VV10)
        mf.nlc = nlc
    if disp is not None:
        mf.disp = disp
    mf.grids.level = level.grid_level
    mf.max_cycle = level.max_scf_cycles
    mf.conv_tol = level.scf_tolerance_hartree
    mf.chkfile = None
    if level.density_fit:
        mf = mf.density_fit(auxbasis=auxiliary_basis(level.basis))
    if level.dielectric_constant is not None:
        mf = mf.PCM()
        mf.with_solvent.method = "IEF-PCM"
        mf.with_solvent.eps = level.dielectric_constant
    return mf


def converge_scf(mf, level: DftLevel, name: str, dm0=None):
    """Return (converged mean-field object, energy in hartree, retried); one second-order retry; raise DftError."""
    try:
        energy = mf.kernel(dm0=dm0)
        retried = False
        if not mf.converged:  # one retry: second-order SCF from the last density
            retried = True
            newton = mf.newton()
            energy = newton.kernel(mf.make_rdm1())
            mf = newton
    except (RuntimeError, ValueError, KeyError, ArithmeticError, MemoryError, AssertionError) as err:
        raise DftError(f"{name}: PySCF SCF failed ({type(err).__name__}: {err})") from err
    except ImportError as err:  # a dispersion library that does not load
        raise DftUnavailableError(f"{name}: {err}; install it with {INSTALL_HINT}") from err
    if not mf.converged:
        raise DftError(f"{name}: DFT SCF did not converge in {level.max_scf_cycles} cycles, nor after a "
                       "second-order retry")
    return mf, float(energy), retried


def single_point(atoms: Atoms, charge: int, multiplicity: int, level: DftLevel, threads: int = 1,
                 name: str = "structure") -> DftPoint:
    """Return the DFT energy (hartree) of one geometry at ``level``; raise DftError naming the structure on failure."""
    _, _, lib = import_pyscf()
    lib.num_threads(threads)
    guard_memory(atoms, charge, multiplicity, level, "single point", name)
    start = time.perf_counter()
    try:
        mf = build_scf(atoms, charge, multiplicity, level)
    except (RuntimeError, ValueError, KeyError) as err:
        raise DftError(f"{name}: PySCF single point failed ({type(err).__name__}: {err})") from err
    mf, energy, retried = converge_scf(mf, level, name)
    summary = getattr(mf, "scf_summary", {})
    return DftPoint(energy_hartree=energy, dispersion_hartree=float(summary.get("dispersion", 0.0)),
                    solvation_hartree=float(summary.get("e_solvent", 0.0)),
                    scf_cycles=int(getattr(mf, "cycles", -1)),
                    seconds=round(time.perf_counter() - start, 2), retried=retried)


def point_key(atoms: Atoms, charge: int, multiplicity: int, level: DftLevel) -> str:
    """Return the SHA-256 hex key of a DFT single point (atoms, positions to 1e-8 Å, charge, spin, level).

    Every setting of ``level`` that changes the number enters; its memory guard does not."""
    digest = hashlib.sha256(b"dft|")
    digest.update(np.asarray(atoms.numbers, dtype=np.int64).tobytes())
    digest.update(np.round(np.asarray(atoms.positions, dtype=float), 8).tobytes())
    digest.update(f"{charge}|{multiplicity}|{dataclasses.replace(level, memory_limit_MB=None)!r}".encode())
    return digest.hexdigest()


def served_point(replay: PointLog | None, key: str) -> tuple[DftPoint, np.ndarray] | None:
    """Return the DFT point (hartree) and its array kept under ``key`` in ``replay``, or None: not there, or written by
    another code version in a form this one cannot read (then it is computed again)."""
    found = None if replay is None else replay.get(key)
    try:
        return None if found is None else (DftPoint(**found[0]), found[1])
    except TypeError:
        return None


def kept_single_point(atoms: Atoms, charge: int, multiplicity: int, level: DftLevel, threads: int, name: str,
                      replay: PointLog | None) -> DftPoint:
    """Return the DFT single point (energies in hartree), from ``replay`` when it holds it, else computed and kept.

    ``replay`` is the job's replay log: it holds the points a stopped earlier run of the same job finished."""
    key = None if replay is None else point_key(atoms, charge, multiplicity, level)
    served = None if key is None else served_point(replay, key)
    if served is not None:
        return served[0]
    point = single_point(atoms, charge, multiplicity, level, threads, name)
    if replay is not None:
        replay.put(key, dataclasses.asdict(point))
    return point


def prepare_level(job: str, charges: dict[str, int], config: DftConfig, solvent: SolventConfig,
                  parallel_jobs: int = 1) -> DftLevel | DftJobResult:
    """Return the DFT level of a job, or the tier's result when it is refused (input) or skipped (no PySCF)."""
    try:  # a refusal is a problem of the input: reported even where PySCF is missing
        level = dft_level(config, solvent, parallel_jobs)
        check_free_ions(job, charges, level)
    except DftRefusedError as err:
        return DftJobResult(status="refused", message=str(err), error=error_info(err), saddles_mode=config.saddles)
    # a basis from basis-set-exchange (vDZP) needs that package too
    missing = missing_pyscf(config.dispersion) or missing_basis_data(config.basis)
    if missing is not None:
        return DftJobResult(status="skipped", message=missing, saddles_mode=config.saddles)
    return level


def refine_job(job: str, candidates: Sequence[SaddleCandidate], charge: int, multiplicity: int,
               charges: dict[str, int], config: DftConfig, solvent: SolventConfig, temperature_K: float,
               reactants: Sequence[tuple[str, Atoms, int, int]] = (), threads: int = 1,
               report: Report | None = None, parallel_jobs: int = 1, replay: PointLog | None = None) -> DftJobResult:
    """Return the DFT tier of one job: single points on the chosen saddles, barriers (kcal/mol) and product shares.

    ``charges`` names the substrate's and base's charges (for the gas-phase refusal); ``reactants`` are
    (what, atoms, charge, multiplicity) of the free substrate and base, used when absolute barriers are asked for;
    ``parallel_jobs`` shares the default memory limit among the jobs that may run at once; single points found in
    ``replay`` (the job's replay log) are served from it. Never raises our errors: a skip, a refusal or a failure
    is the result's status.
    """
    start = time.perf_counter()
    level = prepare_level(job, charges, config, solvent, parallel_jobs)
    if isinstance(level, DftJobResult):
        return level
    label, version = level.label(), installed_version("pyscf")
    chosen = select_saddles(candidates, config.saddles_per_product)
    if not chosen:
        return DftJobResult(status="failed", message=f"job '{job}': no saddle to refine (every path failed)",
                            level=label, program_version=version)
    points: dict[tuple[str, str], DftPoint | ErrorInfo] = {}
    for k, cand in enumerate(chosen):
        if report is not None:
            report(f"{job}: DFT single point {k + 1}/{len(chosen)} ({cand.key[0]} {cand.key[1]}, {len(cand.atoms)} atoms, "
                   f"{label})")
        try:
            points[cand.key] = kept_single_point(cand.atoms, charge, multiplicity, level, threads,
                                                 f"job '{job}' {cand.key[0]} {cand.key[1]} saddle", replay)
        except ElimscanError as err:
            points[cand.key] = error_info(err)
    energies = {key: p.energy_hartree for key, p in points.items() if isinstance(p, DftPoint)}
    failed = len(points) - len(energies)
    if not energies:
        first = next(iter(points.values()))
        return DftJobResult(status="failed", message=f"job '{job}': every DFT single point failed", level=label,
                            program_version=version, points=points, seconds=round(time.perf_counter() - start, 2),
                            error=first if isinstance(first, ErrorInfo) else None)
    zero, zero_kind = min(energies.values()), "lowest DFT saddle of the job"
    notes = []
    if config.absolute_barriers and reactants:
        total, problems = 0.0, []
        for what, atoms, q, mult in reactants:
            if report is not None:
                report(f"{job}: DFT single point of the free {what}")
            try:
                total += kept_single_point(atoms, q, mult, level, threads, f"job '{job}' free {what}",
                                           replay).energy_hartree
            except ElimscanError as err:
                problems.append(str(err))
        if problems:
            notes.append("absolute barriers not available (" + "; ".join(problems) + "); barriers are relative")
        else:
            zero, zero_kind = total, "DFT free substrate + free base"
    barriers = relative_barriers(energies, zero)
    fractions = dft_fractions(chosen, barriers, temperature_K)
    sn2_share = substitution_share(chosen, barriers, temperature_K)
    computed = ", ".join(f"{c.key[0]} {c.key[1]}" for c in chosen if c.key in energies)
    message = (f"{len(energies)} of {len(chosen)} saddles computed at {label} ({computed}); barriers above the "
               f"{zero_kind}")
    if failed:
        message += f"; {failed} single point(s) failed, their paths are left out of the DFT product mix"
    message = "; ".join([message, *notes])
    return DftJobResult(status="partial" if failed else "ok", message=message, level=label, program_version=version,
                        points=points, barriers_kcal_mol=barriers, zero_kind=zero_kind,
                        reference_energy_hartree=zero, fractions=fractions, substitution_fraction=sn2_share,
                        seconds=round(time.perf_counter() - start, 2))
