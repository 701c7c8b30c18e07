"""Renderers of an Evaluation (agreement with the user's labels): terminal tables and JSON.

They show what checker.many.evaluation computed and compute nothing themselves.
"""

from __future__ import annotations

import io
from pathlib import Path

from rich import box
from rich.console import Console
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from ..many.evaluation import STATUSES, Evaluation, Pair, to_json


#: status -> style, as in the terminal report (words.py's one vocabulary); the word is always printed
STYLES = {
    "reported": "",
    "partial": "bold",
    "missing": "bold",
    "not-applicable": "grey50",
}
KIND_WORDS = {
    "presence": "found by one side only",
    "degree": "reported or partial",
    "applicability": "missing or not applicable",
}
QUOTE_LIMIT = 300


def _num(x: float | None, digits: int = 3) -> str:
    return "n/a" if x is None else f"{x:.{digits}f}"


def _interval(fig) -> str:
    iv = fig.interval
    if iv is None or iv.low is None:
        return ""
    return f"{iv.low:.3f} to {iv.high:.3f}"


def _short(text: str, limit: int = QUOTE_LIMIT) -> str:
    return text if len(text) <= limit else text[: limit - 1] + "…"


def _status(status: str) -> Text:
    from .words import word

    return Text(word(status), style=STYLES.get(status, ""))


def _table(color: bool, title: str | None = None) -> Table:
    return Table(title=title, title_justify="left", box=box.SIMPLE_HEAD if color else None, show_edge=False,
                 pad_edge=False, header_style="bold" if color else "", title_style="bold" if color else "")


def _overview(ev: Evaluation, console: Console, color: bool) -> None:
    head = Text()
    head.append("studygap evaluate", style="bold")
    head.append(": agreement with your labels")
    console.print(head)
    failed = len(ev.errors)
    sample = (f"labels {ev.source or '(given)'}: {len(ev.documents)} label file{'s' if len(ev.documents) != 1 else ''}, "
              f"{ev.compared_documents} document{'s' if ev.compared_documents != 1 else ''} compared, "
              f"{ev.pairs} item pair{'s' if ev.pairs != 1 else ''}")
    if failed:
        sample += f"; {failed} document{'s' if failed != 1 else ''} could not be checked (listed below)"
    console.print(Text(sample, style="dim"))
    console.print(Text("checklist: " + (f"{ev.checklist_override} (named on the command line)"
                                        if ev.checklist_override else "as each label file names it"), style="dim"))
    console.print()
    t = _table(color, "Overall")
    t.add_column("figure")
    t.add_column("value", justify="right")
    t.add_column(f"{ev.level:.0%} interval", justify="right")
    for f in ev.figures:
        t.add_row(f.title, _num(f.value), _interval(f))
    console.print(t)


def _items(ev: Evaluation, console: Console, color: bool) -> None:
    t = _table(color, "Per item (positive = reported or partial)")
    for name, just in (("item", "left"), ("pairs", "right"), ("yours", "right"), ("studygap", "right"),
                       ("precision", "right"), ("recall", "right"), ("F1", "right"), ("3-class", "right")):
        t.add_column(name, justify=just)  # type: ignore[arg-type]
    for a in ev.items:
        s = a.scores
        name = a.item_id if a.in_macro else f"{a.item_id} *"
        t.add_row(name, str(a.pairs), str(s.support), str(s.predicted), _num(s.precision), _num(s.recall),
                  _num(s.f1), _num(a.three_class_agreement))
    console.print(t)
    console.print(Text("yours / studygap: how many documents each side marked positive; 3-class: agreement over "
                       "reported, partial and missing"
                       + ("; * no positive on either side, left out of macro-F1" if ev.macro_f1_left_out else ""),
                       style="dim"))


def _confusion(ev: Evaluation, console: Console, color: bool) -> None:
    t = _table(color, "Confusion (rows: your label, columns: studygap)")
    t.add_column("")
    from .words import word

    for s in STATUSES:
        t.add_column(word(s), justify="right")
    t.add_column("total", justify="right")
    for i, h in enumerate(STATUSES):
        row = ev.confusion.counts[i]
        cells = [Text(str(n), style="bold" if (i == j and n) else ("" if n else "dim")) for j, n in enumerate(row)]
        t.add_row(_status(h), *cells, str(sum(row)))
    totals = [sum(ev.confusion.counts[i][j] for i in range(len(STATUSES))) for j in range(len(STATUSES))]
    t.add_row("total", *map(str, totals), str(sum(totals)))
    console.print(t)


def _side(console: Console, who: str, status: str, passage: str, place: str, extra: str = "") -> None:
    line = Text()
    line.append(f"  {who:<10}")
    line.append_text(_status(status))
    console.print(line)
    if passage:
        console.print(Padding(Text(f"“{_short(passage)}”"), (0, 0, 0, 12), expand=False))
    if place:
        console.print(Padding(Text(place, style="dim"), (0, 0, 0, 12), expand=False))
    if extra:
        console.print(Padding(Text(_short(extra), style="italic"), (0, 0, 0, 12), expand=False))


def _disagreement(p: Pair, console: Console) -> None:
    head = Text()
    head.append(Path(p.document).name, style="bold")
    head.append("  ")
    head.append(p.item_id, style="bold")
    head.append(f"  ({KIND_WORDS.get(p.kind, p.kind)})", style="dim")
    console.print(head)
    _side(console, "you", p.human, p.human_quote, p.human_location, p.human_note)
    _side(console, "studygap", p.tool, p.tool_evidence, p.tool_location, p.tool_reason)


def render_terminal(ev: Evaluation, color: bool = False, width: int | None = None) -> str:
    """Tables and the disagreements for a person; without colour it is plain text that reads well in a file."""
    buf = io.StringIO()
    console = Console(file=buf, force_terminal=color, no_color=not color, color_system="standard" if color else None,
                      width=width or 100, highlight=False, soft_wrap=False, emoji=False)
    _overview(ev, console, color)
    if ev.items:
        console.print()
        _items(ev, console, color)
        console.print()
        _confusion(ev, console, color)
    console.print()
    n = len(ev.disagreements)
    console.print(Text(f"Disagreements ({n})" if n else "Disagreements: none", style="bold"))
    for p in ev.disagreements:
        console.print()
        _disagreement(p, console)
    if ev.errors:
        console.print()
        console.print(Text("Documents that could not be checked (their labels are not counted)", style="bold"))
        for d in ev.errors:
            console.print(Text(f"  {d.label_file}: {d.error}"))
    console.print()
    for note in ev.notes:
        console.print(Text("note: " + note, style="dim"))
    console.print()
    for c in ev.cautions:
        console.print(Text("· " + c, style="dim"))
    text = buf.getvalue()
    if not color:  # rich pads table and wrapped lines to their width; a file is easier to read and diff without
        text = "\n".join(line.rstrip() for line in text.split("\n"))
    return text


def render_text(ev: Evaluation, options=None) -> str:
    return render_terminal(ev, color=bool(options and options.color), width=options.width if options else None)


def render_json(ev: Evaluation, options=None) -> str:
    return to_json(ev)
