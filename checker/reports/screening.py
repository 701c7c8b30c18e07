"""The screening of many documents for a committee: the terminal matrix, CSV, JSON, the screening page (HTML) and
the screening table (DOCX).

The page: one matrix per checklist, documents as rows and items as columns, grouped in bands that fold into one
column each; a sticky header and first column; each cell is a glyph of one neutral scale (see words.py) that opens
what lies behind it (the passages and their places, the facts, or what was looked for); filters by group, status
and document; a print layout for A4 landscape. Everything is inline; nothing is fetched.
"""

from __future__ import annotations

import base64
import csv
import hashlib
import io
import json
from html import escape

from ..core.cautions import CAUTIONS
from ..core.output import HTML_MARK
from ..many.screen import SCORE_NOTE, Screen, ScreenChecklist, ScreenRow, short_names
from ..core.status import GAPS_FIRST, STATUS_ORDER, is_gap
from .words import GLYPHS, MEANINGS, WORDS, glyph, status_checkboxes, word


#: the neutral scale shared with the single-document page (html.py): ink and tints of one slate hue
PALETTE = """--ink:#1f2733;--soft:#5b6473;--line:#d5dae2;--paper:#fff;--band:#f2f4f7;--band2:#e8ecf1;
--t-reported:#d6dce5;--t-partial:#edf0f4;--t-missing:#fff;--t-not-applicable:#fff;--t-waived:#fff;
--focus:#2d5d8a"""

