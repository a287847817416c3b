"""The words of a job's headline, for the terminal summary and the report (plain text; the HTML escapes it).

``analysis.headline.job_headline`` gives the numbers; here they become sentences: the main channel (E2 against
SN2), the alkene mix with its ranges, the verdict in three states with why, the gap ΔΔE‡ or ΔΔG‡ with the ratio
it implies, what decided the rule's major alkene, and the paths left out for not reaching their products. ``unicode=False`` writes dE, ddG and '-'
for the terminal (as the rest of the summary does); ``name`` turns a product SMILES into what is shown.
"""

from __future__ import annotations

from collections.abc import Callable

from elimscan.analysis import headline as hl
from elimscan.analysis import rulebasis as rb

#: the verdict's word as shown (badge in the report, first word in the terminal)
STATE_WORDS = {hl.AGREE: "AGREE", hl.DISAGREE: "DISAGREE", hl.UNDECIDED: "UNDECIDED"}
#: a ratio above this is shown as 'more than ... : 1'
RATIO_SHOWN_UP_TO = 1000.0


def _symbols(unicode: bool) -> dict[str, str]:
    return ({"dd_e": "\u0394\u0394E\u2021", "dd_g": "\u0394\u0394G\u2021", "to": "\u2013"} if unicode
            else {"dd_e": "ddE", "dd_g": "ddG", "to": "-"})


def _percent(fraction: float) -> str:
    return f"{100 * fraction:.1f} %"


def _plain(smiles: str) -> str:
    return smiles


def gap_symbol(headline: hl.Headline, unicode: bool = True) -> str:
    """Return the name of the headline's gap: ΔΔG‡ when the mix uses free energies, else ΔΔE‡ (ddG / ddE in ASCII)."""
    return _symbols(unicode)["dd_g" if headline.energy_used == "free" else "dd_e"]


def ratio_text(ratio: float) -> str:
    """Return a product ratio major : other as shown ('9.0 : 1', '120 : 1', 'more than 1000 : 1', '1 : 2.5')."""
    if ratio < 1.0:
        return f"1 : {1.0 / ratio:.1f}" if 1.0 / ratio < 10 else f"1 : {1.0 / ratio:.0f}"
    if ratio > RATIO_SHOWN_UP_TO:
        return f"more than {RATIO_SHOWN_UP_TO:.0f} : 1"
    return f"{ratio:.1f} : 1" if ratio < 10 else f"{ratio:.0f} : 1"


def channel_sentence(h: hl.Headline, unicode: bool = True, name: Callable[[str], str] = _plain) -> str:
    """Return the headline's first sentence: the main channel, E2 against SN2 (or that SN2 was not computed)."""
    c = h.channel
    if c is None:
        return "Elimination only: substitution (SN2) was not computed for this job."
    product = f"; SN2 product {name(c.sn2_product)}" if c.sn2_product else ""
    textbook = f" (textbook call: {c.textbook_call}, {c.textbook_reason})"
    if c.main is None:
        why = {"not computed": "its path was not computed",
               "failed": "its path failed",
               "no products": "its path did not reach the substitution product, so its top is no barrier",
               "no E2 barrier": "no E2 path has a barrier to set against it",
               "no free-energy barrier": "its saddle has no free-energy barrier for the free-energy mix"}[c.why_none]
        return f"E2 against SN2 not decided: {why}{product}{textbook}."
    gap = (f"the SN2 barrier {abs(c.gap_kcal_mol):.2f} kcal/mol {'above' if c.gap_kcal_mol >= 0 else 'below'} the "
           "best E2 path")
    split = f"E2 {_percent(c.e2_fraction)} : SN2 {_percent(c.sn2_fraction)}"
    if c.close:
        return (f"E2 and SN2 lie within the method's uncertainty ({gap}, under {h.uncertainty_kcal_mol:g} kcal/mol): "
                f"{split}, the main channel is not decided{product}{textbook}.")
    called = {"substitution": hl.SN2, "elimination": hl.E2}.get(c.textbook_call)
    against = "" if called in (None, c.main) else "; AGAINST the textbook call"
    if c.main == hl.SN2:
        return f"Main channel: substitution (SN2), {split}, {gap}{product}{textbook}{against}."
    return f"Main channel: elimination (E2), {split}, {gap}{product}{textbook}{against}."


