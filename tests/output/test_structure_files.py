"""Structures one click away: complex and product-side geometries beside the path files, links that reach them,
the energy profile, the 3D saddle views, and the batch report as an index plus one small page per job.

The batch computes on the toy engine of ``toyjobs.py`` (seconds, no GFN2-xTB): the numbers are the toy model's,
what is checked is the files, the links and the pages.
"""

from __future__ import annotations

import json
import re
import shutil
import time
from pathlib import Path

import ase.io
import numpy as np
import pytest
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.text import Text

from elimscan.output.files import build_report_files, read_result
from elimscan.output.html.batchpages import job_page_name, render_index
from elimscan.output.html.structures import StructureLinks, saddle_views
from elimscan.output.plots.character import character_figure
from elimscan.output.plots.profile import profile_figure, profile_lines
from elimscan.pipeline.artifacts import xyz_bytes
from elimscan.results.records import SaddleCharacterRecord
from toyjobs import TOY_SETTINGS, toy_output

from reportfixture import PRIMARY, browser, result

#: screenshots and measurements of the browser tests land here (ignored by git, like every results/ folder)
ARTEFACTS = Path(__file__).resolve().parents[2] / "results" / "test-artefacts"

CONFIG = TOY_SETTINGS.replace("substitution: false", "substitution: true") + """\
name: structures
substrates:
  - {name: chloroethane, smiles: "CCCl"}
  - {name: 2-chloropropane, smiles: "CC(C)Cl"}
bases:
  - {name: methoxide}
executor: {workers: 1}
"""
#: a job page of the toy batch measured 31.6 and 34.4 KB (with plots as PNG files; the same jobs inline in one page:
#: about 124 KB each): the bound leaves room for larger molecules and more classes
JOB_PAGE_MAX_BYTES = 60_000


@pytest.fixture(scope="module")
def batch(tmp_path_factory) -> Path:
    """Return the output folder of a two-job toy batch with E2 and SN2 paths."""
    return toy_output("batch", CONFIG, tmp_path_factory.mktemp("structures"))


def _blocks(job):
    """Return (label, record block) of every computed path of a job, E2 and SN2."""
    found = [(f"{b.class_id} {n}", getattr(b, n)) for b in job.beta_hydrogens for n in ("anti", "syn")
             if getattr(b, n).path_status == "ok"]
    if job.substitution is not None and job.substitution.path_status == "ok":
        found.append(("SN2", job.substitution))
    return found


def test_complex_and_product_geometries_are_written_beside_the_path_files(batch):
    res = read_result(batch)
    checked = 0
    for job in res.jobs:
        for label, block in _blocks(job):
            path = ase.io.read(batch / block.path_file, index=":")
            assert Path(block.complex_file).parent == Path(block.path_file).parent, label
            complex_, = ase.io.read(batch / block.complex_file, index=":")
            product, = ase.io.read(batch / block.product_file, index=":")
            assert len(complex_) == len(product) == len(path[0]), label
            assert complex_.get_chemical_symbols() == path[0].get_chemical_symbols()
            np.testing.assert_allclose(product.positions, path[-1].positions, atol=1e-6)  # the last path point
            assert complex_.info["what"] == "base-substrate complex"
            assert "product side" in product.info["what"] or "not reached" in product.info["what"]
            energy = getattr(block, "complex_energy_kcal_mol")
            assert energy == pytest.approx(complex_.info["relative_energy_kcal_mol"], abs=1e-3), label
            checked += 1
    assert checked >= 3  # two E2 paths and the SN2 paths


