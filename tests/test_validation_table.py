"""The validation table's per-level calls (validation/validate.py) on a real finished run (fast tier)."""

from __future__ import annotations

import importlib.util
import json
import math
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
FIXTURE = ROOT / "tests" / "data" / "report-fixture"


@pytest.fixture(scope="module")
def validate():
    spec = importlib.util.spec_from_file_location("validate", ROOT / "validation" / "validate.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_the_de_level_reproduces_the_runs_own_product_mix(validate):
    """The table's dE column must say what results.json says (same barriers, same Curtin-Hammett mix)."""
    document = json.loads((FIXTURE / "halobutane" / "results.json").read_text())
    temperature = document["config"]["method"]["temperature_K"]
    case = {"expected_major": "internal"}  # 81 % 2-butenes with ethoxide (standard textbooks)
    for job in document["jobs"]:
        paths = validate.level_paths(job, "barrier_kcal_mol")
        assert len(paths) == sum(1 for h in job["beta_hydrogens"] for a in ("anti", "syn")
                                 if h[a]["path_status"] == "ok")
        # the Curtin-Hammett mix written out here (degeneracy-weighted Boltzmann factors per alkene, R from
        # CODATA 2018: 8.314462618 J/(mol K), 4184 J/kcal), not elimscan's product_fractions
        rt = 8.314462618 / 4184.0 * temperature
        weights: dict[str, float] = {}
        for p in paths:
            weights[p.product_smiles] = weights.get(p.product_smiles, 0.0) + p.degeneracy * math.exp(-p.barrier_kcal_mol / rt)
        mine = {smiles: w / sum(weights.values()) for smiles, w in weights.items()}
        theirs = {p["smiles"]: p["fraction"] for p in job["products"] if p["fraction"] is not None}
        assert mine == pytest.approx(theirs, abs=1e-3)
        cell = validate.level_cell(job, "barrier_kcal_mol", temperature, case)
        if job["verdict"]["within_method_uncertainty"]:
            assert cell.startswith("within method uncertainty")
        else:
            assert cell.startswith(job["verdict"]["computed_major"])


def test_a_level_without_barriers_says_not_computed(validate):
    document = json.loads((FIXTURE / "halobutane" / "results.json").read_text())
    job = document["jobs"][0]
    assert validate.level_cell(job, "barrier_dft_kcal_mol", 298.15, {"expected_major": "internal"}) == "not computed"
    assert validate._classify("C=CCC", {}) == "terminal" and validate._classify("C/C=C/C", {}) == "internal"


def test_the_shift_table_reads_the_1_butene_shares_of_both_bases(validate):
    """On the halobutane fixture (ethoxide and tert-butoxide): shift = terminal share(bulky) - share(small)."""
    document = json.loads((FIXTURE / "halobutane" / "results.json").read_text())
    jobs = {j["base"]: j for j in document["jobs"]}
    temperature = document["config"]["method"]["temperature_K"]
    small = {"job": jobs["ethoxide"], "temperature_K": temperature}
    bulky = {"job": jobs["tert-butoxide"], "temperature_K": temperature}
    rows = validate.shift_rows(["bare"], {("bare", "small"): {**small, "seconds": 600.0},
                                          ("bare", "bulky"): {**bulky, "seconds": 1200.0}})
    terminal = {base: sum(p["fraction"] for p in job["products"] if p["smiles"] == "C=CCC")
                for base, job in jobs.items()}
    shift = terminal["tert-butoxide"] - terminal["ethoxide"]
    assert rows[2] == (f"| bare | {terminal['ethoxide']:.0%} | {terminal['tert-butoxide']:.0%} | {shift:+.0%} | "
                       f"{'yes' if shift > 0 else 'no'} | - / - | 10 + 20 min |")  # one start per path: no spread
    failed = validate.shift_rows(["bare"], {("bare", "small"): {"error": "scf_not_converged"}, ("bare", "bulky"): bulky})
    assert "| bare | - | - | - | scf_not_converged | - / - |" in failed[2]
    assert "| - | - | - | not computed; not computed | - / - | - |" in validate.shift_rows(["bare"], {})[2]
    dft = validate.shift_rows(["bare"], {("bare", "small"): small, ("bare", "bulky"): bulky},
                              field="barrier_dft_kcal_mol")
    assert "not computed at this level; not computed at this level" in dft[2]  # the fixture has no DFT barriers


def test_a_side_with_failed_paths_is_not_judged(validate):
    """A mix over part of the paths is no mix (a ddX job once gave "100 % 1-butene" from its one surviving path)."""
    import copy

    document = json.loads((FIXTURE / "halobutane" / "results.json").read_text())
    jobs = {j["base"]: j for j in document["jobs"]}
    temperature = document["config"]["method"]["temperature_K"]
    bulky = copy.deepcopy(jobs["tert-butoxide"])
    n_paths = sum(h[a]["path_status"] in ("ok", "failed") for h in bulky["beta_hydrogens"] for a in ("anti", "syn"))
    bulky["beta_hydrogens"][1]["anti"]["path_status"] = "failed"
    rows = validate.shift_rows(["bare"], {("bare", "small"): {"job": jobs["ethoxide"], "temperature_K": temperature},
                                          ("bare", "bulky"): {"job": bulky, "temperature_K": temperature}})
    assert f"| - | not judged: 1 of {n_paths} paths failed (bulky base) |" in rows[2]


def test_every_shift_config_is_a_valid_elimscan_config(validate):
    """The bulky-base shift jobs of validation/cases.yaml load, have unique names, and carry each alcohol's ε."""
    import yaml

    from elimscan.config import parse_config

    spec = yaml.safe_load((ROOT / "validation" / "cases.yaml").read_text())["bulky_shift"]
    jobs = validate._shift_configs(spec)
    assert len({config["name"] for _, config in jobs}) == len(jobs)
    for (continuum, model, side), config in jobs:
        loaded = parse_config(yaml.safe_dump(config), config["name"])
        base = loaded.bases[0]
        assert base.name == spec[side]["base"]
        if "counter_ion" in spec["models"][model]:
            assert base.model.counter_ion == spec[side]["cation"]
        if config.get("dft"):
            assert loaded.dft.enabled and loaded.dft.dielectric_constant == spec[side]["dft_epsilon"]
    assert {key[0] for key, _ in jobs} == {c["name"] for c in spec["continua"]}


def test_the_spread_column_shows_the_largest_spread_over_starts(validate):
    import copy

    document = json.loads((FIXTURE / "halobutane" / "results.json").read_text())
    job = copy.deepcopy(document["jobs"][0])
    assert validate.largest_start_spread(job) is None
    job["beta_hydrogens"][0]["anti"]["start_spread_kcal_mol"] = 0.74
    job["beta_hydrogens"][-1]["anti"]["start_spread_kcal_mol"] = 1.26
    assert validate.largest_start_spread(job) == 1.26
    result = {"job": job, "temperature_K": document["config"]["method"]["temperature_K"]}
    assert "| 1.3 / 1.3 |" in validate.shift_rows(["bare"], {("bare", "small"): result, ("bare", "bulky"): result})[2]
