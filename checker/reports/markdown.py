"""The Markdown report, for review letters and pull-request comments: summary, items by status, findings, and
numbered requests to the authors drafted from each gap."""

from __future__ import annotations

import re
from collections.abc import Sequence

from ..core.cautions import CAUTIONS
from ..core.errors import visible
from ..core.output import MARKDOWN_MARK
from ..core.status import is_gap
from ..verdicts.report import Evidence, FacetResult, ItemResult, Report
from .words import heading, word

#: the order of sections: what needs the authors' attention first; headings are words.py's words
SECTIONS = tuple((s, heading(s)) for s in ("partial", "missing", "reported", "not-applicable", "waived"))
COUNT_ORDER = ("partial", "missing", "reported", "not-applicable", "waived")

# Characters that make markup anywhere in a line; escaped with a backslash (CommonMark allows it for any ASCII
# punctuation). Dots and hyphens are left alone except at the start, so the text stays readable as plain text.
_SPECIAL = re.compile(r"([\\`*_\[\]<>|~&$])")
_LINE_START = re.compile(r"^(\d+)([.)])|^([#+\-=>])")


def escape(text: str) -> str:
    """Document text as literal Markdown: markup characters are backslash-escaped, line breaks become spaces."""
    text = _SPECIAL.sub(r"\\\1", visible(" ".join(text.split())))
    return _LINE_START.sub(lambda m: f"{m.group(1)}\\{m.group(2)}" if m.group(1) else "\\" + m.group(3), text)


def merged_spans(ev: Evidence) -> list[tuple[int, int]]:
    """Matched spans in order, joined where they overlap or only whitespace lies between them."""
    out: list[tuple[int, int]] = []
    for s, e in sorted(ev.matches):
        s, e = max(0, s), min(len(ev.text), e)
        if s >= e:
            continue
        if out and (s <= out[-1][1] or not ev.text[out[-1][1]:s].strip()):
            out[-1] = (out[-1][0], max(out[-1][1], e))
        else:
            out.append((s, e))
    return out


def quote(ev: Evidence) -> str:
    """The passage with the matched words in bold, escaped."""
    text, parts, pos = ev.text, [], 0
    for s, e in merged_spans(ev):
        parts.append(_piece(text[pos:s]))
        parts.append("**" + escape(text[s:e]) + "**")
        pos = e
    parts.append(_piece(text[pos:]))
    return re.sub(r"\s+", " ", "".join(parts)).strip()


def _piece(text: str) -> str:
    """An unmarked stretch between matches: escaped, keeping one space where it had space at either end."""
    if not text.strip():
        return " " if text else ""
    return (" " if text[0].isspace() else "") + escape(text) + (" " if text[-1].isspace() else "")


def place(ev: Evidence, r: Report) -> str:
    return ev.location.describe(r.document_path)


def _first_evidence_of(item: ItemResult, facet: FacetResult) -> Evidence | None:
    for ev in item.evidence:
        if facet.id in ev.facets:
            return ev
    return None


def _sentence(text: str) -> str:
    text = text.strip()
    return text if text.endswith((".", "?", "!")) else text + "."


#: the order in which a letter raises the groups of each built-in checklist: what most changes how far readers can
#: trust the results comes first (our judgement, common practice in reviewing; other checklists keep their order)
GROUP_PRIORITY = {
    "validation-study": ("data", "reference", "metrics", "ranking", "results", "methods", "purpose", "availability",
                         "governance"),
    "benchmark-proposal": ("data", "reference", "metrics", "ranking", "results", "governance", "availability",
                           "purpose"),
    "dataset-description": ("data", "reference", "availability", "governance", "purpose", "metrics", "results",
                            "ranking"),
}
#: at most this many requests in a letter unless every one is asked for
MAX_REQUESTS = 10

def request(item: ItemResult, r: Report) -> str:
    """A polite, specific request for one missing or partial item, in whole sentences (document words escaped).

    A partial item says what was found, with its place, and asks only for what its best way to completion still
    lacks; a missing item gives the item's own request.
    """
    title = f"**{escape(item.title)}.**"
    if item.status == "partial":
        bits = []
        for f in (f for f in item.facets if f.found):
            ev = _first_evidence_of(item, f)
            bits.append(f"{_object(f.title)} ({escape(place(ev, r))})" if ev else _object(f.title))
        head = "We found " + _join(bits) if bits else "Part of this is reported"
        lacking = item.lacking
        if lacking:
            return f"{title} {head}; could you also report {_join([_object(t) for t in lacking])}?"
        return f"{title} {head}. {_sentence(item.ask) if item.ask else ''}".rstrip()
    ask = _sentence(item.ask) if item.ask else f"Could you add: {item.question}"
    if item.evidence:  # the judge found the cues' passages not enough (checker.verdicts.judge)
        return (f"{title} The passages we found on this ({escape(place(item.evidence[0], r))}) do not seem to "
                f"answer it. {ask}")
    where = f"; it is {escape(item.reason)}" if item.reason.startswith("only mentioned") else ""
    return f"{title} We could not find this in the document{where}. {ask}"


_PARTICIPLE_START = re.compile(r"(?:[a-z]+ed|given|shown|written|known|made|kept|held)\b")