CSS = """
:root{%s}
*{box-sizing:border-box}
body{margin:0;font:14px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;
color:var(--ink);background:var(--paper)}
main{padding:.8rem 1rem 2rem;max-width:100%%}
h1{font-size:1.3rem;margin:.2rem 0}
h2{font-size:1.08rem;margin:1.2rem 0 .4rem}
.meta,.note{color:var(--soft);margin:.15rem 0;max-width:70rem}
.legend{display:flex;flex-wrap:wrap;gap:.2rem 1rem;list-style:none;padding:0;margin:.5rem 0}
.legend .g{display:inline-block;width:1.4rem;text-align:center;border:1px solid var(--line);border-radius:.2rem;
background:var(--t)}
.controls{border:1px solid var(--line);border-radius:.5rem;padding:.4rem .7rem;margin:.6rem 0}
.controls legend{font-weight:600;padding:0 .3rem}
.controls div{display:flex;flex-wrap:wrap;align-items:center;gap:.2rem .8rem;margin:.2rem 0}
.controls label{white-space:nowrap;cursor:pointer}
.controls summary{cursor:pointer;margin:.2rem 0}
.wrap{overflow:auto;max-height:78vh;border:1px solid var(--line);border-radius:.4rem}
table.matrix{border-collapse:separate;border-spacing:0;font-size:13px}
.matrix th,.matrix td{border-right:1px solid var(--line);border-bottom:1px solid var(--line);padding:0;
background:var(--paper)}
.matrix thead th{position:sticky;z-index:2;background:var(--band)}
.matrix thead tr.bands th{top:0;height:1.9rem}
.matrix thead tr.items th{top:1.9rem}
.matrix th.doc{position:sticky;left:0;z-index:1;text-align:left;font-weight:500;padding:.2rem .5rem;
max-width:15rem;min-width:9rem;white-space:nowrap;overflow:hidden;text-overflow:ellipsis}
.matrix thead th.doc{z-index:3;vertical-align:bottom}
.matrix th.band{font-weight:600;font-size:12px;text-align:left;padding:0 .3rem;white-space:nowrap;overflow:hidden;
text-overflow:ellipsis;max-width:1px}
.matrix th.band button{font:inherit;border:0;background:none;cursor:pointer;padding:.1rem 0;color:inherit;
max-width:100%%;overflow:hidden;text-overflow:ellipsis;text-align:left}
.matrix th.b1{background:var(--band2)}
.matrix tr.items th.it{height:11.5rem;width:2rem;min-width:2rem;vertical-align:bottom;padding:.3rem 0;
font-weight:500;font-size:12px}
.matrix th.it span{display:block;writing-mode:vertical-rl;transform:rotate(180deg);white-space:nowrap;
overflow:hidden;text-overflow:ellipsis;max-height:11rem;margin:0 auto}
.matrix th.score,.matrix td.score{min-width:3.4rem;text-align:right;padding:.2rem .4rem;white-space:nowrap}
.matrix .g0{border-left:2px solid var(--soft)}
.matrix td.c{text-align:center;width:2rem;height:1.75rem}
.matrix td.c a{display:block;color:var(--ink);text-decoration:none;line-height:1.75rem;font-size:15px}
.matrix td.c a:focus-visible,.matrix button:focus-visible{outline:2px solid var(--focus);outline-offset:-2px}
.matrix td.s-reported{background:var(--t-reported)}.matrix td.s-partial{background:var(--t-partial)}
.matrix td.s-not-applicable a,.matrix td.s-waived a{color:#8a929e}
.matrix td.gs{text-align:center;font-size:12px;color:var(--soft);min-width:3rem}
.matrix tfoot td,.matrix tfoot th{font-size:11px;color:var(--soft);text-align:center;background:var(--band)}
.matrix tr.error td{padding:.2rem .5rem;color:var(--ink);font-style:italic}
.bar{display:inline-block;width:2.2rem;height:.45rem;background:var(--band2);border-radius:.2rem;margin-left:.3rem;
vertical-align:middle;overflow:hidden}.bar i{display:block;height:100%%;background:var(--soft)}
body.off-reported td.s-reported a,body.off-partial td.s-partial a,body.off-missing td.s-missing a,
body.off-not-applicable td.s-not-applicable a,body.off-waived td.s-waived a{opacity:.12}
body.off-reported td.s-reported,body.off-partial td.s-partial{background:var(--paper)}
.evidence details{border-top:1px solid var(--line);padding:.3rem 0}
.evidence summary{cursor:pointer;font-weight:600}
.ev{margin:.5rem 0 .9rem 1rem;max-width:60rem}
.ev h3{font-size:.95rem;margin:.1rem 0}
.ev .st{font-weight:600}
.ev blockquote{margin:.3rem 0;padding:.2rem .7rem;border-left:3px solid var(--line);background:#fafbfc}
.ev .where{display:block;color:var(--soft);font-size:.85em}
.ev p{margin:.2rem 0}
dialog{max-width:min(46rem,94vw);border:1px solid var(--soft);border-radius:.5rem;padding:1rem 1.2rem}
dialog::backdrop{background:rgba(20,25,35,.35)}
dialog .ev{margin:0}
dialog form{text-align:right;margin-top:.6rem}
[hidden]{display:none!important}
@media (max-width:40rem){main{padding:.5rem}.matrix th.doc{min-width:6rem;max-width:8.5rem;white-space:normal;
overflow-wrap:anywhere;font-size:12px}.bar{display:none}.matrix th.score,.matrix td.score{min-width:2.6rem}}
@media print{
@page{size:A4 landscape;margin:9mm}
body{font-size:8.5pt;color:#000}main{padding:0}
.controls,.evidence,dialog,.noprint{display:none!important}
.wrap{overflow:visible;max-height:none;border:0}
table.matrix{font-size:7.5pt}
.matrix thead th{position:static}.matrix th.doc{position:static;max-width:5.4cm;min-width:0}
.matrix tr.items th.it{height:5.4cm;width:.72cm;min-width:.72cm}.matrix th.it span{max-height:5.3cm}
.matrix td.c{width:.72cm;height:.5cm}.matrix td.c a{line-height:.5cm;font-size:9pt}.bar{display:none}
.matrix td,.matrix th{-webkit-print-color-adjust:exact;print-color-adjust:exact}
tr{break-inside:avoid}section.cl+section.cl{break-before:page}
}
""" % PALETTE

