"""Figures of a run: Newman projections, H-C-C-X scans, relaxed E2 paths, saddle character and product calls (no file I/O).

Every figure is a ``matplotlib.figure.Figure`` built directly (no pyplot, no global figure state) and
turned into bytes or text by :func:`figure_png` / :func:`figure_svg`; the caller writes them. SVG output
is deterministic: fixed hash salt for ids, no date, text kept as text (searchable, and the browser draws
it). Angles in degrees on (-180, 180], relative energies in kcal/mol, lengths in Å.
"""

from __future__ import annotations

import io
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import matplotlib
import matplotlib.patches
import numpy as np
from ase import Atoms
from ase.data import covalent_radii
from matplotlib.figure import Figure
from matplotlib.transforms import blended_transform_factory

from elimscan.geometry import dihedral_deg, wrap_degrees
from elimscan.results.documents import SeriesRecord
from elimscan.results.records import ApproachRecord, BetaHydrogenRecord, JobRecord, ProductRecord
from elimscan.output.text import r_squared_text
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K

#: two atoms are bonded when closer than this times the sum of their covalent radii (ase.data)
BOND_FACTOR = 1.25
#: raster resolution of PNG output (dots per inch)
PNG_DPI = 110
#: salt of matplotlib's SVG id hashes, fixed so that rebuilt figures are byte-identical
SVG_HASH_SALT = "elimscan-report"

# our own palette: one colour per beta-H class (cycled), one per rule call
CLASS_COLOURS = ("#1b4f72", "#b03a2e", "#1e8449", "#7d3c98", "#b9770e", "#2e4053", "#117a65", "#a04000")
CALL_COLOURS = {"major": "#1e8449", "minor": "#5d8aa8", "forbidden": "#b03a2e"}
ANTI_SHADE = "#d6eaf8"
SYN_SHADE = "#fdebd0"
MARK_H = "#1b4f72"
MARK_X = "#1e8449"
GREY = "#555555"
MINUS = "\u2212"
#: kcal/mol every barrier may move behind a product's fraction_range, and the verdict's close-call margin: the
#: defaults of analysis.fraction_ranges and analysis.compare_verdicts (results.json does not carry them)
BARRIER_SHIFT_KCAL_MOL = 1.0


def signed(value: float, digits: int = 1) -> str:
    """Return a number as text with a typographic minus sign (U+2212) and ``digits`` decimals."""
    text = f"{value:.{digits}f}"
    if text.lstrip("-").strip("0.") == "":  # -0.0 reads as 0.0
        text = text.lstrip("-")
    return text.replace("-", MINUS)


def figure_svg(fig: Figure) -> str:
    """Return the figure as SVG text (no XML date, fixed id salt, text as text): byte-identical on rebuild."""
    buffer = io.StringIO()
    with matplotlib.rc_context({"svg.hashsalt": SVG_HASH_SALT, "svg.fonttype": "none"}):
        fig.savefig(buffer, format="svg", metadata={"Date": None})
    return buffer.getvalue()


def figure_png(fig: Figure, dpi: int = PNG_DPI) -> bytes:
    """Return the figure as PNG bytes at ``dpi`` dots per inch."""
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=dpi, metadata={"Software": None})
    return buffer.getvalue()


# --- Newman projections --------------------------------------------------------------------------


@dataclass(frozen=True)
class Spoke:
    """One bond seen down the Cβ→Cα axis: atom index, element, label and screen angle (degrees clockwise from up)."""

    index: int
    symbol: str
    label: str
    angle_deg: float


@dataclass(frozen=True)
class NewmanView:
    """A Newman projection along Cβ→Cα: front (Cβ) and back (Cα) bonds and the H-Cβ-Cα-X dihedral (degrees)."""

    h_index: int
    beta_index: int
    alpha_index: int
    leaving_index: int
    dihedral_deg: float
    front: tuple[Spoke, ...]
    back: tuple[Spoke, ...]


def bonded_neighbours(atoms: Atoms, index: int) -> list[int]:
    """Return the indices of atoms bonded to ``index``, judged from distances and covalent radii (Å)."""
    positions = atoms.get_positions()
    numbers = atoms.get_atomic_numbers()
    found = []
    for j in range(len(atoms)):
        if j == index:
            continue
        limit = BOND_FACTOR * (covalent_radii[numbers[index]] + covalent_radii[numbers[j]])
        if np.linalg.norm(positions[j] - positions[index]) < limit:
            found.append(j)
    return found


