"""The one document model every reader fills: Document, Block, Sentence and Location (frozen)."""

from __future__ import annotations

import bisect
import dataclasses
from dataclasses import dataclass, field
from typing import Any, Literal

BlockKind = Literal["heading", "paragraph", "list-item", "table-row", "caption", "footnote"]


@dataclass(frozen=True, slots=True)
class Location:
    """Where a passage stands in its source file. Only the fields that the format has are set."""

    file: str
    page: int | None = None  # 1-based, PDF
    line: int | None = None  # 1-based source line (LaTeX, Markdown, HTML, text); the PDF line on its page
    paragraph: int | None = None  # 1-based body paragraph (DOCX)
    table: int | None = None  # 1-based table number (DOCX, Markdown, HTML)
    row: int | None = None  # 1-based row within that table
    section: tuple[str, ...] = ()
    #: the line number printed in the margin of a review copy (PDF), which reviewers cite
    printed_line: int | None = None

    def section_text(self) -> str:
        return " > ".join(self.section)

    def describe(self, main: str | None = None) -> str:
        """Human words for the place: 'page 4, section 2.3 Reference annotation'.

        With ``main`` (the document's own path), a place in another file (a LaTeX part) names that file.
        """
        parts: list[str] = []
        if main is not None and self.file != main:
            import os

            parts.append(os.path.relpath(self.file, os.path.dirname(main) or "."))
        if self.page is not None:
            parts.append(f"page {self.page}")
            if self.printed_line is not None:
                parts.append(f"line {self.printed_line}")
        if self.table is not None:
            parts.append(f"table {self.table}" + (f", row {self.row}" if self.row is not None else ""))
        elif self.paragraph is not None:
            parts.append(f"paragraph {self.paragraph}")
        if self.line is not None and self.page is None:
            parts.append(f"line {self.line}")
        if self.section:
            parts.append(f"section {self.section[-1]}")
        return ", ".join(parts) if parts else self.file

    def to_dict(self) -> dict[str, Any]:
        return {
            "file": self.file,
            "page": self.page,
            "line": self.line,
            "paragraph": self.paragraph,
            "table": self.table,
            "row": self.row,
            "section": self.section_text() or None,
            **({"printed_line": self.printed_line} if self.printed_line is not None else {}),
        }


@dataclass(frozen=True, slots=True)
class Mark:
    """From character ``offset`` of a block on, the text stands at this page and line of the source."""

    offset: int
    page: int | None = None
    line: int | None = None
    printed_line: int | None = None  # the line number printed in the margin, where the page has them


@dataclass(frozen=True)
class Block:
    text: str
    kind: BlockKind
    location: Location
    level: int | None = None  # heading level, 1 = top
    #: section titles from the outermost heading to the innermost one that contains this block
    section: tuple[str, ...] = ()
    #: role of the innermost section with a known role (methods, references, ...), "body" when none
    role: str = "body"
    #: where the text moves to another line or page inside the block; the first mark is at offset 0
    marks: tuple[Mark, ...] = ()
    #: a table row's cells as the reader read them (the non-empty ones, in order); the text shows them joined by
    #: " | ", which is what a user sees quoted; code that reads a table reads these
    cells: tuple[str, ...] = ()

    def location_at(self, offset: int) -> Location:
        """The location of the character at ``offset``, with the block's section path."""
        loc = self.location
        if self.marks:
            starts = [m.offset for m in self.marks]
            i = max(0, bisect.bisect_right(starts, offset) - 1)
            m = self.marks[i]
            loc = Location(
                file=loc.file,
                page=m.page if m.page is not None else loc.page,
                line=m.line if m.line is not None else loc.line,
                paragraph=loc.paragraph,
                table=loc.table,
                row=loc.row,
                printed_line=m.printed_line if m.printed_line is not None else loc.printed_line,
            )
        if loc.section != self.section:
            loc = dataclasses.replace(loc, section=self.section)
        return loc


@dataclass(frozen=True, slots=True)
class Sentence:
    text: str
    block: int  # index into Document.blocks
    start: int  # character offsets into the block's text
    end: int
    location: Location
    role: str = "body"
    kind: BlockKind = "paragraph"


@dataclass(frozen=True)
class Document:
    path: str
    format: str
    blocks: tuple[Block, ...]
    pages: int | None = None
    sha256: str = ""
    warnings: tuple[str, ...] = ()
    sentences: tuple[Sentence, ...] = field(default=(), compare=False)

    @property
    def words(self) -> int:
        return sum(len(b.text.split()) for b in self.blocks)

    @property
    def text(self) -> str:
        return "\n\n".join(b.text for b in self.blocks)
