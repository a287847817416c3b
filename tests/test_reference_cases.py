"""The reference benchmark's case file (validation/cases.yaml) and its entry point (validation/validate.py).

Real checks of the case file: it loads, every SMILES in the raw file parses with RDKit alone, each test case's
expected products are products elimscan perceives for that substrate (chem perception, no GFN2-xTB), the
stereospecific cases' expected isomers are the anti products, and the set covers what issue 17 asks for.
Then the jobs: every case x seed is served by exactly one job of a batch config that elimscan loads.
"""

from __future__ import annotations

import time
import warnings
from collections import Counter
from dataclasses import replace
from pathlib import Path

import pytest
import yaml
from rdkit import Chem

from elimscan.analysis.benchmark_cases import (CATEGORIES, SUBSTITUTION, HammettCase, IsotopeCase, RateCase, case_slots, isomer_key, parse_cases)
from elimscan.analysis.benchmark_jobs import batch_groups, benchmark_jobs, seeds_for
from elimscan.chem.perception import perceive_substrate
from elimscan.config import parse_config
from elimscan.errors import CaseFileError

from scriptmodules import loaded_script  # tests/support

ROOT = Path(__file__).resolve().parents[1]
CASES_TEXT = (ROOT / "validation" / "cases.yaml").read_text()


@pytest.fixture(scope="module")
def cases():
    return parse_cases(CASES_TEXT)


@pytest.fixture(scope="module")
def perceived(cases):
    """Return {case id: (anti products, syn products)} as isomer keys, from elimscan's perception."""
    by_smiles = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # open stereocentres that only pick an enantiomer
        for smiles in {case.substrate.smiles for case in cases.test}:  # each substrate once
            substrate = perceive_substrate(smiles)
            anti = {isomer_key(b.anti_product.smiles) for b in substrate.beta_classes if b.anti_product.possible}
            syn = {isomer_key(b.syn_product.smiles) for b in substrate.beta_classes if b.syn_product.possible}
            by_smiles[smiles] = (anti, syn)
    return {case.id: by_smiles[case.substrate.smiles] for case in cases.test}


def test_the_case_file_loads_with_unique_ids_and_a_source_each(cases):
    ids = [c.id for c in (*cases.calibration, *cases.test)]
    assert len(ids) == len(set(ids)) == 38
    assert all(c.source.strip() for c in (*cases.calibration, *cases.test))


def _raw_smiles(node, where=""):
    """Yield (where, SMILES) for every SMILES in the raw case file: 'smiles' fields, expected majors, share keys."""
    if isinstance(node, dict):
        for key, value in node.items():
            here = f"{where}.{key}" if where else str(key)
            if key == "smiles" and isinstance(value, str):
                yield here, value
            elif key == "major" and isinstance(value, str) and value != SUBSTITUTION:
                yield here, value
            elif key == "alkene_shares" and isinstance(value, dict):
                yield from ((f"{here}[{s}]", s) for s in value)
            else:
                yield from _raw_smiles(value, here)
    elif isinstance(node, list):
        for k, item in enumerate(node):
            yield from _raw_smiles(item, f"{where}[{item.get('id', k) if isinstance(item, dict) else k}]")


def test_every_smiles_parses():
    # read from the raw YAML with RDKit alone, not through elimscan's loader (which would refuse the file first)
    found = list(_raw_smiles(yaml.safe_load(CASES_TEXT)))
    assert len(found) > 60, len(found)  # the walk reaches the substrates, bases, majors and share keys
    bad = [(where, smiles) for where, smiles in found if Chem.MolFromSmiles(smiles) is None]
    assert not bad, bad
    # every expected product is an alkene with one C=C (majors and share keys), never a substrate pasted by mistake
    products = [(w, s) for w, s in found if ".major" in w or "alkene_shares[" in w]
    assert products and all(Chem.MolFromSmiles(s).HasSubstructMatch(Chem.MolFromSmarts("C=C")) for _, s in products)


