"""The base models the benchmark can be run with: one named candidate per physical picture of the base (and, for
the sampled candidates, per way of sampling it).

Issue 18 asks for the bare anion, the ion pair, the anion with n explicit molecules of its own alcohol
(n = 0 ... 4) and both together, each reported on the benchmark; the choice among them is made on the
calibration set (rate constants, alkoxide basicity order, convergence in n), never on the test set. Pure: a
candidate is the ``model:`` block of a base config.
"""

from __future__ import annotations

from typing import Any

#: the model of the benchmark's first batch folders and run-log lines, which carry no model name (the bare anion);
#: the model the benchmark runs by default is the frozen one (validation/model-freeze.yaml, read by validate.py)
UNNAMED_BASE_MODEL = "bare"


#: name -> (``model:`` block of each benchmark base, or None, and what it represents). "bare" is written out
#: (``explicit: 0``): left out, an alkoxide in an alcohol would get elimscan's per-solvent default. Its job keys are
#: those of the bare anion before that default existed (pipeline/document.keyed_base), so old folders are reused
BASE_MODEL_CANDIDATES: dict[str, tuple[dict[str, Any] | None, str]] = {
    "bare": ({"explicit": 0}, "the free alkoxide in the continuum"),
    "alcohol-1": ({"explicit": 1}, "one alcohol molecule hydrogen-bonded to the alkoxide oxygen"),
    "alcohol-2": ({"explicit": 2}, "two alcohol molecules hydrogen-bonded (one lone pair left free)"),
    "alcohol-3": ({"explicit": 3}, "two hydrogen-bonded alcohols and one in the second shell"),
    "alcohol-4": ({"explicit": 4}, "two hydrogen-bonded alcohols and two in the second shell"),
    "Na-pair": ({"counter_ion": "Na"}, "the contact ion pair with Na+"),
    "Na-pair-alcohol-2": ({"counter_ion": "Na", "explicit": 2},
                          "the Na+ contact ion pair, one alcohol on the oxygen and one on Na+"),
    "alcohol-3-rotations": ({"explicit": 3}, "alcohol-3, with whole paths driven from all three base rotations of "
                            "each complex and Boltzmann-combined"),
    "alcohol-3-sampled": ({"explicit": 3, "arrangements": 3},
                          "alcohol-3, the lowest of three hydrogen-bond arrangements of the cluster, with whole paths "
                          "driven from all three base rotations of each complex and Boltzmann-combined"),
    "alcohol-3-embedded": ({"explicit": 3, "embeddings": 5},
                           "alcohol-3, the lowest of five independent embeddings of the base and its three ethanols"),
}

#: name -> ``paths:`` settings a candidate adds to every case's own (issue 18 item 2: sampling of the solvated base
#: and its complexes; a candidate not named here drives one path per class from the lowest complex)
SAMPLING_PATHS: dict[str, dict[str, Any]] = {
    "alcohol-3-rotations": {"orientation_paths": 3, "combine": "boltzmann"},
    "alcohol-3-sampled": {"orientation_paths": 3, "combine": "boltzmann"},
}


def base_model_block(name: str) -> dict[str, Any] | None:
    """Return the ``model:`` block of a named candidate; ValueError names the choices."""
    if name not in BASE_MODEL_CANDIDATES:
        raise ValueError(f"unknown base model '{name}': choose one of {', '.join(BASE_MODEL_CANDIDATES)}")
    block = BASE_MODEL_CANDIDATES[name][0]
    return dict(block) if block is not None else None


def paths_block(name: str, case_paths: dict[str, Any] | None) -> dict[str, Any] | None:
    """Return a case's ``paths:`` block under a named candidate: the case's own, with the candidate's sampling over it."""
    base_model_block(name)
    if name not in SAMPLING_PATHS:
        return case_paths
    return {**(case_paths or {}), **SAMPLING_PATHS[name]}


def model_prefix(name: str) -> str:
    """Return the prefix of a candidate's batch folders ('' for the bare anion, so its old folders are reused)."""
    base_model_block(name)
    return "" if name == UNNAMED_BASE_MODEL else f"{name}--"
