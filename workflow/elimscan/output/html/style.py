"""The report's own CSS (with print rules), its sorting script and its Content-Security-Policy (no network)."""

STYLE = """
:root { --ink: #1c1c1c; --muted: #5a5a5a; --rule: #c9c9c9; --band: #f3f5f7; --warn: #fff4e0; --warn-edge: #c77700; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; color: var(--ink); margin: 0 auto;
       max-width: 1100px; padding: 1.2rem 1.5rem 3rem; line-height: 1.45; font-size: 15px; }
h1 { font-size: 1.6rem; margin: 0 0 .2rem; }
h2 { font-size: 1.3rem; border-bottom: 2px solid var(--ink); padding-bottom: .2rem; margin-top: 0; }
h3 { font-size: 1.05rem; margin: 1.4rem 0 .4rem; }
p.meta, .note, figcaption { color: var(--muted); font-size: .86rem; }
.caution { background: var(--warn); border-left: 5px solid var(--warn-edge); padding: .6rem .9rem; margin: 1rem 0; }
.caution strong { color: #8a4b00; }
section.job { border-top: 1px solid var(--rule); padding-top: 1.2rem; margin-top: 2rem; }
table { border-collapse: collapse; margin: .3rem 0 .8rem; font-size: .88rem; }
th, td { border-bottom: 1px solid var(--rule); padding: .25rem .55rem; text-align: left; vertical-align: middle; }
th { background: var(--band); }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
code, .smiles { font-family: "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: .85em; overflow-wrap: anywhere; }
table.sortable th { cursor: pointer; }
table.sortable th[aria-sort="ascending"]::after { content: " \\25B2"; }
table.sortable th[aria-sort="descending"]::after { content: " \\25BC"; }
.status-ok { color: #1e6b3a; font-weight: bold; }
.status-failed { color: #a3231b; font-weight: bold; }
.call-major { font-weight: bold; color: #1e6b3a; }
.call-syn-only, .call-blocked, .call-forbidden { color: #a3231b; }
.product-name { font-size: 0.85em; color: #444; }
.saddle-views { display: flex; flex-wrap: wrap; gap: .8rem; }
figure.saddle-view { margin: 0; }
canvas.mode-view { border: 1px solid var(--rule); background: #fbfbfb; cursor: grab; }
td.files { font-size: .8rem; white-space: nowrap; }
#job-filter { margin: .3rem .6rem .6rem 0; padding: .2rem .4rem; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: .15rem 1rem; margin: 0; font-size: .9rem; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; }
.top { display: flex; flex-wrap: wrap; gap: 1.5rem; align-items: flex-start; }
figure.substrate { max-width: 430px; }
figure { margin: .4rem 0; }
figure svg { max-width: 100%; height: auto; display: block; }
.newman { display: flex; flex-wrap: wrap; gap: .4rem; }
.newman figure { width: 215px; }
img.product { width: 120px; height: auto; display: block; }
.wide { overflow-x: auto; }
table.beta th.group { text-align: center; border-bottom: 1px solid var(--ink); }
table.beta { font-size: .82rem; }
table.beta td.class { white-space: nowrap; }
table.beta td.smiles { font-size: .78rem; }
td.saddle-unverified { color: #7b2d8e; font-weight: bold; }
td.path-failed { color: #a3231b; }
tr.computed-major td.share { font-weight: bold; }
.tag { display: inline-block; font-size: .72rem; border: 1px solid currentColor; border-radius: 3px; padding: 0 .3rem;
       margin-left: .3rem; font-weight: bold; }
ol.path-notes { font-size: .82rem; color: var(--muted); margin-top: 0; }
.verdict { border: 2px solid var(--rule); border-radius: 4px; padding: .55rem .9rem; margin: .2rem 0 1rem; }
.verdict.verdict-agree { border-color: #1e6b3a; background: #eef7f1; }
.verdict.verdict-disagree { border-color: #a3231b; background: #fbefee; }
.verdict.verdict-undecided { border-color: #8c8c8c; background: var(--band); }
.verdict .badge { font-weight: bold; letter-spacing: .06em; padding: .05rem .5rem; border-radius: 3px; color: #fff; }
.verdict-agree .badge { background: #1e6b3a; }
.verdict-disagree .badge { background: #a3231b; }
.verdict-undecided .badge { background: #6b6b6b; }
.verdict p { margin: .35rem 0; }
.headline .headline-channel, .headline .headline-mix { font-size: 1.05rem; font-weight: bold; }
.headline .headline-gap, .headline .headline-rule, .headline .headline-left-out, .headline .headline-channel-note,
.headline .verdict-reason { font-size: .88rem; }
.headline .benchmark-record { font-size: .86rem; color: var(--muted); }
td.state-agree { color: #1e6b3a; } td.state-disagree { color: #a3231b; } td.state-undecided { color: var(--muted); }
table.compare td.score-right { color: #1e6b3a; font-weight: bold; }
table.compare td.score-wrong { color: #a3231b; font-weight: bold; }
table.compare td.score-undecided, table.compare td.score-none { color: var(--muted); }
table.compare th.row { background: none; font-weight: normal; color: var(--muted); }
.verdict dl.facts { margin: .4rem 0; }
.sn2 { border: 2px solid #5d6d7e; border-radius: 4px; padding: .55rem .9rem; margin: .4rem 0 1rem; background: var(--band); }
.sn2-sides { display: flex; flex-wrap: wrap; gap: 1rem; margin-top: .4rem; }
.sn2-side { flex: 1 1 14rem; border-left: 4px solid #5d6d7e; padding: .2rem .7rem; background: #fff; }
.sn2-side p { margin: .2rem 0; }
.sn2-split, .sn2-call { font-size: 1.05rem; font-weight: bold; }
table.kie { font-size: .82rem; }
.job-foot { margin-top: 1.2rem; padding-top: .5rem; border-top: 1px dashed var(--rule); font-size: .82rem; color: var(--muted); }
@page { size: A4; margin: 14mm; }
@media print {
  body { max-width: none; padding: 0; font-size: 10.5pt; }
  a { color: inherit; text-decoration: none; }
  section.job { break-before: page; border-top: none; margin-top: 0; }
  figure, table, .caution, .job-foot, .verdict, .sn2 { break-inside: avoid; }
  .wide { overflow: visible; }
  table.beta { font-size: 7.5pt; }
  table.beta th, table.beta td { padding: .15rem .3rem; }
  h2, h3 { break-after: avoid; }
  table.sortable th::after { content: "" !important; }
}
"""

SCRIPT = """
document.querySelectorAll("table.sortable").forEach(function (table) {
  var heads = table.tHead.rows[0].cells;
  Array.prototype.forEach.call(heads, function (th, col) {
    th.addEventListener("click", function () {
      var up = th.getAttribute("aria-sort") !== "ascending";
      Array.prototype.forEach.call(heads, function (h) { h.removeAttribute("aria-sort"); });
      th.setAttribute("aria-sort", up ? "ascending" : "descending");
      var key = function (row) { var c = row.cells[col]; return c.dataset.key !== undefined ? c.dataset.key : c.textContent.trim(); };
      var body = table.tBodies[0];
      var rows = Array.prototype.slice.call(body.rows);
      rows.sort(function (a, b) {
        var x = key(a), y = key(b), nx = parseFloat(x), ny = parseFloat(y);
        var order = (!isNaN(nx) && !isNaN(ny)) ? nx - ny : x.localeCompare(y);
        return up ? order : -order;
      });
      rows.forEach(function (row) { body.appendChild(row); });
    });
  });
});
"""

CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'; script-src 'unsafe-inline'"
