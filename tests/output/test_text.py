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
