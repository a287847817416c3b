"""Substituent series (Hammett fits) from job records, their config, plot and report (fast tier: no GFN2-xTB).

The job records are copies of the committed bromoethane + methoxide run (tests/data/report-fixture/primary)
with hand-set barriers: test inputs, not results. Checks against something outside elimscan: the published
sigma_p values (Hansch, Leo & Taft, Chem. Rev. 1991, 91, 165, from memory), the published rho of the
2-arylethyl bromide E2 (DePuy & Bishop, J. Am. Chem. Soc. 1960, 82, 2532, from memory), an independent
least-squares fit (scipy.stats.linregress) with CODATA constants from scipy.constants, jsonschema for the
result file, and the PNG signature. The GFN2-xTB rho is compared with the published one in
tests/analysis/test_thermo.py::test_hammett_rho_of_2_arylethyl_bromides_matches_experiment (an expected failure).
"""

from __future__ import annotations

import csv
import io
import json
import math
from pathlib import Path

import pytest
import scipy.constants
import scipy.stats

from elimscan.config import (BaseConfig, RunConfig, SeriesConfig, SeriesMemberConfig, SolventConfig,
                             SubstrateConfig, parse_config)
from elimscan.errors import ConfigError
from elimscan.output.plots.figures import figure_png, figure_svg
from elimscan.output.plots.series import series_figure, series_plot_name
from elimscan.results.documents import RunResult
from elimscan.results.records import ErrorInfo, JobRecord
from elimscan.output.text import summary_table
from elimscan.output.files import build_report_files, validate_result_file
from elimscan.analysis.series import lowest_e2_barrier, series_records

ROOT = Path(__file__).resolve().parents[2]
FIXTURE = ROOT / "tests" / "data" / "report-fixture" / "primary" / "results.json"
#: sigma_p (Hansch, Leo & Taft, Chem. Rev. 1991, 91, 165; from memory)
SIGMA_P = {"OMe": -0.27, "H": 0.00, "Cl": 0.23, "CF3": 0.54, "NO2": 0.78}
#: rho of ArCH2CH2Br + EtO-/EtOH (DePuy & Bishop, J. Am. Chem. Soc. 1960, 82, 2532; from memory)
RHO_ARYLETHYL_BROMIDES = 2.1
T = 298.15


def template() -> RunResult:
    """Return the committed bromoethane + methoxide run (one job, a verified anti saddle with dE and dG)."""
    return RunResult.model_validate_json(FIXTURE.read_text(encoding="utf-8"))


def member_job(name: str, barrier: float | None, free: float | None = None, base: str = "methoxide",
               solvent: SolventConfig | None = None, status: str = "ok") -> JobRecord:
    """Return a copy of the fixture job for substrate ``name`` with its anti barrier set (kcal/mol)."""
    job = template().jobs[0]
    beta = job.beta_hydrogens[0]
    anti = beta.anti.model_copy(update={"barrier_kcal_mol": barrier, "barrier_free_energy_kcal_mol": free,
                                        "path_status": "ok" if barrier is not None else "failed"})
    update = {"job_id": f"{name}__{base}", "substrate": name, "base": base, "solvent": solvent,
              "beta_hydrogens": (beta.model_copy(update={"anti": anti}),)}
    if status != "ok":
        update.update(status="failed", beta_hydrogens=(), error=ErrorInfo(error_type="scf_not_converged",
                                                                          error_message=f"substrate '{name}': SCF"))
    return job.model_copy(update=update)


def series_config(names=("OMe", "H", "Cl", "CF3"), base: str = "methoxide") -> SeriesConfig:
    """Return a series of the named para substituents with their published sigma_p."""
    return SeriesConfig(name="para-X", base=base, sigma_source="Hansch, Leo & Taft 1991",
                        members=tuple(SeriesMemberConfig(substrate=n, sigma=SIGMA_P[n]) for n in names))


def independent_log10_k(barriers_kcal_mol, reference_kcal_mol):
    """Return log10(k/k0) from barriers with scipy's CODATA constants (thermochemical calorie, R)."""
    joule = 1000.0 * scipy.constants.calorie
    return [-(b - reference_kcal_mol) * joule / (scipy.constants.R * T * math.log(10.0)) for b in barriers_kcal_mol]