SCRIPT = """
(function(){
var body=document.body,box=document.getElementById('controls');
if(!box)return;
function groupCells(g){return document.querySelectorAll('[data-g="'+g+'"]');}
function setGroup(g,state){
  // state: 'open', 'folded' or 'off'
  groupCells(g).forEach(function(el){el.hidden=state!=='open';});
  document.querySelectorAll('[data-gs="'+g+'"]').forEach(function(el){el.hidden=state!=='folded';});
  document.querySelectorAll('th.band[data-band="'+g+'"]').forEach(function(th){
    th.hidden=state==='off';th.colSpan=state==='folded'?1:+th.getAttribute('data-n');
    var b=th.querySelector('button');if(b)b.setAttribute('aria-expanded',state==='open'?'true':'false');});
}
var folded={};
function apply(){
  box.querySelectorAll('input[data-status]').forEach(function(i){
    body.classList.toggle('off-'+i.getAttribute('data-status'),!i.checked);});
  box.querySelectorAll('input[data-group]').forEach(function(i){
    var g=i.getAttribute('data-group');setGroup(g,!i.checked?'off':(folded[g]?'folded':'open'));});
  var words=(document.getElementById('docfilter').value||'').toLowerCase().split(/\\s+/).filter(Boolean);
  document.querySelectorAll('table.matrix tbody tr').forEach(function(tr){
    var t=(tr.getAttribute('data-name')||'').toLowerCase();
    tr.hidden=!words.every(function(w){return t.indexOf(w)>=0;});});
}
box.addEventListener('change',apply);
document.getElementById('docfilter').addEventListener('input',apply);
box.querySelectorAll('button[data-fold]').forEach(function(b){b.addEventListener('click',function(){
  var v=b.getAttribute('data-fold')==='1';
  box.querySelectorAll('input[data-group]').forEach(function(i){folded[i.getAttribute('data-group')]=v;});apply();});});
document.querySelectorAll('th.band button').forEach(function(b){b.addEventListener('click',function(){
  var g=b.closest('th').getAttribute('data-band');folded[g]=!folded[g];apply();});});
document.querySelectorAll('th.gs button').forEach(function(b){b.addEventListener('click',function(){
  folded[b.closest('th').getAttribute('data-gs')]=false;apply();});});
var dlg=document.getElementById('cell');
if(dlg&&dlg.showModal){
  document.querySelectorAll('td.c a').forEach(function(a){a.addEventListener('click',function(ev){
    var src=document.getElementById(a.getAttribute('href').slice(1));if(!src)return;
    ev.preventDefault();var slot=dlg.querySelector('.slot');slot.innerHTML='';
    var copy=src.cloneNode(true);copy.removeAttribute('id');slot.appendChild(copy);dlg.showModal();});});
}
document.querySelectorAll('th[data-sort]').forEach(function(th){th.addEventListener('click',function(){
  var table=th.closest('table'),tb=table.tBodies[0],key=th.getAttribute('data-sort');
  var up=th.getAttribute('data-dir')!=='up';th.setAttribute('data-dir',up?'up':'down');
  var rows=Array.prototype.slice.call(tb.rows);
  rows.sort(function(a,b){var x=a.getAttribute('data-'+key)||'',y=b.getAttribute('data-'+key)||'';
    var nx=parseFloat(x),ny=parseFloat(y);var c=(!isNaN(nx)&&!isNaN(ny))?nx-ny:x.localeCompare(y);return up?c:-c;});
  rows.forEach(function(r){tb.appendChild(r);});});});
var gd=box.querySelector('details.groups');if(gd&&window.innerWidth<640)gd.open=false;
box.hidden=false;apply();document.documentElement.setAttribute('data-controls','ready');
})();
""".strip()

SCRIPT_HASH = base64.b64encode(hashlib.sha256(SCRIPT.encode("utf-8")).digest()).decode("ascii")
CSP = f"default-src 'none'; style-src 'unsafe-inline'; script-src 'sha256-{SCRIPT_HASH}'; img-src data:"


