"""HTML reader: the page's own text as blocks with source lines, without scripts, navigation and hidden parts.

lxml (installed with python-docx) parses; it records the line where each start tag ends, which makes the line of
every text piece exact without searching the source for it.
"""

from __future__ import annotations

import codecs
import re
from pathlib import Path

import lxml.etree as etree
import lxml.html

from .document import Block, BlockKind, Location
from ..core.limits import Limits
from . import Parsed
from .text import SUBSCRIPT, SUPERSCRIPT, LineText, decode_bytes, sniff_text_like

FORMAT = "html"
SUFFIXES = (".html", ".htm", ".xhtml")

#: never text of the document itself: what a browser does not show as the page's text, and the page's furniture,
#: with the words a warning uses for what was left out (None: not shown by a browser, so not worth a word)
_SKIP_TAGS: dict[str, str | None] = {
    **dict.fromkeys("script style noscript template head title meta link base source track".split()),
    **dict.fromkeys("nav".split(), "navigation"),
    **dict.fromkeys("aside".split(), "sidebars"),
    **dict.fromkeys("button select option optgroup textarea input datalist".split(), "form controls"),
    **dict.fromkeys("iframe object embed svg canvas map audio video".split(), "embedded objects"),
    **dict.fromkeys("pre".split(), "code blocks"),
    **dict.fromkeys("dialog".split(), "hidden elements"),
}
_DROP = frozenset(_SKIP_TAGS)
#: ARIA roles of page furniture
_DROP_ROLES = {
    **dict.fromkeys("navigation menu menubar toolbar tablist".split(), "navigation"),
    **dict.fromkeys("banner contentinfo".split(), "page headers and footers"),
    **dict.fromkeys("search".split(), "form controls"),
    **dict.fromkeys("complementary".split(), "sidebars"),
}
_CONTENT = frozenset({"article", "main", "section"})
_BLOCK = frozenset(
    """address article aside blockquote body center details dialog dd div dl dt fieldset figcaption figure footer
    form h1 h2 h3 h4 h5 h6 header hgroup hr html li main nav ol p pre section summary table tbody thead tfoot tr td
    th ul caption legend menu dir noframes frameset""".split()
)
_HEADINGS = {f"h{i}": i for i in range(1, 7)}
_PARAGRAPHS = frozenset("p summary legend address dt dd blockquote".split())
_HIDDEN_STYLE = re.compile(r"(?:^|;)\s*(?:display\s*:\s*none|visibility\s*:\s*hidden)\b", re.IGNORECASE)
_MAX_LINE = 65535  # libxml2 stops counting source lines here

_META_CHARSET = re.compile(rb"<meta[^>]+?charset\s*=\s*[\"']?\s*([A-Za-z0-9._:-]+)", re.IGNORECASE)
_XML_ENCODING = re.compile(rb"^\s*<\?xml[^>]*?encoding\s*=\s*[\"']([A-Za-z0-9._:-]+)", re.IGNORECASE)
#: what browsers do: these labels mean Windows-1252, a superset
_WINDOWS_1252 = {"iso-8859-1", "iso8859-1", "latin-1", "latin1", "us-ascii", "ascii", "l1", "cp819"}


def declared_charset(head: bytes) -> str | None:
    """The encoding the page declares in a meta tag or XML declaration, when Python knows it."""
    m = _XML_ENCODING.match(head) or _META_CHARSET.search(head)
    if not m:
        return None
    label = m.group(1).decode("ascii", "replace").lower()
    if label in _WINDOWS_1252:
        return "cp1252"
    try:
        return codecs.lookup(label).name
    except LookupError:
        return None


