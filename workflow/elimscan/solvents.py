"""Which implicit-solvent model and solvent name each xTB backend supports (pure data, no backend import).

Model ``dielectric`` covers solvents with no ALPB parameters (tert-butanol, 2-propanol, ...) by their
dielectric constant alone (``DIELECTRIC_SOLVENTS``, tblite only).

The tables were measured on the pinned versions (tblite 0.8.0, xtb-python 22.1) by asking each
backend for every name; they are checked again by tests/engines/test_engine_xtb.py. They exist because
xtb-python's ASE calculator silently returns gas-phase energies for a solvent name it does not know.
"""

from __future__ import annotations

from dataclasses import dataclass

from elimscan.errors import SolventError


@dataclass(frozen=True)
class Dielectric:
    """A solvent known only by its static relative permittivity (dimensionless) and where the value comes from."""

    epsilon: float
    source: str


_MN = ("Minnesota Solvent Descriptor Database (Winget, Dolney, Giesen, Cramer & Truhlar; the SMD descriptors, "
       "Marenich, Cramer & Truhlar, J. Phys. Chem. B 2009, 113, 6378), 25 °C, as copied in PySCF's solvent_db")
#: Solvents for the dielectric-only continuum (model ``dielectric``): no parametrised ALPB exists for them.
#: The model is tblite's ddX conductor-like PCM at this ε (engine.DIELECTRIC_INTERACTION), with no
#: cavity-dispersion-solvent-structure term and no empirical shift, so its energies are not comparable
#: with a named ALPB solvent's; compare relative barriers only. tests/engines/test_engine_xtb.py checks the values
#: against PySCF's copy of the database.
DIELECTRIC_SOLVENTS: dict[str, Dielectric] = {
    "tert-butanol": Dielectric(12.47, _MN),
    "2-propanol": Dielectric(19.264, _MN),
    "1-propanol": Dielectric(20.524, _MN),
    "1-butanol": Dielectric(17.332, _MN),
    "2-butanol": Dielectric(15.944, _MN),
    # the next three also have parametrised ALPB; here for like-for-like comparisons within this model
    "ethanol": Dielectric(24.852, _MN),
    "methanol": Dielectric(32.613, _MN),
    "water": Dielectric(78.355, _MN),
}

#: User-facing aliases mapped to our canonical solvent names.
SOLVENT_ALIASES: dict[str, str] = {
    "h2o": "water",
    "n-hexane": "hexane",
    "nhexane": "hexane",
    "dichloromethane": "ch2cl2",
    "chloroform": "chcl3",
    "diethylether": "ether",
    "diethyl ether": "ether",
    "dimethylsulfoxide": "dmso",
    "tetrahydrofuran": "thf",
    "dimethylformamide": "dmf",
    "carbon disulfide": "cs2",
    "ethyl acetate": "ethylacetate",
    "furan": "furane",
    "1-octanol": "octanol",
    "t-butanol": "tert-butanol",
    "tbuoh": "tert-butanol",
    "t-buoh": "tert-butanol",
    "2-methyl-2-propanol": "tert-butanol",
    "tert-butyl alcohol": "tert-butanol",
    "isopropanol": "2-propanol",
    "i-proh": "2-propanol",
    "n-propanol": "1-propanol",
    "n-butanol": "1-butanol",
    "sec-butanol": "2-butanol",
}

#: Protic solvents of the tables: water and the alcohols (canonical names). An alkoxide or hydroxide in one of them
#: gets the default base model (config.molecules.DEFAULT_EXPLICIT_MOLECULES explicit molecules of its conjugate
#: acid), the only medium that model was calibrated in. Phenol is left out (an acid that would protonate an
#: alkoxide, not a medium for one); "woctanol" is water-saturated 1-octanol.
PROTIC_SOLVENTS: frozenset[str] = frozenset(
    "water methanol ethanol 1-propanol 2-propanol 1-butanol 2-butanol tert-butanol octanol woctanol".split()
)

