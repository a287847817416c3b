"""The geometric rule's call on each alkene of a job, beside the computed shares (%) when there are any."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np
from matplotlib.figure import Figure

from elimscan.chem.alkenenames import alkene_description
from elimscan.output.plots.figures import BARRIER_SHIFT_KCAL_MOL, GREY
from elimscan.results.records import ProductRecord

# our own colours, one per rule call
CALL_COLOURS = {"major": "#1e8449", "minor": "#5d8aa8", "syn only": "#b9770e", "blocked": "#b03a2e",
                "forbidden": "#b03a2e"}

#: the calls from least to most favoured (a bar's length); 'forbidden' is how results before schema 0.7.1 said
#: 'syn only or blocked'
CALL_LEVELS = ("blocked", "syn only", "minor", "major")
_LEVEL_OF = {**{c: n for n, c in enumerate(CALL_LEVELS)}, "forbidden": 0}


def product_fraction_map(products: Sequence[ProductRecord]) -> dict[str, tuple[float, float, float]]:
    """Return {product SMILES: (fraction, low, high)} (each 0-1) for the products with a computed share."""
    found = {}
    for p in products:
        if p.fraction is not None:
            low, high = p.fraction_range if p.fraction_range is not None else (p.fraction, p.fraction)
            found[p.smiles] = (p.fraction, low, high)
    return found


def product_figure(products: Sequence[ProductRecord],
                   fractions: Mapping[str, tuple[float, float, float]] | None = None) -> Figure:
    """Return a bar chart of the rule's call on each product, beside computed shares (%) when ``fractions`` are given.

    ``fractions`` maps a product SMILES to (fraction, low, high), each 0-1; only the products it names get a
    bar and a range, the others read "not computed". Without it the chart has one panel.
    """
    n = max(len(products), 1)
    fig = Figure(figsize=(4.6 + (2.4 if fractions else 0.0), 1.0 + 0.5 * n), layout="constrained")
    if fractions:
        ax, ax2 = fig.subplots(1, 2, sharey=True, gridspec_kw={"width_ratios": (1.0, 1.0)})
    else:
        ax, ax2 = fig.subplots(), None
    ys = np.arange(len(products))[::-1]
    for y, product in zip(ys, products):
        level = _LEVEL_OF[product.rule_call]
        colour = CALL_COLOURS[product.rule_call]
        ax.barh(y, level, height=0.6, color=colour, edgecolor=colour)
        ax.text(level + 0.05, y, product.rule_call, va="center", ha="left", fontsize=8, color=colour,
                fontweight="bold" if product.rule_call == "major" else "normal")
    ax.set_yticks(ys)
    ax.set_yticklabels([f"{p.smiles}\n{alkene_description(p.smiles)}" for p in products], fontsize=7)
    ax.set_xlim(0, len(CALL_LEVELS) - 0.1)
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
