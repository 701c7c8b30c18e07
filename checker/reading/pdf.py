"""PDF reader: the text layer in reading order (two columns kept apart), de-hyphenated, without running headers,
footers and page numbers, with headings, list items, captions, footnotes and table rows recognised.

Every block is located by page and line; the line is the n-th line of text on its page in reading order, not
counting the running headers and footers that were removed. Pages are laid out one at a time, by PDFium
(checker.reading.pdfium_layout, the default and about ten times faster) or by pdfminer.six (the careful path,
``--pdf-engine pdfminer``, and the fallback whenever the fast path is unsure); only a compact record of each
text line is kept, and everything from there on is shared.
"""

from __future__ import annotations

import io
import logging
import math
import re
from collections import Counter, defaultdict
from collections.abc import Iterator
from dataclasses import dataclass, replace
from pathlib import Path

from rapidfuzz import fuzz, process

from .document import Block, Location, Mark
from ..core.errors import InputError
from ..core.limits import Limits
from ..core.words import builtin_words
from . import Parsed
from .sections import BYLINE
from .pdflines import Page, Piece, clean, is_bold, mark_undecoded
from .text import numbering_depth

FORMAT = "pdf"
SUFFIXES = (".pdf",)

_OCR_HINT = "run OCR on it first, e.g. with an OCR tool, then check the result"
_DAMAGED = "the PDF is damaged or truncated"


# ---------------------------------------------------------------------------------------------- sniffing


def sniff(head: bytes, path: Path) -> str | None:
    """None when the bytes start like a PDF (up to 1024 bytes of leading junk, as readers allow)."""
    if b"%PDF-" in head[: 1024 + 5]:
        return None
    return f"not a PDF ({_looks_like(head)})"


def _looks_like(head: bytes) -> str:
    start = head.lstrip(b"\xef\xbb\xbf \t\r\n\x00")
    low = start[:512].lower()
    if low.startswith((b"<!doctype html", b"<html", b"<head", b"<body")) or b"<html" in low:
        return "it starts like an HTML page; perhaps a web page was saved under a .pdf name"
    signatures = (
        (b"PK\x03\x04", "it is a ZIP archive, such as a DOCX or EPUB file"),
        (b"{\\rtf", "it is an RTF document"),
        (b"%!PS", "it is a PostScript file; convert it to PDF first"),
        (b"\x89PNG", "it is a PNG image"),
        (b"\xff\xd8\xff", "it is a JPEG image"),
        (b"GIF8", "it is a GIF image"),
        (b"II*\x00", "it is a TIFF image"),
        (b"MM\x00*", "it is a TIFF image"),
        (b"<?xml", "it is an XML file"),
    )
    for magic, what in signatures:
        if start.startswith(magic):
            return what
    if b"\\documentclass" in low or b"\\begin{document}" in low:
        return "it looks like LaTeX source"
    try:
        text = start[:1024].decode("utf-8")
    except UnicodeDecodeError:
        text = ""
    if text and sum(ch.isprintable() or ch in "\r\n\t" for ch in text) > 0.95 * len(text):
        return "it looks like plain text"
    return "unrecognised bytes"


# ---------------------------------------------------------------------------------------------- line records


@dataclass(frozen=True)
class _Row:
    """A line of text in reading order, or one row of a table (its cells in ``cells``)."""

    text: str
    page: int
    line: int
    column: tuple[int, int]  # (region, column): column 0 left or only, 1 right, 2 across both
    x0: float
    x1: float
    y0: float
    y1: float
    size: float
    bold: float
    bold_prefix: str = ""
    ends_soft: bool = False
    cells: tuple[str, ...] = ()
    left: float = 0.0  # left and right edge of the column this row sits in
    right: float = 0.0
    printed: int | None = None  # the line number printed beside it in the margin (review copies)


