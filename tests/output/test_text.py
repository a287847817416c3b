"""Terminal text of results beside the report, on the fixture runs."""

from __future__ import annotations

from elimscan.output.html.page import render_report
from elimscan.results.documents import RunResult

from reportfixture import blank_plots, raw


def test_numerical_trouble_is_listed_in_the_summary_text_and_the_report():
    from elimscan.output.text import summary_table

    doc = raw("halobutane")
    assert not doc["summary"].get("trouble")  # every saddle of this fixture verified: nothing to list
    plain = RunResult.model_validate(doc)
    assert "numerical trouble" not in summary_table(plain) and 'id="trouble"' not in render_report(plain, blank_plots(doc))
    doc["summary"]["trouble"] = {"saddle not verified: saddle_collapsed": 2, "scan point above cap": 5}
    troubled = RunResult.model_validate(doc)
    text = summary_table(troubled)
    assert "  saddle not verified: saddle_collapsed: 2" in text and "  scan point above cap: 5" in text
    page = render_report(troubled, blank_plots(doc))
    assert 'id="trouble"' in page and "saddle not verified: saddle_collapsed: 2" in page


def test_printable_escapes_what_a_terminal_would_act_on_and_keeps_every_other_character():
    from elimscan.output.text import printable

    # ESC sequences (clear screen, colour), an OSC title ended by BEL, C1 CSI, DEL, a right-to-left override, a
    # zero-width space, a line separator, a newline, a tab and a lone surrogate: each as its Python escape
    hostile = "a\x1b[2J\x1b[31mb\x1b]0;t\x07c\x9b2Jd\x7fe\u202ef\u200bg\u2028h\ni\tj\udcff"
    assert printable(hostile) == ("a\\x1b[2J\\x1b[31mb\\x1b]0;t\\x07c\\x9b2Jd\\x7fe\\u202ef\\u200bg\\u2028h\\x0ai\\x09j"
                                  "\\udcff")
    assert printable(hostile).isprintable() and printable(hostile).isascii()
    for name in ("2-bromo-2-methylbutane", "α-bromo ketone", "trans-1-Br-2-Me-cyclohexane (β-H anti)", "臭化物 x"):
        assert printable(name) == name  # names without control characters are shown as given
