"""A batch keeps each running job's replay log (batch.replaylog) under replay/, hands it to the job's worker, and
removes it once the job's result is kept: a job whose worker died half-way starts over from the points it had
finished and ends with the numbers of a run never interrupted; stale logs of other jobs are removed.

Computed by XtbEngine itself (its cache, counters and replay log) on the toy model instead of GFN2-xTB
(``toyjobs.toy_xtb_engine``), which, asked to, kills its own worker after a number of points on its first attempt;
the log's bytes are tested in tests/batch/test_replaylog.py, a real GFN2-xTB job in tests/pipeline/test_replay_job.py.
"""

from __future__ import annotations

import json
import signal
import textwrap

from elimscan.batch.driver import REPLAY_DIR, BatchOptions, run_batch
from elimscan.batch.lock import FolderLock
from elimscan.batch.plan import plan_batch
from elimscan.config import parse_config
from toyjobs import TOY_SETTINGS, without_timings

CONFIG = TOY_SETTINGS + textwrap.dedent("""\
    name: replayed
    substrates: [{name: chloroethane, smiles: "CCCl"}]
    bases: [{name: methoxide, model: bare}]
    executor: {workers: 1}
    """)
FACTORY = "toyjobs:toy_xtb_engine"


def _batch(tmp_path, name, *, retry=False):
    config = parse_config(CONFIG)
    plan = plan_batch(config, tmp_path / "batch.yaml")
    out = tmp_path / name
    out.mkdir(exist_ok=True)
    events = []
    with FolderLock(out):
        outcome = run_batch(plan, out, config.executor, 1, BatchOptions(engine_factory=FACTORY, retry_failed=retry),
                            events.append)
    return out, outcome, events


def _jobs(out):
    return json.loads((out / "results.json").read_text())["jobs"]


def test_a_job_whose_worker_died_starts_over_from_its_log_and_ends_as_if_never_stopped(tmp_path, monkeypatch):
    (tmp_path / "batch.yaml").write_text(CONFIG)
    whole, outcome, _ = _batch(tmp_path, "whole")
    assert outcome.n_ok == 1 and not (whole / REPLAY_DIR).exists()
    assert _jobs(whole)[0]["replayed_points"] == 0

    monkeypatch.setenv("ELIMSCAN_TOY_DIE_AFTER", "40")
    out, outcome, _ = _batch(tmp_path, "stopped")
    assert outcome.n_failed == 1 and _jobs(out)[0]["error"]["error_type"] == "worker_died"
    (log_file,) = (out / REPLAY_DIR).glob("*.replay")  # a failed job's log stays for --retry-failed
    assert log_file.stem == _jobs(out)[0]["job_key"]
    (out / REPLAY_DIR / ("0" * 64 + ".replay")).write_bytes(b"")  # a stale log of a job no longer planned

    out, outcome, events = _batch(tmp_path, "stopped", retry=True)
    assert outcome.n_ok == 1 and not (out / REPLAY_DIR).exists()  # kept result: every log gone
    (job,) = _jobs(out)
    assert job["replayed_points"] == 40
    assert any("40 single point(s) finished by the job's stopped earlier run" in (e.message or "") for e in events)
    theirs = dict(_jobs(whole)[0], replayed_points=40)
    assert without_timings(job) == without_timings(theirs)


def test_a_failed_jobs_log_goes_at_the_next_run_that_does_not_retry_it(tmp_path, monkeypatch):
    (tmp_path / "batch.yaml").write_text(CONFIG)
    monkeypatch.setenv("ELIMSCAN_TOY_DIE_AFTER", "10")
    out, outcome, _ = _batch(tmp_path, "failed")
    assert outcome.n_failed == 1 and len(list((out / REPLAY_DIR).glob("*.replay"))) == 1
    out, outcome, _ = _batch(tmp_path, "failed")  # nothing to compute: the failed job stays failed
    assert outcome.n_computed == 0 and not (out / REPLAY_DIR).exists()


def test_a_run_killed_half_way_and_started_again_in_its_folder_is_served_its_points(tmp_path):
    # elimscan run keeps a replay log in its output folder (replay/run.replay) until results.json is written
    from test_interrupted import elimscan

    (tmp_path / "run.yaml").write_text(CONFIG)
    whole = elimscan("run", str(tmp_path / "run.yaml"), "--out", str(tmp_path / "whole"), engine=FACTORY)
    assert whole.returncode == 0, whole.stderr
    killed = elimscan("run", str(tmp_path / "run.yaml"), "--out", str(tmp_path / "out"), engine=FACTORY,
                      env={"ELIMSCAN_TOY_DIE_AFTER": "40"})
    assert killed.returncode == -signal.SIGKILL and (tmp_path / "out" / "replay" / "run.replay").is_file()
    again = elimscan("run", str(tmp_path / "run.yaml"), "--out", str(tmp_path / "out"), "-v", engine=FACTORY)
    assert again.returncode == 0, again.stderr
    assert "starting over: 40 single point(s) finished by a stopped earlier run" in again.stderr
    assert not (tmp_path / "out" / "replay").exists()
    mine, theirs = (json.loads((tmp_path / f / "results.json").read_text()) for f in ("out", "whole"))
    assert without_timings(mine["jobs"]) == without_timings(theirs["jobs"])
