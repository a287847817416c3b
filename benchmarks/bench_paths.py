"""Barrier benchmark (``make bench``): one whole job, 2-bromobutane + ethoxide in ALPB(ethanol).

Every beta-H class, anti and syn paths, saddles verified. Prints wall time, total gradients, the share of
wall time spent inside the xTB library and gradients per verified saddle, measured in one run.
"""

from __future__ import annotations

import sys
import time

from elimscan.engines.threads import configure_threads

configure_threads(1)

from elimscan.config import BaseConfig, MethodConfig, RunConfig, SolventConfig, SubstrateConfig  # noqa: E402
from elimscan.engines.xtb import EngineSettings, XtbEngine  # noqa: E402
from elimscan.pipeline.compute import run_config  # noqa: E402


def main() -> int:
    config = RunConfig(method=MethodConfig(solvent=SolventConfig(model="alpb", name="ethanol")),
                       substrates=(SubstrateConfig(name="2-bromobutane", smiles="C[C@H](Br)CC"),),
                       bases=(BaseConfig(name="ethoxide"),))
    engine = XtbEngine(EngineSettings.from_method(config.method))
    started = time.perf_counter()
    outcome = run_config(config, engine)
    wall = time.perf_counter() - started
    paths = [p for job in outcome.paths.values() for p in job.values() if hasattr(p, "saddle")]
    verified = [p for p in paths if p.saddle.verified]
    print("elimscan barrier benchmark: 2-bromobutane + ethoxide, ALPB(ethanol), 1 thread, one run")
    print(f"wall time                     {wall:8.1f} s (target in the issue: 60 s on one core)")
    print(f"xTB gradients                 {engine.stats.misses:8d}")
    print(f"time inside the xTB library   {engine.stats.backend_seconds / wall:8.0%} (target >= 85 %)")
    print(f"paths computed / verified     {len(paths):4d} / {len(verified)}")
    if verified:
        per = sum(p.saddle_gradients for p in verified) / len(verified)
        print(f"gradients per verified saddle {per:8.0f} (Sella refinement + Hessian 6N+1 + both-way relaxation)")
    print(f"gradients per path            {engine.stats.misses / max(len(paths), 1):8.0f} (whole job / paths)")
    # free energies and isotope effects reuse the saddle Hessians; their own cost is the two minimum Hessians
    extra = sum(a.minimum.n_gradients for a in outcome.substrates.values() if hasattr(a, "minimum") and a.minimum) \
        + sum(b.minimum.n_gradients for b in outcome.bases.values() if b.minimum)
    print(f"free-energy/KIE extra cost    {extra / engine.stats.misses:8.1%} of all gradients (target <= 25 %)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
