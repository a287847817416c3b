"""Input checks of a config's molecules before any calculation (RDKit only, no I/O, no engine).

Everything that can be told from a SMILES alone is checked here, so a typo stops a run before the
first GFN2-xTB call: parsing, elements, isotope labels, size, unpaired electrons, charge and closed-shell
multiplicity, and for substrates the full perception (leaving group, atom maps, beta hydrogens, stereo) and a
user's geometry file, for bases the basic atom and the base model; and a base that is the substrate itself. Each error is a ``StructureError`` whose
message starts with the role and name (``substrate 'x'``) and contains the SMILES.
"""

from __future__ import annotations

import copy
import warnings
from functools import lru_cache

from rdkit import Chem

from elimscan.chem.basemodels import model_cluster
from elimscan.chem.bases import find_basic_atom
from elimscan.errors import StructureError
from elimscan.chem.perception import check_substrate_topology, perceive_substrate
from elimscan.chem.structures import check_charge, parse_smiles
from elimscan.config.experiment import SUBSTITUTION_PRODUCT, ExperimentConfig
from elimscan.config.molecules import CLOSED_SHELL_MULTIPLICITY, OVERNIGHT_HEAVY_ATOMS


def _named(err: StructureError, what: str, smiles: str) -> StructureError:
    """Return ``err`` with the role and name in front and the SMILES in the text (unchanged if both are there)."""
    text = str(err)
    if text.startswith(what) and smiles in text:
        return err
    if smiles not in text:
        text = f"SMILES '{smiles}': {text}"
    return StructureError(f"{what}: {text}")


def molecule_charge(smiles: str, charge: int | None, multiplicity: int, what: str) -> int:
    """Return the total charge of a molecule (elementary charges); raise StructureError naming it when unusable.

    Only closed shells are computed: no unpaired electrons (``parse_smiles`` refuses them with the electron
    count) and multiplicity 1.
    """
    mol = parse_smiles(smiles, what)
    total = check_charge(smiles, Chem.GetFormalCharge(mol), charge, what)
    electrons = sum(a.GetAtomicNum() for a in mol.GetAtoms()) - total
    if multiplicity != CLOSED_SHELL_MULTIPLICITY:
        raise StructureError(f"{what} '{smiles}': multiplicity {multiplicity}: elimscan handles closed-shell "
                             f"molecules only (multiplicity {CLOSED_SHELL_MULTIPLICITY}, a singlet; {electrons} "
                             "electrons)")
    return total


def size_warning(substrate_smiles: str, base_smiles: str, what: str) -> str | None:
    """Return a warning when a job's substrate and base together exceed OVERNIGHT_HEAVY_ATOMS heavy atoms, else None."""
    heavy = sum(parse_smiles(s, what, add_hydrogens=False).GetNumHeavyAtoms() for s in (substrate_smiles, base_smiles))
    if heavy <= OVERNIGHT_HEAVY_ATOMS:
        return None
    return (f"{what}: {heavy} heavy atoms in substrate and base, more than {OVERNIGHT_HEAVY_ATOMS}: such a job is "
            "unlikely to finish overnight on one core (a rough bound from one measured job, until the benchmark "
            "measures costs by size); a batch with executor.time_limit_seconds stops it in time")


def check_geometry(smiles: str, seed: int, text: str, fmt: str, what: str) -> None:
    """Raise StructureError naming the substrate when its geometry file (SDF or XYZ text) is not its SMILES's molecule."""
    from elimscan.chem.structures import atoms_from_geometry

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        mol = perceive_substrate(smiles, seed=seed).mol
    atoms_from_geometry(mol, text, fmt, what)  # its errors name the substrate


def check_substrate(smiles: str, charge: int | None, multiplicity: int, what: str, seed: int,
                    full: bool = True) -> int:
    """Return a substrate's total charge after perceiving it (leaving group, beta H); raise StructureError naming it.

    ``full=False`` checks only what the molecular graph tells (milliseconds; for the many rows of a batch's
    substrates file): what needs 3D (stereo that matters) then fails the job when it runs.
    """
    total = molecule_charge(smiles, charge, multiplicity, what)
    err = _perception_error(smiles, seed, full)
    if err is not None:
        err = copy.copy(err)  # the cached one stays as it was
        raise _named(err, what, smiles) from err
    return total


@lru_cache(maxsize=1024)
def _perception_error(smiles: str, seed: int, full: bool) -> StructureError | None:
    """Return why a substrate cannot be perceived (None when it can); kept per SMILES and seed, as planning a
    benchmark's batches perceives each substrate once per group (the perception is pure and seeded)."""
    try:
        with warnings.catch_warnings():  # advisories (an arbitrary enantiomer) are recorded by the run itself
            warnings.simplefilter("ignore")
            if full:
                perceive_substrate(smiles, seed=seed)
            else:
                check_substrate_topology(smiles)
    except StructureError as err:
        return err
    return None