def e(text: object) -> str:
    return escape(str(text), quote=True)


def _pct(x: float | None) -> str:
    return "n/a" if x is None else f"{100 * x:.0f}%"


def _groups(c: ScreenChecklist) -> list[tuple[str, str, list[int]]]:
    """(group id, title, item indexes) in the order the items come."""
    titles = dict(c.groups)
    out: list[tuple[str, str, list[int]]] = []
    for k, g in enumerate(c.item_groups):
        if not out or out[-1][0] != g:
            out.append((g, titles.get(g, g), []))
        out[-1][2].append(k)
    return out


def _reason(r: ScreenRow) -> str:
    """The error without the path it starts with (the row already names the file)."""
    return r.error[len(r.path) + 2:] if r.error.startswith(r.path + ": ") else r.error


def _key(cl: int, g: str) -> str:
    return f"{cl}-{g}"


def _matrix(cl: int, c: ScreenChecklist, screen: Screen, names: dict[int, str], numbers: dict[int, int]) -> str:
    groups = _groups(c)
    rows = [r for r in screen.rows if not r.error and r.checklist == c.id]
    out = [f'<section class="cl" id="m{cl}"><h2>{e(c.title)} <span class="meta">({e(c.id)}, version {e(c.version)}; '
           f'{len(rows)} document{"s" if len(rows) != 1 else ""})</span></h2>',
           '<div class="wrap"><table class="matrix">', "<thead>", '<tr class="bands">',
           '<th class="doc" rowspan="2" scope="col" data-sort="name" title="sort by name">Document</th>',
           '<th class="score" rowspan="2" scope="col" data-sort="score" '
           'title="completeness: (reported + half of partial) / applicable items; click to sort">Score</th>']
    for n, (g, title, ks) in enumerate(groups):
        out.append(f'<th class="band b{n % 2} g0" colspan="{len(ks)}" data-n="{len(ks)}" data-band="{e(_key(cl, g))}" '
                   f'scope="colgroup" title="{e(title)}"><button type="button" aria-expanded="true">{e(title)}'
                   "</button></th>")
    out.append('</tr><tr class="items">')
    for n, (g, title, ks) in enumerate(groups):
        gk = e(_key(cl, g))
        out.append(f'<th class="gs b{n % 2} g0" data-gs="{gk}" hidden scope="col" title="{e(title)}: reported of '
                   f'applicable items; click to unfold"><button type="button">{len(ks)} items</button></th>')
        for j, k in enumerate(ks):
            iid, ititle = c.items[k]
            out.append(f'<th class="it b{n % 2}{" g0" if j == 0 else ""}" data-g="{gk}" scope="col" '
                       f'title="{e(ititle)} ({e(iid)})"><span>{e(ititle)}</span></th>')
    out.append("</tr></thead><tbody>")
    for r in rows:
        num = numbers[id(r)]
        score = "" if r.completeness is None else f"{r.completeness:.4f}"
        out.append(f'<tr data-name="{e(names[id(r)])}" data-score="{score}">'
                   f'<th class="doc" scope="row" title="{e(r.path)}">{e(names[id(r)])}</th>'
                   f'<td class="score">{_pct(r.completeness)}<span class="bar" aria-hidden="true"><i style="width:'
                   f'{0 if r.completeness is None else round(100 * r.completeness)}%"></i></span></td>')
        for g, title, ks in groups:
            gk = e(_key(cl, g))
            st = [r.statuses[k] for k in ks]
            applicable = sum(1 for s in st if s in ("reported", "partial", "missing"))
            out.append(f'<td class="gs g0" data-gs="{gk}" hidden>{st.count("reported")}/{applicable}</td>')
            for j, k in enumerate(ks):
                s = r.statuses[k]
                iid, ititle = c.items[k]
                out.append(f'<td class="c s-{e(s)}{" g0" if j == 0 else ""}" data-g="{gk}">'
                           f'<a href="#e{num}-{k}" title="{e(ititle)}: {e(word(s))}" '
                           f'aria-label="{e(ititle)}: {e(word(s))}">{glyph(s)}</a></td>')
        out.append("</tr>")
    out.append("</tbody><tfoot><tr><th class=\"doc\" scope=\"row\">Reported in</th><td class=\"score\"></td>")
    for g, title, ks in groups:
        gk = e(_key(cl, g))
        out.append(f'<td class="gs g0" data-gs="{gk}" hidden></td>')
        for j, k in enumerate(ks):
            applicable = sum(1 for r in rows if r.statuses[k] in ("reported", "partial", "missing"))
            reported = sum(1 for r in rows if r.statuses[k] == "reported")
            out.append(f'<td class="{"g0" if j == 0 else ""}" data-g="{gk}" title="reported in {reported} of the '
                       f'{applicable} documents it applies to">{reported}/{applicable}</td>')
    out.append("</tr></tfoot></table></div></section>")
    return "\n".join(out)


