"""Screening many documents against one checklist: a matrix of statuses, completeness scores and facts side by side.

Built from batch results; renderers (terminal, CSV, HTML, JSON) only show what the Screen holds.
"""

from __future__ import annotations

import csv
import html
import io
import json
from dataclasses import dataclass
from typing import Any, Sequence

from .batch import BatchResult
from .report import STATUS_ORDER

CAUTIONS = (
    "Completeness scores are a triage aid for the people who then read the documents, not a decision about any "
    "proposal or paper.",
    "studygap finds what is written, not whether the study is sound; a person must still read each document.",
    "The venue's own reporting requirements govern; this checklist does not replace them.",
)
SCORE_NOTE = ("completeness = (reported + half of partial) / applicable items; not-applicable and waived items "
              "are left out")
SHORT = {"reported": "R", "partial": "P", "missing": "M", "not-applicable": "-", "waived": "W"}


@dataclass(frozen=True)
class ScreenRow:
    path: str
    error: str
    statuses: tuple[str, ...]  # one per checklist item, in checklist order; empty for an error row
    completeness: float | None
    counts: tuple[tuple[str, int], ...]
    facts: tuple[tuple[str, str], ...]  # fact name -> values found, ", "-joined

    def to_dict(self, items: Sequence[str]) -> dict[str, Any]:
        if self.error:
            return {"path": self.path, "error": self.error}
        return {"path": self.path, "completeness": _r(self.completeness), "summary": dict(self.counts),
                "statuses": dict(zip(items, self.statuses)), "facts": dict(self.facts)}


@dataclass(frozen=True)
class Screen:
    checklist_id: str
    checklist_title: str
    checklist_note: str
    items: tuple[tuple[str, str], ...]  # (id, title)
    rows: tuple[ScreenRow, ...]
    fact_names: tuple[str, ...]
    seconds: float = 0.0

    @property
    def errors(self) -> tuple[ScreenRow, ...]:
        return tuple(r for r in self.rows if r.error)

    def item_shares(self) -> list[dict[str, Any]]:
        """Per item: how many readable documents gave each status."""
        ok = [r for r in self.rows if not r.error]
        out = []
        for i, (iid, title) in enumerate(self.items):
            counts = {s: sum(1 for r in ok if r.statuses[i] == s) for s in STATUS_ORDER}
            applicable = counts["reported"] + counts["partial"] + counts["missing"]
            out.append({"id": iid, "title": title, **counts,
                        "reported_share": _r(counts["reported"] / applicable) if applicable else None})
        return out

    def to_dict(self) -> dict[str, Any]:
        ids = [i for i, _ in self.items]
        # no timing here: the same inputs must give the same JSON bytes on every engine
        return {
            "checklist": {"id": self.checklist_id, "title": self.checklist_title, "choice": self.checklist_note},
            "score": SCORE_NOTE,
            "items": [{"id": i, "title": t} for i, t in self.items],
            "documents": [r.to_dict(ids) for r in self.rows],
            "item_shares": self.item_shares(),
            "summary": {"documents": len(self.rows), "errors": len(self.errors)},
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


def build_screen(results: Sequence[BatchResult], checklist_note: str = "", seconds: float = 0.0) -> Screen:
    """The Screen of batch results that were all checked against the same checklist."""
    first = next((r.report for r in results if r.ok), None)
    items = tuple((it.id, it.title) for it in first.items) if first else ()
    rows = []
    names: set[str] = set()
    for res in results:
        if not res.ok:
            rows.append(ScreenRow(res.path, res.error, (), None, (), ()))
            continue
        rep = res.report
        by_id = {it.id: it for it in rep.items}
        statuses = tuple(by_id[i].status if i in by_id else "not-applicable" for i, _ in items)
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
                              tuple(sorted((k, ", ".join(v)) for k, v in facts.items()))))
    cid = first.checklist_id if first else ""
    title = first.checklist_title if first else ""
    return Screen(cid, title, checklist_note, items, tuple(rows), tuple(sorted(names)), seconds)


# ------------------------------------------------------------------------------------------------ renderers


def _r(x: float | None, digits: int = 4) -> float | None:
    return None if x is None else round(x, digits)


def _pct(x: float | None) -> str:
    return "n/a" if x is None else f"{100 * x:.0f}%"


def _summary_line(screen: Screen, timed: bool) -> str:
    n, e = len(screen.rows), len(screen.errors)
    text = f"{n} document{'s' if n != 1 else ''}, {n - e} checked, {e} could not be read"
    return text + (f", {screen.seconds:.1f} s" if timed else "")


def render_terminal(screen: Screen) -> str:
    out = io.StringIO()
    w = out.write
    w(f"Screening against {screen.checklist_id}: {screen.checklist_title}\n")
    if screen.checklist_note:
        w(f"Checklist: {screen.checklist_note}\n")
    w("\nDocuments\n")
    for n, row in enumerate(screen.rows, start=1):
        if row.error:
            w(f"  D{n:<3} error  {row.error}\n")
        else:
            c = dict(row.counts)
            w(f"  D{n:<3} {_pct(row.completeness):>5}  {row.path}  ({c['reported']} reported, {c['partial']} partial, "
              f"{c['missing']} missing)\n")
    ok = [(n, r) for n, r in enumerate(screen.rows, start=1) if not r.error]
    if ok and screen.items:
        w("\nItems by document (R reported, P partial, M missing, - not applicable, W waived)\n")
        width = max(len(i) for i, _ in screen.items)
        w(f"  {'':<{width}}  " + " ".join(f"D{n:<3}" for n, _ in ok) + "  reported\n")
        shares = screen.item_shares()
        for k, (iid, _t) in enumerate(screen.items):
            cells = " ".join(f"{SHORT[r.statuses[k]]:<4}" for _, r in ok)
            w(f"  {iid:<{width}}  {cells}  {_pct(shares[k]['reported_share'])}\n")
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


