"""`make validate`: run the reference cases and write validation/VALIDATION.md (takes tens of minutes).

For each case: the experimental outcome with its source, and at each level the predicted major product and
whether it agrees: the geometric rule; GFN2-xTB electronic barriers (dE); GFN2-xTB quasi-RRHO free
barriers (dG, verified saddles only); and, for cases that switch the DFT tier on, DFT single points on the
GFN2-xTB saddles (DFT//GFN2). A second table gives the sign of the bulky-base shift (1-butene from
2-bromobutane, sodium ethoxide vs potassium tert-butoxide) under each base model. Close calls (different products within 1 kcal/mol at a level) are reported
as "within method uncertainty" instead of a pick. The mixes at every level come from elimscan's own
Curtin-Hammett function applied to the barriers in results.json.
"""

from __future__ import annotations

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

from elimscan.analysis import PathBarrier, compare_verdicts, product_fractions

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


def run_case(case: dict, work: Path) -> dict:
    """Return the finished job record of one case (or an error), run through the elimscan command."""
    config = work / f"{case['config']['name']}.yaml"
    config.write_text(yaml.safe_dump(case["config"]))
    out = work / case["config"]["name"]
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "elimscan", "run", str(config), "--out", str(out), "-q"],
                          capture_output=True, text=True)
    seconds = time.perf_counter() - start
    if done.returncode not in (0, 5):
        return {"error": done.stderr.strip().splitlines()[-1] if done.stderr.strip() else f"exit {done.returncode}"}
    document = json.loads((out / "results.json").read_text())
    job = document["jobs"][0]
    if job["status"] != "ok":
        return {"error": job["error"]["error_message"]}
    return {"job": job, "temperature_K": document["config"]["method"]["temperature_K"], "seconds": seconds}


def _shift_configs(spec: dict) -> list[tuple[str, str, dict]]:
    """Return (model, side, config) for every base model and both sides of the bulky-base shift."""
    configs = []
    for model_name, model in spec["models"].items():
        for side in ("small", "bulky"):
            part = spec[side]
            resolved = {k: (part["cation"] if v == "cation" else v) for k, v in model.items()}
            slug = "".join(c if c.isalnum() else "-" for c in f"{model_name}-{side}")
            configs.append((model_name, side, {
                "name": f"val-shift-{slug}", "method": {"solvent": part["solvent"]},
                "substrates": [spec["substrate"]], "paths": spec.get("paths", {}),
                "bases": [{"name": part["base"], **({"model": resolved} if resolved else {})}]}))
    return configs


def terminal_share(job: dict) -> float | None:
    """Return the computed 1-alkene (terminal) share of a job at the dE level, or None."""
    shares = {p["smiles"]: p["fraction"] for p in job["products"] if p["fraction"] is not None}
    if not shares:
        return None
    return sum(f for s, f in shares.items() if _classify(s, {}) == "terminal")


def shift_rows(spec: dict, results: dict) -> list[str]:
    """Return the Markdown rows of the bulky-base shift table from finished runs keyed by (model, side)."""
    rows = ["| base model | 1-butene, small base | 1-butene, bulky base | shift | sign as experiment? |",
            "|---|---|---|---|---|"]
    for model_name in spec["models"]:
        got = {}
        for side in ("small", "bulky"):
            result = results[(model_name, side)]
            got[side] = None if "error" in result else terminal_share(result["job"])
        if None in got.values():
            why = "; ".join(results[(model_name, s)].get("error", "no mix") for s in ("small", "bulky") if got[s] is None)
            rows.append(f"| {model_name} | - | - | - | failed: {why} |")
            continue
        shift = got["bulky"] - got["small"]
        rows.append(f"| {model_name} | {got['small']:.0%} | {got['bulky']:.0%} | {shift:+.0%} | "
                    f"{'yes' if shift > 0 else 'no'} |")
    return rows


def main() -> int:
    """Run every case (two at a time on a 2-core machine) and write VALIDATION.md; return the exit code."""
    document = yaml.safe_load((HERE / "cases.yaml").read_text())
    cases, spec = document["cases"], document.get("bulky_shift")
    head = "| case | experiment (source) | rule | " + " | ".join(f"GFN2-xTB {k}" if k != "DFT//GFN2" else k
                                                               for k in LEVELS) + " | wall time |"
    rows = [head, "|" + "---|" * (4 + len(LEVELS))]
    shift_jobs = _shift_configs(spec) if spec else []
    workers = max(1, min(os.cpu_count() or 1, int(os.environ.get("VALIDATE_WORKERS", "2"))))
    with tempfile.TemporaryDirectory() as tmp, ThreadPoolExecutor(workers) as pool:
        case_futures = [pool.submit(run_case, case, Path(tmp)) for case in cases]
        shift_futures = {(m, side): pool.submit(run_case, {"config": config}, Path(tmp))
                         for m, side, config in shift_jobs}
        for case, future in zip(cases, case_futures):
            result = future.result()
            print(f"finished {case['name']}", file=sys.stderr, flush=True)
            source = f"{case['experiment']} ({case['source']})"
            if "error" in result:
                rows.append(f"| {case['name']} | {source} | - | failed: {result['error']} |" + " - |" * len(LEVELS))
                continue
            job = result["job"]
            rule_major = job["rule"]["rule_major"]
            cells = [level_cell(job, field, result["temperature_K"], case) for field in LEVELS.values()]
            rows.append(f"| {case['name']} | {source} | {rule_major} ({_verdict(_classify(rule_major, case), case)}) | "
                        + " | ".join(cells) + f" | {result['seconds'] / 60:.1f} min |")
        shift_results = {key: future.result() for key, future in shift_futures.items()}
    text = ["# elimscan validation table", "",
            "Written by `make validate` (validation/validate.py) from validation/cases.yaml. Each level names the "
            "computed major product, whether it agrees with experiment, and the Curtin-Hammett mix at that level. "
            "dE: GFN2-xTB electronic barriers; dG: quasi-RRHO free barriers (1 M, verified saddles only); "
            "DFT//GFN2: DFT single points on the GFN2-xTB saddles (only for cases that switch the tier on). "
            "'within method uncertainty': different products within 1 kcal/mol at that level.", "", *rows, ""]
    if spec:
        text += ["## The bulky-base shift under each base model", "",
                 f"2-bromobutane; small base: {spec['small']['base']} ({spec['small']['cation']}+ where paired) in "
                 f"{spec['small']['solvent']['name']}; bulky base: {spec['bulky']['base']} "
                 f"({spec['bulky']['cation']}+ where paired) in {spec['bulky']['solvent']['name']}; both in the "
                 f"dielectric-only continuum; paths: {spec.get('paths', {})}; GFN2-xTB dE mix. Experiment: "
                 f"{spec['experiment']} ({spec['source']}). Only the sign of the shift is judged.", "",
                 *shift_rows(spec, shift_results), ""]
    (HERE / "VALIDATION.md").write_text("\n".join(text))
    print("\n".join(text))
    return 0


if __name__ == "__main__":
    sys.exit(main())