def test_fit_agrees_with_scipy_linregress():
    barriers = {"OMe": 21.40, "H": 20.95, "Cl": 20.20, "CF3": 19.85}  # hand-set, not on a line
    jobs = [member_job(n, b) for n, b in barriers.items()]
    (record,) = series_records([series_config()], jobs, T, "electronic")
    y = independent_log10_k(list(barriers.values()), barriers["H"])
    fit = scipy.stats.linregress([SIGMA_P[n] for n in barriers], y)
    assert record.reference_substrate == "H"  # the sigma = 0 member is k0
    assert record.rho == pytest.approx(fit.slope, abs=1e-3)
    assert record.intercept == pytest.approx(fit.intercept, abs=1e-3)
    assert record.r_squared == pytest.approx(fit.rvalue ** 2, abs=1e-3)
    assert record.n_fitted == 4 and record.note is None
    for point, expected in zip(record.points, y):
        assert point.status == "ok" and point.log10_k_rel == pytest.approx(expected, abs=1e-3)
        assert point.path == "C1-H4 anti" and point.barrier_source == "verified saddle"  # the fixture class, numbered from 1


def test_barriers_on_the_published_line_give_back_the_published_rho():
    # barriers spaced as rho = +2.1 demands: electron-withdrawing groups lower the barrier (DePuy & Bishop 1960)
    rt_ln10 = scipy.constants.R * T * math.log(10.0) / (1000.0 * scipy.constants.calorie)
    jobs = [member_job(n, 20.0 - RHO_ARYLETHYL_BROMIDES * SIGMA_P[n] * rt_ln10) for n in ("OMe", "H", "Cl", "CF3")]
    (record,) = series_records([series_config()], jobs, T, "electronic")
    assert record.rho == pytest.approx(RHO_ARYLETHYL_BROMIDES, abs=1e-3)
    assert record.r_squared == pytest.approx(1.0, abs=1e-4)
    assert record.intercept == pytest.approx(0.0, abs=1e-3)


def test_missing_members_are_data_and_the_fit_uses_the_rest():
    jobs = [member_job("OMe", 21.4), member_job("H", 20.9), member_job("Cl", None, status="failed"),
            member_job("CF3", 19.9), member_job("NO2", None)]  # NO2: its only path failed
    jobs.append(member_job("Cl", 5.0, base="ethoxide"))  # another base's job does not count
    config = series_config(("OMe", "H", "Cl", "CF3", "NO2"))
    (record,) = series_records([config], jobs, T, "electronic")
    status = {p.substrate: p for p in record.points}
    assert status["Cl"].status == "missing" and "failed (scf_not_converged)" in status["Cl"].note
    assert status["NO2"].status == "missing" and "no computed E2 barrier" in status["NO2"].note
    assert status["Cl"].barrier_kcal_mol is None and status["Cl"].log10_k_rel is None
    assert record.n_fitted == 3
    fit = scipy.stats.linregress([SIGMA_P[n] for n in ("OMe", "H", "CF3")], independent_log10_k([21.4, 20.9, 19.9], 20.9))
    assert record.rho == pytest.approx(fit.slope, abs=1e-3)


def test_too_few_members_with_a_barrier_keep_their_points_but_no_fit():
    jobs = [member_job("OMe", 21.4), member_job("CF3", 19.9)]  # H has no job at all
    (record,) = series_records([series_config()], jobs, T, "electronic")
    assert record.rho is None and record.r_squared is None and record.n_fitted == 0
    assert "2 of 4 members" in record.note
    missing = {p.substrate: p.note for p in record.points if p.status == "missing"}
    assert set(missing) == {"H", "Cl"} and "no finished job" in missing["H"]
    # without the sigma = 0 member, k0 is the first member with a barrier
    assert record.reference_substrate == "OMe"
    ok = {p.substrate: p.log10_k_rel for p in record.points if p.status == "ok"}
    assert ok["OMe"] == 0.0
    assert ok["CF3"] == pytest.approx(independent_log10_k([19.9], 21.4)[0], abs=1e-3)


