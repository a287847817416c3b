"""The optional DFT tier of a job: single points on its lowest GFN2-xTB saddles (engines.dft does the work).

Called by ``compute.run_config`` when ``dft.enabled``; its result joins the job record in
``assemble.with_dft``. No file I/O here.
"""

from __future__ import annotations

from ase import Atoms

from elimscan.config import RunConfig
from elimscan.drivers.paths import PathResult
from elimscan.engines.dft import DftJobResult, SaddleCandidate, refine_job
from elimscan.pipeline.outcome import DETAIL, SUBSTITUTION_KEY, BaseAnalysis, JobPaths, ProgressCallback, SubstrateAnalysis
from elimscan.results.records import ErrorInfo


def _top_atoms(path: PathResult) -> Atoms:
    """Return the geometry behind a path's barrier: the verified saddle, else the relaxed-path maximum."""
    return path.saddle.atoms if path.saddle.verified else path.points[path.maximum_index].atoms


def job_dft(analysis: SubstrateAnalysis, base: BaseAnalysis, paths: JobPaths, config: RunConfig,
            on_progress: ProgressCallback | None = None) -> DftJobResult:
    """Return the DFT tier of one job: single points on the lowest GFN2-xTB saddles of each product and of SN2
    (paths that are no barrier, ``PathResult.counts_as_barrier``, left out)."""
    degeneracy = {c.beta_class.class_id: c.beta_class.degeneracy for c in analysis.classes}
    products = {(c.beta_class.class_id, a): (c.beta_class.anti_product if a == "anti" else c.beta_class.syn_product).smiles
                for c in analysis.classes for a in ("anti", "syn")}
    candidates = [SaddleCandidate(key, products[key], degeneracy[key[0]], p.top_hartree, _top_atoms(p))
                  if key != SUBSTITUTION_KEY else SaddleCandidate(key, "SN2", 1, p.top_hartree, _top_atoms(p), kind="sn2")
                  for key, p in paths.items() if not isinstance(p, ErrorInfo) and p.counts_as_barrier]
    base_charge, base_mult = base.info.formal_charge, base.relaxed.record.multiplicity or 1
    reactants = (("substrate", analysis.ensemble.lowest.atoms, analysis.charge, analysis.multiplicity),
                 ("base", base.relaxed.atoms, base_charge, base_mult))
    report = None if on_progress is None else (lambda message: on_progress(DETAIL, DETAIL, message))
    return refine_job(f"{analysis.name} + {base.relaxed.record.name}", candidates,
                      analysis.charge + base_charge, analysis.multiplicity + base_mult - 1,
                      {f"substrate '{analysis.name}'": analysis.charge, f"base '{base.relaxed.record.name}'": base_charge},
                      config.dft, config.method.solvent, config.method.temperature_K, reactants,
                      config.threads.per_process, report)
