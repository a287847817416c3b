"""The words and cells of a substrate's comparison across bases, solvents and base models (terminal and report).

``comparison_rows`` turns an ``analysis.comparison.SubstrateComparison`` into labelled rows of cells, each cell
a text and a kind (the report's CSS class: a verdict state or a score); ``comparison_text`` lays them out for
the terminal, ``output/html/runsections.comparison_section`` as a table. Nothing is cut: columns are as wide
as their widest cell.
"""

from __future__ import annotations

from dataclasses import dataclass

from elimscan.analysis.comparison import SubstrateComparison
from elimscan.analysis.headline import SN2, UNDECIDED
from elimscan.chem.alkenenames import alkene_description
from elimscan.output.basemodelwords import model_words
from elimscan.output.headline import STATE_WORDS, gap_symbol, ratio_text

#: the scores as shown (undecided counts as not right, in its own word)
SCORE_WORDS = {"right": "right", "wrong": "wrong", "undecided": "undecided (not right)",
               "not computed": "not computed", "not scored": "not scored"}


@dataclass(frozen=True)
class Cell:
    """One cell: its text and its kind ('' or a state / score word the report colours)."""

    text: str
    kind: str = ""


@dataclass(frozen=True)
class Row:
    """One row: a key (machine word), a label and one cell per job column."""

    key: str
    label: str
    cells: tuple[Cell, ...]


def _percent(fraction: float | None) -> str:
    return "-" if fraction is None else f"{100 * fraction:.1f} %"


def header_rows(comparison: SubstrateComparison) -> list[Row]:
    """Return the heading rows: base, base model and solvent of each job."""
    cols = comparison.columns
    return [Row("base", "base", tuple(Cell(c.base) for c in cols)),
            Row("model", "base model", tuple(Cell(model_words(c.base_model, where=False) or "-") for c in cols)),
            Row("solvent", "solvent", tuple(Cell(c.solvent) for c in cols))]


def comparison_rows(comparison: SubstrateComparison, unicode: bool = True) -> list[Row]:
    """Return the body rows: share of each alkene (with range and observed share), the gap, E2 : SN2, the verdict,
    the rule's major alkene, and where the config holds observations, the observed major, scores and sources."""
    cols = comparison.columns
    to = "\u2013" if unicode else "-"
    rows = []
    for smiles in comparison.alkenes:
        cells = []
        for c in cols:
            alkene = next((a for a in c.headline.alkenes if a.smiles == smiles), None)
            text = "-" if alkene is None or alkene.share is None else _percent(alkene.share)
            if alkene is not None and alkene.low is not None and len([a for a in c.headline.alkenes if a.share]) > 1:
                text += f" ({100 * alkene.low:.0f}{to}{100 * alkene.high:.0f})"
            if smiles in c.observed_percent:
                text += f"; exp. {c.observed_percent[smiles]:g} %"
            cells.append(Cell(text))
        rows.append(Row("alkene", f"{smiles} ({alkene_description(smiles)})", tuple(cells)))
    gaps = []
    for c in cols:
        h = c.headline
        if not h.ok:
            gaps.append(Cell("job failed"))
        elif h.gap_kcal_mol is None:
            gaps.append(Cell("one alkene" if len(h.alkenes) == 1 else "-"))
        else:
            ratio = f", {ratio_text(h.implied_ratio)}" if h.implied_ratio is not None else ""
            gaps.append(Cell(f"{gap_symbol(h, unicode)} {h.gap_kcal_mol:.2f}{ratio}"))
    rows.append(Row("gap", "major to closest rival (kcal/mol)", tuple(gaps)))
    splits = []
    for c in cols:
        ch = c.headline.channel
        if not c.headline.ok:
            splits.append(Cell("job failed"))
        elif ch is None:
            splits.append(Cell("not computed"))
        elif ch.main is None:
            splits.append(Cell(f"not decided ({ch.why_none})"))
        else:
            flag = " (close)" if ch.close else " SN2 main" if ch.main == SN2 else ""
            splits.append(Cell(f"{_percent(ch.e2_fraction)} : {_percent(ch.sn2_fraction)}{flag}"))
    rows.append(Row("split", "E2 : SN2", tuple(splits)))
    rows.append(Row("verdict", "rule against barriers", tuple(
        Cell(STATE_WORDS[c.headline.state] + (f" ({c.headline.why_undecided})" if c.headline.state == UNDECIDED else ""),
             c.headline.state) for c in cols)))
    rows.append(Row("rule", "rule's major alkene", tuple(Cell(c.headline.rule_major or "none") for c in cols)))
    if any(c.experiment is not None for c in cols):
        rows += _experiment_rows(comparison)
    return rows


