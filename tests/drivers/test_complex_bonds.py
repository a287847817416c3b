"""Base placement that keeps clear of the substrate, and the bond check of relaxed complexes.

Outside checks: bonds are read with the covalent radii of Cordero et al., Dalton Trans. 2008, 2832 (as ASE
carries them), and contacts with the van der Waals radii ASE carries (Bondi, J. Phys. Chem. 1964, 68, 441; H
1.10 Å from Rowland & Taylor, J. Phys. Chem. 1996, 100, 7384); the clash criterion (0.7 x the summed van der
Waals radii) and the bond criterion (1.2 x the summed covalent radii) are common practice. The complexes are real
outputs of a benchmark job whose cluster base was placed on top of the substrate (tests/data/complex-bonds).
"""

from pathlib import Path

import numpy as np
import pytest
from ase.io import read

from elimscan.config import PathConfig
from elimscan.drivers.complexes import place_backside, place_base, require_bonds_kept
from elimscan.drivers.contacts import vdw_radii_A, bonds_changed
from elimscan.errors import ComplexBondsError
from elimscan.geometry import covalent_bonds, distance

DATA = Path(__file__).resolve().parent.parent / "data" / "complex-bonds"
SUBSTRATE = read(DATA / "substrate-2-bromopentane.xyz")
CLUSTER = read(DATA / "base-ethoxide-3-ethanol.xyz")
BASIC = 2  # the cluster's ethoxide oxygen (no hydrogen of its own)
C_ALPHA, BROMINE = 3, 5
#: (beta carbon, hydrogen) of the substrate's beta hydrogens, 0-based
BETA_HYDROGENS = ((2, 11), (2, 12), (4, 14), (4, 15), (4, 16))


def contact_ratios(a_positions, a_radii, b_positions, b_radii) -> np.ndarray:
    """Return every a-b distance over the sum of the two atoms' radii (written here apart from the code's own)."""
    rows = []
    for p, r in zip(a_positions, a_radii):
        rows.append([np.sqrt(((p - q) ** 2).sum()) / (r + s) for q, s in zip(b_positions, b_radii)])
    return np.array(rows)


def _clearance(complex_atoms, head: int) -> float:
    """Return the smallest substrate-base distance over the summed van der Waals radii (basic atom-head left out)."""
    n = len(SUBSTRATE)
    ratios = contact_ratios(complex_atoms.positions[:n], vdw_radii_A(SUBSTRATE.numbers),
                            complex_atoms.positions[n:], vdw_radii_A(CLUSTER.numbers))
    ratios[head, BASIC] = np.inf
    return float(ratios.min())


def _internal_distances(positions: np.ndarray) -> np.ndarray:
    return np.linalg.norm(positions[:, None, :] - positions[None, :, :], axis=-1)


def test_the_fixtures_basic_oxygen_is_the_one_without_a_hydrogen():
    oxygens = [i for i, s in enumerate(CLUSTER.get_chemical_symbols()) if s == "O"]
    bare = [o for o in oxygens
            if not any(CLUSTER[j].symbol == "H" and CLUSTER.get_distance(o, j) < 1.15 for j in range(len(CLUSTER)))]
    assert bare == [BASIC]


def test_the_cluster_placed_on_the_c_h_line_alone_sits_on_the_substrate():
    """The placement of 3d9bf79 (no clearance): some of the cluster lands within half the van der Waals contact."""
    worst = min(_clearance(place_base(SUBSTRATE, h, c, CLUSTER, BASIC, 2.0, rotation), h)
                for c, h in BETA_HYDROGENS for rotation in (0.0, 120.0, 240.0))
    assert worst < 0.5


@pytest.mark.parametrize("rotation", [0.0, 120.0, 240.0])
def test_a_placed_cluster_keeps_clear_of_the_substrate_with_its_basic_atom_where_it_was(rotation):
    for c_beta, h in BETA_HYDROGENS:
        plain = place_base(SUBSTRATE, h, c_beta, CLUSTER, BASIC, 2.0, rotation)
        placed = place_base(SUBSTRATE, h, c_beta, CLUSTER, BASIC, 2.0, rotation, clearance=0.7)
        b = len(SUBSTRATE) + BASIC
        # asked for 0.7; where no turn reaches it the clearest is kept: 20,000 random turns of this cluster reach
        # at most 0.73-0.87 on these hydrogens (measured once), the plain placement 0.21-0.40
        assert _clearance(placed, h) >= 0.65
        assert _clearance(placed, h) >= _clearance(plain, h)
        assert distance(placed.positions, h, b) == pytest.approx(2.0)
        assert placed.get_angle(c_beta, h, b) == pytest.approx(180.0, abs=1e-6)
        # the cluster is turned as one rigid body about its basic atom
        assert _internal_distances(placed.positions[len(SUBSTRATE):]) == \
            pytest.approx(_internal_distances(CLUSTER.positions), abs=1e-9)


def test_a_bare_anion_placed_clear_of_the_substrate_is_left_where_it_was(embed):
    """Ethoxide alone (9 atoms) points its ethyl group away: already clear, so the clearance changes nothing and
    bare-anion jobs keep their placements."""
    ethoxide = embed("CC[O-]")
    basic = 2
    for c_beta, h in BETA_HYDROGENS:
        for rotation in (0.0, 120.0, 240.0):
            plain = place_base(SUBSTRATE, h, c_beta, ethoxide, basic, 2.0, rotation)
            n = len(SUBSTRATE)
            ratios = contact_ratios(plain.positions[:n], vdw_radii_A(SUBSTRATE.numbers), plain.positions[n:],
                                    vdw_radii_A(ethoxide.numbers))
            ratios[h, basic] = np.inf
            assert ratios.min() >= 0.7
            placed = place_base(SUBSTRATE, h, c_beta, ethoxide, basic, 2.0, rotation, clearance=0.7)
            assert placed.positions == pytest.approx(plain.positions, abs=1e-12)


