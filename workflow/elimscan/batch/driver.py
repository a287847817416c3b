"""Overnight batches: many jobs, resumable, on local worker processes or an existing Dask cluster.

The driver (this module, in the ``elimscan batch`` process) plans the jobs of a config (substrates from
the YAML and from ``substrates_file``, every base, every solvent of ``solvents:``), gives each a key
(a SHA-256 of its inputs and of every setting and library version that changes its numbers), skips the
keys the store already holds, and hands the rest to workers (``workers.py``). Workers compute and return a
``JobOutcome``; only the driver writes: first the job's files (temporary file, fsync, rename), then one
store transaction with the record and the files' checksums. Killing the driver at any moment loses at most
the jobs being computed. ``results.json`` and ``batch.json`` are assembled from the store's rows for the
current config's keys.

Only this module (with ``store.py``) and ``cli`` touch output folders. Progress is reported through a
callback, never printed.
"""

from __future__ import annotations

import csv
import datetime as _dt
import difflib
import fcntl
import hashlib
import io
import json
import logging
import os
import signal
import socket
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field, replace
from pathlib import Path, PurePosixPath

from pydantic import ValidationError

from elimscan.atomicio import remove_stale_temporaries, write_bytes_atomic
from elimscan.config import (BaseConfig, ExecutorConfig, RunConfig, SolventConfig, SubstrateConfig,
                             default_workers)
from elimscan.errors import ConfigError, OutputError, StructureError
from elimscan.versions import numeric_versions
from elimscan.results.documents import BatchCounts, BatchIndex, BatchJobEntry, FileChecksum, Provenance, RunResult
from elimscan.results.records import ErrorInfo, JobRecord, MoleculeRecord
from elimscan.batch.store import STORE_FILE, JobStore, StoredJob
from elimscan.pipeline.document import (canonical_solvent, job_inputs, job_key, provenance, run_document, solvent_label,
                                        utc_now)
from elimscan.batch.workers import (WORKER_LOG_FILE, DaskExecutor, Done, JobTask, LocalExecutor,
                              Progress, Started)
from elimscan.batch.workers import LOG_FILE  # noqa: F401  (the batch folder's log; cli opens it)

log = logging.getLogger("elimscan.batch")

RESULTS_FILE = "results.json"
INDEX_FILE = "batch.json"
LOCK_FILE = "batch.lock"
#: output-relative record fields that name a job's files
_FILE_FIELDS = frozenset({"conformer_file", "xyz_file", "path_file", "saddle_file"})
#: seconds between two store updates of one running job's step (status reads them)
_STEP_WRITE_INTERVAL_S = 2.0


# --- substrates from a file --------------------------------------------------------------------------------


@dataclass(frozen=True)
class SubstrateRow:
    """One substrate read from a substrates file; ``problem`` says why the row cannot run (None: fine)."""

    name: str
    smiles: str
    charge: int | None
    multiplicity: int
    source: str
    line: int
    problem: str | None = None


_CSV_COLUMNS = ("name", "smiles", "charge", "multiplicity", "note")


def _int_field(text: str | None, what: str, minimum: int | None = None) -> tuple[int | None, str | None]:
    """Return (value, problem) for an optional integer cell."""
    if text is None or not text.strip():
        return None, None
    try:
        value = int(text.strip())
    except ValueError:
        return None, f"{what} must be a whole number, got {text.strip()!r}"
    if minimum is not None and value < minimum:
        return None, f"{what} must be at least {minimum}, got {value}"
    return value, None


