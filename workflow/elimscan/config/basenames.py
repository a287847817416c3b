"""Base names a chemist types (KOtBu, NaOEt, LDA, KHMDS, ...) -> the anion's SMILES and the counter-ion the name names.

The identities are common practice (the abbreviations of any organic chemistry textbook and reagent catalogue).
A name gives the anion only: its model is the default of the base and solvent (chem/basemodels.resolve_base_model),
and the cation the name carries is named in the plan and the job record, not modelled. The contact ion pair is
asked for in the config (``model: {counter_ion: K}``, one of COUNTER_IONS): the project rejected it as a default
because it gives the gas-phase order of alkoxide basicity (docs/validation.md, validation/BASICITY.md).
"""

from __future__ import annotations

from dataclasses import dataclass

#: the metal cations of the ion-pair base model (their starting distances: chem/basemodels.CATION_DISTANCE_A)
COUNTER_IONS: tuple[str, ...] = ("Li", "Na", "K")

_TBUO = "CC(C)(C)[O-]"
_ETO = "CC[O-]"
_MEO = "C[O-]"
_HO = "[OH-]"
_HMDS = "C[Si](C)(C)[N-][Si](C)(C)C"


@dataclass(frozen=True)
class NamedBase:
    """A base by its common name: the anion's SMILES, the cation the name names (None: none) and the full name."""

    smiles: str
    counter_ion: str | None
    full_name: str


#: Abbreviations, each with its other spellings (matched without regard to case): common practice
NAMED_BASES: dict[tuple[str, ...], NamedBase] = {
    ("KOtBu", "KOt-Bu", "tBuOK", "t-BuOK"): NamedBase(_TBUO, "K", "potassium tert-butoxide"),
    ("NaOtBu", "NaOt-Bu", "tBuONa", "t-BuONa"): NamedBase(_TBUO, "Na", "sodium tert-butoxide"),
    ("LiOtBu", "LiOt-Bu", "tBuOLi", "t-BuOLi"): NamedBase(_TBUO, "Li", "lithium tert-butoxide"),
    ("NaOEt", "EtONa"): NamedBase(_ETO, "Na", "sodium ethoxide"),
    ("KOEt", "EtOK"): NamedBase(_ETO, "K", "potassium ethoxide"),
    ("LiOEt", "EtOLi"): NamedBase(_ETO, "Li", "lithium ethoxide"),
    ("NaOMe", "MeONa"): NamedBase(_MEO, "Na", "sodium methoxide"),
    ("KOMe", "MeOK"): NamedBase(_MEO, "K", "potassium methoxide"),
    ("LiOMe", "MeOLi"): NamedBase(_MEO, "Li", "lithium methoxide"),
    ("NaOiPr", "iPrONa"): NamedBase("CC(C)[O-]", "Na", "sodium isopropoxide"),
    ("NaOH",): NamedBase(_HO, "Na", "sodium hydroxide"),
    ("KOH",): NamedBase(_HO, "K", "potassium hydroxide"),
    ("LiOH",): NamedBase(_HO, "Li", "lithium hydroxide"),
    ("NaNH2",): NamedBase("[NH2-]", "Na", "sodium amide"),
    ("KNH2",): NamedBase("[NH2-]", "K", "potassium amide"),
    ("LDA",): NamedBase("CC(C)[N-]C(C)C", "Li", "lithium diisopropylamide"),
    ("LiTMP", "LTMP"): NamedBase("CC1(C)CCCC(C)(C)[N-]1", "Li", "lithium 2,2,6,6-tetramethylpiperidide"),
    ("LiHMDS", "LHMDS"): NamedBase(_HMDS, "Li", "lithium hexamethyldisilazide"),
    ("NaHMDS",): NamedBase(_HMDS, "Na", "sodium hexamethyldisilazide"),
    ("KHMDS",): NamedBase(_HMDS, "K", "potassium hexamethyldisilazide"),
    # cations the ion-pair model does not have: the anion is computed, the cation named (as for every abbreviation)
    ("CsOH",): NamedBase(_HO, "Cs", "caesium hydroxide"),
    ("TBAOH", "Bu4NOH", "nBu4NOH"): NamedBase(_HO, "NBu4", "tetrabutylammonium hydroxide"),
}
#: {lower-case spelling: base}
BASE_ABBREVIATIONS: dict[str, NamedBase] = {spelling.lower(): base for spellings, base in NAMED_BASES.items()
                                            for spelling in spellings}


def named_base(name: str) -> NamedBase | None:
    """Return the base an abbreviation names (spelling matched without regard to case), or None."""
    return BASE_ABBREVIATIONS.get(name.strip().lower())


def abbreviation_list() -> str:
    """Return the first spelling of every abbreviation, comma-separated (messages)."""
    return ", ".join(spellings[0] for spellings in NAMED_BASES)