def test_each_expected_product_is_one_elimscan_perceives(cases, perceived):
    for case in cases.test:
        anti, syn = perceived[case.id]
        wanted = [s for s in [case.expected.major, *case.expected.alkene_shares_percent] if s not in (None, SUBSTITUTION)]
        for smiles in wanted:
            assert isomer_key(smiles) in anti | syn, f"{case.id}: {smiles} is not among {sorted(anti | syn)}"


def test_the_stereospecific_isomers_are_the_anti_products(cases, perceived):
    # the case file derives each isomer from the anti-periplanar geometry (RDKit, independently of elimscan);
    # elimscan's perception must give that isomer from an anti path and its E/Z partner only from a syn path
    stereospecific = [c for c in cases.test if "stereospecific" in c.category]
    assert len(stereospecific) >= 2
    for case in stereospecific:
        anti, syn = perceived[case.id]
        major = isomer_key(case.expected.major)
        assert major in anti, case.id
        partners = (syn - anti) - {major}
        assert partners, f"{case.id}: no isomer reachable only syn"


def test_the_set_covers_what_issue_17_asks_for(cases):
    counts = Counter(category for case in cases.test for category in case.category)
    for category, least in {"open-chain-regio": 6, "ez-ratio": 4, "stereospecific": 2, "syn-rigid": 1,
                            "e2-vs-sn2": 4}.items():
        assert counts[category] >= least, category
    assert counts["ring-competing"] + counts["ring-single"] >= 3 and counts["ring-competing"] and counts["ring-single"]
    series = Counter(case.series for case in cases.test if case.series)
    assert any(n >= 3 for name, n in series.items()
               if all("base-size" in c.category for c in cases.test if c.series == name))
    assert any(n >= 4 for name, n in series.items()
               if all("leaving-group" in c.category for c in cases.test if c.series == name))
    assert all(c.expected.e2_percent is not None for c in cases.test if "e2-vs-sn2" in c.category)
    kinds = Counter(type(c) for c in cases.calibration)
    assert kinds[RateCase] >= 3 and kinds[IsotopeCase] >= 2 and kinds[HammettCase] >= 1
    assert len(cases.test) >= 30 and set(counts) <= set(CATEGORIES)


def test_an_error_names_the_case_id():
    bad = CASES_TEXT.replace('smiles: "CCCC(C)Br"', 'smiles: "CCCC(C)Brx"', 1)
    with pytest.raises(CaseFileError, match="test case '2-bromopentane-ethoxide'"):
        parse_cases(bad)
    with pytest.raises(CaseFileError, match="'2-bromopentane-ethoxide'.*unknown category ez"):
        parse_cases(CASES_TEXT.replace("category: [open-chain-regio, ez-ratio]\n    substrate: {name: 2-bromopentane",
                                       "category: [open-chain-regio, ez]\n    substrate: {name: 2-bromopentane", 1))
    with pytest.raises(CaseFileError, match="'phenethyl-bromide-d2-kie'.*matches no atom"):
        parse_cases(CASES_TEXT.replace('"[CH2;$(C-c)]"', '"[NH2]"', 1))
    with pytest.raises(CaseFileError, match="'bromoethane-ethoxide'.*used twice"):
        parse_cases(CASES_TEXT.replace("id: 1-bromopropane-ethoxide", "id: bromoethane-ethoxide", 1))


