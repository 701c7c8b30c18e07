"""The HTML report: one self-contained page (inline CSS, a small inline script, nothing fetched) with a section
per document, filters by status and group, quoted passages with the matched words marked, and print styles."""

from __future__ import annotations

import base64
import hashlib
from collections.abc import Sequence
from html import escape

from ..core.cautions import CAUTIONS
from ..core.output import HTML_MARK
from ..verdicts.report import Evidence, ItemResult, Report
from ..core.status import GAPS_FIRST, is_gap
from .words import GLYPHS, heading, status_checkboxes

#: status -> (heading word, glyph shown beside the word): the one vocabulary of words.py
LABELS = {s: (heading(s), GLYPHS[s]) for s in GAPS_FIRST}
#: the order items are listed in: gaps first
LIST_ORDER = GAPS_FIRST

CSS = """
:root{--ink:#1d2330;--soft:#5a6272;--line:#d9dde5;--paper:#fff;--band:#f1f4f8;--mark:#fff0a8;
--reported:#9aa5b4;--partial:#5b6473;--missing:#1f2733;--not-applicable:#c5ccd6;--waived:#c5ccd6}
*{box-sizing:border-box}
body{margin:0;font:16px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;
color:var(--ink);background:var(--paper)}
main{max-width:62rem;margin:0 auto;padding:1rem}
h1{font-size:1.35rem;margin:.2rem 0 .4rem;overflow-wrap:anywhere}
h2{font-size:1.15rem;margin:1.6rem 0 .6rem;border-bottom:2px solid var(--line);padding-bottom:.2rem}
h3{font-size:1rem;margin:0}
.doc{margin-bottom:3rem}
.band{background:var(--band);border-radius:.6rem;padding:1rem;margin:.5rem 0 1rem}
.meta{color:var(--soft);margin:.1rem 0;overflow-wrap:anywhere}
.counts{display:flex;flex-wrap:wrap;gap:.4rem;list-style:none;padding:0;margin:.8rem 0}
.counts li{border:1px solid var(--line);border-left:.35rem solid var(--c);background:var(--paper);
border-radius:.4rem;padding:.2rem .6rem}
.counts b{font-size:1.1rem}
.cautions{margin:.6rem 0 0;padding-left:1.2rem;color:var(--soft);font-size:.92rem}
.notes{font-style:italic}
.filters{border:1px solid var(--line);border-radius:.6rem;padding:.6rem .8rem;margin:1rem 0}
.filters legend{font-weight:600;padding:0 .3rem}
.filters div{display:flex;flex-wrap:wrap;align-items:center;gap:.3rem .9rem;margin:.3rem 0}
.filters label{white-space:nowrap;cursor:pointer}
.filters .all{font-size:.9rem}
.filters summary{cursor:pointer;font-weight:600}
.toc{padding-left:1.2rem}.toc li{margin:.2rem 0;overflow-wrap:anywhere}
.shown{color:var(--soft);font-size:.9rem;margin:.2rem 0 0}
.item{border:1px solid var(--line);border-left:.45rem solid var(--c);border-radius:.5rem;padding:.7rem .9rem;
margin:.7rem 0;break-inside:avoid}
.item header{display:flex;flex-wrap:wrap;align-items:baseline;gap:.2rem .7rem}
.status{font-weight:700;color:var(--ink);letter-spacing:.02em;font-size:.85rem}
.id{color:var(--soft);font-family:ui-monospace,Menlo,Consolas,monospace;font-size:.82rem}
.group{color:var(--soft);font-size:.82rem}
.question{margin:.35rem 0;color:var(--soft)}
.reason{margin:.35rem 0}
blockquote{margin:.5rem 0;padding:.3rem .8rem;border-left:3px solid var(--line);background:#fafbfc}
blockquote p{margin:0}
.where{display:block;color:var(--soft);font-size:.85rem;margin-top:.2rem}
mark{background:var(--mark);color:inherit;padding:0 .1em;border-radius:.15em}
.facts{font-size:.9rem;color:var(--soft);margin:.35rem 0 0}
.more summary{cursor:pointer;color:var(--soft);font-size:.9rem}
.ask{margin:.5rem 0 0;font-size:.95rem}
.finding{--c:var(--ink)}
.s-reported{--c:var(--reported)}.s-partial{--c:var(--partial)}.s-missing{--c:var(--missing)}
.s-not-applicable{--c:var(--not-applicable)}.s-waived{--c:var(--waived)}
[hidden]{display:none!important}
@media (max-width:34rem){body{font-size:15px}main{padding:.6rem}.band{padding:.7rem}.item{padding:.6rem .7rem}}
@media print{
body{font-size:10.5pt;color:#000}main{max-width:none;padding:0}
.filters{display:none!important}.more{display:block}.band{background:none;border:1px solid #999}
.item,.band{break-inside:avoid}mark{background:none;font-weight:700;text-decoration:underline}
a{color:#000}.doc+.doc{break-before:page}
}
"""

