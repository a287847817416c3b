"""Planning a batch: every job of a config (substrate x base x solvent) with its key, id, single-job config and input error.

A job's key is a SHA-256 of its inputs and of every setting and library version that changes its numbers
(``pipeline.document.job_key``); the driver skips the keys its store already holds.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

from pydantic import ValidationError

from elimscan.config import BaseConfig, RunConfig, SolventConfig, SubstrateConfig
from elimscan.config.dft import BSE_BASIS_KEYS
from elimscan.errors import ConfigError, StructureError
from elimscan.versions import numeric_versions
from elimscan.results.records import ErrorInfo
from elimscan.pipeline.document import canonical_solvent, job_inputs, job_key, solvent_label
from elimscan.batch.inputs import SubstrateRow, read_geometries, read_substrate_file

#: the longest file or folder name (bytes, UTF-8) that common file systems hold (ext4, XFS, btrfs, APFS, NTFS):
#: a job whose folder or base file name is longer cannot be written, so it fails on its input
NAME_MAX_BYTES = 255


@dataclass(frozen=True)
class PlannedJob:
    """One job of a batch: its key and id, inputs, the single-job config, and an input error if it cannot run."""

    key: str
    job_id: str
    substrate_name: str
    substrate_smiles: str
    base: BaseConfig
    solvent: SolventConfig
    source: str
    config: RunConfig | None = None
    substrate: SubstrateConfig | None = None
    geometry: tuple[str, str] | None = None
    input_error: ErrorInfo | None = None

    @property
    def folder(self) -> str:
        """Return the folder of this job's files, relative to the output folder (one per key)."""
        return f"jobs/{self.job_id}/{self.key[:12]}"


@dataclass(frozen=True)
class BatchPlan:
    """The jobs of a batch config, the config with file rows merged in, and the substrates file's checksum."""

    config: RunConfig
    jobs: tuple[PlannedJob, ...]
    substrates_file: str | None
    substrates_file_sha256: str | None
    versions: dict[str, str]
    #: (what, resolved path) of every file the plan read: the config, the substrates file, geometry files
    input_files: tuple[tuple[str, Path], ...] = ()

    @property
    def n_input_failures(self) -> int:
        """Return the number of jobs that fail on their input (no worker runs them)."""
        return sum(job.input_error is not None for job in self.jobs)


def _substrate_problem(smiles: str, charge: int | None, multiplicity: int, what: str,
                       seed: int | None = None, full: bool = True) -> tuple[int | None, str | None]:
    """Return (total charge, None) when a molecule is usable, else (None, the problem naming it).

    With a ``seed`` the molecule is a substrate and is perceived (leaving group, beta H; in full, or with
    ``full=False`` by its graph only, for file rows); without, a base (it needs a basic atom).
    """
    from elimscan.chem.inputcheck import check_base, check_substrate

    try:
        if seed is None:
            total = check_base(smiles, charge, multiplicity, what)
        else:
            total = check_substrate(smiles, charge, multiplicity, what, seed, full)
    except StructureError as err:
        return None, str(err)
    return total, None


def _same_molecule_problem(name: str, smiles: str, base: BaseConfig, row: "SubstrateRow | None") -> str | None:
    """Return why a job whose base is its own substrate cannot run (naming the file row), or None."""
    from elimscan.chem.inputcheck import check_pair

    try:
        check_pair(name, smiles, base.name, base.smiles)
    except StructureError as err:
        return f"{row.source}: {err}" if row else str(err)
    return None


def _name_bytes(name: str) -> int:
    return len(name.encode("utf-8", "surrogateescape"))


def _long_name_problem(what: str, name: str, file_name: str, kind: str) -> str | None:
    """Return why the file or folder name ``file_name`` made from a user-given name is too long to write, or None."""
    from elimscan.output.text import printable

    size = _name_bytes(file_name)
    if size <= NAME_MAX_BYTES:
        return None
    shown = printable(name if len(name) <= 40 else name[:40] + "…")
    return (f"{what} '{shown}' ({len(name)} characters) makes its {kind} name {size} bytes long; file systems hold "
            f"at most {NAME_MAX_BYTES}: shorten the name")