def _detail(num: int, k: int, r: ScreenRow, c: ScreenChecklist, name: str) -> str:
    cell = r.cells[k]
    iid, ititle = c.items[k]
    parts = [f'<div class="ev" id="e{num}-{k}"><h3><span class="st">{glyph(cell.status)} {e(word(cell.status))}'
             f"</span> · {e(ititle)} <span class=\"meta\">({e(iid)})</span></h3>",
             f'<p class="meta">{e(name)}</p>']
    if cell.reason and cell.status != "reported":
        parts.append(f"<p>{e(cell.reason)}</p>")
    for text, where in cell.quotes:
        parts.append(f'<blockquote>{e(text)}<span class="where">{e(where)}</span></blockquote>')
    if cell.facts:
        parts.append(f'<p class="meta">Facts: {e(cell.facts)}</p>')
    if is_gap(cell.status) and cell.looked_for:
        parts.append(f"<p><strong>Looked for and not found:</strong> {e('; '.join(cell.looked_for))}.</p>")
    if is_gap(cell.status) and cell.question:
        parts.append(f'<p class="meta">The item asks: {e(cell.question)}</p>')
    parts.append("</div>")
    return "".join(parts)


# ------------------------------------------------------------------------------------------------ text, CSV, JSON


def summary_line(screen: Screen, timed: bool) -> str:
    n, e = len(screen.rows), len(screen.errors)
    text = f"{n} document{'s' if n != 1 else ''}, {n - e} checked, {e} could not be read"
    if screen.skipped:
        k = len(screen.skipped)
        text += f", {k} other file{'s' if k != 1 else ''} in the folders skipped"
    return text + (f", {screen.seconds:.1f} s" if timed else "")