def _experiment_rows(comparison: SubstrateComparison) -> list[Row]:
    """Return the rows of the observations: major product, E2 share, the two scores and the source."""
    cols = comparison.columns
    none = Cell("-", "none")

    def each(make) -> tuple[Cell, ...]:
        return tuple(none if c.experiment is None else make(c) for c in cols)

    return [
        Row("observed-major", "observed major", each(lambda c: Cell(c.experiment.expected_major() or "-"))),
        Row("observed-e2", "observed E2 (% of E2 + SN2)", each(
            lambda c: Cell("-" if c.experiment.e2_percent is None else f"{c.experiment.e2_percent:g} %"))),
        Row("score", "computed against experiment", each(
            lambda c: Cell(SCORE_WORDS[c.score.outcome] + (f": {'; '.join(c.score.reasons)}" if c.score.reasons else ""),
                           "score-" + c.score.outcome.replace(" ", "-")))),
        Row("rule-score", "rule against experiment", each(
            lambda c: Cell(SCORE_WORDS[c.score.rule_outcome], "score-" + c.score.rule_outcome.replace(" ", "-")))),
        Row("source", "source", each(lambda c: Cell(c.experiment.source + (
            f" ({c.experiment.conditions})" if c.experiment.conditions else "")))),
    ]


def score_line(comparison: SubstrateComparison) -> str | None:
    """Return the count of scores over the jobs with an observation (computed and rule apart), or None without one."""
    scored = [c.score for c in comparison.columns if c.score is not None]
    if not scored:
        return None
    computed = [s.outcome for s in scored]
    rule = [s.rule_outcome for s in scored if s.rule_outcome != "not scored"]
    text = (f"against experiment: computed right in {computed.count('right')} of {len(scored)} jobs "
            f"({computed.count('wrong')} wrong, {computed.count('undecided')} undecided and counted as not right, "
            f"{len(scored) - computed.count('right') - computed.count('wrong') - computed.count('undecided')} not "
            "computed or scored)")
    if rule:
        text += f"; the rule right in {rule.count('right')} of {len(rule)}"
    return text + "."


def _brief(rows: list[Row], comparison: SubstrateComparison) -> tuple[list[Row], list[str]]:
    """Return the rows with long cells (scores' reasons, sources) shortened, and those texts as lines below."""
    notes, kept = [], []
    for row in rows:
        if row.key == "source":
            notes += [f"  source ({c.base}): {cell.text}" for c, cell in zip(comparison.columns, row.cells)
                      if c.experiment is not None]
            continue
        if row.key == "score":
            notes += [f"  why ({c.base}): {'; '.join(c.score.reasons)}" for c in comparison.columns
                      if c.score is not None and c.score.reasons]
            row = Row(row.key, row.label, tuple(Cell(cell.text.split(":")[0], cell.kind) for cell in row.cells))
        kept.append(row)
    return kept, notes


def comparison_text(comparison: SubstrateComparison) -> list[str]:
    """Return the terminal lines of one substrate's comparison (ASCII symbols, nothing cut: long texts go below)."""
    rows, notes = _brief(header_rows(comparison) + comparison_rows(comparison, unicode=False), comparison)
    label_width = max(len(r.label) for r in rows)
    widths = [max(len(r.cells[k].text) for r in rows) for k in range(len(comparison.columns))]
    lines = [f"compared: {comparison.substrate} ({len(comparison.columns)} jobs; shares are % of the alkenes, "
             "range under +-1 kcal/mol)"]
    for n, row in enumerate(rows):
        lines.append("  " + row.label.ljust(label_width) + "".join(
            "  " + cell.text.ljust(width) for cell, width in zip(row.cells, widths)).rstrip())
        if n == 2:
            lines.append("  " + "-" * (label_width + sum(w + 2 for w in widths)))
    score = score_line(comparison)
    if score:
        lines.append(f"  {score}")
    return lines + notes
