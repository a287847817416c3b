"""What a run produces, as data (pydantic and plain Python; no engine, no files).

- ``records``: frozen result models (the unit in each field name) and the JSON Schema export
- ``trouble``: counts of numerical trouble over job records, for ``summary.trouble``
- ``failures``: one of our errors as the ``ErrorInfo`` a record carries
- ``flags``: the wording of path flags that drivers write and the trouble counts read
"""
