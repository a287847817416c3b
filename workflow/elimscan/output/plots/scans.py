"""The H-C-C-X dihedral scans of a job on one axis, with the rule's anti and syn windows (kcal/mol vs degrees)."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from matplotlib.figure import Figure
from matplotlib.transforms import blended_transform_factory

from elimscan.geometry import wrap_degrees
from elimscan.output.plots.figures import CLASS_COLOURS, GREY, signed
from elimscan.results.records import JobRecord

# our own shades of the rule's windows
ANTI_SHADE = "#d6eaf8"
SYN_SHADE = "#fdebd0"


def _unwrapped(angles_deg: Sequence[float]) -> np.ndarray:
    """Return the angles made continuous along a path (steps taken the short way round), degrees."""
    out = [float(angles_deg[0])]
    for a in angles_deg[1:]:
        out.append(out[-1] + wrap_degrees(float(a) - out[-1]))
    return np.array(out)


def scan_figure(job: JobRecord, anti_min_deg: float, syn_max_deg: float, window_kcal_mol: float) -> Figure:
    """Return the H-C-C-X scans of all beta-H classes of one job on one axis (kcal/mol vs degrees)."""
    fig = Figure(figsize=(7.2, 3.9))
    ax = fig.add_axes((0.09, 0.13, 0.62, 0.78))
    ax.axvspan(-180, -anti_min_deg, color=ANTI_SHADE, lw=0, zorder=0, label=f"anti: |\u03c6| \u2265 {anti_min_deg:g}\u00b0")
    ax.axvspan(anti_min_deg, 180, color=ANTI_SHADE, lw=0, zorder=0)
    ax.axvspan(-syn_max_deg, syn_max_deg, color=SYN_SHADE, lw=0, zorder=0, label=f"syn: |\u03c6| \u2264 {syn_max_deg:g}\u00b0")
    ax.axhline(window_kcal_mol, color=GREY, lw=0.9, ls=":", zorder=1, label=f"rule window {window_kcal_mol:g} kcal/mol")
    top = window_kcal_mol
    marks: set[str] = set()
    blend = blended_transform_factory(ax.transData, ax.transAxes)
    for n, beta in enumerate(job.beta_hydrogens):
        colour = CLASS_COLOURS[n % len(CLASS_COLOURS)]
        for k, scan in enumerate(beta.scans):
            label = beta.class_id if k == 0 else None
            style = ("-", "--", "-.", ":")[k % 4]
            # lines join consecutive ok points along the scan path, unwrapped and drawn again 360° either side
            run: list[tuple[float, float]] = []
            runs = []
            for p in scan.points:
                if p.status == "ok" and p.relative_energy_kcal_mol is not None:
                    run.append((p.dihedral_deg, p.relative_energy_kcal_mol))
                else:
                    runs.append(run)
                    run = []
            runs.append(run)
            for run in (r for r in runs if r):
                x = _unwrapped([a for a, _ in run])
                y = [e for _, e in run]
                top = max(top, max(y))
                for shift in (-360.0, 0.0, 360.0):
                    ax.plot(x + shift, y, ls=style, color=colour, lw=1.5, marker="o", ms=2.8, label=label, zorder=3)
                    label = None
            caps = [p for p in scan.points if p.status == "above_cap" and p.relative_energy_kcal_mol is not None]
            if caps:
                top = max(top, max(p.relative_energy_kcal_mol for p in caps))
                ax.plot([p.dihedral_deg for p in caps], [p.relative_energy_kcal_mol for p in caps], ls="none",
                        marker="x", ms=7, mew=1.8, color=colour, zorder=4)
                marks.add("cap")
            fails = [p for p in scan.points if p.status == "failed" or p.relative_energy_kcal_mol is None]
            if fails:
                ax.plot([p.dihedral_deg for p in fails], [0.96] * len(fails), ls="none", marker="v", ms=7,
                        mfc="white", mec=colour, mew=1.5, transform=blend, clip_on=False, zorder=4)
                marks.add("failed")
    if "cap" in marks:  # legend entries in neutral grey: the colour of a mark is its class's
        ax.plot([], [], ls="none", marker="x", ms=7, mew=1.8, color=GREY, label="point above the scan cap")
    if "failed" in marks:
        ax.plot([], [], ls="none", marker="v", ms=7, mfc="white", mec=GREY, mew=1.5, label="failed point (no energy)")
    if any(len(b.scans) > 1 for b in job.beta_hydrogens):
        ax.plot([], [], ls="--", color=GREY, lw=1.5, label="second scan of a class")
    ax.set_xlim(-180, 180)
    ax.set_ylim(min(0.0, ax.get_ylim()[0]), top * 1.08 + 0.5)
    ax.set_xticks(range(-180, 181, 60))
    ax.set_xticklabels([signed(t, 0) for t in range(-180, 181, 60)])
    ax.set_xlabel("H\u2013C\u03b2\u2013C\u03b1\u2013X dihedral \u03c6 (degrees)")
    ax.set_ylabel("relative energy (kcal/mol)")
    ax.grid(True, color="#e5e5e5", lw=0.6, zorder=0)
    ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=7.5, frameon=False, borderaxespad=0)
    fig.text(0.09, 0.975, "GFN2-xTB electronic energy above the substrate's global minimum; everything but \u03c6 relaxed",
             fontsize=7, color=GREY, va="top")
    return fig
