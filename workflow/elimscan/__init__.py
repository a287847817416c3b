"""elimscan: GFN2-xTB barriers for every beta hydrogen of an E2 elimination, beside the geometric rule.

The public API, for a notebook or a script (names load on first use, so importing elimscan stays cheap and
the thread settings can still be made before a backend loads)::

    from elimscan import parse_config, make_engine, compute_run
    config = parse_config(open("configs/demo.yaml").read())
    result, files = compute_run(config, make_engine(config.method))   # result: a RunResult, files: bytes
    for job in result.jobs:
        print(job.substrate, job.base, [(p.smiles, p.fraction) for p in job.products])

Layers, lowest first (each a sub-package with its own module map): foundation modules here (errors, units,
geometry, solvents, versions, atomicio), ``config``, ``chem``, ``results``, ``analysis``, ``engines``,
``drivers``, ``pipeline``, ``output``, ``batch``, and ``cli``; ``tests/test_layers.py`` keeps imports
pointing down.
"""

from __future__ import annotations

import importlib

__version__ = "0.7.0"

#: public name -> module that defines it
_API = {
    "parse_config": "elimscan.config",
    "RunConfig": "elimscan.config",
    "SubstrateConfig": "elimscan.config",
    "BaseConfig": "elimscan.config",
    "MethodConfig": "elimscan.config",
    "perceive_substrate": "elimscan.chem.perception",
    "Engine": "elimscan.engines.contract",
    "make_engine": "elimscan.engines.factory",
    "XtbEngine": "elimscan.engines.xtb",
    "EngineSettings": "elimscan.engines.xtb",
    "run_config": "elimscan.pipeline.compute",
    "compute_run": "elimscan.pipeline.jobs",
    "run_job": "elimscan.pipeline.jobs",
    "RunResult": "elimscan.results.documents",
    "JobRecord": "elimscan.results.records",
    "ElimscanError": "elimscan.errors",
}

__all__ = ["__version__", *_API]


def __getattr__(name: str):
    """Return a public name of the API, importing its module on first use."""
    if name in _API:
        value = getattr(importlib.import_module(_API[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'elimscan' has no attribute '{name}'")


def __dir__() -> list[str]:
    """Return the public names (for tab completion)."""
    return sorted(__all__)
