"""SN2 cost benchmark (``make bench``): the backside-substitution path beside the E2 paths of one job.

Default job: 2-bromobutane + ethoxide in ALPB(ethanol), every beta-H class, anti and syn paths, saddles
verified (the job of bench_paths.py). Prints the gradients and wall time of the E2 paths and of the SN2
path, and their ratio (the issue's target: SN2 adds at most 30 % to the E2 paths), measured in one run.
``python benchmarks/bench_substitution.py SMILES BASE`` runs another substrate and built-in base.
"""

from __future__ import annotations

import sys
import time

from elimscan.engines.threads import configure_threads

configure_threads(1)

from elimscan.chem.bases import describe_base  # noqa: E402
from elimscan.config import BaseConfig, MethodConfig, RunConfig, SolventConfig, SubstrateConfig  # noqa: E402
from elimscan.engines.xtb import EngineSettings, XtbEngine  # noqa: E402
from elimscan.pipeline.compute import analyze_substrate, compute_job_paths, relax_molecule  # noqa: E402
from elimscan.pipeline.outcome import DETAIL, SUBSTITUTION_KEY, BaseAnalysis  # noqa: E402

#: the progress message compute_job_paths sends just before the SN2 path (it is computed after every E2 path)
SN2_MESSAGE = "backside substitution (SN2) path"


def main(argv: list[str]) -> int:
    smiles, base_name = (argv[1], argv[2]) if len(argv) > 2 else ("C[C@H](Br)CC", "ethoxide")
    config = RunConfig(method=MethodConfig(solvent=SolventConfig(model="alpb", name="ethanol")),
                       substrates=(SubstrateConfig(name="substrate", smiles=smiles),), bases=(BaseConfig(name=base_name),))
    engine = XtbEngine(EngineSettings.from_method(config.method))
    base_cfg = config.bases[0]
    analysis = analyze_substrate(config.substrates[0], config, engine)
    relaxed = relax_molecule(base_cfg.name, "base", base_cfg.smiles, None, 1, engine, config.optimizer, config.seed)
    base = BaseAnalysis(relaxed, describe_base(base_cfg.smiles))
    marks: list[tuple[float, int]] = []

    def progress(done: int, total: int, message: str) -> None:
        if done == DETAIL and SN2_MESSAGE in message:
            marks.append((time.perf_counter(), engine.stats.misses))

    start, start_gradients = time.perf_counter(), engine.stats.misses
    paths = compute_job_paths(analysis, base, config, engine, progress)
    end, end_gradients = time.perf_counter(), engine.stats.misses
    if len(marks) != 1 or SUBSTITUTION_KEY not in paths:
        print(f"error: the SN2 path was not computed or not announced ('{SN2_MESSAGE}')", file=sys.stderr)
        return 1
    (sn2_start, sn2_start_gradients), = marks
    e2 = {key: p for key, p in paths.items() if key != SUBSTITUTION_KEY}
    sn2 = paths[SUBSTITUTION_KEY]
    e2_seconds, sn2_seconds = sn2_start - start, end - sn2_start
    e2_gradients, sn2_gradients = sn2_start_gradients - start_gradients, end_gradients - sn2_start_gradients
    e2_verified = sum(1 for p in e2.values() if hasattr(p, "saddle") and p.saddle.verified)
    print(f"elimscan SN2 cost benchmark: {smiles} + {base_name}, ALPB(ethanol), 1 thread, one run")
    print(f"E2 paths computed / verified      {len(e2):4d} / {e2_verified}")
    print(f"SN2 saddle                        {'verified' if getattr(sn2, 'saddle', None) and sn2.saddle.verified else 'not verified or failed'}")
    print(f"E2 paths:  gradients {e2_gradients:7d}   wall {e2_seconds:8.1f} s")
    print(f"SN2 path:  gradients {sn2_gradients:7d}   wall {sn2_seconds:8.1f} s")
    print(f"SN2 / E2   gradients {sn2_gradients / max(e2_gradients, 1):7.1%}   wall {sn2_seconds / max(e2_seconds, 1e-9):8.1%}"
          "   (target in the issue: <= 30 %)")
    if hasattr(sn2, "n_gradients"):
        print(f"SN2 / E2 by the paths' own gradient counts: "
              f"{sn2.n_gradients / max(sum(p.n_gradients for p in e2.values() if hasattr(p, 'n_gradients')), 1):.1%}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
