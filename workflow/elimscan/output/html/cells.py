"""Pieces of HTML every part of the report uses: escaping, numbers as shown, table cells, inline SVG, anchors."""

from __future__ import annotations

import html
import re

from elimscan.output.plots.figures import signed
from elimscan.results.records import JobRecord

#: shown where a class has no anti geometry
DASH = "\u2013"
#: shown where an approach has no free-energy barrier or no saddle character
ABSENT = "\u2014"


def esc(value: object) -> str:
    """Return ``value`` as text escaped for HTML element content and quoted attributes."""
    return html.escape(str(value), quote=True)


def _kcal(value: float | None) -> str:
    return "not reached" if value is None else f"{value:.2f}"


def num_cell(value: float | None) -> str:
    """Return a sortable table cell of an energy in kcal/mol (2 decimals shown, 'not reached' for none)."""
    key = "" if value is None else f"{value:.3f}"
    return f'<td class="num" data-key="{key}">{esc(_kcal(value))}</td>'


def barrier_text(value: float | None) -> str:
    """Return a barrier (kcal/mol) as shown in the report: 2 decimals, typographic minus; '\u2013' for none."""
    return "\u2013" if value is None else signed(value, 2)


def percent_text(fraction: float | None) -> str:
    """Return a share (0-1) as shown in the report, in percent with 1 decimal, e.g. '38.4 %'; '\u2013' for none."""
    return "\u2013" if fraction is None else f"{100 * fraction:.1f} %"


def inline_svg(svg: str, prefix: str) -> str:
    """Return SVG text ready to sit inside HTML: no XML prolog or metadata, every id prefixed with ``prefix``."""
    svg = re.sub(r"<\?xml[^>]*\?>", "", svg)
    svg = re.sub(r"<!DOCTYPE[^>]*>", "", svg)
    svg = re.sub(r"<metadata>.*?</metadata>", "", svg, flags=re.DOTALL)
    svg = re.sub(r"\bid=([\"'])(.*?)\1", lambda m: f'id="{prefix}-{m.group(2)}"', svg)
    svg = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{prefix}-{m.group(1)})", svg)
    svg = re.sub(r"((?:xlink:)?href)=([\"'])#(.*?)\2", lambda m: f'{m.group(1)}="#{prefix}-{m.group(3)}"', svg)
    return svg.strip()


def figure_block(svg: str | None, prefix: str, caption: str, missing: str) -> str:
    """Return an inline SVG figure with its caption (ids prefixed with ``prefix``), or the note ``missing`` without one."""
    if not svg:
        return f'<p class="note">{esc(missing)}</p>'
    return f'<figure>{inline_svg(svg, prefix)}<figcaption>{esc(caption)}</figcaption></figure>'


def anchor(job: JobRecord) -> str:
    """Return the HTML id of a job's section, made of its job id."""
    return "job-" + re.sub(r"[^A-Za-z0-9_.-]", "_", job.job_id)
