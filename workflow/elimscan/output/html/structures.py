"""Structures one click away: links to a job's geometry files and a small 3D view of each saddle's imaginary mode.

The view is our own: the saddle file's frames (saddle, then frames along the imaginary mode) sit in the page as
JSON, and :data:`VIEWER_SCRIPT` draws atoms and bonds on a canvas, plays the frames back and forth and turns the
molecule with the mouse. No library, no network. Frames are given by the caller (``output.files`` reads them).
"""

from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

from elimscan.output.html.cells import DASH, esc
from elimscan.results.records import ApproachRecord, JobRecord, SubstitutionRecord

#: the unit (Å) of the whole numbers a viewer's coordinates are written in: enough for a drawing, small in the page
VIEW_UNIT_A = 0.01


@dataclass(frozen=True)
class StructureLinks:
    """Where a page sits and which files it may link: ``prefix`` leads from the page to the output folder
    ('' beside results.json, '../' one folder down); ``present``: the files that exist (None: every file named);
    ``frames``: {saddle file: [(symbols, positions in Å), ...]} for the 3D views."""

    prefix: str = ""
    present: frozenset[str] | None = None
    frames: Mapping[str, Sequence[tuple[Sequence[str], Sequence[Sequence[float]]]]] = field(default_factory=dict)

    def href(self, rel: str | None) -> str | None:
        """Return the link to a file relative to the output folder, or None when it is not there."""
        if not rel or (self.present is not None and rel not in self.present):
            return None
        return self.prefix + rel


#: the files of a path, in the order of the links, with their words
PATH_FILE_WORDS = (("path_file", "path"), ("saddle_file", "saddle"), ("complex_file", "complex"),
                   ("product_file", "product side"))


def approach_links(block: ApproachRecord | SubstitutionRecord, links: StructureLinks) -> str:
    """Return the links (HTML) to the path, saddle, complex and product-side files of one path, or ''."""
    found = []
    for name, words in PATH_FILE_WORDS:
        href = links.href(getattr(block, name, None))
        if href:
            found.append(f'<a class="structure-link" data-kind="{words}" href="{esc(href)}">{esc(words)}</a>')
    return " \u00b7 ".join(found)


def files_cell(job: JobRecord, index: int, links: StructureLinks | None) -> str:
    """Return the table cell of one beta-H class with the links to its anti and syn files ('' without links)."""
    if links is None:
        return ""
    beta = job.beta_hydrogens[index]
    parts = [f"{name}: {found}" for name in ("anti", "syn") if (found := approach_links(getattr(beta, name), links))]
    return f'<td class="files">{"<br>".join(parts) or DASH}</td>'


def view_data(frames: Sequence[tuple[Sequence[str], Sequence[Sequence[float]]]]) -> dict:
    """Return what a viewer reads: the symbols once, the unit (Å) and each frame's coordinates as whole numbers of
    that unit, x y z of every atom in a row. A saddle file's first frame (the saddle) is left out when frames along
    the mode follow: their middle one is the saddle again."""
    symbols = list(frames[0][0])
    shown = frames[1:] if len(frames) > 2 else frames
    coordinates = [[round(float(c) / VIEW_UNIT_A) for xyz in positions for c in xyz] for _, positions in shown]
    return {"symbols": symbols, "unit_A": VIEW_UNIT_A, "frames": coordinates}


def _view_json(frames: Sequence[tuple[Sequence[str], Sequence[Sequence[float]]]]) -> str:
    """Return :func:`view_data` as compact JSON safe inside a script element."""
    return json.dumps(view_data(frames), separators=(",", ":")).replace("</", "<\\/")


def saddle_views(job: JobRecord, links: StructureLinks | None) -> str:
    """Return the SN2 path's file links, then a heading, a sentence and one 3D view per saddle of the job whose
    frames are given; '' when there is nothing to show."""
    if links is None:
        return ""
    blocks = []
    named = [(f"{b.class_id} {n}", getattr(b, n)) for b in job.beta_hydrogens for n in ("anti", "syn")]
    if job.substitution is not None:
        named.append(("SN2 backside", job.substitution))
    for label, block in named:
        rel = block.saddle_file
        frames = links.frames.get(rel) if rel else None
        if not frames:
            continue
        state = "verified" if block.saddle_verified else "not verified"
        frequency = "" if block.imaginary_frequency_cm1 is None else f", \u03bd\u2021 {block.imaginary_frequency_cm1:.1f}i cm\u207b\u00b9"
        href = links.href(rel)
        file_link = f' \u00b7 <a class="structure-link" href="{esc(href)}">saddle file</a>' if href else ""
        blocks.append(
            f'<figure class="saddle-view"><canvas class="mode-view" width="300" height="240" data-frame="0" '
            f'aria-label="3D view of the saddle of {esc(label)}"></canvas>'
            f'<script type="application/json" class="mode-frames">{_view_json(frames)}</script>'
            f"<figcaption>{esc(label)}: saddle ({esc(state)}{esc(frequency)}){file_link}</figcaption></figure>")
    sn2 = approach_links(job.substitution, links) if job.substitution is not None else ""
    sn2_line = f'<p class="sn2-files">SN2 path files: {sn2}</p>' if sn2 else ""
    if not blocks:
        return sn2_line
    return sn2_line + ("<h3>Saddles in 3D</h3><p class=\"note\">Each saddle moving back and forth along its imaginary mode "
            "(\u00b10.3 \u00c5 amplitude, the frames of its saddle file); drag to turn, click to pause. Bonds are drawn "
            "between atoms closer than 1.25 \u00d7 the sum of their covalent radii, so forming and breaking bonds come "
            'and go.</p><div class="saddle-views">' + "".join(blocks) + "</div>")