def render_terminal(screen: Screen, options=None) -> str:
    out = io.StringIO()
    w = out.write
    w(f"Screening against {screen.checklist_id or 'no checklist (no document could be read)'}\n")
    if screen.checklist_note:
        w(f"Checklist: {screen.checklist_note}\n")
    names = short_names([r.path for r in screen.rows])
    number = {id(r): n for n, r in enumerate(screen.rows, start=1)}
    w("\nDocuments\n")
    for n, (row, name) in enumerate(zip(screen.rows, names), start=1):
        if row.error:
            w(f"  D{n:<3} could not be read: {row.error}\n")
        else:
            c = dict(row.counts)
            w(f"  D{n:<3} {_pct(row.completeness):>5}  {name}  ({c['reported']} reported, {c['partial']} partial, "
              f"{c['missing']} missing)" + (f"  [{row.checklist}]" if len(screen.checklists) > 1 else "") + "\n")
    legend = ", ".join(f"{GLYPHS[s]} {WORDS[s]}" for s in STATUS_ORDER)
    for c in screen.checklists:
        rows = screen.rows_of(c.id)
        if not rows or not c.items:
            continue
        w(f"\n{c.title} ({c.id}): items by document ({legend})\n")
        width = min(44, max(len(t) for _, t in c.items))
        w(f"  {'':<{width}}  " + " ".join(f"D{number[id(r)]:<3}" for r in rows) + "  reported\n")
        shares = [s for s in screen.item_shares() if s["checklist"] == c.id]
        for k, (_iid, title) in enumerate(c.items):
            cells = " ".join(f"{glyph(r.statuses[k]):<4}" for r in rows)
            short = title if len(title) <= width else title[: width - 1] + "…"
            w(f"  {short:<{width}}  {cells}  {_pct(shares[k]['reported_share'])}\n")
    if screen.skipped:
        w("\nSkipped\n")
        for path, why in screen.skipped:
            w(f"  {path}: {why}\n")
    ok = [(n, r) for n, r in enumerate(screen.rows, start=1) if not r.error]
    if screen.fact_names and ok:
        w("\nFacts found\n")
        for n, r in ok:
            if r.facts:
                w(f"  D{n}: " + "; ".join(f"{k} {v}" for k, v in r.facts) + "\n")
    w(f"\n{SCORE_NOTE}.\n")
    w(summary_line(screen, True) + ".\n")
    for c in CAUTIONS["screen"]:
        w(f"Note: {c}\n")
    return out.getvalue()


COUNT_COLUMNS = tuple(f"{s} items" for s in STATUS_ORDER)


def _header(screen: Screen) -> list[str]:
    return (["path", "checklist", "error", "completeness", *COUNT_COLUMNS]
            + [i for i, _ in screen.items] + [f"fact: {n}" for n in screen.fact_names])


def _cells(screen: Screen, row: ScreenRow) -> list[str]:
    width = len(_header(screen))
    if row.error:
        return [row.path, "", row.error] + [""] * (width - 3)
    facts = dict(row.facts)
    mine = dict(zip((i for i, _ in next(c for c in screen.checklists if c.id == row.checklist).items), row.statuses))
    score = "" if row.completeness is None else f"{row.completeness:.3f}"
    return ([row.path, row.checklist, "", score, *(str(v) for _, v in row.counts)]
            + [mine.get(i, "") for i, _ in screen.items] + [facts.get(n, "") for n in screen.fact_names])


def render_csv(screen: Screen, options=None) -> str:
    """One header row, then one row per document (an unreadable one with its reason in `error`); nothing else.

    Item cells hold the JSON contract's status values; an item of another checklist is left blank. The notes
    (checklists, the score's definition, counts, cautions) are in sidecar().
    """
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(_header(screen))
    for row in screen.rows:
        writer.writerow(_cells(screen, row))
    return buf.getvalue()


def render_json(screen: Screen, options=None) -> str:
    return json.dumps(screen.to_dict(), ensure_ascii=False, indent=2, allow_nan=False) + "\n"




# ------------------------------------------------------------------------------------------------ page and table


