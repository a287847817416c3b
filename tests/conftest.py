"""Shared test set-up: one OpenMP/BLAS thread per process, set before any backend loads."""

from __future__ import annotations

import os
import sys
from pathlib import Path

from elimscan.engines.threads import configure_threads

# test-only engines and job helpers (toyengine.py, toyjobs.py, the plug-in example) live in tests/support/
sys.path.insert(0, str(Path(__file__).resolve().parent / "support"))

configure_threads(int(os.environ.get("ELIMSCAN_TEST_THREADS", "1")))
os.environ.setdefault("MPLBACKEND", "Agg")

import numpy as np  # noqa: E402  (after the thread settings on purpose)
import pytest  # noqa: E402
from ase import Atoms  # noqa: E402

from elimscan.chem.structures import build_molecule  # noqa: E402

SEED = 20261202


def _rank(item) -> int:
    """Return 0 for a slow GFN2-xTB check, 1 for another GFN2-xTB or fuzz test, 2 for the rest."""
    if item.get_closest_marker("slow"):
        return 0
    return 1 if item.get_closest_marker("xtb") or item.get_closest_marker("fuzz") else 2


def pytest_collection_modifyitems(config, items):
    """Under pytest-xdist, hand out first the test files that hold slow checks, so that no worker ends alone with one.

    ``make test`` gives each worker whole files (``--dist loadfile --no-loadscope-reorder``); a file keeps its own
    order, so its module fixtures are computed once. A plain run keeps the file order.
    """
    if not os.environ.get("PYTEST_XDIST_WORKER"):
        return
    rank: dict = {}
    for item in items:
        rank[item.path] = min(rank.get(item.path, 2), _rank(item))
    items.sort(key=lambda item: rank[item.path])  # stable: each file's tests stay together and in order


@pytest.fixture(scope="session")
def gfn2_gas():
    """Return a GFN2-xTB gas-phase engine on the default backend (tblite)."""
    from elimscan.engines.xtb import EngineSettings, XtbEngine

    return XtbEngine(EngineSettings(hamiltonian="GFN2-xTB", backend="tblite", solvent_model="none"))


@pytest.fixture(scope="session")
def embed():
    """Return a function: SMILES -> RDKit-embedded, MMFF-pre-optimised ase.Atoms (Å)."""

    def _embed(smiles: str, seed: int = SEED) -> Atoms:
        return build_molecule(smiles, seed).atoms

    return _embed


@pytest.fixture
def rng() -> np.random.Generator:
    """Return a seeded random generator."""
    return np.random.default_rng(SEED)


def _install_starting_geometry_jitter(amplitude_A: float, seed: int = SEED) -> None:
    """Displace every embedded starting geometry by seeded Gaussian noise of ``amplitude_A`` (Å).

    Only for ``benchmarks/kernel_sweep.py`` (``ELIMSCAN_SWEEP_JITTER_A``): a GFN2-xTB check whose verdict flips
    under a displacement this small is a knife-edge. Replaces ``mol_to_atoms`` wherever a module bound it.
    """
    import importlib
    import pkgutil

    import elimscan
    from elimscan.chem import structures

    original = structures.mol_to_atoms
    noise = np.random.default_rng(seed)

    def jittered(mol, conf_id=-1):
        atoms = original(mol, conf_id)
        atoms.positions = atoms.positions + noise.normal(scale=amplitude_A, size=atoms.positions.shape)
        return atoms

    for info in pkgutil.walk_packages(elimscan.__path__, "elimscan."):
        if info.name.endswith("__main__"):  # importing it would run the command line
            continue
        module = importlib.import_module(info.name)
        for name, value in list(vars(module).items()):
            if value is original:
                setattr(module, name, jittered)


if os.environ.get("ELIMSCAN_SWEEP_JITTER_A"):
    _install_starting_geometry_jitter(float(os.environ["ELIMSCAN_SWEEP_JITTER_A"]))
