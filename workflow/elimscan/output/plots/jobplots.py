"""A job's plots: the one table of their kinds with when each is drawn and shown, their names, the figures.

Every place that asks which plots a job has reads :data:`JOB_PLOT_KINDS`: :func:`job_figures` (the PNG files
and the report's inline SVG), the report's check whether it must draw plots itself, and the report's job
section (which headings it has). Newman projections stand apart: one per beta-H class and geometry, drawn
only where scan trajectories are given, never from results.json alone.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass

from ase import Atoms
from matplotlib.figure import Figure

from elimscan.output.plots.character import character_figure, character_points
from elimscan.output.plots.newman import newman_figure, newman_inputs, newman_view
from elimscan.output.plots.paths import computed_paths, has_barriers, path_figure
from elimscan.output.plots.products import product_figure, product_fraction_map
from elimscan.output.plots.profile import profile_figure, profile_lines
from elimscan.output.plots.scans import scan_figure
from elimscan.results.records import JobRecord
from elimscan.config.names import safe_name

#: the target H-C-C-X dihedral (degrees) of each geometry a class gets a Newman projection for
NEWMAN_TARGETS_DEG = {"anti": 180.0, "syn": 0.0}


@dataclass(frozen=True)
class JobPlotKind:
    """One kind of job plot: its name, when it is drawn, when the report's job section shows it, how it is drawn.

    ``draw`` takes the job, the rule's anti and syn limits (degrees) and its energy window (kcal/mol).
    """

    kind: str
    drawn: Callable[[JobRecord], bool]
    shown: Callable[[JobRecord], bool]
    draw: Callable[[JobRecord, float, float, float], Figure]


def _always(job: JobRecord) -> bool:
    return True


#: a finished job's plots besides the Newman projections, in drawing order. ``drawn``: the figure exists
#: (from results.json alone); ``shown``: the report's job section has its heading, with a note where the figure
#: is missing (barriers of a result written before the path points were kept show a path heading, no plot)
JOB_PLOT_KINDS = (
    JobPlotKind("scan", _always, _always, scan_figure),
    JobPlotKind("products", _always, _always,
                lambda job, *_: product_figure(job.products, product_fraction_map(job.products))),
    JobPlotKind("paths", lambda job: bool(computed_paths(job)), has_barriers, lambda job, *_: path_figure(job)),
    JobPlotKind("profile", lambda job: bool(profile_lines(job)), lambda job: bool(profile_lines(job)),
                lambda job, *_: profile_figure(job)),
    JobPlotKind("character", lambda job: bool(character_points(job)),
                lambda job: has_barriers(job) and bool(character_points(job)), lambda job, *_: character_figure(job)),
)


def plot_name(job_id: str, kind: str) -> str:
    """Return the output-relative name (no extension) of one plot of a job, e.g. 'plots/<job>-scan'."""
    return f"plots/{safe_name(f'{job_id}-{kind}')}"


def newman_plot_name(job_id: str, class_id: str, geometry: str) -> str:
    """Return the output-relative name (no extension) of a class's Newman projection ('anti' or 'syn' geometry)."""
    return plot_name(job_id, f"newman-{class_id}-{geometry}")


def _finished(job: JobRecord) -> bool:
    return job.status == "ok" and job.leaving_group is not None


def drawn_kinds(job: JobRecord) -> tuple[str, ...]:
    """Return the kinds of plot drawn for a job from results.json alone (Newman projections aside), in order."""
    if not _finished(job):
        return ()
    return tuple(k.kind for k in JOB_PLOT_KINDS if k.drawn(job))


def shown_kinds(job: JobRecord) -> tuple[str, ...]:
    """Return the kinds of plot whose heading the report's section of a finished job shows, in table order."""
    return tuple(k.kind for k in JOB_PLOT_KINDS if k.shown(job))


def job_figures(job: JobRecord, anti_min_deg: float, syn_max_deg: float, window_kcal_mol: float,
                frames: Mapping[str, Sequence[Atoms]]) -> dict[str, Figure]:
    """Return {plot name: figure} for one job: every kind of :data:`JOB_PLOT_KINDS` drawn for it and, where
    frames are given, Newman projections.

    ``frames`` maps a scan's ``xyz_file`` (relative to the output folder) to its frames.
    """
    if not _finished(job):
        return {}
    figures = {plot_name(job.job_id, k.kind): k.draw(job, anti_min_deg, syn_max_deg, window_kcal_mol)
               for k in JOB_PLOT_KINDS if k.drawn(job)}
    for beta in job.beta_hydrogens:
        for geometry, target in NEWMAN_TARGETS_DEG.items():
            found = newman_inputs(beta, job, frames, target)
            if found is None:
                continue
            atoms, quad, note = found
            view = newman_view(atoms, *quad)
            title = f"{beta.class_id}: nearest to {geometry} ({target:g}\u00b0)"
            figures[newman_plot_name(job.job_id, beta.class_id, geometry)] = newman_figure(
                view, atoms.get_chemical_symbols(), title, note)
    return figures
