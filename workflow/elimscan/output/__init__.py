"""What a person reads: renderings of result documents (no computation).

Each module imports only those above it in this list:

- ``headline``: the words of a job's headline (main channel, alkene mix, the verdict in three states, what decided
  the rule), for the terminal and the report
- ``benchmark_note``: the benchmark's record for a job's kinds of choice, in words, under the job's verdict (the
  record is read by ``files.load_benchmark_record`` and passed down: the CLI to ``text``, ``files`` to ``html/``)
- ``basemodelwords``: a job's base model in words (what was computed, why, its arrangements) and the sentence on
  the explicit-solvent default, for the terminal and the report
- ``comparison``: the rows and cells of a substrate's jobs side by side (bases, solvents, base models) with the
  observations of the config and their scores
- ``text``: terminal text of results; ``printable`` escapes control characters of user-given names
- ``logsetup``: the command line's log handlers (names escaped on the terminal, a log file that survives a full disk)
- ``tables``: ``summary.csv`` and ``series.csv``
- ``benchmark_tables``: the reference benchmark's page (VALIDATION.md) from its scores
- ``plots/``: matplotlib figures, one module a kind: Newman projections, scans, relaxed paths, saddle character,
  product calls, Hammett plots; ``plots.jobplots`` holds the one table of a job's plot kinds (see its map)
- ``html/``: the self-contained ``report.html``, from prose and style up to the page (see its map)
- ``files``: reads an output folder and the installed benchmark record, returns the report files, validates result
  files against the schema
"""
