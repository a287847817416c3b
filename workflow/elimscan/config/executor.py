"""Where the jobs of a batch run (local worker processes or a Dask cluster), how many at once, and their time limits."""

from __future__ import annotations

import os
import re
from typing import Literal

from pydantic import Field, model_validator

from elimscan.config.frozen import Frozen

#: Per-job wall-time limit of a batch (s): a job still running after this is stopped and recorded as
#: failed (error_type time_limit). Four hours: a large substrate with every path takes well under one.
DEFAULT_JOB_TIME_LIMIT_SECONDS = 14400.0


#: a Dask scheduler address: an optional protocol, a host name or address (IPv6 in brackets), an optional port
SCHEDULER_ADDRESS = re.compile(r"^(?:(?:tcp|tls|ucx|ws|wss|inproc)://)?(?:\[[0-9A-Fa-f:.]+\]|[A-Za-z0-9._-]+)"
                               r"(?::[0-9]{1,5})?(?:/[A-Za-z0-9._/-]*)?$")


def default_workers() -> int:
    """Return the default number of local worker processes: the cores this process may run on."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not Linux
        return max(1, os.cpu_count() or 1)


class ExecutorConfig(Frozen):
    """Where the jobs of a batch run: local worker processes (default) or an existing Dask cluster."""

    kind: Literal["local", "dask"] = "local"
    #: Dask scheduler address (kind: dask), e.g. tcp://10.0.0.5:8786
    address: str | None = None
    #: local worker processes, one job and one xTB thread each; None = default_workers() (the core count)
    workers: int | None = Field(None, ge=1)
    #: a job running longer than this is stopped (its process killed) and recorded as failed (s)
    time_limit_seconds: float = Field(DEFAULT_JOB_TIME_LIMIT_SECONDS, gt=0)
    #: a job that stays longer than this in one stage (a substrate's analysis, a base, a job's paths) is stopped
    #: the same way and recorded as failed with error_type stage_time_limit (s); None = no stage limit
    stage_time_limit_seconds: float | None = Field(None, gt=0)

    @model_validator(mode="after")
    def _address_for_dask(self) -> "ExecutorConfig":
        if self.kind == "dask" and not self.address:
            raise ValueError("executor kind 'dask' needs an address (the scheduler, e.g. tcp://host:8786)")
        if self.kind == "local" and self.address:
            raise ValueError("executor.address is the Dask scheduler: set kind: dask, or drop the address")
        if self.address and not SCHEDULER_ADDRESS.match(self.address):
            raise ValueError(f"'{self.address}' is not a Dask scheduler address (e.g. tcp://10.0.0.5:8786 or "
                             "host:8786)")
        return self
