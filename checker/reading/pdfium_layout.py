"""The fast way to lay out a PDF page: PDFium (pypdfium2) instead of pdfminer.six's layout analysis.

It builds the same compact line records as the careful path in checker.reading.pdf (``Page`` with its
``Piece`` lines, horizontal rules and image count), so everything after them (columns, tables, headings,
running headers) is shared. PDFium is asked about whole text objects (a run of text in one font, usually a line
or part of one) rather than about every character: their text, font, size and matrix, the advance box of their
first and last character, and the two characters on either side of each space, which is where a line can be
cut into table cells. Lines are then joined as pdfminer joins characters: in drawing order, on one baseline,
less than 1.6 character widths apart.

Whenever the fast path is unsure it gives up with ``Unsure`` and the careful path reads the whole file instead,
so errors and warnings keep their one wording: a file PDFium cannot open or had to repair, a rotated page, a
drawing about half the page in size (whose text may or may not be the page's own). The choice is made per
document, never per page.
"""

from __future__ import annotations

import ctypes
import math
import re
from itertools import takewhile
from pathlib import Path

from ..core.limits import Limits
from .pdflines import Page, Piece, clean, is_bold, mark_undecoded

#: split a line where the gap between two characters exceeds this many of their widths (pdfminer's char_margin)
_CHAR_MARGIN = 1.6
#: a space between two runs on one line where the gap exceeds this share of the font size (word_margin)
_SPACE = 0.1

_TEXT, _PATH, _IMAGE, _FORM = 1, 2, 3, 5
_MOVETO = 2
#: the spaces between two words of a text object: where it may be cut into table cells
_GAP = re.compile(r"(?<=\S) +(?=\S)")
_NO_MAP = "\ue000"  # one character for a glyph without a character map, so text and indexes stay aligned


class Unsure(Exception):
    """The fast path cannot vouch for this file; read it the careful way."""


#: the PDFium calls used, with handles as plain integers (pypdfium2's typed pointers would need a slow cast
#: each time one is compared or used as a key): name -> (result type, argument types)
_VP, _I, _F, _UL = ctypes.c_void_p, ctypes.c_int, ctypes.c_float, ctypes.c_ulong
_PF = ctypes.POINTER(ctypes.c_float)
_SIGNATURES = {
    "FPDFPage_CountObjects": (_I, _VP), "FPDFPage_GetObject": (_VP, _VP, _I), "FPDFPageObj_GetType": (_I, _VP),
    "FPDFFormObj_CountObjects": (_I, _VP), "FPDFFormObj_GetObject": (_VP, _VP, _UL),
    "FPDFPageObj_GetMatrix": (_I, _VP, _VP), "FPDFPageObj_GetBounds": (_I, _VP, _PF, _PF, _PF, _PF),
    "FPDFTextObj_GetText": (_UL, _VP, _VP, _VP, _UL), "FPDFTextObj_GetFont": (_VP, _VP),
    "FPDFTextObj_GetFontSize": (_I, _VP, _PF), "FPDFFont_GetBaseFontName": (ctypes.c_size_t, _VP, _VP, ctypes.c_size_t),
    "FPDFFont_GetDescent": (_I, _VP, _F, _PF),
    "FPDFText_LoadPage": (_VP, _VP), "FPDFText_ClosePage": (None, _VP), "FPDFText_CountChars": (_I, _VP),
    "FPDFText_GetTextObject": (_VP, _VP, _I), "FPDFText_GetLooseCharBox": (_I, _VP, _I, _VP),
    "FPDFText_IsGenerated": (_I, _VP, _I), "FPDFText_HasUnicodeMapError": (_I, _VP, _I),
    "FPDFText_GetUnicode": (ctypes.c_uint, _VP, _I), "FPDFText_GetText": (_I, _VP, _I, _I, _VP),
    "FPDFPath_CountSegments": (_I, _VP), "FPDFPath_GetPathSegment": (_VP, _VP, _I),
    "FPDFPathSegment_GetType": (_I, _VP), "FPDFPathSegment_GetPoint": (_I, _VP, _PF, _PF),
    "FPDFPathSegment_GetClose": (_I, _VP),
}


class _Api:
    """PDFium's functions re-declared over the same library, taking and giving handles as integers."""

    def __init__(self, raw) -> None:
        for name, (result, *args) in _SIGNATURES.items():
            address = ctypes.cast(getattr(raw, name), ctypes.c_void_p).value
            setattr(self, name, ctypes.CFUNCTYPE(result, *args)(address))


