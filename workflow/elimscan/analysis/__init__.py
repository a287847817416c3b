"""Pure analysis of computed numbers (numpy; no engine, no files).

- ``rule``: anti/syn penalties, the rule's status and product calls, Curtin-Hammett fractions and ranges, verdicts
- ``thermo``: ideal-gas thermochemistry with quasi-RRHO entropy; Bigeleisen-Mayer isotope effects
- ``character``: saddle character from Pauling bond orders
- ``series``: substituent series, log10(k/k0) and the Hammett fit
- ``benchmark_cases``: the reference benchmark's case file (validation/cases.yaml) as checked frozen models
- ``benchmark_jobs``: every case x seed as a job, grouped into batch configs
- ``benchmark_scoring``: the test set scored per level and seed (exact isomers, shares, undecided, the rule)
- ``benchmark_calibration``: the calibration set's errors (Eyring barriers, isotope effects, Hammett rho)
- ``benchmark_models``: the named base-model candidates the benchmark can run with (issue 18)
- ``basicity``: relative pKa of base models from a balanced proton exchange (a physics check on a model)
"""
