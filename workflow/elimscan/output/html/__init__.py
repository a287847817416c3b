"""The self-contained ``report.html`` of a run (no file I/O: the CLI writes what ``page.render_report`` returns).

Everything is inline in the single page of a small run: plots as SVG, the substrate depiction as SVG, product depictions as base64 PNG, a
few lines of CSS (with print rules) and of JavaScript (sortable index table). A Content-Security-Policy
forbids any network load. Every string from the user or from results.json is escaped with ``html.escape``.
Each module imports only those above it in this list (and ``plots``, ``tables``, ``text``, ``basemodelwords``):

- ``words``: the fixed prose (caution, "Reading the numbers", with the sentence on the default base model where a job
  used it) and the method lines
- ``style``: the CSS, the sorting script and the Content-Security-Policy
- ``cells``: escaping, numbers as shown, table cells, inline SVG figures, section anchors
- ``depictions``: RDKit pictures: the substrate (SVG) with its classes labelled, each alkene (PNG)
- ``structures``: links to a job's structure files and the 3D views of its saddles (our own canvas viewer)
- ``jobtables``: a job's tables: beta-H classes with barriers, notes and file links, alkenes with names, isotope effects
- ``boxes``: a job's headline box (channel, alkene mix, verdict in three states) and substitution (SN2) box
- ``jobsection``: one job's section, with the words of each kind of job plot
- ``runsections``: the sections over all jobs: job index, each substrate across bases, solvents and base models
  (with observations and scores), substituent series, base models compared
- ``page``: the whole page
- ``batchpages``: a large run's index page (sortable, filterable) and one small page per job (plots as PNG files)
"""
