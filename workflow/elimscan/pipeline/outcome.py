"""What a run computed, held in memory: relaxed molecules, substrate and base analyses, job paths, the outcome.

Data only, shared by the computing modules (``compute``, ``energetics``, ``dfttier``) and the record
assembly (``assemble``). No computation and no file I/O here.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

from ase import Atoms

from elimscan.analysis.rule import Periplanar
from elimscan.chem.bases import BaseInfo
from elimscan.chem.betahydrogens import BetaHydrogenClass
from elimscan.chem.perception import Substrate
from elimscan.config import BaseConfig, SubstrateConfig
from elimscan.drivers.conformers import ConformerEnsemble
from elimscan.drivers.freeenergy import MinimumHessian
from elimscan.drivers.paths import PathResult
from elimscan.drivers.scans import DihedralScan
from elimscan.engines.dft import DftJobResult
from elimscan.results.records import ErrorInfo, MoleculeRecord

#: progress callback: (finished steps, total steps, message); DETAIL in both counts marks a sub-step message
ProgressCallback = Callable[[int, int, str], None]
DETAIL = -1


@dataclass(frozen=True)
class RelaxedMolecule:
    """A molecule's record and, when it succeeded, its relaxed geometry (Å)."""

    record: MoleculeRecord
    atoms: Atoms | None


@dataclass(frozen=True)
class ClassAnalysis:
    """One beta-H class: its perception, scans, best anti and syn geometries and the rule status."""

    beta_class: BetaHydrogenClass
    scans: tuple[DihedralScan, ...]
    anti: Periplanar
    syn: Periplanar
    status: str
    #: distinct backbone starts for the paths, lowest first (empty: start from ``anti`` / ``syn`` alone)
    anti_starts: tuple[Periplanar, ...] = ()
    syn_starts: tuple[Periplanar, ...] = ()


@dataclass(frozen=True)
class SubstrateAnalysis:
    """Everything computed for one substrate, independent of the base."""

    name: str
    substrate: Substrate
    charge: int
    multiplicity: int
    ensemble: ConformerEnsemble
    classes: tuple[ClassAnalysis, ...]
    global_minimum_hartree: float
    #: Hessian of the lowest conformer, for free energies and isotope effects
    minimum: MinimumHessian | None = None


@dataclass(frozen=True)
class BaseAnalysis:
    """A relaxed base, how the rule sees it, and its Hessian (for free energies)."""

    relaxed: RelaxedMolecule
    info: BaseInfo | None
    minimum: MinimumHessian | None = None


#: (class_id, approach) -> the computed path, or why it failed; SUBSTITUTION_KEY for the SN2 path
JobPaths = dict[tuple[str, str], "PathResult | ErrorInfo"]
SUBSTITUTION_KEY = ("substitution", "backside")


@dataclass
class RunOutcome:
    """Everything a run computed: substrates and bases by name (or their failures), jobs and their paths."""

    substrates: dict[str, SubstrateAnalysis | ErrorInfo] = field(default_factory=dict)
    bases: dict[str, BaseAnalysis] = field(default_factory=dict)
    jobs: list[tuple[SubstrateConfig, BaseConfig]] = field(default_factory=list)
    paths: dict[tuple[str, str], JobPaths] = field(default_factory=dict)
    #: the optional DFT tier of each job (substrate, base), when dft.enabled
    dft: dict[tuple[str, str], DftJobResult] = field(default_factory=dict)
