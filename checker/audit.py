"""Corpus audits for meta-research: how often each item is reported, with Wilson 95% intervals, by group if asked.

Reported means status `reported`; partial counts as not reported, and its own rate is given beside it.
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
from .errors import UsageError
from .stats import wilson_counts

CAUTIONS = (
    "Rates describe what the documents' wording reports as found by studygap, not whether the studies are sound; "
    "check the tool against your own labelled sample first (studygap evaluate).",
    "A low rate is a prompt for people to read the documents, not a judgement of any proposal or paper.",
    "The venue's own reporting requirements govern; this checklist does not replace them.",
)
RATE_NOTE = ("reporting rate = reported / applicable documents; partial counts as not reported (its share is given "
             "as the partial rate); not-applicable and waived documents are left out of the denominator; "
             "intervals are Wilson score 95% intervals")
ALL = "all"


@dataclass(frozen=True)
class RateRow:
    group: str
    item: str
    title: str
    applicable: int
    reported: int
    partial: int
    low: float
    high: float

    @property
    def rate(self) -> float | None:
        return self.reported / self.applicable if self.applicable else None

    @property
    def partial_rate(self) -> float | None:
        return self.partial / self.applicable if self.applicable else None

    def to_dict(self) -> dict[str, Any]:
        return {"group": self.group, "item": self.item, "title": self.title, "applicable": self.applicable,
                "reported": self.reported, "partial": self.partial, "rate": _r(self.rate),
                "low": _r(self.low), "high": _r(self.high), "partial_rate": _r(self.partial_rate)}


@dataclass(frozen=True)
class Audit:
    checklist_id: str
    checklist_note: str
    by: str | None
    rows: tuple[RateRow, ...]
    documents: int
    errors: tuple[tuple[str, str], ...]  # (path, reason)
    unmatched: tuple[str, ...] = ()  # documents without a metadata row
    seconds: float = 0.0

    def to_dict(self) -> dict[str, Any]:
        # no timing: the same inputs give the same JSON bytes on every engine
        return {"checklist": {"id": self.checklist_id, "choice": self.checklist_note}, "by": self.by,
                "rate": RATE_NOTE, "rates": [r.to_dict() for r in self.rows],
                "summary": {"documents": self.documents, "errors": len(self.errors)},
                "errors": [{"path": p, "error": e} for p, e in self.errors],
                "without_metadata": list(self.unmatched), "cautions": list(CAUTIONS)}


def _r(x: float | None, digits: int = 4) -> float | None:
    return None if x is None else round(x, digits)


def load_meta(path: str | Path) -> tuple[list[str], dict[str, dict[str, str]]]:
    """A CSV sidecar: first column a document's path or file name, the others fields such as year or venue."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise UsageError(f"{p}: the metadata file cannot be read ({exc.strerror or exc})") from None
    except UnicodeDecodeError:
        raise UsageError(f"{p}: the metadata file is not UTF-8 text") from None
    reader = csv.reader(io.StringIO(text))
    try:
        header = [h.strip() for h in next(reader)]
    except StopIteration:
        raise UsageError(f"{p}: the metadata file is empty") from None
    if len(header) < 2:
        raise UsageError(f"{p}: the metadata file needs a first column with the path or file name and at least one "
                         "field (for example: path,year,venue)")
    rows: dict[str, dict[str, str]] = {}
    for n, cells in enumerate(reader, start=2):
        if not cells or not any(c.strip() for c in cells):
            continue
        key = cells[0].strip()
        if key in rows:
            raise UsageError(f"{p}:{n}: {key} appears twice")
        rows[key] = {h: (cells[i].strip() if i < len(cells) else "") for i, h in enumerate(header[1:], start=1)}
    return header[1:], rows


def meta_for(path: str, meta: dict[str, dict[str, str]],
             resolved: dict[str, dict[str, str]] | None = None) -> dict[str, str] | None:
    """The metadata row for a document: by the path as given, its normalised form, its absolute form or its name."""
    for key in (path, str(Path(path)), Path(path).name):
        if key in meta:
            return meta[key]
    if resolved is None:
        resolved = {str(Path(k).resolve()): row for k, row in meta.items()}
    return resolved.get(str(Path(path).resolve()))