def render_html(screen: Screen, options=None) -> str:
    names_list = short_names([r.path for r in screen.rows])
    names = {id(r): n for r, n in zip(screen.rows, names_list)}
    numbers = {id(r): n for n, r in enumerate(screen.rows, start=1)}
    mixed = len(screen.checklists) > 1
    if mixed:
        title = f"Screening: {len(screen.rows)} documents against {len(screen.checklists)} checklists"
    else:
        title = "Screening: " + (screen.checklist_title or "no document could be read")
    legend = "".join(f'<li><span class="g" style="--t:var(--t-{s})">{GLYPHS[s]}</span> {e(WORDS[s])}: '
                     f"{e(MEANINGS[s])}</li>" for s in STATUS_ORDER)
    controls = ['<fieldset class="controls" id="controls" hidden><legend>Show</legend>',
                '<div role="group" aria-label="by status"><strong>Status:</strong>']
    controls += status_checkboxes()
    controls.append('<label>Documents: <input id="docfilter" type="search" placeholder="words in a file name">'
                    "</label></div>")
    n_groups = sum(len(_groups(c)) for c in screen.checklists)
    controls.append(f'<details class="groups"{" open" if n_groups <= 12 else ""}><summary><strong>Groups</strong> '
                    f"({n_groups})</summary>")
    for cl, c in enumerate(screen.checklists):
        controls.append(f'<div role="group" aria-label="groups of {e(c.title)}">'
                        + (f"<em>{e(c.title)}:</em>" if mixed else ""))
        controls += [f'<label><input type="checkbox" checked data-group="{e(_key(cl, g))}"> {e(gt)}</label>'
                     for g, gt, _ks in _groups(c)]
        controls.append("</div>")
    controls.append('<div><button type="button" data-fold="1">fold all groups</button>'
                    '<button type="button" data-fold="0">unfold all</button></div></details></fieldset>')
    body = [f"<h1>{e(title)}</h1>",
            f'<p class="meta">{e(summary_line(screen, True))}. Checklist: {e(screen.checklist_note)}</p>',
            f'<ul class="legend" aria-label="what the signs mean">{legend}</ul>',
            f'<p class="note">Score: {e(SCORE_NOTE)}.</p><p class="note noprint">Each cell opens the passages behind '
            "it, or what was looked for; a group's heading folds its columns into one. Point at a heading for the "
            "item's full title.</p>"]
    if mixed:
        body.append('<ul class="toc noprint">' + "".join(
            f'<li><a href="#m{cl}">{e(c.title)}</a> ({len(screen.rows_of(c.id))} documents)</li>'
            for cl, c in enumerate(screen.checklists)) + "</ul>")
    body.append("\n".join(controls))
    for cl, c in enumerate(screen.checklists):
        body.append(_matrix(cl, c, screen, names, numbers))
    errors = [r for r in screen.rows if r.error]
    if errors:
        body.append("<section><h2>Documents that could not be read</h2><ul>")
        body += [f'<li><span title="{e(r.path)}">{e(names[id(r)])}</span>: {e(_reason(r))}</li>' for r in errors]
        body.append("</ul></section>")
    if screen.skipped:
        body.append("<section><h2>Files in the folders that were not checked</h2><ul>")
        body += [f"<li>{e(p)}: {e(why)}</li>" for p, why in screen.skipped]
        body.append("</ul></section>")
    body.append('<section class="evidence"><h2>Behind each cell</h2>')
    for r in screen.rows:
        if r.error:
            continue
        c = next(x for x in screen.checklists if x.id == r.checklist)
        num = numbers[id(r)]
        body.append(f'<details id="d{num}"><summary>{e(names[id(r)])} · {_pct(r.completeness)}</summary>')
        order = sorted(range(len(c.items)), key=lambda k: GAPS_FIRST.index(r.statuses[k]))
        body += [_detail(num, k, r, c, names[id(r)]) for k in order]
        body.append("</details>")
    body.append("</section>")
    body.append('<ul class="note">' + "".join(f"<li>{e(x)}</li>" for x in CAUTIONS["screen"]) + "</ul>")
    body.append('<dialog id="cell" aria-label="what lies behind the cell"><div class="slot"></div>'
                '<form method="dialog"><button>Close</button></form></dialog>')
    return "\n".join([
        "<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">', HTML_MARK,
        f'<meta http-equiv="Content-Security-Policy" content="{CSP}">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{e(title)}</title>", f"<style>{CSS}</style>", "</head>", "<body>", "<main>", *body, "</main>",
        f"<script>{SCRIPT}</script>", "</body>", "</html>", ""])


# ------------------------------------------------------------------------------------------------ DOCX


