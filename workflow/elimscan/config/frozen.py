"""The base of every config model: immutable, unknown keys refused, every float finite."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict


class Frozen(BaseModel):
    """Base of every config model: immutable, unknown keys refused, every float finite (no inf or nan)."""

    model_config = ConfigDict(extra="forbid", frozen=True, allow_inf_nan=False)
