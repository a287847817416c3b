"""One job from config to records, without file I/O.

- ``outcome``: what a run computed, held in memory (substrate and base analyses, job paths, the run's outcome)
- ``compute``: substrate analysis, bases and the paths of a run; known failures become records
- ``dfttier``: the optional DFT tier of a job (single points on its lowest saddles, or the DFT saddle rung)
- ``dftsaddles``: the DFT saddle rung: lowest verified GFN2-xTB saddles re-optimised and verified at DFT
- ``energetics``: the numbers of a job: free energies, isotope effects, product mixes, verdicts, warnings
- ``assemble``: the job record packed from the outcome and those numbers (no computing)
- ``names``: file and folder names inside an output folder
- ``artifacts``: the contents of output files in memory (XYZ trajectories, SDF ensembles)
- ``jobs``: one job from start to records and file contents, the unit of a batch
- ``document``: the result document (results.json) of ``run`` and ``batch``
"""