def test_free_energy_series_uses_dg_and_leaves_out_paths_without_one():
    jobs = [member_job("OMe", 1.0, free=12.0), member_job("H", 2.0, free=11.5), member_job("Cl", 3.0, free=None),
            member_job("CF3", 4.0, free=10.5)]
    (record,) = series_records([series_config()], jobs, T, "free")
    assert record.energy_used == "free"
    points = {p.substrate: p for p in record.points}
    assert points["OMe"].barrier_kcal_mol == 12.0 and points["Cl"].status == "missing"
    assert "free energy" in points["Cl"].note
    assert record.rho > 0  # dG falls from OMe to CF3 while dE rises: the free energies were used
    (electronic,) = series_records([series_config()], jobs, T, "electronic")
    assert electronic.rho < 0


def test_lowest_barrier_takes_syn_paths_and_unverified_maxima_into_account():
    job = member_job("H", 20.0)
    beta = job.beta_hydrogens[0]
    syn = beta.syn.model_copy(update={"path_status": "ok", "barrier_kcal_mol": 18.5, "barrier_source": "relaxed-path maximum"})
    job = job.model_copy(update={"beta_hydrogens": (beta.model_copy(update={"syn": syn}),)})
    assert lowest_e2_barrier(job, "electronic") == (18.5, "C1-H4 syn", "relaxed-path maximum")


def test_one_record_per_series_and_solvent():
    methanol, ethanol = SolventConfig(model="alpb", name="methanol"), SolventConfig(model="alpb", name="ethanol")
    jobs = [member_job(n, 20.0 - SIGMA_P[n], solvent=s) for s in (methanol, ethanol) for n in ("OMe", "H", "Cl", "CF3")]
    records = series_records([series_config()], jobs, T, "electronic")
    assert [r.solvent for r in records] == [methanol, ethanol]
    assert all(r.n_fitted == 4 for r in records)
    assert len({series_plot_name(r) for r in records}) == 2


def test_plot_report_and_result_file(tmp_path):
    barriers = {"OMe": 21.40, "H": 20.95, "Cl": None, "CF3": 19.85}
    jobs = [member_job(n, b) for n, b in barriers.items()]
    base = template()
    config = RunConfig(method=base.config.method, substrates=tuple(SubstrateConfig(name=n, smiles="CCBr") for n in barriers),
                       bases=(BaseConfig(name="methoxide"),), series=(series_config(),))
    series = series_records(config.series, jobs, T, config.analysis.energy)
    result = base.model_copy(update={"config": config, "jobs": tuple(jobs), "series": series})
    (tmp_path / "results.json").write_text(result.model_dump_json(indent=2), encoding="utf-8")
    assert validate_result_file(tmp_path / "results.json") == []
    files = build_report_files(tmp_path)
    name = series_plot_name(series[0])
    assert files[f"{name}.png"].startswith(b"\x89PNG\r\n\x1a\n")
    svg = figure_svg(series_figure(series[0]))
    assert "\u03c1 = " in svg and "r\u00b2" in svg and "(kcal/mol)" in svg and "\u03c3" in svg
    assert "Cl: missing" in svg
    page = files["report.html"].decode("utf-8")
    assert 'id="series"' in page and page.count('class="series-row"') == 4
    assert f"\u03c1 = {series[0].rho:+.2f}" in page  # rho 1.42 here: positive, so no minus sign to translate
    assert "Hansch, Leo &amp; Taft 1991" in page
    text = summary_table(result)
    assert f"rho {series[0].rho:+.2f}" in text and "series para-X" in text
    assert figure_png(series_figure(series[0])).startswith(b"\x89PNG")
    rows = list(csv.DictReader(io.StringIO(files["series.csv"].decode("utf-8"))))
    assert [r["substrate"] for r in rows] == list(barriers)
    for row, point in zip(rows, series[0].points):
        assert row["status"] == point.status and float(row["sigma"]) == point.sigma
        if point.status == "ok":  # a member's row carries its own barrier and log10(k/k0)
            assert float(row["barrier_kcal_mol"]) == pytest.approx(barriers[row["substrate"]], abs=5e-4)
            assert float(row["log10_k_rel"]) == pytest.approx(point.log10_k_rel, abs=5e-5)
        else:
            assert row["barrier_kcal_mol"] == "" and row["note"]
        assert float(row["rho"]) == pytest.approx(series[0].rho, abs=5e-5)
    assert "series.csv" not in build_report_files(FIXTURE.parent)  # no series, no file
    # read back through the plain JSON: the series is in the document
    assert json.loads((tmp_path / "results.json").read_text())["series"][0]["points"][2]["status"] == "missing"