def mix_sentence(h: hl.Headline, unicode: bool = True, name: Callable[[str], str] = _plain) -> str:
    """Return the alkene mix: each alkene's computed share (percent of the alkenes) with its range, largest first."""
    sym = _symbols(unicode)
    where = ""
    if h.channel is not None and h.channel.main == hl.SN2 and not h.channel.close:
        where = f" (a minor channel: {_percent(h.channel.e2_fraction)} of all products)"
    shares = [a for a in h.alkenes if a.share is not None]
    if not shares:
        calls = ", ".join(f"{name(a.smiles)} {a.rule_call}" for a in h.alkenes) or "none"
        return f"Alkenes{where}: no computed shares; the rule's calls: {calls}."
    parts = []
    for a in shares:
        spread = ("" if a.low is None or len(shares) == 1 else
                  f" (range {100 * a.low:.1f}{sym['to']}{100 * a.high:.1f} %)")
        parts.append(f"{name(a.smiles)} {_percent(a.share)}{spread}")
    rest = [a for a in h.alkenes if a.share is None]
    tail = f"; no computed path to {', '.join(name(a.smiles) for a in rest)}" if rest else ""
    return f"Alkenes{where}: {', '.join(parts)}{tail}."


def gap_sentence(h: hl.Headline, unicode: bool = True, name: Callable[[str], str] = _plain) -> str | None:
    """Return the gap between the computed major and its closest rival and the ratio it implies, or None."""
    if h.gap_kcal_mol is None or h.runner_up is None:
        return None
    text = (f"{gap_symbol(h, unicode)} {h.gap_kcal_mol:.2f} kcal/mol between the best paths to {name(h.computed_major)} "
            f"and {name(h.runner_up)}")
    if h.implied_ratio is not None and h.temperature_K is not None:
        about = "" if h.implied_ratio > RATIO_SHOWN_UP_TO else "about "
        text += f": {about}{ratio_text(h.implied_ratio)} at {h.temperature_K:g} K"
    if h.gap_free_kcal_mol is not None:
        text += f" ({_symbols(unicode)['dd_g']} of the verified saddles: {h.gap_free_kcal_mol:.2f} kcal/mol)"
    return text + "."


def verdict_parts(h: hl.Headline, name: Callable[[str], str] = _plain) -> tuple[str, str, str]:
    """Return the verdict as (state word, qualifier or '', the two major alkenes or why it is undecided)."""
    word = STATE_WORDS[h.state]
    qualifier = ("on the alkene of the minor E2 channel"
                 if h.channel is not None and h.channel.main == hl.SN2 and not h.channel.close else "")
    rule = name(h.rule_major) if h.rule_major else "none"
    if h.state == hl.AGREE:
        return word, qualifier, f"the rule and the computed barriers pick the same major alkene, {rule}"
    if h.state == hl.DISAGREE:
        return word, qualifier, f"the rule picks {rule}, the computed barriers {name(h.computed_major)}"
    lean = f"; the barriers lean to {name(h.computed_major)}" if h.computed_major else ""
    why = {
        hl.CLOSE_CALL: (f"the best barriers to {name(h.computed_major)} and {name(h.runner_up or '')} lie within "
                        f"{h.uncertainty_kcal_mol:g} kcal/mol of each other, inside the method's uncertainty (the "
                        f"reference benchmark finds GFN2-xTB unable to decide such close open-chain choices); the "
                        f"rule picks {rule}"),
        hl.NONE_REACHED: f"no computed path reached its products, so no barrier decides; the rule picks {rule}",
        hl.ALL_FAILED: f"every computed path failed; the rule picks {rule}",
        hl.NO_PATHS: f"no paths were computed, the rule's call stands alone: {rule}",
        hl.NO_FREE_ENERGY: (f"the mix uses free energies, and no path that reaches its products has a verified saddle "
                            f"with one; the rule picks {rule}"),
        hl.NO_RULE_MAJOR: f"the rule names no major alkene, so there is no call to check{lean}",
        hl.JOB_FAILED: f"the job failed ({h.error})",
    }[h.why_undecided]
    return word, qualifier, why