def _object(title: str) -> str:
    """A facet title as the object of "we found" or "could you report": a title that opens with a participle
    ("described elsewhere only") becomes a clause ("that this is described elsewhere only")."""
    text = escape(" ".join(title.split()))
    return f"that this is {text}" if _PARTICIPLE_START.match(text) else text


def ranked_gaps(r: Report) -> list[ItemResult]:
    """Missing and partial items, most important first: by the group's rank for this kind of document, then missing
    before partial, then checklist order."""
    order = GROUP_PRIORITY.get(r.checklist_id) or tuple(g for g, _ in r.groups)
    rank = {g: i for i, g in enumerate(order)}
    gaps = [(n, it) for n, it in enumerate(r.items) if is_gap(it.status)]
    gaps.sort(key=lambda p: (rank.get(p[1].group, len(rank)), 0 if p[1].status == "missing" else 1, p[0]))
    return [it for _, it in gaps]


def letter(r: Report, level: str, all_requests: bool = False) -> list[str]:
    """The requests to the authors, grouped by section of the checklist, numbered throughout, at most MAX_REQUESTS
    unless all_requests; those left out are named in one line."""
    gaps = ranked_gaps(r)
    out = [f"{level} Requests to the authors", ""]
    if not gaps:
        return out + ["Every item of the checklist was found; there is nothing to request from these checks alone.",
                      ""]
    shown = gaps if all_requests else gaps[:MAX_REQUESTS]
    n = 0
    for group in dict.fromkeys(it.group for it in shown):
        out += [f"{level}# {escape(r.group_title(group))}", ""]
        for it in (x for x in shown if x.group == group):
            n += 1
            out.append(f"{n}. {request(it, r)}")
        out.append("")
    rest = gaps[len(shown):]
    if rest:
        out += [f"{len(rest)} further item{'s were' if len(rest) != 1 else ' was'} not found or only partly found; "
                "they matter less for this kind of document and are left out of the requests: "
                + "; ".join(escape(it.title) for it in rest) + ".", ""]
    return out


def _join(words: list[str]) -> str:
    if len(words) <= 1:
        return "".join(words)
    return ", ".join(words[:-1]) + " and " + words[-1]


def _item_block(item: ItemResult, r: Report, verbose: bool) -> list[str]:
    out = [f"#### {escape(item.title)} (`{item.id}`)", "", f"*{escape(item.question)}*", ""]
    if item.status != "reported" or verbose:
        out += [f"Status: **{word(item.status)}**. {escape(_sentence(item.reason))}" if item.reason
                else f"Status: **{word(item.status)}**.", ""]
    else:
        out += [f"Status: **{word(item.status)}**.", ""]
    # gaps show two passages (what was found, for the authors to extend), reported items their best one
    shown = item.evidence if verbose else item.evidence[: 1 if item.status == "reported" else 2]
    for ev in shown:
        out += [f"> {quote(ev)}", ">", f"> — {escape(place(ev, r))}", ""]
    if item.facts:
        facts = "; ".join(f"{name} = {', '.join(escape(x.text) for x in fs)}" for name, fs in item.facts)
        out += [f"Facts: {facts}", ""]
    return out


def render_one(r: Report, verbose: bool = False, level: int = 2, all_requests: bool = False) -> str:
    h = "#" * level
    out: list[str] = []
    out += [f"{h} studygap report: {escape(r.document_path)}", ""]
    bits = [r.document_format]
    if r.pages:
        bits.append(f"{r.pages} page{'s' if r.pages != 1 else ''}")
    bits.append(f"{r.words:,} words")
    out += [f"- Document: {escape(r.document_path)} ({', '.join(bits)})",
            f"- Checklist: {escape(r.checklist_title)} (`{r.checklist_id}`, version {r.checklist_version})"]
    counts = r.summary
    out.append("- Items: " + ", ".join(f"{counts[s]} {word(s)}" for s in COUNT_ORDER))
    if r.findings:
        out.append(f"- Findings across items: {len(r.findings)}")
    out.append("")
    for w in r.warnings:
        out += [f"Note: {escape(w)}", ""]
    out += ["Please keep in mind:", ""] + [f"- {c}" for c in CAUTIONS["report"]] + [""]

    for status, heading in SECTIONS:
        items = [it for it in r.items if it.status == status]
        if not items:
            continue
        out += [f"{h}# {heading} ({len(items)})", ""]
        for it in items:
            out += _item_block(it, r, verbose)

    if r.findings:
        out += [f"{h}# Findings across items ({len(r.findings)})", ""]
        for f in r.findings:
            out += [f"#### {escape(f.title)} (`{f.id}`, {f.severity})", "", escape(f.message), ""]
            for ev in f.evidence[: (None if verbose else 3)]:
                out += [f"> {quote(ev)}", ">", f"> — {escape(place(ev, r))}", ""]

    out += letter(r, f"{h}#", all_requests)
    return "\n".join(out)


def render(reports: Sequence[Report], options) -> str:
    every = getattr(options, "all_requests", False)
    if len(reports) == 1:
        return MARKDOWN_MARK + "\n" + render_one(reports[0], options.verbose, all_requests=every)
    parts = [MARKDOWN_MARK, "# studygap reports", ""]
    parts += [render_one(r, options.verbose, level=2, all_requests=every) for r in reports]
    return "\n".join(parts)
