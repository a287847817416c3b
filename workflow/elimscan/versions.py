"""Installed versions of the libraries elimscan relies on, read from package metadata (no backend is loaded).

One place for every lookup: the batch job key, the provenance of result documents, ``elimscan info``
and the method label all take their versions from here.
"""

from __future__ import annotations

import importlib.metadata
import platform

from elimscan import __version__

#: the Python distribution of each xTB backend
BACKEND_DISTRIBUTIONS = {"tblite": "tblite", "xtb": "xtb"}
#: libraries whose version can change a job's numbers (beside the backend): they enter the batch job key
NUMERIC_LIBRARIES = ("rdkit", "ase", "numpy", "scipy", "sella")
#: the optional DFT tier's libraries (extra 'dft')
DFT_LIBRARIES = ("pyscf", "pyscf-dispersion", "basis-set-exchange")
#: further libraries named by ``elimscan info``
OTHER_LIBRARIES = ("pydantic", "dask", "distributed")


def installed_version(distribution: str, missing: str = "not installed") -> str:
    """Return the installed version of a Python distribution, or ``missing``."""
    try:
        return importlib.metadata.version(distribution)
    except importlib.metadata.PackageNotFoundError:
        return missing


def backend_version(backend: str) -> str:
    """Return the installed version of an xTB backend's Python package, or 'not installed'."""
    return installed_version(BACKEND_DISTRIBUTIONS.get(backend, backend))


def numeric_versions(backend: str, dft: bool = False, basis_data: bool = False) -> dict[str, str]:
    """Return {distribution: version} of elimscan, the backend and every library that can change a job's numbers
    (PySCF too when the DFT tier is on; basis-set-exchange too when ``basis_data``: the tier's basis comes from it)."""
    versions = {"elimscan": __version__, BACKEND_DISTRIBUTIONS.get(backend, backend): backend_version(backend)}
    versions.update({dist: installed_version(dist) for dist in NUMERIC_LIBRARIES})
    if dft:
        versions["pyscf"] = installed_version("pyscf")
    if dft and basis_data:
        versions["basis-set-exchange"] = installed_version("basis-set-exchange")
    return versions


def environment_versions() -> dict[str, str]:
    """Return {name: version} of Python and every library elimscan relies on, optional ones marked as such."""
    absent = "absent (optional: the DFT tier; pip install 'elimscan[dft]')"
    versions = {"elimscan": __version__, "python": platform.python_version()}
    for dist in ("rdkit", "ase", "numpy", "scipy", *BACKEND_DISTRIBUTIONS.values(), "sella", *OTHER_LIBRARIES):
        versions[dist] = installed_version(dist)
    versions.update({dist: installed_version(dist, absent) for dist in DFT_LIBRARIES})
    return versions