def check_base(smiles: str, charge: int | None, multiplicity: int, what: str) -> int:
    """Return a base's total charge after finding its basic atom; raise StructureError naming it."""
    total = molecule_charge(smiles, charge, multiplicity, what)
    try:
        find_basic_atom(parse_smiles(smiles, what), smiles)
    except StructureError as err:
        raise _named(err, what, smiles) from err
    return total


def check_base_model(smiles: str, charge: int | None, multiplicity: int, counter_ion: str | None, explicit: int,
                     explicit_smiles: str | None, seed: int, name: str) -> None:
    """Raise StructureError naming the base when its model (ion pair, explicit molecules) cannot be built.

    Builds the same cluster as the calculation does (``basemodels.model_cluster``), without an engine.
    """
    if counter_ion is None and not explicit:
        return
    model_cluster(smiles, charge, multiplicity, counter_ion, explicit, explicit_smiles, seed, name)


def check_explicit_smiles(explicit_smiles: str, name: str) -> None:
    """Raise StructureError naming the base when the SMILES of its explicit molecules cannot be used."""
    molecule_charge(explicit_smiles, None, CLOSED_SHELL_MULTIPLICITY, f"base '{name}' explicit_smiles")


def same_molecule(smiles_a: str, smiles_b: str) -> bool:
    """Return True when two SMILES are the same molecule (atom maps ignored; both must parse)."""
    keys = []
    for smiles in (smiles_a, smiles_b):
        mol = Chem.MolFromSmiles(smiles)
        if mol is None:
            return False
        for atom in mol.GetAtoms():
            atom.SetAtomMapNum(0)
        keys.append(Chem.MolToSmiles(mol))
    return keys[0] == keys[1]


def check_pair(substrate_name: str, substrate_smiles: str, base_name: str, base_smiles: str) -> None:
    """Raise StructureError when a job's base is the substrate itself (it would have to deprotonate itself)."""
    if same_molecule(substrate_smiles, base_smiles):
        raise StructureError(f"base '{base_name}' ('{base_smiles}') is the same molecule as substrate "
                             f"'{substrate_name}' ('{substrate_smiles}'): a base must be another molecule, "
                             "with a basic atom (an alkoxide, amide or amine)")


def modelled_charge(charge: int, counter_ion: str | None) -> int:
    """Return a base's total charge as modelled (e): its own charge, +1 when an ion pair's cation travels with it."""
    return charge + (1 if counter_ion is not None else 0)


def gas_phase_ion_problem(solvent_model: str, charges: dict[str, int]) -> str | None:
    """Return why a job with free ions is refused in the gas phase (solvent model 'none'), or None.

    ``charges`` maps a role and name ("base 'ethoxide'") to its modelled charge (see ``modelled_charge``).
    """
    ions = [f"{what} (charge {q:+d})" for what, q in charges.items() if q]
    if solvent_model != "none" or not ions:
        return None
    return (f"gas phase requested, but free ions appear: {', '.join(ions)}. A free ion in the gas phase binds "
            "anything it meets (complexation energies near -20 kcal/mol) and E2 saddles vanish; use an implicit "
            "solvent ({model: alpb, name: ...})")


def alkene_key(smiles: str) -> str | None:
    """Return an alkene's canonical SMILES with tetrahedral stereo removed and E/Z kept, or None when it does not parse."""
    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        return None
    for atom in mol.GetAtoms():
        atom.SetChiralTag(Chem.ChiralType.CHI_UNSPECIFIED)
    Chem.AssignStereochemistry(mol, cleanIt=True, force=True)
    return Chem.MolToSmiles(mol)


def experiment_alkene_problem(substrate_smiles: str, experiment: ExperimentConfig, seed: int) -> tuple[str, str] | None:
    """Return (key under the experiment, problem) for the first alkene SMILES of an observation that does not parse
    or is no alkene the substrate can give (E and Z count apart), else None (also when the substrate itself cannot
    be perceived: that error is its own, reported for its SMILES)."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            substrate = perceive_substrate(substrate_smiles, seed=seed)
    except StructureError:
        return None
    possible = {alkene_key(p.smiles): p.smiles for c in substrate.beta_classes
                for p in (c.anti_product, c.syn_product) if p.possible}
    named = [("major", experiment.major)] if experiment.major not in (None, SUBSTITUTION_PRODUCT) else []
    named += [(f"alkene_shares.{smiles}", smiles) for smiles in experiment.alkene_shares]
    for key, smiles in named:
        found = alkene_key(smiles)
        if found is None:
            return key, f"'{smiles}' is not a SMILES RDKit can read"
        if found not in possible:
            return key, (f"'{smiles}' is no alkene substrate '{substrate_smiles}' can give by E2 (possible: "
                         f"{', '.join(sorted(possible.values()))}; write E and Z isomers apart)")
    return None
