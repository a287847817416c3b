"""The relaxed E2 paths of a job with their saddles (kcal/mol vs driven coordinate in Å); whether a job has barriers."""

from __future__ import annotations

from matplotlib.figure import Figure

from elimscan.output.plots.figures import CLASS_COLOURS, GREY, element_id
from elimscan.results.records import ApproachRecord, BetaHydrogenRecord, JobRecord

APPROACH_STYLES = {"anti": "-", "syn": "--"}


def computed_paths(job: JobRecord) -> list[tuple[int, BetaHydrogenRecord, str]]:
    """Return (class position, class, 'anti' | 'syn') of every approach of the job with a computed path (points)."""
    found = []
    for n, beta in enumerate(job.beta_hydrogens):
        for name in ("anti", "syn"):
            approach = getattr(beta, name)
            if approach.path_status == "ok" and approach.path:
                found.append((n, beta, name))
    return found


def has_barriers(job: JobRecord) -> bool:
    """Return True when any anti or syn approach of the job carries a computed barrier."""
    return any(getattr(a, "barrier_kcal_mol", None) is not None for b in job.beta_hydrogens for a in (b.anti, b.syn))


def saddle_point(approach: ApproachRecord) -> tuple[float, float]:
    """Return (driven coordinate in Å, energy in kcal/mol) of a path's saddle mark: the path maximum's coordinate.

    The energy is the verified saddle's barrier, or for an unverified one the relaxed-path estimate (the maximum).
    """
    top = max(approach.path, key=lambda p: p.relative_energy_kcal_mol)
    if approach.barrier_source == "verified saddle" and approach.barrier_kcal_mol is not None:
        return top.coordinate_A, approach.barrier_kcal_mol
    if approach.relaxed_path_estimate_kcal_mol is not None:
        return top.coordinate_A, approach.relaxed_path_estimate_kcal_mol
    return top.coordinate_A, top.relative_energy_kcal_mol


def path_figure(job: JobRecord) -> Figure:
    """Return every relaxed E2 path of a job on one axis (kcal/mol vs driven coordinate in Å), saddles marked.

    One line per computed path (colour: the class, as in the scan plot; solid anti, dashed syn); one mark per
    path at its saddle: filled when the saddle was verified, open when the value is the relaxed-path maximum.
    """
    fig = Figure(figsize=(7.2, 4.1))
    ax = fig.add_axes((0.09, 0.12, 0.60, 0.78))
    ax.axhline(0.0, color=GREY, lw=0.9, ls=":", zorder=1, label="substrate + free base (zero)")
    marks: set[bool] = set()
    labelled: set[str] = set()
    for n, beta, name in computed_paths(job):
        approach = getattr(beta, name)
        colour = CLASS_COLOURS[n % len(CLASS_COLOURS)]
        label = None if beta.class_id in labelled else beta.class_id
        labelled.add(beta.class_id)
        ax.plot([p.coordinate_A for p in approach.path], [p.relative_energy_kcal_mol for p in approach.path],
                ls=APPROACH_STYLES[name], color=colour, lw=1.4, marker="o", ms=2.4, label=label, zorder=3,
                gid=element_id("path", beta.class_id, name))
        x, y = saddle_point(approach)
        verified = approach.barrier_source == "verified saddle"
        marks.add(verified)
        ax.plot([x], [y], ls="none", marker="D", ms=7, mew=1.5, mec=colour, mfc=colour if verified else "white",
                zorder=5, gid=element_id("saddle", beta.class_id, name))
    for name, style in APPROACH_STYLES.items():
        ax.plot([], [], ls=style, color=GREY, lw=1.4, label=f"{name} path")
    if True in marks:
        ax.plot([], [], ls="none", marker="D", ms=7, mew=1.5, mec=GREY, mfc=GREY, label="verified saddle")
    if False in marks:
        ax.plot([], [], ls="none", marker="D", ms=7, mew=1.5, mec=GREY, mfc="white",
                label="unverified (path maximum)")
    ax.set_xlabel("driven coordinate d(C\u03b2\u2013H) \u2212 d(B\u2013H) + d(C\u03b1\u2013X) (\u00c5)")
    ax.set_ylabel("\u0394E relative to substrate + free base (kcal/mol)")
    ax.grid(True, color="#e5e5e5", lw=0.6, zorder=0)
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=7.5, frameon=False, borderaxespad=0)
    fig.text(0.09, 0.975, "GFN2-xTB electronic energy along each relaxed path (not a free energy); "
             "compare paths, not absolute heights", fontsize=7, color=GREY, va="top")
    return fig
