"""The terminal report (rich): a header with counts, then items by group with place and best passage."""

from __future__ import annotations

import io
from typing import Sequence

from rich.console import Console
from rich.padding import Padding
from rich.text import Text

from ..core.cautions import CAUTIONS
from ..core.errors import visible
from ..core.status import STATUS_ORDER, applies, is_gap
from ..verdicts.report import Evidence, Report
from .words import glyph, word

#: status -> style: one neutral scale, gaps in bold; the glyph and the word are always printed, so style is never
#: the only signal
STYLES = {
    "reported": "",
    "partial": "bold",
    "missing": "bold",
    "not-applicable": "grey50",
    "waived": "grey50",
}
WIDTH = 18  # the status column: glyph, space, the longest word ("not applicable") and two spaces


def _quote(ev: Evidence, limit: int = 320) -> Text:
    text = ev.text
    t = Text("“", style="dim")
    body = Text(text if len(text) <= limit else text[: limit - 1] + "…")
    for s, e in ev.matches:
        if s < len(body.plain):
            body.stylize("bold underline", s, min(e, len(body.plain)))
    t.append_text(body)
    t.append("”", style="dim")
    return t


def _indented(console: Console, text: Text) -> None:
    """Print under the item title, wrapped with a hanging indent."""
    console.print(Padding(text, (0, 0, 0, WIDTH + 2), expand=False))


def _header(r: Report) -> list[Text]:
    doc = Text()
    doc.append("studygap ", style="bold")
    doc.append(visible(r.document_path), style="bold")
    bits = [r.document_format]
    if r.pages:
        bits.append(f"{r.pages} page{'s' if r.pages != 1 else ''}")
    bits.append(f"{r.words:,} words")
    doc.append("  (" + ", ".join(bits) + ")", style="dim")
    cl = Text(f"checklist {r.checklist_id} {r.checklist_version}", style="")
    if r.checklist_choice:
        cl.append(f"  ·  {r.checklist_choice}", style="dim")
    counts = Text()
    for s in STATUS_ORDER:
        n = r.summary[s]
        counts.append(f"{glyph(s)} {n} {word(s)}", style=STYLES[s] if n else "dim")
        counts.append("   ")
    return [doc, cl, counts]


def render_one(r: Report, console: Console, verbose: bool) -> None:  # noqa: C901 - one linear layout
    for line in _header(r):
        console.print(line)
    for w in r.warnings:
        console.print(Text(f"note: {w}", style="italic"))
    current = None
    for it in r.items:
        if it.group != current:
            current = it.group
            console.print()
            console.print(Text(r.group_title(it.group), style="bold underline"))
        head = Text()
        head.append(f"  {glyph(it.status) + ' ' + word(it.status):<{WIDTH - 2}}  ", style=STYLES[it.status])
        head.append(it.title, style="bold")
        head.append(f"  [{it.id}]", style="dim")
        console.print(head)
        shown = it.evidence if verbose else it.evidence[:1]
        for ev in shown:
            _indented(console, Text(visible(ev.location.describe(r.document_path)), style="dim"))
            _indented(console, _quote(ev, limit=10_000 if verbose else 320))
        if is_gap(it.status) or not applies(it.status) or verbose:
            _indented(console, Text(it.reason, style="italic"))
        if verbose:
            for f in it.facets:
                mark = "found" if f.found else "not found"
                _indented(console, Text(f"facet {f.id}: {mark} ({f.evidence_count} passages)", style="dim"))
        if it.facts and (verbose or it.status in ("reported", "partial")):
            facts = "; ".join(f"{name} = {', '.join(x.text for x in fs)}" for name, fs in it.facts)
            _indented(console, Text("facts: " + facts, style="dim"))
    if r.findings:
        console.print()
        console.print(Text("Findings across items", style="bold underline"))
        for f in r.findings:
            line = Text()
            line.append(f"  {f.severity:<{WIDTH - 2}}  ", style="bold" if f.severity == "warning" else "")
            line.append(f.title, style="bold")
            line.append(f"  [{f.id}]", style="dim")
            console.print(line)
            _indented(console, Text(f.message))
            for ev in f.evidence[: (10 if verbose else 2)]:
                _indented(console, Text(visible(ev.location.describe(r.document_path)), style="dim"))
                _indented(console, _quote(ev))
    console.print()
    for c in CAUTIONS["report"]:
        console.print(Text("· " + c, style="dim"))


def render(reports: Sequence[Report], options) -> str:
    buf = io.StringIO()
    console = Console(
        file=buf,
        force_terminal=options.color,
        no_color=not options.color,
        color_system="standard" if options.color else None,
        width=options.width or 100,
        highlight=False,
        soft_wrap=False,
    )
    for i, r in enumerate(reports):
        if i:
            console.print()
            console.rule()
        render_one(r, console, options.verbose)
    # wrapped lines come padded to the block's width; trailing blanks only get in the way of diffs and pipes
    return "\n".join(line.rstrip(" ") for line in buf.getvalue().split("\n"))
