"""Pure analysis of computed numbers (numpy; no engine, no files).

- ``rulebasis``: which criteria decided the rule's major alkene (a single alkene, anti-reachability, substitution
  degree or its Hofmann shift, E before Z, anti cost)
- ``rule``: anti/syn penalties, the rule's status and product calls, Curtin-Hammett fractions and ranges, verdicts
- ``thermo``: ideal-gas thermochemistry with quasi-RRHO entropy; Bigeleisen-Mayer isotope effects
- ``character``: saddle character from Pauling bond orders
- ``series``: substituent series, log10(k/k0) and the Hammett fit
- ``benchmark_cases``: the reference benchmark's case file (validation/cases.yaml) as checked frozen models
- ``benchmark_jobs``: every case x seed as a job, grouped into batch configs
- ``benchmark_scoring``: the test set scored per level and seed (exact isomers, shares, undecided, the rule)
- ``headline``: a job's headline from its record: main channel (E2 : SN2), alkene mix, the verdict in three states
  (agree / disagree / undecided, with why) and the gap between the two best alkenes
- ``comparison``: a substrate's jobs side by side (bases, solvents, base models) and each scored against the
  config's ``experiment:`` observations with ``benchmark_scoring``'s rules
- ``benchmark_calibration``: the calibration set's errors (Eyring barriers, isotope effects, Hammett rho)
- ``benchmark_models``: the named base-model candidates the benchmark can run with (issue 18)
- ``benchmark_record``: the page's counts per level and category as the report quotes them (written by
  validation/validate.py into the package's data)
- ``choicekinds``: which benchmark categories a job's choices belong to (open-chain regiochemistry, E/Z, rings
  with one or two anti hydrogens, E2 against SN2)
- ``stagegradients``: the gradients of each stage of the paths, summed over finished jobs
- ``basicity``: relative pKa of base models from a balanced proton exchange (a physics check on a model)
"""
