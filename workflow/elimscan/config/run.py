"""A whole run: the ``RunConfig`` that holds every other config model, with the checks across its parts."""

from __future__ import annotations

from typing import Annotated, Any

from pydantic import Field, ValidationInfo, field_validator, model_validator

from elimscan.config.analysis import AnalysisConfig, RuleConfig, SeriesConfig
from elimscan.config.conformers import ConformerConfig, ScanConfig
from elimscan.config.dft import DftConfig
from elimscan.config.executor import ExecutorConfig
from elimscan.config.experiment import experiment_problem
from elimscan.config.frozen import Frozen
from elimscan.config.method import MethodConfig, OptimizerConfig, SolventConfig, ThreadsConfig
from elimscan.config.molecules import SUBSTRATE_FILE_SUFFIXES, BaseConfig, PairConfig, SubstrateConfig
from elimscan.config.names import clash_message, clashing_names
from elimscan.config.paths import PathConfig
from elimscan.errors import SolventError
from elimscan.solvents import check_solvent

#: Random seed used when the config gives none (RDKit embedding, base rotations).
DEFAULT_SEED = 20261202
#: seeds are whole numbers 0 <= seed < SEED_LIMIT: RDKit's random seed is a signed 32-bit integer, and -1
#: (or any negative seed) makes its embedding random, which a recorded seed could not repeat
SEED_LIMIT = 2**31