_API: _Api | None = None


def _api(raw) -> _Api:
    global _API
    if _API is None:
        _API = _Api(raw)
    return _API


class _Matrix:
    __slots__ = ("a", "b", "c", "d", "e", "f")

    def __init__(self, a=1.0, b=0.0, c=0.0, d=1.0, e=0.0, f=0.0):
        self.a, self.b, self.c, self.d, self.e, self.f = a, b, c, d, e, f

    def then(self, o: _Matrix) -> _Matrix:
        """This transformation followed by ``o``."""
        return _Matrix(
            self.a * o.a + self.b * o.c, self.a * o.b + self.b * o.d,
            self.c * o.a + self.d * o.c, self.c * o.b + self.d * o.d,
            self.e * o.a + self.f * o.c + o.e, self.e * o.b + self.f * o.d + o.f,
        )

    def apply(self, x: float, y: float) -> tuple[float, float]:
        return self.a * x + self.c * y + self.e, self.b * x + self.d * y + self.f

    def box(self, x0: float, y0: float, x1: float, y1: float) -> tuple[float, float, float, float]:
        xs, ys = zip(*(self.apply(x, y) for x, y in ((x0, y0), (x0, y1), (x1, y0), (x1, y1))))
        return min(xs), min(ys), max(xs), max(ys)


class _Run:
    """One text object, placed on the page."""

    __slots__ = ("text", "x0", "x1", "y0", "y1", "size", "bold", "chars", "w0", "w1")

    def __init__(self, text, x0, x1, y0, y1, size, bold, chars, w0, w1):
        self.text, self.x0, self.x1, self.y0, self.y1 = text, x0, x1, y0, y1
        self.size, self.bold, self.chars = size, bold, chars
        # the advance widths of the first and the last character, which set how wide a gap splits a line
        self.w0, self.w1 = w0, w1


class _Reader:
    def __init__(self, raw) -> None:
        self.raw = raw
        self.api = _api(raw)
        self.buf = ctypes.create_string_buffer(8192)
        self.fmatrix = raw.FS_MATRIX()
        self.pmatrix = ctypes.byref(self.fmatrix)
        self.fl = [ctypes.c_float() for _ in range(4)]
        self.fonts: dict[int, tuple[bool, float]] = {}
        self.seen: dict[int, set[str]] = {}  # per font, the characters asked about
        self.lacking: set[int] = set()  # fonts with glyphs that have no character map

    # -- small wrappers -----------------------------------------------------------------------------------

    def matrix(self, obj) -> _Matrix:
        m = self.fmatrix
        if not self.api.FPDFPageObj_GetMatrix(obj, self.pmatrix):
            return _Matrix()
        return _Matrix(m.a, m.b, m.c, m.d, m.e, m.f)

    def bounds(self, obj) -> tuple[float, float, float, float] | None:
        a, b, c, d = self.fl
        if not self.api.FPDFPageObj_GetBounds(obj, a, b, c, d):
            return None
        return a.value, b.value, c.value, d.value

    def text(self, obj, textpage) -> str:
        api = self.api
        n = api.FPDFTextObj_GetText(obj, textpage, None, 0)
        if n <= 2:
            return ""
        if n > len(self.buf):
            self.buf = ctypes.create_string_buffer(n * 2)
        n = api.FPDFTextObj_GetText(obj, textpage, self.buf, n)
        return self.buf.raw[: max(0, n - 2)].decode("utf-16-le", "replace")

    def font(self, obj) -> tuple[bool, float]:
        """(bold, descent per unit of font size) of a text object's font."""
        api = self.api
        font = api.FPDFTextObj_GetFont(obj)
        key = font or 0
        hit = self.fonts.get(key)
        if hit is None:
            n = api.FPDFFont_GetBaseFontName(font, None, 0) if font else 0
            name = ""
            if n > 1:
                b = ctypes.create_string_buffer(n)
                api.FPDFFont_GetBaseFontName(font, b, n)
                name = b.value.decode("latin-1")
            d = self.fl[0]
            descent = d.value / 1000.0 if font and api.FPDFFont_GetDescent(font, 1000.0, d) else -0.2
            hit = self.fonts[key] = (is_bold(name), max(-1.0, min(0.0, descent)))
        return hit


