"""Probe of the registered two-layer level correction on the calibration rates (validation/model-freeze.yaml,
registered 2026-12-05): E = E_GFN2(whole cluster) + E_DFT(core) - E_GFN2(core).

For every finished rate job in a calibration work folder (``validate.py --subset calibration --work DIR``), the
lowest verified saddle of each product of the rate's channel (E2 or SN2), the free substrate's lowest conformer and
the alkoxide of the free base cluster are cut to their core (substrate + alkoxide; a complex is the substrate, then
the base cluster, whose base comes first: chem/basemodels.build_cluster) and computed by GFN2-xTB single points in
the job's continuum (ALPB) and DFT single points (IEF-PCM). Each path's free barrier is corrected by the change of its
electronic barrier, the channel's paths are Boltzmann-summed as on the calibration page, and the page
validation/CALIBRATION-core-correction.md puts the corrected dG++ beside GFN2-xTB's over the same paths and the
measured one, with the registered criterion's verdict. Every computed energy is kept in DIR/core-correction.json, so
a run stopped by a session's end goes on where it stopped. A DFT single point takes minutes: run it in the background.

    PYTHONPATH=workflow python validation/core_correction.py --work DIR [--seeds N] [--functional wb97x-3c]
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import sys
from pathlib import Path

import ase.io
from rdkit import Chem

from elimscan.analysis.benchmark_calibration import eyring_free_barrier_kcal_mol
from elimscan.analysis.rule import summed_barrier_kcal_mol
from elimscan.analysis.benchmark_cases import RateCase, parse_cases
from elimscan.analysis.benchmark_scoring import e2_paths, sn2_path
from elimscan.atomicio import write_text_atomic
from elimscan.config import DftConfig, MethodConfig, SolventConfig
from elimscan.engines.dft import dft_level, single_point
from elimscan.engines.xtb import EngineSettings, XtbEngine
from elimscan.units import KCAL_MOL_PER_HARTREE

HERE = Path(__file__).resolve().parent
PAGE = HERE / "CALIBRATION-core-correction.md"
#: the registered criterion: mean |dG++ error| of the four rates below this (kcal/mol), and no rate's error larger
GOAL_KCAL_MOL = 3.0


def _seed(batch: str) -> int | None:
    """Return the seed of a benchmark batch folder name ('...--seed2-alpb-...'), None when it names none."""
    part = next((p for p in batch.split("-") if p.startswith("seed")), None)
    return int(part[4:]) if part and part[4:].isdigit() else None


def _jobs(work: Path) -> list[tuple[int, Path, dict]]:
    """Return (seed, batch folder, job record) of every finished job in the work folder's batches."""
    found = []
    for path in sorted(work.glob("*/jobs/*/*/job.json")):
        batch = path.parents[3]
        record = json.loads(path.read_text())
        job = record.get("job", record)
        if job.get("status") == "ok" and _seed(batch.name) is not None:
            found.append((_seed(batch.name), batch, job))
    return found


def _atom_count(smiles: str) -> int:
    """Return the number of atoms of a molecule, hydrogens included."""
    return Chem.AddHs(Chem.MolFromSmiles(smiles)).GetNumAtoms()


class Energies:
    """Single-point energies (hartree) at both levels, kept in a JSON file by geometry file and part."""

    def __init__(self, store: Path, solvent: SolventConfig, functional: str):
        self.store, self.functional = store, functional
        self.known = json.loads(store.read_text()) if store.is_file() else {}
        self.xtb = XtbEngine(EngineSettings.from_method(MethodConfig(solvent=solvent)))
        self.dft = dft_level(DftConfig(enabled=True, functional=functional), solvent)

    def pair(self, key: str, atoms, charge: int) -> tuple[float, float, float]:
        """Return (E_DFT, E_GFN2, DFT seconds) of one core geometry, computed once and kept."""
        key = f"{self.functional}|{key}"
        if key not in self.known:
            gfn2 = self.xtb.single_point(atoms, charge=charge, name=key).energy_hartree
            point = single_point(atoms, charge, 1, self.dft, name=key)
            self.known[key] = [point.energy_hartree, gfn2, point.seconds]
            write_text_atomic(self.store, json.dumps(self.known, indent=1, sort_keys=True))
            print(f"{key}: DFT {point.seconds:.0f} s", file=sys.stderr, flush=True)
        return tuple(self.known[key])


def _core(atoms, n_substrate: int, n_base: int):
    """Return the substrate and the base of a complex or cluster geometry, its other molecules removed."""
    return atoms[: n_substrate + n_base]


def _correction(energies: Energies, batch: Path, job: dict, block: dict, n_sub: int, n_base: int,
                charge: int) -> float:
    """Return the change of one path's barrier (kcal/mol) by the level correction of its saddle and reactants."""
    saddle = ase.io.read(batch / block["saddle_file"])
    d_ts, g_ts, _ = energies.pair(str(batch / block["saddle_file"]), _core(saddle, n_sub, n_base), charge)
    job_dir = (batch / block["saddle_file"]).parent
    substrate = ase.io.read(job_dir / "conformers.sdf", index=0)
    base = ase.io.read(next(job_dir.glob("base-*.xyz")))[:n_base]
    d_s, g_s, _ = energies.pair(f"{job_dir / 'conformers.sdf'}#0", substrate, 0)
    d_b, g_b, _ = energies.pair(f"{next(job_dir.glob('base-*.xyz'))}#core", base, charge)
    return ((d_ts - g_ts) - (d_s - g_s) - (d_b - g_b)) * KCAL_MOL_PER_HARTREE


def _lowest_per_product(paths):
    """Return the lowest path of each product (the registered selection)."""
    best = {}
    for path in paths:
        if path.product_smiles not in best or path.barrier_kcal_mol < best[path.product_smiles].barrier_kcal_mol:
            best[path.product_smiles] = path
    return list(best.values())


