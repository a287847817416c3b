"""Fuzzing the input readers with hypothesis: whatever a user types, the config loader and the SMILES
perception either accept it or raise one of our documented input errors, never another exception.

Derandomised (a fixed seed), no example database, no per-example deadline (a shared 2-core machine is
slow), at least 1,000 examples each; marked ``fuzz`` (deselect with ``-m 'not fuzz'``).
"""

from __future__ import annotations

import warnings

import pytest
import yaml
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from elimscan.config import RunConfig, parse_config
from elimscan.errors import ConfigError, InputError, StructureError
from elimscan.chem.inputcheck import check_base
from elimscan.chem.perception import Substrate, check_substrate_topology, perceive_substrate

pytestmark = pytest.mark.fuzz

FUZZ = settings(max_examples=1000, deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])

GOOD = """\
name: fuzz
method: {backend: tblite, solvent: {model: alpb, name: ethanol}, temperature_K: 298.15}
substrates:
  - {name: my-chloride, smiles: "C[C@H](Cl)CC"}
bases:
  - {name: ethoxide, smiles: "CC[O-]"}
"""

# --- random YAML trees: real key names (so validation goes deep) mixed with misspellings and junk ------------

KEYS = ["name", "seed", "method", "backend", "hamiltonian", "solvent", "model", "temperature_K", "optimizer",
        "fmax_eV_per_A", "max_steps", "conformers", "scan", "step_deg", "rule", "paths", "approaches", "saddle",
        "substrates", "smiles", "charge", "multiplicity", "geometry", "bases", "bulky", "pairs", "substrate",
        "base", "solvents", "substrates_file", "executor", "kind", "workers", "time_limit_seconds", "threads",
        "per_process", "analysis", "energy", "stage_time_limit_seconds", "series", "members", "sigma", "dft",
        "enabled", "functional", "counter_ion", "explicit", "nmae", "smile", "tempertaure_K", "", "0", "1"]
SCALARS = st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6),
                    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=12),
                    st.sampled_from(["tblite", "xtb", "alpb", "gbsa", "none", "water", "ethanol", "GFN2-xTB", "CCCl",
                                     "C[O-]", "anti", "syn", "sella", "bfgs", "local", "dask", "free", "x.csv",
                                     "a.xyz", "ethoxide", "tert-butoxide"]))
TREES = st.recursive(SCALARS, lambda children: st.one_of(
    st.lists(children, max_size=4),
    st.dictionaries(st.one_of(st.sampled_from(KEYS), st.integers(-3, 3), st.booleans()), children, max_size=6)),
    max_leaves=15)
DOCUMENTS = st.dictionaries(st.sampled_from(KEYS), TREES, max_size=6)


def _mutated(text: str, cuts: list[tuple[int, int, str]]) -> str:
    """Return ``text`` with slices replaced (random edits: deletions, insertions, typos)."""
    for start, length, insert in cuts:
        start %= len(text) + 1
        text = text[:start] + insert + text[start + length:]
    return text


EDITS = st.lists(st.tuples(st.integers(0, 10**4), st.integers(0, 6),
                           st.text(alphabet=" \t\n:-[]{},'\"#&*!|>%@`0123456789aeklnmoprstxyzCHOl", max_size=5)),
                 min_size=1, max_size=4)


def _only_documented_errors(text: str) -> None:
    try:
        config = parse_config(text, source="fuzz.yaml")
    except ConfigError as err:
        event(f"ConfigError {'with' if err.line else 'without'} a line")
        return
    event("valid config")
    assert isinstance(config, RunConfig)


@FUZZ
@given(DOCUMENTS)
def test_random_yaml_trees_give_a_config_or_a_config_error(document):
    _only_documented_errors(yaml.safe_dump(document, allow_unicode=True))


@FUZZ
@given(EDITS)
def test_random_edits_of_a_good_config_give_a_config_or_a_config_error(edits):
    _only_documented_errors(_mutated(GOOD, edits))


# --- random SMILES from a small grammar (valid and invalid) -----------------------------------------------------

UNITS = ["C", "C", "C", "C", "CC", "CC", "C(C)", "C(C)(C)", "[C@H](C)", "[C@@H](C)", "C(CC)", "C=C", "O", "N",
         "S", "c2ccccc2", "[CH2:1]", "[CH2:3]", "C([2H])", "[CH]", "[Si](C)(C)", "[U]"]
LEAVING = ["Cl", "Br", "I", "F", "OS(=O)(=O)C", "OS(=O)(=O)c2ccc(C)cc2", "[N+](C)(C)C", "[S+](C)C", "[OH2+]",
           "[Cl:1]", "[Br:2]", "[O-]", "O", "[Cl-]"]
JUNK = [")", "(", "1", "X", "[", "=", "@", ".[Na+]", ":", "]"]


@st.composite
def smiles_strings(draw) -> str:
    """Return a SMILES from a small grammar of alkyl chains, rings and leaving groups, sometimes corrupted.

    Most strings are valid molecules, many of them E2 substrates; about one in five has a random edit
    (an unbalanced bracket, a stray ring digit, an unknown element symbol) and is invalid on purpose.
    (Every choice's first option is the plain one: hypothesis draws the first option most often.)
    """
    parts = []
    for _ in range(draw(st.integers(1, 4))):
        parts.append(draw(st.sampled_from(UNITS)))
        if parts[-1] in ("C", "CC") and draw(st.sampled_from([False, False, True])):
            parts.append(f"({draw(st.sampled_from(LEAVING))})")
    leaving = draw(st.sampled_from(LEAVING)) if draw(st.sampled_from([True, True, True, False])) else ""
    if draw(st.sampled_from([False, False, False, True])):  # a ring, the leaving group on a ring carbon
        # rings of four to nine atoms, no fused benzene (larger and fused rings embed slowly: kept out)
        parts = ["C" if p == "c2ccccc2" else p for p in parts[:3]]
        smiles = f"C1{''.join(parts)}C({leaving})C1" if leaving else f"C1{''.join(parts)}C1"
    else:
        smiles = "".join(parts) + leaving
    if draw(st.sampled_from([False, False, False, False, True])):  # corrupt it
        at = draw(st.integers(0, len(smiles)))
        smiles = smiles[:at] + draw(st.sampled_from(JUNK)) + smiles[at + draw(st.integers(0, 1)):]
    return smiles


@FUZZ
@given(smiles_strings())
def test_random_smiles_give_a_substrate_or_a_structure_error(smiles):
    """Perception, the graph-only pre-check and the base check raise only StructureError/InputError."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # advisories (an arbitrary enantiomer) are fine
        try:
            substrate = perceive_substrate(smiles, seed=7)
        except StructureError as err:
            event(f"StructureError: {str(err).split(': ')[-1][:30]}")
            substrate = None
    if substrate is not None:
        event("perceived")
        assert isinstance(substrate, Substrate) and substrate.beta_classes
    # the quick graph-only check of batch file rows never refuses what the full perception accepts
    try:
        check_substrate_topology(smiles)
    except StructureError as err:
        assert substrate is None, f"graph check refused a perceivable substrate: {err}"
    try:
        check_base(smiles, None, 1, "base 'fuzz'")
    except InputError:
        pass
