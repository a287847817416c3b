"""One job from config to records, without file I/O.

- ``compute``: substrate analysis, bases, paths and job records of a run; known failures become records
- ``artifacts``: the contents of output files in memory (XYZ trajectories, SDF ensembles)
- ``jobs``: one job from start to records and file contents, the unit of a batch
"""
