"""Base models (RDKit and numpy only, no I/O): the bare base, an ion pair, explicit solvent molecules.

Which model a base gets is decided in one place, ``resolve_base_model``: what the config's ``model:`` says,
else the default of the base and solvent (an alkoxide or hydroxide in water or an alcohol gets
DEFAULT_EXPLICIT_MOLECULES molecules of its conjugate acid; everything else stays bare).

A model is a cluster built around the base: the base's own atoms first (so the basic atom keeps its
index), then the metal cation, then each explicit molecule. The cation and the hydrogen-bond donors sit
on the lone-pair directions of the basic atom (tetrahedral about its bonds); one lone pair always stays
free for the proton transfer, and since the complex builder turns the base so that its nearest atoms
point away from the substrate, that free lone pair is the one that faces the beta hydrogen. Explicit
molecules beyond the lone pairs left bind the cation through their donor atom (O or N), on the far side
from the base, as alcohols solvate a potassium ion; without a cation they form a second shell, each
hydrogen-bonded to the donor atom of a first-shell molecule (taken in turn), as an alkoxide's solvating
alcohols are themselves solvated in the neat alcohol.

Distances (Å) are starting values only: every cluster is relaxed before use, alone (the reference of the
common zero) and in each complex.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from ase import Atoms
from ase.data import covalent_radii
from rdkit import Chem

from elimscan.config.basenames import COUNTER_IONS
from elimscan.config.molecules import (DEFAULT_CLUSTER_EMBEDDINGS, DEFAULT_EXPLICIT_MOLECULES, DEFAULT_MODEL_CONTINUA,
                                       BaseConfig)
from elimscan.config.run import SEED_LIMIT
from elimscan.errors import StructureError
from elimscan.geometry import covalent_neighbours
from elimscan.solvents import canonical_solvent_name, is_protic

#: metal-oxygen contact distances of alkali alkoxides and hydroxides (Å), starting values; common practice
CATION_DISTANCE_A: dict[str, float] = {"Li": 1.95, "Na": 2.30, "K": 2.65}
#: H...O distance of an alcohol hydrogen bond to an alkoxide oxygen (Å), starting value; common practice
HYDROGEN_BOND_A = 1.75
#: H...O distance of an alcohol-to-alcohol hydrogen bond (second shell), starting value (Å); common practice
SECOND_SHELL_BOND_A = 1.90
#: explicit molecules on the cation: their donor atom this far (degrees) off the base->cation axis, beyond it
CATION_LIGAND_TILT_DEG = 70.0
#: tetrahedral angle (degrees)
TETRAHEDRAL_DEG = 109.4712


@dataclass(frozen=True)
class BaseCluster:
    """A base model as one molecule: atoms (Å), dot-separated SMILES, total charge, basic atom, label."""

    atoms: Atoms
    smiles: str
    charge: int
    basic_atom_index: int
    n_base_atoms: int
    label: str


def conjugate_acid_smiles(smiles: str, basic: int) -> str:
    """Return the canonical SMILES of the base with one proton added to its basic atom (heavy-atom index)."""
    mol = Chem.RWMol(Chem.MolFromSmiles(smiles))
    if mol is None or basic >= mol.GetNumAtoms():
        raise StructureError(f"base '{smiles}': cannot form its conjugate acid")
    atom = mol.GetAtomWithIdx(basic)
    atom.SetNumExplicitHs(atom.GetTotalNumHs() + 1)
    atom.SetFormalCharge(atom.GetFormalCharge() + 1)
    atom.SetNoImplicit(True)
    Chem.SanitizeMol(mol)
    return Chem.MolToSmiles(mol)


def _bonded(atoms: Atoms, i: int, scale: float = 1.2) -> list[int]:
    """Return the atoms bonded to atom i by covalent radii."""
    return covalent_neighbours(atoms.positions, covalent_radii[atoms.numbers], i, scale)


def _perpendicular(u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Return two unit vectors perpendicular to ``u`` and to each other."""
    p = np.cross(u, [1.0, 0.0, 0.0] if abs(u[0]) < 0.9 else [0.0, 1.0, 0.0])
    p /= np.linalg.norm(p)
    return p, np.cross(u, p)