def verdict_sentence(h: hl.Headline, name: Callable[[str], str] = _plain) -> str:
    """Return the verdict in words: the state's word first, then the two major alkenes or why it is undecided."""
    word, qualifier, body = verdict_parts(h, name)
    return f"{word}{f' ({qualifier})' if qualifier else ''}: {body}."


#: each criterion of the rule as a clause of the headline
RULE_CLAUSES = {
    rb.SINGLE_ALKENE: "only one alkene can form",
    rb.ANTI_REACH: "reachable through an anti-periplanar hydrogen (the others are syn only or blocked)",
    rb.DEGREE: "the most substituted of those (Zaitsev)",
    rb.HOFMANN_SHIFT: "the least substituted of those (Hofmann shift: {shift})",
    rb.E_BEFORE_Z: "E before Z at the same substitution",
    rb.ANTI_COST: "the lowest anti-periplanar cost among alkenes alike in substitution and geometry",
}


def rule_sentence(h: hl.Headline, name: Callable[[str], str] = _plain) -> str:
    """Return what decided the rule's major alkene, criterion by criterion (a single possible alkene says so)."""
    if rb.NO_E2 in h.rule_criteria:
        return "The rule predicts no E2: no beta hydrogen reaches an anti-periplanar geometry below the scan cap."
    if h.rule_criteria == (rb.ANTI_REACH,):
        words = "the only alkene reachable through an anti-periplanar hydrogen (the others are syn only or blocked)"
    else:
        clauses = [RULE_CLAUSES[c].format(shift=h.shift_reason or "bulky base or poor leaving group")
                   for c in h.rule_criteria]
        if clauses and h.rule_criteria[0] not in (rb.ANTI_REACH, rb.SINGLE_ALKENE):
            clauses[0] = clauses[0].replace("of those", "of the anti-reachable alkenes")
        words = ", then ".join(clauses)
    slow = ("; no hydrogen is anti-periplanar within the energy window, so the rule goes through the cheapest anti "
            "geometry (a slow E2)") if h.slow_e2 else ""
    return f"Rule's major alkene {name(h.rule_major)}: {words}{slow}."


def left_out_sentence(h: hl.Headline) -> str | None:
    """Return how many computed paths did not reach their products (and so decide nothing), or None."""
    if not h.paths_left_out:
        return None
    return (f"{h.paths_left_out} computed path(s) did not reach their products: no barrier, left out of every share "
            "and of the verdict.")


def headline_sentences(h: hl.Headline, unicode: bool = True, name: Callable[[str], str] = _plain) -> dict[str, str]:
    """Return the headline's sentences by part: channel, mix, verdict, gap, rule, left_out (absent parts left out);
    without SN2 the mix comes first and 'channel_note' (SN2 not computed) last."""
    if not h.ok:
        return {"verdict": verdict_sentence(h, name)}
    parts = {"channel": channel_sentence(h, unicode, name), "mix": mix_sentence(h, unicode, name),
             "verdict": verdict_sentence(h, name), "gap": gap_sentence(h, unicode, name),
             "rule": rule_sentence(h, name), "left_out": left_out_sentence(h)}
    if h.channel is None:  # elimination only: the mix comes first, the missing SN2 is said last
        parts = {**{k: parts[k] for k in ("mix", "verdict", "gap", "rule", "left_out")}, "channel_note": parts["channel"]}
    return {k: v for k, v in parts.items() if v}


def headline_lines(h: hl.Headline, indent: str = "  ") -> list[str]:
    """Return the headline as terminal lines (ASCII symbols), the main channel or the alkene mix first."""
    return [f"{indent}{'>' if n == 0 else ' '} {text}" for n, text in enumerate(headline_sentences(h, unicode=False).values())]
