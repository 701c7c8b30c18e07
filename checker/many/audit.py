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
from ..core.errors import UsageError
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
    checklist: str
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
        return {"checklist": self.checklist, "group": self.group, "item": self.item, "title": self.title, "applicable": self.applicable,
                "reported": self.reported, "partial": self.partial, "rate": _r(self.rate),
                "low": _r(self.low), "high": _r(self.high), "partial_rate": _r(self.partial_rate)}


@dataclass(frozen=True)
class Audit:
    checklist_note: str
    by: str | None
    rows: tuple[RateRow, ...]
    documents: int
    errors: tuple[tuple[str, str], ...]  # (path, reason): named inputs that could not be checked
    unmatched: tuple[str, ...] = ()  # documents without a metadata row
    seconds: float = 0.0
    #: (checklist id, title, version, documents checked against it), in order of first appearance
    checklists: tuple[tuple[str, str, str, int], ...] = ()
    #: (path, reason): files in the given folders that were not checked at all (not a readable kind, LaTeX parts)
    skipped: tuple[tuple[str, str], ...] = ()

    @property
    def checklist_id(self) -> str:
        """The checklist's id, or the ids joined with '+' when the corpus was checked against several."""
        return "+".join(c[0] for c in self.checklists)

    @property
    def mixed(self) -> bool:
        return len(self.checklists) > 1

    def to_dict(self) -> dict[str, Any]:
        # no timing: the same inputs give the same JSON bytes on every engine
        return {"checklist": {"id": self.checklist_id, "choice": self.checklist_note},
                "checklists": [{"id": i, "title": t, "version": v, "documents": n}
                               for i, t, v, n in self.checklists],
                "by": self.by, "rate": RATE_NOTE, "rates": [r.to_dict() for r in self.rows],
                "summary": {"documents": self.documents, "checked": self.documents - len(self.errors),
                            "errors": len(self.errors), "skipped": len(self.skipped)},
                "errors": [{"path": p, "error": e} for p, e in self.errors],
                "skipped": [{"path": p, "reason": why} for p, why in self.skipped],
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
                meta: dict[str, dict[str, str]] | None = None, z: float = 1.96, seconds: float = 0.0,
                skipped: Sequence[tuple[str, str]] = ()) -> Audit:
    """Rates per checklist (a corpus may mix them when each document's checklist is chosen for it), per group of
    the metadata field ``by`` (or one group, "all"), per item."""
    ok = [r for r in results if r.ok]
    # one block of rows per checklist, in order of first appearance; items in that checklist's order
    per_checklist: dict[str, list] = {}
    for res in ok:
        per_checklist.setdefault(res.report.checklist_id, []).append(res)
    unmatched = []
    absolute = {str(Path(k).resolve()): row for k, row in (meta or {}).items()} if by else {}
    group_of: dict[str, str] = {}
    for res in ok:
        if by is None:
            group_of[res.path] = ALL
            continue
        row = meta_for(res.path, meta or {}, absolute)
        if row is None:
            unmatched.append(res.path)
            group_of[res.path] = "(no metadata)"
        else:
            group_of[res.path] = row.get(by, "") or "(blank)"
    rows = []
    checklists = []
    for cid, members in per_checklist.items():
        first = members[0].report
        checklists.append((cid, first.checklist_title, first.checklist_version, len(members)))
        groups: dict[str, list] = {}
        for res in members:
            groups.setdefault(group_of[res.path], []).append(res.report)
        for key in sorted(groups, key=_group_key):
            reports = groups[key]
            for it0 in first.items:
                statuses = [next((it.status for it in rep.items if it.id == it0.id), "not-applicable")
                            for rep in reports]
                applicable = sum(1 for s in statuses if s in ("reported", "partial", "missing"))
                reported = statuses.count("reported")
                partial = statuses.count("partial")
                low, high = wilson_counts(reported, applicable, z)
                rows.append(RateRow(cid, key, it0.id, it0.title, applicable, reported, partial, low, high))
    return Audit(checklist_note, by, tuple(rows), len(results), tuple((r.path, r.error) for r in results if not r.ok),
                 tuple(unmatched), seconds, tuple(checklists), tuple(skipped))