def newman_view(atoms: Atoms, h_index: int, beta_index: int, alpha_index: int, leaving_index: int) -> NewmanView:
    """Return the Newman projection along Cβ→Cα of one geometry, the marked H pointing straight up.

    The viewer looks from Cβ (front) toward Cα (back); a screen angle is measured clockwise from up, so
    the back bond to X sits at the H-Cβ-Cα-X dihedral (IUPAC sign: clockwise positive) from the H.
    """
    positions = atoms.get_positions()
    symbols = atoms.get_chemical_symbols()
    axis = positions[alpha_index] - positions[beta_index]
    axis = axis / np.linalg.norm(axis)

    def projected(origin: int, target: int) -> np.ndarray:
        v = positions[target] - positions[origin]
        return v - np.dot(v, axis) * axis

    up = projected(beta_index, h_index)
    up = up / np.linalg.norm(up)
    right = np.cross(axis, up)  # screen x, so that (right, up, toward the viewer) is right-handed

    def spokes(origin: int, exclude: int) -> tuple[Spoke, ...]:
        found = []
        for j in bonded_neighbours(atoms, origin):
            if j == exclude:
                continue
            v = projected(origin, j)
            angle = float(np.degrees(np.arctan2(np.dot(v, right), np.dot(v, up))))
            found.append(Spoke(j, symbols[j], f"{symbols[j]}{j}", wrap_degrees(angle)))
        return tuple(sorted(found, key=lambda s: (s.angle_deg % 360.0, s.index)))

    phi = dihedral_deg(positions, h_index, beta_index, alpha_index, leaving_index)
    return NewmanView(h_index, beta_index, alpha_index, leaving_index, phi,
                      spokes(beta_index, alpha_index), spokes(alpha_index, beta_index))


def dihedral_label(view: NewmanView, symbols: Sequence[str]) -> str:
    """Return the printed dihedral line of a Newman projection, e.g. 'H10–C3–C1–Cl2 = −174.2°' (degrees)."""
    names = [f"{symbols[i]}{i}" for i in (view.h_index, view.beta_index, view.alpha_index, view.leaving_index)]
    dash = "\u2013"
    return f"{dash.join(names)} = {signed(view.dihedral_deg)}\u00b0"


def newman_figure(view: NewmanView, symbols: Sequence[str], title: str, note: str = "") -> Figure:
    """Return a Newman projection figure: front bonds from the centre, back bonds from the circle, H and X marked."""
    fig = Figure(figsize=(3.0, 3.4))
    ax = fig.add_axes((0.02, 0.12, 0.96, 0.76))
    ax.set_aspect("equal")
    ax.set_xlim(-2.3, 2.3)
    ax.set_ylim(-2.3, 2.3)
    ax.axis("off")
    radius, front_reach, back_reach, gap_deg = 1.0, 1.8, 1.5, 24.0
    ax.add_patch(matplotlib.patches.Circle((0, 0), radius, fill=False, lw=1.6, ec="#222222"))

    def direction(angle_deg: float) -> np.ndarray:
        a = np.radians(angle_deg)
        return np.array([np.sin(a), np.cos(a)])

    def colour(index: int) -> str:
        return MARK_H if index == view.h_index else MARK_X if index == view.leaving_index else "#222222"

    def label_angle(spoke: Spoke) -> float:
        # a back label near a front bond (eclipsed) moves sideways; the bond itself stays where it is
        if spoke in view.front or not view.front:
            return spoke.angle_deg
        nearest = min((wrap_degrees(spoke.angle_deg - f.angle_deg) for f in view.front), key=abs)
        if abs(nearest) >= gap_deg:
            return spoke.angle_deg
        return spoke.angle_deg + (gap_deg - abs(nearest)) * (1.0 if nearest >= 0 else -1.0)

    # back bonds start at the circle, front bonds at the centre (drawn on top)
    drawn = [(s, radius, back_reach, 2) for s in view.back] + [(s, 0.0, front_reach, 3) for s in view.front]
    for spoke, start, reach, layer in drawn:
        d = direction(spoke.angle_deg)
        marked = spoke.index in (view.h_index, view.leaving_index)
        ax.plot([d[0] * start, d[0] * reach], [d[1] * start, d[1] * reach], color=colour(spoke.index),
                lw=2.6 if marked else 1.6, solid_capstyle="round", zorder=layer)
        ax.text(*(direction(label_angle(spoke)) * (reach + 0.3)), spoke.label, ha="center", va="center",
                fontsize=8.5, color=colour(spoke.index), fontweight="bold" if marked else "normal")
    ax.plot([0], [0], marker="o", ms=4, color="#222222", zorder=4)
    fig.text(0.5, 0.955, title, ha="center", va="top", fontsize=9.5, fontweight="bold")
    fig.text(0.5, 0.075, dihedral_label(view, symbols), ha="center", va="center", fontsize=9, color="#111111")
    if note:
        fig.text(0.5, 0.022, note, ha="center", va="center", fontsize=6.5, color=GREY)
    return fig


