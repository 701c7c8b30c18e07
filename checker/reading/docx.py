"""DOCX reader (python-docx): body paragraphs and tables in document order, then footnotes and endnotes.

Paragraph locations count the body's paragraphs from 1 (empty ones too, not those inside tables); table rows are
located by table and row number. The zip is checked before anything is unpacked.
"""

from __future__ import annotations

import io
import re
import zipfile
import zlib
from dataclasses import dataclass
from pathlib import Path

import docx
import lxml.etree as etree
from docx.opc.exceptions import OpcError
from docx.oxml.ns import qn

from .document import Block, BlockKind, Location
from ..core.errors import InputError
from ..core.limits import Limits
from . import Parsed
from .sections import clean_heading
from .text import SUBSCRIPT, SUPERSCRIPT, collapse, numbered_heading_level

FORMAT = "docx"
SUFFIXES = (".docx",)

_W = "{http://schemas.openxmlformats.org/wordprocessingml/2006/main}"
_MC = "{http://schemas.openxmlformats.org/markup-compatibility/2006}"
_M = "{http://schemas.openxmlformats.org/officeDocument/2006/math}"

_P, _R, _T, _TBL, _TR, _TC, _SDT = (qn(t) for t in ("w:p", "w:r", "w:t", "w:tbl", "w:tr", "w:tc", "w:sdt"))
_SDT_CONTENT, _CUSTOM_XML = qn("w:sdtContent"), qn("w:customXml")
_TXBX = qn("w:txbxContent")
#: containers inside a paragraph whose runs are shown
_RUN_CONTAINERS = frozenset(qn(t) for t in (
    "w:hyperlink", "w:smartTag", "w:ins", "w:customXml", "w:fldSimple", "w:moveTo", "w:bdo", "w:dir", "w:sdt",
    "w:sdtContent",
))
#: deleted or moved-away text of tracked changes
_REMOVED = frozenset(qn(t) for t in ("w:del", "w:moveFrom"))
_FALSE = {"0", "false", "off", "none"}
_CAPTION_TEXT = re.compile(
    r"^(?:Supplementary\s+|Suppl\.\s+|Extended\s+Data\s+)?(?:Figure|Fig\.?|Table)\s*[A-Z]?\d+[a-z]?\s*[.:|–—-]",
    re.IGNORECASE,
)
_HEADING_STYLE = re.compile(r"^heading\s*([1-9])$", re.IGNORECASE)
#: section names that stand at the top of a manuscript's outline, whatever their formatting
_TOP_LEVEL = frozenset("""abstract
introduction
background
related work
methods
method
materials and methods
results
discussion
conclusion
conclusions
references
bibliography
acknowledgements
acknowledgments
appendix
funding
competing interests
conflict of interest
conflicts of interest
author contributions
data availability
code availability
data and code availability
limitations""".splitlines())


@dataclass(frozen=True)
class _Style:
    name: str  # lower case, as python-docx translates built-in names ("heading 1", "caption")
    bold: bool | None
    outline: int | None  # 0-based outline level; 9 means body text
    numbered: bool


def _on(el: etree._Element | None) -> bool | None:
    if el is None:
        return None
    return el.get(qn("w:val"), "true").lower() not in _FALSE


