"""How each calculation is done: method, backend and implicit solvent, the geometry optimiser, threads."""

from __future__ import annotations

from typing import Any, Literal

from pydantic import Field, field_validator, model_validator

from elimscan.config.frozen import Frozen
from elimscan.errors import SolventError
from elimscan.solvents import DIELECTRIC_SOLVENTS, canonical_solvent_name, check_solvent

#: the temperature of Boltzmann weights and free energies lies in this range (K): solution chemistry, where the
#: harmonic (quasi-RRHO) free energies and the conformer weights of the method mean something
MIN_TEMPERATURE_K = 150.0
MAX_TEMPERATURE_K = 1000.0
#: electronic (Fermi smearing) temperatures of the SCF at most this (K); xTB's default is 300 K
MAX_ELECTRONIC_TEMPERATURE_K = 10000.0
#: ``solvent:`` given as one of these words means no implicit solvent (model none, the gas phase)
GAS_PHASE_WORDS = ("none", "gas", "gas phase", "vacuum")


def dielectric_hint(model: str, name: str | None) -> str:
    """Return how to ask for a solvent of the dielectric-only table when another model lacks it, else ''."""
    if model == "dielectric" or not name or canonical_solvent_name(name) not in DIELECTRIC_SOLVENTS:
        return ""
    return (f"; {name} has no {model.upper()} parameters but a dielectric constant: "
            f"solvent: {{model: dielectric, name: {name}}} (tblite only)")


class SolventConfig(Frozen):
    """Implicit solvent: model (alpb, gbsa, dielectric or none) and solvent name.

    ``dielectric``: a continuum known only by its dielectric constant (solvents.DIELECTRIC_SOLVENTS), for
    solvents without ALPB parameters such as tert-butanol; tblite only.
    """

    model: Literal["alpb", "gbsa", "dielectric", "none"] = "alpb"
    name: str | None = "ethanol"

    @model_validator(mode="before")
    @classmethod
    def _shorthand(cls, data: Any) -> Any:
        """A plain name (``solvent: ethanol``) means the default model with that solvent; ``none``: gas phase."""
        if isinstance(data, str):
            if data.strip().lower() in GAS_PHASE_WORDS:
                return {"model": "none", "name": None}
            return {"name": data}
        return data

    @model_validator(mode="after")
    def _name_needed(self) -> "SolventConfig":
        if self.model != "none" and not self.name:
            raise ValueError(f"solvent model '{self.model}' needs a solvent name")
        return self


class MethodConfig(Frozen):
    """Electronic-structure method, backend, solvent and temperatures."""

    hamiltonian: Literal["GFN2-xTB", "GFN1-xTB"] = "GFN2-xTB"
    backend: Literal["tblite", "xtb"] = "tblite"
    solvent: SolventConfig = SolventConfig()
    #: temperature for Boltzmann weights and free energies (K), from MIN_TEMPERATURE_K to MAX_TEMPERATURE_K
    temperature_K: float = Field(298.15, ge=MIN_TEMPERATURE_K, le=MAX_TEMPERATURE_K)
    #: electronic (Fermi smearing) temperature of the SCF (K)
    electronic_temperature_K: float = Field(300.0, gt=0, le=MAX_ELECTRONIC_TEMPERATURE_K)
    #: electronic temperature of the single retry after an SCF failure (K)
    retry_electronic_temperature_K: float = Field(1000.0, gt=0, le=MAX_ELECTRONIC_TEMPERATURE_K)
    max_scf_iterations: int = Field(250, ge=1)
    #: xTB numerical accuracy (1.0 = default; smaller is tighter)
    accuracy: float = Field(1.0, gt=0)
    #: another engine instead of GFN2-xTB: 'module:function', a factory called with this method config that
    #: returns an object satisfying elimscan.engines.contract.Engine (see DEVELOPERS.md); None: GFN2-xTB
    engine_factory: str | None = Field(None, pattern=r"^[A-Za-z_][\w.]*:[A-Za-z_]\w*$")

    @field_validator("temperature_K", mode="before")
    @classmethod
    def _physical_temperature(cls, value: object) -> object:
        if isinstance(value, (int, float)) and not isinstance(value, bool) and (
                value == value and not MIN_TEMPERATURE_K <= value <= MAX_TEMPERATURE_K):
            raise ValueError(f"temperature {value:g} K is outside {MIN_TEMPERATURE_K:g}-{MAX_TEMPERATURE_K:g} K, the "
                             "range where the method's Boltzmann weights and free energies mean something")
        return value

    @model_validator(mode="after")
    def _solvent_supported(self) -> "MethodConfig":
        try:
            check_solvent(self.backend, self.hamiltonian, self.solvent.model, self.solvent.name)
        except SolventError as err:
            raise ValueError(str(err) + dielectric_hint(self.solvent.model, self.solvent.name)) from err
        return self


class OptimizerConfig(Frozen):
    """Geometry optimiser for (constrained) relaxations."""

    #: 'sella' = Sella in internal coordinates (default: fewer gradients and less time per constrained
    #: point in benchmarks/bench_engine.py); 'bfgs' = ASE BFGS with FixInternals (the only one that
    #: can hold a linear combination of distances); 'sella-cartesian' = Sella in Cartesian coordinates with the
    #: same constraints (no internal-coordinate back-transformation per step)
    name: Literal["bfgs", "sella", "sella-cartesian"] = "sella"
    #: convergence: largest force component (eV/Å)
    fmax_eV_per_A: float = Field(0.01, gt=0)
    max_steps: int = Field(500, ge=1)
    #: a held dihedral further than this from its target is first set by rotating one side of the bond
    #: (acyclic bonds only); smaller differences are projected by the constraint (degrees)
    rigid_rotation_above_deg: float = Field(5.0, gt=0)
    #: Sella in internal coordinates rebuilds its coordinates whenever they turn ill-defined, and each rebuild
    #: compiles its coordinate functions anew (jax), seconds a time: after this many rebuilds in one relaxation the
    #: relaxation goes on in Sella's Cartesian mode from where it is, with the same constraints and the steps left
    #: (None: never, the default before 2026-12-04). Seen 2026-12-04 (benchmark seed 1, frozen model): the SN2 complex
    #: of trans-2-methylcyclohexyl chloride + ethoxide with five-embedded three ethanols rebuilt at almost every step,
    #: about 15 s a step, 77 min for the job (seed 3's: 16 min). Limit 5, tried on the benchmark's fast subset (15
    #: jobs, records of commit 13ed420), halved the summed job time with every barrier the same to 0.001 kcal/mol but
    #: one: seed 2's SN2 complex of the same ring reached it, Sella's Cartesian mode stopped in another minimum 2.05
    #: kcal/mol higher and the SN2 barrier rose by 2.36 (issue 19 allows 0.3). Relaxations that converge rebuild up to
    #: 26 times on that subset (counted at limit 30, records of commit 00b11df); the pathological one passed 30 at step
    #: 162. Limit 30 on the same 15 jobs: every barrier, verified count and gradient count as without a limit (to
    #: 0.001 kcal/mol), the ring job of seed 1 77 -> 23 min; so 30 is the default
    internal_rebuild_limit: int | None = Field(30, ge=0)


class ThreadsConfig(Frozen):
    """OpenMP/BLAS threads per worker process (parallelism comes from processes)."""

    per_process: int = Field(1, ge=1)