_ALPB_25 = frozenset(
    "acetone acetonitrile aniline benzaldehyde benzene ch2cl2 chcl3 cs2 dioxane dmf dmso ether "
    "ethylacetate furane hexadecane hexane methanol nitromethane octanol woctanol phenol toluene "
    "thf water ethanol".split()
)
_GBSA_GFN2 = frozenset("acetone acetonitrile benzene ch2cl2 chcl3 cs2 dmf dmso ether hexane methanol thf toluene water".split())
_GBSA_GFN1 = frozenset("acetone acetonitrile benzene ch2cl2 chcl3 cs2 dmso ether methanol thf toluene water".split())

#: (backend, hamiltonian, model) -> canonical solvent names that backend parametrises.
SUPPORTED_SOLVENTS: dict[tuple[str, str, str], frozenset[str]] = {
    ("tblite", "GFN2-xTB", "alpb"): _ALPB_25,
    ("tblite", "GFN1-xTB", "alpb"): _ALPB_25,
    ("tblite", "GFN2-xTB", "gbsa"): _GBSA_GFN2,
    ("tblite", "GFN1-xTB", "gbsa"): _GBSA_GFN1,
    ("tblite", "GFN2-xTB", "dielectric"): frozenset(DIELECTRIC_SOLVENTS),
    ("tblite", "GFN1-xTB", "dielectric"): frozenset(DIELECTRIC_SOLVENTS),
    # xtb-python's set_solvent is GBSA only.
    ("xtb", "GFN2-xTB", "gbsa"): _GBSA_GFN2,
    ("xtb", "GFN1-xTB", "gbsa"): _GBSA_GFN1,
}

#: Names xtb-python's enum uses where they differ from ours.
XTB_PYTHON_NAMES: dict[str, str] = {"water": "h2o", "hexane": "nhexane"}


def canonical_solvent_name(name: str) -> str:
    """Return our canonical (lower-case) solvent name for a user-given name or alias."""
    key = name.strip().lower()
    return SOLVENT_ALIASES.get(key, key)


def check_solvent(backend: str, hamiltonian: str, model: str, name: str | None) -> str | None:
    """Return the canonical solvent name if the backend supports it, else raise SolventError."""
    if model == "none":
        return None
    if not name:
        raise SolventError(f"solvent model '{model}' needs a solvent name")
    canonical = canonical_solvent_name(name)
    supported = SUPPORTED_SOLVENTS.get((backend, hamiltonian, model))
    if supported is None:
        models = sorted({m for (b, h, m) in SUPPORTED_SOLVENTS if b == backend and h == hamiltonian})
        raise SolventError(
            f"backend '{backend}' cannot do solvent model '{model}' with {hamiltonian}; "
            f"it supports: {', '.join(models) or 'none'}"
        )
    if canonical not in supported:
        raise SolventError(
            f"backend '{backend}' has no {model.upper()} parameters for solvent '{name}' "
            f"({hamiltonian}); it supports: {', '.join(sorted(supported))}"
        )
    return canonical


def is_protic(model: str, name: str | None) -> bool:
    """Return True when an implicit solvent (model, name) is water or an alcohol; the gas phase is not."""
    return model != "none" and name is not None and canonical_solvent_name(name) in PROTIC_SOLVENTS


def dielectric_constant(name: str) -> float:
    """Return the static relative permittivity (dimensionless) of a solvent of the dielectric table."""
    canonical = canonical_solvent_name(name)
    if canonical not in DIELECTRIC_SOLVENTS:
        raise SolventError(f"no dielectric constant for solvent '{name}'; known: {', '.join(sorted(DIELECTRIC_SOLVENTS))}")
    return DIELECTRIC_SOLVENTS[canonical].epsilon


def medium_label(model: str, name: str | None) -> str:
    """Return the solvation part of a method label: 'gas phase', 'ALPB(ethanol)', or ddX-CPCM with its ε."""
    if model == "none":
        return "gas phase"
    if model == "dielectric":
        return f"ddX-CPCM({name}, ε {dielectric_constant(name):g}, no CDS term)"
    return f"{model.upper()}({name})"


def method_label(hamiltonian: str, media: list[tuple[str, str | None]], backend: str, backend_version: str) -> str:
    """Return the one-line method label, e.g. 'GFN2-xTB/ALPB(ethanol) [tblite 0.8.0]' (media: (model, name) pairs)."""
    return f"{hamiltonian}/{', '.join(medium_label(m, n) for m, n in media)} [{backend} {backend_version}]"