def _styles(document: docx.document.Document) -> tuple[dict[str, _Style], str | None]:
    """Every style with its inherited bold, outline level and numbering; and the default paragraph style id."""
    raw: dict[str, etree._Element] = {}
    default = None
    for el in document.styles.element.iterchildren(qn("w:style")):
        sid = el.get(qn("w:styleId"))
        if sid:
            raw[sid] = el
            if el.get(qn("w:type")) == "paragraph" and el.get(qn("w:default")) in ("1", "true"):
                default = sid
    resolved: dict[str, _Style] = {}

    def resolve(sid: str, depth: int = 0) -> _Style:
        if sid in resolved:
            return resolved[sid]
        el = raw[sid]
        name_el = el.find(qn("w:name"))
        name = (name_el.get(qn("w:val"), sid) if name_el is not None else sid).lower()
        b = el.find(f"{qn('w:rPr')}/{qn('w:b')}")
        o = el.find(f"{qn('w:pPr')}/{qn('w:outlineLvl')}")
        num = el.find(f"{qn('w:pPr')}/{qn('w:numPr')}")
        bold = _on(b)
        outline = int(o.get(qn("w:val"))) if o is not None and (o.get(qn("w:val")) or "").isdigit() else None
        numbered = num is not None
        base_el = el.find(qn("w:basedOn"))
        base = base_el.get(qn("w:val")) if base_el is not None else None
        if base and base in raw and base != sid and depth < 20:
            parent = resolve(base, depth + 1)
            bold = parent.bold if bold is None else bold
            outline = parent.outline if outline is None else outline
            numbered = numbered or parent.numbered
        style = _Style(name, bold, outline, numbered)
        resolved[sid] = style
        return style

    for sid in raw:
        resolve(sid)
    return resolved, default


class _Paragraph:
    """The visible text of one w:p, whether all of it is bold, and the notes it refers to."""

    __slots__ = ("parts", "bold_chars", "chars", "notes", "boxes", "styles")

    def __init__(self, p: etree._Element, styles: dict[str, _Style], style_bold: bool) -> None:
        self.parts: list[str] = []
        self.bold_chars = 0
        self.chars = 0
        self.notes: list[tuple[str, str]] = []  # ("footnote"|"endnote", id)
        self.boxes: list[etree._Element] = []  # paragraphs of text boxes anchored here
        self.styles = styles
        self._walk(p, style_bold)

    @property
    def text(self) -> str:
        return collapse("".join(self.parts))

    @property
    def all_bold(self) -> bool:
        return self.chars > 0 and self.bold_chars == self.chars

    def _walk(self, el: etree._Element, style_bold: bool) -> None:
        for child in el:
            tag = child.tag
            if tag == _R:
                self._run(child, style_bold)
            elif tag in _RUN_CONTAINERS:
                self._walk(child, style_bold)
            elif tag == f"{_MC}AlternateContent":
                choice = child.find(f"{_MC}Choice")
                if choice is not None:
                    self._walk(choice, style_bold)
            elif tag in (f"{_M}oMath", f"{_M}oMathPara"):
                self.parts.append(" " + "".join(t.text or "" for t in child.iter(f"{_M}t")) + " ")
            # w:pPr, bookmarks, w:del, w:moveFrom and the like hold no visible text

    def _run(self, r: etree._Element, style_bold: bool) -> None:
        rpr = r.find(qn("w:rPr"))
        bold = style_bold
        script = None
        if rpr is not None:
            align = rpr.find(qn("w:vertAlign"))
            if align is not None:
                script = {"superscript": SUPERSCRIPT, "subscript": SUBSCRIPT}.get(align.get(qn("w:val"), ""))
            if _on(rpr.find(qn("w:vanish"))) or _on(rpr.find(qn("w:webHidden"))):
                return  # hidden text
            rstyle = rpr.find(qn("w:rStyle"))
            if rstyle is not None:
                s = self.styles.get(rstyle.get(qn("w:val"), ""))
                if s is not None and s.bold is not None:
                    bold = s.bold
            b = _on(rpr.find(qn("w:b")))
            if b is not None:
                bold = b
        for child in r:
            tag = child.tag
            text = ""
            if tag == _T:
                text = child.text or ""
            elif tag in (qn("w:tab"), qn("w:ptab")):
                text = "\t"
            elif tag in (qn("w:br"), qn("w:cr")):
                text = " "
            elif tag == qn("w:noBreakHyphen"):
                text = "-"
            elif tag == qn("w:footnoteReference"):
                self.notes.append(("footnote", child.get(qn("w:id"), "")))
            elif tag == qn("w:endnoteReference"):
                self.notes.append(("endnote", child.get(qn("w:id"), "")))
            elif tag in (qn("w:drawing"), qn("w:pict"), f"{_MC}AlternateContent"):
                self._boxes(child)
            if text:
                if script is not None:
                    text = text.translate(script)
                self.parts.append(text)
                visible = len(text.strip())
                self.chars += visible
                if bold:
                    self.bold_chars += visible

    def _boxes(self, el: etree._Element) -> None:
        """Paragraphs of text boxes (once: the VML fallback repeats the DrawingML choice)."""
        for node in el.iter(_TXBX, f"{_MC}Fallback"):
            if node.tag == _TXBX and not any(a.tag == f"{_MC}Fallback" for a in node.iterancestors()):
                self.boxes.extend(node.iter(_P))


