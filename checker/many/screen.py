"""Screening many documents against one checklist: a matrix of statuses, completeness scores and facts side by side.

Built from batch results; renderers (terminal, CSV, HTML, JSON) only show what the Screen holds.
"""

from __future__ import annotations

import csv
import html
import io
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Sequence

from .batch import BatchResult
from ..verdicts.report import STATUS_ORDER

CAUTIONS = (
    "Completeness scores are a triage aid for the people who then read the documents, not a decision about any "
    "proposal or paper.",
    "studygap finds what is written, not whether the study is sound; a person must still read each document.",
    "The venue's own reporting requirements govern; this checklist does not replace them.",
)
SCORE_NOTE = ("completeness = (reported + half of partial) / applicable items; not-applicable and waived items "
              "are left out")


@dataclass(frozen=True)
class Cell:
    """What a matrix cell opens: the status, why, the best passages with their places, facts, or what was sought."""

    status: str
    reason: str
    quotes: tuple[tuple[str, str], ...] = ()  # (passage, place)
    facts: str = ""
    looked_for: tuple[str, ...] = ()  # the facets' titles, for an item with no passage
    question: str = ""


@dataclass(frozen=True)
class ScreenRow:
    path: str
    error: str
    statuses: tuple[str, ...]  # one per item of the row's checklist, in checklist order; empty for an error row
    completeness: float | None
    counts: tuple[tuple[str, int], ...]
    facts: tuple[tuple[str, str], ...]  # fact name -> values found, ", "-joined
    checklist: str = ""  # the id of the checklist this document was checked against ("" for an error row)
    cells: tuple[Cell, ...] = ()

    def to_dict(self, items: Sequence[str]) -> dict[str, Any]:
        if self.error:
            return {"path": self.path, "error": self.error}
        return {"path": self.path, "checklist": self.checklist, "completeness": _r(self.completeness),
                "summary": dict(self.counts), "statuses": dict(zip(items, self.statuses)),
                "facts": dict(self.facts)}


@dataclass(frozen=True)
class ScreenChecklist:
    id: str
    title: str
    version: str
    items: tuple[tuple[str, str], ...]  # (id, title)
    item_groups: tuple[str, ...]  # the group id of each item
    groups: tuple[tuple[str, str], ...]  # (id, title) in checklist order


@dataclass(frozen=True)
class Screen:
    checklist_note: str
    checklists: tuple[ScreenChecklist, ...]
    rows: tuple[ScreenRow, ...]
    fact_names: tuple[str, ...]
    seconds: float = 0.0
    #: (path, reason): files in the given folders that were not checked at all (not a readable kind, LaTeX parts)
    skipped: tuple[tuple[str, str], ...] = ()

    @property
    def checklist_id(self) -> str:
        return "+".join(c.id for c in self.checklists)

    @property
    def checklist_title(self) -> str:
        return "; ".join(c.title for c in self.checklists)

    @property
    def items(self) -> tuple[tuple[str, str], ...]:
        """Every item of every checklist, once each, in order of first appearance."""
        seen: dict[str, str] = {}
        for c in self.checklists:
            for i, t in c.items:
                seen.setdefault(i, t)
        return tuple(seen.items())

    @property
    def errors(self) -> tuple[ScreenRow, ...]:
        return tuple(r for r in self.rows if r.error)

    def rows_of(self, checklist_id: str) -> list[ScreenRow]:
        return [r for r in self.rows if not r.error and r.checklist == checklist_id]

    def item_shares(self) -> list[dict[str, Any]]:
        """Per item of each checklist: how many readable documents checked against it gave each status."""
        out = []
        for c in self.checklists:
            rows = self.rows_of(c.id)
            for i, (iid, title) in enumerate(c.items):
                counts = {s: sum(1 for r in rows if r.statuses[i] == s) for s in STATUS_ORDER}
                applicable = counts["reported"] + counts["partial"] + counts["missing"]
                out.append({"checklist": c.id, "id": iid, "title": title, **counts,
                            "reported_share": _r(counts["reported"] / applicable) if applicable else None})
        return out

    def to_dict(self) -> dict[str, Any]:
        ids = {c.id: [i for i, _ in c.items] for c in self.checklists}
        # no timing here: the same inputs must give the same JSON bytes on every engine
        return {
            "checklist": {"id": self.checklist_id, "title": self.checklist_title, "choice": self.checklist_note},
            "checklists": [{"id": c.id, "title": c.title, "version": c.version,
                            "documents": len(self.rows_of(c.id)),
                            "items": [{"id": i, "title": t, "group": g} for (i, t), g in zip(c.items, c.item_groups)]}
                           for c in self.checklists],
            "score": SCORE_NOTE,
            "items": [{"id": i, "title": t} for i, t in self.items],
            "documents": [r.to_dict(ids.get(r.checklist, [])) for r in self.rows],
            "item_shares": self.item_shares(),
            "summary": {"documents": len(self.rows), "errors": len(self.errors), "skipped": len(self.skipped)},
            "skipped": [{"path": p, "reason": why} for p, why in self.skipped],
            "cautions": list(CAUTIONS),
        }