def pages(path: Path, data: bytes, limits: Limits) -> list:
    """Every page as the careful path's ``Page`` record, or ``Unsure``."""
    try:
        import pypdfium2 as pdfium
        import pypdfium2.raw as raw
    except ImportError as exc:  # pragma: no cover - pypdfium2 is a dependency; a broken install still reads
        raise Unsure("pypdfium2 is not installed") from exc
    try:
        pdf = pdfium.PdfDocument(data)
    except Exception as exc:  # damaged, encrypted: the careful path words the error
        raise Unsure(str(exc)) from None
    try:
        if not raw.FPDF_DocumentHasValidCrossReferenceTable(pdf.raw):
            raise Unsure("repaired")  # the careful path notes what was worked around
        n = len(pdf)
        if n > limits.max_pages or n == 0:
            raise Unsure("page count")
        try:
            reader = _Reader(raw)
        except AttributeError as exc:  # an older PDFium without some of the calls used here
            raise Unsure(str(exc)) from None
        return [_page(reader, pdf, i) for i in range(n)]
    finally:
        pdf.close()


def _page(reader: _Reader, pdf, index: int):
    api, raw = reader.api, reader.raw
    try:
        page = pdf[index]
    except Exception as exc:
        raise Unsure(f"page {index + 1}: {exc}") from None
    textpage = None
    try:
        if raw.FPDFPage_GetRotation(page.raw) % 4:
            raise Unsure("rotated page")
        left, bottom, right, top = page.get_mediabox()
        width, height = right - left, top - bottom
        origin = _Matrix(e=-left, f=-bottom)
        handle = ctypes.cast(page.raw, ctypes.c_void_p).value
        textpage = api.FPDFText_LoadPage(handle)
        if not textpage:
            raise Unsure("text layer")
        runs: list[_Run] = []
        rules: list[tuple[float, float, float]] = []
        counts = {"images": 0}
        area = max(width * height, 1.0)

        def walk(holder, count_fn, get_fn, matrix: _Matrix, take_text: bool) -> None:
            for i in range(count_fn(holder)):
                obj = get_fn(holder, i)
                kind = api.FPDFPageObj_GetType(obj)
                if kind == _TEXT:
                    if take_text:
                        texts.append((obj, matrix))
                elif kind == _FORM:
                    m = reader.matrix(obj).then(matrix)
                    big = _covers_page(reader, obj, m, matrix, area) if take_text else False
                    walk(obj, api.FPDFFormObj_CountObjects, api.FPDFFormObj_GetObject, m, take_text and big)
                elif kind == _IMAGE:
                    counts["images"] += 1
                elif kind == _PATH:
                    _rules(reader, obj, matrix, height, rules)

        texts: list[tuple[object, _Matrix]] = []
        walk(handle, api.FPDFPage_CountObjects, api.FPDFPage_GetObject, origin, True)
        chars = _Chars(reader, textpage)
        for obj, matrix in texts:
            runs.extend(_text_runs(reader, obj, textpage, matrix, chars, origin))
        pieces, undecoded = _pieces(runs)
        return Page(index + 1, width, height, tuple(pieces), tuple(rules), counts["images"], undecoded)
    finally:
        if textpage:
            api.FPDFText_ClosePage(textpage)
        page.close()