def plan_batch(config: RunConfig, config_path: str | Path) -> BatchPlan:
    """Return the planned jobs of a batch config; read its substrates file and geometry files (relative to the config).

    Bad SMILES or charges in the YAML raise ConfigError/StructureError (nothing is computed); a bad row of
    the substrates file only fails its own jobs.
    """
    from elimscan.chem.inputcheck import gas_phase_ion_problem, modelled_charge
    from elimscan.pipeline.names import job_id_of, safe_name

    folder = Path(config_path).parent
    versions = numeric_versions(config.method.backend, dft=config.dft.enabled,
                                basis_data=config.dft.basis in BSE_BASIS_KEYS)
    rows: list[SubstrateRow] = []
    file_sha = None
    inputs_read: list[tuple[str, Path]] = [("config file", Path(config_path))]
    if config.substrates_file is not None:
        path = Path(config.substrates_file)
        path = path if path.is_absolute() else folder / path
        rows, file_sha = read_substrate_file(path, config.substrates_file)
        inputs_read.append(("substrates file", path))
    for index, item in enumerate(config.bases):  # the YAML's names must fit in a file name, as its SMILES must parse
        problem = _long_name_problem("base name", item.name, f"base-{safe_name(item.name)}.xyz", "file")
        if problem is not None:
            raise ConfigError(problem, key_path=f"bases.{index}.name")
    # the YAML's molecules must be usable, as for 'run'; file rows fail on their own
    charges: dict[str, int] = {}
    for role, items in (("substrate", config.substrates), ("base", config.bases)):
        for index, item in enumerate(items):
            total, problem = _substrate_problem(item.smiles, item.charge, item.multiplicity, f"{role} '{item.name}'",
                                                config.seed if role == "substrate" else None)
            if problem is not None:
                raise StructureError(problem, key_path=f"{role}s.{index}.smiles")
            charges[f"{role} '{item.name}'"] = (total if role == "substrate"
                                                else modelled_charge(total, item.model.counter_ion))
    names = {s.name: "in the config" for s in config.substrates}
    merged: list[SubstrateConfig] = list(config.substrates)
    row_of: dict[str, SubstrateRow] = {}
    config_rule_rows: set[str] = set()  # rows that break a rule of the config itself (a name too long, a spin state)
    for row in rows:
        duplicate = row.name in names
        if duplicate:  # the row fails under a name of its own; the first use keeps its jobs
            row = replace(row, name=f"{row.name}@line{row.line}",
                          problem=f"{row.source}: substrate name '{row.name}' is already used ({names[row.name]})")
        elif row.problem is None:
            total, problem = _substrate_problem(row.smiles, row.charge, row.multiplicity, f"substrate '{row.name}'",
                                                config.seed, full=False)
            if problem is not None:
                row = replace(row, problem=f"{row.source}: {problem}")
            else:
                charges[f"substrate '{row.name}'"] = total
        names[row.name] = f"on {row.source}"
        if row.name and row.smiles and not duplicate:  # recorded in results.json's config, bad SMILES too
            try:
                merged.append(SubstrateConfig(name=row.name, smiles=row.smiles, charge=row.charge,
                                              multiplicity=row.multiplicity))
            except ValidationError as err:  # the config's own rules (name, multiplicity): only this row fails
                why = "; ".join(e["msg"].removeprefix("Value error, ") for e in err.errors())
                if row.problem is None:
                    row = replace(row, problem=f"{row.source}: {why}")
                    config_rule_rows.add(row.name)
        row_of[row.name] = row
    bases = {b.name: b for b in config.bases}
    for index, pair in enumerate(config.pairs or ()):
        if pair.substrate not in names:
            raise ConfigError(f"pair names unknown substrate '{pair.substrate}' (not in the config nor in "
                              f"'{config.substrates_file}')", key_path=f"pairs.{index}.substrate")
    kept = {s.name for s in merged}
    for index, item in enumerate(config.series):
        for number, member in enumerate(item.members):
            if member.substrate not in kept:
                raise ConfigError(f"series '{item.name}' member {number} ('{member.substrate}'): no such substrate in "
                                  f"the config nor a row with a SMILES in '{config.substrates_file}'",
                                  key_path=f"series.{index}.members.{number}.substrate")
    if not merged:
        raise ConfigError(f"no substrate to compute: none in the config, and no row of '{config.substrates_file}' has "
                          f"a name and a SMILES ({len(rows)} row(s) read)", key_path="substrates_file")
    merged_config = RunConfig.model_validate({
        **config.model_dump(mode="json", exclude={"substrates", "substrates_file", "pairs"}),
        "substrates": [s.model_dump(mode="json") for s in merged],
        "pairs": None if config.pairs is None else [p.model_dump() for p in config.pairs if p.substrate in kept]})
    geometries = read_geometries(config, folder)
    inputs_read += [(f"geometry file of substrate '{s.name}'", Path(s.geometry) if Path(s.geometry).is_absolute()
                     else folder / s.geometry) for s in config.substrates if s.geometry is not None]
    by_name = {s.name: s for s in merged}
    if config.pairs:
        pairs = [(p.substrate, bases[p.base]) for p in config.pairs]
    else:
        pairs = [(name, b) for name in names for b in config.bases]
    solvents = [canonical_solvent(s, config) for s in (config.solvents or (config.method.solvent,))]
    jobs = []
    for name, base in pairs:
        row = row_of.get(name)
        substrate = by_name.get(name)
        for solvent in solvents:
            source = row or substrate
            inputs = job_inputs(name, source.smiles, source.charge, source.multiplicity,
                                geometries[name][0] if name in geometries else None)
            key = job_key(config, inputs, base, solvent, versions)
            job_id = job_id_of(name, base.name)
            if config.solvents:
                job_id += f"__{safe_name(solvent_label(solvent))}"
            too_long = _long_name_problem("substrate name", name, job_id, "job folder")
            if too_long is not None and row is None:
                index = next(i for i, s in enumerate(config.substrates) if s.name == name)
                raise ConfigError(too_long, key_path=f"substrates.{index}.name")
            common = dict(key=key, job_id=job_id, substrate_name=name, substrate_smiles=inputs["smiles"], base=base,
                          solvent=solvent, source=row.source if row else "config")
            problem = row.problem if row else None
            if problem is not None and name in config_rule_rows:
                jobs.append(PlannedJob(**common, input_error=ErrorInfo(error_type="config_error", error_message=problem)))
                continue
            if problem is None and too_long is not None:  # a file row: only its jobs fail
                jobs.append(PlannedJob(**common, input_error=ErrorInfo(error_type="config_error",
                                                                       error_message=f"{row.source}: {too_long}")))
                continue
            if problem is None:
                problem = _same_molecule_problem(name, inputs["smiles"], base, row)
            if problem is None:
                problem = gas_phase_ion_problem(solvent.model, {w: q for w, q in charges.items()
                                                               if w in (f"substrate '{name}'", f"base '{base.name}'")})
                error_type = "config_error"
            else:
                error_type = "structure_error"
            if problem is not None:
                jobs.append(PlannedJob(**common, input_error=ErrorInfo(error_type=error_type, error_message=problem)))
                continue
            from elimscan.pipeline.jobs import single_job_config

            jobs.append(PlannedJob(**common, substrate=substrate, geometry=geometries.get(name),
                                   config=single_job_config(config, substrate, base, solvent)))
    seen: dict[str, PlannedJob] = {}
    for job in jobs:
        if job.job_id in seen:
            other = seen[job.job_id]
            raise ConfigError(f"two jobs would have the id '{job.job_id}' ({other.substrate_name} + {other.base.name} "
                              f"and {job.substrate_name} + {job.base.name}): a pair is listed twice, or two names differ "
                              "only in characters that file names cannot hold", key_path="pairs" if config.pairs else None)
        seen[job.job_id] = job
    return BatchPlan(merged_config, tuple(jobs), config.substrates_file, file_sha, versions, tuple(inputs_read))