def build_audit(results: Sequence[BatchResult], checklist_note: str = "", *, by: str | None = None,
                meta: dict[str, dict[str, str]] | None = None, z: float = 1.96, seconds: float = 0.0) -> Audit:
    ok = [r for r in results if r.ok]
    first = ok[0].report if ok else None
    items = [(it.id, it.title) for it in first.items] if first else []
    groups: dict[str, list] = {}
    unmatched = []
    absolute = {str(Path(k).resolve()): row for k, row in (meta or {}).items()} if by else {}
    for res in ok:
        if by is None:
            key = ALL
        else:
            row = meta_for(res.path, meta or {}, absolute)
            if row is None:
                unmatched.append(res.path)
                key = "(no metadata)"
            else:
                key = row.get(by, "") or "(blank)"
        groups.setdefault(key, []).append(res.report)
    rows = []
    for key in sorted(groups, key=_group_key):
        reports = groups[key]
        for iid, title in items:
            statuses = [next((it.status for it in rep.items if it.id == iid), "not-applicable") for rep in reports]
            applicable = sum(1 for s in statuses if s in ("reported", "partial", "missing"))
            reported = statuses.count("reported")
            partial = statuses.count("partial")
            low, high = wilson_counts(reported, applicable, z)
            rows.append(RateRow(key, iid, title, applicable, reported, partial, low, high))
    return Audit(first.checklist_id if first else "", checklist_note, by, tuple(rows), len(results),
                 tuple((r.path, r.error) for r in results if not r.ok), tuple(unmatched), seconds)


def _group_key(g: str) -> tuple:
    # years sort as numbers, placeholders last
    return (g.startswith("("), 0 if g.isdigit() else 1, int(g) if g.isdigit() else 0, g)


# ------------------------------------------------------------------------------------------------ renderers

COLUMNS = ("group", "item", "applicable", "reported", "partial", "rate", "low", "high", "partial_rate")


def _pct(x: float | None) -> str:
    return "n/a" if x is None else f"{100 * x:.1f}%"


def _summary(audit: Audit, timed: bool) -> str:
    text = (f"{audit.documents} document{'s' if audit.documents != 1 else ''}, "
            f"{audit.documents - len(audit.errors)} checked, {len(audit.errors)} could not be read")
    return text + (f", {audit.seconds:.1f} s" if timed else "")


def render_terminal(audit: Audit) -> str:
    out = io.StringIO()
    w = out.write
    w(f"Reporting rates, checklist {audit.checklist_id}" + (f", by {audit.by}" if audit.by else "") + "\n")
    if audit.checklist_note:
        w(f"Checklist: {audit.checklist_note}\n")
    width = max([len(r.item) for r in audit.rows] + [4])
    gw = max([len(r.group) for r in audit.rows] + [5])
    w(f"\n  {'group':<{gw}}  {'item':<{width}}  {'n':>5}  {'reported':>8}  {'95% interval':>15}  {'partial':>7}\n")
    for r in audit.rows:
        w(f"  {r.group:<{gw}}  {r.item:<{width}}  {r.applicable:>5}  {_pct(r.rate):>8}  "
          f"{_pct(r.low):>6} – {_pct(r.high):<6}  {_pct(r.partial_rate):>7}\n")
    for path, err in audit.errors:
        w(f"error: {err}\n")
    if audit.unmatched:
        w(f"{len(audit.unmatched)} document(s) have no row in the metadata file: " + ", ".join(audit.unmatched) + "\n")
    w(f"\n{RATE_NOTE}.\n{_summary(audit, True)}.\n")
    for c in CAUTIONS:
        w(f"Note: {c}\n")
    return out.getvalue()


def _cells(r: RateRow) -> list[str]:
    f = (lambda x: "" if x is None else f"{x:.4f}")
    return [r.group, r.item, str(r.applicable), str(r.reported), str(r.partial), f(r.rate), f(r.low), f(r.high),
            f(r.partial_rate)]


def render_csv(audit: Audit) -> str:
    buf = io.StringIO()
    wr = csv.writer(buf, lineterminator="\n")
    wr.writerow(COLUMNS)
    for r in audit.rows:
        wr.writerow(_cells(r))
    # bare lines (not quoted cells), so that comment='#' in pandas and similar readers skips them
    buf.write("\n")
    for line in (RATE_NOTE, _summary(audit, False), *(f"error: {err}" for _p, err in audit.errors), *CAUTIONS):
        buf.write("# " + " ".join(line.split()) + "\n")
    return buf.getvalue()