def _group_key(g: str) -> tuple:
    # years sort as numbers, placeholders last
    return (g.startswith("("), 0 if g.isdigit() else 1, int(g) if g.isdigit() else 0, g)


# ------------------------------------------------------------------------------------------------ renderers

COLUMNS = ("checklist", "group", "item", "title", "applicable", "reported", "partial", "rate", "low", "high",
           "partial_rate")


def _pct(x: float | None) -> str:
    return "n/a" if x is None else f"{100 * x:.1f}%"


def _summary(audit: Audit, timed: bool) -> str:
    n, e = audit.documents, len(audit.errors)
    text = f"{n} document{'s' if n != 1 else ''}, {n - e} checked, {e} could not be read"
    if audit.skipped:
        text += f", {len(audit.skipped)} other file{'s' if len(audit.skipped) != 1 else ''} in the folders skipped"
    return text + (f", {audit.seconds:.1f} s" if timed else "")


def _checklists_line(audit: Audit) -> str:
    return "; ".join(f"{cid} {version} ({n} document{'s' if n != 1 else ''})"
                     for cid, _t, version, n in audit.checklists)


def problem_lines(audit: Audit) -> list[str]:
    """One line per input that was not counted, with its reason: what the terminal, HTML and stderr name."""
    out = [f"could not be read: {err}" if err.startswith(path) else f"could not be read: {path}: {err}"
           for path, err in audit.errors]
    out += [f"skipped: {path}: {why}" for path, why in audit.skipped]
    if audit.unmatched:
        out += [f"no metadata row: {path} (counted under \"(no metadata)\")" for path in audit.unmatched]
    return out


def _short(text: str, n: int) -> str:
    return text if len(text) <= n else text[: n - 1] + "…"


def render_terminal(audit: Audit) -> str:
    out = io.StringIO()
    w = out.write
    w("Reporting rates" + (f", by {audit.by}" if audit.by else "") + "\n")
    w(f"Checklist{'s' if audit.mixed else ''}: {_checklists_line(audit) or 'none (no document could be read)'}\n")
    if audit.checklist_note:
        w(f"Chosen: {audit.checklist_note}\n")
    for cid, title, _v, _n in audit.checklists:
        rows = [r for r in audit.rows if r.checklist == cid]
        if audit.mixed:
            w(f"\n{cid}: {title}\n")
        width = max([len(r.item) for r in rows] + [4])
        tw = min(40, max([len(r.title) for r in rows] + [5]))
        gw = max([len(r.group) for r in rows] + [5]) if audit.by else 0
        group_head = f"{audit.by:<{gw}}  " if audit.by else ""
        w(f"\n  {group_head}{'item':<{width}}  {'title':<{tw}}  {'n':>5}  {'reported':>8}  {'95% interval':^15}  "
          f"{'partial':>7}\n")
        for r in rows:
            group = f"{r.group:<{gw}}  " if audit.by else ""
            w(f"  {group}{r.item:<{width}}  {_short(r.title, tw):<{tw}}  {r.applicable:>5}  {_pct(r.rate):>8}  "
              f"{_pct(r.low):>6} – {_pct(r.high):<6}  {_pct(r.partial_rate):>7}\n")
    problems = problem_lines(audit)
    if problems:
        w("\nNot counted\n")
        for line in problems:
            w(f"  {line}\n")
    w(f"\n{RATE_NOTE}.\n{_summary(audit, True)}.\n")
    for c in CAUTIONS:
        w(f"Note: {c}\n")
    return out.getvalue()


def _cells(r: RateRow) -> list[str]:
    f = (lambda x: "" if x is None else f"{x:.4f}")
    return [r.checklist, r.group, r.item, r.title, str(r.applicable), str(r.reported), str(r.partial), f(r.rate),
            f(r.low), f(r.high), f(r.partial_rate)]


def render_csv(audit: Audit) -> str:
    """One header row and one row per checklist, group and item; nothing else (the notes are in sidecar())."""
    buf = io.StringIO()
    wr = csv.writer(buf, lineterminator="\n")
    wr.writerow(COLUMNS)
    for r in audit.rows:
        wr.writerow(_cells(r))
    return buf.getvalue()