def closest_frame(frames: Sequence[Atoms], quad: tuple[int, int, int, int], target_deg: float) -> int:
    """Return the index of the frame whose H-C-C-X dihedral (from its coordinates) is closest to ``target_deg``."""
    if not frames:
        raise ValueError("no frames to choose from")

    def distance(k: int) -> tuple[float, int]:
        phi = dihedral_deg(frames[k].get_positions(), *quad)
        return (abs(wrap_degrees(phi - target_deg)), k)

    return min(range(len(frames)), key=distance)


# --- scans ---------------------------------------------------------------------------------------


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


# --- relaxed E2 paths ----------------------------------------------------------------------------

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


def element_id(kind: str, class_id: str, approach: str) -> str:
    """Return the gid of a path line or saddle mark, e.g. 'path-C3-H10-anti' (also its SVG id, before prefixing)."""
    safe = "".join(c if c.isalnum() or c in "-_." else "_" for c in class_id)
    return f"{kind}-{safe}-{approach}"


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


def product_fraction_map(products: Sequence[ProductRecord]) -> dict[str, tuple[float, float, float]]:
    """Return {product SMILES: (fraction, low, high)} (each 0-1) for the products with a computed share."""
    found = {}
    for p in products:
        if p.fraction is not None:
            low, high = p.fraction_range if p.fraction_range is not None else (p.fraction, p.fraction)
            found[p.smiles] = (p.fraction, low, high)
    return found


# --- saddle character (More O'Ferrall-Jencks-style map) -----------------------------------------

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
    fig = Figure(figsize=(5.4, 5.0))
    ax = fig.add_axes((0.13, 0.11, 0.72, 0.78))
    ax.plot([0.0, 1.0], [0.0, 1.0], color=GREY, lw=0.9, ls=":", zorder=1, gid="character-diagonal")
    for x, y, words in CHARACTER_CORNERS:
        ax.plot([x], [y], ls="none", marker="s", ms=5, color=GREY, zorder=2)
        ax.text(x + (-0.03 if x else 0.03), y + (-0.035 if y else 0.035), words, fontsize=7, color=GREY,
                ha="right" if x else "left", va="top" if y else "bottom", gid=f"corner-{int(x)}{int(y)}")
    for n, beta, name in character_points(job):
        character = getattr(beta, name).saddle_character
        colour = CLASS_COLOURS[n % len(CLASS_COLOURS)]
        ax.plot([character.c_h_cleavage], [character.c_x_cleavage], ls="none", marker="o" if name == "anti" else "^",
                ms=8, mec=colour, mfc=colour, zorder=4, gid=element_id("character", beta.class_id, name))
        ax.annotate(f"{beta.class_id} {name}\n{character.label}", (character.c_h_cleavage, character.c_x_cleavage),
                    xytext=(6, -4), textcoords="offset points", fontsize=7.5, color=colour, va="top")
    ax.set_xlim(-0.05, 1.05)
    ax.set_ylim(-0.05, 1.05)
    ax.set_aspect("equal")
    ax.set_xlabel("C\u03b2\u2013H cleavage (1 \u2212 Pauling bond order)")
    ax.set_ylabel("C\u03b1\u2013X cleavage (1 \u2212 Pauling bond order)")
    ax.grid(True, color="#e5e5e5", lw=0.6, zorder=0)
    fig.text(0.13, 0.975, "where each verified E2 saddle sits; dotted: both bonds breaking in step",
             fontsize=7, color=GREY, va="top")
    return fig


# --- substituent series (Hammett plot) -----------------------------------------------------------------

#: energy kind of a series -> the barrier symbol on its right axis
SERIES_BARRIER_WORDS = {"electronic": "\u0394E\u2021", "free": "\u0394G\u2021"}


def rho_text(rho: float) -> str:
    """Return a Hammett rho as shown in plots and the report: explicit sign, 2 decimals, typographic minus."""
    return ("+" if round(rho, 2) > 0 else "") + signed(rho, 2)


