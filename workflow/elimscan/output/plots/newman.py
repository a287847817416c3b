"""Newman projections: one geometry seen down the Cβ→Cα bond, the marked H up and X in colour (degrees, Å)."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import matplotlib.patches
import numpy as np
from ase import Atoms
from ase.data import covalent_radii
from matplotlib.figure import Figure

from elimscan.geometry import covalent_neighbours, dihedral_deg, wrap_degrees
from elimscan.output.plots.figures import GREY, signed
from elimscan.results.records import BetaHydrogenRecord, JobRecord

#: two atoms are bonded when closer than this times the sum of their covalent radii (ase.data)
BOND_FACTOR = 1.25
# our own colours of the marked H and X
MARK_H = "#1b4f72"
MARK_X = "#1e8449"


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
    return covalent_neighbours(atoms.get_positions(), covalent_radii[atoms.get_atomic_numbers()], index, BOND_FACTOR)


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
