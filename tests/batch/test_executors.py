"""The executor contract: every registered executor has what the driver calls; an unknown kind is refused by name."""

from __future__ import annotations

import inspect

import pytest

from elimscan.batch import driver
from elimscan.batch.executors import EXECUTORS, Executor, make_executor
from elimscan.batch.local import LocalExecutor
from elimscan.config import ExecutorConfig
from elimscan.errors import ConfigError

#: the Protocol's members (its own, not typing's)
MEMBERS = sorted(name for name in vars(Executor) if not name.startswith("_"))


def test_the_protocol_states_what_the_driver_calls():
    assert MEMBERS == ["description", "from_config", "outstanding", "parallel_jobs", "poll", "shutdown", "submit"]
    source = inspect.getsource(driver._compute)
    for name in ("parallel_jobs", "description", "submit", "outstanding", "poll", "shutdown"):
        assert f"executor.{name}" in source


@pytest.mark.parametrize("kind", sorted(EXECUTORS))
def test_every_registered_executor_satisfies_the_protocol(kind):
    cls = EXECUTORS[kind]
    for name in MEMBERS:
        declared, actual = inspect.getattr_static(Executor, name), inspect.getattr_static(cls, name, None)
        assert actual is not None, f"{cls.__name__} lacks {name}"
        assert type(actual) is type(declared), f"{cls.__name__}.{name} is a {type(actual).__name__}"
        if isinstance(declared, (classmethod, property)) or callable(declared):
            function = declared.fget if isinstance(declared, property) else getattr(Executor, name)
            mine = actual.fget if isinstance(actual, property) else getattr(cls, name)
            assert list(inspect.signature(mine).parameters) == list(inspect.signature(function).parameters), name


def test_the_registry_covers_every_kind_the_config_allows():
    kinds = ExecutorConfig.model_fields["kind"].annotation.__args__
    assert set(kinds) == set(EXECUTORS)


def test_an_unknown_kind_is_refused_by_name(tmp_path):
    config = ExecutorConfig().model_copy(update={"kind": "carrier-pigeon"})
    with pytest.raises(ConfigError, match="unknown executor kind 'carrier-pigeon'.*dask, local") as info:
        make_executor(config, 1, 3, tmp_path)
    assert info.value.key_path == "executor.kind"


def test_the_local_factory_starts_no_more_workers_than_jobs(tmp_path):
    executor = make_executor(ExecutorConfig(workers=4, time_limit_seconds=60), 1, 2, tmp_path)
    try:
        assert isinstance(executor, LocalExecutor)
        assert executor.parallel_jobs == 2 and executor.worker_log == tmp_path / "workers.log"
        assert executor.outstanding() == 0 and "2 worker" in executor.description
    finally:
        executor.shutdown()
