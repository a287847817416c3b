"""The only code that imports an electronic-structure library (tblite, xtb-python, PySCF).

- ``xtb``: GFN2-xTB settings, single points with a coordinate cache and SCF retry, the ASE calculator
- ``dft``: optional PySCF single points on saddles, with the pure helpers of the DFT tier beside them
- ``threads``: OpenMP/BLAS thread variables, set before a backend loads
- ``toy``: an analytic spring + torsion engine with the engine's interface, for fast tests
"""