def test_every_structure_link_of_the_page_reaches_a_file_that_exists(batch):
    files = build_report_files(batch)
    page = files["report.html"].decode("utf-8")
    links = re.findall(r'<a class="structure-link"[^>]*href="([^"]+)"', page)
    assert links and all((batch / href).is_file() for href in links), links
    res = read_result(batch)
    for job in res.jobs:
        assert f'href="{job.conformer_file}"' in page
        for _, block in _blocks(job):
            for name in ("path_file", "complex_file", "product_file"):
                assert f'href="{getattr(block, name)}"' in page
    # the beta table has a files cell per row with the row's own anti links
    rows = re.findall(r'<tr class="beta-row" data-class="([^"]+)">(.*?)</tr>', page, flags=re.S)
    assert rows and all('class="files"' in body for _, body in rows)
    for class_id, body in rows:
        assert f"path-{class_id}-anti.xyz" in body


def test_the_energy_profile_is_drawn_for_every_job_with_paths(batch):
    files = build_report_files(batch)
    res = read_result(batch)
    for job in res.jobs:
        png = files[f"plots/{job.job_id}-profile.png"]
        assert png[:8] == b"\x89PNG\r\n\x1a\n"
        lines = profile_lines(job)
        assert [line.label for line in lines][-1] == "SN2 backside"
        assert len(lines) == 1 + sum(1 for label, _ in _blocks(job) if label != "SN2")
        for line in lines:
            assert line.levels_kcal_mol[0] == 0.0 and line.levels_kcal_mol[1] is not None and line.levels_kcal_mol[3] is not None
        drawn = {a.get_gid() for a in profile_figure(job).axes[0].get_lines() if a.get_gid()}
        assert drawn == {line.gid for line in lines}


def test_the_index_lists_every_job_and_each_job_page_is_small(batch):
    files = build_report_files(batch, single_page_max_jobs=0)
    index = files["report.html"].decode("utf-8")
    res = read_result(batch)
    pages = re.findall(r'<a class="job-link" href="([^"]+)">([^<]+)</a>', index)
    assert [name for _, name in pages] == [j.job_id for j in res.jobs]
    for href, _ in pages:
        assert href in files and href == job_page_name(next(j for j in res.jobs if href.endswith(f"{j.job_id}.html")))
        page = files[href]
        assert len(page) < JOB_PAGE_MAX_BYTES, (href, len(page))
        text = page.decode("utf-8")
        assert "not safety data" in text  # the caution on every page
        for src in re.findall(r'<img class="plot" src="\.\./([^"]+)"', text):
            assert src in files, src  # every plot image is a PNG of the run
        for link in re.findall(r'<a class="structure-link"[^>]*href="\.\./([^"]+)"', text):
            assert (batch / link).is_file(), link
    assert 'id="job-filter"' in index and "sortable" in index


def test_a_saddle_view_carries_its_frames_and_links_its_file():
    job = result(PRIMARY).jobs[0]
    rel = job.beta_hydrogens[0].anti.saddle_file
    frames = [(["C", "H"], [[0.0, 0.0, 0.0], [1.1 + 0.1 * k, 0.0, 0.0]]) for k in range(3)]
    html = saddle_views(job, StructureLinks("../", frozenset({rel}), {rel: frames}))
    assert html.count('<canvas class="mode-view"') == 1
    data = json.loads(re.search(r'<script type="application/json" class="mode-frames">(.*?)</script>', html).group(1))
    # the saddle frame is left out (the middle frame along the mode is the saddle again); x y z in 0.01 Å
    assert data["symbols"] == ["C", "H"] and data["unit_A"] == 0.01
    assert data["frames"] == [[0, 0, 0, 120, 0, 0], [0, 0, 0, 130, 0, 0]]
    assert f'href="../{rel}"' in html
    assert saddle_views(job, StructureLinks("", frozenset(), {})) == ""  # no frames, no SN2 file: nothing