def test_every_case_and_seed_is_served_by_one_job_of_a_loadable_batch_config(cases):
    everything = [*cases.calibration, *cases.test]
    groups = batch_groups(benchmark_jobs(everything))
    served = Counter(slot for group in groups for slots in group.serves.values() for slot in slots)
    wanted = Counter((slot, seed) for case in everything for seed in seeds_for(case, None) for slot, _ in case_slots(case))
    assert served == wanted and max(served.values()) == 1
    for group in groups:
        config = parse_config(yaml.safe_dump(group.config), group.name)
        jobs = config.jobs()
        assert len(jobs) == len(group.serves)
        assert {(s.name, b.name) for s, b in jobs} == set(group.serves)
        assert config.seed == group.config["seed"]
    # the same substrate (canonical SMILES) with the same base at the same seed and temperature runs once:
    # 2-bromopropane + ethoxide at 328.15 K serves a rate constant and a test case
    shared = [slots for group in groups for slots in group.serves.values() if len(slots) > 1]
    assert any({"isopropyl-bromide-ethoxide-e2-rate", "2-bromopropane-ethoxide"} <= {s for s, _ in slots}
               for slots in shared)


@pytest.fixture(scope="module")
def validate():
    with loaded_script(ROOT / "validation" / "validate.py", "validate") as module:
        yield module


def test_the_fast_subset_is_a_few_small_cases_with_one_seed(cases, validate):
    ids = {c.id for c in (*cases.calibration, *cases.test)}
    assert set(validate.FAST_SUBSET) <= ids
    fast = [c for c in cases.test if c.id in validate.FAST_SUBSET]
    assert 4 <= len(fast) <= 6
    jobs = benchmark_jobs([c for c in (*cases.calibration, *cases.test) if c.id in validate.FAST_SUBSET], 1)
    groups = batch_groups(jobs)
    assert sum(len(g.serves) for g in groups) <= 6 and {g.config["seed"] for g in groups} == {1}
    heavy = [c.id for c in fast if Chem.MolFromSmiles(c.substrate.smiles).GetNumHeavyAtoms() > 8]
    assert not heavy


def test_the_command_line_refuses_no_compute_without_a_work_folder(validate, capsys):
    with pytest.raises(SystemExit):
        validate._parse(["--no-compute"])
    assert "--no-compute needs --work" in capsys.readouterr().err
    assert validate._parse(["--subset", "fast", "--seeds", "2"]).seeds == 2


def test_a_paths_override_is_checked_like_a_config():
    text = CASES_TEXT.replace("    substrate: {name: bromoethane, smiles: \"CCBr\"}\n    base: ethoxide\n    temperature_K: 328.15\n"
                              "    expected:", "    substrate: {name: bromoethane, smiles: \"CCBr\"}\n    base: ethoxide\n"
                              "    temperature_K: 328.15\n    paths: {substitution: maybe}\n    expected:", 1)
    assert text != CASES_TEXT
    with pytest.raises(CaseFileError, match="'bromoethane-ethoxide'.*paths.substitution"):
        parse_cases(text)


@pytest.mark.parametrize("name", ["alcohol-2", "alcohol-4", "Na-pair", "Na-pair-alcohol-2", "alcohol-3-sampled"])
def test_a_base_model_candidate_models_every_base_and_runs_in_its_own_folders(cases, validate, name):
    """Each candidate of issue 18 runs the calibration set with its model on every base, apart from the bare anion's."""
    from elimscan.analysis.benchmark_models import BASE_MODEL_CANDIDATES, SAMPLING_PATHS, base_model_block

    chosen = validate._chosen("calibration", list(cases.calibration), list(cases.test))
    assert chosen and all(c in cases.calibration for c in chosen)
    default = batch_groups(benchmark_jobs(chosen, 1))
    groups = batch_groups(benchmark_jobs(chosen, 1), base_model=name)
    assert {g.name for g in groups}.isdisjoint(g.name for g in default)
    assert all(g.name.startswith(f"{name}--") for g in groups)
    for group in groups:
        config = parse_config(yaml.safe_dump(group.config), group.name)
        for base in config.bases:
            assert base.model.model_dump(exclude_defaults=True) == base_model_block(name)
        for key, value in SAMPLING_PATHS.get(name, {}).items():  # the sampling reaches every job's paths
            assert getattr(config.paths, key) == value
    assert validate.page_path("calibration", name).name == f"CALIBRATION-{name}.md"
    frozen = yaml.safe_load((ROOT / "validation" / "model-freeze.yaml").read_text())["base_model"]
    assert validate.frozen_model() == frozen and validate._parse([]).base_model == frozen
    assert validate.page_path("all", frozen).name == "VALIDATION.md"  # the frozen model's page has no suffix
    if name != frozen:
        assert validate.page_path("all", name).name == f"VALIDATION-{name}.md"
    assert validate._parse(["--base-model", name]).base_model == name and name in BASE_MODEL_CANDIDATES
    with pytest.raises(ValueError, match="unknown base model 'alcohol-9'"):
        base_model_block("alcohol-9")


