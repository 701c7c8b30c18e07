"""Plain-text and reStructuredText reader, plus the text helpers the other line-based readers share.

Shared here: byte decoding with fallbacks, ``LineText`` (builds one block's text from source lines and marks
where each line starts) and the numbered-heading test.
"""

from __future__ import annotations

import codecs
import re
from dataclasses import dataclass
from pathlib import Path

from .document import Block, BlockKind, Location, Mark
from ..core.limits import Limits
from . import Parsed

FORMAT = "text"
SUFFIXES = (".txt", ".text", ".rst")

# --------------------------------------------------------------------------------------------------------------
# helpers shared with the other readers

_MAGIC: tuple[tuple[bytes, str], ...] = (
    (b"%PDF-", "a PDF"),
    (b"PK\x03\x04", "a zip archive (DOCX, ODT or similar)"),
    (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1", "an old binary office file (.doc)"),
    (b"\x89PNG", "a PNG image"),
    (b"\xff\xd8\xff", "a JPEG image"),
    (b"GIF8", "a GIF image"),
    (b"\x1f\x8b", "a gzip archive"),
    (b"{\\rtf", "an RTF document"),
)


def binary_kind(head: bytes) -> str | None:
    """What a well-known binary file looks like ('a PDF'), or None when the bytes may be text."""
    for magic, kind in _MAGIC:
        if head.startswith(magic):
            return kind
    return None


def sniff_text_like(head: bytes, what: str) -> str | None:
    kind = binary_kind(head)
    if kind:
        return f"not {what} (it looks like {kind})"
    return None


_BOMS: tuple[tuple[bytes, str], ...] = (
    (codecs.BOM_UTF32_LE, "utf-32-le"),  # before UTF-16 LE: its BOM starts the same way
    (codecs.BOM_UTF32_BE, "utf-32-be"),
    (codecs.BOM_UTF8, "utf-8"),
    (codecs.BOM_UTF16_LE, "utf-16-le"),
    (codecs.BOM_UTF16_BE, "utf-16-be"),
)


def _utf16_without_bom(data: bytes) -> str | None:
    """'utf-16-le'/'utf-16-be' when every other byte of the start is NUL, as in UTF-16 text without a BOM."""
    sample = data[:4096]
    if len(sample) < 8 or len(sample) % 2:
        sample = sample[: len(sample) - len(sample) % 2]
    if len(sample) < 8:
        return None
    even, odd = sample[0::2], sample[1::2]
    if odd.count(0) > 0.9 * len(odd) and even.count(0) < 0.1 * len(even):
        return "utf-16-le"
    if even.count(0) > 0.9 * len(even) and odd.count(0) < 0.1 * len(odd):
        return "utf-16-be"
    return None


def decode_bytes(data: bytes, declared: str | None = None) -> tuple[str, list[str]]:
    """Text from bytes: a BOM first, then a declared encoding, then UTF-8, else Windows-1252/Latin-1.

    Returns the text and warnings a user should see (fallback encodings, removed NUL characters).
    """
    warnings: list[str] = []
    text: str | None = None
    for bom, encoding in _BOMS:
        if data.startswith(bom):
            try:
                text = data[len(bom):].decode(encoding)
            except UnicodeDecodeError:
                text = data[len(bom):].decode(encoding, errors="replace")
                warnings.append(f"starts with a {encoding.upper()} byte-order mark but is not valid "
                                f"{encoding.upper()}; unreadable characters were replaced")
            break
    if text is None and declared:
        try:
            text = data.decode(declared)
        except (UnicodeDecodeError, LookupError):
            warnings.append(f"declares the encoding {declared!r}, but the bytes do not fit it")
    if text is None:
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError:
            guess = _utf16_without_bom(data)
            if guess:
                text = data.decode(guess, errors="replace")
                warnings.append(f"has no byte-order mark but looks like {guess.upper()}; read as such")
            else:
                try:
                    text = data.decode("cp1252")
                except UnicodeDecodeError:
                    text = data.decode("latin-1")
                warnings.append("not UTF-8; read as Latin-1 (Windows-1252), so a few characters may be wrong")
    if "\x00" in text:
        n = text.count("\x00")
        text = text.replace("\x00", "")
        warnings.append(f"removed {n} NUL character{'s' if n != 1 else ''} (the file may be partly binary)")
    return text, warnings


_LINE_BREAK = re.compile(r"\r\n|\r|\n")


def split_lines(text: str) -> list[str]:
    """Lines as editors count them (LF, CRLF or CR), unlike str.splitlines, which also breaks at form feeds."""
    return _LINE_BREAK.split(text)


def normalize_newlines(text: str) -> str:
    return _LINE_BREAK.sub("\n", text)


#: characters with no visible width that would otherwise glue words or split them
_INVISIBLE = dict.fromkeys(map(ord, "\u00ad\u200b\u200c\u200d\u2060\ufeff"))


class LineText:
    """One block's text built from pieces of source lines: whitespace collapsed, a Mark where a new line starts.

    A word broken by a hyphen at a line end ("inter-" / "rater") is joined without a space, keeping the hyphen.
    """

    __slots__ = ("_parts", "_len", "_marks", "_line", "_pending", "_broken", "_last", "_bars")

    def __init__(self) -> None:
        self._parts: list[str] = []
        self._len = 0
        self._marks: list[Mark] = []
        self._line: int | None = None
        self._pending = False  # whitespace seen since the last word
        self._broken = False  # ... and that whitespace held a line break
        self._last = ""  # the last word added
        self._bars: list[int] = []  # offsets of the " | " that part a table row's cells (see next_cell)

    def __bool__(self) -> bool:
        return self._len > 0

    def add(self, text: str, line: int | None) -> None:
        """Add source text that starts on ``line``; newlines inside it advance the line."""
        if not text:
            return
        if "\n" not in text:
            self._add_line(text, line)
            return
        for i, piece in enumerate(text.split("\n")):
            if i:
                self.space(line_break=True)
            self._add_line(piece, None if line is None else line + i)

    def space(self, line_break: bool = False) -> None:
        self._pending = True
        self._broken = self._broken or line_break

    def no_space(self) -> None:
        """Forget pending whitespace (e.g. before punctuation that followed a dropped citation)."""
        self._pending = False
        self._broken = False

    def _add_line(self, text: str, line: int | None) -> None:
        text = text.translate(_INVISIBLE)
        if not text:
            return
        if text[0].isspace():
            self._pending = True
        words = text.split()
        if words:
            word = words[0]
            if self._parts and self._pending:
                last = self._last
                hyphen_join = (
                    self._broken and len(last) > 1 and last.endswith("-") and last[-2].isalpha()
                    and word[0].islower()
                )
                if not hyphen_join:
                    self._put(" ")
            self._pending = False
            self._broken = False
            if line is not None and line != self._line:
                self._marks.append(Mark(self._len, line=line))
                self._line = line
            self._put(" ".join(words))  # one piece: a single enormous line stays linear
            self._last = words[-1]
        if text[-1].isspace():
            self._pending = True

    def next_cell(self) -> None:
        """End a table cell: the text shows " | " before the next one, and the block keeps the cells apart."""
        if not self:
            return
        self.space()
        self._add_line("|", None)
        self._bars.append(self._len - 1)
        self.space()

    def mark_position(self) -> int:
        """A position to ask ``text_since`` about later (e.g. the start of a link's text)."""
        return len(self._parts)

    def text_since(self, position: int) -> str:
        return "".join(self._parts[position:])

    def extend(self, other: LineText) -> None:
        """Append another builder's text (a table cell), keeping its marks."""
        if not other:
            return
        if self._parts and self._pending:
            self._put(" ")
        shift = self._len
        for mark in other._marks:
            if mark.line != self._line:
                self._marks.append(Mark(shift + mark.offset, line=mark.line))
                self._line = mark.line
        self._parts.extend(other._parts)
        self._len += other._len
        self._last = other._last
        self._pending = other._pending
        self._broken = False

    def _put(self, s: str) -> None:
        self._parts.append(s)
        self._len += len(s)

    @property
    def first_line(self) -> int | None:
        return self._marks[0].line if self._marks else None

    def build(self) -> tuple[str, tuple[Mark, ...]]:
        """The text and its marks; no marks when all of the text stands on one line."""
        text = "".join(self._parts)
        marks = tuple(self._marks)
        if len(marks) <= 1:
            return text, ()
        if marks[0].offset != 0:
            marks = (Mark(0, line=marks[0].line),) + marks[1:]
        return text, marks

    def block(self, kind: BlockKind, location: Location, level: int | None = None) -> Block:
        text, marks = self.build()
        if location.line is None and self.first_line is not None:
            location = Location(location.file, location.page, self.first_line, location.paragraph,
                                location.table, location.row)
        cells: tuple[str, ...] = ()
        if kind == "table-row":
            cuts = [-1, *self._bars, len(text)]
            cells = tuple(c for c in (text[a + 1:b].strip() for a, b in zip(cuts, cuts[1:])) if c)
        return Block(text=text, kind=kind, location=location, level=level, marks=marks, cells=cells)


#: superscript and subscript digits as their own characters: "mm³" stays a unit, "experts¹²" (a citation) is
#: no count, and neither glues into a wrong number ("mm3", "experts12")
SUPERSCRIPT = str.maketrans("0123456789+-=()−", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻⁼⁽⁾⁻")
SUBSCRIPT = str.maketrans("0123456789+-=()−", "₀₁₂₃₄₅₆₇₈₉₊₋₌₍₎₋")


def collapse(text: str) -> str:
    return " ".join(text.translate(_INVISIBLE).split())


# "2.1 Data", "3. Results", "A.2 Extra analyses", "IV. DISCUSSION"
_NUMBERED = re.compile(
    r"^\s*(?:(?P<num>\d{1,2}(?:\.\d{1,2}){0,4})\.?|(?P<alpha>[A-Z](?:\.\d{1,2}){1,4})\.?|(?P<roman>[IVX]{1,5})\.)"
    r"\s+(?P<title>[A-Z(\"'“‘][^\n]*)$"
)


def numbering_depth(number: str) -> int:
    """'2.1' -> 2; '1.0' and '3.0.0' -> 1: a trailing zero marks the chapter itself, as some manuscripts number."""
    parts = number.strip(".").split(".")
    while len(parts) > 1 and parts[-1] == "0":
        parts.pop()
    return len(parts)


def numbered_heading_level(text: str, max_words: int = 12) -> int | None:
    """The level a numbered heading announces ('2.1 Data' -> 2), or None when the text is not one."""
    if len(text) > 150:
        return None
    m = _NUMBERED.match(text)
    if not m:
        return None
    title = m.group("title").strip()
    if len(title.split()) > max_words or title[-1] in ".;,!?" or not re.search(r"[A-Za-z]{2}", title):
        return None
    if m.group("num"):
        return numbering_depth(m.group("num"))
    if m.group("alpha"):
        return m.group("alpha").count(".") + 1
    return 1


def caps_heading(text: str) -> bool:
    """A short line in capitals ('DATA AND ANNOTATIONS'), as plain-text documents mark headings."""
    t = text.strip()
    if len(t) > 120:
        return False
    letters = [c for c in t if c.isalpha()]
    return (
        4 <= len(letters)
        and len(t.split()) <= 10
        and all(c.isupper() for c in letters)
        and t[-1] not in ".,;"
        and not _TABLE_BORDER.match(t)
    )


# --------------------------------------------------------------------------------------------------------------
# the plain-text / reST reader

_ADORNMENT_CHARS = "=-`:'\"~^_*+#<>.!$%&(),/;?@[\\]{|}"
_ADORNMENT = re.compile("^([" + re.escape(_ADORNMENT_CHARS) + r"])\1{2,}\s*$")
_TABLE_BORDER = re.compile(r"^\s*=+(?: +=+)+\s*$")
_GRID_BORDER = re.compile(r"^\s*\+(?:[-=]+\+)+\s*$")
_MARKER = re.compile(
    r"^(?P<indent>\s*)(?P<marker>[-*+•‣◦▪–]|\(?\d{1,2}[.)]|\(?[a-z][.)]|\([A-Za-z]\)|#\.)\s+(?P<rest>\S.*)$"
)
_FIELD = re.compile(r"^(?P<indent>\s*):(?P<name>[^:`\s][^:`]*?):(?:\s+(?P<rest>.*))?$")
_DIRECTIVE = re.compile(r"^(?P<indent>\s*)\.\.\s+(?P<name>[\w:.+-]+)::\s*(?P<arg>.*)$")
_TARGET = re.compile(r"^\s*(?:\.\.\s+_[^:]*:.*|__\s+\S.*|\.\.\s+\|[^|]+\|.*)$")
_COMMENT = re.compile(r"^(?P<indent>\s*)\.\.(?:\s.*)?$")
_SUBSTITUTION_LINE = re.compile(r"^\s*(?:\|[\w -]+\|\s*)+$")

_HEADING_DIRECTIVES = {"rubric", "topic", "dropdown", "admonition", "sidebar", "tab-item", "card"}
_CAPTION_DIRECTIVES = {"figure", "image", "table", "list-table", "csv-table"}
_SKIP_CONTENT_DIRECTIVES = {
    "code-block", "code", "sourcecode", "literalinclude", "math", "raw", "highlight", "testcode", "testoutput",
    "testsetup", "doctest", "plot", "autosummary", "toctree", "include", "footbibliography", "bibliography",
    "automodule", "autoclass", "autofunction", "automethod", "currentmodule", "module", "index",
    "ipython", "jupyter-execute", "parsed-literal", "graphviz", "mermaid", "contents", "sectnum",
}


_ROLE = re.compile(r":[\w.+-]+(?::[\w.+-]+)*:`([^`]*)`")
_LITERAL = re.compile(r"``([^`]+)``")
_LINK = re.compile(r"`([^`<]+?)\s*<([^>`]+)>`__?")
_REF = re.compile(r"`([^`]+)`__?")
_STRONG = re.compile(r"\*\*(\S(?:[^*]*\S)?)\*\*")
_EMPHASIS = re.compile(r"(?<![\w*])\*(\S(?:[^*]*\S)?)\*(?![\w*])")
_INTERPRETED = re.compile(r"`([^`]+)`")
_FOOTNOTE_REF = re.compile(r"\s?\[(?:#\w*|\*|\d+|[A-Za-z][\w-]*)\]_")
_SUBSTITUTION = re.compile(r"\|([\w -]+)\|(?:__?)?")


def _role_text(m: re.Match[str]) -> str:
    content = m.group(1).strip()
    target = re.match(r"^(.*?)\s*<[^>]*>$", content)
    if target and target.group(1):
        return target.group(1)
    if content.startswith("~"):
        return content[1:].rsplit(".", 1)[-1]
    return content.lstrip("!")


def _link_text(m: re.Match[str]) -> str:
    text, target = m.group(1).strip(), m.group(2).strip()
    if re.match(r"^(?:https?|ftp)://", target) and target != text:
        return f"{text} ({target})"
    return text


def rst_inline(line: str) -> str:
    """reST inline markup reduced to its text: roles, literals, links (with their URL), emphasis."""
    if not any(c in line for c in "`*|_"):
        return line
    line = _ROLE.sub(_role_text, line)
    line = _LITERAL.sub(r"\1", line)
    line = _LINK.sub(_link_text, line)
    line = _REF.sub(r"\1", line)
    line = _INTERPRETED.sub(r"\1", line)
    line = _STRONG.sub(r"\1", line)
    line = _EMPHASIS.sub(r"\1", line)
    line = _FOOTNOTE_REF.sub("", line)
    line = _SUBSTITUTION.sub(r"\1", line)
    return line


def _indent(line: str) -> int:
    return len(line) - len(line.lstrip())


@dataclass
class _Line:
    text: str  # the line's text after inline markup was removed
    number: int  # 1-based source line


class _TextReader:
    """Turns lines into blocks. One pass, each line looked at a bounded number of times."""

    def __init__(self, path: Path, lines: list[str], rst: bool) -> None:
        self.file = str(path)
        self.raw = lines
        self.rst = rst
        self.blocks: list[Block] = []
        self.styles: dict[tuple[str, bool], int] = {}  # reST adornment style -> level, in order first seen
        self.level = 0  # level of the last heading
        self.section_level = 0  # level of the last heading marked by adornment (reST sections)
        self.explicit = False  # a heading marked explicitly (adornment, numbering) was seen
        self.tables = 0
        self.caption_until = -1  # lines of a figure directive's content are its caption
        self.skip_until_dedent: int | None = None

    # -- emitting
    def emit(self, kind: BlockKind, lines: list[_Line], level: int | None = None,
             table: int | None = None, row: int | None = None) -> None:
        builder = LineText()
        for ln in lines:
            builder.add(ln.text, ln.number)
            builder.space(line_break=True)
        if not builder:
            return
        loc = Location(self.file, line=builder.first_line, table=table, row=row)
        self.blocks.append(builder.block(kind, loc, level))

    def heading(self, line: _Line, level: int) -> None:
        self.level = level
        self.emit("heading", [line], level=level)

    # -- structure tests
    def is_adornment(self, i: int) -> bool:
        return 0 <= i < len(self.raw) and bool(_ADORNMENT.match(self.raw[i])) and not _TABLE_BORDER.match(self.raw[i])

    def underline_heading_at(self, i: int) -> bool:
        """Line i is a title underlined by line i+1 (and not itself adornment)."""
        if i + 1 >= len(self.raw):
            return False
        title = self.raw[i].strip()
        if not title or self.is_adornment(i) or _indent(self.raw[i]) > 0 and not self.rst:
            return False
        if self.rst and _indent(self.raw[i]) > 0:
            return False
        if not self.is_adornment(i + 1):
            return False
        under = self.raw[i + 1].strip()
        if len(title) > 120 or len(under) < min(len(title), 4) or len(under) < 0.6 * len(title):
            return False
        # a plain-text rule under a sentence is a separator, not a heading
        return self.rst or (title[-1] not in ".,;" and len(title.split()) <= 14)

    def adornment_level(self, char: str, overline: bool) -> int:
        key = (char, overline)
        if key not in self.styles:
            self.styles[key] = len(self.styles) + 1
        return self.styles[key]

    def starts_structure(self, i: int) -> bool:
        """Line i begins something that ends a running paragraph."""
        line = self.raw[i]
        if _MARKER.match(line) or _TABLE_BORDER.match(line) or _GRID_BORDER.match(line):
            return True
        if self.underline_heading_at(i):
            return True
        if self.rst and (_FIELD.match(line) or _DIRECTIVE.match(line) or _COMMENT.match(line)):
            return True
        return False

    def prepared(self, i: int) -> _Line:
        text = self.raw[i]
        if self.rst:
            text = rst_inline(text)
        return _Line(text, i + 1)

    # -- the pass
    def run(self) -> list[Block]:
        raw = self.raw
        n = len(raw)
        i = 0
        while i < n:
            line = raw[i]
            stripped = line.strip()
            if not stripped:
                i += 1
                continue
            if self.skip_until_dedent is not None:
                if _indent(line) > self.skip_until_dedent:
                    i += 1
                    continue
                self.skip_until_dedent = None
            if self.rst:
                j = self.rst_construct(i)
                if j is not None:
                    i = j
                    continue
            # overlined title: ===== / Title / =====
            if self.is_adornment(i) and i + 2 < n and raw[i + 1].strip() and self.is_adornment(i + 2) \
                    and raw[i + 2].strip()[0] == stripped[0]:
                level = self.section_level = self.adornment_level(stripped[0], True)
                self.explicit = True
                self.heading(self.prepared(i + 1), level)
                i += 3
                continue
            if self.underline_heading_at(i):
                level = self.section_level = self.adornment_level(raw[i + 1].strip()[0], False)
                self.explicit = True
                self.heading(self.prepared(i), level)
                i += 2
                continue
            if self.is_adornment(i) or _SUBSTITUTION_LINE.match(line):
                i += 1  # a transition or rule line
                continue
            if _TABLE_BORDER.match(line):
                i = self.simple_table(i)
                continue
            if _GRID_BORDER.match(line):
                i = self.grid_table(i)
                continue
            marker = _MARKER.match(line)
            if marker:
                i = self.list_item(i, marker)
                continue
            i = self.paragraph(i)
        return self.blocks

    # -- tables
    def emit_row(self, cells: list[list[_Line]], row: int) -> None:
        builder = LineText()
        for cell in cells:
            if not any(piece.text.strip() for piece in cell):
                continue  # an empty or merged-away cell would only add a bare separator
            builder.next_cell()
            for piece in cell:
                builder.add(piece.text, piece.number)
                builder.space()
        if builder:
            loc = Location(self.file, line=builder.first_line, table=self.tables, row=row)
            self.blocks.append(builder.block("table-row", loc))

    def simple_table(self, i: int) -> int:
        """A reST simple table: '===' column borders; a row whose first cell is empty continues the last row."""
        raw = self.raw
        starts = [m.start() for m in re.finditer(r"=+", raw[i])]
        self.tables += 1
        rows: list[list[list[_Line]]] = []
        can_continue = False
        j = i + 1
        while j < len(raw):
            line = raw[j]
            if not line.strip():
                break
            if _TABLE_BORDER.match(line):
                can_continue = False
                j += 1
                continue
            number = j + 1
            bounds = starts[1:] + [max(len(line), starts[-1]) + 1]
            cells = [[_Line(self.prepared(j).text[s:e] if not self.rst else rst_inline(line[s:e]), number)]
                     for s, e in zip(starts, bounds)]
            cells[0] = [_Line(rst_inline(line[: bounds[0]]) if self.rst else line[: bounds[0]], number)]
            if can_continue and rows and not cells[0][0].text.strip():
                for k, cell in enumerate(cells):
                    rows[-1][k].extend(cell)
            else:
                rows.append(cells)
                can_continue = True
            j += 1
        for r, cells in enumerate(rows, start=1):
            self.emit_row(cells, r)
        return j

    def grid_table(self, i: int) -> int:
        """A reST grid table: '+---+' borders between rows, '|' between cells; a row may span lines."""
        raw = self.raw
        self.tables += 1
        rows: list[list[list[_Line]]] = []
        current: list[list[_Line]] = []
        j = i + 1
        while j < len(raw):
            line = raw[j].strip()
            if _GRID_BORDER.match(line):
                if current:
                    rows.append(current)
                current = []
            elif line.startswith("|"):
                parts = line.strip("|").split("|")
                while len(current) < len(parts):
                    current.append([])
                for k, part in enumerate(parts):
                    current[k].append(_Line(rst_inline(part) if self.rst else part, j + 1))
            else:
                break
            j += 1
        if current:
            rows.append(current)
        for r, cells in enumerate(rows, start=1):
            self.emit_row(cells, r)
        return j

    def rst_construct(self, i: int) -> int | None:
        """Handle reST-only constructs at line i; the next line to read, or None when there is none here."""
        line = self.raw[i]
        if _TARGET.match(line):
            return i + 1
        d = _DIRECTIVE.match(line)
        if d:
            name, arg, indent = d.group("name").lower(), rst_inline(d.group("arg")).strip(), len(d.group("indent"))
            j = i + 1
            while j < len(self.raw) and self.raw[j].strip() and _FIELD.match(self.raw[j]) \
                    and _indent(self.raw[j]) > indent:
                j += 1  # directive options
            if name in _SKIP_CONTENT_DIRECTIVES:
                self.skip_until_dedent = indent
            elif name in _HEADING_DIRECTIVES and arg:
                # a rubric or dropdown titles a part of the current section: one below the section's level
                self.heading(_Line(arg, i + 1), self.section_level + 1 if self.section_level else 1)
            elif name in _CAPTION_DIRECTIVES:
                if name in ("figure", "table") and not (name == "table" and arg):
                    self.caption_until = self._end_of_indented(j, indent)
                if name == "table" and arg:
                    self.emit("caption", [_Line(arg, i + 1)])
            return j
        if _COMMENT.match(line):
            # a reST comment: the marker line and everything indented under it
            return self._end_of_indented(i + 1, _indent(line))
        f = _FIELD.match(line)
        if f:
            return self.field(i, f)
        return None

    def _end_of_indented(self, j: int, indent: int) -> int:
        n = len(self.raw)
        while j < n and (not self.raw[j].strip() or _indent(self.raw[j]) > indent):
            j += 1
        return j

    def field(self, i: int, f: re.Match[str]) -> int:
        """':Number of instances: 150' becomes the list item 'Number of instances: 150'."""
        name = rst_inline(f.group("name")).strip()
        rest = f.group("rest") or ""
        lines = [_Line(f"{name}: {rst_inline(rest)}".rstrip(), i + 1)]
        j = i + 1
        indent = _indent(self.raw[i])
        while j < len(self.raw):
            nxt = self.raw[j]
            if not nxt.strip() or _indent(nxt) <= indent or self.starts_structure(j):
                break
            lines.append(self.prepared(j))
            j += 1
        self.emit("list-item", lines)
        return j

    def list_item(self, i: int, marker: re.Match[str]) -> int:
        raw = self.raw
        rest = marker.group("rest")
        lines = [_Line(rst_inline(rest) if self.rst else rest, i + 1)]
        j = i + 1
        indent = len(marker.group("indent"))
        while j < len(raw):
            nxt = raw[j]
            if not nxt.strip() or self.starts_structure(j):
                break
            if self.rst and _indent(nxt) <= indent:
                break  # reST continuation lines are indented; anything else starts a new paragraph
            lines.append(self.prepared(j))
            j += 1
        # "1. Introduction" standing alone, followed by prose, is a heading rather than a one-item list
        first = raw[i]
        level = numbered_heading_level(first.strip(), max_words=8)
        if level is not None and not self.rst and not self._numbered_marker_near(i):
            if len(lines) == 1 and self._blank_or_end(j):
                self.explicit = True
                self.heading(_Line(first.strip(), i + 1), level)
                return j
            follow = lines[1].text.strip() if len(lines) > 1 else ""
            if follow[:1].isupper() and _indent(raw[i + 1]) <= indent:
                # "3. Results" over a capitalised sentence: a heading and its first paragraph
                self.explicit = True
                self.heading(_Line(first.strip(), i + 1), level)
                self.emit("paragraph", lines[1:])
                return j
        kind: BlockKind = "caption" if i < self.caption_until else "list-item"
        self.emit(kind, lines)
        return j

    def _blank_or_end(self, j: int) -> bool:
        return j >= len(self.raw) or not self.raw[j].strip()

    def _numbered_marker_near(self, i: int) -> bool:
        """A numbered list marker ('2.', '(b)') on the closest non-blank line before or after line i."""
        for step in (-1, 1):
            j = i + step
            while 0 <= j < len(self.raw) and not self.raw[j].strip():
                j += step
            if 0 <= j < len(self.raw):
                m = _MARKER.match(self.raw[j])
                if m and m.group("marker")[-1] in ".)" and numbered_heading_level(self.raw[j].strip(), 8) is None:
                    return True
        return False

    def paragraph(self, i: int) -> int:
        raw = self.raw
        lines = [self.prepared(i)]
        j = i + 1
        while j < len(raw) and raw[j].strip() and not self.starts_structure(j):
            lines.append(self.prepared(j))
            j += 1
        if self.rst and lines[-1].text.rstrip().endswith("::"):
            # a literal block follows: keep the lead-in sentence, drop the code
            text = lines[-1].text.rstrip()
            lines[-1] = _Line(text[:-2].rstrip() + (":" if not text[:-2].endswith(" ") else ""), lines[-1].number)
            k = j
            while k < len(raw) and not raw[k].strip():
                k += 1
            if k < len(raw) and _indent(raw[k]) > _indent(raw[i]):
                self.skip_until_dedent = _indent(raw[i])
        first = lines[0].text.strip()
        if i < self.caption_until:
            self.emit("caption", lines)
            return j
        level = numbered_heading_level(first)
        if level is not None and (len(lines) > 1 or self._next_is_prose(j)):
            self.explicit = True
            self.heading(lines[0], level)
            if len(lines) > 1:
                self.emit("paragraph", lines[1:])
            return j
        if caps_heading(first) and (len(lines) == 1 or len(first.split()) <= 6):
            self.heading(lines[0], self.level if self.explicit and self.level else 1)
            if len(lines) > 1:
                self.emit("paragraph", lines[1:])
            return j
        if not self.rst and len(lines) == 1 and self._title_like(first) and self._next_is_prose(j):
            self.heading(lines[0], self.level + 1 if self.explicit else 1)
            return j
        self.emit("paragraph", lines)
        return j

    def _next_is_prose(self, j: int) -> bool:
        """The next paragraph after line j is running text (two lines or a long line), not another label."""
        raw = self.raw
        while j < len(raw) and not raw[j].strip():
            j += 1
        if j >= len(raw) or self.starts_structure(j):
            return False
        two_lines = j + 1 < len(raw) and raw[j + 1].strip() and not self.starts_structure(j + 1)
        return bool(two_lines) or len(raw[j]) > 200 or len(raw[j].split()) >= 12

    @staticmethod
    def _title_like(text: str) -> bool:
        if len(text) > 60:
            return False
        words = text.split()
        return (
            1 <= len(words) <= 6
            and len(text) <= 60
            and text[0].isupper()
            and text[-1] not in ".,;:!?)\"'"
            and not any(c.isdigit() for c in text)
        )


def sniff(head: bytes, path: Path) -> str | None:
    return sniff_text_like(head, "plain text")


def read(path: Path, data: bytes, limits: Limits) -> Parsed:
    text, warnings = decode_bytes(data)
    rst = path.suffix.lower() in (".rst", ".rest")
    blocks = _TextReader(path, split_lines(text), rst).run()
    return Parsed(blocks=blocks, warnings=warnings)
