"""`make validate`: run the reference cases and write validation/VALIDATION.md (takes tens of minutes).

For each case: the experimental outcome with its source, and at each level the predicted major product and
whether it agrees: the geometric rule; GFN2-xTB electronic barriers (dE); GFN2-xTB quasi-RRHO free
barriers (dG, verified saddles only); and, for cases that switch the DFT tier on, DFT single points on the
GFN2-xTB saddles (DFT//GFN2). A second table gives the sign of the bulky-base shift (1-butene from
2-bromobutane, sodium ethoxide vs potassium tert-butoxide) under each base model. Close calls (different products within 1 kcal/mol at a level) are reported
as "within method uncertainty" instead of a pick. The mixes at every level come from elimscan's own
Curtin-Hammett function applied to the barriers in results.json.

Options: ``--work DIR`` keeps every run and reuses finished ones (a long validation survives a stop),
``--only cases|shift`` runs one part, ``--no-compute`` writes the table from kept runs only, ``--no-write``
prints it without replacing VALIDATION.md.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import yaml
from rdkit import Chem

from elimscan.analysis.rule import PathBarrier, compare_verdicts, product_fractions

HERE = Path(__file__).resolve().parent
#: result field per level: electronic dE, quasi-RRHO dG, DFT single points on the GFN2 saddles
LEVELS = {"dE": "barrier_kcal_mol", "dG": "barrier_free_energy_kcal_mol", "DFT//GFN2": "barrier_dft_kcal_mol"}


def _classify(smiles: str | None, case: dict) -> str:
    """Return 'internal', 'terminal' or the SMILES itself, as the case's expectation is phrased."""
    if smiles is None:
        return "none"
    mol = Chem.MolFromSmiles(smiles)
    if "expected_major_smarts" in case:
        return "expected" if mol.HasSubstructMatch(Chem.MolFromSmarts(case["expected_major_smarts"])) else smiles
    return "terminal" if mol.HasSubstructMatch(Chem.MolFromSmarts("[CH2]=[CH]")) else "internal"


def _verdict(got: str, case: dict) -> str:
    """Return 'agrees' or 'disagrees' with the case's expected major product."""
    want = "expected" if "expected_major_smarts" in case else case["expected_major"]
    return "agrees" if got == want else "disagrees"


def level_paths(job: dict, field: str) -> list[PathBarrier]:
    """Return the E2 paths of a job record that carry a barrier in ``field`` (kcal/mol)."""
    paths = []
    for h in job["beta_hydrogens"]:
        for approach in ("anti", "syn"):
            block = h[approach]
            if block.get("path_status") == "ok" and block.get(field) is not None:
                paths.append(PathBarrier(h["class_id"], approach, block["product_smiles"], block[field], h["degeneracy"]))
    return paths


def level_cell(job: dict, field: str, temperature_K: float, case: dict) -> str:
    """Return the table cell of one level: major product, agreement and the mix, or why there is none."""
    paths = level_paths(job, field)
    if not paths:
        return "not computed"
    shares = product_fractions(paths, temperature_K)
    verdict = compare_verdicts(job["rule"]["rule_major"], shares, paths)
    mix = ", ".join(f"{s} {f:.0%}" for s, f in sorted(shares.items(), key=lambda kv: -kv[1]))
    if verdict.within_method_uncertainty:
        return f"within method uncertainty ({mix})"
    return f"{verdict.computed_major} ({_verdict(_classify(verdict.computed_major, case), case)}; {mix})"


def _finished_same(out: Path, config_text: str) -> bool:
    """Return True when ``out`` holds a finished run of exactly this config (so it can be reused)."""
    kept = out.parent / f"{out.name}.yaml.done"
    return (out / "results.json").exists() and kept.exists() and kept.read_text() == config_text


def run_case(case: dict, work: Path) -> dict:
    """Return the finished job record of one case (or an error), run through the elimscan command.

    A finished run of the same config already in ``work`` is reused, so an interrupted ``make validate``
    with a kept work folder computes only what is missing.
    """
    config = work / f"{case['config']['name']}.yaml"
    config_text = yaml.safe_dump(case["config"])
    config.write_text(config_text)
    out = work / case["config"]["name"]
    seconds_file = work / f"{case['config']['name']}.seconds"
    if _finished_same(out, config_text):
        print(f"reusing {out}", file=sys.stderr, flush=True)
        seconds = float(seconds_file.read_text()) if seconds_file.exists() else float("nan")
    else:
        start = time.perf_counter()
        done = subprocess.run([sys.executable, "-m", "elimscan", "run", str(config), "--out", str(out), "-q",
                               "--overwrite"], capture_output=True, text=True)
        seconds = time.perf_counter() - start
        if done.returncode not in (0, 5):
            return {"error": done.stderr.strip().splitlines()[-1] if done.stderr.strip() else f"exit {done.returncode}"}
        seconds_file.write_text(f"{seconds:.1f}")
        (work / f"{case['config']['name']}.yaml.done").write_text(config_text)
    document = json.loads((out / "results.json").read_text())
    job = document["jobs"][0]
    if job["status"] != "ok":
        return {"error": job["error"]["error_message"]}
    return {"job": job, "temperature_K": document["config"]["method"]["temperature_K"], "seconds": seconds}


