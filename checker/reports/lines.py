"""One line per gap and per finding, ``path:line:column: status item-id: message``, the form editors and CI
annotate from. For PDFs the page stands in place of the line (the printed line number where the PDF is a
review copy with numbered lines), for DOCX the paragraph; the column is 1 (passages
are located by line, not by character)."""

from __future__ import annotations

from collections.abc import Sequence

from ..reading.document import Location
from ..core.errors import visible
from ..verdicts.report import Evidence, Report

GAPS = ("missing", "partial")


def position(loc: Location | None) -> int:
    """The line number for editors: the source line, else the PDF page, else the DOCX paragraph, else 1."""
    if loc is None:
        return 1
    if loc.printed_line is not None:  # the line number printed in a review copy's margin, as reviewers cite it
        return loc.printed_line
    if loc.page is not None:
        return loc.page
    if loc.line is not None:
        return loc.line
    if loc.paragraph is not None:
        return loc.paragraph
    return 1


def _one_line(text: str) -> str:
    return visible(" ".join(text.split()))


def _line(path: str, ev: Evidence | None, status: str, ident: str, message: str) -> str:
    file = ev.location.file if ev is not None and ev.location.file else path
    return f"{visible(file)}:{position(ev.location if ev else None)}:1: {status} {ident}: {_one_line(message)}"


def render_one(r: Report) -> list[str]:
    out = []
    for it in r.items:
        if it.status not in GAPS:
            continue
        ev = it.evidence[0] if it.evidence else None
        msg = f"{it.title}: {it.reason}" if it.reason else it.title
        out.append(_line(r.document_path, ev, it.status, it.id, msg))
    for f in r.findings:
        ev = f.evidence[0] if f.evidence else None
        out.append(_line(r.document_path, ev, f.severity, f.id, f"{f.title}: {f.message}"))
    return out


def render(reports: Sequence[Report], options) -> str:
    lines = [line for r in reports for line in render_one(r)]
    return "\n".join(lines) + ("\n" if lines else "")