def test_labels_of_close_saddles_on_the_character_map_do_not_overlap():
    job = result(PRIMARY).jobs[0]
    beta = job.beta_hydrogens[0]
    near = beta.anti.saddle_character
    moved = SaddleCharacterRecord(c_h_cleavage=near.c_h_cleavage + 0.01, c_x_cleavage=near.c_x_cleavage + 0.01,
                                  label=near.label)
    twin = beta.model_copy(update={"class_id": "C9-H99", "anti": beta.anti.model_copy(update={"saddle_character": moved})})
    job = job.model_copy(update={"beta_hydrogens": (beta, twin)})
    fig = character_figure(job)
    renderer = FigureCanvasAgg(fig).get_renderer()
    fig.draw(renderer)
    texts = fig.findobj(lambda a: isinstance(a, Text) and a.get_visible() and a.get_text().strip())
    boxes = [(t.get_text(), t.get_window_extent(renderer)) for t in texts]
    labels = [(s, b) for s, b in boxes if "C9-H99" in s or beta.class_id in s]
    assert len(labels) == 2
    assert not labels[0][1].overlaps(labels[1][1])
    for s, b in boxes:  # no other text of the figure lies over a saddle's label
        for name, box in labels:
            assert s == name or not box.overlaps(b) or s.startswith("saddle:"), (s, name)


# --- in a browser: the index, a job page, a structure file, a saddle moving ----------------------------------------


def _with_a_saddle_file(out: Path) -> str:
    """Give the first E2 path of the toy batch a saddle file as a run writes one (the path's highest point, then
    frames along the path's tangent there as a stand-in for the imaginary mode); return its relative path.

    The toy batch refines no saddle (seconds instead of minutes); the view only needs frames, and these are real
    geometries of the toy path.
    """
    data = json.loads((out / "results.json").read_text())
    anti = data["jobs"][0]["beta_hydrogens"][0]["anti"]
    images = ase.io.read(out / anti["path_file"], index=":")
    top = max(range(1, len(images) - 1), key=lambda k: images[k].info["energy_hartree"])
    tangent = images[top + 1].positions - images[top - 1].positions
    tangent /= np.linalg.norm(tangent)
    frames, infos = [images[top]], [{"frame": "saddle"}]
    for amplitude in np.linspace(-0.3, 0.3, 13):
        frame = images[top].copy()
        frame.positions = frame.positions + amplitude * tangent
        frames.append(frame)
        infos.append({"frame": "mode", "mode_amplitude_A": float(amplitude)})
    rel = anti["path_file"].replace("/path-", "/saddle-")
    (out / rel).write_bytes(xyz_bytes(frames, infos, "toy"))
    anti["saddle_file"] = rel
    (out / "results.json").write_text(json.dumps(data))
    return rel