def series_plot_name(series: SeriesRecord) -> str:
    """Return the output-relative name (no extension) of a series plot, e.g. 'plots/series-<name>[-<solvent>]'."""
    label = series.name + (f"-{series.solvent.model}-{series.solvent.name or 'none'}" if series.solvent is not None else "")
    safe = "".join(c if c.isalnum() or c in "-_." else "_" for c in f"series-{label}")
    return f"plots/{safe}"


def series_figure(series: SeriesRecord) -> Figure:
    """Return a Hammett plot: log10(k/k0) against sigma with the fitted line (rho, r^2 in the legend); the right
    axis gives the same points as barriers in kcal/mol."""
    fig = Figure(figsize=(6.0, 4.4), layout="constrained")
    ax = fig.add_subplot()
    ok = [p for p in series.points if p.status == "ok"]
    missing = [p for p in series.points if p.status != "ok"]
    word = SERIES_BARRIER_WORDS[series.energy_used]
    ax.axhline(0.0, color="#dddddd", lw=0.8, zorder=0)
    ax.axvline(0.0, color="#dddddd", lw=0.8, zorder=0)
    ax.plot([p.sigma for p in ok], [p.log10_k_rel for p in ok], ls="none", marker="o", ms=7, color=CLASS_COLOURS[0],
            zorder=3, label=f"members ({word} of the lowest E2 path)", gid="series-points")
    sigmas = [p.sigma for p in series.points]
    low, high = min(sigmas), max(sigmas)
    for p in ok:  # labels point into the plot: right of points in the left half, left of the others
        left_half = p.sigma <= (low + high) / 2
        ax.annotate(p.substrate, (p.sigma, p.log10_k_rel), xytext=(6 if left_half else -6, 4), textcoords="offset points",
                    fontsize=7.5, color=CLASS_COLOURS[0], ha="left" if left_half else "right")
    pad = 0.08 * (high - low) if high > low else 0.5
    if series.rho is not None:
        xs = np.array([low - pad, high + pad])
        ax.plot(xs, series.rho * xs + series.intercept, color=CLASS_COLOURS[1], lw=1.4, zorder=2, gid="series-fit",
                label=f"fit: \u03c1 = {rho_text(series.rho)}, r\u00b2 = {r_squared_text(series.r_squared)} (n = {series.n_fitted})")
    for p in missing:
        ax.axvline(p.sigma, color=CLASS_COLOURS[2], lw=0.9, ls="--", zorder=1)
        ax.annotate(f"{p.substrate}: missing", (p.sigma, 0.02), xycoords=("data", "axes fraction"), rotation=90,
                    fontsize=7, color=CLASS_COLOURS[2], ha="right", va="bottom")
    ax.set_xlim(low - 2 * pad, high + 2 * pad)
    ax.set_xlabel("substituent constant \u03c3 (dimensionless)")
    ax.set_ylabel(f"log\u2081\u2080(k/k\u2080), k\u2080: {series.reference_substrate or 'none'}")
    reference = next((p.barrier_kcal_mol for p in ok if p.substrate == series.reference_substrate), None)
    if reference is not None:
        rt_ln10 = BOLTZMANN_KCAL_MOL_PER_K * series.temperature_K * np.log(10.0)
        right = ax.secondary_yaxis("right", functions=(lambda y: reference - y * rt_ln10,
                                                       lambda b: (reference - b) / rt_ln10))
        right.set_ylabel(f"{word} (kcal/mol)")
    ax.legend(fontsize=7.5, loc="best", frameon=False)
    ax.grid(True, color="#eeeeee", lw=0.6, zorder=0)
    title = f"{series.name}: {series.base}, {series.temperature_K:g} K"
    if series.solvent is not None:
        title += f", {series.solvent.model} {series.solvent.name or ''}".rstrip()
    ax.set_title(title, fontsize=9)
    if series.note:
        fig.text(0.01, 0.005, series.note, fontsize=6.5, color=GREY, va="bottom")
    return fig


def series_figures(series: Sequence[SeriesRecord]) -> dict[str, Figure]:
    """Return {plot name: Hammett plot} for every series with at least one member that has a barrier."""
    return {series_plot_name(s): series_figure(s) for s in series if any(p.status == "ok" for p in s.points)}


# --- product calls -------------------------------------------------------------------------------

CALL_LEVELS = ("forbidden", "minor", "major")