@pytest.mark.parametrize("functional", ["b3lyp", "wb97x-3c"])
def test_a_dft_calibration_run_turns_the_tier_on_in_batches_and_a_page_of_its_own(cases, validate, functional):
    """``--dft`` (the DFT level's decision registered in validation/model-freeze.yaml) runs every job with absolute
    DFT single points on the lowest saddle of each product, in folders apart from the GFN2-xTB-only batches (other
    job keys), and writes a page named for the level; GFN2-xTB-only runs are left as they were."""
    from elimscan.pipeline.document import job_key

    chosen = validate._chosen("calibration", list(cases.calibration), list(cases.test))
    frozen = validate.frozen_model()
    plain = batch_groups(benchmark_jobs(chosen, 1), base_model=frozen)
    dft = batch_groups(benchmark_jobs(chosen, 1), base_model=frozen, dft_functional=functional)
    assert [g.name + f"-dft-{functional}" for g in plain] == [g.name for g in dft]
    assert all("dft" not in g.config for g in plain)
    for group, before in zip(dft, plain):
        config = parse_config(yaml.safe_dump(group.config), group.name)
        assert config.dft.enabled and config.dft.absolute_barriers and config.dft.saddles_per_product == 1
        assert config.dft.functional == functional and config.dft.saddles == "single-point"
        old = parse_config(yaml.safe_dump(before.config), before.name)
        first = lambda c: (c, {"name": c.substrates[0].name, "smiles": c.substrates[0].smiles}, c.bases[0],
                           c.method.solvent, {"elimscan": "test"})
        assert job_key(*first(config)) != job_key(*first(old))  # the DFT jobs are other jobs
    args = validate._parse(["--subset", "calibration", "--dft", functional])
    assert args.dft == functional and validate._parse([]).dft is None
    assert validate.page_path("calibration", frozen, args.dft).name == f"CALIBRATION-dft-{functional}.md"
    assert validate.page_path("calibration", frozen).name == "CALIBRATION.md"
    with pytest.raises(SystemExit):
        validate._parse(["--dft", "pbe"])  # not a registered candidate


def test_sampling_keeps_a_case_s_own_paths_settings(cases):
    """A sampled candidate adds its path sampling over a case's own ``paths:`` block (anti-only or syn settings stay)."""
    from elimscan.analysis.benchmark_models import SAMPLING_PATHS

    own = {"substitution": False, "approaches": ["anti"]}  # a case may turn paths off (cases.yaml's paths field)
    for case in (cases.test[0].model_copy(update={"paths": own}), cases.test[0].model_copy(update={"paths": None})):
        [group] = batch_groups(benchmark_jobs([case], 1), base_model="alcohol-3-sampled")
        assert group.config["paths"] == {**(case.paths or {}), **SAMPLING_PATHS["alcohol-3-sampled"]}
        parse_config(yaml.safe_dump(group.config), group.name)  # a valid batch config
        [plain] = batch_groups(benchmark_jobs([case], 1), base_model="alcohol-3")
        assert plain.config.get("paths") == case.paths


