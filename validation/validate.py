"""`make validate`: run the reference cases and write validation/VALIDATION.md (takes tens of minutes).

For each case: the experimental outcome with its source, and at each level the predicted major product and
whether it agrees: the geometric rule, GFN2-xTB electronic barriers (dE). Free energies (dG) and a DFT tier
are not in this table yet. Close calls (different products within 1 kcal/mol) are reported as
"within method uncertainty" instead of a pick.
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
from pathlib import Path

import yaml
from rdkit import Chem

HERE = Path(__file__).resolve().parent


def _classify(smiles: str | None, case: dict) -> str:
    """Return 'internal', 'terminal' or the SMILES itself, as the case's expectation is phrased."""
    if smiles is None:
        return "none"
    mol = Chem.MolFromSmiles(smiles)
    if "expected_major_smarts" in case:
        return "expected" if mol.HasSubstructMatch(Chem.MolFromSmarts(case["expected_major_smarts"])) else smiles
    return "terminal" if mol.HasSubstructMatch(Chem.MolFromSmarts("[CH2]=[CH]")) else "internal"


def _verdict(got: str, case: dict) -> str:
    want = "expected" if "expected_major_smarts" in case else case["expected_major"]
    return "agrees" if got == want else "disagrees"


def run_case(case: dict, work: Path) -> dict:
    """Return the rule's and GFN2-xTB's major product for one case, run through the elimscan command."""
    config = work / f"{case['config']['name']}.yaml"
    config.write_text(yaml.safe_dump(case["config"]))
    out = work / case["config"]["name"]
    done = subprocess.run([sys.executable, "-m", "elimscan", "run", str(config), "--out", str(out), "-q"],
                          capture_output=True, text=True)
    if done.returncode not in (0, 5):
        return {"error": done.stderr.strip().splitlines()[-1] if done.stderr.strip() else f"exit {done.returncode}"}
    import json

    job = json.loads((out / "results.json").read_text())["jobs"][0]
    if job["status"] != "ok":
        return {"error": job["error"]["error_message"]}
    verdict = job["verdict"]
    shares = {p["smiles"]: p["fraction"] for p in job["products"] if p["fraction"] is not None}
    return {"rule": job["rule"]["rule_major"], "computed": verdict["computed_major"],
            "close": verdict["within_method_uncertainty"], "shares": shares}


def main() -> int:
    cases = yaml.safe_load((HERE / "cases.yaml").read_text())["cases"]
    rows = ["| case | experiment (source) | rule | GFN2-xTB dE | GFN2-xTB shares |", "|---|---|---|---|---|"]
    with tempfile.TemporaryDirectory() as tmp:
        for case in cases:
            print(f"running {case['name']} ...", file=sys.stderr)
            result = run_case(case, Path(tmp))
            if "error" in result:
                rows.append(f"| {case['name']} | {case['experiment']} ({case['source']}) | - | failed: {result['error']} | - |")
                continue
            rule = _classify(result["rule"], case)
            computed = _classify(result["computed"], case)
            dE = "within method uncertainty" if result["close"] else f"{result['computed']} ({_verdict(computed, case)})"
            shares = ", ".join(f"{s} {f:.0%}" for s, f in sorted(result["shares"].items(), key=lambda kv: -kv[1]))
            rows.append(f"| {case['name']} | {case['experiment']} ({case['source']}) | {result['rule']} "
                        f"({_verdict(rule, case)}) | {dE} | {shares} |")
    text = ["# elimscan validation table", "", "Written by `make validate` (validation/validate.py) from "
            "validation/cases.yaml. Electronic barriers only (GFN2-xTB, implicit solvent as in each case); "
            "free energies and a DFT tier are not in this table yet.", "", *rows, ""]
    (HERE / "VALIDATION.md").write_text("\n".join(text))
    print("\n".join(rows))
    return 0


if __name__ == "__main__":
    sys.exit(main())
