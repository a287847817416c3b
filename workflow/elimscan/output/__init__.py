"""What a person reads: renderings of result documents (no computation).

- ``text``: terminal text of results
- ``tables``: ``summary.csv``
- ``plots``: Newman projections, scan plots, product charts (matplotlib figures)
- ``html``: the self-contained ``report.html``
- ``files``: reads an output folder, returns the report files, validates result files against the schema
"""