def test_a_probe_of_named_cases_runs_only_those_and_writes_no_page(cases, validate):
    """``--cases`` picks cases of the subset by id, never writes the subset's page, and names an id it lacks."""
    args = validate._parse(["--subset", "calibration", "--cases", "ethyl-bromide-ethoxide-sn2-rate"])
    assert args.no_write and args.cases == ("ethyl-bromide-ethoxide-sn2-rate",)
    chosen = validate._chosen("calibration", list(cases.calibration), list(cases.test), args.cases)
    assert [c.id for c in chosen] == ["ethyl-bromide-ethoxide-sn2-rate"]
    with pytest.raises(ValueError, match="2-bromobutane-ethoxide not in the calibration subset"):
        validate._chosen("calibration", list(cases.calibration), list(cases.test), ("2-bromobutane-ethoxide",))
    # an id that holds a comma of its own survives the comma-split list
    args = validate._parse(["--cases", "2-bromo-2,3-dimethylbutane-ethoxide,2-bromobutane-ethoxide"])
    chosen = validate._chosen("all", list(cases.calibration), list(cases.test), args.cases)
    assert [c.id for c in chosen] == ["2-bromobutane-ethoxide", "2-bromo-2,3-dimethylbutane-ethoxide"]
    with pytest.raises(ValueError, match="2-bromo-2 not in the all subset"):
        validate._chosen("all", list(cases.calibration), list(cases.test), ("2-bromo-2",))


def test_a_job_archived_by_one_machine_is_scored_and_never_computed_by_the_next(validate, tmp_path, capsys,
                                                                                 monkeypatch):
    """The benchmark outlives its machine: a second run in an empty work folder reads the archived job, computes
    nothing (no batch folder is made) and scores the case as the first run did (toy engine, one job); a session
    that must end mid-run archives what finished with --archive-only."""
    import gzip
    import json
    import os

    # the batch runs as `python -m elimscan batch` and must find the toy engine (tests/support) and elimscan
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join([str(ROOT / "tests" / "support"), str(ROOT / "workflow"),
                                                      os.environ.get("PYTHONPATH", "")]))
    records = tmp_path / "records"
    args = ["--subset", "fast", "--cases", "2-bromobutane-ethoxide", "--seeds", "1", "--base-model", "bare",
            "--engine", "toyjobs:toy_engine", "--records", str(records)]
    assert validate.main([*args, "--work", str(tmp_path / "first")]) == 0
    first = capsys.readouterr()
    assert len(list(records.glob("*.json.gz"))) == 1 and "1 finished job(s) archived" in first.err
    # --progress: computes and writes nothing, says how far the run got and that nobody computes there now
    def files(folder):  # SQLite's shared-memory index of a WAL store is touched by any reader: left out
        return sorted((p.name, p.stat().st_mtime_ns) for p in folder.rglob("*") if not p.name.endswith("-shm"))

    before = files(tmp_path / "first")
    assert validate.main([*args, "--work", str(tmp_path / "first"), "--progress"]) == 0
    said = capsys.readouterr().out
    assert "base model bare: 1 of 1 job(s) finished" in said and "No invocation computes in" in said, said
    assert files(tmp_path / "first") == before  # nothing made or rewritten
    assert validate.main([*args, "--work", str(tmp_path / "none yet"), "--progress", "--no-records"]) == 0
    said = capsys.readouterr()
    assert "0 of 1 job(s) finished" in said.out and "1 job(s) left, no finished job to estimate" in said.out, said
    assert "does not exist or is no folder: only the archive was read" in said.err
    assert not (tmp_path / "none yet").exists()  # nothing made
    with pytest.raises(SystemExit):
        validate._parse(["--work", str(tmp_path / "first"), "--progress", "--archive-only"])
    assert "--progress only reads" in capsys.readouterr().err
    with pytest.raises(SystemExit):
        validate._parse(["--progress"])
    assert "--progress needs --work" in capsys.readouterr().err
    # --archive-only: what a work folder's batches finished is archived under the commit that computed it
    for archived in records.glob("*.json.gz"):
        archived.unlink()
    assert validate.main([*args, "--work", str(tmp_path / "first"), "--archive-only"]) == 0
    assert "1 finished job(s) archived" in capsys.readouterr().err
    [kept] = records.glob("*.json.gz")
    computed_by = json.loads((tmp_path / "first" / validate.RUN_LOG).read_text().splitlines()[-1])["commit"]
    assert json.loads(gzip.decompress(kept.read_bytes()))["commit"] == computed_by
    assert validate.main([*args, "--work", str(tmp_path / "empty"), "--archive-only"]) == 2
    assert "holds no batch of these cases under base model bare" in capsys.readouterr().err
    assert validate.main([*args, "--work", str(tmp_path / "second")]) == 0
    second = capsys.readouterr()
    assert "all 1 job(s) archived" in second.err
    assert not any(p.is_dir() for p in (tmp_path / "second").iterdir())  # no batch ran
    row = [line for line in first.out.splitlines() if line.startswith("| 2-bromobutane-ethoxide")]
    assert row and row == [line for line in second.out.splitlines() if line.startswith("| 2-bromobutane-ethoxide")]
    assert "- archived jobs: 1 of the finished jobs" in second.out and "archived jobs" not in first.out
    # where the job's gradients went: its record carries each path stage's count, read back from the archive too
    for out in (first.out, second.out):
        assert "## Where the gradients went" in out and "\n| driven path | " in out
    assert validate._parse(["--no-records"]).records is None  # --no-records: neither read nor written
    assert validate._parse([]).records == ROOT / "validation" / "records"


