"""Markdown reader (CommonMark with tables, via markdown-it-py): blocks with the source line of every line of text.

Front matter and code are not document text; raw HTML is read as HTML; links keep their address in parentheses
because an address is often the evidence ("the code is available at https://...").
"""

from __future__ import annotations

import re
from functools import lru_cache
from pathlib import Path

from markdown_it import MarkdownIt
from markdown_it.token import Token

from .document import Block, BlockKind, Location
from ..core.limits import Limits
from . import Parsed
from .html import html_blocks, url_note
from .text import LineText, decode_bytes, normalize_newlines, sniff_text_like

FORMAT = "markdown"
SUFFIXES = (".md", ".markdown", ".rmd", ".qmd")

_COMMENT = re.compile(r"<!--.*?(?:-->|\Z)", re.DOTALL)
_TAG = re.compile(r"^<\s*(/?)\s*([A-Za-z][\w-]*)([^>]*)>", re.DOTALL)
_HREF = re.compile(r"""\bhref\s*=\s*(?:"([^"]*)"|'([^']*)'|([^\s>]+))""", re.IGNORECASE)
_TITLE_YAML = re.compile(r"""^title\s*:\s*(?P<v>.+?)\s*$""", re.IGNORECASE)
_TITLE_TOML = re.compile(r"""^title\s*=\s*(?P<v>.+?)\s*$""", re.IGNORECASE)


@lru_cache(maxsize=1)
def _parser() -> MarkdownIt:
    return MarkdownIt("commonmark", {"html": True}).enable(["table", "strikethrough"])


def _front_matter(lines: list[str]) -> tuple[int, tuple[str, int] | None]:
    """How many leading lines are YAML ('---') or TOML ('+++') front matter, and its title with its line."""
    if not lines or lines[0].strip() not in ("---", "+++"):
        return 0, None
    fence = lines[0].strip()
    ends = ("---", "...") if fence == "---" else ("+++",)
    pattern = _TITLE_YAML if fence == "---" else _TITLE_TOML
    title: tuple[str, int] | None = None
    for i in range(1, min(len(lines), 2000)):
        line = lines[i]
        if line.strip() in ends:
            return i + 1, title
        m = pattern.match(line)
        if m and title is None:
            value = m.group("v").strip()
            if len(value) >= 2 and value[0] == value[-1] and value[0] in "\"'":
                value = value[1:-1]
            if value and value not in ("|", ">", "|-", ">-"):
                title = (value, i + 1)
    return 0, None  # never closed: a thematic break, not front matter


class _MarkdownBlocks:
    def __init__(self, file: str) -> None:
        self.file = file
        self.blocks: list[Block] = []
        self.tables = 0

    def inline(self, token: Token, first_line: int, links: bool = True) -> LineText:
        """The text of an inline token, each word marked with its source line."""
        b = LineText()
        line = first_line
        anchors: list[tuple[int, str | None]] = []
        for child in token.children or ():
            t = child.type
            if t == "text" or t == "code_inline":
                b.add(child.content, line)
            elif t in ("softbreak", "hardbreak"):
                line += 1
                b.space(line_break=True)
            elif t == "image":
                b.add(child.content, line)  # its alt text
            elif t == "link_open":
                anchors.append((b.mark_position(), child.attrs.get("href")))  # type: ignore[arg-type]
            elif t == "link_close":
                if anchors:
                    start, href = anchors.pop()
                    note = url_note(b.text_since(start), href) if links else ""
                    if note:
                        b.add(note, None)
            elif t == "html_inline":
                content = child.content
                tag = _TAG.match(content)
                if tag and tag.group(2).lower() == "a":
                    if not tag.group(1):
                        href = _HREF.search(tag.group(3))
                        address = next((g for g in href.groups() if g), None) if href else None
                        anchors.append((b.mark_position(), address))
                    elif anchors:
                        start, href_text = anchors.pop()
                        note = url_note(b.text_since(start), href_text) if links else ""
                        if note:
                            b.add(note, None)
                elif tag and tag.group(2).lower() in ("br", "p", "div", "li"):
                    b.space()
                line += content.count("\n")
            else:
                b.add(child.content, line)
        return b

    def emit(self, b: LineText, kind: BlockKind, line: int, level: int | None = None,
             table: int | None = None, row: int | None = None) -> None:
        if b:
            self.blocks.append(b.block(kind, Location(self.file, line=b.first_line or line, table=table, row=row),
                                       level))

    def run(self, tokens: list[Token]) -> None:
        containers: list[str] = []  # open list items and block quotes, innermost last
        row: list[LineText] | None = None
        row_line = 0
        rows = 0
        i = 0
        n = len(tokens)
        while i < n:
            tok = tokens[i]
            t = tok.type
            line = tok.map[0] + 1 if tok.map else 0
            if t in ("list_item_open", "blockquote_open"):
                containers.append(t)
            elif t in ("list_item_close", "blockquote_close"):
                if containers:
                    containers.pop()
            elif t == "heading_open":
                inline = tokens[i + 1]
                self.emit(self.inline(inline, line, links=False), "heading", line, level=int(tok.tag[1:]))
                i += 2
            elif t == "paragraph_open":
                inline = tokens[i + 1]
                kind: BlockKind = "list-item" if containers and containers[-1] == "list_item_open" else "paragraph"
                self.emit(self.inline(inline, line), kind, line)
                i += 2
            elif t == "table_open":
                self.tables += 1
                rows = 0
            elif t == "tr_open":
                row, row_line = [], line
            elif t == "inline" and row is not None:
                row.append(self.inline(tok, row_line))
            elif t == "tr_close" and row is not None:
                rows += 1
                b = LineText()
                for cell in row:
                    if not cell:
                        continue
                    b.next_cell()
                    b.extend(cell)
                self.emit(b, "table-row", row_line, table=self.tables, row=rows)
                row = None
            elif t == "html_block":
                # comments go; any other raw HTML is read as HTML, lines and all
                content = _COMMENT.sub(lambda m: "\n" * m.group(0).count("\n"), tok.content)
                if content.strip():
                    blocks, self.tables = html_blocks(content, self.file, first_line=line, tables=self.tables)
                    if containers and containers[-1] == "list_item_open":
                        blocks = [_as_list_item(b) for b in blocks]
                    self.blocks.extend(blocks)
            # fences, indented code and thematic breaks carry no prose
            i += 1


def _as_list_item(block: Block) -> Block:
    if block.kind != "paragraph":
        return block
    return Block(block.text, "list-item", block.location, block.level, marks=block.marks)


def sniff(head: bytes, path: Path) -> str | None:
    return sniff_text_like(head, "Markdown")


def read(path: Path, data: bytes, limits: Limits) -> Parsed:
    text, warnings = decode_bytes(data)
    text = normalize_newlines(text)
    lines = text.split("\n")
    skip, title = _front_matter(lines)
    reader = _MarkdownBlocks(str(path))
    if skip:
        # blank the front matter rather than cut it, so that line numbers stay those of the file
        text = "\n" * skip + "\n".join(lines[skip:])
        if title:
            b = LineText()
            b.add(title[0], title[1])
            reader.emit(b, "heading", title[1], level=1)
    reader.run(_parser().parse(text))
    return Parsed(blocks=reader.blocks, warnings=warnings)
