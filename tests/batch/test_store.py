"""The batch store on its own: a finished job commits with its file checksums in one transaction; read-only opening."""

from __future__ import annotations

import sqlite3

import pytest

from elimscan.batch.store import STORE_FILE, JobStore, StoredJob
from elimscan.errors import OutputError


def stored(key: str, status: str = "ok", files=(("jobs/a/one.xyz", "aa" * 32, 7),), **extra) -> StoredJob:
    """Return a StoredJob with small placeholder records."""
    fields = dict(job_key=key, job_id=f"job-{key}", substrate="chloroethane", base="methoxide", solvent="none",
                  source="config", status=status, error_type=None, error_message=None, job_json='{"j": 1}',
                  molecules_json="[]", folder="jobs/a", started_utc="2026-01-01T00:00:00+00:00",
                  finished_utc="2026-01-01T00:00:05+00:00", wall_seconds=5.0, worker="w1", run_id=None,
                  files=tuple(files))
    fields.update(extra)
    return StoredJob(**fields)


def test_a_finished_job_comes_back_with_its_checksums(tmp_path):
    with JobStore(tmp_path / STORE_FILE) as store:
        run_id = store.begin_run("t0", 1, "host", "cmd", "cfg", "local", 2, [("k1", "job-k1"), ("k2", "job-k2")])
        store.record_start(run_id, "k1", "job-k1", "w1", "t1")
        assert [r.job_key for r in store.running()] == ["k1"]
        files = (("jobs/a/two.xyz", "bb" * 32, 9), ("jobs/a/one.xyz", "aa" * 32, 7))
        store.record_finished(stored("k1", files=files, run_id=run_id))
        assert store.running() == []  # the commit ends the running row
        rows = store.finished()
    assert list(rows) == ["k1"]
    assert rows["k1"].files == tuple(sorted(files))  # ordered by path
    assert rows["k1"].job_json == ""  # records only on request
    assert rows["k1"].wall_seconds == 5.0 and rows["k1"].run_id == run_id


def test_finished_filters_by_key_and_reads_records_on_request(tmp_path):
    with JobStore(tmp_path / STORE_FILE) as store:
        store.record_finished(stored("k1"))
        store.record_finished(stored("k2", status="failed", error_type="time_limit", error_message="too long",
                                     files=(), folder=None))
        assert set(store.finished(["k2", "unknown"])) == {"k2"}
        rows = store.finished(["k1"], with_records=True)
        assert rows["k1"].job_json == '{"j": 1}' and rows["k1"].molecules_json == "[]"
        failed = store.finished(["k2"])["k2"]
        assert (failed.status, failed.error_type, failed.files) == ("failed", "time_limit", ())
        assert sorted(store.finished_durations(["k1", "k2"])) == [5.0, 5.0]
        # a job that started over from its replay log timed its last run only: no duration for the estimates
        store.record_finished(stored("k3", job_json='{"j": 3, "replayed_points": 120}'))
        store.record_finished(stored("k4", job_json='{"j": 4, "replayed_points": 0}'))
        assert sorted(store.finished_durations(["k1", "k3", "k4"])) == [5.0, 5.0]


def test_a_second_commit_replaces_the_files_of_the_first(tmp_path):
    with JobStore(tmp_path / STORE_FILE) as store:
        store.record_finished(stored("k1", files=(("jobs/a/old.xyz", "aa" * 32, 1),)))
        store.record_finished(stored("k1", files=(("jobs/a/new.xyz", "cc" * 32, 2),)))
        assert store.finished()["k1"].files == (("jobs/a/new.xyz", "cc" * 32, 2),)


def test_a_failing_commit_leaves_neither_the_row_nor_its_files(tmp_path):
    # two rows for one path break the files table's primary key: the job row must go with them
    duplicate = (("jobs/a/one.xyz", "aa" * 32, 7), ("jobs/a/one.xyz", "bb" * 32, 8))
    with JobStore(tmp_path / STORE_FILE) as store:
        with pytest.raises(OutputError, match="cannot write the batch store"):
            store.record_finished(stored("k1", files=duplicate))
        assert store.finished() == {}
    with sqlite3.connect(tmp_path / STORE_FILE) as conn:
        assert conn.execute("SELECT COUNT(*) FROM files").fetchone() == (0,)


def test_an_unknown_status_is_refused_before_any_write(tmp_path):
    with JobStore(tmp_path / STORE_FILE) as store:
        with pytest.raises(ValueError, match="status must be ok or failed"):
            store.record_finished(stored("k1", status="running"))
        assert store.finished() == {}


def test_read_only_opening(tmp_path):
    with pytest.raises(OutputError, match="no batch store"):
        JobStore(tmp_path / STORE_FILE, read_only=True)
    assert not (tmp_path / STORE_FILE).exists()  # looking did not create it
    with JobStore(tmp_path / STORE_FILE) as store:
        store.record_finished(stored("k1"))
    with JobStore(tmp_path / STORE_FILE, read_only=True) as reader:
        assert reader.read_only and set(reader.finished()) == {"k1"}
        assert reader.last_run() is None
        with pytest.raises(OutputError):
            reader.record_finished(stored("k2"))


def test_a_store_of_another_format_is_refused(tmp_path):
    JobStore(tmp_path / STORE_FILE).close()
    with sqlite3.connect(tmp_path / STORE_FILE) as conn:
        conn.execute("UPDATE meta SET value = '0' WHERE name = 'store_format'")
    with pytest.raises(OutputError, match="has format 0"):
        JobStore(tmp_path / STORE_FILE, read_only=True)


def test_runs_left_running_are_closed_as_stopped(tmp_path):
    with JobStore(tmp_path / STORE_FILE) as store:
        run_id = store.begin_run("t0", 1, "host", "cmd", "cfg", "local", 2, [("k1", "job-k1")])
        store.record_start(run_id, "k1", "job-k1", "w1", "t1")
        assert store.close_stale_runs("t2") == 1
        run = store.last_run()
        assert (run.state, run.ended_utc) == ("stopped", "t2")
        assert store.running() == [] and store.run_job_keys(run_id) == [("k1", "job-k1")]
        assert store.start_counts() == {"k1": 1}