def test_a_page_written_into_the_checkout_does_not_mark_the_code_dirty(validate, tmp_path, monkeypatch):
    """validate.py writes its pages into validation/ and their counts into the package's benchmark record; the next
    invocation must still name the clean commit."""
    import subprocess

    def git(*words):
        subprocess.run(["git", "-C", str(tmp_path), "-c", "user.email=t@t", "-c", "user.name=t", *words],
                       check=True, capture_output=True)

    (tmp_path / "validation").mkdir()
    (tmp_path / "validation" / "VALIDATION.md").write_text("old page\n")
    record = tmp_path / "workflow" / "elimscan" / "data" / "benchmark_record.json"
    record.parent.mkdir(parents=True)
    record.write_text("{}\n")
    (tmp_path / "workflow.py").write_text("x = 1\n")
    git("init", "-q")
    git("add", "-A")
    git("commit", "-qm", "start")
    monkeypatch.setattr(validate, "HERE", tmp_path / "validation")
    clean = validate._commit()
    assert clean != "unknown" and not clean.endswith("-dirty")
    (tmp_path / "validation" / "VALIDATION.md").write_text("new page\n")
    record.write_text('{"version": 1}\n')  # the page's counts, written beside it into the package
    assert validate._commit() == clean
    (tmp_path / "workflow.py").write_text("x = 2\n")
    assert validate._commit() == clean + "-dirty"


def test_an_archived_ok_job_counts_over_a_failed_row_of_the_work_folder(validate, tmp_path, monkeypatch):
    """A job that failed in this folder but finished ok on another machine (archived) is scored from the archive."""
    from types import SimpleNamespace

    from elimscan.batch.archive import ArchivedJob, archive_jobs

    pair = ("2-bromobutane", "ethoxide")
    monkeypatch.setattr(validate, "_group_keys", lambda group, work: {"k1": pair})
    failed = SimpleNamespace(status="failed", job_json='{"status": "failed"}', wall_seconds=5.0)
    monkeypatch.setattr(validate, "_stored", lambda group, work, keys: ({"k1": failed}, None))
    records = tmp_path / "records"
    assert archive_jobs(records, {"k1": ArchivedJob({"status": "ok"}, 60.0, None, "abc1234")}) == 1
    found, _, archived = validate._read_group(None, tmp_path, records)
    assert found[pair] == ({"status": "ok"}, 60.0) and archived == {pair: "abc1234"}
    # without an archived record the failed row stands (its case counts as not computed)
    assert validate._read_group(None, tmp_path, tmp_path / "none")[0][pair][0] == {"status": "failed"}


