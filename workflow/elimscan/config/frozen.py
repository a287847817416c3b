"""The base of every config model: immutable, unknown keys refused."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict


class Frozen(BaseModel):
    """Base of every config model: immutable, unknown keys refused."""

    model_config = ConfigDict(extra="forbid", frozen=True)
