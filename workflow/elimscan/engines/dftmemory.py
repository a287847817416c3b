"""Memory guard of the DFT tier: a peak-memory estimate of one PySCF calculation, the limit it must stay under, and
the refusal before a calculation that would not fit.

The estimate is a formula in the sizes of the calculation, calibrated on a measurement of this project
(docs/method.md: one B3LYP-D3(BJ)/def2-SVP RI gradient with IEF-PCM on a 43-atom saddle, 368 basis functions, 1828
auxiliary functions of def2-universal-jkfit, peaked at 8.7 GB with PySCF's memory target at its default 4000 MB)::

    peak_GB = BASE_GB + factor(task) * 8 bytes * (n_aux * n_basis**2 + PCM_WORDS_PER_POINT2 * (POINTS_PER_ATOM * n_atoms)**2)

* ``n_aux * n_basis**2``: the three-index RI tensors and PySCF's blocked work arrays around them (without RI,
  ``NO_RI_AUX_PER_BASIS * n_basis`` stands in for ``n_aux``);
* the PCM term (IEF-PCM only): PySCF's IEF-PCM keeps dense matrices over the surface points (S, D, A, K, R) and
  its gradient builds (points, points, 3) arrays: measured in this project on the same 43-atom cluster's surface
  (3101 points), 14 words per point pair after building the matrices and 31 more during the gradient;
  ``POINTS_PER_ATOM`` = 100 covers the 72-100 points per atom counted on the 16-, 19- and 43-atom complexes;
* ``factor``: 1.0 for a gradient (the formula gives 9.0 GB at the calibration point, 4 % above the 8.7 GB
  measured), 0.9 for a single point (1.9 GB for the 19-atom 2-chlorobutane + methoxide complex at def2-SVPD,
  measured 1.8 GB), 4.0 for an analytic Hessian (only a lower bound is measured: above 3.4 GB for a 16-atom saddle
  at def2-SVPD when it was stopped, 2.4 times the size term of its gradient; the 4.0 is a guess above that bound).
  The wB97X-3c level (vDZP basis, same fitting set) was measured below the formula too: 0.84 and 1.08 GB peak for
  single points on 16- and 19-atom saddles with IEF-PCM, estimated 1.3 and 1.7 GB.

PySCF treats its ``max_memory`` as a target for the arrays it blocks, not as a cap (8.7 GB against 4000 MB), so the
engine hands it ``pyscf_target_MB``: a share of the limit, never above the 4000 MB the formula was calibrated at.
No file I/O but ``available_memory_MB``, which reads the kernel's memory counters.
"""

from __future__ import annotations

from pathlib import Path

from elimscan.errors import DftMemoryError

#: memory of the Python process before PySCF allocates (NumPy, PySCF, RDKit, ASE, Sella loaded: 0.29 GB measured
#: in this project), rounded up (GB)
BASE_GB = 0.4
#: PCM surface points per atom (PySCF's default 302-point Lebedev spheres, buried points dropped): 72 counted on a
#: 43-atom alcohol-3 complex, 98-100 on 16- and 19-atom complexes; the larger taken
POINTS_PER_ATOM = 100
#: dense words per pair of PCM surface points at the peak of an IEF-PCM gradient (14 kept + 31 transient, measured)
PCM_WORDS_PER_POINT2 = 45
#: without RI the auxiliary count is replaced by this many per basis function (def2-universal-jkfit over def2-SVP:
#: 1828 / 368 = 5.0 on the calibration saddle; 3.7 over def2-SVPD)
NO_RI_AUX_PER_BASIS = 5
#: ... except for a basis with far fewer functions per atom than def2-SVP, where the stand-in is taken from the same
#: fitting set over that basis: vDZP (valence-only, ECP cores; wB97X-3c) is fitted with def2-universal-jkfit too
#: (engines/dftbasis.py), counted at 823 / 128 = 6.4 on the 16-atom bromoethane + ethoxide SN2 saddle and
#: 934 / 151 = 6.2 on the 19-atom 2-bromopropane + ethoxide E2 saddle; the larger, rounded up
NO_RI_AUX_PER_BASIS_BY_BASIS = {"vdzp": 6.5}
#: the estimate's multiple per kind of calculation (see the module docstring)
TASK_FACTORS = {"single point": 0.9, "gradient": 1.0, "hessian": 4.0}
#: share of the available memory a DFT calculation may take by default (dft.memory_limit_MB: null), before the
#: division among parallel jobs: the rest is left to the operating system, the driver process and the page cache
DEFAULT_MEMORY_SHARE = 0.8
#: PySCF's own default memory target (MB, pyscf.lib.param.MAX_MEMORY): the target the formula was calibrated at
PYSCF_DEFAULT_TARGET_MB = 4000
#: share of the limit handed to PySCF as its target: 4000 MB gave an 8.7 GB peak, so a target of 0.4 times the
#: limit keeps the measured overshoot (2.2 times the target) under the limit
PYSCF_TARGET_SHARE = 0.4
#: bytes per double-precision word
_WORD_BYTES = 8


