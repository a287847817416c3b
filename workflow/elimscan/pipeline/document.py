"""The result document of a run, built one way for ``elimscan run`` and ``elimscan batch`` (no file I/O).

Both commands hand over finished job records and molecule records; this module adds the provenance, the
job keys, the summary counts and the substituent series, so the two ``results.json`` cannot drift apart.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import platform
from collections.abc import Iterable, Sequence

from elimscan import __version__
from elimscan.chem.basemodels import resolve_base_model
from elimscan.config import BaseConfig, RunConfig, SolventConfig, SubstrateConfig
from elimscan.results.documents import Provenance, RunResult, RunSummary, Seeds
from elimscan.results.records import JobRecord, MoleculeRecord
from elimscan.results.trouble import count_trouble
from elimscan.solvents import check_solvent, method_label
from elimscan.versions import BACKEND_DISTRIBUTIONS, installed_version

#: settings that change no number: left out of the job key
KEY_EXCLUDED = {"name", "threads", "executor", "substrates", "substrates_file", "bases", "pairs", "solvents", "series"}
#: settings added after jobs were keyed, at the value that does what the code did before they existed: left out
#: of the key at that value, so finished jobs keep their keys (dotted path in the key document -> that value)
KEY_NEUTRAL: dict[str, object] = {"base.model.arrangements": 1, "base.model.embeddings": 1, "settings.paths.carry_hessian": False,
                                  "settings.paths.complex_screen_fmax_eV_per_A": None,
                                  "settings.paths.complex_screen_window_kcal_mol": 0.0,
                                  "settings.paths.complex_optimizer": None,
                                  "settings.optimizer.internal_rebuild_limit": None,
                                  "settings.paths.complex_clearance_vdw_fraction": None,
                                  "settings.paths.complex_bond_check": False,
                                  "settings.paths.complex_base_bond_check": False}
#: DFT settings that change no number at any value (how much memory a calculation may take): left out of the key
KEY_EXCLUDED_DFT = {"memory_limit_MB"}
#: the DFT tier's mode whose jobs key without ``dft.saddles`` and ``dft.reoptimise_*`` (they change nothing there)
DFT_SINGLE_POINTS = "single-point"


#: raised when finished jobs must not be reused although no setting changed: 2 since conformers keep the perceived
#: labels of geminal hydrogens (chem/geminal.py): before, a CH2's two hydrogens could trade places in a fresh
#: embedding, and a path was computed for one hydrogen under the other's product (E for Z)
KEY_FORMAT = 2
#: raised for the jobs that sample starts (``paths.combine: boltzmann`` or ``paths.orientation_paths`` > 1) only: 2
#: since the free barrier is Boltzmann-combined over the verified saddles of every start, as the electronic one
#: always was (before, it was the lowest start's alone); 3 since the SN2 path is sampled over the nucleophile's
#: rotations as an E2 approach is (before, SN2 drove one path from the lowest complex whatever the sampling)
SAMPLING_KEY_FORMAT = 3


def _without_neutral(document: dict) -> dict:
    """Return the key document without the KEY_NEUTRAL settings that sit at their neutral value."""
    for dotted, neutral in KEY_NEUTRAL.items():
        *parents, leaf = dotted.split(".")
        node = document
        for part in parents:
            node = node.get(part) if isinstance(node, dict) else None
        if isinstance(node, dict) and leaf in node and node[leaf] == neutral:
            del node[leaf]
    return document


def utc_now() -> str:
    """Return the time now (UTC, ISO 8601, milliseconds)."""
    return _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="milliseconds")


def canonical_solvent(solvent: SolventConfig, config: RunConfig) -> SolventConfig:
    """Return the solvent with our canonical name (None for the gas phase), checked against the backend."""
    name = check_solvent(config.method.backend, config.method.hamiltonian, solvent.model, solvent.name)
    return SolventConfig.model_construct(model=solvent.model, name=name)


def solvent_label(solvent: SolventConfig) -> str:
    """Return a short label of an implicit solvent: 'gas' or '<model>-<name>' (e.g. alpb-water)."""
    return "gas" if solvent.model == "none" else f"{solvent.model}-{solvent.name}"


def job_inputs(name: str, smiles: str, charge: int | None, multiplicity: int, geometry_text: str | None) -> dict:
    """Return the substrate part of a job key: name, SMILES, charge, multiplicity and the geometry file's SHA-256."""
    return {"name": name, "smiles": smiles, "charge": charge, "multiplicity": multiplicity,
            "geometry_sha256": hashlib.sha256(geometry_text.encode()).hexdigest() if geometry_text is not None else None}


def substrate_inputs(substrate: SubstrateConfig, geometry_text: str | None) -> dict:
    """Return ``job_inputs`` of a substrate of the config."""
    return job_inputs(substrate.name, substrate.smiles, substrate.charge, substrate.multiplicity, geometry_text)


def keyed_base(base: BaseConfig, solvent: SolventConfig) -> dict:
    """Return the base's part of a job key: its config with the model it gets in this solvent (counts resolved)."""
    resolved = resolve_base_model(base, solvent.model, solvent.name)
    dumped = base.model_dump(mode="json")
    dumped["model"] = {**dumped["model"], "counter_ion": resolved.counter_ion, "explicit": resolved.explicit,
                       "embeddings": resolved.embeddings}
    return dumped