class _DocxBlocks:
    def __init__(self, path: Path, document: docx.document.Document) -> None:
        self.file = str(path)
        self.styles, self.default_style = _styles(document)
        self.blocks: list[Block] = []
        self.paragraph = 0
        self.tables = 0
        self.styled_level = 0  # level of the last heading marked by its style
        self.note_refs: dict[tuple[str, str], int] = {}
        self.warnings: list[str] = []

    def style_of(self, p: etree._Element) -> _Style | None:
        ps = p.find(f"{qn('w:pPr')}/{qn('w:pStyle')}")
        sid = ps.get(qn("w:val")) if ps is not None else self.default_style
        return self.styles.get(sid or "")

    # -- body
    def body(self, el: etree._Element) -> None:
        for child in el:
            tag = child.tag
            if tag == _P:
                self.paragraph += 1
                self.para(child)
            elif tag == _TBL:
                self.tables += 1
                self.table(child, self.tables)
            elif tag == _SDT:
                if self._is_toc(child):
                    continue  # a table of contents repeats the headings
                content = child.find(_SDT_CONTENT)
                if content is not None:
                    self.body(content)
            elif tag == _CUSTOM_XML:
                self.body(child)
            elif tag == qn("w:altChunk"):
                self.warnings.append("contains an embedded document (altChunk) that was not read")

    @staticmethod
    def _is_toc(sdt: etree._Element) -> bool:
        gallery = sdt.find(f"{qn('w:sdtPr')}/{qn('w:docPartObj')}/{qn('w:docPartGallery')}")
        return gallery is not None and "contents" in (gallery.get(qn("w:val")) or "").lower()

    def para(self, p: etree._Element) -> None:
        style = self.style_of(p)
        name = style.name if style else "normal"
        if name.startswith("toc") or name == "table of figures":
            return
        info = _Paragraph(p, self.styles, bool(style and style.bold))
        text = info.text
        for ref in info.notes:
            self.note_refs.setdefault(ref, self.paragraph)
        loc = Location(self.file, paragraph=self.paragraph)
        if text:
            kind, level = self.classify(p, text, style, info)
            self.blocks.append(Block(text=text, kind=kind, location=loc, level=level))
        for box in info.boxes:
            inner = _Paragraph(box, self.styles, False).text
            if inner:
                kind = "caption" if _CAPTION_TEXT.match(inner) else "paragraph"
                self.blocks.append(Block(text=inner, kind=kind, location=loc))

    def classify(self, p: etree._Element, text: str, style: _Style | None,
                 info: _Paragraph) -> tuple[BlockKind, int | None]:
        name = style.name if style else "normal"
        words = len(text.split())
        prose = words > 30 or (len(text) > 250 and text.endswith("."))  # a sentence styled as a heading is prose
        m = _HEADING_STYLE.match(name)
        outline = self._outline(p, style)
        if not prose:
            if name == "title":
                self.styled_level = 1
                return "heading", 1
            if m or (outline is not None and outline < 9):
                level = int(m.group(1)) if m else outline + 1  # type: ignore[operator]
                self.styled_level = level
                return "heading", level
        if "caption" in name or _CAPTION_TEXT.match(text):
            return "caption", None
        numbered = p.find(f"{qn('w:pPr')}/{qn('w:numPr')}") is not None or bool(style and style.numbered)
        if numbered or name.startswith("list") or "bullet" in name:
            return "list-item", None
        level = self._guessed_heading(text, info.all_bold)
        if level is not None:
            return "heading", level
        return "paragraph", None

    def _outline(self, p: etree._Element, style: _Style | None) -> int | None:
        o = p.find(f"{qn('w:pPr')}/{qn('w:outlineLvl')}")
        if o is not None and (o.get(qn("w:val")) or "").isdigit():
            return int(o.get(qn("w:val")))
        return style.outline if style else None

    def _guessed_heading(self, text: str, bold: bool) -> int | None:
        """A heading typed as a short paragraph: bold, or numbered like '2.1 Data'."""
        words = len(text.split())
        if words > 15 or len(text) > 150 or text.rstrip()[-1] in ".;,!?" or not re.search(r"[A-Za-z]", text):
            return None
        numbered = numbered_heading_level(text)
        if numbered is not None and (bold or re.match(r"^\s*[0-9A-Z]+\.[0-9]", text)):
            return numbered
        if not bold:
            return None
        if clean_heading(text) in _TOP_LEVEL:
            return self.styled_level or 1
        return self.styled_level + 1 if self.styled_level else 1

    # -- tables
    def cell_text(self, tc: etree._Element) -> str:
        parts: list[str] = []
        for p in tc.iter(_P):  # nested tables' paragraphs too, in order
            t = _Paragraph(p, self.styles, False).text
            if t:
                parts.append(t)
        return " ".join(parts)

    def table(self, tbl: etree._Element, number: int) -> None:
        for r, tr in enumerate(self._rows(tbl), start=1):
            cells = []
            for tc in self._cells(tr):
                vmerge = tc.find(f"{qn('w:tcPr')}/{qn('w:vMerge')}")
                if vmerge is not None and vmerge.get(qn("w:val"), "continue") != "restart":
                    continue  # the lower part of a vertically merged cell repeats nothing new
                text = self.cell_text(tc)
                if text:
                    cells.append(text)
            if cells:
                self.blocks.append(Block(text=" | ".join(cells), kind="table-row", cells=tuple(cells),
                                         location=Location(self.file, table=number, row=r)))

    @staticmethod
    def _rows(tbl: etree._Element) -> list[etree._Element]:
        rows = []
        for child in tbl:
            if child.tag == _TR:
                rows.append(child)
            elif child.tag in (_SDT, _CUSTOM_XML):
                rows.extend(child.iter(_TR))
        return rows

    @staticmethod
    def _cells(tr: etree._Element) -> list[etree._Element]:
        cells = []
        for child in tr:
            if child.tag == _TC:
                cells.append(child)  # a horizontally merged cell is one w:tc with a gridSpan: read once
            elif child.tag in (_SDT, _CUSTOM_XML):
                cells.extend(c for c in child.iter(_TC))
        return cells

    # -- notes
    def notes(self, zf: zipfile.ZipFile, part: str, kind: str, path: Path) -> None:
        try:
            data = zf.read(part)
        except KeyError:
            return
        try:
            root = etree.fromstring(data, parser=_xml_parser())
        except etree.XMLSyntaxError:
            self.warnings.append(f"the {kind}s could not be read (word/{kind}s.xml is damaged)")
            return
        for note in root.iterchildren(qn(f"w:{kind}")):
            if note.get(qn("w:type")) in ("separator", "continuationSeparator", "continuationNotice"):
                continue
            parts = [_Paragraph(p, self.styles, False).text for p in note.iter(_P)]
            text = " ".join(t for t in parts if t)
            if text:
                ref = self.note_refs.get((kind, note.get(qn("w:id"), "")))
                self.blocks.append(Block(text=text, kind="footnote", location=Location(self.file, paragraph=ref)))


