"""How the results are read: the geometric rule's windows, the energy of the product mix, substituent series."""

from __future__ import annotations

from typing import Literal

from pydantic import Field, field_validator, model_validator

from elimscan.config.frozen import Frozen
from elimscan.config.molecules import file_name_length


class RuleConfig(Frozen):
    """The geometric rule: dihedral windows and the energy window for 'accessible'."""

    #: |H-C-C-X| at least this is anti-periplanar (degrees)
    anti_min_deg: float = Field(150.0, gt=90, le=180)
    #: |H-C-C-X| at most this is syn-periplanar (degrees)
    syn_max_deg: float = Field(30.0, ge=0, lt=90)
    #: a geometry within this of the global minimum counts as accessible (kcal/mol)
    energy_window_kcal_mol: float = Field(3.0, gt=0)


class AnalysisConfig(Frozen):
    """Which energy drives the product mix (reserved for the free-energy issue)."""

    energy: Literal["electronic", "free"] = "electronic"


class SeriesMemberConfig(Frozen):
    """One member of a substituent series: a substrate (by name) and its substituent constant sigma."""

    substrate: str = Field(min_length=1)
    #: Hammett-type substituent constant of this member (dimensionless), copied from a published table
    sigma: float = Field(allow_inf_nan=False)


#: a Hammett fit needs at least this many members with a barrier
SERIES_MIN_MEMBERS = 3


class SeriesConfig(Frozen):
    """A substituent series: substrates (entries of ``substrates:``) with their sigma, all run with one base.

    The report plots each member's lowest E2 barrier as log10(k/k0) against sigma and fits the slope rho;
    k0 is the member with sigma 0 when there is one, else the first member with a barrier.
    """

    name: str = Field(min_length=1)
    base: str = Field(min_length=1)
    members: tuple[SeriesMemberConfig, ...]

    _name_length = field_validator("name", mode="after")(file_name_length)
    #: where the sigma values come from (shown beside the fit in the report), e.g. a table and its citation
    sigma_source: str | None = None

    @model_validator(mode="after")
    def _members_usable(self) -> "SeriesConfig":
        if len(self.members) < SERIES_MIN_MEMBERS:
            raise ValueError(f"series '{self.name}' has {len(self.members)} member(s): a Hammett fit needs at least "
                             f"{SERIES_MIN_MEMBERS}")
        seen: dict[str, int] = {}
        for index, member in enumerate(self.members):
            if member.substrate in seen:
                raise ValueError(f"series '{self.name}' member {index} repeats substrate '{member.substrate}' "
                                 f"(member {seen[member.substrate]}; counted from 0)")
            seen[member.substrate] = index
        if len({m.sigma for m in self.members}) < 2:
            raise ValueError(f"series '{self.name}': every member has sigma {self.members[0].sigma:g}, so no slope "
                             "can be fitted")
        return self
