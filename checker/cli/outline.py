"""`studygap outline`: what the reader saw — format, pages, words, the section tree with roles and places."""

from __future__ import annotations

import argparse
from dataclasses import dataclass, field
from typing import Any

from ..reading.document import Document, Location
from ..core.errors import ExitCode
from ..core.limits import DEFAULT_LIMITS, Limits
from .options import add_limit_options, color, limits_from, write_output


DESCRIPTION = """What the reader saw in one document: its format, pages and words, the section tree with the
role of each section (methods, results, references...) and its page or line range, and any warnings. Use it to
see why an item was or was not found in a section."""


@dataclass
class SectionNode:
    title: str
    level: int
    role: str
    start: Location
    end: Location | None = None
    words: int = 0
    sentences: int = 0
    children: list["SectionNode"] = field(default_factory=list)
    path: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {
            "title": self.title,
            "level": self.level,
            "role": self.role,
            "start": _place(self.start),
            "end": _place(self.end or self.start),
            "words": self.words,
            "sentences": self.sentences,
            "sections": [c.to_dict() for c in self.children],
        }


def _place(loc: Location) -> dict[str, Any]:
    return {k: v for k, v in loc.to_dict().items()
            if k in ("file", "page", "line", "paragraph", "table", "row", "printed_line") and v is not None}


def section_tree(document: Document) -> tuple[list[SectionNode], int, int]:
    """Top-level sections, and the words and sentences before the first heading."""
    roots: list[SectionNode] = []
    stack: list[SectionNode] = []
    pre_words = pre_sents = 0
    counts: dict[int, int] = {}
    for s in document.sentences:
        counts[s.block] = counts.get(s.block, 0) + 1
    for bi, b in enumerate(document.blocks):
        if b.kind == "heading":
            # the tree follows the section paths (a title or an abstract holds no sections, whatever its level)
            path = b.section or (" ".join(b.text.split()),)
            while stack and (len(stack) >= len(path) or stack[-1].path != path[:len(stack)]):
                stack.pop()
            level = len(stack) + 1
            node = SectionNode(" ".join(b.text.split()), level, b.role, b.location, path=path)
            (stack[-1].children if stack else roots).append(node)
            stack.append(node)
            continue
        words = len(b.text.split())
        if not stack:
            pre_words += words
            pre_sents += counts.get(bi, 0)
        for node in stack:
            node.words += words
            node.sentences += counts.get(bi, 0)
            node.end = b.location
    return roots, pre_words, pre_sents


def outline(path, limits: Limits = DEFAULT_LIMITS) -> dict[str, Any]:
    from ..matching.nlp import segment
    from ..reading import read_document

    doc = segment(read_document(path, limits))
    roots, pre_words, pre_sents = section_tree(doc)
    kinds: dict[str, int] = {}
    for b in doc.blocks:
        kinds[b.kind] = kinds.get(b.kind, 0) + 1
    return {
        "path": doc.path,
        "format": doc.format,
        "pages": doc.pages,
        "words": doc.words,
        "sentences": len(doc.sentences),
        "blocks": dict(sorted(kinds.items())),
        "sha256": doc.sha256,
        "before_first_heading": {"words": pre_words, "sentences": pre_sents},
        "sections": [r.to_dict() for r in roots],
        "warnings": list(doc.warnings),
    }


def _where(p: dict[str, Any], main: str = "") -> str:
    """'p.3 l.12', 'table 2', '¶14', 'l.40', or 'sections/data.tex l.6' for a part of a LaTeX document."""
    if p.get("file") and main and p["file"] != main:
        import os

        rel = os.path.relpath(p["file"], os.path.dirname(main) or ".")
        return f"{rel} " + _where({k: v for k, v in p.items() if k != "file"})
    if "page" in p:  # the line number printed in the margin, where the page has them
        line = p.get("printed_line", p.get("line"))
        return f"p.{p['page']}" + (f" l.{line}" if line is not None else "")
    if "table" in p:
        return f"table {p['table']}"
    if "paragraph" in p:
        return f"¶{p['paragraph']}"
    if "line" in p:
        return f"l.{p['line']}"
    return ""


def render_outline(data: dict[str, Any], fmt: str = "terminal", color: bool = False) -> str:
    if fmt == "json":
        from ..reports.json import dumps

        return dumps(data)
    lines = [f"{data['path']}: {data['format']}"
             + (f", {data['pages']} pages" if data["pages"] else "")
             + f", {data['words']:,} words, {data['sentences']:,} sentences"]
    blocks = ", ".join(f"{n} {k}" for k, n in data["blocks"].items())
    lines.append(f"blocks: {blocks}")
    if data["before_first_heading"]["words"]:
        lines.append(f"before the first heading: {data['before_first_heading']['words']:,} words")

    def walk(nodes, depth):
        for n in nodes:
            span = _where(n["start"], data["path"])
            end = _where(n["end"], data["path"])
            head, _, tail = end.rpartition(" ")
            if head and head == span.rpartition(" ")[0] and not head.startswith("p."):
                end = tail  # the same file: "sections/data.tex l.6–l.12"
            if end and end != span:
                span += f"–{end}"
            role = "" if n["role"] == "body" else f"  [{n['role']}]"
            lines.append(f"{'  ' * depth}{n['title']}{role}  ({span}; {n['words']:,} words)")
            walk(n["sections"], depth + 1)

    walk(data["sections"], 1)
    if not data["sections"]:
        lines.append("  no headings were recognised")
    for w in data["warnings"]:
        lines.append(f"warning: {w}")
    return "\n".join(lines) + "\n"


def add_parser(sub) -> argparse.ArgumentParser:
    """Add `outline` to the command line's subparsers."""
    o = sub.add_parser("outline", help="what the reader saw: sections, pages, lines, word counts",
                       description=DESCRIPTION,
                       epilog="exit codes: 0 done, 2 usage or input error.",
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    o.add_argument("file", metavar="FILE", help="PDF, DOCX, LaTeX, Markdown, HTML or text file")
    o.add_argument("--format", "-f", default="terminal", choices=["terminal", "json"],
                   help="output format (default terminal)")
    o.add_argument("-o", "--output", metavar="PATH", help="write the outline to this file (atomically)")
    add_limit_options(o)
    o.set_defaults(handler=run)
    return o


def run(args) -> int:
    """Run `studygap outline`; returns the exit code."""
    data = outline(args.file, limits_from(args))
    write_output(render_outline(data, args.format, color=color(args)), args.output, [args.file])
    return ExitCode.OK