def _xml_parser() -> etree.XMLParser:
    return etree.XMLParser(resolve_entities=False, no_network=True, huge_tree=False, remove_comments=True)


def sniff(head: bytes, path: Path) -> str | None:
    if head.startswith(b"PK\x03\x04"):
        return None
    if head.startswith(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"):
        return ("not a DOCX (it is an old-style Word .doc file or a password-protected document; "
                "save it as .docx without a password)")
    if head.startswith(b"{\\rtf"):
        return "not a DOCX (it is an RTF file; save it as .docx)"
    if head.startswith(b"%PDF"):
        return "not a DOCX (it is a PDF; rename it to .pdf)"
    return "not a DOCX (a .docx file is a zip archive, and this one does not start like one)"


_DAMAGED = (zipfile.BadZipFile, zipfile.LargeZipFile, zlib.error, EOFError, OSError, KeyError)


def _open_zip(path: Path, data: bytes, limits: Limits) -> zipfile.ZipFile:
    try:
        zf = zipfile.ZipFile(io.BytesIO(data))
        infos = zf.infolist()
    except _DAMAGED + (ValueError,):
        raise InputError(path, "the DOCX is damaged or truncated",
                         "open it in a word processor and save it again") from None
    names = {i.filename for i in infos}
    if "word/document.xml" not in names:
        hint = "save it as .docx"
        if "content.xml" in names:
            hint = "it looks like an OpenDocument file; save it as .docx"
        raise InputError(path, "a zip file but not a Word document", hint)
    total = sum(i.file_size for i in infos)
    if total > limits.max_inflated_bytes:
        raise InputError(
            path,
            f"the DOCX would unpack to {total / 1e6:,.0f} MB, over the limit of "
            f"{limits.max_inflated_bytes / 1e6:,.0f} MB (a damaged file or a zip bomb)",
            "raise --max-inflated-bytes if the file is genuine",
        )
    if any(i.flag_bits & 0x1 for i in infos):
        raise InputError(path, "the DOCX is encrypted", "save it again without a password")
    from .inflate import check_zip

    check_zip(path, data, infos, limits)  # what the directory declares is not trusted: inflated and counted
    return zf


def read(path: Path, data: bytes, limits: Limits) -> Parsed:
    zf = _open_zip(path, data, limits)
    try:
        document = docx.Document(io.BytesIO(data))
    except ValueError as exc:
        # python-docx says so when the package is, e.g., a template or a macro-enabled file
        cause = "not a Word document python-docx can open"
        if "content type" in str(exc):
            cause = "a Word file of a kind that cannot be read (a template or a macro-enabled document?)"
        raise InputError(path, cause, "save it as a plain .docx") from None
    except etree.XMLSyntaxError as exc:
        detail = " ".join(str(exc.msg).split())  # lxml's messages may hold line breaks; ours are one line
        raise InputError(path, f"the DOCX holds damaged XML ({detail})",
                         "open it in a word processor and save it again") from None
    except (OpcError, NotImplementedError, RuntimeError) + _DAMAGED:
        raise InputError(path, "the DOCX is damaged or truncated",
                         "open it in a word processor and save it again") from None
    reader = _DocxBlocks(path, document)
    body = getattr(document.element, "body", None)
    if body is None:  # the main part's root is not a w:document (a mutated or hand-made file)
        raise InputError(path, "the DOCX's main part is not a Word document body",
                         "open it in a word processor and save it again")
    reader.body(body)
    try:
        reader.notes(zf, "word/footnotes.xml", "footnote", path)
        reader.notes(zf, "word/endnotes.xml", "endnote", path)
    except _DAMAGED:
        reader.warnings.append("the footnotes could not be unpacked; the body was read")
    return Parsed(blocks=reader.blocks, warnings=reader.warnings)
