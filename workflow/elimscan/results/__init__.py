"""What a run produces, as data (pydantic and plain Python; no engine, no files).

- ``records``: frozen result models of one job and its molecules (the unit in each field name)
- ``documents``: the documents results.json and batch.json (schema names and versions, provenance, series)
- ``schema``: the JSON Schema files exported from the documents (``make schema``)
- ``trouble``: counts of numerical trouble over job records, for ``summary.trouble``
- ``failures``: one of our errors as the ``ErrorInfo`` a record carries
- ``relabel``: class labels of results before schema 0.7.1 (atoms from 0) renumbered from 1 when read
- ``flags``: the wording of path flags that drivers write and the trouble counts read
"""