def lone_pair_directions(atoms: Atoms, basic: int) -> list[np.ndarray]:
    """Return unit vectors of an atom's lone pairs, tetrahedral about its bonds (one for 3 bonds, none for 4)."""
    centre = atoms.positions[basic]
    bonds = [(atoms.positions[j] - centre) / np.linalg.norm(atoms.positions[j] - centre) for j in _bonded(atoms, basic)]
    theta = np.radians(TETRAHEDRAL_DEG)
    if not bonds:
        return [np.array(v) / np.sqrt(3.0) for v in ((1, 1, 1), (1, -1, -1), (-1, 1, -1), (-1, -1, 1))]
    if len(bonds) == 1:
        u = bonds[0]
        p, q = _perpendicular(u)
        return [np.cos(theta) * u + np.sin(theta) * (np.cos(phi) * p + np.sin(phi) * q)
                for phi in np.radians([0.0, 120.0, 240.0])]
    if len(bonds) == 2:
        bisector = bonds[0] + bonds[1]
        bisector /= np.linalg.norm(bisector)
        normal = np.cross(bonds[0], bonds[1])
        normal /= np.linalg.norm(normal)
        half = theta / 2.0
        return [-np.cos(half) * bisector + sign * np.sin(half) * normal for sign in (1.0, -1.0)]
    if len(bonds) == 3:  # pyramidal (an amine's nitrogen): one lone pair, opposite the sum of its bonds
        away = -(bonds[0] + bonds[1] + bonds[2])
        return [away / np.linalg.norm(away)] if np.linalg.norm(away) > 1e-6 else []
    return []


