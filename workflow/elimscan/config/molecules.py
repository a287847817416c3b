"""The molecules of a run: substrates, bases (built-in names, abbreviations, base models) and the substrate x base
pairs."""

from __future__ import annotations

from typing import Any, Literal

from pydantic import Field, field_validator, model_validator

from elimscan.config.basenames import COUNTER_IONS, abbreviation_list, named_base
from elimscan.config.experiment import ExperimentConfig
from elimscan.config.frozen import Frozen
from elimscan.config.names import name_length_problem

#: the only spin state elimscan computes: closed-shell singlets (E2 substrates and bases are closed shells)
CLOSED_SHELL_MULTIPLICITY = 1
#: a SMILES may have at most this many characters (read before RDKit parses it) ...
MAX_SMILES_CHARS = 5000
#: ... and its molecule at most this many heavy (non-hydrogen) atoms
MAX_HEAVY_ATOMS = 200
#: above this many heavy atoms in a substrate plus its base a job is unlikely to finish overnight on one core of a
#: workstation (a warning, not a refusal). A rough bound until the benchmark measures costs by size: one measured
#: job (2-bromobutane + ethoxide, 8 heavy atoms, 99 s on one core) scaled by the cube of the heavy-atom count to
#: 12 h (8 x (43200 / 99) ** (1/3) = 61)
OVERNIGHT_HEAVY_ATOMS = 60
#: explicit solvent molecules of a base model at most: two on an alkoxide oxygen (one lone pair stays free),
#: the rest on the cation or in a second shell; issue 18 asks for n = 0 ... 4 as calibration candidates
MAX_EXPLICIT_MOLECULES = 4
#: starting hydrogen-bond arrangements of a base model at most (each is relaxed; the lowest is kept)
MAX_CLUSTER_ARRANGEMENTS = 6
#: independent embeddings of a base model's molecules at most (each relaxed in every arrangement; the lowest is kept)
MAX_CLUSTER_EMBEDDINGS = 8
#: explicit molecules of its own conjugate acid an alkoxide or hydroxide gets by default in a protic solvent (water,
#: an alcohol; solvents.PROTIC_SOLVENTS) when its ``model:`` gives no ``explicit``: the benchmark's frozen base
#: model (validation/model-freeze.yaml, ``alcohol-3-embedded``: two alcohols hydrogen-bonded to the oxygen, one in the
#: second shell), chosen on the solution basicity order and gap (validation/BASICITY.md). Every other base, and any
#: base in an aprotic solvent or the gas phase, stays bare; the rule is chem/basemodels.resolve_base_model
DEFAULT_EXPLICIT_MOLECULES = 3
#: independent embeddings of that default cluster (``model.embeddings`` left out; the lowest relaxed one is kept):
#: the frozen benchmark model ``alcohol-3-embedded`` (validation/model-freeze.yaml), chosen because its free barriers
#: of the calibration rates agreed over seeds (largest spread 0.87 kcal/mol against 1.93 with one embedding, before the
#: complex checks of 3546362 and 73ea662; recomputed with them 2.74, set by one seed's E2 path: docs/validation.md)
DEFAULT_CLUSTER_EMBEDDINGS = 5
#: the implicit-solvent models in which that default applies: the parametrised continua it was calibrated with
#: (ALPB) and their generalized-Born sibling. In the dielectric-only continuum (ddX-CPCM, tert-butanol and the other
#: alcohols without ALPB parameters) an explicit-solvent cluster costs about 100 times more per step
#: (docs/configuration.md, "dielectric"), so a base stays bare there unless its model says otherwise
DEFAULT_MODEL_CONTINUA: tuple[str, ...] = ("alpb", "gbsa")
#: ``model:`` written as this word means the free (bare) base: no counter-ion, no explicit molecules
BARE_MODEL_WORD = "bare"