def product_figure(products: Sequence[ProductRecord],
                   fractions: Mapping[str, tuple[float, float, float]] | None = None) -> Figure:
    """Return a bar chart of the rule's call on each product, beside computed shares (%) when ``fractions`` are given.

    ``fractions`` maps a product SMILES to (fraction, low, high), each 0-1; only the products it names get a
    bar and a range, the others read "not computed". Without it the chart has one panel.
    """
    n = max(len(products), 1)
    fig = Figure(figsize=(4.6 + (2.4 if fractions else 0.0), 1.0 + 0.38 * n), layout="constrained")
    if fractions:
        ax, ax2 = fig.subplots(1, 2, sharey=True, gridspec_kw={"width_ratios": (1.0, 1.0)})
    else:
        ax, ax2 = fig.subplots(), None
    ys = np.arange(len(products))[::-1]
    for y, product in zip(ys, products):
        level = CALL_LEVELS.index(product.rule_call)
        colour = CALL_COLOURS[product.rule_call]
        ax.barh(y, level, height=0.6, color=colour, edgecolor=colour)
        ax.text(level + 0.05, y, product.rule_call, va="center", ha="left", fontsize=8, color=colour,
                fontweight="bold" if product.rule_call == "major" else "normal")
    ax.set_yticks(ys)
    ax.set_yticklabels([f"{p.smiles}  ({p.substitution})" for p in products], fontsize=8)
    ax.set_xlim(0, 2.9)
    ax.set_ylim(-0.6, len(products) - 0.4)
    ax.set_xticks(range(len(CALL_LEVELS)))
    ax.set_xticklabels(CALL_LEVELS, fontsize=8)
    ax.set_title("the geometric rule's call", fontsize=9)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    if ax2 is not None:
        for y, product in zip(ys, products):
            if product.smiles not in fractions:
                ax2.text(1.0, y, "not computed", va="center", fontsize=7, color=GREY)
                continue
            value, low, high = fractions[product.smiles]
            ax2.barh(y, 100 * value, height=0.6, color=CALL_COLOURS[product.rule_call], alpha=0.55)
            ax2.errorbar(100 * value, y, xerr=[[100 * max(value - low, 0.0)], [100 * max(high - value, 0.0)]],
                         fmt="none", ecolor="#222222", capsize=3, lw=1)
            ax2.text(min(100 * high, 100.0) + 1.5, y, f"{100 * value:.0f} %", va="center", ha="left", fontsize=7)
        ax2.set_xlim(0, 112)
        ax2.set_xticks(range(0, 101, 25))
        ax2.set_xlabel(f"share (%); range: barriers \u00b1{BARRIER_SHIFT_KCAL_MOL:g} kcal/mol", fontsize=8)
        ax2.tick_params(axis="y", labelleft=False)
        ax2.set_title("computed", fontsize=9)
        for side in ("top", "right"):
            ax2.spines[side].set_visible(False)
    return fig


# --- a job's figures -----------------------------------------------------------------------------


def plot_name(job_id: str, kind: str) -> str:
    """Return the output-relative name (no extension) of one plot of a job, e.g. 'plots/<job>-scan'."""
    safe = "".join(c if c.isalnum() or c in "-_." else "_" for c in f"{job_id}-{kind}")
    return f"plots/{safe}"


def newman_inputs(beta: BetaHydrogenRecord, job: JobRecord, frames: Mapping[str, Sequence[Atoms]],
                  target_deg: float) -> tuple[Atoms, tuple[int, int, int, int], str] | None:
    """Return (frame, (H, Cβ, Cα, X) indices, note) of the class's scan frame closest to ``target_deg``, or None."""
    lg = job.leaving_group
    quad = (beta.representative_index, beta.beta_carbon_index, lg.c_alpha_index, lg.leaving_atom_index)
    candidates = []
    for scan in beta.scans:
        for k, atoms in enumerate(frames.get(scan.xyz_file or "", ())):
            candidates.append((atoms, scan.xyz_file, k))
    if not candidates:
        return None
    best = closest_frame([c[0] for c in candidates], quad, target_deg)
    atoms, file_name, k = candidates[best]
    energy = atoms.info.get("relative_energy_kcal_mol")
    status = atoms.info.get("status", "")
    where = f"{file_name.rsplit('/', 1)[-1]} frame {k}"
    if isinstance(energy, (int, float)):
        where += f", {signed(float(energy), 2)} kcal/mol"
    if status and status != "ok":
        where += f" ({status})"
    return atoms, quad, where


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