def completeness(statuses: Sequence[str]) -> float | None:
    """(reported + half of partial) / applicable; None when no item applies."""
    applicable = [s for s in statuses if s in ("reported", "partial", "missing")]
    if not applicable:
        return None
    return (sum(1 for s in applicable if s == "reported") + 0.5 * sum(1 for s in applicable if s == "partial")) \
        / len(applicable)


def fact_text(value: Any) -> str:
    if isinstance(value, dict):
        if "value" in value and len(value) <= 3:
            return fact_text(value["value"]) + (f" {value['unit']}" if value.get("unit") else "")
        return ", ".join(f"{k}={fact_text(v)}" for k, v in value.items() if v is not None)
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def _cell(it, rep) -> Cell:
    quotes = tuple((" ".join(ev.text.split()), ev.location.describe(rep.document_path)) for ev in it.evidence[:2])
    facts = "; ".join(f"{name} {', '.join(x.text for x in fs)}" for name, fs in it.facts)
    return Cell(it.status, it.reason, quotes, facts, tuple(f.title for f in it.facets if not f.found), it.question)


def build_screen(results: Sequence[BatchResult], checklist_note: str = "", seconds: float = 0.0,
                 skipped: Sequence[tuple[str, str]] = ()) -> Screen:
    """The Screen of batch results; documents checked against different checklists get a matrix each."""
    checklists: dict[str, ScreenChecklist] = {}
    for res in results:
        if res.ok and res.report.checklist_id not in checklists:
            rep = res.report
            checklists[rep.checklist_id] = ScreenChecklist(
                rep.checklist_id, rep.checklist_title, rep.checklist_version,
                tuple((it.id, it.title) for it in rep.items), tuple(it.group for it in rep.items),
                tuple(rep.groups) or tuple((g, g) for g in dict.fromkeys(it.group for it in rep.items)))
    rows = []
    names: set[str] = set()
    for res in results:
        if not res.ok:
            rows.append(ScreenRow(res.path, res.error, (), None, (), ()))
            continue
        rep = res.report
        by_id = {it.id: it for it in rep.items}
        items = checklists[rep.checklist_id].items
        statuses = tuple(by_id[i].status if i in by_id else "not-applicable" for i, _ in items)
        cells = tuple(_cell(by_id[i], rep) if i in by_id else Cell("not-applicable", "") for i, _ in items)
        facts: dict[str, list[str]] = {}
        for it in rep.items:
            for name, fs in it.facts:
                seen = facts.setdefault(name, [])
                for f in fs:
                    text = fact_text(f.to_dict()["value"])
                    if text not in seen:
                        seen.append(text)
        names.update(facts)
        rows.append(ScreenRow(res.path, "", statuses, completeness(statuses),
                              tuple((s, statuses.count(s)) for s in STATUS_ORDER),
                              tuple(sorted((k, ", ".join(v)) for k, v in facts.items())), rep.checklist_id, cells))
    return Screen(checklist_note, tuple(checklists.values()), tuple(rows), tuple(sorted(names)), seconds,
                  tuple(skipped))


def short_names(paths: Sequence[str]) -> list[str]:
    """The shortest tail of each path that tells it from the others: file names, with folders only where needed."""
    parts = [Path(p).parts or (p,) for p in paths]
    depth = [1] * len(paths)
    for _ in range(max((len(p) for p in parts), default=1)):
        tails = ["/".join(p[-d:]) for p, d in zip(parts, depth)]
        clash = {t for t in tails if tails.count(t) > 1}
        if not clash:
            return tails
        depth = [d + 1 if t in clash and d < len(p) else d for p, d, t in zip(parts, depth, tails)]
    return [str(p) for p in paths]


# ------------------------------------------------------------------------------------------------ renderers


