"""The energy profile of a job: reactants, complex, saddle and product side of every E2 path and the SN2 path (kcal/mol)."""

from __future__ import annotations

from dataclasses import dataclass

from matplotlib.figure import Figure

from elimscan.output.plots.figures import CLASS_COLOURS, GREY, element_id, signed
from elimscan.results.records import JobRecord

#: the stages of a profile, left to right
PROFILE_STAGES = ("substrate + free base", "complex", "saddle", "product side")
#: colour of the SN2 path (E2 paths take their class colour)
SN2_COLOUR = "#222222"


@dataclass(frozen=True)
class ProfileLine:
    """One path's levels in kcal/mol above substrate + free base (None: not known), its label and how it is drawn."""

    label: str
    gid: str
    levels_kcal_mol: tuple[float | None, float | None, float | None, float | None]
    colour: str
    verified: bool
    reaches_products: bool


def profile_lines(job: JobRecord) -> list[ProfileLine]:
    """Return the profile of every E2 path with a barrier and of the SN2 path with one (kcal/mol, zero: reactants)."""
    lines = []
    for n, beta in enumerate(job.beta_hydrogens):
        for name in ("anti", "syn"):
            a = getattr(beta, name)
            if a.path_status != "ok" or a.barrier_kcal_mol is None:
                continue
            end = a.path[-1].relative_energy_kcal_mol if a.path else None
            lines.append(ProfileLine(f"E2 {beta.class_id} {name}", element_id("profile", beta.class_id, name),
                                     (0.0, a.complex_energy_kcal_mol, a.barrier_kcal_mol, end),
                                     CLASS_COLOURS[n % len(CLASS_COLOURS)], a.saddle_verified,
                                     a.reaches_products is not False))
    sub = job.substitution
    if sub is not None and sub.path_status == "ok" and sub.barrier_kcal_mol is not None:
        lines.append(ProfileLine("SN2 backside", element_id("profile", "substitution", "backside"),
                                 (0.0, sub.complex_energy_kcal_mol, sub.barrier_kcal_mol, sub.path_end_energy_kcal_mol),
                                 SN2_COLOUR, sub.saddle_verified, sub.reaches_products is not False))
    return lines


def profile_figure(job: JobRecord) -> Figure:
    """Return the energy profile of a job: one line per path through its known stages (kcal/mol above reactants).

    Each stage is a short level; levels of one path are joined by a thin line. Solid: verified saddle; dashed:
    unverified (the level is the relaxed-path maximum); grey dotted: the path does not reach its products.
    """
    lines = profile_lines(job)
    fig = Figure(figsize=(7.6, 4.2))
    ax = fig.add_axes((0.09, 0.14, 0.56, 0.76))
    half = 0.28
    for k, line in enumerate(lines):
        colour = line.colour if line.reaches_products else GREY
        style = "-" if line.verified else "--"
        if not line.reaches_products:
            style = ":"
        known = [(x, y) for x, y in enumerate(line.levels_kcal_mol) if y is not None]
        for x, y in known:
            ax.plot([x - half, x + half], [y, y], color=colour, lw=2.4, solid_capstyle="butt", zorder=3)
        ax.plot([x for x, _ in known], [y for _, y in known], color=colour, lw=0.9, ls=style, zorder=2,
                label=line.label + ("" if line.verified else " (unverified)")
                + ("" if line.reaches_products else " (products not reached)"), gid=line.gid)
        saddle = line.levels_kcal_mol[2]
        if saddle is not None:
            ax.annotate(signed(saddle, 1), (2 + half, saddle), xytext=(3, 2 - 7 * (k % 3)), textcoords="offset points",
                        fontsize=6.5, color=colour, va="center")
    ax.set_xticks(range(len(PROFILE_STAGES)))
    ax.set_xticklabels([s.replace(" + ", "\n+ ") for s in PROFILE_STAGES], fontsize=7.5)
    ax.set_xlim(-0.5, len(PROFILE_STAGES) - 0.35)
    ax.set_ylabel("\u0394E above substrate + free base (kcal/mol)")
    ax.grid(True, axis="y", color="#e5e5e5", lw=0.6, zorder=0)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    if lines:
        ax.legend(loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=7, frameon=False, borderaxespad=0)
    else:
        ax.text(0.5, 0.5, "no path with a barrier", transform=ax.transAxes, ha="center", color=GREY)
    fig.text(0.09, 0.975, "GFN2-xTB electronic energies (not free energies); product side: the last point of the relaxed "
             "path, the products still together in one complex", fontsize=6.5, color=GREY, va="top")
    return fig
