"""The optional DFT tier of a job: single points on its lowest GFN2-xTB saddles (engines.dft does the work), or
with ``dft.saddles: reoptimise`` those saddles re-optimised and verified at DFT (``dftsaddles``).

Called by ``compute.run_config`` when ``dft.enabled``; its result joins the job record in
``assemble.with_dft``. No file I/O here.
"""

from __future__ import annotations

from ase import Atoms

from elimscan.config import RunConfig, default_workers
from elimscan.drivers.complexes import Reactive, SubstitutionReactive
from elimscan.drivers.paths import PathResult
from elimscan.engines.dft import DftJobResult, SaddleCandidate, refine_job
from elimscan.engines.contract import PointLog
from elimscan.pipeline.dftsaddles import reoptimise_job
from elimscan.pipeline.outcome import DETAIL, SUBSTITUTION_KEY, BaseAnalysis, JobPaths, ProgressCallback, SubstrateAnalysis
from elimscan.results.records import ErrorInfo


def _top_atoms(path: PathResult) -> Atoms:
    """Return the geometry behind a path's barrier: the verified saddle, else the relaxed-path maximum."""
    return path.saddle.atoms if path.saddle.verified else path.points[path.maximum_index].atoms


def path_reactive(analysis: SubstrateAnalysis, base: BaseAnalysis, key: tuple[str, str]) -> Reactive | SubstitutionReactive:
    """Return the key atoms (indices in the complex, substrate first) of the path ``key`` of one job."""
    lg = analysis.substrate.leaving_group
    basic = len(analysis.ensemble.lowest.atoms) + base.info.basic_atom_index
    if key == SUBSTITUTION_KEY:
        return SubstitutionReactive(basic, lg.c_alpha_index, lg.leaving_atom_index)
    b = next(c.beta_class for c in analysis.classes if c.beta_class.class_id == key[0])
    return Reactive(b.representative_index, b.beta_carbon_index, lg.c_alpha_index, lg.leaving_atom_index, basic)


def _candidate(key: tuple[str, str], path: PathResult, product: str, degeneracy: int) -> SaddleCandidate:
    """Return a path's top as a DFT candidate, with the GFN2-xTB Hessian when it is a verified saddle."""
    hessian = path.saddle.hessian_eV_A2 if path.saddle.verified else None
    kind = "sn2" if key == SUBSTITUTION_KEY else "e2"
    return SaddleCandidate(key, product, degeneracy, path.top_hartree, _top_atoms(path), kind=kind, hessian_eV_A2=hessian)


def job_dft(analysis: SubstrateAnalysis, base: BaseAnalysis, paths: JobPaths, config: RunConfig,
            on_progress: ProgressCallback | None = None, replay: PointLog | None = None) -> DftJobResult:
    """Return the DFT tier of one job: single points on (or, with ``dft.saddles: reoptimise``, DFT re-optimisations
    of) the lowest GFN2-xTB saddles of each product and of SN2 (paths that are no barrier,
    ``PathResult.counts_as_barrier``, left out); single points found in the job's ``replay`` log are served from
    it."""
    degeneracy = {c.beta_class.class_id: c.beta_class.degeneracy for c in analysis.classes}
    products = {(c.beta_class.class_id, a): (c.beta_class.anti_product if a == "anti" else c.beta_class.syn_product).smiles
                for c in analysis.classes for a in ("anti", "syn")}
    candidates = [_candidate(key, p, products[key], degeneracy[key[0]]) if key != SUBSTITUTION_KEY
                  else _candidate(key, p, "SN2", 1)
                  for key, p in paths.items() if not isinstance(p, ErrorInfo) and p.counts_as_barrier]
    base_charge, base_mult = base.info.formal_charge, base.relaxed.record.multiplicity or 1
    reactants = (("substrate", analysis.ensemble.lowest.atoms, analysis.charge, analysis.multiplicity),
                 ("base", base.relaxed.atoms, base_charge, base_mult))
    report = None if on_progress is None else (lambda message: on_progress(DETAIL, DETAIL, message))
    job = f"{analysis.name} + {base.relaxed.record.name}"
    charge, multiplicity = analysis.charge + base_charge, analysis.multiplicity + base_mult - 1
    charges = {f"substrate '{analysis.name}'": analysis.charge, f"base '{base.relaxed.record.name}'": base_charge}
    parallel = parallel_jobs(config)
    if config.dft.saddles == "reoptimise":
        reactives = {c.key: path_reactive(analysis, base, c.key) for c in candidates}
        return reoptimise_job(job, candidates, reactives, charge, multiplicity, charges, config, reactants, report,
                              parallel, replay)
    return refine_job(job, candidates, charge, multiplicity, charges, config.dft, config.method.solvent,
                      config.method.temperature_K, reactants, config.threads.per_process, report, parallel, replay)


def parallel_jobs(config: RunConfig) -> int:
    """Return how many jobs may compute at once on this machine as the config tells (local workers; else 1): the
    default DFT memory limit is shared among them, the same in ``run`` and ``batch`` so a job fits alike in both."""
    executor = config.executor
    return (executor.workers or default_workers()) if executor.kind == "local" else 1