class RunConfig(Frozen):
    """A whole elimscan run: method, molecules and the jobs to compute."""

    name: str = Field("elimscan-run", min_length=1)
    #: random seed of the RDKit embeddings (0 <= seed < 2**31)
    seed: int = Field(DEFAULT_SEED, ge=0, lt=SEED_LIMIT)
    method: MethodConfig = MethodConfig()
    optimizer: OptimizerConfig = OptimizerConfig()
    threads: ThreadsConfig = ThreadsConfig()
    conformers: ConformerConfig = ConformerConfig()
    scan: ScanConfig = ScanConfig()
    rule: RuleConfig = RuleConfig()
    paths: PathConfig = PathConfig()
    #: substrates listed in the YAML; a batch may take more (or all) from ``substrates_file``
    substrates: Annotated[tuple[SubstrateConfig, ...], Field(min_length=1)] = ()
    #: batches: a CSV (columns name, smiles, optional charge, multiplicity) or SMILES file of more substrates,
    #: path relative to the config file; a bad row fails only its jobs
    substrates_file: str | None = None
    bases: tuple[BaseConfig, ...] = Field(min_length=1)
    pairs: tuple[PairConfig, ...] | None = None
    #: batches: every job once per listed solvent (each like method.solvent, which it replaces)
    solvents: Annotated[tuple[SolventConfig, ...], Field(min_length=1)] | None = None
    analysis: AnalysisConfig = AnalysisConfig()
    #: batches: where the jobs run (local processes or Dask) and the per-job time limit
    executor: ExecutorConfig = ExecutorConfig()
    #: substituent series (Hammett plots): members name substrates, the series names the base
    series: tuple[SeriesConfig, ...] = ()
    #: optional DFT single points on the saddles of each job (PySCF; off by default)
    dft: DftConfig = DftConfig()

    @field_validator("seed", mode="before")
    @classmethod
    def _seed_range(cls, value: Any) -> Any:
        if isinstance(value, int) and not isinstance(value, bool) and not 0 <= value < SEED_LIMIT:
            raise ValueError(f"seed {value} is outside 0 to {SEED_LIMIT - 1}: RDKit's random seed is a 32-bit "
                             "integer, and a negative one makes every embedding random (not repeatable)")
        return value

    @field_validator("substrates", "bases")
    @classmethod
    def _unique_names(cls, items: tuple[Any, ...]) -> tuple[Any, ...]:
        seen: dict[str, int] = {}
        for index, item in enumerate(items):
            if item.name in seen:
                raise ValueError(f"duplicate name '{item.name}' (entries {seen[item.name]} and {index}, counted from 0)")
            seen[item.name] = index
        clash = clashing_names(item.name for item in items)
        if clash is not None:
            raise ValueError(clash_message(*clash))
        return items

    @field_validator("substrates_file")
    @classmethod
    def _substrates_file_suffix(cls, value: str | None) -> str | None:
        if value is not None and not value.lower().endswith(SUBSTRATE_FILE_SUFFIXES):
            raise ValueError(f"substrates file '{value}' must end in {', '.join(SUBSTRATE_FILE_SUFFIXES)}")
        return value

    @model_validator(mode="after")
    def _some_substrates(self) -> "RunConfig":
        if not self.substrates and self.substrates_file is None:
            raise ValueError("no substrates: give 'substrates:' (a list) or 'substrates_file:' (a CSV or SMILES file)")
        return self

    @field_validator("solvents")
    @classmethod
    def _solvents_supported(cls, solvents: tuple[SolventConfig, ...] | None,
                            info: ValidationInfo) -> tuple[SolventConfig, ...] | None:
        method = info.data.get("method")
        if solvents is None or method is None:
            return solvents
        seen: dict[tuple[str, str | None], int] = {}
        for index, solvent in enumerate(solvents):
            try:
                name = check_solvent(method.backend, method.hamiltonian, solvent.model, solvent.name)
            except SolventError as err:
                raise ValueError(f"entry {index}: {err}") from err
            if (solvent.model, name) in seen:
                raise ValueError(f"entry {index} repeats entry {seen[(solvent.model, name)]} ({solvent.model} {name})")
            seen[(solvent.model, name)] = index
        return solvents

    @model_validator(mode="after")
    def _pairs_known(self) -> "RunConfig":
        substrates = {s.name for s in self.substrates}
        bases = {b.name for b in self.bases}
        for pair in self.pairs or ():
            if pair.substrate not in substrates and self.substrates_file is None:  # file rows: checked by the batch
                raise ValueError(f"pair names unknown substrate '{pair.substrate}' (known: {', '.join(sorted(substrates))})")
            if pair.base not in bases:
                raise ValueError(f"pair names unknown base '{pair.base}' (known: {', '.join(sorted(bases))})")
        return self

    @model_validator(mode="after")
    def _experiments_known(self) -> "RunConfig":
        pairs = {(p.substrate, p.base) for p in self.pairs} if self.pairs else None
        problem = experiment_problem(self.substrates, {b.name for b in self.bases}, pairs)
        if problem is not None:
            raise problem
        return self

    @field_validator("series")
    @classmethod
    def _series_known(cls, series: tuple[SeriesConfig, ...], info: ValidationInfo) -> tuple[SeriesConfig, ...]:
        if "substrates" not in info.data or "bases" not in info.data:
            return series  # an error there is reported first
        substrates = {s.name for s in info.data["substrates"]}
        bases = {b.name for b in info.data["bases"]}
        pairs = info.data.get("pairs")
        from_file = info.data.get("substrates_file") is not None
        clash = clashing_names(item.name for item in series)  # series names become plot file names
        if clash is not None:
            raise ValueError(clash_message(*clash))
        names: dict[str, int] = {}
        for k, item in enumerate(series):
            if item.name in names:
                raise ValueError(f"series {k} repeats the name '{item.name}' of series {names[item.name]}")
            names[item.name] = k
            if item.base not in bases:
                raise ValueError(f"series '{item.name}' names unknown base '{item.base}' (known: {', '.join(sorted(bases))})")
            for index, member in enumerate(item.members):
                where = f"series '{item.name}' member {index} ('{member.substrate}')"
                if member.substrate not in substrates and not from_file:  # file rows: their names are read by the batch
                    raise ValueError(f"{where}: unknown substrate (known: {', '.join(sorted(substrates))})")
                if pairs and not any(p.substrate == member.substrate and p.base == item.base for p in pairs):
                    raise ValueError(f"{where}: 'pairs' has no job of this substrate with base '{item.base}'")
        return series

    def jobs(self) -> list[tuple[SubstrateConfig, BaseConfig]]:
        """Return the (substrate, base) jobs: the given pairs, else every substrate with every base."""
        by_substrate = {s.name: s for s in self.substrates}
        by_base = {b.name: b for b in self.bases}
        if self.pairs:
            return [(by_substrate[p.substrate], by_base[p.base]) for p in self.pairs]
        return [(s, b) for s in self.substrates for b in self.bases]
