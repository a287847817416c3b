"""Where the thermal terms move the E2 : SN2 split: ZPE, heat content and entropy of the E2 and SN2 saddles of a job.

A diagnosis, never a score. The benchmark pages show the E2 : SN2 split 3-4 kcal/mol more E2-leaning at dG than at
dE. Both channels start from the same reactants, so the difference is the thermal term G - E of the E2 saddle minus
that of the SN2 saddle; this tool splits it into the zero-point energy, the heat content above it (H - E - ZPE) and
-T S (quasi-RRHO, 100 cm^-1, 1 M: the same terms as the tool's ΔG‡), from a fresh finite-difference GFN2-xTB Hessian
at each saddle as the job saved it (the first frame of saddle-<class>-<approach>.xyz and
saddle-substitution-backside.xyz), at the job's temperature, solvent and charge.

    PYTHONPATH=workflow python validation/saddle_thermal_terms.py JOB_FOLDER [JOB_FOLDER ...]

JOB_FOLDER: a finished job's folder in a batch (it holds job.json and the saddle files). Prints one Markdown row per
job (its batch in brackets); the E2 saddle is the lowest verified anti or syn saddle that counts as a barrier (by
ΔE‡); the split compares two single saddles (class degeneracy is not in it).
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import ase.io
from rdkit import Chem

from elimscan.analysis.benchmark_scoring import path_left_out
from elimscan.analysis.thermo import Thermo
from elimscan.units import EV_PER_HARTREE, KCAL_MOL_PER_HARTREE

HEADER = ("| job | T (K) | E2 saddle | dE E2 - SN2 | ZPE | H - E - ZPE | -T S | thermal (G - E) | dG E2 - SN2 |\n"
          "|---|---|---|---|---|---|---|---|---|")


def thermal_split_kcal_mol(e2: Thermo, sn2: Thermo) -> dict[str, float]:
    """Return E2 minus SN2 saddle (kcal/mol): electronic energy, ZPE, heat content above the ZPE, -T S, and G - E."""
    def terms(t: Thermo) -> dict[str, float]:
        return {"electronic": t.electronic_hartree, "zpe": t.zero_point_hartree,
                "heat": t.enthalpy_hartree - t.electronic_hartree - t.zero_point_hartree,
                "minus_TS": -t.temperature_K * t.entropy_hartree_per_K,
                "thermal": t.free_energy_hartree - t.electronic_hartree}
    a, b = terms(e2), terms(sn2)
    return {k: (a[k] - b[k]) * KCAL_MOL_PER_HARTREE for k in a}


def saddle_names(job: dict) -> tuple[str, str] | None:
    """Return the file stems of the lowest verified E2 saddle that counts as a barrier (by ΔE‡) and of the verified
    SN2 saddle of a job record, or None without both."""
    e2 = [(block["barrier_kcal_mol"], f"saddle-{beta['class_id']}-{approach}")
          for beta in job.get("beta_hydrogens") or () for approach in ("anti", "syn")
          for block in (beta[approach],)
          if block.get("path_status") == "ok" and block.get("saddle_verified") and path_left_out(block) is None]
    sn2 = job.get("substitution") or {}
    if not e2 or sn2.get("path_status") != "ok" or not sn2.get("saddle_verified") or path_left_out(sn2) is not None:
        return None
    return min(e2)[1], "saddle-substitution-backside"


def _charge(job: dict) -> int:
    """Return the total charge of the job's saddles: the base's formal charge (the substrates here are neutral)."""
    return Chem.GetFormalCharge(Chem.MolFromSmiles(job["base_info"]["smiles"]))


def _saddle_thermo(path: Path, engine, charge: int, temperature_K: float) -> Thermo:
    """Return the quasi-RRHO terms (hartree) of the saddle saved as the first frame of ``path``."""
    from elimscan.drivers.freeenergy import saddle_thermo
    from elimscan.drivers.hessian import finite_difference_hessian

    atoms = ase.io.read(path, index=0)
    calc = engine.calculator(charge, 1, name=f"{path.stem} hessian")
    atoms.calc = calc
    energy_hartree = atoms.get_potential_energy() / EV_PER_HARTREE
    hessian, _ = finite_difference_hessian(atoms, calc)
    return saddle_thermo(atoms, energy_hartree, hessian, temperature_K)


def row(folder: Path) -> str:
    """Return one Markdown row for a finished job's folder (or a row saying why it has none)."""
    from elimscan.engines.xtb import EngineSettings, XtbEngine

    job = json.loads((folder / "job.json").read_text())["job"]
    names = saddle_names(job)
    if names is None:
        return (f"| {job['job_id']} | - | no verified E2 and SN2 saddles that count as barriers "
                "| - | - | - | - | - | - |")
    solvent = job["solvent"]
    engine = XtbEngine(EngineSettings(solvent_model=solvent["model"], solvent_name=solvent.get("name")))
    t = job["temperature_K"]
    e2, sn2 = (_saddle_thermo(folder / f"{name}.xyz", engine, _charge(job), t) for name in names)
    d = thermal_split_kcal_mol(e2, sn2)
    return (f"| {job['job_id']} ({folder.resolve().parents[2].name}) | {t:g} | {names[0].removeprefix('saddle-')} | "
            f"{d['electronic']:+.2f} | {d['zpe']:+.2f} | {d['heat']:+.2f} | {d['minus_TS']:+.2f} | "
            f"{d['thermal']:+.2f} | "
            f"{d['electronic'] + d['thermal']:+.2f} |")


def main(argv: list[str]) -> int:
    """Print the table for the job folders named on the command line; return the exit code."""
    if not argv:
        print(__doc__, file=sys.stderr)
        return 2
    from elimscan.engines.threads import configure_threads

    configure_threads(1)
    print(HEADER)
    for folder in map(Path, argv):
        print(row(folder), flush=True)
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
