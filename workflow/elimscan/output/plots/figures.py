"""Shared figure helpers: the palette, numbers as text, SVG and PNG output, ids of drawn elements.

SVG output is deterministic: fixed hash salt for ids, no date, text kept as text (searchable, and the browser
draws it).
"""

from __future__ import annotations

import io

import matplotlib
from matplotlib.figure import Figure

#: raster resolution of PNG output (dots per inch)
PNG_DPI = 110
#: salt of matplotlib's SVG id hashes, fixed so that rebuilt figures are byte-identical
SVG_HASH_SALT = "elimscan-report"

# our own palette: one colour per beta-H class (cycled)
CLASS_COLOURS = ("#1b4f72", "#b03a2e", "#1e8449", "#7d3c98", "#b9770e", "#2e4053", "#117a65", "#a04000")
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


def element_id(kind: str, class_id: str, approach: str) -> str:
    """Return the gid of a path line or saddle mark, e.g. 'path-C3-H10-anti' (also its SVG id, before prefixing)."""
    safe = "".join(c if c.isalnum() or c in "-_." else "_" for c in class_id)
    return f"{kind}-{safe}-{approach}"
