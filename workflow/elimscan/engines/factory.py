"""Which engine a job computes with: GFN2-xTB by default, or a plug-in named 'module:function'.

A plug-in factory is called with the job's ``MethodConfig`` and returns an object that satisfies
``engines.contract.Engine``. It is named by ``method.engine_factory`` in the config or by ``--engine`` on the
command line, and it enters the job key like every other method setting.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable

from elimscan.config import MethodConfig
from elimscan.engines.contract import Engine
from elimscan.errors import ConfigError, EngineError

#: the factory of the GFN2-xTB engine elimscan ships
DEFAULT_ENGINE_FACTORY = "elimscan.engines.factory:xtb_engine"


def xtb_engine(method: MethodConfig) -> Engine:
    """Return a new GFN2-xTB engine for a method config."""
    from elimscan.engines.xtb import EngineSettings, XtbEngine

    return XtbEngine(EngineSettings.from_method(method))


def load_engine_factory(spec: str) -> Callable[[MethodConfig], Engine]:
    """Return the engine factory named 'module:function'; a name that cannot be loaded is a ConfigError."""
    module_name, _, attribute = spec.partition(":")
    if not module_name or not attribute:
        raise ConfigError(f"engine factory '{spec}': expected 'module:function'", key_path="method.engine_factory")
    try:
        module = importlib.import_module(module_name)
    except ImportError as err:
        raise ConfigError(f"engine factory '{spec}': cannot import module '{module_name}' ({err}); is it on "
                          "PYTHONPATH?", key_path="method.engine_factory") from err
    factory = getattr(module, attribute, None)
    if not callable(factory):
        raise ConfigError(f"engine factory '{spec}': module '{module_name}' has no function '{attribute}'",
                          key_path="method.engine_factory")
    return factory


def make_engine(method: MethodConfig, spec: str | None = None) -> Engine:
    """Return a new engine for a method: from ``spec``, else ``method.engine_factory``, else GFN2-xTB.

    The object is checked against the Engine contract, so a plug-in that lacks a member fails here with a
    message naming it rather than deep inside a relaxation.
    """
    spec = spec or method.engine_factory
    engine = (load_engine_factory(spec) if spec else xtb_engine)(method)
    missing = [name for name in ("label", "stats", "calculator", "single_point") if not hasattr(engine, name)]
    if missing or not isinstance(engine, Engine):
        raise EngineError(f"engine factory '{spec}' returned {type(engine).__name__}, which lacks "
                          f"{', '.join(missing) or 'a member'} of elimscan.engines.contract.Engine")
    return engine
