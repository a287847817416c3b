"""A base model's label read back into its parts, and the usual names of explicit molecules (RDKit only).

``basemodels.build_cluster`` labels each model it builds ('bare', 'K+ ion pair + 2 x CCO hydrogen-bonded +
1 x CCO on the cation'); result documents keep that label as ``model``. ``label_parts`` reads it back so that
the words people read can be made from it (``output/basemodelwords.py``); ``molecule_name`` names the water and
alcohols an explicit-solvent model uses. A label this version does not know reads as None: shown as written.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from rdkit import Chem, RDLogger

#: the label of the free base (``basemodels.build_cluster``)
BARE_LABEL = "bare"
#: where an explicit molecule sits, as a label says it -> as a person reads it
PLACES: dict[str, str] = {
    "hydrogen-bonded": "hydrogen-bonded to the basic atom",
    "on the cation": "on the cation",
    "in the second shell": "in the second shell",
}
_ION_PAIR = re.compile(r"^(Li|Na|K)\+ ion pair$")
_PLACED = re.compile(r"^(\d+) x (\S+) (" + "|".join(re.escape(p) for p in PLACES) + r")$")

#: usual names of the molecules an explicit-solvent base model holds: water and the alcohols of
#: solvents.PROTIC_SOLVENTS (the conjugate acids of hydroxide and the alkoxides), and ammonia; common practice
MOLECULE_NAMES: dict[str, str] = {
    "O": "water", "CO": "methanol", "CCO": "ethanol", "CCCO": "1-propanol", "CC(C)O": "2-propanol",
    "CCCCO": "1-butanol", "CCC(C)O": "2-butanol", "CC(C)(C)O": "tert-butanol", "N": "ammonia",
}


@dataclass(frozen=True)
class LabelParts:
    """A model label's parts: the metal cation (None: none) and each group of explicit molecules as
    (count, SMILES, place in words), in the label's order."""

    counter_ion: str | None
    groups: tuple[tuple[int, str, str], ...]

    @property
    def explicit(self) -> int:
        """Return the number of explicit molecules (0 for the bare base or a plain ion pair)."""
        return sum(count for count, _, _ in self.groups)

    @property
    def explicit_smiles(self) -> str | None:
        """Return the SMILES of the explicit molecules when they are all one kind, else None."""
        kinds = {smiles for _, smiles, _ in self.groups}
        return kinds.pop() if len(kinds) == 1 else None


def label_parts(label: str | None) -> LabelParts | None:
    """Return the parts of a model label (as ``basemodels.build_cluster`` writes it), else None (None, unknown)."""
    if label is None:
        return None
    if label.strip() == BARE_LABEL:
        return LabelParts(None, ())
    counter_ion, groups = None, []
    for part in label.split(" + "):
        pair, placed = _ION_PAIR.match(part.strip()), _PLACED.match(part.strip())
        if pair and counter_ion is None and not groups:
            counter_ion = pair.group(1)
        elif placed:
            groups.append((int(placed.group(1)), placed.group(2), PLACES[placed.group(3)]))
        else:
            return None
    return LabelParts(counter_ion, tuple(groups))


def molecule_name(smiles: str) -> str | None:
    """Return the usual name of an explicit molecule (water, ethanol, ...) from its SMILES, or None when unknown."""
    RDLogger.DisableLog("rdApp.*")  # an unreadable SMILES is simply unnamed: no RDKit message on stderr
    try:
        mol = Chem.MolFromSmiles(smiles)
    finally:
        RDLogger.EnableLog("rdApp.*")
    if mol is None:
        return None
    return MOLECULE_NAMES.get(Chem.MolToSmiles(mol))


def is_default_cluster(label: str | None, reason: str | None) -> bool:
    """Return True when a recorded model (label, reason) is the explicit-solvent default, not one configured or bare.

    The reason is the one ``basemodels.resolve_base_model`` wrote (``DEFAULT_REASON``); the label holds molecules.
    """
    from elimscan.chem.basemodels import DEFAULT_REASON

    parts = label_parts(label)
    return (reason is not None and reason.startswith(DEFAULT_REASON.split("{", 1)[0])
            and parts is not None and parts.explicit > 0)
