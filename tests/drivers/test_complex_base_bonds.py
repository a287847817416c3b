"""The base's own bonds in a relaxed complex: a cluster that reacted with itself is not a reactant complex, a proton
handed along its hydrogen bonds is.

Outside checks: bonds read with the covalent radii of Cordero et al., Dalton Trans. 2008, 2832 (as ASE carries
them) at 1.2 x their sum (common practice), counted here with ASE's own neighbour list and scipy's connected
components, apart from elimscan's code. The complexes are real outputs of the reference benchmark's calibration
and test jobs on 2026-12-05 (tests/data/complex-bonds/README.md): GFN2-xTB relaxed one three-ethanol cluster into
two joined ethanols and a lone hydrogen, an artefact 21.7 kcal/mol below the intact complex of the same hydrogen.
"""

from pathlib import Path

import numpy as np
import pytest
from ase.io import read
from ase.neighborlist import NeighborList, natural_cutoffs
from scipy.sparse.csgraph import connected_components

from elimscan.config import PathConfig
from elimscan.drivers.complexes import require_bonds_kept
from elimscan.drivers.contacts import base_bonds_changed, bonds_changed
from elimscan.errors import ComplexBondsError

DATA = Path(__file__).resolve().parent.parent / "data" / "complex-bonds"
CLUSTER = read(DATA / "base-ethoxide-3-ethanol-chlorophenethyl.xyz")
#: 4-chlorophenethyl bromide (18 atoms) first in each complex of that job
N_SUBSTRATE = 18


def molecules(atoms) -> list[str]:
    """Return the sorted formulas of the covalently bonded pieces (ASE neighbour list at 1.2 x Cordero radii)."""
    cutoffs = natural_cutoffs(atoms, mult=1.2)
    nl = NeighborList(cutoffs, self_interaction=False, bothways=True, skin=0.0)
    nl.update(atoms)
    n, labels = connected_components(nl.get_connectivity_matrix(sparse=True))
    return sorted(atoms[np.flatnonzero(labels == k)].get_chemical_formula() for k in range(n))


def test_the_free_cluster_and_the_intact_complex_are_ethoxide_and_three_ethanols():
    assert molecules(CLUSTER) == ["C2H5O", "C2H6O", "C2H6O", "C2H6O"]
    intact = read(DATA / "complex-base-intact.xyz")
    assert molecules(intact[N_SUBSTRATE:]) == ["C2H5O", "C2H6O", "C2H6O", "C2H6O"]
    assert base_bonds_changed(CLUSTER, intact) is None
    require_bonds_kept(intact[:N_SUBSTRATE], intact, PathConfig(), "intact", CLUSTER)


def test_a_cluster_that_reacted_with_itself_is_refused_though_the_substrate_is_whole():
    broken = read(DATA / "complex-base-broken.xyz")
    # the independent reading: two ethanols joined and a hydrogen on its own
    assert molecules(broken[N_SUBSTRATE:]) == ["C2H6O", "C2H6O", "C4H10O2", "H"]
    # the substrate's own check sees nothing wrong: this is what it let through before
    assert bonds_changed(broken[:N_SUBSTRATE], broken) is None
    said = base_bonds_changed(CLUSTER, broken)
    assert said is not None and said.startswith("changed the base's own bonds")
    assert "broke C28-H33, C28-H34, C46-O47" in said and "made C28-O47" in said
    with pytest.raises(ComplexBondsError, match=r"C3-H13 syn rotation 0: the relaxed complex changed the base's own"):
        require_bonds_kept(broken[:N_SUBSTRATE], broken, PathConfig(), "C3-H13 syn rotation 0", CLUSTER)
    # off (written out for runs made before it), or no base given, the check says nothing
    require_bonds_kept(broken[:N_SUBSTRATE], broken, PathConfig(complex_base_bond_check=False), "off", CLUSTER)
    require_bonds_kept(broken[:N_SUBSTRATE], broken, PathConfig(), "no base")


def test_a_proton_handed_to_the_alkoxide_keeps_the_cluster():
    cluster = read(DATA / "base-ethoxide-3-ethanol-ammonium.xyz")
    handed = read(DATA / "complex-proton-handed.xyz")
    n = len(handed) - len(cluster)
    # the ethoxide oxygen (cluster atom 2) now holds an ethanol's hydroxyl hydrogen (cluster atom 16): the pieces
    # are still one alkoxide and three alcohols, only which oxygen is the alkoxide changed
    assert handed.get_distance(n + 2, n + 16) < 1.1 < cluster.get_distance(2, 16)
    assert molecules(handed[n:]) == ["C2H5O", "C2H6O", "C2H6O", "C2H6O"]
    assert base_bonds_changed(cluster, handed) is None
