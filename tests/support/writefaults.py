"""Write failures injected into a running batch's driver, for the fault tests (tests only; no root, no real disk).

Name it as the batch's engine (``--engine writefaults:toy_engine``, the toy engine of ``toyjobs``): the batch
driver imports this module to load the factory, and on import in the driver (not in its spawned workers)
``ELIMSCAN_TEST_WRITE_FAULT=ERRNO@SUBSTRING`` replaces ``open`` with one that fails:

- ``ENOSPC@…``: the disk fills up when a file whose path contains SUBSTRING is opened for writing; from then on
  every write through any file opened with ``open`` fails with ENOSPC, also through files opened before (the
  batch log), and so does opening a file for writing;
- any other errno name (``ENAMETOOLONG@…``): opening a path that contains SUBSTRING for writing fails with it.

SQLite writes its own files and is not affected.
"""

from __future__ import annotations

import builtins
import errno
import multiprocessing
import os

from toyjobs import toy_engine  # noqa: F401  (the factory the batch names)

_code_name, _, SUBSTRING = os.environ.get("ELIMSCAN_TEST_WRITE_FAULT", "").partition("@")
#: the injected error number (None: no fault)
CODE = getattr(errno, _code_name, None) if SUBSTRING else None

_state = {"full": False}
_real_open = builtins.open


def _fault(name) -> OSError:
    return OSError(CODE, os.strerror(CODE), str(name))


class _FillingFile:
    """A file object whose writes and flushes fail with ENOSPC once the disk is full (else the real file's)."""

    def __init__(self, handle, name):
        self._handle, self._name = handle, name

    def write(self, data):
        if _state["full"]:
            raise _fault(self._name)
        return self._handle.write(data)

    def writelines(self, lines):
        for line in lines:
            self.write(line)

    def flush(self):
        if _state["full"]:
            raise _fault(self._name)
        return self._handle.flush()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self._handle.close()
        return False

    def __iter__(self):
        return iter(self._handle)

    def __getattr__(self, name):
        return getattr(self._handle, name)


def _failing_open(file, mode="r", *args, **kwargs):
    """``open`` with the configured fault for files opened for writing."""
    writing = any(c in mode for c in "wax+")
    if writing and SUBSTRING in str(file):
        if CODE != errno.ENOSPC:
            raise _fault(file)
        _state["full"] = True
    if writing and _state["full"] and "a" not in mode:
        raise _fault(file)  # creating or truncating a file needs room too
    handle = _real_open(file, mode, *args, **kwargs)
    return _FillingFile(handle, file) if writing else handle


if CODE is not None and multiprocessing.parent_process() is None:  # the driver only: workers write no output files
    builtins.open = _failing_open
