"""The replay log of a job (batch.replaylog): finished single points kept on disk, served again to the same job
when it starts over after a kill, never a different number for a geometry.

The log's own bookkeeping is tested on bytes (a record cut short, a damaged checksum, a file that is not a log),
the engine's use of it on a scripted backend (a restarted engine computes nothing the log holds, and counts its
gradients and retries as the first run did) and, in the GFN2-xTB tier, on a whole job run three times: whole,
from its full log and from the first half of it (as after a kill).
"""

from __future__ import annotations

import os
import threading
import time
from pathlib import Path

import numpy as np
import pytest

from elimscan.batch import replaylog
from elimscan.batch.replaylog import DAMAGED_SUFFIX, MAGIC, ReplayLog
from elimscan.engines.xtb import EngineSettings, XtbEngine


def _fill(path, n=5):
    log = ReplayLog(path)
    for i in range(n):
        log.put(f"k{i}", {"energy_hartree": -1.0 / 3.0 - i, "retried": i == 2}, np.full((2, 3), 0.1 * i))
    log.close()


def test_records_come_back_bit_for_bit(tmp_path):
    path = tmp_path / "job.replay"
    _fill(path)
    log = ReplayLog(path)
    assert len(log) == 5 and log.dropped_bytes == 0
    fields, array = log.get("k3")
    assert fields == {"energy_hartree": -1.0 / 3.0 - 3, "retried": False}  # floats round-trip exactly in JSON
    assert np.array_equal(array, np.full(6, 0.1 * 3))
    assert log.get("missing") is None and log.served == 1


def test_a_record_cut_short_by_a_kill_is_dropped_and_the_log_goes_on(tmp_path):
    path = tmp_path / "job.replay"
    _fill(path)
    path.write_bytes(path.read_bytes()[:-7])  # the last record's tail never reached the disk
    log = ReplayLog(path)
    assert len(log) == 4 and log.get("k4") is None and log.dropped_bytes > 0
    log.put("k5", {"energy_hartree": 2.5})
    log.close()
    again = ReplayLog(path)
    assert len(again) == 5 and again.dropped_bytes == 0 and again.get("k5")[0] == {"energy_hartree": 2.5}


def test_a_damaged_record_ends_the_log(tmp_path):
    path = tmp_path / "job.replay"
    _fill(path)
    data = bytearray(path.read_bytes())
    data[len(MAGIC) + 20] ^= 0xFF  # a flipped byte inside the first record
    path.write_bytes(bytes(data))
    log = ReplayLog(path)
    assert len(log) == 0 and log.dropped_bytes > 0


def test_a_file_that_is_not_a_log_is_moved_aside_never_deleted(tmp_path, caplog):
    path = tmp_path / "job.replay"
    path.write_bytes(b"\0" * 300)  # a header a machine crash zero-filled
    log = ReplayLog(path)
    log.put("k0", {"energy_hartree": 1.0})
    log.close()
    (aside,) = tmp_path.glob("job.replay" + DAMAGED_SUFFIX + "*")
    assert aside.read_bytes() == b"\0" * 300 and "moved to" in caplog.text
    assert len(ReplayLog(path)) == 1  # the new log holds the point written after


def test_a_point_of_this_run_is_not_served_as_replayed(tmp_path):
    log = ReplayLog(tmp_path / "job.replay")
    log.put("k0", {"energy_hartree": 1.0})
    assert log.get("k0") is None and log.served == 0  # only an earlier run's points are replayed


def test_a_second_writer_waits_for_the_lock_then_goes_without_the_log(tmp_path, monkeypatch):
    # a worker left over from a killed batch still holds the log: the new run's worker must not write it too; it
    # waits for the lock a little (such a worker exits within about a second), then goes without
    monkeypatch.setattr(replaylog, "LOCK_WAIT_S", 0.3)
    _fill(tmp_path / "job.replay", 2)
    holder = ReplayLog(tmp_path / "job.replay")
    second = ReplayLog(tmp_path / "job.replay")
    second.put("k9", {"energy_hartree": 9.0})
    second.close()
    assert len(second) == 0
    threading.Timer(0.2, holder.close).start()  # this time the holder lets go while the third waits
    monkeypatch.setattr(replaylog, "LOCK_WAIT_S", 3.0)
    third = ReplayLog(tmp_path / "job.replay")
    assert len(third) == 2
    third.close()


@pytest.mark.skipif(not Path("/dev/full").exists(), reason="needs /dev/full (Linux)")
def test_a_full_disk_never_stops_the_job(tmp_path, caplog):
    # the disk fills while the job runs: the log's descriptor now writes to /dev/full, where every write fails
    # with ENOSPC; the point is not kept, the caller sees no error, and the log says so once
    log = ReplayLog(tmp_path / "job.replay")
    full = os.open("/dev/full", os.O_WRONLY)
    os.dup2(full, log._fd)
    os.close(full)
    log.put("k0", {"energy_hartree": 1.0}, np.zeros(6))
    log.put("k1", {"energy_hartree": 2.0}, np.zeros(6))
    log.close()
    assert log._fd is None and caplog.text.count("goes on without it") == 1
    assert "No space left" in caplog.text


class _Counting:
    """A backend series that counts its SCFs; the energy depends on the geometry only, the first SCF of the list
    in ``failures`` fails (so a point is retried)."""

    calls = 0

    def __init__(self, kelvin: float, failures: list[int]):
        self.kelvin, self.failures = kelvin, failures

    def set_electronic_temperature(self, kelvin: float) -> None:
        self.kelvin = kelvin

    def compute(self, positions_bohr):
        type(self).calls += 1
        if self.failures and self.failures[0] == type(self).calls:
            self.failures.pop(0)
            time.sleep(0.01)  # a failing SCF takes its time too
            raise RuntimeError("SCF is not converged")
        return -float(np.sum(positions_bohr ** 2)) / 7.0, positions_bohr / 3.0


