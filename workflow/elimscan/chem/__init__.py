"""Chemistry of the inputs, RDKit only (no engine, no files).

- ``structures``: SMILES checks, seeded embedding, user SDF/XYZ onto the SMILES atom order, ``ase.Atoms``
- ``perception``: the leaving group, C-alpha, beta-H classes (stereo-aware) and the anti/syn alkene products
- ``bases``: the basic atom of a base and whether the rule counts it as bulky
- ``basemodels``: a base as a cluster (ion pair, explicit hydrogen-bonded molecules)
- ``substitution``: the SN2 product with Walden inversion
- ``inputcheck``: every molecule of a config checked before any calculation
"""
