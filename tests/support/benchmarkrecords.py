"""Bookkeeping job records and test cases for the benchmark's scoring tests.

BOOKKEEPING FIXTURES, NOT CHEMISTRY: the barriers are invented to put a share on one side of a threshold;
they test counting rules only (tests/analysis/test_benchmark_scoring.py, tests/output/test_benchmark_tables.py).
"""

from __future__ import annotations

from elimscan.analysis.benchmark_cases import Expected, Molecule, OutcomeCase
from elimscan.config import SolventConfig


def record(paths, sn2=None, rule_major="C/C=C/C", rule_sn2="mixture", status="ok", temperature_K=298.15):
    """Return a bookkeeping job record: paths are (class, approach, product, barrier, degeneracy[, flags])."""
    classes: dict[str, dict] = {}
    for class_id, approach, product, barrier, degeneracy, *flags in paths:
        beta = classes.setdefault(class_id, {"class_id": class_id, "degeneracy": degeneracy, "beta_carbon_index": 0,
                                             "isotope_effects": [],
                                             "anti": {"path_status": "not computed", "product_smiles": product},
                                             "syn": {"path_status": "not computed", "product_smiles": product}})
        beta[approach] = {"path_status": "ok", "product_smiles": product, "barrier_kcal_mol": barrier,
                          "barrier_free_energy_kcal_mol": None, "flags": list(flags[0]) if flags else []}
    job = {"status": status, "temperature_K": temperature_K, "beta_hydrogens": list(classes.values()),
           "rule": {"rule_major": rule_major},
           "substitution": {"path_status": "not computed", "rule_call": rule_sn2}}
    if sn2 is not None:
        job["substitution"].update(path_status="ok", barrier_kcal_mol=sn2)
    return job


def case(major=None, shares=None, e2=None, approach=None, seeds=(1,), category=("open-chain-regio",)):
    """Return a bookkeeping test case (the substrate and source are placeholders; only ``expected`` is judged)."""
    return OutcomeCase(id="bookkeeping", category=category, substrate=Molecule(name="s", smiles="CCC(C)Br"),
                       base=Molecule(name="ethoxide"), solvent=SolventConfig(), temperature_K=298.15, seeds=seeds,
                       expected=Expected(major=major, alkene_shares=shares or {}, e2_percent=e2, approach=approach),
                       source="bookkeeping fixture", from_memory=False)
