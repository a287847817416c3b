"""Find GFN2-xTB checks whose verdict hangs on the CPU's linear-algebra kernel or on a tiny geometry change.

Runs the xtb tier of the tests once per variant, each in a fresh process with one thread:

* ``own``: the machine's own OpenBLAS kernel (the reference);
* ``kernel:NAME``: OpenBLAS forced onto another vector kernel (``OPENBLAS_CORETYPE=NAME``; numpy's and
  SciPy's OpenBLAS honour it, and so does a backend that loads the same library);
* ``jitter``: the own kernel, with every embedded starting geometry displaced by seeded Gaussian noise
  (``ELIMSCAN_SWEEP_JITTER_A``, read by ``tests/conftest.py`` only).

and prints the tests whose outcome differs from the reference. With ``--demo`` it also runs the demo
config under two kernels and prints how far its barriers and shares moved, and whether a decided call
flipped. Not part of ``make test``: ``make kernel-sweep`` (about an hour on two cores).

    python benchmarks/kernel_sweep.py --work sweep [--kernels Haswell,SkylakeX] [--jitter-A 0.001] [--demo]

Each variant's JUnit XML and log stay in ``--work``; a variant whose XML exists is not run again (delete
it to rerun), so a stopped sweep resumes.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import xml.etree.ElementTree as ET
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def variant_env(variant: str, jitter_A: float) -> dict[str, str]:
    """Return the environment of one variant (one thread, the kernel or the jitter set)."""
    env = dict(os.environ, OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1", MKL_NUM_THREADS="1",
               PYTHONHASHSEED="0")
    env.pop("OPENBLAS_CORETYPE", None)
    env.pop("ELIMSCAN_SWEEP_JITTER_A", None)
    if variant.startswith("kernel:"):
        env["OPENBLAS_CORETYPE"] = variant.split(":", 1)[1]
    elif variant == "jitter":
        env["ELIMSCAN_SWEEP_JITTER_A"] = f"{jitter_A:g}"
    return env


def outcomes(xml_path: Path) -> dict[str, str]:
    """Return {'test_file::test': 'passed' | 'failed' | 'skipped' | 'xfailed'} from a JUnit XML file."""
    result = {}
    for case in ET.parse(xml_path).getroot().iter("testcase"):
        # keyed by the test file's own name, so that moving a file between test folders is not a change
        name = f"{case.get('classname').rsplit('.', 1)[-1]}::{case.get('name')}"
        kinds = {child.tag for child in case}
        if "failure" in kinds or "error" in kinds:
            result[name] = "failed"
        elif "skipped" in kinds:
            message = next(c for c in case if c.tag == "skipped").get("type", "")
            result[name] = "xfailed" if "xfail" in message else "skipped"
        else:
            result[name] = "passed"
    return result


def run_tier(variant: str, work: Path, jitter_A: float, marker: str) -> Path:
    """Return the JUnit XML of the xtb tier under one variant (run unless it exists)."""
    tag = variant.replace(":", "-")
    xml = work / f"{tag}.xml"
    if xml.exists():
        return xml
    log = work / f"{tag}.log"
    command = [sys.executable, "-m", "pytest", "-q", "-m", marker, "-p", "no:cacheprovider",
               f"--junitxml={xml}.part"]
    with open(log, "w") as handle:
        subprocess.run(command, cwd=ROOT, env=variant_env(variant, jitter_A), stdout=handle,
                       stderr=subprocess.STDOUT, check=False)
    Path(f"{xml}.part").replace(xml)
    return xml


def run_demo(variant: str, work: Path, config: Path) -> Path:
    """Return the results.json of the demo config under one variant (run unless it exists)."""
    out = work / f"demo-{variant.replace(':', '-')}"
    results = out / "results.json"
    if not results.exists():
        subprocess.run([sys.executable, "-m", "elimscan", "run", str(config), "--out", str(out), "--overwrite", "-q"], cwd=ROOT,
                       env=variant_env(variant, 0.0), check=False)
    return results


def verdict_call(verdict: dict | None) -> str:
    """Return 'agree', 'disagree', 'undecided' (within method uncertainty) or 'none' for a job's verdict."""
    if not verdict or verdict.get("agreement") is None:
        return "none"
    if verdict.get("within_method_uncertainty"):
        return "undecided"
    return "agree" if verdict["agreement"] else "disagree"


