"""The molecules of a run: substrates, bases (built-in names, base models) and the substrate x base pairs."""

from __future__ import annotations

from typing import Any, Literal

from pydantic import Field, field_validator, model_validator

from elimscan.config.frozen import Frozen


class SubstrateConfig(Frozen):
    """One substrate: a name, a SMILES (an atom map may mark the leaving atom), charge and multiplicity."""

    name: str = Field(min_length=1)
    smiles: str = Field(min_length=1)
    #: total charge; None = take the formal charge of the SMILES
    charge: int | None = None
    multiplicity: int = Field(1, ge=1)
    #: optional SDF or XYZ file (path relative to the config file) with a 3D structure of this substrate;
    #: it joins the conformer ensemble. The SMILES still fixes connectivity, charge and stereochemistry.
    geometry: str | None = None

    @field_validator("geometry")
    @classmethod
    def _geometry_suffix(cls, value: str | None) -> str | None:
        if value is not None and not value.lower().endswith((".sdf", ".mol", ".xyz")):
            raise ValueError(f"geometry file '{value}' must end in .sdf, .mol or .xyz")
        return value


class BaseModelConfig(Frozen):
    """How the base is modelled: bare (default), ion-paired with a metal cation, with explicit molecules, or both.

    The cation and the explicit molecules sit on the basic atom's lone pairs; one lone pair stays free for
    the proton transfer (basemodels.py).
    """

    #: metal cation paired with an anionic base (None: no counter-ion)
    counter_ion: Literal["Li", "Na", "K"] | None = None
    #: explicit solvent molecules hydrogen-bonded to the basic atom
    explicit: int = Field(0, ge=0, le=3)
    #: SMILES of the explicit molecule; None: the base's conjugate acid (tert-butanol for tert-butoxide)
    explicit_smiles: str | None = Field(None, min_length=1)


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


class BaseConfig(Frozen):
    """One base: a name, a SMILES (optional for the built-in names), optional bulky flag and model."""

    name: str = Field(min_length=1)
    smiles: str = Field(None, min_length=1, validate_default=False)

    @model_validator(mode="before")
    @classmethod
    def _from_library(cls, data: Any) -> Any:
        if isinstance(data, dict) and not data.get("smiles") and isinstance(data.get("name"), str):
            smiles = BASE_LIBRARY.get(data["name"].strip().lower())
            if smiles is None:
                raise ValueError(f"base '{data['name']}' needs a smiles (built-in names: {', '.join(BASE_LIBRARY)})")
            data = {**data, "smiles": smiles}
        return data

    charge: int | None = None
    multiplicity: int = Field(1, ge=1)
    #: True marks a sterically demanding base for the geometric rule (Hofmann shift)
    bulky: bool | None = None
    model: BaseModelConfig = BaseModelConfig()


class PairConfig(Frozen):
    """One substrate x base job, by names."""

    substrate: str
    base: str


#: File suffixes a ``substrates_file`` may have: CSV with a header, or a SMILES file (SMILES, then name).
SUBSTRATE_FILE_SUFFIXES = (".csv", ".smi", ".smiles")
