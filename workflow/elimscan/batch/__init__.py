"""Many jobs into one resumable folder: the only layer (with the command line) that writes output folders.

- ``inputs``: substrates files (CSV, ``.smi``) and the geometry files a config names
- ``plan``: ``plan_batch``: every job of a config with its key, id, single-job config and input error
- ``lock``: the folder lock (one batch or run per output folder), its holder, the folder's preparation (inputs it
  would overwrite)
- ``runclock``: the wall-time log of a long computation in a work folder across kills and pauses (its lock,
  heartbeat and run log; validation/validate.py)
- ``jobfiles``: a finished job's files moved into its folder, written atomically, checked by checksum; its job.json
- ``documents``: ``results.json`` and ``batch.json`` assembled from the store's rows
- ``status``: the read-only status of a batch folder, the time estimate, and its text
- ``driver``: ``run_batch``: the loop that writes each finished job's files, then its store row
- ``store``: the SQLite store of finished jobs, file checksums, runs, why a run stopped, and job starts
- ``recovery``: a damaged or lost store found before SQLite opens it, moved aside and rebuilt from the job copies
- ``executors``: the ``Executor`` contract and the registry by ``executor.kind``
- ``events``: what executors report (``Started``, ``Progress``, ``Done``) and the time-limit errors
- ``worker``: what runs inside a worker process (``serve``: one job at a time through ``pipeline.jobs.run_job``)
- ``local``: ``LocalExecutor``: worker processes on this machine
- ``dasktasks``: ``DaskExecutor``: one supervised job process per Dask task on an existing cluster
"""