def _rotation(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Return the rotation matrix turning unit vector ``a`` onto unit vector ``b``."""
    v, c = np.cross(a, b), float(np.dot(a, b))
    if np.linalg.norm(v) < 1e-9:
        if c > 0:
            return np.eye(3)
        p, _ = _perpendicular(a)
        return 2.0 * np.outer(p, p) - np.eye(3)
    k = np.array([[0, -v[2], v[1]], [v[2], 0, -v[0]], [-v[1], v[0], 0]])
    return np.eye(3) + k + k @ k / (1.0 + c)


def _about(axis: np.ndarray, angle_rad: float) -> np.ndarray:
    """Return the rotation matrix about a unit axis."""
    k = np.array([[0, -axis[2], axis[1]], [axis[2], 0, -axis[0]], [-axis[1], axis[0], 0]])
    return np.eye(3) + np.sin(angle_rad) * k + (1.0 - np.cos(angle_rad)) * k @ k


def donor_hydrogen(atoms: Atoms, what: str = "explicit solvent molecule") -> tuple[int, int]:
    """Return (H, donor atom) of the first O-H or N-H of a molecule (0-based), for a hydrogen bond.

    Raises StructureError naming ``what`` (the base and the molecule's SMILES) when there is none.
    """
    for h in range(len(atoms)):
        if atoms.numbers[h] != 1:
            continue
        donors = [j for j in _bonded(atoms, h) if atoms.numbers[j] in (7, 8)]
        if donors:
            return h, donors[0]
    raise StructureError(f"{what} has no O-H or N-H to donate a hydrogen bond (give an alcohol, water or an "
                         "amine as explicit_smiles)")


def _place_molecule(molecule: Atoms, anchor: int, h: int, donor: int, site: np.ndarray, bond_along: np.ndarray,
                    axis: np.ndarray, existing: np.ndarray) -> Atoms:
    """Return ``molecule`` with atom ``anchor`` at ``site`` and its donor->H bond along ``bond_along``, turned
    about ``axis`` (12 steps of 30 degrees) to keep it farthest from the ``existing`` atoms (Å)."""
    moved = molecule.positions - molecule.positions[anchor]
    d_h = moved[h] - moved[donor]
    moved = moved @ _rotation(d_h / np.linalg.norm(d_h), bond_along).T
    best, best_gap = None, -1.0
    for turn in np.radians(np.arange(0.0, 360.0, 30.0)):
        trial = moved @ _about(axis, turn).T + site
        gap = float(np.min(np.linalg.norm(trial[:, None, :] - existing[None, :, :], axis=2)))
        if gap > best_gap:
            best, best_gap = trial, gap
    placed = molecule.copy()
    placed.positions = best
    return placed


def _second_shell(cluster: Atoms, first: int, first_sizes: Sequence[int], molecules: Sequence[Atoms],
                  what: str, host_offset: int = 0) -> Atoms:
    """Return ``cluster`` with each molecule hydrogen-bonded to a lone pair of a first-shell donor atom (Å).

    The first-shell molecules start at atom ``first`` (right after the base) with ``first_sizes`` atoms each;
    the k-th added molecule binds the ((k + host_offset) mod n)-th of them, on the lone pair of its donor atom
    that leaves the most room (a second molecule on the same donor takes the next one).
    """
    starts = [first + sum(first_sizes[:j]) for j in range(len(first_sizes))]
    used: dict[int, int] = {}
    for k, molecule in enumerate(molecules):
        host = (k + host_offset) % len(starts)
        start = starts[host]
        _, donor = donor_hydrogen(cluster[start:start + first_sizes[host]], what)
        donor += start
        centre = cluster.positions[donor]

        def room(direction: np.ndarray) -> float:
            site = centre + SECOND_SHELL_BOND_A * direction
            return float(np.min(np.linalg.norm(cluster.positions - site, axis=1)))

        free = sorted(lone_pair_directions(cluster, donor), key=room, reverse=True)
        turn = used.get(donor, 0)
        if turn >= len(free):
            raise StructureError(f"{what}: no lone pair left on a first-shell molecule for a second-shell one")
        used[donor] = turn + 1
        direction = free[turn]
        h, own_donor = donor_hydrogen(molecule, what)
        cluster += _place_molecule(molecule, h, h, own_donor, centre + SECOND_SHELL_BOND_A * direction, -direction,
                                   direction, cluster.positions)
    return cluster


def build_cluster(base: Atoms, basic: int, base_smiles: str, base_charge: int, counter_ion: str | None,
                  explicit: Sequence[Atoms] = (), explicit_smiles: str | None = None, name: str = "base",
                  arrangement: int = 0) -> BaseCluster:
    """Return the base model: the base, then the cation (if any), then the explicit molecules (Å).

    ``arrangement`` picks one of the distinct hydrogen-bond arrangements: it turns the order of the basic
    atom's lone pairs (so another one stays free: arrangement mod the number of lone pairs) and, beyond that,
    which first-shell molecule each second-shell one binds. Raises StructureError naming the base when the
    ligands would leave no lone pair free, or when a counter-ion is asked for a base that is not an anion.
    """
    if counter_ion is None and not explicit:
        return BaseCluster(base.copy(), base_smiles, base_charge, basic, len(base), "bare")
    if counter_ion is not None:
        if counter_ion not in CATION_DISTANCE_A:
            raise StructureError(f"base '{name}': counter-ion '{counter_ion}' is not one of "
                                 f"{', '.join(CATION_DISTANCE_A)}")
        if base_charge >= 0:
            raise StructureError(f"base '{name}' ({base_smiles}) is not an anion (charge {base_charge:+d}): "
                                 "a counter-ion pairs only with an anionic base")
    slots = lone_pair_directions(base, basic)
    turn = arrangement % len(slots) if slots else 0
    slots = slots[turn:] + slots[:turn]
    at_base = len(slots) - 1 - (1 if counter_ion else 0)  # explicit molecules the basic atom can take
    if at_base < 0 or (counter_ion is None and explicit and at_base == 0):
        ligands = (1 if counter_ion else 0) + len(explicit)
        raise StructureError(f"base '{name}' ({base_smiles}): its basic atom has {len(slots)} lone pair(s); "
                             f"{ligands} ligand(s) (counter-ion and explicit molecules) would leave none free for "
                             f"the proton transfer (at most {max(len(slots) - 1, 0)} on the basic atom; further "
                             "explicit molecules bind the cation or, without one, the first-shell molecules)")
    centre = base.positions[basic]
    what = f"base '{name}': explicit molecule '{explicit_smiles or '?'}'"
    cluster = base.copy()
    smiles = [base_smiles]
    slot = iter(slots)
    if counter_ion is not None:
        cluster += Atoms(counter_ion, positions=[centre + CATION_DISTANCE_A[counter_ion] * next(slot)])
        smiles.append(f"[{counter_ion}+]")
    for molecule in explicit[:at_base]:
        direction = next(slot)
        h, donor = donor_hydrogen(molecule, what)
        # hydrogen bond: H at the lone pair, donor->H pointing at the basic atom
        cluster += _place_molecule(molecule, h, h, donor, centre + HYDROGEN_BOND_A * direction, -direction, direction,
                                   cluster.positions)
        smiles.append(explicit_smiles or "?")
    on_cation = explicit[at_base:] if counter_ion is not None else ()
    second_shell = explicit[at_base:] if counter_ion is None else ()
    if second_shell:
        cluster = _second_shell(cluster, len(base), [len(m) for m in explicit[:at_base]], second_shell, what,
                                arrangement // max(len(slots), 1))
        smiles += [explicit_smiles or "?"] * len(second_shell)
    if on_cation:
        metal = cluster.positions[len(base)]
        axis = (metal - centre) / np.linalg.norm(metal - centre)
        p, q = _perpendicular(axis)
        tilt = np.radians(CATION_LIGAND_TILT_DEG)
        for k, molecule in enumerate(on_cation):
            phi = 2.0 * np.pi * k / len(on_cation)
            direction = np.cos(tilt) * axis + np.sin(tilt) * (np.cos(phi) * p + np.sin(phi) * q)
            h, donor = donor_hydrogen(molecule, what)
            # donor atom on the cation, its O-H pointing away from it
            cluster += _place_molecule(molecule, donor, h, donor, metal + CATION_DISTANCE_A[counter_ion] * direction,
                                       direction, direction, cluster.positions)
            smiles.append(explicit_smiles or "?")
    n_bonded = min(len(explicit), at_base)
    parts = ([f"{counter_ion}+ ion pair"] if counter_ion else []) + \
        ([f"{n_bonded} x {explicit_smiles} hydrogen-bonded"] if n_bonded else []) + \
        ([f"{len(on_cation)} x {explicit_smiles} on the cation"] if on_cation else []) + \
        ([f"{len(second_shell)} x {explicit_smiles} in the second shell"] if second_shell else [])
    charge = base_charge + (1 if counter_ion else 0)
    return BaseCluster(cluster, ".".join(smiles), charge, basic, len(base), " + ".join(parts))



def model_cluster(smiles: str, charge: int | None, multiplicity: int, counter_ion: str | None, explicit: int,
                  explicit_smiles: str | None, seed: int, name: str, arrangement: int = 0) -> BaseCluster:
    """Return the base model of a base config (Å): the embedded base with its cation and explicit molecules.

    The one builder for the calculation (``pipeline.compute.relax_base``) and the input check
    (``inputcheck.check_base_model``); raises StructureError naming the base when the model cannot be built.
    """
    from elimscan.chem.bases import find_basic_atom
    from elimscan.chem.structures import build_molecule, parse_smiles

    what = f"base '{name}'"
    basic = find_basic_atom(parse_smiles(smiles, what), smiles)
    built = build_molecule(smiles, seed, charge, multiplicity, what)
    molecule_smiles = explicit_smiles or conjugate_acid_smiles(smiles, basic)
    molecules = [build_molecule(molecule_smiles, (seed + k) % SEED_LIMIT, None, 1, f"{what} explicit molecule").atoms
                 for k in range(explicit)]
    return build_cluster(built.atoms, basic, smiles, built.formal_charge, counter_ion, molecules, molecule_smiles, name,
                         arrangement)


#: why a base got the explicit-solvent default (record and plan wording)
DEFAULT_REASON = "default for {kind} in a protic solvent ({solvent})"


@dataclass(frozen=True)
class ResolvedModel:
    """The base model a job computes: counter-ion, explicit molecules (a count), their SMILES and why this model."""

    counter_ion: str | None
    explicit: int
    explicit_smiles: str | None
    reason: str
    #: independent embeddings of the cluster's molecules, each relaxed, the lowest kept (1 for a bare base)
    embeddings: int = 1

    @property
    def bare(self) -> bool:
        """Return True for the free base (no counter-ion, no explicit molecules)."""
        return self.counter_ion is None and self.explicit == 0

    def words(self) -> str:
        """Return the model in words (plan lines): 'bare base', '3 explicit CCO molecule(s), lowest of 5 embeddings'."""
        parts = ([f"ion pair with {self.counter_ion}+"] if self.counter_ion else []) + \
            ([f"{self.explicit} explicit {self.explicit_smiles or 'conjugate-acid'} molecule(s)"] if self.explicit else [])
        if parts and self.embeddings > 1:
            parts.append(f"lowest of {self.embeddings} embeddings")
        return ", ".join(parts) or "bare base"


def oxide_anion_kind(smiles: str) -> str | None:
    """Return 'an alkoxide' or 'hydroxide' when the base's basic atom is an O(-) on an sp3 carbon or on H, else None.

    Only these anions (charge -1 in all) get the explicit-solvent default: the model was calibrated on alkoxides
    in their alcohols; a carboxylate, phenoxide, amide or neutral base stays bare unless its config says otherwise.
    """
    from elimscan.chem.bases import find_basic_atom

    mol = Chem.MolFromSmiles(smiles)
    if mol is None or Chem.GetFormalCharge(mol) != -1:
        return None
    try:
        atom = mol.GetAtomWithIdx(find_basic_atom(mol, smiles))
    except StructureError:
        return None
    if atom.GetAtomicNum() != 8 or atom.GetFormalCharge() != -1:
        return None
    heavy = [n for n in atom.GetNeighbors() if n.GetAtomicNum() > 1]
    if not heavy:
        return "hydroxide" if atom.GetTotalNumHs() == 1 else None
    carbon = heavy[0]
    if len(heavy) == 1 and carbon.GetAtomicNum() == 6 and not carbon.GetIsAromatic() and \
            carbon.GetHybridization() == Chem.HybridizationType.SP3:
        return "an alkoxide"
    return None


def _cation_note(base: BaseConfig, counter_ion: str | None) -> str:
    """Return '; the K+ of KOtBu is not modelled (...)' for an abbreviation whose cation is left out, else ''."""
    cation = base.named_cation
    if cation is None or counter_ion is not None:
        return ""
    how = (f"model: {{counter_ion: {cation}}} for the contact ion pair" if cation in COUNTER_IONS
           else f"the ion-pair model has no {cation}+")
    return f"; the {cation}+ of {base.name} is not modelled ({how})"


def resolve_base_model(base: BaseConfig, solvent_model: str, solvent_name: str | None) -> ResolvedModel:
    """Return the model a base is computed with in a solvent: the config's ``model:``, else the default.

    The default (``explicit`` not given): DEFAULT_EXPLICIT_MOLECULES molecules of the base's conjugate acid, embedded
    DEFAULT_CLUSTER_EMBEDDINGS times unless ``embeddings`` is given (1 for a model written out), for an
    alkoxide or hydroxide (``oxide_anion_kind``) in a protic solvent (``solvents.PROTIC_SOLVENTS``) of a continuum
    in DEFAULT_MODEL_CONTINUA; 0 for any other base, for the gas phase, aprotic solvents and the dielectric-only
    continuum, and beside a counter-ion the config asks for (the default was calibrated on the free anion). The one rule for the calculation, the input checks and the plan.
    """
    model = base.model
    note = _cation_note(base, model.counter_ion)
    given = model.embeddings or 1
    if model.explicit is not None:
        bare = model.counter_ion is None and model.explicit == 0
        return ResolvedModel(model.counter_ion, model.explicit, model.explicit_smiles,
                             f"{'bare base' if bare else 'model'} as configured{note}", 1 if bare else given)
    if model.counter_ion is not None:
        return ResolvedModel(model.counter_ion, 0, model.explicit_smiles,
                             "ion pair as configured (no explicit molecules: the default is for the free anion)", given)
    kind = oxide_anion_kind(base.smiles)
    if kind is None:
        return ResolvedModel(None, 0, model.explicit_smiles,
                             f"default: bare (explicit molecules are the default only for an alkoxide or hydroxide){note}")
    if not is_protic(solvent_model, solvent_name):
        where = "the gas phase" if solvent_model == "none" else f"an aprotic solvent ({solvent_name})"
        return ResolvedModel(None, 0, model.explicit_smiles, f"default: bare for {kind} in {where}{note}")
    if solvent_model not in DEFAULT_MODEL_CONTINUA:
        return ResolvedModel(None, 0, model.explicit_smiles,
                             f"default: bare for {kind} in the {solvent_model}-only continuum ({solvent_name}): "
                             f"explicit molecules cost about 100 times more there{note}")
    reason = DEFAULT_REASON.format(kind=kind, solvent=canonical_solvent_name(solvent_name or ""))
    return ResolvedModel(None, DEFAULT_EXPLICIT_MOLECULES, model.explicit_smiles, reason + note,
                         model.embeddings or DEFAULT_CLUSTER_EMBEDDINGS)