def test_the_groups_run_as_many_at_once_as_there_are_workers_one_worker_each(validate, tmp_path, monkeypatch):
    """Most groups hold one to four jobs: two workers run two groups at once (one worker each), the largest first,
    so no worker idles while another group's last job runs; one worker runs them one after another."""
    import threading
    from types import SimpleNamespace

    calls, running, peak, lock = [], [0], [0], threading.Lock()

    def run(group, work, workers, records, commit):
        with lock:
            calls.append((group.name, workers))
            running[0] += 1
            peak[0] = max(peak[0], running[0])
        time.sleep(0.05)
        with lock:
            running[0] -= 1

    monkeypatch.setattr(validate, "_run_group", run)
    groups = [SimpleNamespace(name=f"g{n}", config={"pairs": [None] * n}) for n in (1, 4, 18, 2)]
    validate._run_groups(groups, tmp_path, 2, None, "abc")
    assert sorted(calls) == [("g1", 1), ("g18", 1), ("g2", 1), ("g4", 1)] and peak[0] == 2
    assert {name for name, _ in calls[:2]} == {"g18", "g4"}  # the largest groups start first
    calls.clear()
    peak[0] = 0
    validate._run_groups(groups, tmp_path, 1, None, "abc")
    assert calls == [("g18", 1), ("g4", 1), ("g2", 1), ("g1", 1)] and peak[0] == 1


def test_a_killed_invocation_is_logged_by_the_next_one(tmp_path, validate):
    """validate.py's run log lives in the work folder: a running file left by a killed invocation (its lock gone)
    is logged as interrupted by the next invocation (elimscan.batch.runclock is tested in tests/batch)."""
    import json

    (tmp_path / validate.RUNNING_FILE).write_text(json.dumps({"commit": "abc1234", "base_model": "bare", "dft": None,
                                                              "wall_seconds": 5400.0}))
    assert validate.settle_stale_run(tmp_path) and not (tmp_path / validate.RUNNING_FILE).exists()
    [entry] = validate.read_run_log(tmp_path)
    assert entry["interrupted"] and entry["wall_seconds"] == 5400.0 and entry["commit"] == "abc1234"