class _Chars:
    """Where each text object's characters sit in PDFium's character list of the page, and what they say.

    The list follows the objects in drawing order, with generated spaces and line breaks between them, so a
    cursor finds most objects at once and a galloping search finds where each ends; when PDFium reordered a
    line, one pass over the page maps them all.
    """

    def __init__(self, reader: _Reader, textpage) -> None:
        api = self.api = reader.api
        self.reader = reader
        self.textpage = textpage
        self.cursor = 0
        self.count = api.FPDFText_CountChars(textpage)
        self.full: dict[int, list[int]] | None = None
        self.rect = reader.raw.FS_RECTF()
        self.prect = ctypes.byref(self.rect)
        self.text: str | None = None
        if self.count > 0:
            buf = ctypes.create_string_buffer((self.count + 1) * 2)
            api.FPDFText_GetText(textpage, 0, self.count, buf)
            text = buf.raw[: 2 * self.count].decode("utf-16-le", "replace")
            if len(text) == self.count:  # one unit per character (no characters beyond the BMP)
                self.text = text

    def _obj(self, i: int) -> int | None:
        return self.api.FPDFText_GetTextObject(self.textpage, i)

    def _end(self, start: int, key: int) -> int:
        """The last index of the run of characters from ``start`` that belong to ``key``."""
        last, step = start, 1
        while last + step < self.count and self._obj(last + step) == key:
            last += step
            step *= 2
        top = min(last + step, self.count)  # the first index known not to belong, or the end
        while top - last > 1:
            mid = (last + top) // 2
            if self._obj(mid) == key:
                last = mid
            else:
                top = mid
        return last

    def _map(self) -> None:
        self.full = {}
        for i in range(self.count):
            self.full.setdefault(self._obj(i), []).append(i)

    def locate(self, obj) -> tuple[str, range | list[int]] | None:
        """A text object's characters: their text and their indexes, or None when it has none."""
        if self.text is None:
            return self._locate_slowly(obj)
        start = None
        if self.full is None:
            for c in range(self.cursor, min(self.cursor + 4, self.count)):
                if self._obj(c) == obj:
                    start = c
                    break
            if start is None:
                if not self.reader.text(obj, self.textpage):
                    return None  # nothing of it in the text layer (drawn twice, or without area)
                self._map()
        if start is not None:
            last = self._end(start, obj)
            self.cursor = last + 1
            pos: range | list[int] = range(start, last + 1)
            text = self.text[start: last + 1]
        else:
            pos = self.full.get(obj) or []
            if not pos:
                return None
            text = "".join(self.text[i] for i in pos)
        if "\ufffe" in text:  # a hyphen PDFium found at a line end, or a character without any code
            text = "".join(ch if ch != "\ufffe" else ("-" if self.api.FPDFText_GetUnicode(self.textpage, i) == 2
                                                      else " ") for ch, i in zip(text, pos))
        return text, pos

    def _locate_slowly(self, obj) -> tuple[str, list[int]] | None:
        """For a page whose text has characters beyond the BMP: the object's characters one by one."""
        if self.full is None:
            self._map()
        pos = self.full.get(obj) or []
        chars = []
        for i in pos:
            u = self.api.FPDFText_GetUnicode(self.textpage, i)
            chars.append("-" if u == 2 else chr(u) if 0 < u < 0x110000 else " ")
        return ("".join(chars), pos) if pos else None

    def loose(self, i: int) -> tuple[float, float]:
        """Left and right edge of a character's advance."""
        r = self.rect
        self.api.FPDFText_GetLooseCharBox(self.textpage, i, self.prect)
        return r.left, r.right


def _text_runs(reader: _Reader, obj, textpage, outer: _Matrix, chars: _Chars, page: _Matrix) -> list[_Run]:
    """A text object as runs of text, cut where a gap inside it is wide (table cells set as one run)."""
    api = reader.api
    located = chars.locate(obj)
    if located is None or not located[0].strip():
        return []
    text, pos = located
    m = reader.matrix(obj).then(outer)
    if not (m.a * m.d > 0 and m.b * m.c <= 0):
        return []  # rotated margin stamps and axis labels are not running text
    fs = reader.fl[0]
    size = fs.value if api.FPDFTextObj_GetFontSize(obj, fs) else 0.0
    # the font size in page units: FPDFTextObj_GetFontSize gives it in text space
    size = abs(size * math.hypot(m.c, m.d)) or abs(m.d)
    if size <= 0:
        return []
    bold, descent = reader.font(obj)
    y0 = m.f + descent * size
    text = _unmapped(reader, obj, textpage, text, pos)
    # text and characters line up one to one: every space is a place the run may be cut
    first, end = chars.loose(pos[0]), chars.loose(pos[-1])
    dx = page.e  # the page's matrix only moves the origin: page.apply(x, 0) is x + 0.0 + e
    x0 = first[0] + 0.0 + dx
    x1 = end[1] + 0.0 + dx
    cuts = [0]
    edges: list[tuple[float, float, float, float]] = []  # right edge and width before, left edge and width after
    if " " in text.strip():
        # two calls of PDFium per gap between words, the hottest loop of reading a PDF: no helper calls here
        box, tp, rect, prect = api.FPDFText_GetLooseCharBox, textpage, chars.rect, chars.prect
        for g in _GAP.finditer(text):
            gs, ge = g.span()
            box(tp, pos[gs - 1], prect)
            al, ar = rect.left, rect.right
            box(tp, pos[ge], prect)
            bl, br = rect.left, rect.right
            before, after = ar + 0.0 + dx, bl + 0.0 + dx
            wa, wb = ar - al, br - bl
            if after - before > _CHAR_MARGIN * (wb if wb > wa else wa) and \
                    _empty_gap(chars, [pos[k] for k in range(gs - 1, ge + 1)]):
                cuts.extend((gs, ge))
                edges.append((before, wa, after, wb))
    w0, w1 = first[1] - first[0], end[1] - end[0]
    if len(cuts) == 1:
        return [_Run(text, x0, x1, y0, y0 + size, size, bold, _letters(text), w0, w1)]
    cuts.append(len(text))
    lefts = [(x0, w0)] + [(e[2], e[3]) for e in edges]
    rights = [(e[0], e[1]) for e in edges] + [(x1, w1)]
    out = []
    for k in range(len(lefts)):
        part = text[cuts[2 * k]: cuts[2 * k + 1]]
        if part.strip():
            out.append(_Run(part, lefts[k][0], rights[k][0], y0, y0 + size, size, bold, _letters(part),
                            lefts[k][1], rights[k][1]))
    return out


