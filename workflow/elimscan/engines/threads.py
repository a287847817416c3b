"""Thread settings for the xTB backends and BLAS: applied before those libraries load."""

from __future__ import annotations

import os
from collections.abc import MutableMapping

#: Environment variables read by OpenMP and the BLAS libraries when they load.
THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


def configure_threads(per_process: int = 1, environ: MutableMapping[str, str] | None = None) -> dict[str, str]:
    """Return the thread variables set to ``per_process`` in ``environ`` (default os.environ).

    Call before xtb, tblite or numpy's BLAS load: afterwards OpenMP ignores a change.
    OMP_STACKSIZE is raised too, since the xTB Fortran code needs a large stack.
    """
    env = os.environ if environ is None else environ
    values = {name: str(per_process) for name in THREAD_VARIABLES}
    values["OMP_STACKSIZE"] = env.get("OMP_STACKSIZE", "1G")
    env.update(values)
    return values