def sidecar(audit: Audit) -> dict[str, Any]:
    """What the CSV leaves out: checklists, counts, unread and skipped files, the rate's definition, cautions."""
    data = audit.to_dict()
    del data["rates"]
    data["columns"] = {"applicable": "documents where the item applies (reported, partial or missing)",
                       "rate": "reported / applicable", "low": "Wilson score 95% interval, low end",
                       "high": "Wilson score 95% interval, high end", "partial_rate": "partial / applicable"}
    return data


def render_json(audit: Audit) -> str:
    return json.dumps(audit.to_dict(), ensure_ascii=False, indent=2, allow_nan=False) + "\n"


def _bar(r: RateRow) -> str:
    """The rate as a bar with its interval as a whisker, in percent of the cell's width (neutral ink)."""
    if r.rate is None:
        return ""
    lo, hi, x = 100 * r.low, 100 * r.high, 100 * r.rate
    return (f'<span class="rb" aria-hidden="true"><i class="r" style="width:{x:.1f}%"></i>'
            f'<i class="w" style="left:{lo:.1f}%;width:{max(hi - lo, 0.3):.1f}%"></i></span>')


def render_html(audit: Audit) -> str:
    from .screen import html_page

    e = html.escape
    by = audit.by is not None
    head = (("<th>checklist</th>" if audit.mixed else "") + (f"<th>{e(audit.by or '')}</th>" if by else "")
            + "<th>item</th><th title=\"documents where the item applies\">n</th><th>reported</th>"
              "<th>rate and Wilson 95% interval</th><th>partial</th>")
    body_rows = []
    for r in audit.rows:
        interval = "" if r.rate is None else f" ({_pct(r.low)} – {_pct(r.high)})"
        body_rows.append(
            "<tr>" + (f"<td>{e(r.checklist)}</td>" if audit.mixed else "") + (f"<td>{e(r.group)}</td>" if by else "")
            + f'<td title="{e(r.item)}">{e(r.title)}</td><td class="n">{r.applicable}</td><td class="n">{r.reported}</td>'
            + f'<td class="rate" data-key="{"" if r.rate is None else f"{r.rate:.4f}"}">{_bar(r)}'
            + f"{_pct(r.rate)}{interval}</td>"
            + f'<td class="n" data-key="{"" if r.partial_rate is None else f"{r.partial_rate:.4f}"}">'
            + f"{_pct(r.partial_rate)}</td></tr>")
    problems = "".join(f"<li>{e(line)}</li>" for line in problem_lines(audit))
    notes = "".join(f"<p class=\"note\">{e(c)}</p>" for c in CAUTIONS)
    body = (f"<h1>Reporting rates: {e(audit.checklist_id)}</h1><p>Checklists: {e(_checklists_line(audit))}. "
            f"{e(audit.checklist_note)}</p><p>{e(_summary(audit, True))}.</p>"
            f"<p><label>Filter rows: <input id=\"filter\" type=\"search\"></label> Click a column heading to sort; "
            "point at an item for its id.</p>"
            f"<table class=\"sortable\"><thead><tr>{head}</tr></thead><tbody>{''.join(body_rows)}</tbody></table>"
            + (f"<h2>Not counted</h2><ul>{problems}</ul>" if problems else "")
            + f"<p class=\"note\">{e(RATE_NOTE)}.</p>{notes}")
    return html_page(f"studygap audit: {audit.checklist_id}", body)


RENDERERS = {"terminal": render_terminal, "csv": render_csv, "json": render_json, "html": render_html}


def render(audit: Audit, fmt: str) -> str:
    return RENDERERS[fmt](audit)


class PlotError(Exception):
    """The plot could not be drawn; the tables are written all the same."""


def matplotlib_context():
    import matplotlib

    return matplotlib.rc_context({"svg.hashsalt": "studygap", "svg.fonttype": "none", "font.size": 8})