def _header(screen: Screen) -> list[str]:
    return (["path", "error", "completeness (partial counts half)", *STATUS_ORDER]
            + [i for i, _ in screen.items] + [f"fact: {n}" for n in screen.fact_names])


def _cells(screen: Screen, row: ScreenRow) -> list[str]:
    if row.error:
        return [row.path, row.error] + [""] * (len(_header(screen)) - 2)
    facts = dict(row.facts)
    score = "" if row.completeness is None else f"{row.completeness:.3f}"
    return ([row.path, "", score, *(str(v) for _, v in row.counts)] + list(row.statuses)
            + [facts.get(n, "") for n in screen.fact_names])


def render_csv(screen: Screen) -> str:
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(_header(screen))
    for row in screen.rows:
        writer.writerow(_cells(screen, row))
    # trailing lines start with '#', so spreadsheet imports (and pandas comment='#') can skip them
    # written as bare lines (not quoted cells) so that comment='#' in pandas and similar readers skips them
    buf.write("\n")
    for line in (f"checklist {screen.checklist_id}: {screen.checklist_note}", SCORE_NOTE,
                 _summary_line(screen, False), *CAUTIONS):
        buf.write(f"# {line}\n")
    return buf.getvalue()


def render_json(screen: Screen) -> str:
    return json.dumps(screen.to_dict(), ensure_ascii=False, indent=2, allow_nan=False) + "\n"


HTML_SCRIPT = """
document.querySelectorAll('table.sortable th').forEach(function (th, col) {
  th.addEventListener('click', function () {
    var body = th.closest('table').tBodies[0];
    var rows = Array.prototype.slice.call(body.rows);
    var up = th.dataset.dir !== 'up'; th.dataset.dir = up ? 'up' : 'down';
    rows.sort(function (a, b) {
      var ca = a.cells[col], cb = b.cells[col];  // error rows have fewer cells
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

HTML_STYLE = """body{font-family:system-ui,sans-serif;margin:1.5em;color:#222}table{border-collapse:collapse;font-size:.85em}
th,td{border:1px solid #ccc;padding:.25em .4em;text-align:left;vertical-align:top}th{cursor:pointer;background:#f3f3f3}
td.reported{background:#dff0d8}td.partial{background:#fcf3cf}td.missing{background:#f8d7da}
td.not-applicable,td.waived{color:#777}tr.error td{background:#fde2e2}.note{color:#444;max-width:60em}"""


def html_page(title: str, body: str) -> str:
    return (f"<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>{html.escape(title)}</title>"
            f"<style>{HTML_STYLE}</style></head><body>\n{body}\n<script>{HTML_SCRIPT}</script></body></html>\n")


def render_html(screen: Screen) -> str:
    e = html.escape
    head = "".join(f"<th title=\"{e(t)}\">{e(c)}</th>" for c, t in zip(
        _header(screen), ["", "", SCORE_NOTE, *STATUS_ORDER, *(t for _, t in screen.items),
                          *("" for _ in screen.fact_names)]))
    rows = []
    for row in screen.rows:
        cells = _cells(screen, row)
        if row.error:
            rows.append(f"<tr class=\"error\"><td>{e(row.path)}</td><td colspan=\"{len(cells) - 1}\">"
                        f"{e(row.error)}</td></tr>")
            continue
        tds = []
        for k, c in enumerate(cells):
            cls = f" class=\"{e(c)}\"" if c in SHORT else ""
            key = f" data-key=\"{STATUS_ORDER.index(c)}\"" if c in SHORT else ""
            tds.append(f"<td{cls}{key}>{e(c)}</td>")
        rows.append("<tr>" + "".join(tds) + "</tr>")
    notes = "".join(f"<p class=\"note\">{e(c)}</p>" for c in CAUTIONS)
    share_head = "".join(f"<th>{e(c)}</th>" for c in ("item", "title", *STATUS_ORDER, "reported share"))
    share_rows = "".join(
        "<tr>" + "".join(f"<td>{e(str(c))}</td>" for c in (s["id"], s["title"], *(s[k] for k in STATUS_ORDER),
                                                            _pct(s["reported_share"]))) + "</tr>"
        for s in screen.item_shares())
    body = (f"<h1>Screening: {e(screen.checklist_id)}</h1><p>{e(screen.checklist_title)}. Checklist: "
            f"{e(screen.checklist_note)}</p>"
            f"<p><label>Filter rows: <input id=\"filter\" type=\"search\" placeholder=\"words in a row\"></label> "
            f"Click a column heading to sort.</p>"
            f"<table class=\"sortable\"><thead><tr>{head}</tr></thead><tbody>{''.join(rows)}</tbody></table>"
            f"<p class=\"note\">{e(SCORE_NOTE)}.</p>"
            f"<h2>Items across the documents</h2><table class=\"sortable\"><thead><tr>{share_head}</tr></thead>"
            f"<tbody>{share_rows}</tbody></table>"
            f"<p>{e(_summary_line(screen, True))}.</p>{notes}")
    return html_page(f"studygap screening: {screen.checklist_id}", body)


RENDERERS = {"terminal": render_terminal, "csv": render_csv, "html": render_html, "json": render_json}


def render(screen: Screen, fmt: str) -> str:
    return RENDERERS[fmt](screen)