def closed_shell_multiplicity(value: object) -> object:
    """Return a multiplicity given in a config unchanged; raise ValueError unless it is 1 (a closed-shell singlet)."""
    if isinstance(value, int) and not isinstance(value, bool) and value != CLOSED_SHELL_MULTIPLICITY:
        raise ValueError(f"multiplicity {value}: elimscan handles closed-shell molecules only (multiplicity "
                         f"{CLOSED_SHELL_MULTIPLICITY}, a singlet)")
    return value


def file_name_length(value: object) -> object:
    """Return a name unchanged; raise ValueError when it is too long to become a file name."""
    problem = name_length_problem(value) if isinstance(value, str) else None
    if problem is not None:
        raise ValueError(problem)
    return value


class SubstrateConfig(Frozen):
    """One substrate: a name, a SMILES (an atom map may mark the leaving atom), charge and multiplicity."""

    name: str = Field(min_length=1)
    smiles: str = Field(min_length=1)
    #: total charge; None = take the formal charge of the SMILES
    charge: int | None = None
    #: spin multiplicity 2S+1: only 1 (closed shells) is computed
    multiplicity: int = Field(CLOSED_SHELL_MULTIPLICITY, ge=1, le=CLOSED_SHELL_MULTIPLICITY)
    #: optional SDF or XYZ file (path relative to the config file) with a 3D structure of this substrate;
    #: it joins the conformer ensemble. The SMILES still fixes connectivity, charge and stereochemistry.
    geometry: str | None = None

    #: what experiment observed with each base (base name -> shares or a major product, with a source); shown
    #: beside the computed values and scored in the report, never used by the calculation
    experiment: dict[str, ExperimentConfig] = Field(default_factory=dict)

    _multiplicity = field_validator("multiplicity", mode="before")(closed_shell_multiplicity)
    _name_length = field_validator("name", mode="after")(file_name_length)

    @field_validator("geometry")
    @classmethod
    def _geometry_suffix(cls, value: str | None) -> str | None:
        if value is not None and not value.lower().endswith((".sdf", ".mol", ".xyz")):
            raise ValueError(f"geometry file '{value}' must end in .sdf, .mol or .xyz")
        return value


class BaseModelConfig(Frozen):
    """How the base is modelled: bare, ion-paired with a metal cation, with explicit molecules, or both.

    The cation and the explicit molecules sit on the basic atom's lone pairs; one lone pair stays free for
    the proton transfer (basemodels.py). ``explicit`` left out (None) is resolved per base and solvent by
    chem/basemodels.resolve_base_model: DEFAULT_EXPLICIT_MOLECULES for an alkoxide or hydroxide in a protic
    solvent, else 0. ``model: bare`` (the same as ``{explicit: 0}``) keeps the free anion.
    """

    #: metal cation paired with an anionic base (None: no counter-ion); basenames.COUNTER_IONS
    counter_ion: Literal["Li", "Na", "K"] | None = None
    #: explicit solvent molecules: hydrogen-bonded to the basic atom, then on the cation, else a second shell;
    #: None: the default of the base and solvent (DEFAULT_EXPLICIT_MOLECULES or 0, see above)
    explicit: int | None = Field(None, ge=0, le=MAX_EXPLICIT_MOLECULES)
    #: SMILES of the explicit molecule; None: the base's conjugate acid (tert-butanol for tert-butoxide)
    explicit_smiles: str | None = Field(None, min_length=1)
    #: distinct starting arrangements of the cluster (which lone pair stays free, which first-shell molecule
    #: holds each second-shell one), each relaxed; the lowest relaxed one is the base (1: the first only)
    arrangements: int = Field(1, ge=1, le=MAX_CLUSTER_ARRANGEMENTS)
    #: independent embeddings of the cluster's molecules (conformers of the base and of each explicit molecule, from
    #: the job's seed and the next ones), each built in every arrangement and relaxed; the lowest is the base (1:
    #: the job seed's only). Three seeds of 2-bromopropane + ethoxide with three ethanols found free clusters 0.83
    #: kcal/mol apart, which shifts every barrier of a seed by as much (validation/model-freeze.yaml). None: the
    #: default of the resolved model (DEFAULT_CLUSTER_EMBEDDINGS for the per-solvent default cluster, else 1)
    embeddings: int | None = Field(None, ge=1, le=MAX_CLUSTER_EMBEDDINGS)

    @model_validator(mode="before")
    @classmethod
    def _bare_word(cls, data: Any) -> Any:
        if isinstance(data, str):
            if data.strip().lower() == BARE_MODEL_WORD:
                return {"explicit": 0}
            raise ValueError(f"model '{data}': write '{BARE_MODEL_WORD}' (the free base) or a mapping such as "
                             "{explicit: 3} or {counter_ion: K}")
        return data

    @field_validator("counter_ion", mode="before")
    @classmethod
    def _supported_ion(cls, value: object) -> object:
        if isinstance(value, str) and value not in COUNTER_IONS:
            raise ValueError(f"counter-ion '{value}' is not one the ion-pair model has (it has {', '.join(COUNTER_IONS)})")
        return value


