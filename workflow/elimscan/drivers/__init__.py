"""Algorithms over any engine passed in (an ASE calculator factory); no files.

- ``constraints``: ASE's FixInternals with a cached, matrix-free force projection (same numbers, less Python)
- ``relax``: constrained relaxation (held dihedrals, distances, distance sums), BFGS or Sella
- ``conformers``: seeded ETKDG + MMFF + pruning, forced chairs, relaxation, de-duplication
- ``scans``: H-C-C-X dihedral scans
- ``hessian``: finite-difference Hessians and harmonic frequencies
- ``freeenergy``: Hessians of free reactants, free barriers and isotope effects
- ``contacts``: a placed base turned clear of the substrate, and the covalent bonds a relaxed complex must keep
- ``complexes``: the reactive atoms, base placement (E2 and backside SN2) and the lowest complex over base rotations
- ``saddles``: Sella refinement of a saddle guess and its verification; the base-H scan and CI-NEB guesses
- ``budget``: a path's gradient budget: a metered engine that stops a path before its next gradient past the
  limit and reports each stage's gradients and seconds while the path runs
- ``paths``: relaxed E2 and SN2 paths and their flags; one approach from complex through path to saddle, with
  the order of the saddle fallbacks
"""