YAML_HEAD = """
substrates:
  - {name: a, smiles: "COc1ccc(CCBr)cc1"}
  - {name: b, smiles: "BrCCc1ccccc1"}
  - {name: c, smiles: "Clc1ccc(CCBr)cc1"}
bases:
  - {name: ethoxide}
  - {name: methoxide}
"""


@pytest.mark.parametrize("series, words", [
    ("[{name: s1, base: ethoxide, members: [{substrate: a, sigma: -0.27}, {substrate: b, sigma: 0}, "
     "{substrate: z, sigma: 0.23}]}]", ("series 's1' member 2 ('z')", "unknown substrate")),
    ("[{name: s1, base: hydride, members: [{substrate: a, sigma: -0.27}, {substrate: b, sigma: 0}, "
     "{substrate: c, sigma: 0.23}]}]", ("series 's1'", "unknown base 'hydride'")),
    ("[{name: s1, base: ethoxide, members: [{substrate: a, sigma: -0.27}, {substrate: b, sigma: 0}]}]",
     ("series 's1'", "at least 3")),
    ("[{name: s1, base: ethoxide, members: [{substrate: a, sigma: -0.27}, {substrate: b, sigma: 0}, "
     "{substrate: a, sigma: 0.23}]}]", ("series 's1' member 2", "repeats substrate 'a'")),
    ("[{name: s1, base: ethoxide, members: [{substrate: a, sigma: 0.1}, {substrate: b, sigma: 0.1}, "
     "{substrate: c, sigma: 0.1}]}]", ("series 's1'", "no slope")),
    ("[{name: s1, base: ethoxide, members: [{substrate: a, sigma: .nan}, {substrate: b, sigma: 0}, "
     "{substrate: c, sigma: 0.23}]}]", ("series.0.members.0.sigma",)),
    ("[{name: s1, base: ethoxide, members: [{substrate: a, sig: -0.27}]}]", ("unknown key 'sig'", "sigma")),
    ("[" + ", ".join("{name: '%s', base: ethoxide, members: [{substrate: a, sigma: -0.27}, {substrate: b, sigma: 0}, "
                     "{substrate: c, sigma: 0.23}]}" % name for name in ("para/X", "para X")) + "]",
     ("names 'para/X' and 'para X' both become the file name 'para_X'",)),  # one plot file for both
])
def test_config_errors_name_the_series_and_member(series, words):
    with pytest.raises(ConfigError) as caught:
        parse_config(YAML_HEAD + "series: " + series + "\n")
    text = f"{caught.value} {getattr(caught.value, 'key_path', '')}"
    for word in words:
        assert word in text, text


def test_series_member_must_be_a_job_when_pairs_are_given():
    with pytest.raises(ConfigError, match="member 2 \\('c'\\): 'pairs' has no job of this substrate with base 'ethoxide'"):
        parse_config(YAML_HEAD + "pairs: [{substrate: a, base: ethoxide}, {substrate: b, base: ethoxide}, "
                     "{substrate: c, base: methoxide}]\nseries: [{name: s1, base: ethoxide, members: ["
                     "{substrate: a, sigma: -0.27}, {substrate: b, sigma: 0}, {substrate: c, sigma: 0.23}]}]\n")


def test_demo_config_carries_the_published_sigma_values():
    config = parse_config((ROOT / "configs" / "hammett-series.yaml").read_text(encoding="utf-8"))
    (series,) = config.series
    smiles = {s.name: s.smiles for s in config.substrates}
    by_group = {"COc1ccc(CCBr)cc1": "OMe", "BrCCc1ccccc1": "H", "Clc1ccc(CCBr)cc1": "Cl", "FC(F)(F)c1ccc(CCBr)cc1": "CF3"}
    assert {by_group[smiles[m.substrate]]: m.sigma for m in series.members} == {k: SIGMA_P[k] for k in ("OMe", "H", "Cl", "CF3")}
    assert {series.base} == {b.name for b in config.bases} and "Hansch" in series.sigma_source
    assert [(s.name, b.name) for s, b in config.jobs()] == [(m.substrate, "ethoxide") for m in series.members]


