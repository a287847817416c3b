"""The only code that imports an electronic-structure library (tblite, xtb-python, PySCF).

- ``contract``: what any engine must provide (the ``Engine`` protocol) and its data (``CacheStats``, ``SinglePoint``)
- ``factory``: which engine a job gets: GFN2-xTB, or a plug-in named 'module:function'
- ``xtb``: GFN2-xTB settings, single points with a coordinate cache and SCF retry, the ASE calculator
- ``dft``: optional PySCF single points on saddles, with the pure helpers of the DFT tier beside them
- ``dftgradients``: DFT energies, gradients and analytic Hessians behind the engine contract (saddle re-optimisation)
- ``dftmemory``: peak-memory estimate of a PySCF calculation, the memory limit and the refusal over it
- ``dftbasis``: what PySCF is handed per basis and functional key: def2 by name, vDZP and its ECPs from
  basis-set-exchange, the wB97X-3c composite's functional and dispersion
- ``threads``: OpenMP/BLAS thread variables, set before a backend loads
"""
