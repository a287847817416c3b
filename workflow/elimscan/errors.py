"""Exception tree of elimscan.

Every class says when it fires (its phase), carries a short ``error_type``
string that result files store, and the process exit code the CLI returns
for it. Backend exceptions are translated into these at the engine layer,
chained with ``raise ... from err``.
"""

from __future__ import annotations

from enum import IntEnum


class ExitCode(IntEnum):
    """Process exit codes of the ``elimscan`` command (documented in README.md)."""

    OK = 0
    INTERNAL = 1  # an unexpected error: a bug; the traceback goes to the log file
    USAGE = 2  # bad command-line usage (argparse)
    CONFIG = 3  # the configuration or an input structure is invalid
    ENGINE = 4  # a GFN2-xTB calculation failed and the run could not go on
    JOBS_FAILED = 5  # the run finished but some jobs failed (see results.json)
    OUTPUT = 6  # the output folder cannot be used (exists, not writable, disk full), or standard output is full
    PIPE_CLOSED = 141  # standard output was closed by its reader (| head): as a process stopped by SIGPIPE (128 + 13)


class ElimscanError(Exception):
    """Base class of every error elimscan raises on purpose."""

    error_type = "elimscan_error"
    exit_code = ExitCode.INTERNAL


# --- input phase: raised before any calculation starts -------------------------------


class InputError(ElimscanError):
    """Fires before any calculation: something the user gave is invalid.

    ``key_path`` is the dotted path of the offending key (``substrates.0.smiles``)
    and ``line`` the 1-based line in the YAML file, when known; both lead the message.
    """

    error_type = "input_error"
    exit_code = ExitCode.CONFIG

    def __init__(self, message: str, key_path: str | None = None, line: int | None = None):
        self.detail = message  # the message without the key path and line
        self.key_path = key_path
        self.line = line
        where = []
        if key_path:
            where.append(f"key '{key_path}'")
        if line is not None:
            where.append(f"line {line}")
        prefix = f"{', '.join(where)}: " if where else ""
        super().__init__(prefix + message)


class ConfigError(InputError):
    """Fires while reading a YAML config: syntax, unknown key, wrong type or value."""

    error_type = "config_error"


class InputProblems(ConfigError):
    """Fires before any calculation when a config and its inputs have several problems: each an ``InputError``
    (a config or a structure error), all listed at once; a ``ConfigError`` so that whoever reads configs catches it.

    ``problems`` keeps them in file order; the message is a header line and one line per problem (each naming its
    file, key path and YAML line where known). ``error_type`` is the problems' own type when they share one.
    """

    error_type = "input_error"

    def __init__(self, problems: "list[InputError]", source: str | None = None):
        self.problems = tuple(problems)
        kinds = {p.error_type for p in self.problems}
        if len(kinds) == 1:
            self.error_type = kinds.pop()
        header = f"{source}: " if source else ""
        listing = "\n".join(f"  {number}. {problem}" for number, problem in enumerate(self.problems, start=1))
        super().__init__(f"{header}{len(self.problems)} problems, all listed:\n{listing}")


class StructureError(InputError):
    """Fires when a SMILES or structure cannot be used (unparsable, unsupported element, ...)."""

    error_type = "structure_error"


class CaseFileError(InputError):
    """Fires while reading the benchmark's case file (validation/cases.yaml): the message names the case id."""

    error_type = "case_file_error"


class SolventError(InputError):
    """Fires when a backend is asked for a solvent model or solvent name it does not support."""

    error_type = "solvent_error"


# --- calculation phase ------------------------------------------------------------------


class EngineError(ElimscanError):
    """Fires during a calculation: the xTB backend failed on a structure."""

    error_type = "engine_error"
    exit_code = ExitCode.ENGINE


class ScfConvergenceError(EngineError):
    """Fires when the SCF did not converge, also after the retry at a higher electronic temperature."""

    error_type = "scf_not_converged"


class OptimizationError(EngineError):
    """Fires when a (constrained) geometry optimisation fails or reaches its step limit."""

    error_type = "optimization_failed"


class ComplexBondsError(OptimizationError):
    """Fires when relaxing a base-substrate complex changed the substrate's bonds or bonded it to the base (atoms of
    the base placed too close at the start, or a reaction during the relaxation): not a reactant complex."""

    error_type = "complex_bonds_changed"


class GradientBudgetError(OptimizationError):
    """Fires when a path spends its gradient budget (paths.gradient_budget_per_atom) before its complex is relaxed."""

    error_type = "gradient_budget_spent"


class BackendUnavailableError(EngineError):
    """Fires when the requested xTB backend library is not installed or cannot be loaded."""

    error_type = "backend_unavailable"


class DftUnavailableError(BackendUnavailableError):
    """Fires when the optional DFT tier is asked for but PySCF (or its dispersion package) cannot be loaded."""

    error_type = "dft_unavailable"


class DftRefusedError(InputError):
    """Fires before any DFT single point: the job's DFT cannot be trusted (a free ion in the gas phase, no ε)."""

    error_type = "dft_refused"


class DftError(EngineError):
    """Fires during a DFT single point: PySCF failed on a structure (SCF not converged, numerical trouble)."""

    error_type = "dft_failed"


class DftMemoryError(DftError):
    """Fires before a DFT calculation starts: its peak-memory estimate exceeds the limit (dft.memory_limit_MB)."""

    error_type = "dft_memory_limit"


# --- output phase -------------------------------------------------------------------------


class OutputError(ElimscanError):
    """Fires when the output folder cannot be used: it holds a finished run, or writing fails."""

    error_type = "output_error"
    exit_code = ExitCode.OUTPUT

    #: the OS error number of a failed write (errno.ENOSPC, ...), when the error is one; None otherwise
    errno: int | None = None


class StoreDamagedError(OutputError):
    """Fires before a batch (or its status) reads a store that is damaged, empty beside its write-ahead log, or
    missing from a folder that holds finished jobs; the message says what happened and how to rebuild it."""

    error_type = "store_damaged"