def _shift_configs(spec: dict) -> list[tuple[tuple[str, str, str], dict]]:
    """Return ((continuum, model, side), config) for every continuum, base model and side of the shift."""
    configs = []
    for continuum in spec["continua"]:
        for model_name in continuum.get("models", list(spec["models"])):
            model = spec["models"][model_name]
            for side in ("small", "bulky"):
                part = spec[side]
                resolved = {k: (part["cation"] if v == "cation" else v) for k, v in model.items()}
                slug = "".join(c if c.isalnum() else "-" for c in f"{continuum[side]['model']}-{model_name}-{side}")
                config = {"name": f"val-shift-{slug}", "method": {"solvent": continuum[side]},
                          "substrates": [spec["substrate"]], "paths": {**spec.get("paths", {}),
                                                                       **continuum.get("paths", {})},
                          "bases": [{"name": part["base"], **({"model": resolved} if resolved else {})}]}
                if model_name in continuum.get("dft_models", []):
                    config["dft"] = {**spec["dft"], "dielectric_constant": part["dft_epsilon"]}
                configs.append(((continuum["name"], model_name, side), config))
    return configs


def terminal_share(job: dict, field: str, temperature_K: float) -> float | None:
    """Return the computed 1-alkene (terminal) share (0-1) of a job from the barriers in ``field``, or None."""
    paths = level_paths(job, field)
    if not paths:
        return None
    shares = product_fractions(paths, temperature_K)
    return sum(f for s, f in shares.items() if _classify(s, {}) == "terminal")


def largest_start_spread(job: dict) -> float | None:
    """Return the largest spread of path tops over the starts of one approach in a job (kcal/mol), or None."""
    spreads = [h[a]["start_spread_kcal_mol"] for h in job["beta_hydrogens"] for a in ("anti", "syn")
               if h[a].get("start_spread_kcal_mol") is not None]
    return max(spreads) if spreads else None


def failed_paths(job: dict) -> tuple[int, int]:
    """Return (failed, computed or failed) counts of a job's anti/syn paths: a mix over part of them is no mix."""
    states = [h[a]["path_status"] for h in job["beta_hydrogens"] for a in ("anti", "syn")]
    return states.count("failed"), sum(s in ("ok", "failed") for s in states)


def shift_rows(models: list[str], results: dict, field: str = LEVELS["dE"]) -> list[str]:
    """Return the Markdown rows of one block of the bulky-base shift table, from runs keyed by (model, side)."""
    rows = ["| base model | 1-butene, small base | 1-butene, bulky base | shift | sign as experiment? | "
            "largest GFN2-xTB start spread, small / bulky (kcal/mol) | wall time |",
            "|---|---|---|---|---|---|---|"]
    for model_name in models:
        got, minutes, spreads = {}, [], []
        for side in ("small", "bulky"):
            result = results.get((model_name, side), {"error": "not computed"})
            got[side] = None if "error" in result else terminal_share(result["job"], field, result["temperature_K"])
            spread = None if "error" in result else largest_start_spread(result["job"])
            spreads.append("-" if spread is None else f"{spread:.1f}")
            if "seconds" in result:
                minutes.append(f"{result['seconds'] / 60:.0f}")
        wall = " + ".join(minutes) + " min" if minutes else "-"
        spread_cell = " / ".join(spreads)
        if None in got.values():
            why = "; ".join(results.get((model_name, s), {"error": "not computed"}).get("error", "not computed at this level")
                            for s in ("small", "bulky") if got[s] is None)
            rows.append(f"| {model_name} | - | - | - | {why} | {spread_cell} | {wall} |")
            continue
        broken = {side: failed_paths(results[(model_name, side)]["job"]) for side in ("small", "bulky")}
        if any(n for n, _ in broken.values()):
            why = "; ".join(f"not judged: {n} of {total} paths failed ({side} base)"
                            for side, (n, total) in broken.items() if n)
            rows.append(f"| {model_name} | {got['small']:.0%} | {got['bulky']:.0%} | - | {why} | {spread_cell} | {wall} |")
            continue
        shift = got["bulky"] - got["small"]
        rows.append(f"| {model_name} | {got['small']:.0%} | {got['bulky']:.0%} | {shift:+.0%} | "
                    f"{'yes' if shift > 0 else 'no'} | {spread_cell} | {wall} |")
    return rows


def _parse(argv: list[str] | None) -> argparse.Namespace:
    """Return the parsed command line of the validation run."""
    parser = argparse.ArgumentParser(description="run the reference cases and write validation/VALIDATION.md")
    parser.add_argument("--work", type=Path, default=None,
                        help="keep the runs in this folder and reuse finished ones (default: a temporary folder)")
    parser.add_argument("--only", choices=("cases", "shift"), default=None,
                        help="run only the reference cases or only the bulky-base shift rows (the table is still "
                             "written, with the other part from finished runs in --work or 'not computed')")
    parser.add_argument("--no-compute", action="store_true",
                        help="compute nothing: write the table from the finished runs in --work only")
    parser.add_argument("--no-write", action="store_true", help="print the table, do not overwrite VALIDATION.md")
    return parser.parse_args(argv)


