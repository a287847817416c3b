"""Chemistry of the inputs, RDKit only (no engine, no files).

- ``structures``: SMILES checks (one word, no isotope labels, size bounds, closed shells), seeded embedding,
  user SDF/XYZ onto the SMILES atom order, ``ase.Atoms``
- ``perception``: a substrate perceived from its SMILES (leaving group, beta-H classes, products), and the quick
  graph-only check of a substrate
- ``leavinggroups``: the leaving groups recognised, the atoms that leave with X, the group atom maps select
- ``stereo``: open stereo filled in or refused, stereo read from 3D, isotopomer keys, ring conformers
- ``alkenes``: the alkene of one H-Cbeta-Calpha-X dihedral, its substitution, conjugation and Bredt's rule
- ``betahydrogens``: classes of symmetry-equivalent beta hydrogens (stereo-aware), their anti/syn products,
  Zaitsev/Hofmann ranks
- ``atomgraph``: what one atom is and what it is bonded to (name, sp3 carbon, methyl, hydrogens); atom numbers and
  class labels as people read them (from 1)
- ``alkenenames``: an alkene in plain words from its SMILES (a known name, E/Z, the substitution pattern)
- ``bases``: the basic atom of a base and whether the rule counts it as bulky
- ``basemodels``: a base as a cluster (ion pair, explicit hydrogen-bonded molecules); ``resolve_base_model``, the one
  rule for which model a base gets in a solvent (the config's, else the default); ``model_cluster``, the one
  builder for the calculation and the input check
- ``modellabels``: a recorded model label read back into its parts (cation, explicit molecules and where they sit),
  the usual names of those molecules, and whether a record holds the explicit-solvent default
- ``substitution``: the SN2 product with Walden inversion
- ``inputcheck``: every molecule of a config checked before any calculation (base models and geometry files too),
  and the overnight size warning
"""
