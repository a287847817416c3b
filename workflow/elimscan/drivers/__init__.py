"""Algorithms over any engine passed in (an ASE calculator factory); no files.

- ``relax``: constrained relaxation (held dihedrals, distances, distance sums), BFGS or Sella
- ``conformers``: seeded ETKDG + MMFF + pruning, forced chairs, relaxation, de-duplication
- ``scans``: H-C-C-X dihedral scans
- ``hessian``: finite-difference Hessians and harmonic frequencies
- ``freeenergy``: Hessians of free reactants, free barriers and isotope effects
- ``paths``: base placement, complexes, relaxed E2 and SN2 paths, Sella saddles and their verification
"""
