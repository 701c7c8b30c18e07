"""The corpus audit's renderers: terminal, CSV, JSON, an HTML page, and the plot of the rates (PNG or SVG).

They show what the Audit holds (checker.many.audit); the CSV's notes are the Audit's sidecar().
"""

from __future__ import annotations

import csv
import html
import io
import json
from pathlib import Path

from ..core.cautions import CAUTIONS
from ..core.errors import UsageError
from ..core.output import HTML_MARK
from ..many.audit import RATE_NOTE, Audit, RateRow, group_key


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


def render_terminal(audit: Audit, options=None) -> str:
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
    for c in CAUTIONS["audit"]:
        w(f"Note: {c}\n")
    return out.getvalue()


def _cells(r: RateRow) -> list[str]:
    f = (lambda x: "" if x is None else f"{x:.4f}")
    return [r.checklist, r.group, r.item, r.title, str(r.applicable), str(r.reported), str(r.partial), f(r.rate),
            f(r.low), f(r.high), f(r.partial_rate)]


def render_csv(audit: Audit, options=None) -> str:
    """One header row and one row per checklist, group and item; nothing else (the notes are in sidecar())."""
    buf = io.StringIO()
    wr = csv.writer(buf, lineterminator="\n")
    wr.writerow(COLUMNS)
    for r in audit.rows:
        wr.writerow(_cells(r))
    return buf.getvalue()


def render_json(audit: Audit, options=None) -> str:
    return json.dumps(audit.to_dict(), ensure_ascii=False, indent=2, allow_nan=False) + "\n"


def _bar(r: RateRow) -> str:
    """The rate as a bar with its interval as a whisker, in percent of the cell's width (neutral ink)."""
    if r.rate is None:
        return ""
    lo, hi, x = 100 * r.low, 100 * r.high, 100 * r.rate
    return (f'<span class="rb" aria-hidden="true"><i class="r" style="width:{x:.1f}%"></i>'
            f'<i class="w" style="left:{lo:.1f}%;width:{max(hi - lo, 0.3):.1f}%"></i></span>')


def render_html(audit: Audit, options=None) -> str:
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
    notes = "".join(f"<p class=\"note\">{e(c)}</p>" for c in CAUTIONS["audit"])
    body = (f"<h1>Reporting rates: {e(audit.checklist_id)}</h1><p>Checklists: {e(_checklists_line(audit))}. "
            f"{e(audit.checklist_note)}</p><p>{e(_summary(audit, True))}.</p>"
            f"<p><label>Filter rows: <input id=\"filter\" type=\"search\"></label> Click a column heading to sort; "
            "point at an item for its id.</p>"
            f"<table class=\"sortable\"><thead><tr>{head}</tr></thead><tbody>{''.join(body_rows)}</tbody></table>"
            + (f"<h2>Not counted</h2><ul>{problems}</ul>" if problems else "")
            + f"<p class=\"note\">{e(RATE_NOTE)}.</p>{notes}")
    return html_page(f"studygap audit: {audit.checklist_id}", body)


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
    return (f"<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">{HTML_MARK}"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
            f"<title>{html.escape(title)}</title><style>{HTML_STYLE}</style></head><body>\n{body}\n"
            f"<script>{HTML_SCRIPT}</script></body></html>\n")

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

    groups = sorted({r.group for r in audit.rows}, key=group_key)
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
