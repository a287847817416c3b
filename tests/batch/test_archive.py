"""The archive of finished job records by key (elimscan.batch.archive), fast tier: file behaviour only."""

from __future__ import annotations

from elimscan.batch.archive import ARCHIVE_SUFFIX, ArchivedJob, archive_jobs, archived_keys, read_archived


def _job(value: float, commit: str = "abc1234") -> ArchivedJob:
    return ArchivedJob({"status": "ok", "barrier_kcal_mol": value}, 12.5, {"backend": "toy"}, commit)


def test_an_archived_job_reads_back_as_written_and_is_never_overwritten(tmp_path):
    """One key, one record: a second write of the key (another machine's run of the same job) leaves the first."""
    folder = tmp_path / "records"
    assert archived_keys(folder) == set() and read_archived(folder, ["k1"]) == {}
    assert archive_jobs(folder, {"k1": _job(3.25)}) == 1
    assert archive_jobs(folder, {"k1": _job(9.0, "other"), "k2": _job(4.0)}) == 1
    assert archived_keys(folder) == {"k1", "k2"}
    found = read_archived(folder, ["k1", "k2", "missing"])
    assert found["k1"] == _job(3.25) and found["k2"] == _job(4.0) and "missing" not in found
    assert sorted(p.name for p in folder.iterdir()) == [f"k1{ARCHIVE_SUFFIX}", f"k2{ARCHIVE_SUFFIX}"]  # no temporaries


def test_the_archive_bytes_do_not_depend_on_when_they_were_written(tmp_path):
    """gzip without a timestamp: the same record written twice is the same file (a commit shows no false change)."""
    archive_jobs(tmp_path / "a", {"k": _job(1.0)})
    archive_jobs(tmp_path / "b", {"k": _job(1.0)})
    name = f"k{ARCHIVE_SUFFIX}"
    assert (tmp_path / "a" / name).read_bytes() == (tmp_path / "b" / name).read_bytes()
