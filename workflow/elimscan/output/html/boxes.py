"""The boxes of a job section: the headline (channel, alkene mix, verdict in three states) and substitution (SN2)."""

from __future__ import annotations

from elimscan.analysis.headline import job_headline
from elimscan.output.benchmark_note import benchmark_note
from elimscan.output.headline import STATE_WORDS, headline_sentences, verdict_parts
from elimscan.output.html.cells import ABSENT, barrier_text, esc, percent_text
from elimscan.output.html.words import ENERGY_WORDS
from elimscan.output.plots.figures import signed
from elimscan.results.records import JobRecord, SubstitutionRecord


def verdict_word(job: JobRecord) -> str:
    """Return the verdict as shown: 'AGREE', 'DISAGREE' or 'UNDECIDED' (three states; see analysis.headline)."""
    return STATE_WORDS[job_headline(job).state]


def undecided_why(job: JobRecord) -> str:
    """Return why a job's verdict is undecided (analysis.headline.UNDECIDED_WHY), or '' when it is decided."""
    return job_headline(job).why_undecided or ""


def headline_box(job: JobRecord, record: dict | None = None) -> str:
    """Return the headline of a job: main channel, alkene mix, the verdict in three states with why, the gap and
    the ratio it implies, what decided the rule (undecided is grey, never red or green), and with ``record``
    (analysis.benchmark_record, as output.files reads it) what the reference benchmark says of such choices."""
    h = job_headline(job)
    sentences = headline_sentences(h)
    word, qualifier, body = verdict_parts(h)
    v = job.verdict
    computed = h.computed_major or ""
    parts = [f'<div class="verdict headline verdict-{esc(h.state)}" data-state="{esc(h.state)}" '
             f'data-why-undecided="{esc(h.why_undecided or "")}" data-main-channel="{esc(h.channel.main or "") if h.channel else ""}" '
             f'data-rule-major="{esc(h.rule_major or "")}" data-computed-major="{esc(computed)}">']
    for key, text in sentences.items():
        if key == "verdict":
            lead = f"{qualifier[0].upper()}{qualifier[1:]}: {body}" if qualifier else f"{body[0].upper()}{body[1:]}"
            parts.append(f'<p class="verdict-head"><span class="badge">{esc(word)}</span> {esc(lead)}.</p>')
        else:
            parts.append(f'<p class="headline-{esc(key.replace("_", "-"))}">{esc(text)}</p>')
    if h.ok and v is not None and v.computed_major is not None:
        parts.append(f'<p class="verdict-reason"><strong>Barriers against the rule:</strong> {esc(v.reason)}.</p>')
    note = benchmark_note(job, record, h)
    if note:
        parts.append(f'<p class="benchmark-record">{esc(note)}</p>')
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