def figure(audit: Audit, target: str | Path = "rates.svg"):
    """Bars of the rates with Wilson whiskers and n beside each; one panel per checklist; every label lies inside
    the figure. Raises UsageError for a bad suffix or no matplotlib, PlotError when there is nothing to draw."""
    suffix = Path(target).suffix.lower()
    if suffix not in (".png", ".svg"):
        raise UsageError(f"{target}: the plot is written as .png or .svg")
    try:
        import matplotlib
    except ImportError:
        raise UsageError("drawing the plot needs matplotlib: pip install 'studygap[plot]'") from None
    if not audit.rows:
        raise PlotError("there are no rates to draw (no document could be checked)")

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    groups = sorted({r.group for r in audit.rows}, key=_group_key)
    panels = [(cid, title, [r for r in audit.rows if r.checklist == cid]) for cid, title, _v, _n in audit.checklists]
    per_item = 0.28 * max(1, min(len(groups), 4))
    heights = [max(1.2, per_item * len(dict.fromkeys(r.item for r in rows)) + 0.9) for _c, _t, rows in panels]
    colours = ["#3b5b7e", "#9a6a2f", "#5c7f4a", "#7b4f7d", "#4a7f7f", "#80604a"]
    with matplotlib_context():
        fig, axes = plt.subplots(len(panels), 1, figsize=(9, sum(heights) + 1.2), squeeze=False,
                                 gridspec_kw={"height_ratios": heights}, layout="constrained")
        for ax, (cid, title, rows) in zip(axes[:, 0], panels):
            items = list(dict.fromkeys(r.item for r in rows))
            titles = {r.item: r.title for r in rows}
            by = {(r.group, r.item): r for r in rows}
            bar = 0.8 / len(groups)
            for gi, g in enumerate(groups):
                ys, xs, lo, hi, ns = [], [], [], [], []
                for ii, it in enumerate(items):
                    r = by.get((g, it))
                    if r is None or r.rate is None:
                        continue
                    ys.append(ii + gi * bar - 0.4 + bar / 2)
                    xs.append(100 * r.rate)
                    # the interval holds the rate (stats.wilson_interval), so neither whisker is negative
                    lo.append(max(0.0, 100 * (r.rate - r.low)))
                    hi.append(max(0.0, 100 * (r.high - r.rate)))
                    ns.append((r.high, r.applicable))
                label = f"{g}" if audit.by else None
                ax.barh(ys, xs, height=bar * 0.85, xerr=[lo, hi], capsize=2, label=label,
                        color=colours[gi % len(colours)], error_kw={"elinewidth": 0.8, "ecolor": "#222"})
                for y, (high, n) in zip(ys, ns):
                    ax.text(100 * high + 1.2, y, f"n={n}", va="center", fontsize=6.5, color="#333")
            ax.set_yticks(range(len(items)))
            ax.set_yticklabels([f"{_short(titles[i], 38)} ({i})" for i in items], fontsize=7)
            ax.invert_yaxis()
            ax.set_xlim(0, 112)
            ax.set_xticks(range(0, 101, 20))
            ax.grid(axis="x", color="#ddd", linewidth=0.6)
            ax.set_axisbelow(True)
            docs = next(n for c, _t, _v, n in audit.checklists if c == cid)
            ax.set_title(f"{title} ({cid}), {docs} document{'s' if docs != 1 else ''}"
                         + (f", by {audit.by}" if audit.by else ""), fontsize=9, loc="left")
            if audit.by:
                ax.legend(title=audit.by, fontsize=7, title_fontsize=7, loc="lower right")
        axes[-1, 0].set_xlabel("documents reporting the item (%), with Wilson 95% intervals\n"
                               "n = documents where the item applies; partial counts as not reported")
        return fig


def plot(audit: Audit, target: str | Path) -> bytes:
    """The figure of figure() as PNG or SVG bytes, by the target's suffix (SVG is deterministic)."""
    fig = figure(audit, target)
    import matplotlib.pyplot as plt

    suffix = Path(target).suffix.lower()
    with matplotlib_context():
        buf = io.BytesIO()
        try:
            if suffix == ".svg":
                fig.savefig(buf, format="svg", metadata={"Date": None})
            else:
                fig.savefig(buf, format="png", metadata={"Software": None}, dpi=150)
        finally:
            plt.close(fig)
    return buf.getvalue()
