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
The charge is the sum of the job's molecules' charges and the engine settings are the batch config's (the YAML beside
the batch folder); the thermal term the job itself recorded ((ΔG‡ - ΔE‡) of the E2 path minus the SN2 path's) is
shown beside the fresh one, flagged when they differ by more than 0.1 kcal/mol. ``--out PAGE`` also writes the
table as a page with its date, commit and command.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import ase.io
from elimscan.analysis.benchmark_scoring import path_left_out
from elimscan.analysis.thermo import Thermo
from elimscan.units import EV_PER_HARTREE, KCAL_MOL_PER_HARTREE

HEADER = ("| job | T (K) | E2 saddle | dE E2 - SN2 | ZPE | H - E - ZPE | -T S | thermal (G - E) | recorded thermal | "
          "dG E2 - SN2 |\n|---|---|---|---|---|---|---|---|---|---|")
#: fresh and recorded thermal terms further apart than this (kcal/mol) are flagged
RECORDED_TOLERANCE_KCAL_MOL = 0.1


def thermal_split_kcal_mol(e2: Thermo, sn2: Thermo) -> dict[str, float]:
    """Return E2 minus SN2 saddle (kcal/mol): electronic energy, ZPE, heat content above the ZPE, -T S, and G - E."""
    def terms(t: Thermo) -> dict[str, float]:
        return {"electronic": t.electronic_hartree, "zpe": t.zero_point_hartree,
                "heat": t.enthalpy_hartree - t.electronic_hartree - t.zero_point_hartree,
                "minus_TS": -t.temperature_K * t.entropy_hartree_per_K,
                "thermal": t.free_energy_hartree - t.electronic_hartree}
    a, b = terms(e2), terms(sn2)
    return {k: (a[k] - b[k]) * KCAL_MOL_PER_HARTREE for k in a}


def _e2_blocks(job: dict) -> list[tuple[float, str, dict]]:
    """Return (ΔE‡ kcal/mol, file stem, path record) of the verified E2 saddles that count as barriers."""
    return [(block["barrier_kcal_mol"], f"saddle-{beta['class_id']}-{approach}", block)
            for beta in job.get("beta_hydrogens") or () for approach in ("anti", "syn")
            for block in (beta[approach],)
            if block.get("path_status") == "ok" and block.get("saddle_verified") and path_left_out(block) is None]


def saddle_names(job: dict) -> tuple[str, str] | None:
    """Return the file stems of the lowest verified E2 saddle that counts as a barrier and of the SN2 saddle."""
    e2, sn2 = _e2_blocks(job), job.get("substitution") or {}
    if not e2 or sn2.get("path_status") != "ok" or not sn2.get("saddle_verified") or path_left_out(sn2) is not None:
        return None
    return min(e2, key=lambda item: item[0])[1], "saddle-substitution-backside"


def recorded_thermal_kcal_mol(job: dict) -> float | None:
    """Return the job's own (ΔG‡ - ΔE‡) of its lowest counted E2 saddle minus the SN2 path's (kcal/mol), or None."""
    e2, sn2 = _e2_blocks(job), job.get("substitution") or {}
    if not e2 or saddle_names(job) is None:
        return None
    block = min(e2, key=lambda item: item[0])[2]
    if block.get("barrier_free_energy_kcal_mol") is None or sn2.get("barrier_free_energy_kcal_mol") is None:
        return None
    return ((block["barrier_free_energy_kcal_mol"] - block["barrier_kcal_mol"])
            - (sn2["barrier_free_energy_kcal_mol"] - sn2["barrier_kcal_mol"]))


def total_charge(molecules: list[dict]) -> int:
    """Return the total charge of a job's saddles: the sum of its molecules' charges (job.json's ``molecules``)."""
    return sum(int(m["charge"]) for m in molecules)


def _engine(folder: Path):
    """Return the GFN2-xTB engine of the batch config beside the job's batch folder (ValueError naming it if absent)."""
    from elimscan.config import parse_config
    from elimscan.engines.xtb import EngineSettings, XtbEngine

    batch = folder.resolve().parents[2]
    config = batch.parent / f"{batch.name}.yaml"
    if not config.is_file():
        raise ValueError(f"{folder}: no batch config {config} beside its batch folder")
    return XtbEngine(EngineSettings.from_method(parse_config(config.read_text(), str(config)).method))


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
    document = json.loads((folder / "job.json").read_text())
    job = document["job"]
    names = saddle_names(job)
    if names is None:
        return (f"| {job['job_id']} | - | no verified E2 and SN2 saddles that count as barriers "
                "| - | - | - | - | - | - | - |")
    t = job["temperature_K"]
    engine = _engine(folder)
    e2, sn2 = (_saddle_thermo(folder / f"{name}.xyz", engine, total_charge(document["molecules"]), t) for name in names)
    d = thermal_split_kcal_mol(e2, sn2)
    recorded = recorded_thermal_kcal_mol(job)
    flag = ("" if recorded is None or abs(recorded - d["thermal"]) <= RECORDED_TOLERANCE_KCAL_MOL
            else " (**differs**)")
    return (f"| {job['job_id']} ({folder.resolve().parents[2].name}) | {t:g} | {names[0].removeprefix('saddle-')} | "
            f"{d['electronic']:+.2f} | {d['zpe']:+.2f} | {d['heat']:+.2f} | {d['minus_TS']:+.2f} | "
            f"{d['thermal']:+.2f} | {'-' if recorded is None else f'{recorded:+.2f}'}{flag} | "
            f"{d['electronic'] + d['thermal']:+.2f} |")


def page(rows: list[str], commit: str, date_utc: str, command: str) -> str:
    """Return the Markdown page of the table: what it is, when, at which commit, with which command."""
    return "\n".join(["# The E2 - SN2 thermal term, split", "",
                      "Written by `validation/saddle_thermal_terms.py`; never edited by hand. A diagnosis, never a score: "
                      "kcal/mol, E2 saddle minus SN2 saddle, from fresh GFN2-xTB Hessians at the saddles each job saved "
                      "(quasi-RRHO, 100 cm^-1, 1 M); 'recorded thermal' is the job's own (dG - dE) difference.", "",
                      f"- run: {date_utc}, commit `{commit}`", f"- command: `{command}`", "", HEADER, *rows]) + "\n"


def main(argv: list[str]) -> int:
    """Print the table for the job folders named on the command line (and write it with --out); return the exit code."""
    out = None
    if len(argv) >= 2 and argv[0] == "--out":
        out, argv = Path(argv[1]), argv[2:]
    if not argv:
        print(__doc__, file=sys.stderr)
        return 2
    import datetime
    import subprocess

    from elimscan.atomicio import write_text_atomic
    from elimscan.engines.threads import configure_threads

    configure_threads(1)
    print(HEADER)
    rows = []
    for folder in map(Path, argv):
        rows.append(row(folder))
        print(rows[-1], flush=True)
    if out is not None:
        commit = subprocess.run(["git", "rev-parse", "--short", "HEAD"], capture_output=True, text=True,
                                cwd=Path(__file__).resolve().parent).stdout.strip() or "unknown"
        date = datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
        command = "python validation/saddle_thermal_terms.py --out " + " ".join([str(out), *argv])
        write_text_atomic(out, page(rows, commit, date, command))
        print(f"wrote {out}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
