"""The benchmark's jobs: every case x seed as one elimscan job, grouped into as few batch configs as possible.

A batch config holds one seed, one temperature, one solvent (``method.solvent``) and one ``paths:`` block, so
jobs are grouped by those four; within a group the jobs are ``pairs:`` of substrate x base. A job that two
cases need (the same substrate, by canonical isomeric SMILES, with the same base in the same group) runs
once and serves both. Pure: the configs are returned as dicts for the caller to write.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from rdkit import Chem

from elimscan.config import BASE_LIBRARY, SolventConfig
from elimscan.analysis.benchmark_cases import CalibrationCase, Molecule, OutcomeCase, case_slots
from elimscan.analysis.benchmark_models import UNNAMED_BASE_MODEL, base_model_block, model_prefix, paths_block


@dataclass(frozen=True)
class BenchmarkJob:
    """One job slot of a case at one seed, and the batch group it runs in."""

    slot: str
    seed: int
    group: str
    substrate: Molecule
    base: Molecule
    solvent: SolventConfig
    temperature_K: float
    paths: dict[str, Any] | None


def seeds_for(case: OutcomeCase | CalibrationCase, count: int | None) -> tuple[int, ...]:
    """Return the first ``count`` seeds of a case (all when None); past its list, the next integers are used."""
    seeds = list(case.seeds)
    if count is None:
        return tuple(seeds)
    while len(seeds) < count:
        seeds.append(max(seeds) + 1)
    return tuple(seeds[:count])


def group_name(seed: int, solvent: SolventConfig, temperature_K: float, paths: dict[str, Any] | None) -> str:
    """Return the name of the batch group of a seed, solvent, temperature (K) and paths block (a folder name)."""
    name = f"seed{seed}-{solvent.model}-{solvent.name or 'none'}-{temperature_K:g}K"
    if paths:
        name += "-paths" + hashlib.sha256(json.dumps(paths, sort_keys=True).encode()).hexdigest()[:8]
    return "".join(c if c.isalnum() or c in "-._" else "-" for c in name)


def benchmark_jobs(cases: Sequence[OutcomeCase | CalibrationCase], seed_count: int | None = None) -> list[BenchmarkJob]:
    """Return one BenchmarkJob per case slot and seed (a Hammett case has one slot per member)."""
    jobs = []
    for case in cases:
        for seed in seeds_for(case, seed_count):
            group = group_name(seed, case.solvent, case.temperature_K, case.paths)
            for slot, substrate in case_slots(case):
                jobs.append(BenchmarkJob(slot, seed, group, substrate, case.base, case.solvent, case.temperature_K,
                                         case.paths))
    return jobs


def base_smiles(base: Molecule) -> str:
    """Return the SMILES of a base (a built-in name's from the library)."""
    return base.smiles or BASE_LIBRARY[base.name.strip().lower()]


def _unique_name(name: str, key: str, names: dict[str, str]) -> str:
    """Return ``name`` for ``key``, or ``name #n`` when another key already holds it in ``names`` (updated)."""
    candidate, n = name, 1
    while candidate in names and names[candidate] != key:
        n += 1
        candidate = f"{name} #{n}"
    names[candidate] = key
    return candidate


@dataclass(frozen=True)
class BatchGroup:
    """One batch config (as a dict) and which slots each of its (substrate, base) pairs serves."""

    name: str
    config: dict[str, Any]
    #: (substrate name, base name) in the config -> [(slot, seed)] it serves
    serves: dict[tuple[str, str], list[tuple[str, int]]]


#: the DFT levels registered as candidates for the calibration set (validation/model-freeze.yaml): dft.functional keys
DFT_CALIBRATION_FUNCTIONALS = ("b3lyp", "wb97x-3c")


def dft_block(functional: str) -> dict[str, Any]:
    """Return the ``dft:`` block of the benchmark's DFT calibration runs: single points with ``functional`` on the
    lowest GFN2-xTB saddle of each product, with the free substrate and base (absolute barriers)."""
    return {"enabled": True, "functional": functional, "saddles_per_product": 1, "absolute_barriers": True}


def batch_groups(jobs: Sequence[BenchmarkJob], config_prefix: str = "reference",
                 engine_factory: str | None = None, base_model: str = UNNAMED_BASE_MODEL,
                 dft_functional: str | None = None) -> list[BatchGroup]:
    """Return the batch configs of the jobs, one per group, with each job's pair shared by equal jobs.

    ``engine_factory`` ('module:function') puts a plug-in engine into every config (tests); None: GFN2-xTB.
    ``base_model`` names a candidate of ``benchmark_models``: every base of every job gets its ``model:``
    block (and its sampling's ``paths:`` settings over each case's own), and the groups' folder names its prefix
    (none for the bare anion). ``dft_functional`` turns the DFT tier on in every config (``dft_block``) and
    names it in the groups' folder names (None: GFN2-xTB only).
    """
    model, prefix = base_model_block(base_model), model_prefix(base_model)
    suffix = "" if dft_functional is None else f"-dft-{dft_functional}"
    groups: dict[str, list[BenchmarkJob]] = {}
    for job in jobs:
        groups.setdefault(prefix + job.group + suffix, []).append(job)
    found = []
    for name, members in groups.items():
        first = members[0]
        substrate_names: dict[str, str] = {}
        base_names: dict[str, str] = {}
        substrates: dict[str, dict] = {}
        bases: dict[str, dict] = {}
        serves: dict[tuple[str, str], list[tuple[str, int]]] = {}
        for job in members:
            skey = Chem.CanonSmiles(job.substrate.smiles)
            sname = next((n for n, k in substrate_names.items() if k == skey), None) or \
                _unique_name(job.substrate.name, skey, substrate_names)
            substrates.setdefault(sname, {"name": sname, "smiles": job.substrate.smiles})
            bkey = Chem.CanonSmiles(base_smiles(job.base))
            bname = next((n for n, k in base_names.items() if k == bkey), None) or \
                _unique_name(job.base.name, bkey, base_names)
            entry = ({"name": bname} if job.base.smiles is None and bname == job.base.name
                     else {"name": bname, "smiles": base_smiles(job.base)})
            if model is not None:
                entry["model"] = dict(model)
            bases.setdefault(bname, entry)
            serves.setdefault((sname, bname), []).append((job.slot, job.seed))
        config: dict[str, Any] = {
            "name": f"{config_prefix}-{name}", "seed": first.seed,
            "method": {"solvent": first.solvent.model_dump(), "temperature_K": first.temperature_K},
            "substrates": list(substrates.values()), "bases": list(bases.values()),
            "pairs": [{"substrate": s, "base": b} for s, b in serves]}
        paths = paths_block(base_model, first.paths)
        if paths:
            config["paths"] = paths
        if engine_factory is not None:
            config["method"]["engine_factory"] = engine_factory
        if dft_functional is not None:
            config["dft"] = dft_block(dft_functional)
        found.append(BatchGroup(name, config, serves))
    return found
