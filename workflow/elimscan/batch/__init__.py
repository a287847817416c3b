"""Many jobs into one resumable folder: the only layer (with the command line) that writes output folders.

- ``driver``: substrates files, job keys, the folder lock, the driver that writes files then store rows, documents, status
- ``store``: the SQLite store of finished jobs, file checksums, runs and job starts
- ``workers``: local worker processes and Dask tasks that run ``pipeline.jobs.run_job``
"""
