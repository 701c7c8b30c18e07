"""What a revision changed, for a terminal, as Markdown (a pull-request comment) or as JSON."""

from __future__ import annotations

import io
import json

from ..core.cautions import CAUTIONS
from ..many.compare import KIND_TEXT, KINDS, Comparison, PassageChange
from .words import word



def _short(text: str, n: int = 110) -> str:
    text = " ".join(text.split())
    return text if len(text) <= n else text[: n - 1] + "…"


def _passage_line(p: PassageChange) -> str:
    if p.change == "added":
        return f"added ({p.new.location.describe()}): {_short(p.new.text)}"
    if p.change == "removed":
        return f"removed ({p.old.location.describe()}): {_short(p.old.text)}"
    if p.change == "moved":
        return f"moved from {p.old.location.describe()} to {p.new.location.describe()}: {_short(p.new.text)}"
    if p.change == "reworded":
        return (f"reworded ({p.similarity:.0f}% alike), {p.old.location.describe()} -> "
                f"{p.new.location.describe()}: {_short(p.new.text)}")
    return f"kept ({p.new.location.describe()})"


def _sections(comp: Comparison):
    for kind in KINDS:
        items = [it for it in comp.items if it.kind == kind]
        if items:
            yield kind, items


def render_terminal(comp: Comparison, markdown: bool = False) -> str:
    out = io.StringIO()
    w = out.write
    if markdown:
        w(f"# What changed: `{comp.old_path}` → `{comp.new_path}`\n\nChecklist: {comp.checklist_note}\n")
    else:
        w(f"What changed from {comp.old_path} to {comp.new_path}\nChecklist: {comp.checklist_note}\n")
    counts = comp.counts()
    w(("\n" if markdown else "") + "Summary: " + ", ".join(f"{counts[k]} {KIND_TEXT[k].split(':')[0]}"
                                                           for k in KINDS if counts[k]) + "\n")
    for kind, items in _sections(comp):
        w(f"\n## {KIND_TEXT[kind]} ({len(items)})\n\n" if markdown else f"\n{KIND_TEXT[kind]} ({len(items)})\n")
        for it in items:
            status = (f"{word(it.old_status)} -> {word(it.new_status)}" if it.old_status != it.new_status
                      else word(it.new_status))
            if markdown:
                w(f"- **{it.id}** {it.title} ({status})\n")
            else:
                w(f"  {it.id:<36} {status}\n")
            shown = [p for p in it.passages if p.change != "kept" or kind in ("lost", "worse")]
            if kind == "unchanged":
                shown = [p for p in it.passages if p.change in ("moved", "reworded", "removed", "added")]
            for p in shown[:4]:
                w(("  - " if markdown else "      ") + _passage_line(p) + "\n")
            if kind in ("lost", "worse", "still-missing") and it.ask:
                w(("  - " if markdown else "      ") + f"to ask: {it.ask}\n")
    w("\n")
    for c in CAUTIONS["compare"]:
        w(f"> {c}\n" if markdown else f"Note: {c}\n")
    return out.getvalue()


def render_text(comp: Comparison, options=None) -> str:
    return render_terminal(comp)


def render_markdown(comp: Comparison, options=None) -> str:
    return render_terminal(comp, markdown=True)


def render_json(comp: Comparison, options=None) -> str:
    return json.dumps(comp.to_dict(), ensure_ascii=False, indent=2, allow_nan=False) + "\n"