def url_note(text: str, href: str | None) -> str:
    """' (https://...)' to follow a link's text when the address says something the text does not."""
    if not href:
        return ""
    href = href.strip()
    if not re.match(r"^(?:https?|ftp)://", href, re.IGNORECASE):
        return ""
    bare = re.sub(r"^(?:https?|ftp)://(?:www\.)?", "", href, flags=re.IGNORECASE).rstrip("/")
    t = text.strip().rstrip("/")
    if not t or t == href or bare == re.sub(r"^(?:https?|ftp)://(?:www\.)?", "", t, flags=re.IGNORECASE):
        return ""
    return f" ({href})"


class _Lines:
    """The source line where each text piece (an element's text or tail) starts."""

    def __init__(self, root: etree._Element, offset: int) -> None:
        self.text: dict[etree._Element, int] = {}
        self.tail: dict[etree._Element, int] = {}
        self._keep: list[etree._Element] = []  # keeps lxml proxies alive, so the dict keys stay valid
        cur = 1
        stack: list[tuple[etree._Element, bool]] = [(root, False)]
        while stack:
            el, done = stack.pop()
            if done:
                if el.tail:
                    self.tail[el] = cur + offset
                    cur += el.tail.count("\n")
                continue
            self._keep.append(el)
            line = el.sourceline
            real = isinstance(el.tag, str)
            if line is not None and 0 < line < _MAX_LINE:
                # an element's line is where its start tag ends; a comment's is where the comment ends
                cur = line if real else max(1, line - (el.text or "").count("\n"))
            if el.text:
                self.text[el] = cur + offset
                cur += el.text.count("\n")
            stack.append((el, True))
            for child in reversed(el):
                stack.append((child, False))


