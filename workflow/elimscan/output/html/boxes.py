"""The boxes of a job section: the verdict (rule against barriers) and substitution (SN2) beside elimination."""

from __future__ import annotations

from elimscan.output.html.cells import ABSENT, barrier_text, esc, percent_text
from elimscan.output.html.words import ENERGY_WORDS, NO_BARRIERS_JOB
from elimscan.output.plots.figures import BARRIER_SHIFT_KCAL_MOL, signed
from elimscan.output.plots.paths import has_barriers
from elimscan.results.records import JobRecord, SubstitutionRecord


def verdict_word(job: JobRecord) -> str:
    """Return the verdict as shown: 'AGREE', 'DISAGREE' or 'no verdict' (no computed major, or no rule major)."""
    v = job.verdict
    if v is None or v.computed_major is None or v.agreement is None:
        return "no verdict"
    return "AGREE" if v.agreement else "DISAGREE"


def within_uncertainty(job: JobRecord) -> bool:
    """Return True when the job has a computed major alkene and its verdict is within method uncertainty."""
    return job.verdict is not None and job.verdict.computed_major is not None and job.verdict.within_method_uncertainty


def _product_share(job: JobRecord, smiles: str | None) -> str:
    """Return ' (38.4 %, range 2.1–94.8 %)' for a product of the job, or '' when it has no computed share."""
    product = next((p for p in job.products if p.smiles == smiles), None)
    if product is None or product.fraction is None:
        return ""
    if product.fraction_range is None:
        return f" ({percent_text(product.fraction)})"
    low, high = product.fraction_range
    return f" ({percent_text(product.fraction)}, range {100 * low:.1f}\u2013{100 * high:.1f} %)"


def verdict_box(job: JobRecord) -> str:
    """Return the verdict box of a job: the rule's and the computed major alkene, their agreement and why."""
    v = job.verdict
    word = verdict_word(job)
    kind = {"AGREE": "agree", "DISAGREE": "disagree"}.get(word, "none")
    rule_major = v.rule_major if v is not None else job.rule.rule_major if job.rule is not None else None
    computed = v.computed_major if v is not None else None
    uncertain = within_uncertainty(job)
    if v is None or not has_barriers(job):
        words, reason = "The geometric rule\u2019s call stands alone", NO_BARRIERS_JOB
    elif computed is None:
        words, reason = "No computed major alkene", v.reason
    elif v.agreement is None:
        words, reason = "The rule names no major alkene; the barriers pick one", v.reason
    elif v.agreement:
        words, reason = "The geometric rule and the computed barriers pick the same major alkene", v.reason
    else:
        words, reason = "The computed barriers favour a different major alkene than the geometric rule", v.reason
    head = f'<span class="badge">{esc(word)}</span>'
    if uncertain:
        head += ' <span class="uncertain">within method uncertainty</span>'
    facts = (f'<dt>rule\u2019s major alkene</dt><dd class="smiles rule-major">{esc(rule_major or "none")}</dd>'
             f'<dt>computed major alkene</dt><dd class="computed-major"><span class="smiles">{esc(computed or "none")}</span>'
             f"{esc(_product_share(job, computed))}</dd>")
    parts = [f'<div class="verdict verdict-{kind}" data-rule-major="{esc(rule_major or "")}" '
             f'data-computed-major="{esc(computed or "")}" data-agreement="{esc(word)}" '
             f'data-within-uncertainty="{"yes" if uncertain else "no"}">',
             f'<p class="verdict-head">{head} {esc(words)}.</p>',
             f'<dl class="facts">{facts}</dl>',
             f'<p class="verdict-reason"><strong>Why:</strong> {esc(reason)}.</p>']
    if uncertain:
        parts.append(f'<p class="uncertain-note"><strong>Within method uncertainty:</strong> the best barriers to different '
                     f"alkenes lie within {BARRIER_SHIFT_KCAL_MOL:g} kcal/mol of each other, inside GFN2-xTB\u2019s error; "
                     "the computation does not decide between them.</p>")
    return "".join(parts) + "</div>"


def substitution_box(job: JobRecord, sub: SubstitutionRecord) -> str:
    """Return the SN2 box of a job: product, barriers, verification, the E2 : SN2 split beside the textbook call."""
    if sub.path_status == "ok" and sub.barrier_kcal_mol is not None:
        frequency = "" if sub.imaginary_frequency_cm1 is None else f", \u03bd\u2021 {sub.imaginary_frequency_cm1:.1f}i cm\u207b\u00b9"
        check = ("verified saddle" if sub.saddle_verified else
                 f"not verified; the barrier is the {sub.barrier_source or 'relaxed-path maximum'}") + frequency
        if sub.saddle_note:
            check += f" ({sub.saddle_note})"
    elif sub.path_status == "failed":
        error = f"{sub.error.error_type}: {sub.error.error_message}" if sub.error else "no reason recorded"
        check = f"the path failed ({error})"
    else:
        check = "not computed"
    split = (ABSENT if sub.elimination_fraction is None or sub.substitution_fraction is None else
             f"E2 {percent_text(sub.elimination_fraction)} : SN2 {percent_text(sub.substitution_fraction)}")
    facts = [("SN2 product", f'<span class="smiles sn2-product">{esc(sub.product_smiles or "none")}</span>'),
             ("\u0394E\u2021 (kcal/mol)", f'<span class="sn2-barrier">{esc(barrier_text(sub.barrier_kcal_mol))}</span>'),
             ("\u0394G\u2021 (kcal/mol)", f'<span class="sn2-free-barrier">'
              f"{esc(ABSENT if sub.barrier_free_energy_kcal_mol is None else signed(sub.barrier_free_energy_kcal_mol, 2))}</span>"),
             ("saddle", f'<span class="sn2-saddle">{esc(check)}</span>')]
    dl = '<dl class="facts">' + "".join(f"<dt>{k}</dt><dd>{v}</dd>" for k, v in facts) + "</dl>"
    e2 = "" if sub.elimination_fraction is None else f"{sub.elimination_fraction:.4f}"
    sn2 = "" if sub.substitution_fraction is None else f"{sub.substitution_fraction:.4f}"
    return (f'<div class="sn2" data-elimination="{e2}" data-substitution="{sn2}" data-rule-call="{esc(sub.rule_call)}">'
            f"{dl}<div class=\"sn2-sides\"><div class=\"sn2-side sn2-computed\"><strong>Computed split</strong>"
            f"<p class=\"sn2-split\">{esc(split)}</p><p class=\"note\">on {esc(ENERGY_WORDS[job.energy_used])}</p></div>"
            f"<div class=\"sn2-side sn2-rule\"><strong>Textbook call</strong><p class=\"sn2-call\">{esc(sub.rule_call)}</p>"
            f"<p class=\"note sn2-reason\">{esc(sub.rule_reason)}</p></div></div></div>")