def test_a_backside_placement_keeps_clear_too():
    plain = place_backside(SUBSTRATE, C_ALPHA, BROMINE, CLUSTER, BASIC, 3.0, 0.0)
    placed = place_backside(SUBSTRATE, C_ALPHA, BROMINE, CLUSTER, BASIC, 3.0, 0.0, clearance=0.7)
    # behind C-alpha no turn reaches 0.7 (random turns: at most 0.67); the clearest found is kept
    assert _clearance(plain, C_ALPHA) < 0.55 < 0.6 <= _clearance(placed, C_ALPHA)
    assert distance(placed.positions, C_ALPHA, len(SUBSTRATE) + BASIC) == pytest.approx(3.0)


def test_the_substrates_bonds_read_from_coordinates_are_its_16():
    """2-bromopentane, C5H11Br: 4 C-C, 1 C-Br, 11 C-H bonds and no other pair within 1.2 x the covalent radii."""
    from ase.data import covalent_radii

    bonds = covalent_bonds(SUBSTRATE.positions, covalent_radii[SUBSTRATE.numbers], 1.2)
    kinds = ["".join(sorted((SUBSTRATE[i].symbol, SUBSTRATE[j].symbol))) for i, j in bonds]
    assert len(bonds) == 16
    assert kinds.count("CC") == 4 and kinds.count("BrC") == 1 and kinds.count("CH") == 11


def test_an_intact_complex_passes_the_bond_check():
    complex_atoms = read(DATA / "complex-intact.xyz")
    assert bonds_changed(SUBSTRATE, complex_atoms) is None
    require_bonds_kept(SUBSTRATE, complex_atoms, PathConfig(), "intact")


def test_a_complex_whose_hydrogens_traded_places_is_named_for_it():
    said = bonds_changed(SUBSTRATE, read(DATA / "complex-hydrogens-traded.xyz"))
    assert said is not None
    assert "broke C4-H14" in said and "C4-H48 (to the base)" in said


def test_a_complex_that_lost_its_bromine_is_refused_with_its_name():
    complex_atoms = read(DATA / "complex-bromide-lost.xyz")
    said = bonds_changed(SUBSTRATE, complex_atoms)
    assert said is not None and "C4-Br6" in said and "C4-C5" in said
    with pytest.raises(ComplexBondsError, match=r"C3-H13 anti rotation 0: the relaxed complex broke .*C4-Br6"):
        require_bonds_kept(SUBSTRATE, complex_atoms, PathConfig(), "C3-H13 anti rotation 0")
    # switched off, as a config may for runs made before the check, it says nothing
    require_bonds_kept(SUBSTRATE, complex_atoms, PathConfig(complex_bond_check=False), "off")


def test_a_metal_ions_contacts_are_not_read_as_bonds():
    """A sodium ion 2.9 Å from the bromine (an ion-pair contact, inside 1.2 x the covalent radii) changes nothing."""
    from ase import Atoms

    complex_atoms = SUBSTRATE + Atoms("Na", positions=[SUBSTRATE.positions[BROMINE] + [0.0, 0.0, 2.9]])
    assert bonds_changed(SUBSTRATE, complex_atoms) is None


class _NoEngine:
    """Stands in for an engine: the relaxation is replaced in the test, so no calculator is ever used."""

    def calculator(self, charge, multiplicity, name=""):
        return None


def test_build_complex_drops_the_rotation_whose_complex_lost_its_bromine_although_it_is_lowest(monkeypatch):
    """The wiring: of three rotations the broken complex has the lowest energy (as in the benchmark job, 14.6
    kcal/mol below the others' order); with the check it is dropped and named, without it, it is kept."""
    import elimscan.drivers.complexes as complexes
    from elimscan.config import OptimizerConfig
    from elimscan.drivers.relax import RelaxResult

    broken, intact = read(DATA / "complex-bromide-lost.xyz"), read(DATA / "complex-intact.xyz")
    outcomes = iter([(broken, -65.845), (intact, -65.818), (intact, -65.817)] * 3)

    def fake_relax(start, calc, held, settings):
        atoms, energy = next(outcomes)
        return RelaxResult(atoms.copy(), energy, 10, 5, True, 0.0)

    monkeypatch.setattr(complexes, "relax", fake_relax)
    reactive = complexes.Reactive(h=12, c_beta=2, c_alpha=C_ALPHA, x=BROMINE, base=len(SUBSTRATE) + BASIC)
    args = (SUBSTRATE, CLUSTER, BASIC, reactive, 180.0, _NoEngine(), -1, 1)
    kept = complexes.build_complex(*args, PathConfig(), OptimizerConfig(), "C3-H13 anti")
    assert kept.energy_hartree == pytest.approx(-65.818) and kept.rotation_deg == pytest.approx(120.0)
    assert kept.failed_rotations == ("base rotation 0 deg of the complex failed (complex_bonds_changed); the other "
                                     "rotations were used",)
    unchecked = complexes.build_complex(*args, PathConfig(complex_bond_check=False, complex_base_bond_check=False),
                                        OptimizerConfig(), "C3-H13 anti")
    assert unchecked.energy_hartree == pytest.approx(-65.845) and unchecked.failed_rotations == ()
    # the cluster lost the hydrogens it took from the substrate's side: the base's own check drops it too
    base_only = complexes.build_complex(*args, PathConfig(complex_bond_check=False), OptimizerConfig(), "C3-H13 anti")
    assert base_only.energy_hartree == pytest.approx(-65.818) and len(base_only.failed_rotations) == 1
