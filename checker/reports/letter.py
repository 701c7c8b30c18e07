"""The review letter: only the requests to the authors, most important first, grouped by section of the checklist,
in Markdown that pastes into a review form or an e-mail. The full report is the `markdown` format."""

from __future__ import annotations

from collections.abc import Sequence

from ..core.output import MARKDOWN_MARK
from ..verdicts.report import Report
from .markdown import MAX_REQUESTS, escape, letter, ranked_gaps


def render_one(r: Report, all_requests: bool = False) -> str:
    gaps = ranked_gaps(r)
    shown = len(gaps) if all_requests else min(len(gaps), MAX_REQUESTS)
    pages = f", {r.pages} page{'s' if r.pages != 1 else ''}" if r.pages else ""
    out = [f"# Requests to the authors: {escape(r.document_path)}", "",
           f"Checked against {escape(r.checklist_title)} ({r.checklist_id}, version {r.checklist_version}) on the "
           f"document as submitted ({r.document_format}{pages}). "
           + (f"The {shown} request{'s' if shown != 1 else ''} below "
              f"{'are' if shown != 1 else 'is'} ordered by how much the missing information matters for this kind "
              "of document." if gaps else ""), ""]
    body = letter(r, "#", all_requests)
    out += body[2:]  # the letter's own heading is the title above
    out += ["---", "",
            "These requests come from a check of the wording against a reporting checklist: an item may be reported "
            "in words the check did not recognise, and a reported item says nothing about whether the study is "
            "sound. Please read them alongside your own review.", ""]
    return "\n".join(out)


def render(reports: Sequence[Report], options) -> str:
    every = getattr(options, "all_requests", False)
    return "\n".join([MARKDOWN_MARK] + [render_one(r, every) for r in reports])