def peak_memory_estimate_GB(n_basis: int, n_aux: int | None, n_atoms: int, task: str, pcm: bool,
                            no_ri_aux_per_basis: float = NO_RI_AUX_PER_BASIS) -> float:
    """Return the estimated peak memory (GB, 1e9 bytes) of one PySCF calculation (n_aux None = no RI: then
    ``no_ri_aux_per_basis`` auxiliary functions per basis function stand in)."""
    aux = no_ri_aux_per_basis * n_basis if n_aux is None else n_aux
    words = float(aux) * n_basis ** 2
    if pcm:
        words += PCM_WORDS_PER_POINT2 * float(POINTS_PER_ATOM * n_atoms) ** 2
    return BASE_GB + TASK_FACTORS[task] * _WORD_BYTES * words / 1e9


def _read_number(path: Path) -> int | None:
    """Return the integer in a one-number kernel file, None when missing, unreadable or 'max'."""
    try:
        text = path.read_text().strip()
    except OSError:
        return None
    return int(text) if text.isdigit() else None


def available_memory_MB() -> float | None:
    """Return the memory available to new allocations (MB, 1e6 bytes): MemAvailable, lowered by a cgroup v2 limit."""
    available = None
    try:
        for line in Path("/proc/meminfo").read_text().splitlines():
            if line.startswith("MemAvailable:"):
                available = int(line.split()[1]) * 1024 / 1e6
    except (OSError, ValueError, IndexError):
        available = None
    limit, used = _read_number(Path("/sys/fs/cgroup/memory.max")), _read_number(Path("/sys/fs/cgroup/memory.current"))
    if limit is not None and used is not None:
        room = max(limit - used, 0) / 1e6
        available = room if available is None else min(available, room)
    return available


def memory_limit_MB(setting_MB: float | None, parallel_jobs: int = 1) -> float | None:
    """Return the memory limit of one DFT calculation (MB): the setting, else a share of the available memory divided
    among ``parallel_jobs``; None when neither is known (no guard)."""
    if setting_MB is not None:
        return float(setting_MB)
    available = available_memory_MB()
    return None if available is None else DEFAULT_MEMORY_SHARE * available / max(1, parallel_jobs)


def pyscf_target_MB(limit_MB: float | None) -> int:
    """Return the memory target handed to PySCF (MB): a share of the limit, at most PySCF's default 4000 MB."""
    if limit_MB is None:
        return PYSCF_DEFAULT_TARGET_MB
    return max(1, int(min(PYSCF_DEFAULT_TARGET_MB, PYSCF_TARGET_SHARE * limit_MB)))


def no_ri_aux_per_basis(basis: str) -> float:
    """Return the auxiliary functions per basis function that stand in without RI for our basis key (a ratio)."""
    return NO_RI_AUX_PER_BASIS_BY_BASIS.get(basis, NO_RI_AUX_PER_BASIS)


def check_memory(name: str, basis: str, n_basis: int, n_aux: int | None, n_atoms: int, task: str, pcm: bool,
                 limit_MB: float | None, setting: str = "dft.memory_limit_MB", basis_key: str | None = None) -> float:
    """Return the peak-memory estimate (GB) of a calculation; raise DftMemoryError naming it when over the limit
    (``basis`` is the label in the message, ``basis_key`` our key, which sets the no-RI stand-in)."""
    estimate_GB = peak_memory_estimate_GB(n_basis, n_aux, n_atoms, task, pcm,
                                          no_ri_aux_per_basis(basis_key or basis.lower()))
    if limit_MB is not None and estimate_GB * 1000.0 > limit_MB:
        aux = f", {n_aux} auxiliary" if n_aux is not None else ""
        raise DftMemoryError(
            f"{name}: DFT {task} not started: its peak-memory estimate is {estimate_GB:.1f} GB ({n_atoms} atoms, "
            f"{basis}, {n_basis} basis functions{aux}{', IEF-PCM' if pcm else ''}) and the limit is "
            f"{limit_MB / 1000.0:.1f} GB; raise {setting} (MB) on a machine with the memory, or choose a smaller "
            "basis or fewer atoms")
    return estimate_GB
