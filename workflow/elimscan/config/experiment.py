"""What experiment observed for one substrate x base: shares or a major product, with a required source.

A substrate may carry ``experiment:``, a mapping from base names to an ``ExperimentConfig``. The report shows
it beside the computed values and scores the job against it (right / wrong / undecided; undecided counts as
not right). Only the shape is checked here (numbers, the source, a known base); the SMILES are checked
against the substrate's possible alkenes before any calculation (``chem.inputcheck.experiment_alkene_problem``,
called by ``elimscan plan``, ``run`` and ``batch``).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from pydantic import Field, ValidationError, model_validator
from pydantic_core import InitErrorDetails, PydanticCustomError

from elimscan.config.frozen import Frozen

#: the word that names the substitution (SN2) product as the major product
SUBSTITUTION_PRODUCT = "substitution"
#: published alkene shares may add up to this much over 100 % (rounding in the sources), in percent
SHARE_SUM_SLACK_PERCENT = 1.0
#: at most this many alkenes in one observation (a substrate gives a handful)
MAX_OBSERVED_ALKENES = 20
#: a source must say at least this much (authors, journal, year: far longer; a bare 'x' is no source)
MIN_SOURCE_CHARS = 8


class ExperimentConfig(Frozen):
    """An observation for one substrate x base: alkene shares (percent of the alkenes), the major product and the
    E2 share of E2 + SN2 (percent), each optional but not all absent, and where it comes from."""

    #: alkene SMILES -> percent of all alkenes (0-100); E and Z isomers written apart
    alkene_shares: dict[str, float] = Field(default_factory=dict, max_length=MAX_OBSERVED_ALKENES)
    #: the major product: an alkene SMILES, or 'substitution' when the SN2 product is the main one
    major: str | None = Field(None, min_length=1)
    #: elimination as percent of elimination + substitution (0-100)
    e2_percent: float | None = Field(None, ge=0, le=100)
    #: where the observation comes from: authors, journal, year (add 'from memory' when not checked)
    source: str = Field(min_length=MIN_SOURCE_CHARS)
    #: the conditions of the observation (solvent, temperature), shown beside it
    conditions: str | None = None

    @model_validator(mode="after")
    def _consistent(self) -> "ExperimentConfig":
        if not self.alkene_shares and self.major is None and self.e2_percent is None:
            raise ValueError("an experiment needs at least one of 'alkene_shares', 'major' or 'e2_percent'")
        for smiles, percent in self.alkene_shares.items():
            if not 0 <= percent <= 100:
                raise ValueError(f"alkene_shares: '{smiles}' has {percent:g} %, outside 0 to 100")
        total = sum(self.alkene_shares.values())
        if total > 100 + SHARE_SUM_SLACK_PERCENT:
            raise ValueError(f"alkene_shares add up to {total:g} %, more than 100 % (+{SHARE_SUM_SLACK_PERCENT:g} "
                             "for rounding)")
        if self.e2_percent is not None and self.major is not None:
            if self.major == SUBSTITUTION_PRODUCT and self.e2_percent > 50:
                raise ValueError(f"major is '{SUBSTITUTION_PRODUCT}' but e2_percent is {self.e2_percent:g} %")
            if self.major != SUBSTITUTION_PRODUCT and self.e2_percent < 50:
                raise ValueError(f"major is an alkene but e2_percent is {self.e2_percent:g} %: the substitution "
                                 f"product is the main one (major: {SUBSTITUTION_PRODUCT})")
        if self.major is not None and self.major != SUBSTITUTION_PRODUCT and self.alkene_shares:
            top = max(self.alkene_shares.values())
            if self.major in self.alkene_shares and self.alkene_shares[self.major] < top:
                raise ValueError(f"major '{self.major}' has {self.alkene_shares[self.major]:g} %, less than another "
                                 f"alkene's {top:g} %")
        return self

    def expected_major(self) -> str | None:
        """Return the major product this observation names: 'major', else from the shares, else None."""
        if self.major is not None:
            return self.major
        if self.e2_percent is not None and self.e2_percent < 50:
            return SUBSTITUTION_PRODUCT
        # the largest share names the major alkene only when no unlisted alkene can beat it: above half, or the
        # listed shares are the whole (100 % within rounding) with no tie at the top
        top = sorted(self.alkene_shares.values(), reverse=True)
        whole = sum(top) >= 100 - SHARE_SUM_SLACK_PERCENT
        if top and (top[0] > 50 or (whole and (len(top) == 1 or top[0] > top[1]))):
            return max(self.alkene_shares, key=self.alkene_shares.get)
        return None

    def about_substitution(self) -> bool:
        """Return True when the observation says something about E2 against SN2 (e2_percent, or SN2 as major)."""
        return self.e2_percent is not None or self.major == SUBSTITUTION_PRODUCT


def located_problem(loc: Sequence[str | int], message: str, value: object) -> ValidationError:
    """Return a validation error at key path ``loc`` (a check across blocks whose error names the key it is about)."""
    return ValidationError.from_exception_data("RunConfig", [InitErrorDetails(
        type=PydanticCustomError("value_error", message), loc=tuple(loc), input=value)])


def experiment_problem(substrates: Iterable, bases: set[str], pairs: set[tuple[str, str]] | None
                       ) -> ValidationError | None:
    """Return the first experiment that names an unknown base or a substrate x base that is not a job, else None."""
    for index, substrate in enumerate(substrates):
        for base in substrate.experiment:
            loc = ("substrates", index, "experiment", base)
            if base not in bases:
                return located_problem(loc, f"names unknown base '{base}' (known: {', '.join(sorted(bases))})", base)
            if pairs is not None and (substrate.name, base) not in pairs:
                return located_problem(loc, f"'pairs' has no job of substrate '{substrate.name}' with base '{base}'", base)
    return None