#: tiny batch settings (as in tests/batch/test_batch.py): the numbers are not compared with chemistry here
TINY_BATCH = """\
name: series-batch
optimizer: {name: bfgs, fmax_eV_per_A: 0.05}
conformers: {base_embeddings: 2, per_rotatable_bond: 1, max_relaxations: 2}
scan: {step_deg: 60}
paths: {approaches: [anti], base_rotations: 1, substitution: false, saddle: {refine: false}}
method: {solvent: {model: alpb, name: ethanol}}
substrates:
  - {name: H, smiles: "ClCCc1ccccc1"}
substrates_file: more.csv
bases:
  - {name: methoxide, model: bare}
series:
  - name: para-X 2-arylethyl chlorides
    base: methoxide
    members: [{substrate: OMe, sigma: -0.27}, {substrate: H, sigma: 0.0}, {substrate: Cl, sigma: 0.23},
              {substrate: CF3, sigma: 0.54}]
"""


@pytest.mark.xtb
def test_a_batch_carries_the_series_in_results_and_batch_json(tmp_path):
    # Plumbing through `elimscan batch` (small settings, one worker; the driven paths keep their default length,
    # since a path that stops short of its products is no barrier and makes no series point): members from the
    # YAML and from the CSV,
    # one member (CF3) with an unusable SMILES, whose job fails on its input, so missing. Both documents carry
    # the same series record, recomputed here from the jobs of results.json, and both validate against the
    # schema exported from records.py.
    import subprocess
    import sys

    (tmp_path / "more.csv").write_text("name,smiles\nOMe,COc1ccc(CCCl)cc1\nCl,Clc1ccc(CCCl)cc1\nCF3,FC(F)(F)c1ccc(CCCl)cc\n")
    (tmp_path / "batch.yaml").write_text(TINY_BATCH)
    out = tmp_path / "out"
    done = subprocess.run([sys.executable, "-m", "elimscan", "batch", str(tmp_path / "batch.yaml"), "--out", str(out),
                           "--workers", "1"], capture_output=True, text=True, timeout=900)
    assert done.returncode == 5, done.stderr  # "finished with some jobs failed" (the CF3 row)
    assert validate_result_file(out / "results.json") == [] and validate_result_file(out / "batch.json") == []
    result = RunResult.model_validate_json((out / "results.json").read_text())
    (record,) = result.series
    points = {p.substrate: p for p in record.points}
    assert points["CF3"].status == "missing" and "failed" in points["CF3"].note
    assert all(points[n].status == "ok" for n in ("OMe", "H", "Cl")) and record.n_fitted == 3
    assert record.solvent == SolventConfig(model="alpb", name="ethanol")
    again = series_records(result.config.series, result.jobs, result.config.method.temperature_K, "electronic")
    assert result.series == again
    index = json.loads((out / "batch.json").read_text())
    assert index["series"] == json.loads(result.model_dump_json())["series"]
    assert (out / f"{series_plot_name(record)}.png").is_file()


def test_a_batch_refuses_a_series_member_that_is_nowhere(tmp_path):
    from elimscan.batch.plan import plan_batch

    (tmp_path / "more.csv").write_text("name,smiles\nOMe,COc1ccc(CCCl)cc1\nCl,Clc1ccc(CCCl)cc1\n")
    (tmp_path / "batch.yaml").write_text(TINY_BATCH)
    config = parse_config(TINY_BATCH)
    with pytest.raises(ConfigError, match="series 'para-X 2-arylethyl chlorides' member 3 \\('CF3'\\): no such substrate") as caught:
        plan_batch(config, tmp_path / "batch.yaml")
    assert caught.value.key_path == "series.0.members.3.substrate"


def test_a_series_leaves_the_batch_job_keys_alone(tmp_path):
    # the series only reads finished jobs: adding one must not make a finished batch recompute anything
    from elimscan.batch.plan import plan_batch

    (tmp_path / "more.csv").write_text("name,smiles\nOMe,COc1ccc(CCCl)cc1\nCl,Clc1ccc(CCCl)cc1\nCF3,FC(F)(F)c1ccc(CCCl)cc1\n")
    (tmp_path / "batch.yaml").write_text(TINY_BATCH)
    with_series = plan_batch(parse_config(TINY_BATCH), tmp_path / "batch.yaml")
    without = plan_batch(parse_config(TINY_BATCH.split("series:")[0]), tmp_path / "batch.yaml")
    assert [j.key for j in with_series.jobs] == [j.key for j in without.jobs] and len(without.jobs) == 4