class _HtmlBlocks:
    def __init__(self, file: str, lines: _Lines, tables: int) -> None:
        self.file = file
        self.lines = lines
        self.tables = tables
        self.blocks: list[Block] = []
        self.content_depth = 0
        #: elements left out that hold words a reader of the page might look for, with the reason
        self.skipped: dict[etree._Element, str] = {}

    # -- what to skip
    def dropped(self, el: etree._Element) -> bool:
        if not isinstance(el.tag, str):
            return True  # comments and processing instructions
        reason = self.skip_reason(el)
        if reason is None:
            return False
        if reason:
            self.skipped.setdefault(el, reason)
        return True

    def skip_reason(self, el: etree._Element) -> str | None:
        """Why ``el`` is left out ("" when a browser would not show it either), or None when it is read."""
        tag = el.tag.lower()
        if tag in _DROP:
            return _SKIP_TAGS[tag] or ""
        if tag in ("header", "footer") and not self.content_depth:
            return "page headers and footers"  # page chrome; a header inside an article holds its title
        attrib = el.attrib
        if not attrib:
            return None
        if "hidden" in attrib or attrib.get("aria-hidden", "").strip().lower() == "true":
            return "hidden elements"
        role = attrib.get("role", "").strip().lower()
        if role in _DROP_ROLES:
            return _DROP_ROLES[role]
        style = attrib.get("style")
        return "hidden elements" if style and _HIDDEN_STYLE.search(style) else None

    # -- text
    def add(self, b: LineText, text: str | None, line: int | None) -> None:
        if text:
            b.add(text, line)

    def inline(self, el: etree._Element, b: LineText, links: bool = True, script: dict | None = None) -> None:
        """Everything inside ``el`` as running text (block children are flattened with spaces)."""
        tag = el.tag.lower()
        if tag == "br":
            b.space(line_break=True)
            return
        if tag in ("sup", "sub"):
            script = SUPERSCRIPT if tag == "sup" else SUBSCRIPT
        block = tag in _BLOCK
        if block:
            b.space()
        start = b.mark_position()
        text = el.text
        self.add(b, text.translate(script) if text and script else text, self.lines.text.get(el))
        for child in el:
            if not self.dropped(child):
                self.inline(child, b, links, script)
            tail = child.tail
            self.add(b, tail.translate(script) if tail and script else tail, self.lines.tail.get(child))
        if tag == "a" and links:
            note = url_note(b.text_since(start), el.get("href"))
            if note:
                b.add(note, None)
        if block or tag in ("td", "th"):
            b.space()

    def emit(self, b: LineText, kind: BlockKind, level: int | None = None, fallback: int | None = None,
             table: int | None = None, row: int | None = None) -> None:
        if not b:
            return
        loc = Location(self.file, line=b.first_line or fallback, table=table, row=row)
        self.blocks.append(b.block(kind, loc, level))

    def flow(self, el: etree._Element, kind: BlockKind, level: int | None = None) -> None:
        """Text directly in ``el`` becomes blocks of ``kind``; block children are handled in their place."""
        b = LineText()
        self.add(b, el.text, self.lines.text.get(el))
        fallback = self.lines.text.get(el, el.sourceline)
        for child in el:
            if not self.dropped(child):
                tag = child.tag.lower()
                if tag in _BLOCK and kind != "heading":
                    self.emit(b, kind, level, fallback)
                    b = LineText()
                    self.block(child, kind)
                else:
                    self.inline(child, b, links=kind != "heading")
            self.add(b, child.tail, self.lines.tail.get(child))
        self.emit(b, kind, level, fallback)

    def block(self, el: etree._Element, parent: BlockKind) -> None:
        tag = el.tag.lower()
        inherit: BlockKind = parent if parent in ("list-item", "caption") else "paragraph"
        if tag in _HEADINGS:
            self.flow(el, "heading", _HEADINGS[tag])
        elif el.get("role", "").lower() == "heading" and el.get("aria-level", "").isdigit():
            self.flow(el, "heading", max(1, min(9, int(el.get("aria-level")))))
        elif tag == "li":
            self.flow(el, "list-item")
        elif tag in ("figcaption", "caption"):
            self.flow(el, "caption")
        elif tag == "table":
            self.table(el, parent)
        elif tag in ("hr",):
            return
        elif tag in _CONTENT or el.get("role", "").lower() == "main":
            self.content_depth += 1
            try:
                self.flow(el, inherit)
            finally:
                self.content_depth -= 1
        elif tag in _PARAGRAPHS:
            self.flow(el, inherit)
        else:
            self.flow(el, inherit)

    # -- tables
    def rows(self, table: etree._Element) -> list[etree._Element]:
        out = []
        for child in table:
            if not isinstance(child.tag, str) or self.dropped(child):
                continue
            tag = child.tag.lower()
            if tag == "tr":
                out.append(child)
            elif tag in ("thead", "tbody", "tfoot"):
                out.extend(r for r in child if isinstance(r.tag, str) and r.tag.lower() == "tr" and not self.dropped(r))
        return out

    @staticmethod
    def cells(row: etree._Element) -> list[etree._Element]:
        return [c for c in row if isinstance(c.tag, str) and c.tag.lower() in ("td", "th")]

    def layout_table(self, rows: list[etree._Element]) -> bool:
        """A table used to lay out a page (headings, nested tables or many blocks in a cell) is read as flow."""
        for row in rows:
            for cell in self.cells(row):
                blocks = 0
                for d in cell.iterdescendants():
                    if not isinstance(d.tag, str):
                        continue
                    t = d.tag.lower()
                    if t in _HEADINGS or t == "table":
                        return True
                    if t in ("p", "div", "ul", "ol", "blockquote"):
                        blocks += 1
                        if blocks > 3:
                            return True
        return False

    def table(self, el: etree._Element, parent: BlockKind) -> None:
        rows = self.rows(el)
        if self.layout_table(rows):
            for child in el:
                if isinstance(child.tag, str) and child.tag.lower() == "caption" and not self.dropped(child):
                    self.flow(child, "caption")
            for row in rows:
                for cell in self.cells(row):
                    if not self.dropped(cell):
                        self.flow(cell, "paragraph")
            return
        self.tables += 1
        for child in el:
            if isinstance(child.tag, str) and child.tag.lower() == "caption" and not self.dropped(child):
                self.flow(child, "caption")
        for r, row in enumerate(rows, start=1):
            b = LineText()
            for cell in self.cells(row):
                if self.dropped(cell):
                    continue
                cb = LineText()
                self.inline(cell, cb)
                if not cb:
                    continue
                b.next_cell()
                b.extend(cb)
            self.emit(b, "table-row", fallback=self.lines.text.get(row, row.sourceline), table=self.tables, row=r)