def _csv_rows(text: str, display: str) -> list[SubstrateRow]:
    """Return the rows of a substrates CSV (header with name and smiles; charge, multiplicity, note optional)."""
    lines = [ln for ln in text.splitlines() if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise ConfigError(f"substrates file '{display}' has no rows", key_path="substrates_file")
    reader = csv.reader(io.StringIO(text))
    header: list[str] | None = None
    rows: list[SubstrateRow] = []
    for cells in reader:
        line = reader.line_num
        if not any(c.strip() for c in cells) or cells[0].lstrip().startswith("#"):
            continue
        if header is None:
            header = [c.strip().lower() for c in cells]
            for column in header:
                if column not in _CSV_COLUMNS:
                    close = difflib.get_close_matches(column, _CSV_COLUMNS, n=1)
                    hint = f"; did you mean '{close[0]}'?" if close else ""
                    raise ConfigError(f"substrates file '{display}' line {line}: unknown column '{column}'{hint} "
                                      f"(columns: {', '.join(_CSV_COLUMNS)}; name and smiles are required)",
                                      key_path="substrates_file")
            missing = [c for c in ("name", "smiles") if c not in header]
            if missing:
                raise ConfigError(f"substrates file '{display}' line {line}: the header needs the column(s) "
                                  f"{', '.join(missing)} (found: {', '.join(header)})", key_path="substrates_file")
            continue
        source = f"{display} line {line}"
        if len(cells) != len(header):
            name = cells[header.index("name")].strip() if len(cells) > header.index("name") else ""
            rows.append(SubstrateRow(name or f"line-{line}", "", None, 1, source, line,
                                     f"{source}: expected {len(header)} fields ({', '.join(header)}), found {len(cells)}"))
            continue
        cell = dict(zip(header, (c.strip() for c in cells)))
        charge, bad_charge = _int_field(cell.get("charge"), "charge")
        multiplicity, bad_mult = _int_field(cell.get("multiplicity"), "multiplicity", minimum=1)
        name = cell["name"] or f"line-{line}"
        problem = None
        if not cell["name"]:
            problem = f"{source}: empty name"
        elif not cell["smiles"]:
            problem = f"{source}: substrate '{name}': empty SMILES"
        elif bad_charge or bad_mult:
            problem = f"{source}: substrate '{name}': {bad_charge or bad_mult}"
        rows.append(SubstrateRow(name, cell["smiles"], charge, multiplicity or 1, source, line, problem))
    return rows


def _smiles_rows(text: str, display: str, stem: str) -> list[SubstrateRow]:
    """Return the rows of a SMILES file: 'SMILES [name]' per line; '#' comments and blank lines skipped."""
    rows = []
    for number, raw in enumerate(text.splitlines(), start=1):
        parts = raw.split(None, 1)
        if not parts or parts[0].startswith("#"):
            continue
        if parts[0].lower() == "smiles" and not rows:
            continue  # a header line
        name = parts[1].strip() if len(parts) > 1 else f"{stem}-{number}"
        rows.append(SubstrateRow(name, parts[0], None, 1, f"{display} line {number}", number))
    if not rows:
        raise ConfigError(f"substrates file '{display}' has no rows", key_path="substrates_file")
    return rows


def read_substrate_file(path: Path, display: str) -> tuple[list[SubstrateRow], str]:
    """Return the rows of a substrates file (CSV or SMILES) and the file's SHA-256; ConfigError if unreadable."""
    try:
        data = path.read_bytes()
    except OSError as err:
        raise ConfigError(f"cannot read substrates file '{path}': {err.strerror or err}", key_path="substrates_file") from err
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        raise ConfigError(f"substrates file '{display}' is not UTF-8 text ({err.reason} at byte {err.start})",
                          key_path="substrates_file") from err
    rows = _csv_rows(text, display) if path.suffix.lower() == ".csv" else _smiles_rows(text, display, path.stem)
    return rows, hashlib.sha256(data).hexdigest()


# --- planning: jobs, keys, input checks -----------------------------------------------------------------------


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


def plan_batch(config: RunConfig, config_path: str | Path) -> BatchPlan:
    """Return the planned jobs of a batch config; read its substrates file and geometry files (relative to the config).

    Bad SMILES or charges in the YAML raise ConfigError/StructureError (nothing is computed); a bad row of
    the substrates file only fails its own jobs.
    """
    from elimscan.chem.inputcheck import gas_phase_ion_problem, modelled_charge
    from elimscan.pipeline.names import job_id_of, safe_name

    folder = Path(config_path).parent
    versions = numeric_versions(config.method.backend)
    rows: list[SubstrateRow] = []
    file_sha = None
    if config.substrates_file is not None:
        path = Path(config.substrates_file)
        path = path if path.is_absolute() else folder / path
        rows, file_sha = read_substrate_file(path, config.substrates_file)
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
        row_of[row.name] = row
        if row.name and row.smiles and not duplicate:  # recorded in results.json's config, bad SMILES too
            merged.append(SubstrateConfig(name=row.name, smiles=row.smiles, charge=row.charge,
                                          multiplicity=row.multiplicity))
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
    merged_config = RunConfig.model_validate({
        **config.model_dump(mode="json", exclude={"substrates", "substrates_file", "pairs"}),
        "substrates": [s.model_dump(mode="json") for s in merged],
        "pairs": None if config.pairs is None else [p.model_dump() for p in config.pairs if p.substrate in kept]})
    geometries = read_geometries(config, folder)
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
            common = dict(key=key, job_id=job_id, substrate_name=name, substrate_smiles=inputs["smiles"], base=base,
                          solvent=solvent, source=row.source if row else "config")
            problem = row.problem if row else None
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
    return BatchPlan(merged_config, tuple(jobs), config.substrates_file, file_sha, versions)


def read_geometries(config: RunConfig, folder: Path) -> dict[str, tuple[str, str]]:
    """Return {substrate name: (file text, 'sdf' | 'xyz')} for YAML substrates that name a geometry file."""
    found = {}
    for index, item in enumerate(config.substrates):
        if item.geometry is None:
            continue
        path = Path(item.geometry) if Path(item.geometry).is_absolute() else folder / item.geometry
        try:
            text = path.read_text(encoding="utf-8")
        except OSError as err:
            raise ConfigError(f"substrate '{item.name}': cannot read geometry file '{path}': {err.strerror or err}",
                              key_path=f"substrates.{index}.geometry") from err
        found[item.name] = (text, "xyz" if path.suffix.lower() == ".xyz" else "sdf")
    return found


# --- the output folder: lock, files ---------------------------------------------------------------------------


class FolderLock:
    """An exclusive OS lock (fcntl.flock) on OUT/batch.lock, held while a batch runs; the OS drops it when the process dies."""

    def __init__(self, out: Path):
        self.path = Path(out) / LOCK_FILE
        self._fd: int | None = None

    def acquire(self) -> "FolderLock":
        """Take the lock or raise OutputError naming the batch that holds it; return self."""
        try:
            fd = os.open(self.path, os.O_RDWR | os.O_CREAT, 0o644)
        except OSError as err:
            raise OutputError(f"cannot create the lock file '{self.path}': {err.strerror or err}") from err
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            holder = os.pread(fd, 4096, 0).decode("utf-8", "replace").strip() or "unknown process"
            os.close(fd)
            raise OutputError(f"output folder '{self.path.parent}' is in use by another elimscan batch ({holder}); "
                              f"wait for it to finish, or follow it with: elimscan status {self.path.parent}") from None
        os.ftruncate(fd, 0)
        os.pwrite(fd, f"pid {os.getpid()} on {socket.gethostname()}, started {utc_now()}\n".encode(), 0)
        self._fd = fd
        return self

    def release(self) -> None:
        """Release the lock (the file stays; a stale file without a lock means nothing)."""
        if self._fd is not None:
            fcntl.flock(self._fd, fcntl.LOCK_UN)
            os.close(self._fd)
            self._fd = None

    def __enter__(self) -> "FolderLock":
        return self.acquire()

    def __exit__(self, *exc) -> None:
        self.release()


def lock_holder(out: Path) -> str | None:
    """Return who holds the batch lock of ``out`` (pid, host, start), or None when no batch runs there."""
    path = Path(out) / LOCK_FILE
    try:
        fd = os.open(path, os.O_RDONLY)
    except OSError:
        return None
    try:
        fcntl.flock(fd, fcntl.LOCK_SH | fcntl.LOCK_NB)
    except BlockingIOError:
        return os.pread(fd, 4096, 0).decode("utf-8", "replace").strip() or "unknown process"
    else:
        fcntl.flock(fd, fcntl.LOCK_UN)
        return None
    finally:
        os.close(fd)


def prepare_batch_folder(out: Path) -> None:
    """Create the output folder; refuse one that holds the result of ``elimscan run`` (raise OutputError)."""
    if (out / RESULTS_FILE).exists() and not (out / STORE_FILE).exists():
        raise OutputError(f"output folder '{out}' holds the result of 'elimscan run' ({RESULTS_FILE} without a batch "
                          f"store): a batch needs a folder of its own; choose another --out")
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as err:
        raise OutputError(f"cannot create output folder '{out}': {err.strerror or err}") from err


def write_file_atomic(out: Path, rel: str, content: bytes,
                      before_rename: Callable[[Path], None] | None = None) -> FileChecksum:
    """Write one file through a temporary file, fsync and a rename (atomicio); return its checksum record."""
    write_bytes_atomic(out / rel, content, before_rename)
    return FileChecksum(path=rel, sha256=hashlib.sha256(content).hexdigest(), size_bytes=len(content))


def _write_job_files(out: Path, files: dict[str, bytes],
                     before_first_rename: Callable[[Path], None] | None = None) -> list[FileChecksum]:
    """Write a job's files atomically (fsync'd, folders too); return their checksums.

    Temporary files left in the job's folder by a driver killed while writing are removed first.
    ``before_first_rename`` is the kill test's hook (called once the first temporary file is complete).
    """
    for folder in sorted({(out / rel).parent for rel in files}):
        remove_stale_temporaries(folder)
    sums = [write_file_atomic(out, rel, content, before_first_rename if i == 0 else None)
            for i, (rel, content) in enumerate(sorted(files.items()))]
    return sums


def files_intact(out: Path, files: Iterable[tuple[str, str, int]]) -> str | None:
    """Return the first problem with a finished job's files (missing, other size or checksum), or None."""
    for rel, sha, size in files:
        path = out / rel
        try:
            data = path.read_bytes()
        except OSError:
            return f"'{rel}' is missing"
        if len(data) != size or hashlib.sha256(data).hexdigest() != sha:
            return f"'{rel}' changed after the job finished"
    return None


def _relocate(value, folder: str):
    """Return a record dump with every file path moved into the job's folder (<folder>/<file name>)."""
    if isinstance(value, dict):
        return {k: (f"{folder}/{PurePosixPath(v).name}" if k in _FILE_FIELDS and isinstance(v, str) else _relocate(v, folder))
                for k, v in value.items()}
    if isinstance(value, list):
        return [_relocate(v, folder) for v in value]
    return value


def relocate_outcome(job: PlannedJob, outcome) -> tuple[JobRecord, list[MoleculeRecord], dict[str, bytes]]:
    """Return the job's record (its batch id, solvent and key set), molecule records and files, moved into its folder."""
    folder = job.folder
    files: dict[str, bytes] = {}
    for rel, content in outcome.files.items():
        target = f"{folder}/{PurePosixPath(rel).name}"
        if target in files:
            raise OutputError(f"job '{job.job_id}': two files named '{PurePosixPath(rel).name}'")
        files[target] = content
    record = JobRecord.model_validate(_relocate(outcome.job.model_dump(mode="json"), folder))
    record = record.model_copy(update={"job_id": job.job_id, "solvent": job.solvent, "job_key": job.key})
    molecules = [MoleculeRecord.model_validate(_relocate(m.model_dump(mode="json"), folder)).model_copy(
        update={"solvent": job.solvent}) for m in outcome.molecules]
    return record, molecules, files


# --- the driver -----------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class BatchOptions:
    """How to run a batch: retry failed jobs, the engine, the command line, and a test hook."""

    retry_failed: bool = False
    #: 'module:function' of another engine than the config's (Python API; the command line sets method.engine_factory)
    engine_factory: str | None = None
    command_line: str = ""
    #: test hook: SIGKILL the driver itself right after this many store commits (None: never)
    kill_after_commits: int | None = None
    #: test hook (the kill test): SIGKILL the driver at (point, n), point one of KILL_POINTS (None: never)
    kill_at: tuple[str, int] | None = None


#: where the kill test's hook can stop the driver: after the n-th job start is stored; once the n-th finished
#: job's first temporary file is complete (before its rename); after the n-th job's files are all in place
#: (before its store commit); after the n-th commit; while writing batch.json (n counts its writes)
KILL_POINTS = ("start", "rename", "files", "commit", "documents")


def _kill_hook(options: "BatchOptions", point: str, count: int) -> None:
    """Test hook: SIGKILL this process when ``options.kill_at`` is (point, count); otherwise do nothing."""
    if options.kill_at == (point, count) or (point == "commit" and options.kill_after_commits == count):
        os.kill(os.getpid(), signal.SIGKILL)


@dataclass(frozen=True)
class BatchEvent:
    """Progress of a batch: what happened, to which job, and the counts and time estimate (s) after it."""

    kind: str  # plan | start | step | finish | tick
    n_jobs: int
    n_ok: int
    n_failed: int
    n_left: int
    elapsed_s: float
    eta_s: float | None = None
    job_id: str | None = None
    message: str | None = None
    status: str | None = None
    seconds: float | None = None
    running: tuple[tuple[str, str], ...] = ()  # (job_id, latest step) of the running jobs


@dataclass
class BatchOutcome:
    """What a batch run did: counts over the current config's jobs, and how many it computed now."""

    n_jobs: int = 0
    n_ok: int = 0
    n_failed: int = 0
    n_reused: int = 0
    n_computed: int = 0
    complete: bool = False
    results_file: Path | None = None
    failures: list[tuple[str, ErrorInfo]] = field(default_factory=list)
    #: numerical trouble counted over the finished batch's jobs (see trouble.count_trouble)
    trouble: dict[str, int] = field(default_factory=dict)


def _provenance(plan: BatchPlan, command_line: str) -> Provenance:
    """Return the provenance block of the batch's documents."""
    return provenance(plan.config, command_line, plan.versions)


def _input_failure_row(job: PlannedJob, run_id: int) -> StoredJob:
    """Return the store row of a job that fails on its input (no worker runs it)."""
    record = JobRecord(job_id=job.job_id, substrate=job.substrate_name, base=job.base.name, status="failed",
                       error=job.input_error, solvent=job.solvent, job_key=job.key)
    molecule = MoleculeRecord(name=job.substrate_name, role="substrate", smiles=job.substrate_smiles, status="failed",
                              error=job.input_error, solvent=job.solvent)
    return _row(job, record, [molecule], [], run_id, None, None, None)


def _row(job: PlannedJob, record: JobRecord, molecules: list[MoleculeRecord], files: list[FileChecksum],
         run_id: int | None, started_utc: str | None, seconds: float | None, worker: str | None) -> StoredJob:
    return StoredJob(
        job_key=job.key, job_id=job.job_id, substrate=job.substrate_name, base=job.base.name,
        solvent=solvent_label(job.solvent), source=job.source, status=record.status,
        error_type=record.error.error_type if record.error else None,
        error_message=record.error.error_message if record.error else None,
        job_json=record.model_dump_json(), molecules_json=json.dumps([m.model_dump(mode="json") for m in molecules]),
        folder=job.folder if files else None, started_utc=started_utc, finished_utc=utc_now(),
        wall_seconds=None if seconds is None else round(seconds, 3), worker=worker, run_id=run_id,
        files=tuple((f.path, f.sha256, f.size_bytes) for f in files))


def _estimate_left(durations: list[float], n_waiting: int, running_for: list[float], parallel: int) -> float | None:
    """Return the estimated seconds left: mean measured job time x remaining work / parallel jobs."""
    if not durations:
        return None
    mean = sum(durations) / len(durations)
    work = n_waiting * mean + sum(max(mean - t, 0.0) for t in running_for)
    return work / max(1, parallel)


def run_batch(plan: BatchPlan, out: Path, executor_config: ExecutorConfig, threads: int,
              options: BatchOptions = BatchOptions(),
              on_event: Callable[[BatchEvent], None] | None = None) -> BatchOutcome:
    """Run the jobs of ``plan`` not yet finished in ``out`` (the caller holds the folder lock); return the counts.

    Writes each finished job's files and store row, then results.json and batch.json when every job has
    finished. An interrupt (KeyboardInterrupt) stops the workers, keeps everything finished and re-raises.
    """
    out = Path(out)
    wall_start = time.monotonic()
    store = JobStore(out / STORE_FILE)
    try:
        stale = store.close_stale_runs(utc_now())
        if stale:
            log.info("a previous batch in %s stopped without finishing; resuming", out)
        keys = [job.key for job in plan.jobs]
        finished = store.finished(keys)
        retried: set[str] = set()
        todo: list[PlannedJob] = []
        for job in plan.jobs:
            row = finished.get(job.key)
            if job.input_error is not None:
                continue
            if row is not None:
                problem = files_intact(out, row.files)
                if problem is not None:
                    log.warning("job %s: %s; computing it again", job.job_id, problem)
                elif row.status == "failed" and options.retry_failed:
                    retried.add(job.key)
                else:
                    continue
            todo.append(job)
        parallel_hint = (executor_config.workers or default_workers()) if executor_config.kind == "local" else 0
        run_id = store.begin_run(utc_now(), os.getpid(), socket.gethostname(), options.command_line,
                                 plan.config.name, executor_config.kind, parallel_hint,
                                 [(job.key, job.job_id) for job in plan.jobs])
        for job in plan.jobs:
            if job.input_error is not None:
                row = finished.get(job.key)
                if row is None or row.error_message != job.input_error.error_message:
                    store.record_finished(_input_failure_row(job, run_id))
                    log.warning("job %s fails on its input: %s", job.job_id, job.input_error.error_message)
        outcome = BatchOutcome(n_jobs=len(plan.jobs))
        todo_keys = {job.key for job in todo}
        outcome.n_reused = sum(1 for job in plan.jobs if job.input_error is None and job.key not in todo_keys)
        state = "interrupted"
        try:
            if todo:
                _compute(plan, todo, out, store, run_id, executor_config, threads, options, on_event, outcome,
                         wall_start)
            state = "finished"
        finally:
            store.end_run(run_id, state, utc_now())
            _finish_documents(plan, out, store, options, executor_config, outcome)
        return outcome
    finally:
        store.close()


def _compute(plan: BatchPlan, todo: list[PlannedJob], out: Path, store: JobStore, run_id: int,
             executor_config: ExecutorConfig, threads: int, options: BatchOptions,
             on_event: Callable[[BatchEvent], None] | None, outcome: BatchOutcome, wall_start: float) -> None:
    """Compute ``todo`` on the configured executor, committing each finished job; return when all are done."""
    by_key = {job.key: job for job in todo}
    tasks = [JobTask(job.key, job.job_id, job.substrate, job.base, job.config, job.geometry, options.engine_factory)
             for job in todo]
    if executor_config.kind == "dask":
        executor = DaskExecutor(executor_config.address, threads, executor_config.time_limit_seconds,
                                executor_config.stage_time_limit_seconds)
    else:
        workers = min(executor_config.workers or default_workers(), len(tasks))
        executor = LocalExecutor(workers, threads, executor_config.time_limit_seconds, out / WORKER_LOG_FILE,
                                 executor_config.stage_time_limit_seconds)
    log.info("batch %s: %d job(s): %d finished before, %d failing on their input, %d to compute on %s",
             plan.config.name, len(plan.jobs), len(plan.jobs) - len(todo) - plan.n_input_failures,
             plan.n_input_failures, len(todo), executor.description)
    finished_now = store.finished([job.key for job in plan.jobs])
    n_ok = sum(r.status == "ok" for k, r in finished_now.items() if k not in by_key)
    n_failed = sum(r.status == "failed" for k, r in finished_now.items() if k not in by_key)
    durations = store.finished_durations([job.key for job in plan.jobs])
    running: dict[str, tuple[float, str]] = {}  # key -> (monotonic start, latest step)
    step_written: dict[str, float] = {}
    commits = starts = 0

    def emit(kind: str, **extra) -> None:
        if on_event is None:
            return
        now = time.monotonic()
        left = len(todo) - (n_ok + n_failed - base_done)
        eta = _estimate_left(durations, max(0, left - len(running)), [now - s for s, _ in running.values()],
                             executor.parallel_jobs)
        on_event(BatchEvent(kind=kind, n_jobs=len(plan.jobs), n_ok=n_ok, n_failed=n_failed, n_left=left,
                            elapsed_s=now - wall_start, eta_s=eta,
                            running=tuple((by_key[k].job_id, step) for k, (_, step) in running.items()), **extra))

    base_done = n_ok + n_failed
    emit("plan", message=executor.description)
    try:
        executor.submit(tasks)
        last_tick = time.monotonic()
        while executor.outstanding():
            for event in executor.poll(0.5):
                job = by_key.get(event.key)
                if job is None:
                    continue
                if isinstance(event, Started):
                    running[event.key] = (time.monotonic(), "started")
                    store.record_start(run_id, job.key, job.job_id, event.worker, utc_now())
                    starts += 1
                    _kill_hook(options, "start", starts)
                    emit("start", job_id=job.job_id, message=event.worker)
                elif isinstance(event, Progress):
                    if event.key in running:
                        running[event.key] = (running[event.key][0], event.message)
                    log.debug("%s: %s", job.job_id, event.message)
                    if time.monotonic() - step_written.get(event.key, 0.0) > _STEP_WRITE_INTERVAL_S:
                        store.record_step(job.key, event.message[:300], utc_now())
                        step_written[event.key] = time.monotonic()
                    emit("step", job_id=job.job_id, message=event.message)
                elif isinstance(event, Done):
                    if event.key not in running:  # the start event may arrive late (Dask) or never
                        store.record_start(run_id, job.key, job.job_id, event.worker, utc_now())
                    running.pop(event.key, None)
                    record = _commit(job, event, out, store, run_id,
                                     lambda point, n=commits + 1: _kill_hook(options, point, n))
                    commits += 1
                    durations.append(event.seconds)
                    outcome.n_computed += 1
                    if record.status == "ok":
                        n_ok += 1
                    else:
                        n_failed += 1
                    emit("finish", job_id=job.job_id, status=record.status, seconds=event.seconds,
                         message=None if record.error is None else f"{record.error.error_type}: {record.error.error_message}")
                    _kill_hook(options, "commit", commits)  # test hook: die hard at a known point
            if time.monotonic() - last_tick > 1.0:
                emit("tick")
                last_tick = time.monotonic()
        executor.shutdown()
    except BaseException:
        executor.shutdown(kill=True)
        if running:
            log.warning("stopped %d running job(s): %s; they start again on the next run", len(running),
                        ", ".join(by_key[k].job_id for k in running))
        raise


def _commit(job: PlannedJob, event: Done, out: Path, store: JobStore, run_id: int,
            hook: Callable[[str], None] | None = None) -> JobRecord:
    """Write a finished job's files, then commit its row with their checksums; return its record.

    ``hook`` is the kill test's: called with 'rename' (first temporary file complete) and 'files' (all written).
    """
    if event.outcome is not None:
        record, molecules, files = relocate_outcome(job, event.outcome)
    else:
        record = JobRecord(job_id=job.job_id, substrate=job.substrate_name, base=job.base.name, status="failed",
                           error=event.error, solvent=job.solvent, job_key=job.key)
        molecules, files = [], {}
    if event.traceback and (event.error is None or event.error.error_type == "internal_error"):
        log.error("job %s: unexpected error in the worker (a bug); the traceback is in %s", job.job_id, LOG_FILE)
        log.debug("job %s: traceback of the unexpected error:\n%s", job.job_id, event.traceback.rstrip())
    elif event.traceback:
        log.debug("job %s failed: %s", job.job_id, event.traceback.rstrip())
    sums = _write_job_files(out, files, (lambda tmp: hook("rename")) if hook else None)
    if hook is not None:
        hook("files")
    started = (_dt.datetime.now(_dt.timezone.utc) - _dt.timedelta(seconds=event.seconds)).isoformat(timespec="milliseconds")
    store.record_finished(_row(job, record, molecules, sums, run_id, started, event.seconds, event.worker))
    return record


# --- documents from the store -----------------------------------------------------------------------------------


def assemble_results(plan: BatchPlan, rows: dict[str, StoredJob], command_line: str) -> RunResult:
    """Return the RunResult of a finished batch, built from the store's rows for the current config's keys only."""
    jobs: list[JobRecord] = []
    molecules: list[MoleculeRecord] = []
    for job in plan.jobs:
        row = rows[job.key]
        try:
            jobs.append(JobRecord.model_validate_json(row.job_json))
            molecules += [MoleculeRecord.model_validate(data).model_copy(update={"solvent": job.solvent})
                          for data in json.loads(row.molecules_json)]
        except (ValidationError, ValueError) as err:
            raise OutputError(f"job '{job.job_id}': its record in {STORE_FILE} does not match the result format of "
                              f"this elimscan (written by another build?): {str(err).splitlines()[0]}; use a new "
                              "--out for this version") from err
    return run_document(plan.config, _provenance(plan, command_line), jobs, molecules)


def _series(plan: BatchPlan, jobs: list[JobRecord]) -> tuple:
    """Return the SeriesRecords of the config's substituent series over the given finished job records."""
    from elimscan.analysis.series import series_records

    config = plan.config
    return series_records(config.series, jobs, config.method.temperature_K, config.analysis.energy)


def _series_so_far(plan: BatchPlan, store: JobStore) -> tuple:
    """Return the SeriesRecords over the jobs of the current config finished so far (() without series)."""
    if not plan.config.series:
        return ()
    rows = store.finished([job.key for job in plan.jobs], with_records=True)
    return _series(plan, [JobRecord.model_validate_json(rows[job.key].job_json) for job in plan.jobs if job.key in rows])


def batch_index(plan: BatchPlan, store: JobStore, command_line: str, executor_config: ExecutorConfig) -> BatchIndex:
    """Return the batch.json document: every job of the current config with its key, state, times and files."""
    rows = store.finished([job.key for job in plan.jobs])
    starts = store.start_counts()
    entries = []
    for job in plan.jobs:
        row = rows.get(job.key)
        error = None
        if row is not None and row.error_type is not None:
            error = ErrorInfo(error_type=row.error_type, error_message=row.error_message or "")
        entries.append(BatchJobEntry(
            job_key=job.key, job_id=job.job_id, substrate=job.substrate_name, base=job.base.name, solvent=job.solvent,
            source=job.source, status=row.status if row else "not finished", error=error,
            job_starts=starts.get(job.key, 0), started_utc=row.started_utc if row else None,
            finished_utc=row.finished_utc if row else None, wall_seconds=row.wall_seconds if row else None,
            worker=row.worker if row else None, folder=row.folder if row else None,
            files=tuple(FileChecksum(path=p, sha256=s, size_bytes=n) for p, s, n in (row.files if row else ()))))
    n_ok = sum(e.status == "ok" for e in entries)
    n_failed = sum(e.status == "failed" for e in entries)
    return BatchIndex(provenance=_provenance(plan, command_line), config_name=plan.config.name,
                      complete=n_ok + n_failed == len(entries), store_file=STORE_FILE,
                      substrates_file=plan.substrates_file, substrates_file_sha256=plan.substrates_file_sha256,
                      executor=executor_config,
                      counts=BatchCounts(n_jobs=len(entries), n_ok=n_ok, n_failed=n_failed,
                                         n_not_finished=len(entries) - n_ok - n_failed),
                      jobs=tuple(entries),
                      series=_series_so_far(plan, store))


def _finish_documents(plan: BatchPlan, out: Path, store: JobStore, options: BatchOptions,
                      executor_config: ExecutorConfig, outcome: BatchOutcome) -> None:
    """Write batch.json always, and results.json when every job of the current config has finished."""
    index = batch_index(plan, store, options.command_line, executor_config)
    remove_stale_temporaries(out)
    write_file_atomic(out, INDEX_FILE, (index.model_dump_json(indent=2) + "\n").encode(),
                      lambda tmp: _kill_hook(options, "documents", 1))
    outcome.n_ok, outcome.n_failed = index.counts.n_ok, index.counts.n_failed
    outcome.failures = [(e.job_id, e.error) for e in index.jobs if e.status == "failed" and e.error is not None]
    outcome.complete = index.complete
    if index.complete:
        result = assemble_results(plan, store.finished([job.key for job in plan.jobs], with_records=True),
                                  options.command_line)
        write_file_atomic(out, RESULTS_FILE, (result.model_dump_json(indent=2) + "\n").encode())
        outcome.results_file = out / RESULTS_FILE
        outcome.trouble = result.summary.trouble


# --- status (read-only) -----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class BatchStatus:
    """A batch folder as its store and lock show it: the latest run, counts, running jobs, failures, estimate."""

    out: Path
    holder: str | None
    run_state: str | None
    run_started_utc: str | None
    config_name: str | None
    executor: str | None
    n_jobs: int
    n_ok: int
    n_failed: int
    n_left: int
    running: tuple[tuple[str, str | None, str, str | None], ...]  # (job_id, worker, started_utc, step)
    failures: tuple[tuple[str, str, str], ...]  # (job_id, error_type, error_message)
    mean_job_seconds: float | None
    eta_s: float | None


def read_status(out: str | Path) -> BatchStatus:
    """Return the status of a batch folder, read-only (safe while the batch runs)."""
    out = Path(out)
    holder = lock_holder(out)
    store = JobStore(out / STORE_FILE, read_only=True)
    try:
        run = store.last_run()
        jobs = store.run_job_keys(run.run_id) if run else []
        keys = [k for k, _ in jobs]
        rows = store.finished(keys)
        running = store.running() if holder else []
        durations = store.finished_durations(keys)
    finally:
        store.close()
    n_ok = sum(r.status == "ok" for r in rows.values())
    n_failed = sum(r.status == "failed" for r in rows.values())
    n_left = len(keys) - n_ok - n_failed
    mean = sum(durations) / len(durations) if durations else None
    now = _dt.datetime.now(_dt.timezone.utc)
    running_for = [(now - _dt.datetime.fromisoformat(r.started_utc)).total_seconds() for r in running]
    parallel = (run.parallel_jobs if run else 0) or max(1, len(running))
    eta = _estimate_left(durations, max(0, n_left - len(running)), running_for, parallel) if holder else None
    return BatchStatus(
        out=out, holder=holder, run_state=("running" if holder else (run.state if run else None)),
        run_started_utc=run.started_utc if run else None, config_name=run.config_name if run else None,
        executor=run.executor if run else None, n_jobs=len(keys), n_ok=n_ok, n_failed=n_failed, n_left=n_left,
        running=tuple((r.job_id, r.worker, r.started_utc, r.step) for r in running),
        failures=tuple((r.job_id, r.error_type or "failed", r.error_message or "") for r in rows.values()
                       if r.status == "failed"),
        mean_job_seconds=mean, eta_s=eta)