def _empty_gap(chars: _Chars, indexes: list[int]) -> bool:
    """Whether a wide gap between two letters is empty, as pdfminer sees it: spaces typed into the text are
    characters that bridge it (one line), spaces PDFium inferred from the spacing are not."""
    api, tp = chars.api, chars.textpage
    real = [indexes[0]] + [i for i in indexes[1:-1] if api.FPDFText_IsGenerated(tp, i) != 1] + [indexes[-1]]
    if len(real) == 2:
        return True
    boxes = [chars.loose(i) for i in real]
    for a, b in zip(boxes, boxes[1:]):
        gap, width = b[0] - a[1], a[1] - a[0]
        if gap <= _CHAR_MARGIN * max(width, b[1] - b[0]):
            continue
        # PDFium keeps one of several typed spaces in a row; the gap they leave is a whole number of them
        n = round(gap / width) if width > 0 else 0
        if n >= 1 and abs(gap - n * width) < 0.1 * width:
            continue
        return True
    return False


def _unmapped(reader: _Reader, obj, textpage, text: str, pos) -> str:
    """The text with each glyph its font has no character map for marked by _NO_MAP.

    PDFium puts the glyph's code in their place, which reads like an ordinary letter. Each font is asked about
    each distinct character once; a font found to lack a mapping is asked about every character after that.
    """
    api = reader.api
    key = api.FPDFTextObj_GetFont(obj) or 0
    if key not in reader.lacking:
        seen = reader.seen.setdefault(key, set())
        new = set(text) - seen
        if not new:
            return text
        seen |= new
        if not any(api.FPDFText_HasUnicodeMapError(textpage, pos[text.index(ch)]) == 1
                   for ch in new if not ch.isspace()):
            return text
        reader.lacking.add(key)
    bad = [k for k, i in enumerate(pos) if api.FPDFText_HasUnicodeMapError(textpage, i) == 1]
    if not bad:
        return text
    letters = list(text)
    for k in bad:
        letters[k] = _NO_MAP
    return "".join(letters)


def _letters(text: str) -> int:
    return len("".join(text.split()))


def _covers_page(reader: _Reader, form, m: _Matrix, outer: _Matrix, area: float) -> bool:
    """Whether a form (an embedded drawing) is the page itself rather than a figure on it.

    The careful path measures the form's own box; PDFium offers only the box of what is drawn in it, which
    can spill past the form's edges. A form's box almost always starts at its origin, so what is drawn is cut
    there; a form near the dividing line is left to the careful path.
    """
    b = reader.bounds(form)
    if b is None:
        return True
    x0, y0, x1, y1 = outer.box(*b)
    if m.b == 0 and m.c == 0 and m.a > 0 and m.d > 0:
        x0, y0 = max(x0, m.e), max(y0, m.f)
    share = max(0.0, x1 - x0) * max(0.0, y1 - y0) / area
    if 0.4 < share < 0.6:
        raise Unsure("a drawing about half the page in size")
    return share > 0.5