def test_a_frozen_model_page_writes_the_record_the_report_quotes(tmp_path, validate, monkeypatch, cases):
    """The counts the report prints under a job's verdict come from the page's own scores, and writing the fast
    page keeps the full page's entry (which the report quotes first)."""
    import json

    from elimscan.analysis.benchmark_record import chosen_page
    from elimscan.analysis.benchmark_scoring import headline, score_case
    from elimscan.output.benchmark_tables import RunInfo

    from benchmarkrecords import case, record  # bookkeeping job records (tests/support), not chemistry

    monkeypatch.setattr(validate, "RECORD_FILE", tmp_path / "data" / "benchmark_record.json")
    job = {**record([("C3-H9", "anti", "C/C=C/C", 0.0, 1), ("C0-H5", "anti", "C=CCC", 2.0, 3)]),
           "base_info": {"model": "2 x CCO hydrogen-bonded + 1 x CCO in the second shell"}}
    scores = [score_case(case(major="C/C=C/C", seeds=(1,), category=("open-chain-regio", "ez-ratio")), {1: job},
                         (1,), ["dE"])]
    found = validate.Collected(records={"slot": {1: job}}, n_jobs=1, n_finished=1)
    info = RunInfo(date_utc="2026-12-05 10:00 UTC", commit="abc1234", wall_seconds=1.0, job_seconds=1.0,
                   method="GFN2-xTB", seeds=(1,), subset="all cases", command="validate.py", n_jobs=1,
                   n_jobs_finished=1, base_model="alcohol-3-embedded", frozen_model="alcohol-3-embedded")
    from elimscan.analysis.benchmark_calibration import CalibrationScore, Estimate

    rate = next(c for c in cases.calibration if c.id == "phenethyl-bromide-ethoxide-e2-rate")
    calibration = [CalibrationScore(case=rate, quantity="dG++", unit="kcal/mol", measured=21.92, error_unit="kcal/mol",
                                    estimates=(Estimate("E2 dG", (13.5, 14.1), 13.8, 0.6, -8.12),))]
    validate._write_record("VALIDATION.md", info, scores, ["dE"], found, calibration)
    validate._write_record("VALIDATION-fast.md", replace(info, commit="def5678"), scores, ["dE"], found)
    written = json.loads(validate.RECORD_FILE.read_text())
    entry = chosen_page(written)
    assert set(written["pages"]) == {"VALIDATION.md", "VALIDATION-fast.md"} and entry["commit"] == "abc1234"
    assert entry["job_base_models"] == ["2 x CCO hydrogen-bonded + 1 x CCO in the second shell"]
    h = headline(scores, "dE", "ez-ratio")
    kept = entry["levels"]["dE"]["ez-ratio"]
    assert {k: kept[k] for k in ("cases", "right", "undecided", "not_computed", "rule_cases", "rule_right",
                                 "rule_not_computed", "major_right")} == {
        "cases": h.n, "right": h.right, "undecided": h.undecided, "not_computed": h.not_computed,
        "rule_cases": h.rule_n, "rule_right": h.rule_right, "rule_not_computed": h.rule_not_computed,
        "major_right": h.right_major_only}
    assert kept["major_cases"] == kept["major_computed"] == 1  # the case has a published major, computed
    # each case's outcome and shares, and the calibration errors, as the page's scores hold them
    [scored] = scores
    kept = entry["cases"][scored.case.id]["levels"]["dE"]
    assert kept["outcome"] == scored.levels["dE"].outcome and kept["mean_shares"] == scored.levels["dE"].mean_shares
    assert entry["calibration"]["phenethyl-bromide-ethoxide-e2-rate"]["estimates"]["E2 dG"] == {
        "per_seed": [13.5, 14.1], "mean": 13.8, "spread": 0.6, "error": -8.12}
    assert written["pages"]["VALIDATION-fast.md"]["calibration"] == {}  # that page was written without one


def test_a_run_on_fewer_seeds_writes_a_page_of_its_own(validate):
    # the pages of every seed (VALIDATION.md, VALIDATION-fast.md, CALIBRATION.md) are the ones the README and the
    # tests quote: a one-seed run (the night-sized run of every case, the fast subset's default) must not overwrite
    # them, and only they go into the package's record
    cases = parse_cases((ROOT / "validation" / "cases.yaml").read_text())
    chosen = validate._chosen("all", list(cases.calibration), list(cases.test), None)
    frozen = validate.frozen_model()
    assert max(len(c.seeds) for c in chosen) == 3
    assert validate.fewer_seeds(1, chosen) == 1 and validate.fewer_seeds(3, chosen) is None
    assert validate.fewer_seeds(None, chosen) is None
    assert validate.page_path("all", frozen, None, 1).name == "VALIDATION-seeds1.md"
    assert validate.page_path("all", "bare", None, 1).name == "VALIDATION-bare-seeds1.md"
    assert validate.page_path("all", frozen, None, None).name == "VALIDATION.md"
    assert validate.page_path("fast", frozen, None, 1).name == "VALIDATION-fast-seeds1.md"
    assert validate.page_path("fast", frozen, None, None).name == "VALIDATION-fast.md"
    assert validate.page_path("calibration", frozen, "b3lyp", 1).name == "CALIBRATION-dft-b3lyp-seeds1.md"
