"""Pure analysis of computed numbers (numpy; no engine, no files).

- ``rule``: anti/syn penalties, the rule's status and product calls, Curtin-Hammett fractions and ranges, verdicts
- ``thermo``: ideal-gas thermochemistry with quasi-RRHO entropy; Bigeleisen-Mayer isotope effects
- ``character``: saddle character from Pauling bond orders
- ``series``: substituent series, log10(k/k0) and the Hammett fit
"""