#: the viewer: atoms as discs (depth-sorted), bonds as lines, frames played back and forth, mouse to turn
VIEWER_SCRIPT = r"""
(function () {
  var RADIUS = {H: 0.31, C: 0.76, N: 0.71, O: 0.66, F: 0.57, P: 1.07, S: 1.05, Cl: 1.02, Br: 1.2, I: 1.39,
                Li: 1.28, Na: 1.66, K: 2.03, Si: 1.11, B: 0.84};
  var COLOUR = {H: "#e8e8e8", C: "#555555", N: "#3050f8", O: "#e02020", F: "#70d050", Cl: "#1fa01f",
                Br: "#a62929", I: "#940094", S: "#d4b000", P: "#ff8000", Li: "#8040d0", Na: "#8040d0", K: "#8040d0"};
  document.querySelectorAll("canvas.mode-view").forEach(function (canvas) {
    var data = JSON.parse(canvas.nextElementSibling.textContent);
    var sym = data.symbols, n = sym.length, unit = data.unit_A;
    var frames = data.frames.map(function (f) {
      var pos = [];
      for (var i = 0; i < n; i++) pos.push([f[3 * i] * unit, f[3 * i + 1] * unit, f[3 * i + 2] * unit]);
      return pos;
    });
    var ctx = canvas.getContext("2d"), yaw = 0.6, pitch = 0.3, playing = true, frame = 0, step = 1;
    var centre = [0, 0, 0];
    frames[0].forEach(function (p) { for (var k = 0; k < 3; k++) centre[k] += p[k] / n; });
    var order = frames.map(function (_, i) { return i; });
    function bonds(pos) {
      var found = [];
      for (var i = 0; i < n; i++) for (var j = i + 1; j < n; j++) {
        var d = Math.hypot(pos[i][0] - pos[j][0], pos[i][1] - pos[j][1], pos[i][2] - pos[j][2]);
        if (d < 1.25 * ((RADIUS[sym[i]] || 0.8) + (RADIUS[sym[j]] || 0.8))) found.push([i, j]);
      }
      return found;
    }
    function draw() {
      var pos = frames[order[frame]], cy = Math.cos(yaw), sy = Math.sin(yaw), cp = Math.cos(pitch), sp = Math.sin(pitch);
      var scale = Math.min(canvas.width, canvas.height) / 9;
      var view = pos.map(function (p) {
        var x = p[0] - centre[0], y = p[1] - centre[1], z = p[2] - centre[2];
        var x1 = cy * x + sy * z, z1 = -sy * x + cy * z, y1 = cp * y - sp * z1, z2 = sp * y + cp * z1;
        return [canvas.width / 2 + scale * x1, canvas.height / 2 - scale * y1, z2];
      });
      ctx.clearRect(0, 0, canvas.width, canvas.height);
      ctx.strokeStyle = "#888888"; ctx.lineWidth = 2;
      bonds(pos).forEach(function (b) {
        ctx.beginPath(); ctx.moveTo(view[b[0]][0], view[b[0]][1]); ctx.lineTo(view[b[1]][0], view[b[1]][1]); ctx.stroke();
      });
      view.map(function (v, i) { return [v[2], i]; }).sort(function (a, b) { return a[0] - b[0]; }).forEach(function (e) {
        var i = e[1], r = (sym[i] === "H" ? 0.22 : 0.38) * scale;
        ctx.beginPath(); ctx.arc(view[i][0], view[i][1], r, 0, 2 * Math.PI);
        ctx.fillStyle = COLOUR[sym[i]] || "#b0b0b0"; ctx.fill(); ctx.strokeStyle = "#222222"; ctx.lineWidth = 0.8; ctx.stroke();
      });
      canvas.setAttribute("data-frame", String(order[frame]));
    }
    var dragging = null;
    canvas.addEventListener("mousedown", function (e) { dragging = [e.clientX, e.clientY, false]; });
    window.addEventListener("mouseup", function () {
      if (dragging && !dragging[2]) playing = !playing;
      dragging = null;
    });
    window.addEventListener("mousemove", function (e) {
      if (!dragging) return;
      yaw += (e.clientX - dragging[0]) * 0.01; pitch += (e.clientY - dragging[1]) * 0.01;
      dragging = [e.clientX, e.clientY, true]; draw();
    });
    setInterval(function () {
      if (!playing || order.length < 2) return;
      if (frame + step < 0 || frame + step >= order.length) step = -step;
      frame += step; draw();
    }, 90);
    draw();
  });
})();
"""
