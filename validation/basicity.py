"""`make basicity`: the relative basicity of methoxide, ethoxide and tert-butoxide under each base model.

A physics criterion for choosing a base model (issue 18), apart from every product outcome: the model should
put the alkoxides in their solution order (tert-butoxide the strongest base, methoxide the weakest), as
measured pKa values of the alcohols say. For each candidate of ``elimscan.analysis.benchmark_models`` and each
seed, the base models and the free alcohols are relaxed with GFN2-xTB in the implicit solvent (electronic
energies; thermal terms left out), and pKa(ROH) - pKa(MeOH) comes from the balanced proton exchange of
``elimscan.analysis.basicity``. The lowest energy over the seeds (and over the hydrogen-bond arrangements of
each cluster, ``--arrangements``) counts; the spread over seeds is printed beside it. Writes
validation/BASICITY.md (never edited by hand).

Options: ``--models a,b`` (default: all candidates), ``--seeds N`` (default 3), ``--arrangements N`` (default 1),
``--no-write``.
"""

from __future__ import annotations

import argparse
import datetime as _dt
import subprocess
import sys
import time
from pathlib import Path

from elimscan.analysis.basicity import exchange_energy_kcal_mol, relative_pka
from elimscan.analysis.benchmark_models import BASE_MODEL_CANDIDATES, SAMPLING_PATHS, base_model_block
from elimscan.atomicio import write_text_atomic
from elimscan.chem.basemodels import conjugate_acid_smiles
from elimscan.chem.bases import describe_base
from elimscan.config import MAX_CLUSTER_ARRANGEMENTS, BaseConfig, MethodConfig, OptimizerConfig, RunConfig, SubstrateConfig
from elimscan.engines.factory import make_engine
from elimscan.pipeline.compute import relax_base, relax_molecule

HERE = Path(__file__).resolve().parent
TEMPERATURE_K = 298.15
ALKOXIDES = {"methoxide": "C[O-]", "ethoxide": "CC[O-]", "tert-butoxide": "CC(C)(C)[O-]"}
#: pKa(ROH) - pKa(methanol): water (textbook tables, e.g. Solomons & Fryhle; from memory) and DMSO (Bordwell,
#: Acc. Chem. Res. 1988, 21, 456; from memory)
MEASURED = {"ethoxide": {"water": 15.9 - 15.5, "DMSO": 29.8 - 29.0},
            "tert-butoxide": {"water": 18.0 - 15.5, "DMSO": 32.2 - 29.0}}


def _parse(argv: list[str] | None) -> argparse.Namespace:
    """Return the parsed command line."""
    parser = argparse.ArgumentParser(description="relative alkoxide basicity under each base model")
    parser.add_argument("--models", default=",".join(m for m in BASE_MODEL_CANDIDATES if m not in SAMPLING_PATHS),
                        help="comma-separated candidates (default: all but the sampled ones, whose base is "
                        "alcohol-3's; --arrangements samples the cluster here)")
    parser.add_argument("--seeds", type=int, default=3, help="seeds per model: conformers of the base and its molecules (default 3)")
    parser.add_argument("--arrangements", type=int, default=1,
                        help="hydrogen-bond arrangements relaxed per cluster, the lowest kept (model.arrangements; default 1)")
    parser.add_argument("--no-write", action="store_true", help="print the table, do not write BASICITY.md")
    args = parser.parse_args(argv)
    for name in args.models.split(","):
        base_model_block(name)
    if args.seeds < 1:
        parser.error("--seeds must be at least 1")
    if not 1 <= args.arrangements <= MAX_CLUSTER_ARRANGEMENTS:
        parser.error(f"--arrangements must be 1 to {MAX_CLUSTER_ARRANGEMENTS}")
    return args


def _lowest(energies: list[float]) -> tuple[float, float]:
    """Return the lowest energy (hartree) and the spread max - min (kcal/mol) over seeds."""
    return min(energies), (max(energies) - min(energies)) * 627.509474