#: Built-in bases: a base given by one of these names needs no SMILES.
BASE_LIBRARY: dict[str, str] = {
    "hydroxide": "[OH-]",
    "methoxide": "C[O-]",
    "ethoxide": "CC[O-]",
    "isopropoxide": "CC(C)[O-]",
    "tert-butoxide": "CC(C)(C)[O-]",
    "amide": "[NH2-]",
    "diisopropylamide": "CC(C)[N-]C(C)C",
    "hexamethyldisilazide": "C[Si](C)(C)[N-][Si](C)(C)C",
    "dbu": "C1CCC2=NCCCN2CC1",
}


def _named(data: dict[str, Any]) -> dict[str, Any]:
    """Return a base entry without a SMILES completed from its name: a built-in name or an abbreviation.

    An abbreviation that names a cation (KOtBu) gives the anion only: its model is the entry's own, else the
    default of the base and solvent (the cation is named in the plan and the record, not modelled); the ion
    pair is asked for with ``model: {counter_ion: K}``.
    """
    name = data["name"]
    smiles = BASE_LIBRARY.get(name.strip().lower())
    if smiles is not None:
        return {**data, "smiles": smiles}
    named = named_base(name)
    if named is None:
        raise ValueError(f"base '{name}' needs a smiles (built-in names: {', '.join(BASE_LIBRARY)}; abbreviations: "
                         f"{abbreviation_list()})")
    return {**data, "smiles": named.smiles}


class BaseConfig(Frozen):
    """One base: a name, a SMILES (optional for the built-in names), optional bulky flag and model."""

    name: str = Field(min_length=1)
    smiles: str = Field(None, min_length=1, validate_default=False)

    @model_validator(mode="before")
    @classmethod
    def _from_library(cls, data: Any) -> Any:
        if isinstance(data, str):  # a plain name: '- KOtBu'
            data = {"name": data}
        if isinstance(data, dict) and not data.get("smiles") and isinstance(data.get("name"), str):
            data = _named(data)
        return data

    charge: int | None = None
    #: spin multiplicity 2S+1: only 1 (closed shells) is computed
    multiplicity: int = Field(CLOSED_SHELL_MULTIPLICITY, ge=1, le=CLOSED_SHELL_MULTIPLICITY)
    #: True marks a sterically demanding base for the geometric rule (Hofmann shift)
    bulky: bool | None = None
    model: BaseModelConfig = BaseModelConfig()

    _multiplicity = field_validator("multiplicity", mode="before")(closed_shell_multiplicity)
    _name_length = field_validator("name", mode="after")(file_name_length)

    @property
    def named_cation(self) -> str | None:
        """Return the cation the base's name names (KOtBu: 'K') when its SMILES is that anion's, else None."""
        named = named_base(self.name)
        return named.counter_ion if named is not None and named.smiles == self.smiles else None


class PairConfig(Frozen):
    """One substrate x base job, by names."""

    substrate: str
    base: str


#: File suffixes a ``substrates_file`` may have: CSV with a header, or a SMILES file (SMILES, then name).
SUBSTRATE_FILE_SUFFIXES = (".csv", ".smi", ".smiles")