def _case_row(case: dict, result: dict) -> str:
    """Return the Markdown row of one reference case."""
    source = f"{case['experiment']} ({case['source']})"
    if "error" in result:
        return f"| {case['name']} | {source} | - |" + " - |" * len(LEVELS) + f" {result['error']} |"
    job = result["job"]
    rule_major = job["rule"]["rule_major"]
    cells = [level_cell(job, field, result["temperature_K"], case) for field in LEVELS.values()]
    return (f"| {case['name']} | {source} | {rule_major} ({_verdict(_classify(rule_major, case), case)}) | "
            + " | ".join(cells) + f" | {result['seconds'] / 60:.1f} min |")


def _reuse_only(case: dict, work: Path) -> dict:
    """Return a finished run of ``case`` kept in ``work``, or an error saying it was not run this time."""
    out = work / case["config"]["name"]
    if _finished_same(out, yaml.safe_dump(case["config"])):
        return run_case(case, work)
    return {"error": "not computed (left out of this validation run)"}


def main(argv: list[str] | None = None) -> int:
    """Run the cases (two at a time on a 2-core machine) and write VALIDATION.md; return the exit code."""
    args = _parse(argv)
    document = yaml.safe_load((HERE / "cases.yaml").read_text())
    cases, spec = document["cases"], document.get("bulky_shift")
    head = "| case | experiment (source) | rule | " + " | ".join(f"GFN2-xTB {k}" if k != "DFT//GFN2" else k
                                                               for k in LEVELS) + " | wall time |"
    rows = [head, "|" + "---|" * (4 + len(LEVELS))]
    shift_jobs = _shift_configs(spec) if spec else []
    workers = max(1, min(os.cpu_count() or 1, int(os.environ.get("VALIDATE_WORKERS", "2"))))
    with tempfile.TemporaryDirectory() as tmp, ThreadPoolExecutor(workers) as pool:
        work = args.work or Path(tmp)
        work.mkdir(parents=True, exist_ok=True)
        run_cases = run_case if args.only in (None, "cases") and not args.no_compute else _reuse_only
        run_shift = run_case if args.only in (None, "shift") and not args.no_compute else _reuse_only
        case_futures = [pool.submit(run_cases, case, work) for case in cases]
        shift_futures = {key: pool.submit(run_shift, {"config": config}, work) for key, config in shift_jobs}
        for case, future in zip(cases, case_futures):
            rows.append(_case_row(case, future.result()))
            print(f"finished {case['name']}", file=sys.stderr, flush=True)
        shift_results = {}
        for key, future in shift_futures.items():
            shift_results[key] = future.result()
            print(f"finished bulky-base shift: {', '.join(key)} base", file=sys.stderr, flush=True)
    text = ["# elimscan validation table", "",
            "Written by `make validate` (validation/validate.py) from validation/cases.yaml. Each level names the "
            "computed major product, whether it agrees with experiment, and the Curtin-Hammett mix at that level. "
            "dE: GFN2-xTB electronic barriers; dG: quasi-RRHO free barriers (1 M, verified saddles only); "
            "DFT//GFN2: DFT single points on the GFN2-xTB saddles (only for cases that switch the tier on). "
            "'within method uncertainty': different products within 1 kcal/mol at that level.", "", *rows, ""]
    if spec:
        text += ["## The bulky-base shift under each base model", "",
                 f"2-bromobutane; small base: {spec['small']['base']} ({spec['small']['cation']}+ where paired); "
                 f"bulky base: {spec['bulky']['base']} ({spec['bulky']['cation']}+ where paired); paths: "
                 f"{spec.get('paths', {})}. Experiment: {spec['experiment']} ({spec['source']}). Only the sign of "
                 "the shift is judged.", ""]
        for continuum in spec["continua"]:
            name = continuum["name"]
            block = {key[1:]: result for key, result in shift_results.items() if key[0] == name}
            models = continuum.get("models", list(spec["models"]))
            text += [f"### {name}", "", "GFN2-xTB electronic barriers (dE):", "", *shift_rows(models, block), ""]
            if continuum.get("dft_models"):
                text += [f"DFT//GFN2, IEF-PCM at each alcohol's ε (ethanol {spec['small']['dft_epsilon']}, "
                         f"tert-butanol {spec['bulky']['dft_epsilon']}):", "",
                         *shift_rows(continuum["dft_models"], block, LEVELS["DFT//GFN2"]), ""]
    if not args.no_write:
        (HERE / "VALIDATION.md").write_text("\n".join(text))
    print("\n".join(text))
    return 0


if __name__ == "__main__":
    sys.exit(main())