def _r(x: float | None, digits: int = 4) -> float | None:
    return None if x is None else round(x, digits)


def _pct(x: float | None) -> str:
    return "n/a" if x is None else f"{100 * x:.0f}%"


def _summary_line(screen: Screen, timed: bool) -> str:
    n, e = len(screen.rows), len(screen.errors)
    text = f"{n} document{'s' if n != 1 else ''}, {n - e} checked, {e} could not be read"
    if screen.skipped:
        k = len(screen.skipped)
        text += f", {k} other file{'s' if k != 1 else ''} in the folders skipped"
    return text + (f", {screen.seconds:.1f} s" if timed else "")


def render_terminal(screen: Screen) -> str:
    from ..reports.words import GLYPHS, WORDS, glyph

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
    w(_summary_line(screen, True) + ".\n")
    for c in CAUTIONS:
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


def render_csv(screen: Screen) -> str:
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


def sidecar(screen: Screen) -> dict[str, Any]:
    """What the CSV leaves out, as JSON beside it."""
    data = screen.to_dict()
    del data["documents"]
    data["summary"]["checked"] = data["summary"]["documents"] - data["summary"]["errors"]
    data["columns"] = {"completeness": SCORE_NOTE, "item columns": "the status of the item in that document: "
                       + ", ".join(STATUS_ORDER) + "; blank where the item belongs to another checklist"}
    return data


def render_json(screen: Screen) -> str:
    return json.dumps(screen.to_dict(), ensure_ascii=False, indent=2, allow_nan=False) + "\n"


HTML_SCRIPT = """
document.querySelectorAll('table.sortable th').forEach(function (th, col) {
  th.addEventListener('click', function () {
    var body = th.closest('table').tBodies[0];
    var rows = Array.prototype.slice.call(body.rows);
    var up = th.dataset.dir !== 'up'; th.dataset.dir = up ? 'up' : 'down';
    rows.sort(function (a, b) {
      var ca = a.cells[col], cb = b.cells[col];
      var x = ca ? (ca.dataset.key || ca.textContent) : '', y = cb ? (cb.dataset.key || cb.textContent) : '';
      var nx = parseFloat(x), ny = parseFloat(y);
      var c = (!isNaN(nx) && !isNaN(ny)) ? nx - ny : x.localeCompare(y);
      return up ? c : -c;
    });
    rows.forEach(function (r) { body.appendChild(r); });
  });
});
var box = document.getElementById('filter');
if (box) box.addEventListener('input', function () {
  var words = box.value.toLowerCase().split(/\\s+/).filter(Boolean);
  document.querySelectorAll('table.sortable tbody tr').forEach(function (r) {
    var t = r.textContent.toLowerCase();
    r.hidden = !words.every(function (w) { return t.indexOf(w) >= 0; });
  });
});
"""

# the audit page: the same neutral ink and tints as the screening page
HTML_STYLE = """body{font:14px/1.45 system-ui,sans-serif;margin:1.2em;color:#1f2733}
table{border-collapse:collapse;font-size:.9em}th,td{border:1px solid #d5dae2;padding:.25em .45em;text-align:left;
vertical-align:top}th{cursor:pointer;background:#f2f4f7}td{font-variant-numeric:tabular-nums}
.note{color:#5b6473;max-width:60em}[hidden]{display:none}td.n{text-align:right}
td.rate{white-space:nowrap}.rb{display:inline-block;position:relative;width:8em;height:.7em;margin-right:.6em;
background:#eef1f4;vertical-align:middle}.rb .r{position:absolute;left:0;top:0;bottom:0;background:#9aa5b4}
.rb .w{position:absolute;top:45%;height:2px;background:#1f2733}"""


def html_page(title: str, body: str) -> str:
    return (f"<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
            f"<title>{html.escape(title)}</title><style>{HTML_STYLE}</style></head><body>\n{body}\n"
            f"<script>{HTML_SCRIPT}</script></body></html>\n")


def render_html(screen: Screen) -> str:
    from ..reports.screening import render_html as page

    return page(screen)


def render_docx(screen: Screen) -> bytes:
    from ..reports.screening import render_docx as table

    return table(screen)


RENDERERS = {"terminal": render_terminal, "csv": render_csv, "html": render_html, "json": render_json,
             "docx": render_docx}
BINARY = ("docx",)


def render(screen: Screen, fmt: str) -> str | bytes:
    return RENDERERS[fmt](screen)