def render_json(audit: Audit) -> str:
    return json.dumps(audit.to_dict(), ensure_ascii=False, indent=2, allow_nan=False) + "\n"


def render_html(audit: Audit) -> str:
    from .screen import html_page

    e = html.escape
    head = "".join(f"<th>{e(c)}</th>" for c in COLUMNS)
    body_rows = "".join("<tr>" + "".join(f"<td>{e(c)}</td>" for c in _cells(r)) + "</tr>" for r in audit.rows)
    errs = "".join(f"<li>{e(err)}</li>" for _p, err in audit.errors)
    notes = "".join(f"<p class=\"note\">{e(c)}</p>" for c in CAUTIONS)
    body = (f"<h1>Reporting rates: {e(audit.checklist_id)}</h1><p>Checklist: {e(audit.checklist_note)}</p>"
            f"<p><label>Filter rows: <input id=\"filter\" type=\"search\"></label> Click a column heading to sort.</p>"
            f"<table class=\"sortable\"><thead><tr>{head}</tr></thead><tbody>{body_rows}</tbody></table>"
            + (f"<h2>Documents that could not be read</h2><ul>{errs}</ul>" if errs else "")
            + f"<p class=\"note\">{e(RATE_NOTE)}.</p><p>{e(_summary(audit, True))}.</p>{notes}")
    return html_page(f"studygap audit: {audit.checklist_id}", body)


RENDERERS = {"terminal": render_terminal, "csv": render_csv, "json": render_json, "html": render_html}


def render(audit: Audit, fmt: str) -> str:
    return RENDERERS[fmt](audit)


def plot(audit: Audit, target: str | Path) -> bytes:
    """A bar chart of the rates with Wilson whiskers, PNG or SVG by the target's suffix (SVG is deterministic)."""
    suffix = Path(target).suffix.lower()
    if suffix not in (".png", ".svg"):
        raise UsageError(f"{target}: the plot is written as .png or .svg")
    try:
        import matplotlib
    except ImportError:
        raise UsageError("drawing the plot needs matplotlib: pip install 'studygap[plot]'") from None

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    groups = sorted({r.group for r in audit.rows}, key=_group_key)
    items = list(dict.fromkeys(r.item for r in audit.rows))
    by = {(r.group, r.item): r for r in audit.rows}
    height = max(3.0, 0.32 * len(items) * max(1, min(len(groups), 4)) + 1.5)
    with matplotlib.rc_context({"svg.hashsalt": "studygap", "svg.fonttype": "none"}):
        fig, ax = plt.subplots(figsize=(8, height))
        bar = 0.8 / len(groups)
        for gi, g in enumerate(groups):
            ys, xs, lo, hi = [], [], [], []
            for ii, it in enumerate(items):
                r = by.get((g, it))
                if r is None or r.rate is None:
                    continue
                ys.append(ii + gi * bar - 0.4 + bar / 2)
                xs.append(100 * r.rate)
                lo.append(100 * (r.rate - r.low))
                hi.append(100 * (r.high - r.rate))
            ax.barh(ys, xs, height=bar * 0.9, xerr=[lo, hi], capsize=2, label=g if audit.by else None,
                    error_kw={"elinewidth": 0.8})
        ax.set_yticks(range(len(items)))
        ax.set_yticklabels(items, fontsize=8)
        ax.invert_yaxis()
        ax.set_xlim(0, 100)
        ax.set_xlabel("documents reporting the item (%), with Wilson 95% intervals; partial counts as not reported")
        ax.set_title(f"Reporting rates, {audit.checklist_id}" + (f", by {audit.by}" if audit.by else ""))
        if audit.by:
            ax.legend(title=audit.by, fontsize=8)
        fig.tight_layout()
        buf = io.BytesIO()
        if suffix == ".svg":
            fig.savefig(buf, format="svg", metadata={"Date": None})
        else:
            fig.savefig(buf, format="png", metadata={"Software": None})
        plt.close(fig)
    return buf.getvalue()