def _rules(reader: _Reader, obj, outer: _Matrix, height: float, rules: list) -> None:
    """Horizontal strokes of a path (table rules, and the top and bottom edges of thin boxes)."""
    api = reader.api
    b = reader.bounds(obj)
    if b is None:
        return
    x0, y0, x1, y1 = outer.box(*b)
    if x1 - x0 <= 10 or y1 - y0 >= 0.3 * height + 4:
        return  # too short for a rule, or a frame taller than a thin box
    m = reader.matrix(obj).then(outer)
    n = api.FPDFPath_CountSegments(obj)
    if n <= 0 or n > 400:
        return
    fx, fy = reader.fl[0], reader.fl[1]
    subpaths: list[list[tuple[float, float, int, bool]]] = []
    for i in range(n):
        seg = api.FPDFPath_GetPathSegment(obj, i)
        kind = api.FPDFPathSegment_GetType(seg)
        api.FPDFPathSegment_GetPoint(seg, fx, fy)
        x, y = m.apply(fx.value, fy.value)
        if kind == _MOVETO or not subpaths:
            subpaths.append([])
        subpaths[-1].append((x, y, kind, bool(api.FPDFPathSegment_GetClose(seg))))
    for sp in subpaths:
        xs = [p[0] for p in sp]
        ys = [p[1] for p in sp]
        sx0, sx1, sy0, sy1 = min(xs), max(xs), min(ys), max(ys)
        w, h = sx1 - sx0, sy1 - sy0
        curved = any(p[2] == 1 for p in sp)
        if curved or w <= 10:
            continue
        line, box = len(sp) == 2, len(sp) in (4, 5) and _axis_aligned(sp)
        if (line or box) and h < 1.5:  # a stroke, or a box thin enough to be one
            rules.append((round((sy0 + sy1) / 2, 2), sx0, sx1))
        elif box and h < 0.3 * height:  # a thin box: its top and bottom edges
            rules.append((round(sy0, 2), sx0, sx1))
            rules.append((round(sy1, 2), sx0, sx1))


def _axis_aligned(points: list[tuple[float, float, int, bool]]) -> bool:
    pts = [(p[0], p[1]) for p in points]
    if len(pts) == 5:
        if abs(pts[4][0] - pts[0][0]) > 0.01 or abs(pts[4][1] - pts[0][1]) > 0.01:
            return False
        pts = pts[:4]
    for (ax, ay), (bx, by) in zip(pts, pts[1:] + pts[:1]):
        if abs(ax - bx) > 0.01 and abs(ay - by) > 0.01:
            return False
    return True


def _pieces(runs: list[_Run]) -> tuple[list, int]:
    """Runs joined into pieces as pdfminer joins characters into lines: one after the other in drawing order,
    on one line and nearly touching. Runs that only happen to sit side by side (two captions next to each
    other) stay apart, as they do on the careful path."""
    out = []
    group: list[_Run] = []
    for run in runs:
        if group:
            prev = group[-1]
            overlap = min(prev.y1, run.y1) - max(prev.y0, run.y0)
            apart = max(run.x0 - prev.x1, prev.x0 - run.x1, 0.0)
            if overlap > 0.5 * min(prev.y1 - prev.y0, run.y1 - run.y0) and \
                    apart < _CHAR_MARGIN * max(prev.w1, run.w0):
                group.append(run)
                continue
            out.append(_piece_of(group))
        group = [run]
    if group:
        out.append(_piece_of(group))
    return [p for p, _n in out if p is not None], sum(n for _p, n in out)


def _piece_of(group: list[_Run]) -> tuple[Piece | None, int]:
    """One line piece from runs, with the careful path's words: a space where runs stand apart, glyphs without a
    character map settled as there (written as pdfminer writes them)."""
    parts = [group[0].text]
    end = group[0].x1
    for run in group[1:]:
        if run.x0 - end > _SPACE * run.size and not parts[-1].endswith(" ") and not run.text.startswith(" "):
            parts.append(" ")
        parts.append(run.text)
        end = max(end, run.x1)
    raw, undecoded = mark_undecoded("".join(parts).replace(_NO_MAP, "(cid:0)"))
    text = clean(raw)
    chars = sum(r.chars for r in group)
    if not text or not chars:
        return None, undecoded
    share = sum(r.chars for r in group if r.bold) / chars
    prefix = ""
    if 0 < share < 1 and group[0].bold:
        head = clean(" ".join(r.text for r in takewhile(lambda r: r.bold, group)))
        if head and text.startswith(head):
            prefix = head
    return Piece(
        text=text, x0=min(r.x0 for r in group), x1=max(r.x1 for r in group), y0=min(r.y0 for r in group),
        y1=max(r.y1 for r in group), size=_median_size(group), bold=share, bold_prefix=prefix,
        ends_soft=raw.rstrip().endswith("\u00ad"), chars=chars,
    ), undecoded


def _median_size(group: list[_Run]) -> float:
    """The font size of the middle letter when the letters are ordered by size (each run's size counted once
    per letter, at least once)."""
    weighted = sorted((r.size, max(r.chars, 1)) for r in group)
    middle = sum(w for _s, w in weighted) // 2
    for size, w in weighted:
        if middle < w:
            return size
        middle -= w
    return weighted[-1][0]  # pragma: no cover - the loop always returns