# Filters: unchecking a status or group hides its items. Without script nothing is hidden and the controls stay
# hidden, so the page is complete on its own; data-filters="ready" tells a reader (and the tests) it ran.
SCRIPT = """
(function(){
var root=document.documentElement,box=document.getElementById('filters');
if(!box)return;
function on(kind){var s={};box.querySelectorAll('input[data-'+kind+']').forEach(function(i){
if(i.checked)s[i.getAttribute('data-'+kind)]=1;});return s;}
function apply(){var st=on('status'),gr=on('group'),n=0,all=0;
document.querySelectorAll('.item[data-status]').forEach(function(el){all++;
var show=st[el.getAttribute('data-status')]&&gr[el.getAttribute('data-group')];
el.hidden=!show;if(show)n++;});
document.querySelectorAll('section.status-list').forEach(function(sec){
sec.hidden=!sec.querySelector('.item[data-status]:not([hidden])');});
document.getElementById('shown').textContent='Showing '+n+' of '+all+' items.';}
box.addEventListener('change',apply);
box.querySelectorAll('button[data-set]').forEach(function(b){b.addEventListener('click',function(){
var kind=b.getAttribute('data-set'),val=b.getAttribute('data-value')==='1';
box.querySelectorAll('input[data-'+kind+']').forEach(function(i){i.checked=val;});apply();});});
box.hidden=false;apply();root.setAttribute('data-filters','ready');
})();
""".strip()

SCRIPT_HASH = base64.b64encode(hashlib.sha256(SCRIPT.encode("utf-8")).digest()).decode("ascii")
# Even if some document text slipped through unescaped, the browser would run no script but ours.
CSP = f"default-src 'none'; style-src 'unsafe-inline'; script-src 'sha256-{SCRIPT_HASH}'; img-src data:"


def e(text: object) -> str:
    return escape(str(text), quote=True)


def marked(ev: Evidence) -> str:
    """The passage, escaped, with each matched span in <mark>."""
    text, out, pos = ev.text, [], 0
    for s, t in sorted(ev.matches):
        s, t = max(s, pos), min(t, len(text))
        if s >= t:
            continue
        out.append(e(text[pos:s]))
        out.append(f"<mark>{e(text[s:t])}</mark>")
        pos = t
    out.append(e(text[pos:]))
    return "".join(out)


def _quote(ev: Evidence, r: Report) -> str:
    return (f'<blockquote><p>{marked(ev)}</p><span class="where">{e(ev.location.describe(r.document_path))}'
            f"</span></blockquote>")


def _status(status: str) -> str:
    word, sign = LABELS.get(status, (status, ""))
    return f'<span class="status"><span aria-hidden="true">{sign}</span> {e(word)}</span>'


def _item(it: ItemResult, r: Report, verbose: bool) -> str:
    parts = [(f'<article class="item s-{e(it.status)}" data-status="{e(it.status)}" data-group="{e(it.group)}" '
              f'id="{e(_anchor(r, it.id))}">'),
             (f"<header>{_status(it.status)}<h3>{e(it.title)}</h3>"
              f'<span class="id">{e(it.id)}</span><span class="group">{e(r.group_title(it.group))}</span></header>'),
             f'<p class="question">{e(it.question)}</p>']
    if it.reason and (it.status != "reported" or verbose):
        parts.append(f'<p class="reason"><strong>Why this status:</strong> {e(it.reason)}</p>')
    for ev in it.evidence if verbose else it.evidence[:2]:
        parts.append(_quote(ev, r))
    if len(it.evidence) > 2 and not verbose:
        more = len(it.evidence) - 2
        parts.append(f'<details class="more"><summary>{more} more passage{"s" if more != 1 else ""}</summary>'
                     + "".join(_quote(ev, r) for ev in it.evidence[2:]) + "</details>")
    if it.facts:
        facts = "; ".join(f"{e(name)} = {e(', '.join(x.text for x in fs))}" for name, fs in it.facts)
        parts.append(f'<p class="facts">Facts: {facts}</p>')
    if is_gap(it.status) and it.ask:
        parts.append(f'<p class="ask"><strong>Request:</strong> {e(it.ask)}</p>')
    parts.append("</article>")
    return "\n".join(parts)


