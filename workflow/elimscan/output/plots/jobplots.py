"""A job's plots: their names and the figures of one job."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from ase import Atoms
from matplotlib.figure import Figure

from elimscan.output.plots.character import character_figure, character_points
from elimscan.output.plots.newman import newman_figure, newman_inputs, newman_view
from elimscan.output.plots.paths import computed_paths, path_figure
from elimscan.output.plots.products import product_figure, product_fraction_map
from elimscan.output.plots.scans import scan_figure
from elimscan.results.records import JobRecord


def plot_name(job_id: str, kind: str) -> str:
    """Return the output-relative name (no extension) of one plot of a job, e.g. 'plots/<job>-scan'."""
    safe = "".join(c if c.isalnum() or c in "-_." else "_" for c in f"{job_id}-{kind}")
    return f"plots/{safe}"


def job_figures(job: JobRecord, anti_min_deg: float, syn_max_deg: float, window_kcal_mol: float,
                frames: Mapping[str, Sequence[Atoms]]) -> dict[str, Figure]:
    """Return {plot name: figure} for one job: the scans, the product calls (with computed shares when there are
    any), the relaxed E2 paths when any was computed, the saddle-character map when any verified saddle has a
    character and, where frames are given, Newman projections.

    ``frames`` maps a scan's ``xyz_file`` (relative to the output folder) to its frames.
    """
    if job.status != "ok" or job.leaving_group is None:
        return {}
    figures = {plot_name(job.job_id, "scan"): scan_figure(job, anti_min_deg, syn_max_deg, window_kcal_mol),
               plot_name(job.job_id, "products"): product_figure(job.products, product_fraction_map(job.products))}
    if computed_paths(job):
        figures[plot_name(job.job_id, "paths")] = path_figure(job)
    if character_points(job):
        figures[plot_name(job.job_id, "character")] = character_figure(job)
    for beta in job.beta_hydrogens:
        for geometry, target in (("anti", 180.0), ("syn", 0.0)):
            found = newman_inputs(beta, job, frames, target)
            if found is None:
                continue
            atoms, quad, note = found
            view = newman_view(atoms, *quad)
            title = f"{beta.class_id}: nearest to {geometry} ({target:g}\u00b0)"
            figures[plot_name(job.job_id, f"newman-{beta.class_id}-{geometry}")] = newman_figure(
                view, atoms.get_chemical_symbols(), title, note)
    return figures
