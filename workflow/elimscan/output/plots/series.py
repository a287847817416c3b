"""Hammett plots of substituent series: log10(k/k0) against sigma, the fitted line, barriers on the right axis."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from matplotlib.figure import Figure

from elimscan.output.plots.figures import CLASS_COLOURS, GREY, signed
from elimscan.output.text import r_squared_text
from elimscan.results.documents import SeriesRecord
from elimscan.units import BOLTZMANN_KCAL_MOL_PER_K
from elimscan.config.names import safe_name

#: energy kind of a series -> the barrier symbol on its right axis
SERIES_BARRIER_WORDS = {"electronic": "\u0394E\u2021", "free": "\u0394G\u2021"}


def rho_text(rho: float) -> str:
    """Return a Hammett rho as shown in plots and the report: explicit sign, 2 decimals, typographic minus."""
    return ("+" if round(rho, 2) > 0 else "") + signed(rho, 2)


def series_plot_name(series: SeriesRecord) -> str:
    """Return the output-relative name (no extension) of a series plot, e.g. 'plots/series-<name>[-<solvent>]'."""
    label = series.name + (f"-{series.solvent.model}-{series.solvent.name or 'none'}" if series.solvent is not None else "")
    return f"plots/{safe_name(f'series-{label}')}"


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