def _anchor(r: Report, item_id: str) -> str:
    return "i-" + hashlib.sha1(r.document_path.encode("utf-8")).hexdigest()[:8] + "-" + item_id


def _document(r: Report, verbose: bool, filters: str = "") -> str:
    bits = [r.document_format]
    if r.pages:
        bits.append(f"{r.pages} page{'s' if r.pages != 1 else ''}")
    bits.append(f"{r.words:,} words")
    counts = r.summary
    out = [f'<section class="doc" id="{e(_anchor(r, "doc"))}">', '<div class="band">',
           f"<h1>{e(r.document_path)}</h1>",
           f'<p class="meta">{e(", ".join(bits))}</p>',
           (f'<p class="meta">Checklist: {e(r.checklist_title)} ({e(r.checklist_id)}, version '
            f"{e(r.checklist_version)})</p>"),
           '<ul class="counts">']
    for s in LIST_ORDER:
        out.append(f'<li class="s-{s}"><span aria-hidden="true">{LABELS[s][1]}</span> <b>{counts[s]}</b> '
                   f"{e(LABELS[s][0].lower())}</li>")
    out.append("</ul>")
    for w in r.warnings:
        out.append(f'<p class="notes">Note: {e(w)}</p>')
    out.append('<ul class="cautions">' + "".join(f"<li>{e(c)}</li>" for c in CAUTIONS["report"]) + "</ul></div>")
    if filters:
        out.append(filters)
    for s in LIST_ORDER:
        items = [it for it in r.items if it.status == s]
        if not items:
            continue
        out.append(f'<section class="status-list"><h2>{e(LABELS[s][0])} ({len(items)})</h2>')
        out += [_item(it, r, verbose) for it in items]
        out.append("</section>")
    if r.findings:
        out.append(f"<section><h2>Findings across items ({len(r.findings)})</h2>")
        for f in r.findings:
            out.append(f'<article class="item finding"><header><span class="status">{e(f.severity)}</span>'
                       f'<h3>{e(f.title)}</h3><span class="id">{e(f.id)}</span></header>'
                       f'<p class="reason">{e(f.message)}</p>')
            out += [_quote(ev, r) for ev in (f.evidence if verbose else f.evidence[:3])]
            out.append("</article>")
        out.append("</section>")
    out.append("</section>")
    return "\n".join(out)


def _filters(reports: Sequence[Report]) -> str:
    groups: dict[str, str] = {}
    for r in reports:
        for it in r.items:
            groups.setdefault(it.group, r.group_title(it.group))
    out = ['<fieldset class="filters" id="filters" hidden><legend>Show items</legend>',
           '<div role="group" aria-label="by status"><strong>Status:</strong>']
    out += status_checkboxes()  # all five, so that the filter reads the same on every page
    out.append('<button type="button" class="all" data-set="status" data-value="1">all</button>'
               '<button type="button" class="all" data-set="status" data-value="0">none</button></div>')
    out.append(f'<details><summary>Groups ({len(groups)})</summary><div role="group" aria-label="by group">')
    out += [f'<label><input type="checkbox" checked data-group="{e(g)}"> {e(t)}</label>' for g, t in groups.items()]
    out.append('<button type="button" class="all" data-set="group" data-value="1">all</button>'
               '<button type="button" class="all" data-set="group" data-value="0">none</button></div></details>')
    out.append('<p class="shown" id="shown" aria-live="polite"></p></fieldset>')
    return "\n".join(out)


def render(reports: Sequence[Report], options) -> str:
    title = ("studygap report: " + reports[0].document_path) if len(reports) == 1 else \
        f"studygap reports: {len(reports)} documents"
    filters = _filters(reports)
    if len(reports) == 1:
        body = [_document(reports[0], options.verbose, filters)]
    else:
        body = [f"<h1>studygap reports: {len(reports)} documents</h1>", '<ul class="toc">']
        for r in reports:
            c = r.summary
            body.append(f'<li><a href="#{e(_anchor(r, "doc"))}">{e(r.document_path)}</a>: '
                        + ", ".join(f"{c[s]} {e(LABELS[s][0].lower())}" for s in LIST_ORDER) + "</li>")
        body += ["</ul>", filters] + [_document(r, options.verbose) for r in reports]
    return "\n".join([
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        HTML_MARK,
        f'<meta http-equiv="Content-Security-Policy" content="{CSP}">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{e(title)}</title>",
        f"<style>{CSS}</style>",
        "</head>",
        "<body>",
        "<main>",
        *body,
        "</main>",
        f"<script>{SCRIPT}</script>",
        "</body>",
        "</html>",
        "",
    ])