def _piece(line) -> tuple[Piece | None, int]:
    from pdfminer.layout import LTAnno, LTChar

    parts: list[str] = []
    bold: list[bool | None] = []
    sizes: list[float] = []
    x0 = y0 = math.inf
    x1 = y1 = -math.inf
    for ch in line:
        if isinstance(ch, LTChar):
            if not ch.upright:  # rotated margin stamps and axis labels are not running text
                continue
            t = ch.get_text()
            parts.append(t)
            if t.strip():
                bold.append(is_bold(ch.fontname))
                sizes.append(ch.size)
                x0, y0, x1, y1 = min(x0, ch.x0), min(y0, ch.y0), max(x1, ch.x1), max(y1, ch.y1)
            else:
                bold.append(None)
        elif isinstance(ch, LTAnno) and parts:
            parts.append(ch.get_text())
            bold.append(None)
    raw, undecoded = mark_undecoded("".join(parts))
    text = clean(raw)
    if not text or not sizes:
        return None, undecoded
    flags = [b for b in bold if b is not None]
    share = sum(flags) / len(flags)
    prefix = ""
    if 0 < share < 1 and flags[0]:
        # the leading bold run, up to the first non-bold letter
        end = next(i for i, b in enumerate(bold) if b is False)
        head = clean(raw[:end])
        if head and text.startswith(head):
            prefix = head
    sizes.sort()
    return Piece(
        text=text, x0=x0, x1=x1, y0=y0, y1=y1, size=sizes[len(sizes) // 2], bold=share, bold_prefix=prefix,
        ends_soft=raw.rstrip().endswith("\u00ad"), chars=len(flags),
    ), undecoded


def _collect(number: int, layout) -> Page:
    """The compact record of one laid-out page; pdfminer's objects are dropped after this."""
    from pdfminer.layout import LTCurve, LTFigure, LTImage, LTLine, LTRect, LTTextBox, LTTextLineHorizontal

    pieces: list[Piece] = []
    rules: list[tuple[float, float, float]] = []
    images = 0
    undecoded = 0
    page_area = max(layout.width * layout.height, 1.0)

    def walk(container, take_text: bool) -> None:
        nonlocal images, undecoded
        for obj in container:
            if isinstance(obj, LTTextBox):
                if take_text:
                    walk(obj, True)
            elif isinstance(obj, LTTextLineHorizontal):
                if take_text:
                    p, n = _piece(obj)
                    undecoded += n
                    if p is not None:
                        pieces.append(p)
            elif isinstance(obj, LTFigure):
                # text inside a small figure is axis labels and legends; a page-sized form is the page itself
                walk(obj, take_text and obj.width * obj.height > 0.5 * page_area)
            elif isinstance(obj, LTImage):
                images += 1
            elif isinstance(obj, (LTLine, LTRect)) or (isinstance(obj, LTCurve) and len(obj.pts) == 2):
                if obj.width > 10 and obj.height < 1.5:
                    rules.append((round((obj.y0 + obj.y1) / 2, 2), obj.x0, obj.x1))
                elif isinstance(obj, LTRect) and obj.width > 10 and obj.height < 0.3 * layout.height:
                    rules.append((round(obj.y0, 2), obj.x0, obj.x1))
                    rules.append((round(obj.y1, 2), obj.x0, obj.x1))

    walk(layout, True)
    return Page(number, layout.width, layout.height, tuple(pieces), tuple(rules), images, undecoded)


# ---------------------------------------------------------------------------------------------- reading the file


def _check_complete(path: Path, data: bytes) -> None:
    end = data.rfind(b"%%EOF")
    if end < 0 or len(data[end + 5:].strip(b"\r\n\t \x00")) > 1024:
        raise InputError(path, _DAMAGED, "it ends before its end-of-file marker, so part of it is missing; "
                                         "download or export it again")


def _layouts(path: Path, data: bytes, limits: Limits) -> Iterator[Page]:
    """Each page laid out by pdfminer, one at a time, as a compact record."""
    from pdfminer.converter import PDFPageAggregator
    from pdfminer.layout import LAParams
    from pdfminer.pdfdocument import PDFDocument, PDFEncryptionError, PDFPasswordIncorrect
    from pdfminer.pdfinterp import PDFPageInterpreter, PDFResourceManager
    from pdfminer.pdfpage import PDFPage
    from pdfminer.pdfparser import PDFParser
    from pdfminer.pdftypes import resolve1

    protected = "supply an unprotected copy (open it with its password and save or print it as a new PDF)"
    try:
        document = PDFDocument(PDFParser(io.BytesIO(data)))
        count = None
        try:
            count = resolve1(resolve1(document.catalog.get("Pages")).get("Count"))
        except Exception:  # a damaged page tree is found page by page below
            count = None
    except PDFPasswordIncorrect:
        raise InputError(path, "the PDF is password-protected", protected) from None
    except PDFEncryptionError as exc:
        raise InputError(path, f"the PDF is encrypted in a way that cannot be read ({exc})", protected) from None
    except (RecursionError, MemoryError):
        raise
    except Exception:  # pdfminer raises many kinds of errors on broken files
        raise InputError(path, _DAMAGED, "its structure cannot be read; open and save it again, "
                                         "or export a fresh copy") from None
    if isinstance(count, int) and count > limits.max_pages:
        raise InputError(path, f"the PDF has {count} pages, over the limit of {limits.max_pages}",
                         "raise --max-pages if the file is genuine")
    # boxes_flow=None: the reading order is worked out here from lines, so pdfminer's box ordering is skipped
    laparams = LAParams(line_overlap=0.5, char_margin=1.6, word_margin=0.1, line_margin=0.5, boxes_flow=None,
                        detect_vertical=False, all_texts=True)
    manager = PDFResourceManager(caching=True)
    device = PDFPageAggregator(manager, laparams=laparams)
    interpreter = PDFPageInterpreter(manager, device)
    pages = PDFPage.create_pages(document)
    number = 0
    while True:
        try:
            page = next(pages, None)
            if page is None:
                return
            number += 1
            if number > limits.max_pages:
                raise InputError(path, f"the PDF has more than {limits.max_pages} pages",
                                 "raise --max-pages if the file is genuine")
            interpreter.process_page(page)
            layout = device.get_result()
        except InputError:
            raise
        except (RecursionError, MemoryError):
            raise
        except Exception:
            where = f"page {number} cannot be read" if number else "its page list cannot be read"
            raise InputError(path, _DAMAGED, f"{where}; open and save it again, or export a fresh copy") from None
        yield _collect(number, layout)


class _PdfminerNotes(logging.Handler):
    """Keeps pdfminer's complaints about a broken file for the document's warnings instead of the terminal."""

    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.messages: list[str] = []

    def emit(self, record: logging.LogRecord) -> None:
        if len(self.messages) < 100:
            self.messages.append(record.getMessage())

    def __enter__(self) -> _PdfminerNotes:
        logger = logging.getLogger("pdfminer")
        self._propagate = logger.propagate
        logger.addHandler(self)
        logger.propagate = False
        return self

    def __exit__(self, *exc: object) -> None:
        logger = logging.getLogger("pdfminer")
        logger.removeHandler(self)
        logger.propagate = self._propagate


def read(path: Path, data: bytes, limits: Limits) -> Parsed:
    _check_complete(path, data)
    from .inflate import check_pdf

    check_pdf(path, data, limits)  # PDFium and pdfminer then unpack no more than was counted
    pages = None
    if limits.pdf_engine == "pdfium":
        from . import pdfium_layout

        try:
            pages = pdfium_layout.pages(path, data, limits)
        except pdfium_layout.Unsure:
            pages = None  # read the careful way, which also words any error
    messages: list[str] = []
    if pages is None:
        with _PdfminerNotes() as notes:
            pages = list(_layouts(path, data, limits))
        messages = notes.messages
    warnings: list[str] = []
    if messages:
        first = messages[0] if len(messages[0]) <= 120 else messages[0][:117] + "..."
        count = f"{len(messages)} note{'s' if len(messages) != 1 else ''}"
        warnings.append(f"the PDF has faults that were worked around while reading it ({count}, the first: "
                        f"{first}); compare the quoted text with the PDF")
    text_pages = [p for p in pages if p.pieces]
    undecoded = sum(p.undecoded for p in pages)
    if not text_pages:
        if undecoded:
            raise InputError(path, "the PDF's text cannot be decoded (its fonts carry no character map)", _OCR_HINT)
        if any(p.images for p in pages):
            raise InputError(path, "the PDF has no text layer (it looks scanned)", _OCR_HINT)
        raise InputError(path, "the PDF has no text on any page", "is it blank, or are its pages drawings?")
    empty = [p.number for p in pages if not p.pieces]
    if empty:
        scanned = [n for n in empty if pages[n - 1].images]
        if scanned:
            one = len(scanned) == 1
            warnings.append(f"{_pages_text(scanned)} {'has' if one else 'have'} no text layer (a scanned image?), "
                            f"so {'it was' if one else 'they were'} not checked; run OCR on the file to include "
                            f"{'it' if one else 'them'}")
        blank = [n for n in empty if n not in scanned]
        if blank:
            warnings.append(f"{_pages_text(blank)} {'has' if len(blank) == 1 else 'have'} no text")
    if undecoded:
        what = "1 character was" if undecoded == 1 else f"{undecoded} characters were"
        warnings.append(f"{what} left out because the font has no character map for them")
    running = _running_lines(pages)
    pages, printed = _printed_line_numbers(pages, running)
    rows: list[_Row] = []
    for page in pages:
        skip, numbers = printed.get(page.number, (set(), []))
        page_rows = _page_rows(page, running.get(page.number, set()) | skip)
        if numbers:
            page_rows = _with_printed_lines(page_rows, numbers)
        rows.extend(page_rows)
    blocks = _Assembler(str(path), rows).blocks()
    return Parsed(blocks=blocks, pages=len(pages), warnings=warnings)


def _pages_text(numbers: list[int]) -> str:
    shown = ", ".join(str(n) for n in numbers[:10]) + (" and more" if len(numbers) > 10 else "")
    return ("page " if len(numbers) == 1 else "pages ") + shown


# ---------------------------------------------------------------------------------------------- running lines

_PAGE_NUMBER = re.compile(r"^\W*(?:page\s*)?(?:\d{1,4}|[ivxlc]{1,6})(?:\s*(?:of|/)\s*\d{1,4})?\W*$", re.IGNORECASE)


def _baseline_groups(pieces: list[Piece]) -> list[list[Piece]]:
    """Pieces sharing a baseline, top of the page first, each group left to right."""
    groups: list[list[Piece]] = []
    for p in sorted(pieces, key=lambda q: (-q.y0, q.x0)):
        if groups:
            g = groups[-1][0]
            overlap = min(g.y1, p.y1) - max(g.y0, p.y0)
            if overlap > 0.5 * min(g.y1 - g.y0, p.y1 - p.y0) and abs(g.y0 - p.y0) < 0.6 * min(g.size, p.size):
                groups[-1].append(p)
                continue
        groups.append([p])
    return [sorted(g, key=lambda q: q.x0) for g in groups]


def _normalised(text: str) -> str:
    return re.sub(r"\s+", " ", re.sub(r"\d+", "#", text.lower())).strip()


def _running_lines(pages: list[Page]) -> dict[int, set[int]]:
    """Per page, the indexes of pieces that are running headers, footers or page numbers.

    Candidates are the three top and three bottom lines of each page; one that recurs on enough pages (digits
    replaced by #, compared with rapidfuzz) is running. Clusters are bounded, so this stays linear in pages.
    """
    candidates: dict[int, list[tuple[str, str, list[int]]]] = {}
    sizes: Counter[float] = Counter()
    for page in pages:
        for p in page.pieces:
            sizes[round(p.size)] += p.chars
    body = max(sizes.items(), key=lambda kv: (kv[1], -kv[0]))[0] if sizes else 10.0
    for page in pages:
        index = {id(p): i for i, p in enumerate(page.pieces)}
        # running lines are set in the body's size or smaller; "CHAPTER 3" opening a chapter is set larger
        groups = [g for g in _baseline_groups(list(page.pieces)) if max(p.size for p in g) <= body + 1.5]
        picked = groups[:3] + [g for g in groups[-3:] if g not in groups[:3]]
        entries = []
        for g in picked:
            zone = "top" if groups.index(g) < 3 and g[0].y0 > page.height * 0.5 else "bottom"
            ids = [index[id(p)] for p in g]
            entries.append((zone, _normalised(" ".join(p.text for p in g)), ids))
            if len(g) > 1:
                entries.extend((zone, _normalised(p.text), [index[id(p)]]) for p in g)
        candidates[page.number] = entries
        # a page number alone on the outermost line is running even in a one-page document
        for g in (groups[:1], groups[-1:]):
            for grp in g:
                if _PAGE_NUMBER.match(" ".join(p.text for p in grp)):
                    entries.append(("number", "#", [index[id(p)] for p in grp]))
    clusters: dict[str, list[str]] = {"top": [], "bottom": []}
    seen: dict[tuple[str, int], set[int]] = defaultdict(set)
    # per page and cluster only the best-matching candidate, so a title line resembling the header stays
    best_on_page: dict[tuple[int, str, int], tuple[float, int]] = {}
    for number, entries in candidates.items():
        for k, (zone, key, _ids) in enumerate(entries):
            if zone == "number" or not re.search(r"[^\W_]", key):
                continue  # a lone bullet or rule character at the bottom of two pages is no footer
            reps = clusters[zone]
            best = process.extractOne(key, reps, scorer=fuzz.ratio, score_cutoff=90) if reps else None
            if best is not None:
                c, score = best[2], best[1]
            elif len(reps) < 400:
                reps.append(key)
                c, score = len(reps) - 1, 100.0
            else:
                continue
            seen[(zone, c)].add(number)
            if (number, zone, c) not in best_on_page or best_on_page[(number, zone, c)][0] < score:
                best_on_page[(number, zone, c)] = (score, k)
    n = len(pages)
    needed = n if n <= 2 else max(2, math.ceil(0.3 * n))
    out: dict[int, set[int]] = defaultdict(set)
    for number, entries in candidates.items():
        for zone, _key, ids in entries:
            if zone == "number":
                out[number].update(ids)
    if n >= 2:
        for (number, zone, c), (_score, k) in best_on_page.items():
            if len(seen[(zone, c)]) >= needed:
                out[number].update(candidates[number][k][2])
    return out


# ---------------------------------------------------------------------------------------------- printed line numbers

_LONE_NUMBER = re.compile(r"^\s*(\d{1,5})\s*$")
_GLUED_END = re.compile(r"(?<=[^\d\s.,])(\d{1,5})$")  # "Results203": a margin number read into the line
_GLUED_START = re.compile(r"^(\d{1,5})\s+(?=\S)")


def _margin_columns(page: Page, skip: set[int]) -> list[list[tuple[int, Piece, int]]]:
    """Columns of line numbers in the margins of the page: lists of (piece index, piece, number), top first.

    Line numbers of a review copy are lone numbers, aligned on one edge, outside the text they number (left of
    it, or right of it, or both in two columns), rising down the page by one step (1, or 5 where every fifth
    line is numbered).
    """
    lone = [(i, p, int(m.group(1))) for i, p in enumerate(page.pieces)
            if i not in skip and (m := _LONE_NUMBER.match(p.text))]
    others = [p for i, p in enumerate(page.pieces) if i not in skip and not _LONE_NUMBER.match(p.text)]
    if len(lone) < 4 or not others:
        return []
    rights = sorted(p.x1 for p in others)
    body_left = _mode([p.x0 for p in others], [p.chars for p in others])
    body_right = rights[int(0.95 * (len(rights) - 1))]
    clusters: dict[tuple[str, int], list[tuple[int, Piece, int]]] = defaultdict(list)
    for item in lone:
        p = item[1]
        if p.x1 <= body_left + 1:
            clusters[("left", round(p.x1 / 4))].append(item)  # right-aligned numbers in the left margin
        elif p.x0 >= body_right - 1:
            clusters[("right", round(p.x0 / 4))].append(item)
    out = []
    for members in clusters.values():
        if len(members) < 4:
            continue
        members.sort(key=lambda t: -t[1].cy)
        steps = [b[2] - a[2] for a, b in zip(members, members[1:])]
        step = Counter(steps).most_common(1)[0][0]
        if step in (1, 5) and sum(1 for d in steps if d == step) >= 0.6 * len(steps) \
                and sum(1 for d in steps if d > 0) >= 0.9 * len(steps):
            out.append(members)
    return out


def _printed_line_numbers(pages: list[Page], running: dict[int, set[int]]
                          ) -> tuple[list[Page], dict[int, tuple[set[int], list[tuple[float, float, int]]]]]:
    """Pages with the margin numbers that were read into a line of text taken out of it, and per page the
    indexes of the pieces that are printed line numbers and each number as (baseline, size, number).

    A document counts as line-numbered where at least a third of its pages with text carry such a column;
    then every lone number at a column's place on any page is a line number too (a page that is mostly a
    figure has few).
    """
    places: Counter[tuple[str, int]] = Counter()
    numbered_pages = 0
    for page in pages:
        columns = _margin_columns(page, running.get(page.number, set()))
        if columns:
            numbered_pages += 1
        for members in columns:
            side = "left" if members[0][1].x1 < page.width / 2 else "right"
            places[(side, round((members[0][1].x1 if side == "left" else members[0][1].x0) / 4))] += 1
    with_text = sum(1 for p in pages if p.pieces)
    if not numbered_pages or numbered_pages < max(1, math.ceil(with_text / 3)):
        return pages, {}

    def place_of(p: Piece) -> tuple[str, int] | None:
        for side, edge in (("left", p.x1), ("right", p.x0)):
            for d in (0, -1, 1):
                if (side, round(edge / 4) + d) in places:
                    return (side, round(edge / 4) + d)
        return None

    out_pages: list[Page] = []
    printed: dict[int, tuple[set[int], list[tuple[float, float, int]]]] = {}
    last_seen: dict[tuple[str, int], int] = {}  # the last number of each column so far, for the next page's top
    for page in pages:
        skip_running = running.get(page.number, set())
        column: dict[tuple[str, int], list[tuple[float, int]]] = defaultdict(list)
        skip: set[int] = set()
        numbers: list[tuple[float, float, int]] = []
        for i, p in enumerate(page.pieces):
            m = _LONE_NUMBER.match(p.text)
            if i in skip_running or not m:
                continue
            place = place_of(p)
            if place is not None:
                skip.add(i)
                numbers.append((p.y0, p.size, int(m.group(1))))
                column[place].append((p.cy, int(m.group(1))))
        pieces = list(page.pieces)
        for k, p in enumerate(pieces):
            if k in skip or k in skip_running or any(abs(y0 - p.y0) <= 0.5 * max(size, p.size)
                                                      for y0, size, _ in numbers):
                continue  # a line with its own printed number keeps every number in its text
            for pattern in (_GLUED_END, _GLUED_START):
                m = pattern.search(p.text)
                if not m:
                    continue
                n = int(m.group(1))
                # the number lies between the printed numbers just above and below this line, in some column
                fits = False
                for place, ys in column.items():
                    above = [v for y, v in ys if y > p.cy]
                    below = [v for y, v in ys if y < p.cy]
                    low = max(above) if above else last_seen.get(place, 0)
                    high = min(below) if below else low + 200
                    fits = fits or low < n < high
                if fits:
                    pieces[k] = replace(p, text=(p.text[:m.start()] + p.text[m.end():]).strip())
                    numbers.append((p.y0, p.size, n))
                    break
        for place, ys in column.items():
            last_seen[place] = max(v for _, v in ys)
        out_pages.append(replace(page, pieces=tuple(pieces)) if pieces != list(page.pieces) else page)
        if numbers:
            printed[page.number] = (skip, numbers)
    return out_pages, printed


def _with_printed_lines(rows: list[_Row], numbers: list[tuple[float, float, int]]) -> list[_Row]:
    """Each row with the printed line number on its baseline (the nearest within half a line)."""
    out = []
    for r in rows:
        best, gap = None, math.inf
        for y0, size, n in numbers:
            d = abs(y0 - r.y0)
            if d < gap and d <= 0.5 * max(r.size, size):
                best, gap = n, d
        out.append(replace(r, printed=best) if best is not None else r)
    return out


# ---------------------------------------------------------------------------------------------- page layout

_MARKER = re.compile(r"^(?:[•◦▪▫●○■□‣⁃∙·*–—-]|\(?\d{1,3}[.)]|\(?[a-zA-Z][.)]|\(?[ivx]{1,4}\)|\d{1,2}(?:\.\d{1,2})*\.?"
                     r"|[IVX]{1,5}\.|[A-Z]\.)$")


def _coverage(pieces: list[Piece], origin: float, n: int) -> list[int]:
    """For each x from ``origin``, the characters of the pieces that cross it."""
    cover = [0] * (n + 1)
    for p in pieces:
        a = max(0, int(math.ceil(p.x0 - origin + 1)))
        b = min(n, int(math.floor(p.x1 - origin - 1)))
        if b > a:
            cover[a] += p.chars
            cover[b] -= p.chars
    running = 0
    for i in range(n + 1):
        running += cover[i]
        cover[i] = running
    return cover


def _bands(groups: list[list[Piece]]) -> list[list[list[Piece]]]:
    """Baseline groups cut into horizontal bands at wide gaps, where a title block or a float may end."""
    bands: list[list[list[Piece]]] = []
    for g in groups:
        if bands:
            prev = bands[-1][-1]
            gap = min(p.y0 for p in prev) - max(p.y1 for p in g)
            if gap <= 1.2 * max(p.size for p in prev + g):
                bands[-1].append(g)
                continue
        bands.append([g])
    return bands


def _page_gutter(pieces: list[Piece], bands: list[list[list[Piece]]]) -> float | None:
    """The gap between the two columns of the page, found in the band with most two-column text."""
    found = []
    for band in bands:
        band_pieces = [p for g in band for p in g]
        x = _gutter(band_pieces)
        if x is not None:
            found.append((sum(p.chars for p in band_pieces), x))
    if found:
        return max(found)[1]
    return _gutter(pieces) if len(bands) > 1 else None


def _gutter(pieces: list[Piece]) -> float | None:
    """The x of the gap between two columns, or None where the text is in one column.

    Running text decides: in two columns its lines stay on their side of the gap and fill it, in one column
    they cross the middle. The gap is where fewest running-text lines cross (then fewest characters of any
    kind), in the middle of the text area; both sides must hold a good share of the text and at least one
    side must be running text, so a table's columns do not count as page columns.
    """
    if len(pieces) < 6:
        return None
    left_edge = min(p.x0 for p in pieces)
    right_edge = max(p.x1 for p in pieces)
    width = right_edge - left_edge
    if width < 150:
        return None
    total = sum(p.chars for p in pieces)
    wide = [p for p in pieces if p.x1 - p.x0 > 0.25 * width]
    wide_chars = sum(p.chars for p in wide)
    if wide_chars < 0.2 * total:
        return None
    n = int(width) + 2
    cover_wide = _coverage(wide, left_edge, n)
    cover_all = _coverage(pieces, left_edge, n)
    lo, hi = int(0.3 * width), int(0.7 * width)
    best = min((cover_wide[i], cover_all[i]) for i in range(lo, hi + 1))
    if best[0] > 0.3 * wide_chars:
        return None
    runs: list[tuple[int, int]] = []
    start = None
    for i in range(lo, hi + 2):
        at_min = i <= hi and (cover_wide[i], cover_all[i]) == best
        if at_min and start is None:
            start = i
        elif not at_min and start is not None:
            runs.append((start, i - 1))
            start = None
    a, b = max(runs, key=lambda r: (r[1] - r[0], -r[0]))
    x = left_edge + (a + b) / 2
    texty = 0
    for side, side_width in (([p for p in pieces if p.x1 <= x], x - left_edge),
                             ([p for p in pieces if p.x0 >= x], right_edge - x)):
        chars = sum(p.chars for p in side)
        if chars < 0.15 * total:
            # a short column (the end of the last page) counts when no running text crosses into it
            if best[0] > 0 or not any(p.x1 - p.x0 > 0.25 * width for p in side):
                return None
            continue
        full = [p for p in side if p.x1 - p.x0 >= 0.6 * side_width]
        texty += len(full) >= 3 and sum(p.chars for p in full) >= 0.5 * chars
    return x if texty else None


def _merge(pieces: list[Piece]) -> list[Piece]:
    """Join pieces of one baseline that belong together: wide word gaps, and a number or bullet before its text."""
    out: list[Piece] = []
    for p in pieces:
        if out:
            a = out[-1]
            gap = p.x0 - a.x1
            size = max(a.size, p.size)
            if gap < 0.8 * size or (_MARKER.match(a.text) and gap < 3.0 * size):
                n = a.chars + p.chars
                prefix = a.bold_prefix or (a.text if a.bold > 0.9 and p.bold < 0.5 else "")
                if a.bold < 0.9 and not a.bold_prefix:
                    prefix = ""
                out[-1] = Piece(
                    text=f"{a.text} {p.text}", x0=a.x0, x1=max(a.x1, p.x1), y0=min(a.y0, p.y0), y1=max(a.y1, p.y1),
                    size=a.size if a.chars >= p.chars else p.size, bold=(a.bold * a.chars + p.bold * p.chars) / n,
                    bold_prefix=prefix, ends_soft=p.ends_soft, chars=n,
                )
                continue
        out.append(p)
    return out


def _mode(values: list[float], weights: list[int] | None = None) -> float:
    counts: Counter[float] = Counter()
    for i, v in enumerate(values):
        counts[round(v)] += weights[i] if weights else 1
    return max(counts.items(), key=lambda kv: (kv[1], -kv[0]))[0] if counts else 0.0


def _page_rows(page: Page, running: set[int]) -> list[_Row]:
    """The page's text lines and table rows in reading order, numbered by line."""
    pieces = [p for i, p in enumerate(page.pieces) if i not in running]
    if not pieces:
        return []
    groups = _baseline_groups(pieces)
    bands = _bands(groups)
    gutter = _page_gutter(pieces, bands)

    def column_of(p: Piece) -> int:
        if gutter is None:
            return 0
        if p.x1 <= gutter + 1:
            return 0
        if p.x0 >= gutter - 1:
            return 1
        return 2

    by_column: dict[int, list[Piece]] = defaultdict(list)
    if gutter is None:
        by_column[0] = pieces
    else:
        width = max(p.x1 for p in pieces) - min(p.x0 for p in pieces)
        for band in bands:
            band_pieces = [p for g in band for p in g]
            crossing = sum(p.chars for p in band_pieces if column_of(p) == 2)
            if crossing >= 0.3 * sum(p.chars for p in band_pieces):
                by_column[2].extend(band_pieces)  # a title block, a wide table or figure
                continue
            for group in band:
                columns = [column_of(p) for p in group]
                if 2 in columns:
                    by_column[2].extend(group)  # a line across both columns
                    continue
                # several cells on both sides of the gutter: a row of a table across both columns
                sides = [_merge([p for p, c in zip(group, columns) if c == side]) for side in (0, 1)]
                if len(sides[0]) >= 2 and len(sides[1]) >= 2 and all(
                        p.x1 - p.x0 < 0.35 * width for side in sides for p in side):
                    by_column[2].extend(group)
                else:
                    by_column[0].extend(sides[0])
                    by_column[1].extend(sides[1])
    # regions: bands of the page between lines that cross the gutter (title blocks, wide floats)
    spans = _baseline_groups(by_column.get(2, []))
    events = sorted([(-min(q.cy for q in g), 0, k) for k, g in enumerate(spans)]
                    + [(-p.cy, 1, k) for k, p in enumerate(by_column.get(0, []) + by_column.get(1, []))])
    region = 0
    last = None
    span_region: dict[int, int] = {}
    piece_region: dict[int, int] = {}
    for _y, kind, k in events:
        if last is not None and kind != last:
            region += 1
        last = kind
        (span_region if kind == 0 else piece_region)[k] = region
    sequences: dict[tuple[int, int], list[list[Piece]]] = defaultdict(list)
    columned = by_column.get(0, []) + by_column.get(1, [])
    members: dict[tuple[int, int], list[Piece]] = defaultdict(list)
    for k, p in enumerate(columned):
        members[(piece_region[k], column_of(p))].append(p)
    for key, ps in members.items():
        sequences[key] = [_merge(g) for g in _baseline_groups(ps)]
    for k, g in enumerate(spans):
        sequences[(span_region[k], 2)].append(_merge(g))

    edges: dict[int, tuple[float, float]] = {}
    for column in (0, 1, 2):
        column_pieces = by_column.get(column, [])
        if column_pieces:
            left = _mode([p.x0 for p in column_pieces], [p.chars for p in column_pieces])
            rights = sorted(p.x1 for p in column_pieces)
            edges[column] = (left, rights[int(0.9 * (len(rights) - 1))])

    rows: list[_Row] = []
    line = 0
    for (region, column), sequence in sorted(sequences.items()):
        left, right = edges[column]
        for group_rows, consumed in _table_rows(sequence, page.rules):
            first = line + 1
            line += consumed
            for r in group_rows:  # the row placed on the page (a constructor call: replace() costs more)
                rows.append(_Row(r.text, page.number, first + r.line, (region, column), r.x0, r.x1, r.y0, r.y1,
                                 r.size, r.bold, r.bold_prefix, r.ends_soft, r.cells, left, right, r.printed))
    return rows


def _row_of(g: list[Piece], offset: int = 0, cells: tuple[str, ...] = ()) -> _Row:
    n = sum(p.chars for p in g)
    text = " | ".join(cells) if cells else " ".join(p.text for p in g)
    if cells:
        text = re.sub(r"\s+", " ", text)
    return _Row(
        text=text, page=0, line=offset, column=(0, 0), x0=min(p.x0 for p in g), x1=max(p.x1 for p in g),
        y0=min(p.y0 for p in g), y1=max(p.y1 for p in g), size=max(g, key=lambda p: p.chars).size,
        bold=sum(p.bold * p.chars for p in g) / max(n, 1), bold_prefix=g[0].bold_prefix if len(g) == 1 else "",
        ends_soft=g[-1].ends_soft, cells=cells,
    )


def _table_rows(groups: list[list[Piece]], rules: tuple[tuple[float, float, float], ...]
                ) -> Iterator[tuple[list[_Row], int]]:
    """Rows of one column in order; runs of baselines with several cells become table rows.

    Yields (rows, baselines consumed); each row's ``line`` is its offset within the run. A table's logical row
    spans several baselines where a cell wraps: ruled tables are split at their rules, unruled ones at lines
    that start in the first column.
    """
    i = 0
    while i < len(groups):
        g = groups[i]
        if len(g) < 2:
            yield [_row_of(g)], 1
            i += 1
            continue
        # extend a table run: several-cell baselines, and wrapped single cells right below them
        j = i + 1
        x_left = min(p.x0 for p in g)
        while j < len(groups):
            h = groups[j]
            prev = groups[j - 1]
            pitch = min(p.y0 for p in prev) - min(p.y0 for p in h)
            size = max(p.size for p in h)
            if len(h) >= 2 and pitch < 3.0 * size:
                j += 1
            elif len(h) == 1 and pitch < 1.7 * size and h[0].x0 > x_left + 2 * size and (
                    h[0].x1 - h[0].x0) < 0.5 * (max(p.x1 for p in g) - x_left):
                j += 1
            else:
                break
        run = groups[i:j]
        if not _aligned([h for h in run if len(h) >= 2]):  # loose lines of text, not a table
            yield [_row_of(h, offset=k) for k, h in enumerate(run)], len(run)
            i = j
            continue
        yield _table(run, rules), len(run)
        i = j


def _aligned(groups: list[list[Piece]]) -> bool:
    """Whether at least two baselines have cells starting or ending at the same x, as table columns do."""
    if len(groups) < 2:
        return False
    edges: Counter[tuple[str, int]] = Counter()
    for g in groups:
        mine = {("start", round(p.x0 / 2)) for p in g[1:]} | {("end", round(p.x1 / 2)) for p in g[:-1]}
        edges.update(mine)
    return any(n >= 2 for n in edges.values())


def _table(run: list[list[Piece]], rules: tuple[tuple[float, float, float], ...]) -> list[_Row]:
    x0 = min(p.x0 for g in run for p in g)
    x1 = max(p.x1 for g in run for p in g)
    width = x1 - x0
    strokes = [y for y, a, b in rules if min(b, x1) - max(a, x0) > 0.5 * width]

    def ruled(a: list[Piece], b: list[Piece]) -> bool:
        top = min(p.cy for p in a)
        bottom = max(p.cy for p in b)
        return any(bottom < y < top for y in strokes)

    def first_column(g: list[Piece]) -> bool:
        return g[0].x0 < x0 + 3

    # a ruled grid has a stroke between most rows; a table with only head and foot rules has one or two
    inner = sum(ruled(a, b) for a, b in zip(run, run[1:]))
    grid = inner >= 2 and inner >= 0.3 * (len(run) - 1)
    logical: list[list[int]] = []
    for k, g in enumerate(run):
        if k == 0:
            logical.append([k])
            continue
        new = ruled(run[k - 1], g) if grid else (len(g) >= 2 or first_column(g))
        if new:
            logical.append([k])
        else:
            logical[-1].append(k)
    # table columns: the union of the x-ranges of all pieces
    spans_x = sorted((p.x0, p.x1) for g in run for p in g)
    columns: list[list[float]] = []
    for a, b in spans_x:
        if columns and a <= columns[-1][1] + 1:
            columns[-1][1] = max(columns[-1][1], b)
        else:
            columns.append([a, b])
    rows: list[_Row] = []
    for members in logical:
        pieces = [p for k in members for p in run[k]]
        most = max(len(run[k]) for k in members)
        if len(columns) >= most:
            cells = []
            for a, b in columns:
                inside = [p for p in pieces if p.x0 >= a - 0.5 and p.x1 <= b + 0.5]
                inside.sort(key=lambda p: (-p.y0, p.x0))
                cells.append(" ".join(p.text for p in inside))
        else:
            cells = [p.text for k in members for p in run[k]]
        while cells and not cells[-1]:
            cells.pop()
        rows.append(_row_of(pieces, offset=members[0], cells=tuple(cells)))
    return rows


# ---------------------------------------------------------------------------------------------- blocks

_CAPTION = re.compile(r"^(?:fig\.?|figure|table|tab\.|algorithm|listing|supplementary (?:figure|table))\s*"
                      r"(?:[A-Z]?\d+|[IVX]+)(?:\.\d+)?\s*[.:|]", re.IGNORECASE)
_LIST_START = re.compile(r"^(?:[•◦▪▫●○■□‣⁃∙·*–—-]\s+|\[\d{1,3}\]\s+|\(?\d{1,3}[.)]\s+|\(?[a-z][.)]\s+"
                         r"|\(?[ivx]{1,4}\)\s+)\S")
_NUMBERED = re.compile(r"^(?:(?P<arabic>\d{1,2}(?:\.\d{1,2}){0,3})\.?|(?P<roman>[IVX]{1,5})\.|"
                       r"(?P<letter>[A-Z])(?:\.(?P<sub>\d{1,2}(?:\.\d{1,2}){0,2}))?\.)\s+(?=\S)")
_ROMAN_CAPS = re.compile(r"^[IVX]{1,5}\.\s+[^a-z]{3,}$")
_LETTERED = re.compile(r"^[A-H]\.\s+[A-Z]\S*(?:\s+\S+){0,8}$")
_SENTENCE_END = re.compile(r"[.!?:;][\"'”’)\]]*$")
_REFERENCE_START = re.compile(r"^(?:\[\d{1,3}\]|\d{1,3}\.)\s")
_FOOTNOTE_START = re.compile(r"^(?:\d{1,2}|[*†‡§¶])\s*\S")
# first parts that keep their hyphen at a line break when the document gives no other evidence ("two-reader",
# "self-supervised"), and words a wrapped heading line can end with: checklists/words.yaml (checker.core.words)
_KEEP_HYPHEN_HEADS = builtin_words().set("hyphen-kept-heads")
_JOINING_WORDS = builtin_words().set("heading-joining-words")
#: the document's own vocabulary (see _Assembler): words, hyphenated compounds, the first half of a word broken
#: at a line end, and the rest of it at the start of the next line
_WORD = re.compile(r"[^\W\d_]+")
_HYPHENATED = re.compile(r"[^\W\d_]+(?:-[^\W\d_]+)+")
_BROKEN_WORD = re.compile(r"[^\W\d_]+-(?:\s|$)")
_FIRST_WORD = re.compile(r"^[^\W\d_]+")
_PASTED_HYPHEN = re.compile(r"(?<![\w-])([^\W\d_]+)- ([a-z]+)\b")
_LINE_END_HYPHEN = re.compile(r"([\w-]*)-$")
_LEADING_LETTERS = re.compile(r"[^\W\d_]*")


#: an author line: two or more names ("Ada B. Smith1,2*", "J. Jones") joined by commas or "and"
_NAME = r"(?:[A-Z][\w'’-]*\.?\s+){1,3}[A-Z][\w'’-]+[\d,*†‡§¶\s]*?"
_AUTHORS = re.compile(rf"^{_NAME}(?:(?:,|\band\b|&)\s*{_NAME}){{1,}}[\d*†‡§¶,\s]*$")


def _plausible_heading(text: str) -> bool:
    """Whether a short styled line can be a heading at all: never a figure's panel letter or axis label
    ("(b)", "E13.5 P14"), a table row of numbers, a bullet, an author line or an affiliation."""
    m = _NUMBERED.match(text)
    rest = text[m.end():] if m else text
    if not re.search(r"[^\W\d_]{3,}", rest):
        return False  # no word of three letters: panel letters, sample names, units
    tokens = rest.split()
    if sum(1 for t in tokens if re.fullmatch(r"[-+±]?[\d.,:%]*\d[\d.,:%]*", t)) * 2 >= len(tokens) >= 3:
        return False  # mostly numbers: a table row
    if text[0] in "*•·–—-▪◦●○■□>":
        return False
    if not m and (BYLINE.search(text) or _AUTHORS.match(text)
                  and (re.search(r"[\d*†‡§¶]", text) or len(re.findall(r",|\band\b|&", text)) >= 2)):
        return False
    return True


def _caps_heading(text: str) -> bool:
    """"III. METHODS", "2 RELATED WORK": a numbered heading set in capitals of the body type."""
    m = _NUMBERED.match(text)
    rest = text[m.end():] if m else ""
    return bool(m) and len(rest.split()) <= 8 and rest.isupper()


@dataclass
class _Draft:
    rows: list[_Row]
    kind: str = "paragraph"
    level: int | None = None
    runin: bool = False  # a bold run-in heading split from the start of a paragraph


class _Assembler:
    """Turns rows in reading order into blocks: paragraph breaks, kinds, joined continuations, heading levels."""

    def __init__(self, file: str, rows: list[_Row]) -> None:
        self.file = file
        self.rows = rows
        sizes: Counter[float] = Counter()
        for r in rows:
            sizes[round(r.size * 2) / 2] += len(r.text)
        self.body = max(sizes.items(), key=lambda kv: (kv[1], -kv[0]))[0] if sizes else 10.0
        pitches: Counter[float] = Counter()
        for a, b in zip(rows, rows[1:]):
            if a.column == b.column and a.page == b.page and abs(a.size - self.body) < 0.6 and not a.cells:
                pitch = a.y0 - b.y0
                if 0.9 * a.size < pitch < 3 * a.size:
                    pitches[round(pitch * 2) / 2] += 1
        self.pitch = max(pitches.items(), key=lambda kv: (kv[1], -kv[0]))[0] if pitches else 1.2 * self.body
        #: per page and column, the bottom of the lowest line in body type (footnotes sit below it)
        self.lowest_body: dict[tuple[int, int], float] = {}
        for r in rows:
            if r.size > self.body - 0.9 and not r.cells:
                key = (r.page, r.column[1])
                self.lowest_body[key] = min(self.lowest_body.get(key, math.inf), r.y0)
        self.words: set[str] = set()
        self.hyphenated: set[str] = set()
        self.roman_sections = False
        # the document's own vocabulary, without the halves of words broken at line ends
        broken = False
        for r in rows:
            low = r.text.lower()
            if broken:
                low = _FIRST_WORD.sub(" ", low)
            broken = r.ends_soft or r.text.endswith("-")
            if "-" in low:  # both patterns need a hyphen
                self.hyphenated.update(_HYPHENATED.findall(low))
                low = _BROKEN_WORD.sub(" ", low)
            self.words.update(_WORD.findall(low))

    # -- breaks and kinds

    def _bold(self, r: _Row) -> bool:
        return r.bold > 0.9

    def _breaks(self, prev: _Row, row: _Row, draft: _Draft) -> bool:
        if prev.cells or row.cells or _caps_heading(prev.text) or _caps_heading(row.text):
            return True
        if _CAPTION.match(row.text):
            return True
        if _LIST_START.match(row.text) and draft.kind != "caption":
            # a number at the start of an indented continuation line ("pp. 556-564. 3") starts no new item
            if not (draft.kind == "list-item" and row.x0 > draft.rows[0].x0 + 0.5 * row.size):
                return True
        if abs(row.size - prev.size) > 0.9 or self._bold(row) != self._bold(prev):
            return True
        pitch = prev.y0 - row.y0
        size = max(row.size, prev.size)
        if pitch < 0.3 * size or pitch > self.pitch * size / self.body + 0.45 * size:
            return True
        indent = 0.8 * row.size
        middle = (row.left + row.right) / 2
        if abs((row.x0 + row.x1) / 2 - middle) < size and abs((prev.x0 + prev.x1) / 2 - middle) < size \
                and row.x0 - row.left > indent:
            return False  # centred lines (a title, authors): neither indents nor short lines mean a break
        if draft.kind == "list-item":
            return row.x0 < draft.rows[0].x0 + 0.5 * indent and not _CAPTION.match(draft.rows[0].text)
        if row.x0 - row.left > indent and row.x0 - prev.x0 > indent:
            return True  # a first-line indent
        width = row.right - row.left
        if width > 0 and prev.x1 < row.right - 0.25 * width and _SENTENCE_END.search(prev.text):
            return True  # the short last line of a paragraph
        return False

    def _drafts(self) -> list[_Draft]:
        """Rows grouped into drafts of blocks, in reading order; a column or page change always ends one."""
        out: list[_Draft] = []
        draft: _Draft | None = None
        prev: _Row | None = None
        for row in self.rows:
            moved = prev is None or (row.page, row.column) != (prev.page, prev.column)
            if draft is not None and prev is not None and (moved or self._breaks(prev, row, draft)):
                out.append(draft)
                draft = None
            if draft is None:
                kind = "table-row" if row.cells else (
                    "caption" if _CAPTION.match(row.text) else "list-item" if _LIST_START.match(row.text)
                    else "paragraph")
                draft = _Draft([row], kind)
            else:
                draft.rows.append(row)
            prev = row
        if draft is not None:
            out.append(draft)
        return out

    def _heading_like(self, d: _Draft) -> bool:
        text = " ".join(r.text for r in d.rows)
        words = text.split()
        if d.kind in ("table-row", "caption") or len(d.rows) > 3 or not words or len(words) > 16 or len(text) > 160:
            return False
        if not re.search(r"[^\W\d_]", text) or text[0].islower() or text.endswith((",", ";")):
            return False
        if not _plausible_heading(text):
            return False
        numbered = _NUMBERED.match(text)
        size = sum(r.size for r in d.rows) / len(d.rows)
        styled = all(self._bold(r) for r in d.rows) or size >= self.body + 0.9 or _caps_heading(text)
        if not styled and self.roman_sections and len(d.rows) == 1 and _LETTERED.match(text) \
                and len(words) <= 9 and not _SENTENCE_END.search(text):
            return True  # "A. Data Preprocessing": a subsection in italics under "II. DATASET" (IEEE style)
        if not styled:
            return False
        return not (text.endswith(".") and not numbered and len(words) > 6)

    def _footnote(self, d: _Draft) -> bool:
        """Small text below all body text of its column on the page: a note marked with a number or a symbol,
        or unmarked (the marker may be a glyph that cannot be decoded)."""
        size = sum(r.size for r in d.rows) / len(d.rows)
        if size > self.body - 0.9:
            return False
        first = d.rows[0]
        lowest = self.lowest_body.get((first.page, first.column[1]))
        if lowest is None or first.y1 > lowest + 0.5 * first.size:
            return False  # no body text above it (a page of references in small type), or body text below
        if _REFERENCE_START.match(first.text):
            return False
        return bool(_FOOTNOTE_START.match(first.text)) or len(d.rows) <= 4

    # -- text

    def _join_hyphen(self, head: str, tail: str) -> bool:
        """Whether "head-" at a line end and "tail" on the next line are one word split by hyphenation."""
        if not head or not tail or not tail[0].isalpha() or not tail[0].islower():
            return False  # "U-" + "Net", "COVID-" + "19" keep their hyphen
        if any(c.isupper() for c in head[1:]) or any(c.isdigit() for c in head):
            return False
        joined = (head + tail).lower()
        compound = f"{head}-{tail}".lower()
        # the document's own spelling decides first; then two whole words ("false-positive") stay a compound
        if joined in self.words and compound not in self.hyphenated:
            return True
        if compound in self.hyphenated:
            return False
        if len(head) >= 3 and len(tail) >= 4 and head.lower() in self.words and tail.lower() in self.words:
            return False
        return head.lower() not in _KEEP_HYPHEN_HEADS

    def _mend(self, m: re.Match) -> str:
        """"con- volutional" inside a line (text pasted from an earlier hyphenated layout), where the document
        itself spells the word whole or as a compound elsewhere; "over- and under-" stays as written."""
        head, tail = m.group(1), m.group(2)
        if (head + tail).lower() in self.words:
            return head + tail
        if f"{head}-{tail}".lower() in self.hyphenated:
            return f"{head}-{tail}"
        return m.group(0)

    def _text(self, rows: list[_Row]) -> tuple[str, tuple[Mark, ...]]:
        """The rows' lines joined into one text, with a mark where each line starts.

        Linear in the block's length: the text is kept as pieces (one per line, and the spaces between them),
        and only the last few lines are looked at for a hyphen or a dash at the end.
        """
        parts: list[str] = []
        length = 0
        marks: list[Mark] = []
        for k, r in enumerate(rows):
            t = _PASTED_HYPHEN.sub(self._mend, r.text) if "- " in r.text else r.text
            if k > 0 and not rows[k - 1].ends_soft:
                # a word broken at the end of the previous line sits within its last few pieces
                end = "".join(parts[-4:])
                m = _LINE_END_HYPHEN.search(end)
                if m and len(end) > 1 and end[-2].isalpha():
                    tail = _LEADING_LETTERS.match(t).group(0)
                    word = m.group(1)
                    # a break after the hyphen of a compound ("state-of-the-", "ODR-") keeps it
                    if "-" not in word and self._join_hyphen(word, tail):
                        parts[-1] = parts[-1][:-1]
                        length -= 1
                elif not end.endswith(("—", "/")):
                    parts.append(" ")
                    length += 1
            marks.append(Mark(length, r.page, r.line, r.printed))
            if t:
                parts.append(t)
                length += len(t)
        return "".join(parts), tuple(marks)

    # -- the whole

    def blocks(self) -> list[Block]:
        drafts = self._drafts()
        # sections numbered "II. DATASET" in capitals: then "A. Description" on a line of its own is a subsection
        self.roman_sections = sum(1 for d in drafts if len(d.rows) == 1 and _ROMAN_CAPS.match(d.rows[0].text)) >= 2
        for d in drafts:
            if d.kind in ("paragraph", "list-item") and self._heading_like(d):
                d.kind = "heading"
            elif d.kind in ("paragraph", "list-item") and self._footnote(d):
                d.kind = "footnote"
        self._front_matter(drafts)
        drafts = self._join_continuations(self._split_runins(self._split_stacked(drafts)))
        self._levels(drafts)
        out: list[Block] = []
        for d in drafts:
            text, marks = self._text(d.rows)
            if d.kind == "heading":
                text = text.rstrip(".:").strip() if d.runin else text
            first = d.rows[0]
            cells = tuple(" ".join(c.split()) for r in d.rows for c in r.cells) if d.kind == "table-row" else ()
            out.append(Block(text=text, kind=d.kind, location=Location(file=self.file, page=first.page,
                                                                       line=first.line, printed_line=first.printed),
                             level=d.level, marks=marks, cells=tuple(c for c in cells if c)))
        return out

    def _front_matter(self, drafts: list[_Draft]) -> None:
        """Before the first section of the first page only the title is a heading; large author and
        affiliation lines are paragraphs."""
        from .sections import heading_role

        front: list[_Draft] = []
        for d in drafts:
            if d.rows[0].page != 1 or d.kind == "heading" and (
                    heading_role(d.rows[0].text) or _NUMBERED.match(d.rows[0].text)):
                break
            if d.kind == "heading":
                front.append(d)
        if len(front) > 1:
            top = max(max(r.size for r in d.rows) for d in front)
            for d in front:
                if max(r.size for r in d.rows) < top - 0.5:
                    d.kind = "paragraph"

    def _split_stacked(self, drafts: list[_Draft]) -> list[_Draft]:
        """"Results" over "LSTM versus GRU models": two headings set alike, one above the other, are two
        headings. A heading wraps only where its line is full, so a short line that ends without a joining word
        ends its heading (a centred title block is left whole)."""
        out: list[_Draft] = []
        for d in drafts:
            if d.kind != "heading" or len(d.rows) < 2:
                out.append(d)
                continue
            start = 0
            for k in range(1, len(d.rows)):
                prev, row = d.rows[k - 1], d.rows[k]
                width = prev.right - prev.left
                middle = (prev.left + prev.right) / 2
                centred = abs((prev.x0 + prev.x1) / 2 - middle) < prev.size and prev.x0 - prev.left > prev.size
                last = prev.text.split()[-1].lower() if prev.text.split() else ""
                if (width > 0 and prev.x1 < prev.right - 0.3 * width and not centred and row.text[:1].isupper()
                        and last not in _JOINING_WORDS and not prev.text.endswith(("-", ",", ":", "–", "—"))):
                    out.append(_Draft(d.rows[start:k], "heading"))
                    start = k
            out.append(_Draft(d.rows[start:], "heading") if start else d)
        return out

    def _split_runins(self, drafts: list[_Draft]) -> list[_Draft]:
        """"Abstract. Tumour segmentation is ..." with a bold lead: a heading, then the paragraph."""
        out: list[_Draft] = []
        for d in drafts:
            first = d.rows[0]
            prefix = first.bold_prefix
            if d.kind == "paragraph" and prefix and re.search(r"[^\W\d_]{2,}[.:]$", prefix) \
                    and len(prefix.split()) <= 6 and len(first.text) > len(prefix) + 1:
                rest = first.text[len(prefix):].strip()
                out.append(_Draft([replace(first, text=prefix, bold=1.0, bold_prefix="")], "heading", runin=True))
                out.append(_Draft([replace(first, text=rest, bold=0.0, bold_prefix="")] + d.rows[1:], "paragraph"))
            else:
                out.append(d)
        return out

    def _join_continuations(self, drafts: list[_Draft]) -> list[_Draft]:
        """A paragraph cut by a column or page break and continued lower-case after it becomes one block.

        Captions, table rows and footnotes may stand between the two parts; any other block in the same column
        means the paragraph really ended there.
        """
        skip = {"caption", "table-row", "footnote"}
        removed: set[int] = set()
        out: list[_Draft] = []
        for k, d in enumerate(drafts):
            if k in removed:
                continue
            out.append(d)
            if d.kind not in ("paragraph", "list-item"):
                continue
            j = k + 1
            while True:
                last = d.rows[-1]
                while j < len(drafts) and (j in removed or drafts[j].kind in skip):
                    j += 1
                if j >= len(drafts):
                    break
                c = drafts[j]
                if (c.rows[0].page, c.rows[0].column) == (last.page, last.column):
                    break
                if c.kind != "paragraph" or not c.rows[0].text[:1].islower() or _SENTENCE_END.search(last.text):
                    break
                d.rows.extend(c.rows)
                removed.add(j)
                j += 1
        return out

    def _levels(self, drafts: list[_Draft]) -> None:
        """Heading levels from numbering depth; unnumbered headings take the level of numbered ones of their size."""
        headings = [d for d in drafts if d.kind == "heading"]
        if not headings:
            return
        roman = any((m := _NUMBERED.match(d.rows[0].text)) and m.group("roman") for d in headings)
        by_size: dict[float, Counter[int]] = defaultdict(Counter)
        numbered_depth = 0
        for d in headings:
            if d.runin:
                continue
            m = _NUMBERED.match(d.rows[0].text)
            if not m:
                continue
            if m.group("arabic"):
                depth = numbering_depth(m.group("arabic"))
            elif m.group("roman"):
                depth = 1
            else:
                depth = (2 if roman else 1) + (m.group("sub").count(".") + 1 if m.group("sub") else 0)
            d.level = min(depth, 6)
            numbered_depth = max(numbered_depth, d.level)
            by_size[round(d.rows[0].size * 2) / 2][d.level] += 1
        size_level = {s: c.most_common(1)[0][0] for s, c in by_size.items()}
        unnumbered_sizes = sorted({round(d.rows[0].size * 2) / 2 for d in headings
                                   if d.level is None and not d.runin}, reverse=True)
        for d in headings:
            if d.level is not None:
                continue
            if d.runin:
                d.level = max(numbered_depth, 2) + 1
                continue
            s = round(d.rows[0].size * 2) / 2
            if s in size_level:
                d.level = size_level[s]
            elif size_level and s > max(size_level):
                d.level = 1
            elif size_level:
                larger = [size_level[t] for t in size_level if t > s]
                d.level = min(6, (max(larger) if larger else 0) + 1)
            else:
                d.level = unnumbered_sizes.index(s) + 1