def demo_numbers(results: Path) -> dict[str, dict]:
    """Return {job: {'shares': {product: %}, 'barriers': {path: kcal/mol}, 'call': str}} from results.json."""
    document = json.loads(results.read_text())
    numbers = {}
    for job in document["jobs"]:
        shares = {p["smiles"]: round(100 * p["fraction"], 1) for p in job.get("products") or []
                  if p.get("fraction") is not None}
        barriers = {}
        for hclass in job.get("beta_hydrogens") or []:
            for approach in ("anti", "syn"):
                value = (hclass.get(approach) or {}).get("barrier_kcal_mol")
                if value is not None:
                    barriers[f"{hclass['class_id']} {approach}"] = round(value, 2)
        numbers[f"{job['substrate']} + {job['base']}"] = {"shares": shares, "barriers": barriers,
                                                          "call": verdict_call(job.get("verdict"))}
    return numbers


def compare_demo(a: dict[str, dict], b: dict[str, dict]) -> list[str]:
    """Return lines: per job the largest barrier and share shifts (kcal/mol, points) and any flipped call."""
    lines = []
    for key in sorted(set(a) | set(b)):
        if key not in a or key not in b:
            lines.append(f"  {key}: present under one kernel only")
            continue
        ba, bb = a[key]["barriers"], b[key]["barriers"]
        common = set(ba) & set(bb)
        d_barrier = max((abs(ba[k] - bb[k]) for k in common), default=0.0)
        sa, sb = a[key]["shares"], b[key]["shares"]
        d_share = max((abs(sa.get(k, 0.0) - sb.get(k, 0.0)) for k in set(sa) | set(sb)), default=0.0)
        flip = "" if a[key]["call"] == b[key]["call"] else f"; call {a[key]['call']} -> {b[key]['call']}"
        lines.append(f"  {key}: barriers move up to {d_barrier:.2f} kcal/mol over {len(common)} paths, "
                     f"shares up to {d_share:.1f} points{flip}")
    return lines


def main(argv: list[str] | None = None) -> int:
    """Run the sweep and print the flipped tests; return 0 (a finding is not an error of the script)."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--work", type=Path, required=True, help="folder for XML, logs and demo runs (resumable)")
    parser.add_argument("--kernels", default="Haswell,SkylakeX", help="OpenBLAS core types to force, comma-separated")
    parser.add_argument("--jitter-A", type=float, default=1e-3, help="noise on starting geometries (Å); 0: no run")
    parser.add_argument("--marker", default="xtb", help="pytest marker expression of the tier to sweep")
    parser.add_argument("--workers", type=int, default=2, help="variants run at once (one core each)")
    parser.add_argument("--demo", action="store_true", help="also run the demo config under the first two kernels")
    parser.add_argument("--demo-config", type=Path, default=ROOT / "configs" / "demo.yaml")
    args = parser.parse_args(argv)
    args.work.mkdir(parents=True, exist_ok=True)
    kernels = [k for k in args.kernels.split(",") if k]
    variants = ["own"] + [f"kernel:{k}" for k in kernels] + (["jitter"] if args.jitter_A > 0 else [])
    with ThreadPoolExecutor(max_workers=args.workers) as pool:
        xmls = dict(zip(variants, pool.map(lambda v: run_tier(v, args.work, args.jitter_A, args.marker), variants)))
    reference = outcomes(xmls["own"])
    print(f"xtb tier under {len(variants)} variants; reference: the machine's own kernel "
          f"({sum(v == 'passed' for v in reference.values())} passed of {len(reference)})")
    flipped = 0
    for variant in variants[1:]:
        other = outcomes(xmls[variant])
        changes = {t: (reference.get(t), other.get(t)) for t in set(reference) | set(other)
                   if reference.get(t) != other.get(t)}
        flipped += len(changes)
        print(f"{variant}: {len(changes)} test(s) changed outcome")
        for test, (was, now) in sorted(changes.items()):
            print(f"  {test}: {was} -> {now}")
    if args.demo and kernels:
        pair = [f"kernel:{k}" for k in kernels[:2]] if len(kernels) > 1 else ["own", f"kernel:{kernels[0]}"]
        with ThreadPoolExecutor(max_workers=args.workers) as pool:
            files = list(pool.map(lambda v: run_demo(v, args.work, args.demo_config), pair))
        if all(f.exists() for f in files):
            print(f"demo ({args.demo_config.name}) under {pair[0]} and {pair[1]}:")
            print("\n".join(compare_demo(demo_numbers(files[0]), demo_numbers(files[1]))))
        else:
            print(f"demo: a run did not write results.json ({', '.join(str(f) for f in files)})")
    print(f"{flipped} outcome change(s) in all")
    return 0


if __name__ == "__main__":
    sys.exit(main())
