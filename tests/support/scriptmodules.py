"""Loading a script of validation/ or benchmarks/ as a module for its tests (it is no package)."""

from __future__ import annotations

import contextlib
import importlib.util
import sys
from collections.abc import Iterator
from pathlib import Path
from types import ModuleType


@contextlib.contextmanager
def loaded_script(path: Path, name: str) -> Iterator[ModuleType]:
    """Yield the script at ``path`` run as module ``name``, registered in sys.modules meanwhile (its dataclasses look
    their module up by name) and removed after."""
    spec = importlib.util.spec_from_file_location(name, path)
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    try:
        spec.loader.exec_module(module)
        yield module
    finally:
        sys.modules.pop(name, None)
