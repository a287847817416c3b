"""The README's and the report's paragraph on what the benchmark resolves quote the committed benchmark page.

Issue 17 asks that both state, from the benchmark's table, what the tool resolves: if the page is written again
with other counts, this test fails until the README (validation paragraph) and output/html/words.BENCHMARK_SAYS
are brought in line. The page is the one BENCHMARK_SAYS names (validation/VALIDATION-fast.md until the frozen
model's full run is scored, then validation/VALIDATION.md), written only by validation/validate.py.
"""

from __future__ import annotations

import re
from pathlib import Path

from elimscan.output.html.words import BENCHMARK_SAYS

ROOT = Path(__file__).resolve().parents[2]


def _headline(page: str, level: str) -> tuple[str, str, str]:
    """Return (computed right, rule right, undecided) of one level's headline line, e.g. ('3/5', '5/5', '1/5')."""
    line = next(x for x in page.splitlines() if x.startswith(f"- **GFN2-xTB {level}"))
    found = re.search(r"computed right (\d+/\d+)(?: \(on the rule's basis \d+/\d+\))?, rule right (\d+/\d+), "
                      r"undecided (\d+/\d+)", line)
    assert found, line
    return found.groups()


def test_readme_and_report_quote_the_benchmark_page_they_name():
    # the page BENCHMARK_SAYS names (the fast subset's until the full run is scored, then validation/VALIDATION.md);
    # the README's paragraph must name and quote the same page
    named = re.search(r"validation/(VALIDATION(?:-fast)?\.md)", BENCHMARK_SAYS)
    assert named, "words.BENCHMARK_SAYS names no benchmark page"
    page = (ROOT / "validation" / named.group(1)).read_text()
    de, dg = _headline(page, "dE"), _headline(page, "dG")
    assert de[1] == dg[1]  # the rule is scored once, on the same cases
    quoted = f"computed right {de[0]} (\u0394E\u2021) and {dg[0]} (\u0394G\u2021), the textbook rule {de[1]}"
    readme = " ".join((ROOT / "README.md").read_text().split())
    assert f"(validation/{named.group(1)})" in readme, f"README's benchmark paragraph does not link {named.group(1)}"
    assert quoted.lower() in readme.lower(), f"README's benchmark paragraph does not quote {named.group(1)}"
    assert quoted in BENCHMARK_SAYS, f"words.BENCHMARK_SAYS does not quote {named.group(1)}"
    model = re.search(r"- base model: `([^`]+)`", page).group(1)
    assert model == "alcohol-3-embedded"
    for words in ("three ethanol molecules", "lowest of five embeddings"):
        assert words in BENCHMARK_SAYS and words in readme