def _block(job: dict, class_id: str, approach: str) -> dict:
    """Return a path block of a job record by class and approach."""
    return next(b[approach] for b in job["beta_hydrogens"] if b["class_id"] == class_id)


def probe(case: RateCase, seed: int, batch: Path, job: dict, energies: Energies) -> dict:
    """Return one rate job's corrected and uncorrected channel dG++ (kcal/mol) over the registered paths."""
    n_sub = _atom_count(case.substrate.smiles)
    n_base = _atom_count(job["base_info"]["smiles"])
    charge = Chem.GetFormalCharge(Chem.MolFromSmiles(job["base_info"]["smiles"]))
    if case.channel == "SN2":
        path = sn2_path(job, "dG")
        chosen = [] if path is None else [(job["substitution"], path.barrier_kcal_mol, 1)]
    else:
        chosen = [(_block(job, p.class_id, p.approach), p.barrier_kcal_mol, p.degeneracy)
                  for p in _lowest_per_product(e2_paths(job, "dG")[0])]
    if not chosen:
        return {"case": case.id, "seed": seed, "error": "no verified saddle of the channel"}
    corrected = [(dg + _correction(energies, batch, job, block, n_sub, n_base, charge), n) for block, dg, n in chosen]
    return {"case": case.id, "seed": seed, "paths": len(chosen),
            "gfn2": summed_barrier_kcal_mol([(dg, n) for _, dg, n in chosen], case.temperature_K),
            "corrected": summed_barrier_kcal_mol(corrected, case.temperature_K),
            "measured": eyring_free_barrier_kcal_mol(case.k2_per_M_per_s, case.temperature_K)}


def page(rows: list[dict], functional: str, seeds: int) -> str:
    """Return the probe's page (Markdown) from its rows."""
    lines = ["# Two-layer level correction on the calibration rates (probe)", "",
             "Written by `validation/core_correction.py`; never edited by hand. The decision rule was registered in "
             "validation/model-freeze.yaml (2026-12-05) before this probe was built or run.", "",
             f"- run: {dt.datetime.now(dt.timezone.utc):%Y-%m-%d %H:%M} UTC; DFT {functional} on the substrate + "
             f"alkoxide core; seeds 1-{seeds}", "",
             "| case | seed | paths | dG++ GFN2-xTB | dG++ corrected | measured | error GFN2 | error corrected |",
             "|---|---|---|---|---|---|---|---|"]
    done = [r for r in rows if "corrected" in r]
    for r in rows:
        if "corrected" not in r:
            lines.append(f"| {r['case']} | {r['seed']} | - | - | - | - | {r['error']} | |")
            continue
        errors = f"{r['gfn2'] - r['measured']:+.2f} | {r['corrected'] - r['measured']:+.2f}"
        lines.append(f"| {r['case']} | {r['seed']} | {r['paths']} | {r['gfn2']:.2f} | {r['corrected']:.2f} | "
                     f"{r['measured']:.2f} | {errors} |")
    by_case: dict[str, list[dict]] = {}
    for r in done:
        by_case.setdefault(r["case"], []).append(r)
    if len(by_case) == 4 and all(len(v) == seeds for v in by_case.values()):
        mean = {c: (sum(r["gfn2"] for r in v) / len(v), sum(r["corrected"] for r in v) / len(v), v[0]["measured"])
                for c, v in by_case.items()}
        mae = sum(abs(c - m) for _, c, m in mean.values()) / 4
        worse = [c for c, (g, k, m) in mean.items() if abs(k - m) > abs(g - m)]
        verdict = "passes" if mae < GOAL_KCAL_MOL and not worse else "fails"
        lines += ["", f"Registered criterion: mean |dG++ error| of the corrected rates {mae:.2f} kcal/mol (goal below "
                  f"{GOAL_KCAL_MOL:g}); rates whose error grew: {', '.join(worse) or 'none'}: **{verdict}**."]
    else:
        lines += ["", "Registered criterion: not judged (not every rate and seed computed)."]
    return "\n".join(lines) + "\n"


def main(argv: list[str] | None = None) -> int:
    """Run the probe over a calibration work folder and write its page; return the exit code."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--work", type=Path, required=True)
    parser.add_argument("--seeds", type=int, default=3)
    parser.add_argument("--functional", default="wb97x-3c", choices=["wb97x-3c", "b3lyp"])
    args = parser.parse_args(argv)
    cases = [c for c in parse_cases((HERE / "cases.yaml").read_text()).calibration if isinstance(c, RateCase)]
    jobs = _jobs(args.work)
    rows = []
    by_solvent: dict[tuple, Energies] = {}  # one engine pair and one energy store per solvent, not per job
    for seed in range(1, args.seeds + 1):
        for case in cases:
            match = [(b, j) for s, b, j in jobs if s == seed and j["substrate"] == case.substrate.name
                     and j["base"] == case.base.name and abs((j.get("temperature_K") or 0) - case.temperature_K) < 0.01]
            if not match:
                rows.append({"case": case.id, "seed": seed, "error": "no finished job with its files in --work"})
                continue
            batch, job = match[0]
            solvent = SolventConfig(**job["solvent"])
            key = (solvent.model, solvent.name)
            if key not in by_solvent:
                by_solvent[key] = Energies(args.work / "core-correction.json", solvent, args.functional)
            energies = by_solvent[key]
            rows.append(probe(case, seed, batch, job, energies))
            write_text_atomic(PAGE, page(rows, args.functional, args.seeds))
    write_text_atomic(PAGE, page(rows, args.functional, args.seeds))
    print(f"wrote {PAGE}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
