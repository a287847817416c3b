"""Each E2 path is checked against its own geometry: the alkene it forms must be the one it was computed for.

Perception names every beta hydrogen's anti and syn alkene from its own 3D structure; the path is then computed
from a conformer, a scan and a complex. Should the hydrogen at the path's index sit on the other face there (the
geminal labels of ``chem/geminal`` guard against it), the path would compute one isomer's barrier under the other's
name. The alkene is read again from the path's last driven point, where C-X is broken and the base holds the
proton; a path that forms another isomer gets the WRONG_ISOMER flag and is no barrier. No I/O.
"""

from __future__ import annotations

import dataclasses

from elimscan.chem.alkenes import alkene_at_geometry
from elimscan.chem.betahydrogens import BetaHydrogenClass
from elimscan.chem.perception import Substrate
from elimscan.drivers.paths import PathResult
from elimscan.errors import StructureError
from elimscan.results.flags import wrong_isomer_flag


def formed_alkene(substrate: Substrate, beta_class: BetaHydrogenClass, path: PathResult) -> str | None:
    """Return the SMILES of the alkene at the path's last driven point (E/Z from that geometry), or None when the
    path stopped before it was driven through or its end is no valid alkene."""
    if path.stopped_stage is not None or len(path.points) < 2:
        return None
    n_atoms = substrate.mol.GetNumAtoms()
    positions = path.points[-1].atoms.positions[:n_atoms]
    try:
        return alkene_at_geometry(substrate.mol, positions, beta_class.representative_index,
                                  beta_class.beta_carbon_index, substrate.leaving_group.c_alpha_index,
                                  substrate.leaving_group).smiles
    except StructureError:
        return None


def checked_isomer(path: PathResult, substrate: Substrate, beta_class: BetaHydrogenClass, named: str) -> PathResult:
    """Return ``path``, flagged WRONG_ISOMER (no barrier) when its geometry forms another alkene than ``named``."""
    formed = formed_alkene(substrate, beta_class, path)
    if formed is None or formed == named:
        return path
    return dataclasses.replace(path, flags=path.flags + (wrong_isomer_flag(formed, named),))
