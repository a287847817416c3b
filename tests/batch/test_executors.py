"""The executor contract: every registered executor has what the driver calls; an unknown kind is refused by name;
the driver takes the executor and its parallel-jobs hint from the registry alone."""

from __future__ import annotations

import inspect

import pytest

from elimscan.batch import driver
from elimscan.batch.events import Done
from elimscan.batch.executors import EXECUTORS, Executor, make_executor, planned_parallel_jobs
from elimscan.batch.local import LocalExecutor
from elimscan.batch.lock import prepare_batch_folder
from elimscan.batch.plan import plan_batch
from elimscan.batch.store import STORE_FILE, JobStore
from elimscan.config import ExecutorConfig, default_workers, parse_config
from elimscan.errors import ConfigError
from elimscan.results.records import ErrorInfo
from toyjobs import TOY_SETTINGS

#: the Protocol's members (its own, not typing's)
MEMBERS = sorted(name for name in vars(Executor) if not name.startswith("_"))


def test_the_protocol_states_what_the_driver_calls():
    assert MEMBERS == ["description", "from_config", "outstanding", "parallel_jobs", "planned_parallel_jobs", "poll",
                       "shutdown", "submit"]
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


def test_the_parallel_hint_for_the_status_comes_from_each_executor_class():
    # as before the registry took it over: local counts its workers, Dask knows its size only once connected
    assert planned_parallel_jobs(ExecutorConfig(workers=3)) == 3
    assert planned_parallel_jobs(ExecutorConfig()) == default_workers()
    assert planned_parallel_jobs(ExecutorConfig(kind="dask", address="tcp://127.0.0.1:8786")) == 0
    assert planned_parallel_jobs(ExecutorConfig().model_copy(update={"kind": "carrier-pigeon"})) == 0


class ScriptedExecutor:
    """An executor in a few lines: every job it is given ends at once as failed (nothing is computed)."""

    def __init__(self):
        self._pending: list[Done] = []

    @classmethod
    def from_config(cls, config, threads, n_tasks, out):
        return cls()

    @classmethod
    def planned_parallel_jobs(cls, config):
        return 7

    @property
    def parallel_jobs(self):
        return 7

    @property
    def description(self):
        return "scripted executor"

    def submit(self, tasks):
        self._pending += [Done(task.key, "scripted", 0.0, error=ErrorInfo(
            error_type="worker_died", error_message=f"scripted: {task.job_id} not computed")) for task in tasks]

    def outstanding(self):
        return len(self._pending)

    def poll(self, timeout_s):
        events, self._pending = self._pending, []
        return events

    def shutdown(self, kill=False):
        self._pending = []


def test_the_driver_takes_the_executor_and_its_parallel_hint_from_the_registry_alone(tmp_path, monkeypatch):
    # a registry entry is all a new executor needs: the driver names no kind
    monkeypatch.setitem(EXECUTORS, "local", ScriptedExecutor)
    path = tmp_path / "batch.yaml"
    path.write_text(TOY_SETTINGS + "substrates: [{name: 2-chloropropane, smiles: 'CC(C)Cl'}]\nbases: [{name: methoxide}]\n")
    plan = plan_batch(parse_config(path.read_text(), str(path)), path)
    out = tmp_path / "out"
    prepare_batch_folder(out)
    outcome = driver.run_batch(plan, out, plan.config.executor, 1)
    assert (outcome.n_jobs, outcome.n_failed, outcome.n_computed) == (1, 1, 1)
    assert outcome.failures[0][1].error_message == "scripted: 2-chloropropane__methoxide not computed"
    with JobStore(out / STORE_FILE, read_only=True) as store:
        assert store.last_run().parallel_jobs == 7