def test_index_job_page_structure_file_and_moving_saddle_in_headless_chromium(batch, tmp_path):
    out = tmp_path / "out"
    shutil.copytree(batch, out)
    saddle = _with_a_saddle_file(out)
    for name, content in build_report_files(out, single_page_max_jobs=0).items():
        (out / name).parent.mkdir(parents=True, exist_ok=True)
        (out / name).write_bytes(content)
    res = read_result(out)
    driver = browser(tmp_path / "profile")
    try:
        driver.get((out / "report.html").as_uri())
        rows = "return Array.from(document.querySelectorAll('#job-index tbody tr'), r => [r.cells[0].textContent, r.hidden]);"
        assert [name for name, _ in driver.execute_script(rows)] == [j.job_id for j in res.jobs]
        box = driver.find_element("id", "job-filter")
        box.send_keys("2-chloropropane")
        assert [name for name, hidden in driver.execute_script(rows) if not hidden] == ["2-chloropropane__methoxide"]
        box.clear()
        driver.execute_script("document.getElementById('job-filter').dispatchEvent(new Event('input'));")
        assert not any(hidden for _, hidden in driver.execute_script(rows))
        # follow the first job's link to its page
        driver.find_element("css selector", "a.job-link").click()
        assert driver.current_url.endswith(job_page_name(res.jobs[0]))
        images = driver.execute_script("return Array.from(document.images, i => [i.complete, i.naturalWidth]);")
        assert images and all(done and width > 0 for done, width in images)  # the PNG plots beside the page load
        # the 3D view draws and its frames change as it plays
        canvas = "document.querySelector('canvas.mode-view')"
        first = driver.execute_script(f"return {canvas}.dataset.frame;")
        inked = driver.execute_script(
            f"var c = {canvas}; var d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;"
            " var n = 0; for (var i = 3; i < d.length; i += 4) if (d[i] > 0) n++; return n;")
        assert inked > 500  # atoms and bonds drawn
        seen = {first}
        for _ in range(10):
            time.sleep(0.1)
            seen.add(driver.execute_script(f"return {canvas}.dataset.frame;"))
        assert len(seen) >= 3, seen
        # follow a structure link: the saddle file opens and reads as XYZ with the job's atoms
        link = driver.execute_script(f"return Array.from(document.querySelectorAll('a.structure-link'), a => a.href)"
                                     f".find(h => h.endsWith('{Path(saddle).name}'));")
        assert link is not None
        driver.get(link)
        text = driver.execute_script("return document.body ? document.body.innerText : '';")
        assert text.split("\n")[0].strip() == str(len(ase.io.read(out / saddle, index=0)))
        errors = [e for e in driver.get_log("browser") if e.get("level") == "SEVERE"]
        assert errors == []
        # a 200-job index (the toy records copied): all rows there, its load time measured and kept as an artefact
        # beside screenshots of the index and a job page (a measurement, not a timed assertion: see make bench)
        jobs = tuple(j.model_copy(update={"job_id": f"{j.job_id}-{k:03d}"}) for k in range(100) for j in res.jobs)
        (out / "index-200.html").write_text(render_index(res.model_copy(update={"jobs": jobs})))
        driver.get((out / "index-200.html").as_uri())
        assert driver.execute_script("return document.querySelectorAll('#job-index tbody tr').length;") == 200
        load_ms = driver.execute_script("var n = performance.getEntriesByType('navigation')[0];"
                                        " return n.loadEventEnd - n.startTime;")
        assert load_ms > 0
        ARTEFACTS.mkdir(parents=True, exist_ok=True)
        driver.save_screenshot(str(ARTEFACTS / "batch-index-200.png"))
        (ARTEFACTS / "batch-index-200.json").write_text(json.dumps({"jobs": 200, "load_ms": round(load_ms, 1)}))
        print(f"200-job index: loaded in {load_ms:.0f} ms (headless Chromium; {ARTEFACTS / 'batch-index-200.json'})")
        driver.get((out / job_page_name(res.jobs[0])).as_uri())
        driver.save_screenshot(str(ARTEFACTS / "job-page.png"))
    finally:
        driver.quit()


def test_a_job_page_name_is_a_short_file_name_unique_to_its_job():
    job = result(PRIMARY).jobs[0]
    plain = job.model_copy(update={"job_id": "bromoethane__methoxide"})
    assert job_page_name(plain) == "report/bromoethane__methoxide.html"
    long_a, long_b = (job.model_copy(update={"job_id": "x" * 300 + tail}) for tail in ("__a", "__b"))
    escaped = job.model_copy(update={"job_id": "\x1b[2J__methoxide"})
    names = {job_page_name(j) for j in (long_a, long_b, escaped)}
    assert len(names) == 3 and all(len(n) < 90 and "\x1b" not in n for n in names)


def test_an_index_of_200_jobs_stays_small(batch):
    # the 21 real jobs of a calibration batch gave a 25 KB index, and those records copied to 200 jobs 129 KB
    # (one page with every job inline: 2.37 MB for the 21); the bound leaves room for longer names
    res = read_result(batch)
    jobs = tuple(j.model_copy(update={"job_id": f"{j.job_id}-{k:03d}"}) for k in range(100) for j in res.jobs)
    index = render_index(res.model_copy(update={"jobs": jobs}))
    assert index.count('<tr class="job-row"') == 200
    assert len(index.encode()) < 250_000
