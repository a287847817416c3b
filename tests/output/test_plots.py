"""The figures against the raw JSON and outside references: ASE's ``Atoms.get_dihedral`` for the Newman
projections' dihedrals, RDKit's bond graph from the SMILES for the bonds they draw; and the one table of a
job's plot kinds, which the plot files and the report share.
"""

from __future__ import annotations

import re

import ase.io
import pytest
from rdkit import Chem

from elimscan.geometry import wrap_degrees
from elimscan.output.files import read_scan_frames
from elimscan.output.html.jobsection import PLOT_WORDS
from elimscan.output.html.page import render_report
from elimscan.output.plots.figures import figure_svg
from elimscan.output.plots.jobplots import JOB_PLOT_KINDS, drawn_kinds, job_figures, plot_name, shown_kinds
from elimscan.output.plots.newman import closest_frame, newman_figure, newman_inputs, newman_view
from elimscan.output.plots.paths import path_figure
from elimscan.output.plots.products import product_figure
from elimscan.output.plots.scans import scan_figure
from elimscan.results.documents import RunResult

from reportfixture import ALL_RUNS, FIXTURES, PRIMARY, RUNS, approaches, computed, parse, raw, result, words_of


@pytest.mark.parametrize("run", RUNS)
def test_path_plot_has_a_line_per_path_and_a_mark_per_saddle(run, built):
    doc, res = raw(run), result(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    for job, record, section in zip(doc["jobs"], res.jobs, page.sections):
        paths = computed(job)
        ax = path_figure(record).axes[0]
        lines = {ln.get_gid(): ln for ln in ax.get_lines() if ln.get_gid()}
        assert sorted(k for k in lines if k.startswith("path-")) == sorted(f"path-{b['class_id']}-{n}" for b, n, _ in paths)
        assert sorted(k for k in lines if k.startswith("saddle-")) == sorted(f"saddle-{b['class_id']}-{n}" for b, n, _ in paths)
        for beta, name, approach in paths:
            line = lines[f"path-{beta['class_id']}-{name}"]
            assert list(line.get_xdata()) == [p["coordinate_A"] for p in approach["path"]]
            assert list(line.get_ydata()) == [p["relative_energy_kcal_mol"] for p in approach["path"]]
            assert line.get_linestyle() == ("-" if name == "anti" else "--")
            mark = lines[f"saddle-{beta['class_id']}-{name}"]
            top = max(approach["path"], key=lambda p: p["relative_energy_kcal_mol"])
            energy = approach["barrier_kcal_mol"] if approach["barrier_source"] == "verified saddle" \
                else approach["relaxed_path_estimate_kcal_mol"]
            assert (mark.get_xdata()[0], mark.get_ydata()[0]) == (top["coordinate_A"], energy)
            assert (mark.get_markerfacecolor() == "white") == (not approach["saddle_verified"])  # open: unverified
            assert line.get_color() == mark.get_markeredgecolor()
        # the page carries this plot: one element per path and per saddle in the section's inline SVG
        ids = [i for i in section["svg_ids"] if re.search(r"-(path|saddle)-C\d+-H\d+-(anti|syn)$", i)]
        assert len([i for i in ids if "-path-" in i]) == len(paths) == len([i for i in ids if "-saddle-" in i])


@pytest.mark.parametrize("run", ALL_RUNS)
def test_character_plot_has_a_point_per_saddle_with_a_character(run, built):
    doc, res = raw(run), result(run)
    page = parse(built[run]["report.html"].decode("utf-8"))
    total = 0
    for job, record, section in zip(doc["jobs"], res.jobs, page.sections):
        expected = {f"character-{b['class_id']}-{n}": (a["saddle_character"]["c_h_cleavage"],
                                                       a["saddle_character"]["c_x_cleavage"])
                    for b, n, a in approaches(job) if a["saddle_verified"] and a.get("saddle_character")}
        name = plot_name(job["job_id"], "character")
        figures = job_figures(record, 150.0, 30.0, 3.0, {})
        assert (name in figures) == bool(expected)
        assert (f"{name}.png" in built[run]) == bool(expected)
        if not expected:
            continue
        ax = figures[name].axes[0]
        points = {ln.get_gid(): (ln.get_xdata()[0], ln.get_ydata()[0]) for ln in ax.get_lines()
                  if (ln.get_gid() or "").startswith("character-C")}
        assert points == expected
        assert all(0.0 <= v <= 1.0 for xy in points.values() for v in xy)
        assert (ax.get_xlim(), ax.get_ylim()) == ((-0.05, 1.05), (-0.05, 1.05))
        corners = " ".join(t.get_text() for t in ax.texts)
        for words in ("reactant", "alkene + conjugate acid + X", "carbanion intermediate", "carbocation intermediate"):
            assert words in corners, words
        # and the page carries it: one inline-SVG element per point
        ids = [i for i in section["svg_ids"] if re.search(r"-character-C\d+-H\d+-(anti|syn)$", i)]
        assert len(ids) == len(expected)
        total += len(expected)
    assert (total > 0) == (run == PRIMARY)


def _label_number(svg: str) -> float:
    """Return the dihedral printed in a Newman SVG ('... = −174.2°'), as a float in degrees."""
    found = re.findall(r"=\s*([\u2212\-]?\d+\.\d)\u00b0", svg)
    assert len(found) == 1, found
    return float(found[0].replace("\u2212", "-"))


@pytest.mark.parametrize("run", RUNS)
def test_newman_dihedral_and_bonds_agree_with_ase_and_rdkit(run):
    res = result(run)
    frames = read_scan_frames(FIXTURES / run, res)
    smiles = {m.name: m.smiles for m in res.molecules}
    checked = 0
    for job in res.jobs:
        graph = Chem.AddHs(Chem.MolFromSmiles(smiles[job.substrate]))  # atom order of results.json
        for beta in job.beta_hydrogens:
            for target in (180.0, 0.0):
                atoms, quad, _ = newman_inputs(beta, job, frames, target)
                h, cb, ca, x = quad
                reference = wrap_degrees(atoms.get_dihedral(h, cb, ca, x))  # ASE: an independent implementation
                view = newman_view(atoms, *quad)
                svg = figure_svg(newman_figure(view, atoms.get_chemical_symbols(), "t"))
                assert _label_number(svg) == pytest.approx(reference, abs=0.051)
                # drawn from the coordinates: X sits the dihedral clockwise from H (IUPAC sign)
                spoke_x = next(s for s in view.back if s.index == x)
                spoke_h = next(s for s in view.front if s.index == h)
                assert spoke_h.angle_deg == pytest.approx(0.0, abs=1e-9)
                assert wrap_degrees(spoke_x.angle_deg - reference) == pytest.approx(0.0, abs=1e-6)
                # the bonds drawn are the SMILES bonds (RDKit's graph), whatever the geometry
                assert {s.index for s in view.front} == {n.GetIdx() for n in graph.GetAtomWithIdx(cb).GetNeighbors()} - {ca}
                assert {s.index for s in view.back} == {n.GetIdx() for n in graph.GetAtomWithIdx(ca).GetNeighbors()} - {cb}
                # the frame used is the one closest to the target among all frames of the class, by ASE
                pool = [a for s in beta.scans for a in ase.io.read(FIXTURES / run / s.xyz_file, index=":")]
                best = min(abs(wrap_degrees(a.get_dihedral(h, cb, ca, x) - target)) for a in pool)
                assert abs(wrap_degrees(reference - target)) == pytest.approx(best, abs=1e-9)
                checked += 1
    assert checked == 2 * sum(len(j.beta_hydrogens) for j in res.jobs)


def test_closest_frame_picks_the_nearest_dihedral_across_the_wrap():
    atoms = ase.io.read(FIXTURES / "halobutane" / "substrates" / "s-2-bromobutane" / "scan-C3-H9-0.xyz", index=":")
    quad = (9, 3, 1, 2)
    k = closest_frame(atoms, quad, 180.0)
    # the scan holds -177.26° and 167.74°: -177.26 is 2.74° from 180 across the wrap
    assert wrap_degrees(atoms[k].get_dihedral(*quad)) == pytest.approx(-177.26, abs=0.01)


def test_scan_plot_draws_every_point_of_the_json():
    res = result("ring")
    job = res.jobs[0]
    fig = scan_figure(job, 150.0, 30.0, 3.0)
    ax = fig.axes[0]
    drawn = set()
    for line in ax.get_lines():
        for xv, yv in zip(line.get_xdata(), line.get_ydata()):
            if -180.0 < xv <= 180.0:
                drawn.add((round(float(xv), 2), round(float(yv), 3)))
    for beta in job.beta_hydrogens:
        for scan in beta.scans:
            for p in scan.points:
                if p.relative_energy_kcal_mol is not None:
                    assert (p.dihedral_deg, p.relative_energy_kcal_mol) in drawn, (beta.class_id, p)
    caps = [ln for ln in ax.get_lines() if ln.get_marker() == "x" and len(ln.get_xdata())]
    assert sum(len(ln.get_xdata()) for ln in caps) == sum(
        p.status == "above_cap" for b in job.beta_hydrogens for s in b.scans for p in s.points)
    spans = sorted(round(p.get_x(), 6) for p in ax.patches)  # anti and syn windows from the values given
    assert spans == [-180.0, -30.0, 150.0]


def test_product_chart_draws_fractions_only_when_given():
    products = result("halobutane").jobs[0].products
    assert len(product_figure(products).axes) == 1
    fig = product_figure(products, {products[0].smiles: (0.7, 0.6, 0.8)})
    assert len(fig.axes) == 2
    bars = [p for p in fig.axes[1].patches if p.get_width() > 0]
    assert [round(b.get_width(), 6) for b in bars] == [70.0]


def test_svg_is_byte_identical_on_rebuild_and_undated():
    job = result("halobutane").jobs[0]
    one = figure_svg(job_figures(job, 150.0, 30.0, 3.0, {})[plot_name(job.job_id, "scan")])
    two = figure_svg(job_figures(job, 150.0, 30.0, 3.0, {})[plot_name(job.job_id, "scan")])
    assert one == two
    assert "<dc:date>" not in one


@pytest.mark.parametrize("run", ALL_RUNS)
def test_the_plot_files_and_the_report_hold_the_kinds_of_one_table(run, built):
    # plots.jobplots.JOB_PLOT_KINDS alone says which plots a job has: the PNG files, the page built from them
    # and the page that draws its plots itself (no assets given) hold the same kinds
    res = result(run)
    assert set(PLOT_WORDS) == {k.kind for k in JOB_PLOT_KINDS}
    drawn = {plot_name(j.job_id, k) for j in res.jobs for k in drawn_kinds(j)}
    assert {n.removesuffix(".png") for n in built[run] if n.endswith(".png") and "-newman-" not in n} == drawn
    for page in (parse(built[run]["report.html"].decode("utf-8")), parse(render_report(res, {}))):
        for job, section in zip(res.jobs, page.sections):
            prefixes = {k.kind: plot_name(job.job_id, k.kind).replace("/", "-") + "-" for k in JOB_PLOT_KINDS}
            inline = {k for k, prefix in prefixes.items() if any(i.startswith(prefix) for i in section["svg_ids"])}
            assert inline == set(drawn_kinds(job)) & set(shown_kinds(job)) == set(drawn_kinds(job))


def test_barriers_without_path_points_keep_the_path_heading_and_say_there_is_no_plot():
    # results written before the path points were kept: barriers, so the heading, but nothing to draw
    doc = raw("halobutane")
    for job in doc["jobs"]:
        for _, _, approach in approaches(job):
            approach["path"] = []
    res = RunResult.model_validate(doc)
    assert all("paths" in shown_kinds(j) and "paths" not in drawn_kinds(j) for j in res.jobs)
    assert words_of(render_report(res, {})).count("Relaxed E2 paths No path plot.") == len(res.jobs)