def main(argv: list[str] | None = None) -> int:
    """Relax every model's alkoxides and the alcohols, print and write the relative pKa table; return 0."""
    args = _parse(argv)
    started = time.perf_counter()
    head = subprocess.run(["git", "-C", str(HERE), "rev-parse", "--short", "HEAD"], capture_output=True, text=True)
    commit = head.stdout.strip() or "unknown"
    method = MethodConfig(solvent={"model": "alpb", "name": "ethanol"}, temperature_K=TEMPERATURE_K)
    engine = make_engine(method)
    acids: dict[str, float] = {}
    for name, smiles in ALKOXIDES.items():
        acid = conjugate_acid_smiles(smiles, describe_base(smiles).basic_atom_index)
        found = [relax_molecule(f"{name} acid", "base", acid, 0, 1, engine, OptimizerConfig(), seed)
                 for seed in range(1, args.seeds + 1)]
        acids[name] = min(m.record.energy_hartree for m in found if m.record.status == "ok")
    rows = []
    for model_name in args.models.split(","):
        block = base_model_block(model_name)
        n = (block or {}).get("explicit", 0)
        lowest: dict[str, tuple[float, float]] = {}
        for name, smiles in ALKOXIDES.items():
            energies = []
            for seed in range(1, args.seeds + 1):
                model = {**block, "arrangements": args.arrangements} if block else {}
                item = BaseConfig(name=name, smiles=smiles, model=model)
                config = RunConfig(seed=seed, method=method, bases=(item,),
                                   substrates=(SubstrateConfig(name="unused", smiles="CCBr"),))
                relaxed, _ = relax_base(item, engine, config)
                if relaxed.record.status == "ok":
                    energies.append(relaxed.record.energy_hartree)
            if energies:
                lowest[name] = _lowest(energies)
        cells = []
        for name in ("ethoxide", "tert-butoxide"):
            if name in lowest and "methoxide" in lowest:
                de = exchange_energy_kcal_mol(lowest[name][0], acids[name], lowest["methoxide"][0],
                                              acids["methoxide"], n)
                cells.append(f"{relative_pka(de, TEMPERATURE_K):+.1f}")
            else:
                cells.append("failed")
        spread = max((s for _, s in lowest.values()), default=float("nan"))
        order = "yes" if cells[1] != "failed" and float(cells[1]) > 0 else "no"
        rows.append(f"| `{model_name}` | {cells[0]} | {cells[1]} | {order} | {spread:.1f} |")
        print(rows[-1], flush=True)
    page = "\n".join([
        "# Relative alkoxide basicity under each base model", "",
        "Written by `validation/basicity.py`; never edited by hand. GFN2-xTB/ALPB(ethanol) electronic energies of "
        "relaxed base models and alcohols (thermal terms left out), lowest over "
        f"{args.seeds} seed(s) × {args.arrangements} hydrogen-bond arrangement(s) of each cluster, {TEMPERATURE_K} K; pKa(ROH) − pKa(methanol) from the balanced "
        "proton exchange (explicit molecules of each base's own alcohol change sides with it).", "",
        f"- run: {_dt.datetime.now(_dt.timezone.utc).strftime('%Y-%m-%d %H:%M UTC')}, commit `{commit}`, "
        f"{time.perf_counter() - started:.0f} s", "",
        "Measured: ethanol +0.4 (water) / +0.8 (DMSO); tert-butanol +2.5 (water) / +3.2 (DMSO) (water: textbook "
        "tables; DMSO: Bordwell, Acc. Chem. Res. 1988, 21, 456; both from memory). In the gas phase the order is "
        "reversed, so a model that gives tert-butoxide a negative value has not captured the solvation.", "",
        "| base model | ethanol | tert-butanol | solution order (tBuO⁻ strongest) | largest seed spread (kcal/mol) |",
        "|---|---|---|---|---|", *rows]) + "\n"
    if not args.no_write:
        write_text_atomic(HERE / "BASICITY.md", page)
        print(f"wrote {HERE / 'BASICITY.md'}", file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main())