def html_blocks(text: str, file: str, first_line: int = 1, tables: int = 0,
                skipped: dict[str, int] | None = None) -> tuple[list[Block], int]:
    """Blocks of an HTML document or fragment given as text, its lines counted from ``first_line``.

    Returns the blocks and the number of data tables seen so far (``tables`` plus this text's own), so that
    a Markdown file with HTML tables numbers all its tables in one sequence. Words left out (navigation,
    hidden elements, ...) are added to ``skipped`` by reason.
    """
    if not text.strip():
        return [], tables
    # an XML declaration would make lxml refuse text that is already decoded; keep its line, drop its words
    text = re.sub(r"^\s*<\?xml[^>]*\?>", lambda m: "\n" * m.group(0).count("\n"), text, count=1)
    parser = lxml.html.HTMLParser(encoding="utf-8", remove_comments=False, remove_pis=False, no_network=True,
                                   huge_tree=True)  # else libxml2 silently drops text nodes over 10 MB
    try:
        root = lxml.html.document_fromstring(text.encode("utf-8", "surrogatepass"), parser=parser)
    except (etree.ParserError, etree.XMLSyntaxError, ValueError):
        return [], tables  # nothing but comments or whitespace
    lines = _Lines(root, first_line - 1)
    reader = _HtmlBlocks(file, lines, tables)
    body = root.find("body")
    start = body if body is not None else root
    reader.flow(start, "paragraph")
    if skipped is not None:
        for el, reason in reader.skipped.items():
            words = len(el.text_content().split())
            if words:
                skipped[reason] = skipped.get(reason, 0) + words
    return reader.blocks, reader.tables


def skipped_note(skipped: dict[str, int]) -> str | None:
    """One line naming what was left out of the page's text, most words first."""
    if not skipped:
        return None
    parts = [f"{reason} ({words:,} word{'s' if words != 1 else ''})"
             for reason, words in sorted(skipped.items(), key=lambda kv: (-kv[1], kv[0]))]
    return "left out as not the page's own text: " + ", ".join(parts)


_END = re.compile(r"</html\s*>", re.IGNORECASE)
_NEXT_START = re.compile(r"<!doctype\b|<html\b", re.IGNORECASE)


def html_documents(text: str) -> list[tuple[int, str]]:
    """The HTML documents one file holds, as (first line, text): a saved site often joins several pages, each
    with its own <html> element, and a parser stops at the end of the first one."""
    pieces: list[tuple[int, str]] = []
    start, line = 0, 1
    for m in _END.finditer(text):
        nxt = _NEXT_START.search(text, m.end())
        if nxt is None:
            break
        # everything up to the next page's start (comments, blank lines) goes with the page before
        pieces.append((line, text[start:nxt.start()]))
        line += text.count("\n", start, nxt.start())
        start = nxt.start()
    pieces.append((line, text[start:]))
    return pieces


def sniff(head: bytes, path: Path) -> str | None:
    return sniff_text_like(head, "HTML")


def read(path: Path, data: bytes, limits: Limits) -> Parsed:
    text, warnings = decode_bytes(data, declared_charset(data[:4096]))
    blocks: list[Block] = []
    tables = 0
    skipped: dict[str, int] = {}
    for first_line, piece in html_documents(text):
        more, tables = html_blocks(piece, str(path), first_line, tables, skipped)
        blocks.extend(more)
    note = skipped_note(skipped)
    if note:
        warnings.append(note)
    return Parsed(blocks=blocks, warnings=warnings)
