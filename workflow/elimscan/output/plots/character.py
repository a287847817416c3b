"""The saddle-character map of a job: where each verified E2 saddle sits on the C-H and C-X cleavage axes (0-1)."""

from __future__ import annotations

from matplotlib.figure import Figure

from elimscan.output.plots.figures import CLASS_COLOURS, GREY, element_id
from elimscan.results.records import BetaHydrogenRecord, JobRecord

#: the four corners of the character map: (C-H cleavage, C-X cleavage) -> what sits there, in our words
CHARACTER_CORNERS = (
    (0.0, 0.0, "reactant\n(both bonds intact)"),
    (1.0, 1.0, "alkene + conjugate acid + X\u207b\n(both bonds broken)"),
    (1.0, 0.0, "carbanion intermediate\n(C\u2013H gone, C\u2013X kept)"),
    (0.0, 1.0, "carbocation intermediate\n(C\u2013X gone, C\u2013H kept)"),
)


def character_points(job: JobRecord) -> list[tuple[int, BetaHydrogenRecord, str]]:
    """Return (class position, class, 'anti' | 'syn') of every verified saddle of the job that has a character."""
    found = []
    for n, beta in enumerate(job.beta_hydrogens):
        for name in ("anti", "syn"):
            approach = getattr(beta, name)
            if approach.saddle_verified and approach.saddle_character is not None:
                found.append((n, beta, name))
    return found


def character_figure(job: JobRecord) -> Figure:
    """Return a job's saddle-character map: C-H (x) against C-X cleavage (y), each 1 - Pauling bond order, 0-1."""
    fig = Figure(figsize=(7.6, 5.0))
    ax = fig.add_axes((0.09, 0.11, 0.52, 0.78))
    ax.plot([0.0, 1.0], [0.0, 1.0], color=GREY, lw=0.9, ls=":", zorder=1, gid="character-diagonal")
    for x, y, words in CHARACTER_CORNERS:
        ax.plot([x], [y], ls="none", marker="s", ms=5, color=GREY, zorder=2)
        ax.text(x + (-0.03 if x else 0.03), y + (-0.035 if y else 0.035), words, fontsize=7, color=GREY,
                ha="right" if x else "left", va="top" if y else "bottom", gid=f"corner-{int(x)}{int(y)}")
    for n, beta, name in character_points(job):
        character = getattr(beta, name).saddle_character
        colour = CLASS_COLOURS[n % len(CLASS_COLOURS)]
        # the words go into the legend beside the map: points close together never print over each other
        ax.plot([character.c_h_cleavage], [character.c_x_cleavage], ls="none", marker="o" if name == "anti" else "^",
                ms=8, mec=colour, mfc=colour, zorder=4, gid=element_id("character", beta.class_id, name),
                label=f"{beta.class_id} {name}: {character.label} ({character.c_h_cleavage:.2f}, "
                      f"{character.c_x_cleavage:.2f})")
    ax.set_xlim(-0.05, 1.05)
    ax.set_ylim(-0.05, 1.05)
    ax.set_aspect("equal")
    ax.set_xlabel("C\u03b2\u2013H cleavage (1 \u2212 Pauling bond order)")
    ax.set_ylabel("C\u03b1\u2013X cleavage (1 \u2212 Pauling bond order)")
    ax.grid(True, color="#e5e5e5", lw=0.6, zorder=0)
    if character_points(job):
        ax.legend(loc="upper left", bbox_to_anchor=(1.03, 1.0), fontsize=7, frameon=False, borderaxespad=0,
                  title="saddle: character (C\u2013H, C\u2013X)", title_fontsize=7)
    fig.text(0.09, 0.975, "where each verified E2 saddle sits; dotted: both bonds breaking in step",
             fontsize=7, color=GREY, va="top")
    return fig