def render_docx(screen: Screen, options=None) -> bytes:
    """One landscape table per checklist: items as rows (with their group), documents as columns, a glyph and a
    word per cell where there is room; a key of the documents and the signs below."""
    from docx.enum.table import WD_TABLE_ALIGNMENT
    from docx.enum.text import WD_ALIGN_PARAGRAPH
    from docx.shared import Pt

    from .docx import repeat_header, set_widths, landscape_document, report_date, save, shade

    when = report_date()
    doc = landscape_document("studygap screening table", when)
    style = doc.styles["Normal"]
    style.font.size = Pt(9)

    names = short_names([r.path for r in screen.rows])
    name_of = {id(r): n for r, n in zip(screen.rows, names)}
    number = {id(r): n for n, r in enumerate(screen.rows, start=1)}
    doc.add_heading("Screening table", level=0)
    doc.add_paragraph(f"{summary_line(screen, False)}; {when.strftime('%Y-%m-%d')}. Checklist: "
                      f"{screen.checklist_note}")
    doc.add_paragraph("Signs: " + "; ".join(f"{GLYPHS[s]} {WORDS[s]}" for s in STATUS_ORDER)
                      + f". Score: {SCORE_NOTE}.")
    text_width = 27.7
    words_fit = True
    for c in screen.checklists:
        rows = [r for r in screen.rows if not r.error and r.checklist == c.id]
        if not rows:
            continue
        if len(screen.checklists) > 1:
            doc.add_heading(f"{c.title} ({c.id})", level=1)
        item_w = 6.0 if len(rows) <= 10 else 5.0
        col_w = (text_width - item_w) / len(rows)
        words_fit = col_w >= 2.1
        table = doc.add_table(rows=1, cols=1 + len(rows))
        table.style = "Table Grid"
        table.alignment = WD_TABLE_ALIGNMENT.CENTER
        head = table.rows[0].cells
        head[0].text = "Item"
        for cell, r in zip(head[1:], rows):
            cell.text = name_of[id(r)] if words_fit else f"D{number[id(r)]}"
        score = table.add_row().cells
        score[0].text = "Score"
        for cell, r in zip(score[1:], rows):
            cell.text = _pct(r.completeness)
        for g, gtitle, ks in _groups(c):
            band = table.add_row().cells
            merged = band[0].merge(band[-1])
            merged.text = gtitle
            shade(merged, "E8ECF1")
            for k in ks:
                cells = table.add_row().cells
                cells[0].text = c.items[k][1]
                for cell, r in zip(cells[1:], rows):
                    s = r.statuses[k]
                    cell.text = f"{glyph(s)} {word(s)}" if words_fit else glyph(s)
                    if not words_fit:
                        cell.paragraphs[0].alignment = WD_ALIGN_PARAGRAPH.CENTER
                    if s == "reported":
                        shade(cell, "DCE1E8")
                    elif s == "partial":
                        shade(cell, "EEF1F4")
        repeat_header(table.rows[0])
        set_widths(table, (item_w, *([col_w] * len(rows))))
        for row in table.rows:
            for cell in row.cells:
                for p in cell.paragraphs:
                    for run in p.runs:
                        run.font.size = Pt(8 if not words_fit else 8.5)
        for cell in table.rows[0].cells + table.rows[1].cells:
            for run in cell.paragraphs[0].runs:
                run.bold = True
        for cell in table.rows[0].cells[1:]:  # file names: smaller, so that they break at their hyphens only
            for run in cell.paragraphs[0].runs:
                run.font.size = Pt(7.5)
    if not words_fit or any(r.error for r in screen.rows):
        doc.add_heading("Documents", level=1)
        for r in screen.rows:
            line = f"D{number[id(r)]}: {r.path}" + (f" (could not be read: {r.error})" if r.error else "")
            doc.add_paragraph(line, style="List Bullet")
    doc.add_heading("Please keep in mind", level=1)
    for x in CAUTIONS["screen"]:
        doc.add_paragraph(x, style="List Bullet")
    return save(doc, when)


__all__ = ["render_terminal", "render_csv", "render_json", "render_html", "render_docx", "summary_line"]