def job_key(config: RunConfig, substrate: dict, base: BaseConfig, solvent: SolventConfig,
            versions: dict[str, str]) -> str:
    """Return the SHA-256 hex key of one job: its inputs and every setting and library version that changes its numbers.

    Left out: the config's name, threads, executor, and the other substrates, bases and solvents. The base enters
    with its model as computed (``resolve_base_model`` in this solvent): a base whose model resolves to the bare
    anion keys as before the per-solvent default existed, so finished bare jobs of a resumed batch are reused, and
    a job whose default changed (an alkoxide in an alcohol) is computed again.
    """
    settings = config.model_dump(mode="json", exclude=KEY_EXCLUDED)
    settings["method"]["solvent"] = {"model": solvent.model, "name": solvent.name}
    if config.dft.enabled:  # the optional DFT tier: its settings and PySCF's version change the job's numbers
        versions = {**versions, "pyscf": installed_version("pyscf")}
        settings["dft"] = {name: value for name, value in settings["dft"].items() if name not in KEY_EXCLUDED_DFT}
        if settings["dft"].get("saddles") == DFT_SINGLE_POINTS:  # single points: keys as before the saddle rung
            settings["dft"] = {name: value for name, value in settings["dft"].items()
                               if name != "saddles" and not name.startswith("reoptimise_")}
    else:  # tier off: keys stay those of configs without a dft block
        settings.pop("dft", None)
    document = _without_neutral({"key_format": KEY_FORMAT, "settings": settings, "substrate": substrate,
                                 "base": keyed_base(base, solvent), "versions": versions})
    if config.paths.combine == "boltzmann" or config.paths.orientation_paths > 1:
        document["sampling_key_format"] = SAMPLING_KEY_FORMAT
    return hashlib.sha256(json.dumps(document, sort_keys=True, separators=(",", ":")).encode()).hexdigest()


def provenance(config: RunConfig, command_line: str, versions: dict[str, str]) -> Provenance:
    """Return the provenance block of a result document: program, libraries, backend and the method label.

    ``versions`` are the job key's (``versions.numeric_versions``, with PySCF when the DFT tier is on): SciPy,
    Sella and PySCF are recorded from them.
    """
    import ase
    import numpy
    import rdkit

    method = config.method
    backend_version = versions.get(BACKEND_DISTRIBUTIONS.get(method.backend, method.backend), "unknown")
    return Provenance(program_version=__version__, command_line=command_line, created_utc=utc_now(),
                      python_version=platform.python_version(), rdkit_version=rdkit.__version__,
                      ase_version=ase.__version__, numpy_version=numpy.__version__,
                      scipy_version=versions.get("scipy"), sella_version=versions.get("sella"),
                      pyscf_version=versions.get("pyscf"), backend=method.backend,
                      backend_version=backend_version,
                      method_label=engine_label(config, backend_version))


def engine_label(config: RunConfig, backend_version: str) -> str:
    """Return the method label of a config: GFN2-xTB's, or the plug-in engine's factory in its place."""
    method = config.method
    media = [canonical_solvent(s, config) for s in (config.solvents or (method.solvent,))]
    label = method_label(method.hamiltonian, [(s.model, s.name) for s in media], method.backend, backend_version)
    if method.engine_factory:
        return f"plug-in engine {method.engine_factory} (in place of {label})"
    return label


def unique_molecules(molecules: Iterable[MoleculeRecord]) -> tuple[MoleculeRecord, ...]:
    """Return one record per (role, name, solvent), substrates first, a successful record before a failed one."""
    kept: dict[tuple, MoleculeRecord] = {}
    for molecule in molecules:
        key = (molecule.role != "substrate", molecule.name,
               None if molecule.solvent is None else solvent_label(molecule.solvent))
        if key not in kept or (kept[key].status != "ok" and molecule.status == "ok"):
            kept[key] = molecule
    return tuple(kept[k] for k in sorted(kept, key=lambda k: k[0]))


def run_document(config: RunConfig, origin: Provenance, jobs: Sequence[JobRecord],
                 molecules: Iterable[MoleculeRecord], retry_temperature_points: int = 0) -> RunResult:
    """Return the result document (results.json) of finished jobs: records, summary counts, series, seeds."""
    from elimscan.analysis.series import series_records

    jobs = tuple(jobs)
    molecules = unique_molecules(molecules)
    n_failed = sum(job.status != "ok" for job in jobs)
    return RunResult(provenance=origin, config=config, seeds=Seeds(rdkit_embedding=config.seed),
                     molecules=molecules, jobs=jobs,
                     summary=RunSummary(n_jobs=len(jobs), n_jobs_ok=len(jobs) - n_failed, n_jobs_failed=n_failed,
                                        n_molecules_failed=sum(m.status != "ok" for m in molecules),
                                        trouble=count_trouble(jobs, retry_temperature_points)),
                     series=series_records(config.series, list(jobs), config.method.temperature_K,
                                           config.analysis.energy))