def _engine(monkeypatch, log, failures=()) -> XtbEngine:
    engine = XtbEngine(EngineSettings(), replay=log)
    failures = list(failures)
    monkeypatch.setattr(engine, "_new_series", lambda numbers, pos, charge, uhf, kelvin: _Counting(kelvin, failures))
    return engine


def test_a_restarted_engine_computes_nothing_its_log_holds_and_counts_as_the_first_run(embed, monkeypatch, tmp_path):
    atoms = embed("CCO")
    geometries = [atoms.positions + 0.01 * k for k in range(6)]
    _Counting.calls = 0
    first = _engine(monkeypatch, ReplayLog(tmp_path / "job.replay"), failures=[3])
    computed = [first.compute(atoms.numbers, g, 0, 1, "ethanol", None) for g in geometries[:4]]
    first.replay.close()
    calls_before = _Counting.calls
    again = _engine(monkeypatch, ReplayLog(tmp_path / "job.replay"))
    served = [again.compute(atoms.numbers, g, 0, 1, "ethanol", None) for g in geometries]
    assert [p.energy_hartree for p in served[:4]] == [p.energy_hartree for p in computed]  # bit for bit
    assert all(np.array_equal(p.gradient_hartree_per_bohr, q.gradient_hartree_per_bohr)
               for p, q in zip(served, computed))
    assert _Counting.calls - calls_before == 2  # only the two geometries the first run never reached
    assert (again.stats.misses, again.stats.replayed) == (6, 4)
    assert (again.stats.retries, again.stats.hot_points) == (first.stats.retries, first.stats.hot_points) == (1, 0)
    assert served[2].retried and not served[3].retried
    # a retried point's library time is kept with it, its failed attempt too (10 ms here), so that the time a
    # replayed job was served is not short
    assert again.stats.replayed_seconds >= 0.01
    assert first.stats.backend_seconds == pytest.approx(again.stats.replayed_seconds)


def test_a_record_this_code_cannot_read_is_computed_again(embed, monkeypatch, tmp_path):
    # a log written by another code version (a field missing): the job computes the point, it does not fail
    from elimscan.engines.xtb import geometry_key

    atoms = embed("CCO")
    log = ReplayLog(tmp_path / "job.replay")
    key = geometry_key(atoms.numbers, atoms.positions, 0, 1, EngineSettings())
    log.put(key, {"energy_hartree": -1.0}, np.zeros((len(atoms), 3)))  # no temperature, retried or seconds
    log.close()
    _Counting.calls = 0
    engine = _engine(monkeypatch, ReplayLog(tmp_path / "job.replay"))
    point = engine.compute(atoms.numbers, atoms.positions, 0, 1, "ethanol", None)
    assert _Counting.calls == 1 and point.energy_hartree != -1.0 and engine.stats.replayed == 0


def test_the_same_geometry_at_another_charge_or_setting_is_computed(embed, monkeypatch, tmp_path):
    atoms = embed("CCO")
    _Counting.calls = 0
    first = _engine(monkeypatch, ReplayLog(tmp_path / "job.replay"))
    first.compute(atoms.numbers, atoms.positions, 0, 1, "ethanol", None)
    first.replay.close()
    log = ReplayLog(tmp_path / "job.replay")
    again = _engine(monkeypatch, log)
    again.compute(atoms.numbers, atoms.positions, -1, 1, "ethanol", None)  # another charge
    hotter = XtbEngine(EngineSettings(electronic_temperature_K=600.0), replay=log)
    monkeypatch.setattr(hotter, "_new_series", lambda numbers, pos, charge, uhf, kelvin: _Counting(kelvin, []))
    hotter.compute(atoms.numbers, atoms.positions, 0, 1, "ethanol", None)  # another electronic temperature
    assert _Counting.calls == 3 and log.served == 0
    again.compute(atoms.numbers, atoms.positions, 0, 1, "ethanol", None)  # the logged point itself
    assert _Counting.calls == 3 and log.served == 1


def test_a_dft_single_point_in_the_log_is_served_and_a_changed_level_is_computed(embed, monkeypatch, tmp_path):
    import dataclasses

    from elimscan.engines import dft

    calls = []

    def fake_single_point(atoms, charge, multiplicity, level, threads=1, name="structure"):
        calls.append(name)
        return dft.DftPoint(energy_hartree=-154.123456789012345 - len(calls), dispersion_hartree=-0.01,
                            solvation_hartree=-0.002, scf_cycles=12, seconds=1234.5)

    monkeypatch.setattr(dft, "single_point", fake_single_point)
    level = dft.DftLevel("b3lyp", "d3bj", "def2-svpd", True, 24.85, "ethanol", 3, 100, 1e-9, memory_limit_MB=8000.0)
    atoms = embed("CCO")
    first_log = ReplayLog(tmp_path / "job.replay")
    first = dft.kept_single_point(atoms, 0, 1, level, 1, "ethanol", first_log)
    first_log.close()
    log = ReplayLog(tmp_path / "job.replay")
    lower_memory = dataclasses.replace(level, memory_limit_MB=2000.0)  # changes no number: served
    assert dft.kept_single_point(atoms, 0, 1, lower_memory, 1, "ethanol", log) == first and len(calls) == 1
    other = dataclasses.replace(level, functional="pbe0")
    assert dft.kept_single_point(atoms, 0, 1, other, 1, "ethanol", log) != first and len(calls) == 2
