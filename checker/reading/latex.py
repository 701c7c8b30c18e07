"""LaTeX reader (pylatexenc): the prose of a manuscript and the files it includes, each line where it is typed.

Included files are read only from inside the main file's folder, each at most once on any chain of includes.
Markup becomes plain text: macros give their text arguments, math its symbols, citations and labels go.
"""

from __future__ import annotations

import bisect
import logging
import os
import re
import threading
from contextlib import contextmanager
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Iterator

from pylatexenc import latexwalker
from pylatexenc.latex2text import LatexNodes2Text
from pylatexenc.latexwalker import (
    LatexCharsNode,
    LatexCommentNode,
    LatexEnvironmentNode,
    LatexGroupNode,
    LatexMacroNode,
    LatexMathNode,
    LatexSpecialsNode,
)
from pylatexenc.macrospec import EnvironmentSpec, MacroSpec

from .document import Block, BlockKind, Location
from ..core.limits import Limits
from . import Parsed
from .html import url_note
from .text import LineText, decode_bytes, sniff_text_like

FORMAT = "latex"
SUFFIXES = (".tex", ".latex", ".rnw", ".snw")

#: a Sweave or knitr code chunk: "<<label, echo=FALSE>>=" up to a line holding only "@"
_CHUNK = re.compile(r"^[ \t]*<<[^\n]*>>=[ \t]*$.*?(?:^[ \t]*@[ \t]*$|\Z)", re.M | re.S)

#: sectioning commands by depth; levels are counted from the shallowest one a document uses
_SECTIONS = {"part": -1, "chapter": 0, "section": 1, "subsection": 2, "subsubsection": 3, "paragraph": 4,
             "subparagraph": 5}
_TOP = None  # rank of headings that stand at the top whatever the document's outline (Abstract, References)

_INCLUDES = {"input": False, "include": False, "subfile": False, "import": False, "subimport": True,
             "InputIfFileExists": False}

_EXTRA_MACROS = {
    "title": "[{", "part": "*[{", "chapter": "*[{", "section": "*[{", "subsection": "*[{",
    "subsubsection": "*[{", "paragraph": "*[{", "subparagraph": "*[{", "caption": "*[{", "captionof": "*{[{",
    "subcaption": "[{", "href": "[{{", "hyperref": "[{",
    "subfile": "{", "import": "{{", "subimport": "*{{", "InputIfFileExists": "{{{", "bibitem": "[{",
    "multicolumn": "{{{", "multirow": "[{[{", "makecell": "[{", "footnotetext": "[{", "thanks": "{",
    "affil": "[{", "affiliation": "[{", "institute": "{", "address": "{", "email": "{", "keywords": "{",
    "orcid": "{", "cref": "*{", "Cref": "*{", "autoref": "*{", "eqref": "{", "nameref": "*{", "vref": "*{",
    "citep": "*[[{", "citet": "*[[{", "citealp": "*[[{", "citeauthor": "*[[{", "citeyear": "*[[{",
    "parencite": "*[[{", "textcite": "*[[{", "autocite": "*[[{", "footcite": "*[[{", "supercite": "{",
    "includegraphics": "*[[{", "vspace": "*{", "hspace": "*{", "setlength": "{{", "addtolength": "{{",
    "setcounter": "{{", "addtocounter": "{{", "newcommand": "*{[[{", "renewcommand": "*{[[{",
    "providecommand": "*{[[{", "newenvironment": "*{[[{{", "renewenvironment": "*{[[{{",
    "DeclareMathOperator": "*{{", "newtheorem": "*{[{[", "usepackage": "[{[", "RequirePackage": "[{[",
    "documentclass": "[{[", "bibliographystyle": "{", "bibliography": "{", "addbibresource": "[{",
    "printbibliography": "[", "texorpdfstring": "{{", "textcolor": "[{{", "colorbox": "[{{",
    "fcolorbox": "[{{{", "color": "[{", "definecolor": "{{{", "resizebox": "*{{{", "scalebox": "{[{",
    "rotatebox": "[{{", "SI": "[{[{", "qty": "[{{", "si": "[{", "num": "[{", "unit": "[{", "ang": "[{",
    "SIrange": "[{{{", "numrange": "[{{", "qtyrange": "[{{{", "pagestyle": "{", "thispagestyle": "{",
    "graphicspath": "{", "hypersetup": "{", "lstset": "{", "geometry": "{", "includeonly": "{", "todo": "[{",
    "ac": "*[{", "acf": "*[{", "acs": "*[{", "acl": "*[{", "acp": "*[{", "acrshort": "[{", "acrlong": "[{",
    "gls": "[{", "Gls": "[{", "newacronym": "[{{{", "url": "{", "nolinkurl": "{", "footnote": "[{",
}
_EXTRA_ENVIRONMENTS = {
    "minipage": "[[[{", "tabularx": "{{", "tabular*": "{[{", "tabulary": "{{", "longtable": "[{",
    "longtable*": "[{", "tabular": "[{", "array": "[{", "tblr": "[{", "wrapfigure": "[{[{", "wraptable": "[{[{",
    "subfigure": "[{", "subtable": "[{", "thebibliography": "{", "multicols": "{", "multicols*": "{",
    "adjustbox": "{", "figure": "[", "figure*": "[", "table": "[", "table*": "[",
}

_DROP = frozenset("""label ref cref Cref autoref eqref pageref nameref vref cite citep citet citealp citeauthor
    citeyear parencite textcite autocite footcite supercite nocite includegraphics vspace hspace setlength
    addtolength setcounter addtocounter newcommand renewcommand providecommand newenvironment renewenvironment
    DeclareMathOperator newtheorem usepackage RequirePackage documentclass bibliographystyle addbibresource
    pagestyle thispagestyle graphicspath hypersetup lstset geometry definecolor color includeonly todo author
    date affil affiliation institute address email orcid tableofcontents listoffigures listoftables newacronym
    hline cline toprule midrule bottomrule cmidrule addlinespace rowcolor cellcolor def let""".split())
_CITES_AND_REFS = frozenset(m for m in _DROP if "cite" in m or "ref" in m)
_TABLES = frozenset("tabular tabular* tabularx tabulary longtable longtable* array tblr supertabular".split())
_LISTS = frozenset("itemize enumerate description compactitem compactenum inparaenum asparaenum list".split())
_FLOATS = frozenset("figure figure* table table* wrapfigure wraptable subfigure subtable sidewaystable "
                    "sidewaysfigure threeparttable".split())
_MATH = frozenset("equation equation* align align* gather gather* multline multline* eqnarray eqnarray* "
                  "displaymath math flalign flalign* alignat alignat* dmath dmath* split cases".split())
_SKIP_ENVS = frozenset("verbatim verbatim* Verbatim lstlisting minted comment filecontents filecontents* "
                       "tikzpicture pgfpicture forest algorithmic algorithm2e algorithm lstinline".split())
_ACKNOWLEDGEMENTS = frozenset("acknowledgments acknowledgements acks".split())
_ACCENTS = frozenset(list("'`^\"~=.") + "c v u H k r d b t ss o O l L ae AE oe OE aa AA i j".split())
_SI_UNITS = {
    "milli": "m", "centi": "c", "micro": "µ", "kilo": "k", "nano": "n", "mega": "M", "giga": "G",
    "metre": "m", "meter": "m", "second": "s", "gram": "g", "litre": "L", "liter": "L", "percent": "%",
    "degree": "°", "hertz": "Hz", "tesla": "T", "minute": "min", "hour": "h", "day": "d", "volt": "V",
    "watt": "W", "kelvin": "K", "celsius": "°C", "degreeCelsius": "°C", "mole": "mol", "pixel": "px",
    "per": "/", "square": "", "squared": "²", "cubic": "", "cubed": "³", "byte": "B", "bit": "bit",
    "mm": "mm", "cm": "cm", "um": "µm", "ms": "ms", "kg": "kg", "mg": "mg", "ml": "mL",
}

_PARAGRAPH_BREAK = re.compile(r"\n[ \t]*\n\s*")
_MAX_FILES = 500
_MAX_DEPTH = 40


@lru_cache(maxsize=1)
def _context() -> latexwalker.LatexContextDb:
    db = latexwalker.get_default_latex_context_db()
    db.add_context_category(
        "studygap",
        prepend=True,
        macros=[MacroSpec(name, spec) for name, spec in _EXTRA_MACROS.items()],
        environments=[EnvironmentSpec(name, spec) for name, spec in _EXTRA_ENVIRONMENTS.items()],
    )
    # pylatexenc asks at every character whether a special ('~', '&', '``', ...) starts there, trying each one;
    # most characters start none, and a set lookup says so at a fraction of the cost (same answers)
    starts = frozenset(spec.specials_chars[0] for spec in db.iter_specials_specs() if spec.specials_chars)
    general = db.test_for_specials

    def test_for_specials(s: str, pos: int, parsing_state: object = None) -> object:
        if pos >= len(s) or s[pos] not in starts:
            return None
        return general(s, pos, parsing_state=parsing_state)

    db.test_for_specials = test_for_specials  # type: ignore[method-assign]
    return db


@lru_cache(maxsize=1)
def _to_text() -> LatexNodes2Text:
    return LatexNodes2Text(math_mode="text", keep_comments=False, strict_latex_spaces=False)


class _TooTangled(Exception):
    """pylatexenc read the same text over and over; raised from inside it to stop it."""


class _Budget(threading.local):
    remaining = -1  # tokens pylatexenc may still read; negative: no budget set


_BUDGET = _Budget()


@contextmanager
def _budget(n: int) -> Iterator[None]:
    saved = _BUDGET.remaining
    _BUDGET.remaining = n
    try:
        yield
    finally:
        _BUDGET.remaining = saved


class _Walker(latexwalker.LatexWalker):
    """pylatexenc's walker, counting the tokens it reads against the budget."""

    def get_token(self, *args: object, **kwargs: object) -> object:
        budget = _BUDGET
        if budget.remaining >= 0:
            budget.remaining -= 1
            if budget.remaining < 0:
                raise _TooTangled
        return super().get_token(*args, **kwargs)


def _strip_markup(text: str) -> str:
    text = re.sub(r"(?<!\\)%[^\n]*", "", text)
    text = re.sub(r"\\(?:begin|end)\{[^}]*\}|\\[A-Za-z]+\*?|\\.", " ", text)
    return re.sub(r"[{}$&~^_]", " ", text)


def _plain(nodes: list[object]) -> str:
    """pylatexenc's plain text for nodes, or '' where its converter trips over malformed input."""
    try:
        return _to_text().nodelist_to_text(nodes)
    except Exception:  # its macro handlers assume well-formed arguments and may raise anything
        return ""


class _ParserNotes(logging.Filter):
    """Collects what pylatexenc says about malformed input instead of letting it reach the user's log."""

    def __init__(self) -> None:
        super().__init__()
        self.messages: list[str] = []

    def filter(self, record: logging.LogRecord) -> bool:
        self.messages.append(record.getMessage())
        return False


@contextmanager
def _quiet_parser(name: str = "pylatexenc.latexwalker") -> Iterator[_ParserNotes]:
    logger = logging.getLogger(name)
    notes = _ParserNotes()
    level = logger.level
    logger.addFilter(notes)
    logger.setLevel(logging.INFO)
    try:
        yield notes
    finally:
        logger.removeFilter(notes)
        logger.setLevel(level)


_SCAN = re.compile(
    r"\\begin\{(verbatim\*?|Verbatim|lstlisting|minted|comment|filecontents\*?)\}.*?(?:\\end\{\1\}|\Z)"
    r"|\\verb\*?([^\sa-zA-Z*]).*?(?:\2|$)"
    r"|\\[^\n]|%[^\n]*|[{}$]|\n[ \t]*\n|\n",
    re.DOTALL | re.MULTILINE,
)


def repair_braces(text: str) -> tuple[str, list[tuple[int, str]]]:
    """Close groups and inline math left open at a paragraph end, blank stray '}'; with what was wrong, by line.

    LaTeX itself stops at such a paragraph end ("Runaway argument"); reading on from there keeps one typo from
    swallowing the rest of the document. Line numbers are unchanged.
    """
    problems: list[tuple[int, str]] = []
    inserts: list[tuple[int, str]] = []
    strays: list[int] = []
    opened: list[int] = []
    headed: list[bool] = []  # per open '{': is it a heading's argument (which ends with its line)?
    math_open = -1

    def close_at(pos: int) -> None:
        nonlocal math_open
        add = ""
        if math_open >= 0:
            add += "$"
            problems.append((text.count("\n", 0, math_open) + 1, "a '$' is not closed before the paragraph ends"))
            math_open = -1
        if opened:
            problems.append((text.count("\n", 0, opened[0]) + 1,
                             "a '{' is not closed before the paragraph ends; read as if it were"))
            add += "}" * len(opened)
            opened.clear()
            headed.clear()
        if add:
            inserts.append((pos, add))

    for m in _SCAN.finditer(text):
        tok = m.group(0)
        if tok == "{":
            opened.append(m.start())
            headed.append(bool(_HEADING_BEFORE.search(text, max(0, m.start() - 40), m.start())))
        elif tok == "}":
            if opened:
                opened.pop()
                headed.pop()
            else:
                strays.append(m.start())
                problems.append((text.count("\n", 0, m.start()) + 1, "a '}' closes nothing; ignored"))
        elif tok == "$":
            math_open = -1 if math_open >= 0 else m.start()
        elif tok == "\n":
            if headed and headed[-1]:
                problems.append((text.count("\n", 0, opened[-1]) + 1,
                                 "a heading's '{' is not closed on its line; read as if it were"))
                inserts.append((m.start(), "}"))
                opened.pop()
                headed.pop()
        elif tok.startswith("\n"):
            close_at(m.start())
    close_at(len(text))
    if not inserts and not strays:
        return text, problems
    chars = list(text)
    for pos in strays:
        chars[pos] = " "
    for pos, add in reversed(inserts):
        chars.insert(pos, add)
    return "".join(chars), problems


_HEADING_BEFORE = re.compile(
    r"\\(?:part|chapter|(?:sub){0,2}section|(?:sub)?paragraph|caption|title)\*?\s*(?:\[[^\]]*\])?\s*$"
)


@dataclass
class _Source:
    display: str  # the path as shown to users (relative to how the main file was named)
    real: Path  # resolved
    text: str
    starts: list[int]
    first_line: int = 1  # the file line where ``text`` starts (a piece parsed on its own)

    @classmethod
    def of(cls, display: str, real: Path, text: str, first_line: int = 1) -> _Source:
        starts = [0] + [m.end() for m in re.finditer("\n", text)]
        return cls(display, real, text, starts, first_line)

    def line(self, pos: int | None) -> int:
        return bisect.bisect_right(self.starts, pos or 0) + self.first_line - 1


def _last_arg(node: LatexMacroNode | LatexEnvironmentNode) -> object | None:
    args = [a for a in (node.nodeargd.argnlist if node.nodeargd else ()) if a is not None]
    groups = [a for a in args if isinstance(a, LatexGroupNode) and a.delimiters and a.delimiters[0] == "{"]
    return groups[-1] if groups else None


def _args(node: LatexMacroNode) -> list[object]:
    return [a for a in (node.nodeargd.argnlist if node.nodeargd else ()) if a is not None]


def _raw(node: object) -> str:
    if node is None:
        return ""
    if isinstance(node, LatexGroupNode):
        return "".join(_raw(n) for n in node.nodelist)
    return node.latex_verbatim()  # type: ignore[attr-defined]


class _LatexReader:
    def __init__(self, path: Path, limits: Limits) -> None:
        self.main = path
        self.root = path.parent.resolve()
        self.limits = limits
        self.blocks: list[Block] = []
        self.ranks: list[int | None] = []  # per heading block index
        self.heading_index: list[int] = []
        self.warnings: list[str] = []
        self.active: list[Path] = []  # files on the current include chain
        self.files = 0
        self.bytes = 0
        self.tables = 0
        self.cur: LineText | None = None
        self.cur_kind: BlockKind = "paragraph"
        self.cur_file = ""
        self.inline_depth = 0
        self.notes: list[Block] = []
        self.list_depth = 0
        self.title: tuple[str, int, str] | None = None  # text, line, file: waiting for the body to start
        self.defs: dict[str, str] = {}  # macros defined without arguments -> their text

    # -- output
    def start(self, kind: BlockKind, src: _Source) -> None:
        self.flush()
        self.cur = LineText()
        self.cur_kind = kind
        self.cur_file = src.display

    def flush(self) -> None:
        if self.inline_depth:
            return
        cur = self.cur
        if cur:
            self.blocks.append(cur.block(self.cur_kind, Location(self.cur_file)))
        self.cur = None
        self.cur_kind = "list-item" if self.list_depth else "paragraph"
        if self.notes:
            self.blocks.extend(self.notes)
            self.notes = []

    def builder(self, src: _Source) -> LineText:
        if self.cur is None or self.cur_file != src.display:
            kind = self.cur_kind
            self.flush()
            self.cur = LineText()
            self.cur_kind = kind
            self.cur_file = src.display
        return self.cur

    def add(self, text: str, pos: int | None, src: _Source) -> None:
        if text:
            self.builder(src).add(text, src.line(pos))

    def heading(self, text: str, line: int, src: _Source, rank: int | None) -> None:
        self.flush()
        text = " ".join(text.split())
        if not text:
            return
        self.heading_index.append(len(self.blocks))
        self.ranks.append(rank)
        self.blocks.append(Block(text=text, kind="heading", location=Location(src.display, line=line), level=1))

    def text_of(self, node: object, src: _Source) -> LineText:
        """The text of one argument, read on its own (headings, captions, footnotes)."""
        saved = (self.cur, self.cur_kind, self.cur_file)
        self.cur = LineText()
        self.cur_file = src.display
        self.inline_depth += 1
        try:
            if node is not None:
                self.walk([node], src)
            return self.cur
        finally:
            self.inline_depth -= 1
            self.cur, self.cur_kind, self.cur_file = saved

    def emit_title(self) -> None:
        if self.title:
            text, line, file = self.title
            self.title = None
            self.heading_index.append(len(self.blocks))
            self.ranks.append(_TOP)
            self.blocks.append(Block(text=text, kind="heading", location=Location(file, line=line), level=1))

    # -- files
    def read_main(self, text: str) -> None:
        real = self.main.resolve()
        self.active.append(real)
        self.files = 1
        self.read_source(_Source.of(str(self.main), real, text), top=True)
        self.active.pop()

    def read_source(self, src: _Source, top: bool = False) -> None:
        text, problems = repair_braces(src.text)
        if text is not src.text:
            src = _Source.of(src.display, src.real, text)
        for line, message in problems[:5]:
            self.warnings.append(f"{src.display}: line {line}: {message}")
        if len(problems) > 5:
            self.warnings.append(f"{src.display}: {len(problems) - 5} more brace problems")
        try:
            nodes = self.parse(src)
        except _TooTangled:
            self.warnings.append(f"{src.display}: the LaTeX is too tangled to parse as a whole "
                                 "(environments or groups left open?); read paragraph by paragraph")
            self.read_by_paragraph(src)
            return
        has_document = top and any(
            isinstance(n, LatexEnvironmentNode) and n.environmentname == "document" for n in nodes
        )
        if has_document:
            for n in nodes:
                if isinstance(n, LatexEnvironmentNode) and n.environmentname == "document":
                    self.emit_title()  # \maketitle would place it here too; without one it still heads the text
                    self.walk(n.nodelist, src)
                elif isinstance(n, LatexMacroNode) and n.macroname == "title":
                    self.set_title(n, src)
                elif isinstance(n, LatexMacroNode) and n.macroname in ("newcommand", "renewcommand",
                                                                       "providecommand"):
                    self.define(n)
        else:
            self.walk(nodes, src)
        self.flush()

    def parse(self, src: _Source, slack: int = 3_000) -> list[object]:
        """pylatexenc's nodes for the source, within a budget: its tolerant mode can backtrack without end."""
        with _quiet_parser() as notes, _budget(3 * len(src.text) + slack):
            walker = _Walker(src.text, latex_context=_context(), tolerant_parsing=True)
            try:
                nodes, _, _ = walker.get_latex_nodes()
            except latexwalker.LatexWalkerError as exc:  # tolerant parsing should not raise; be sure anyway
                self.warnings.append(f"{src.display}: line {src.first_line}: could not be parsed ({exc}); skipped")
                return []
        for message in notes.messages[:3]:
            self.warnings.append(f"{src.display}: LaTeX problem read past: {_short_parser_message(message, src)}")
        return nodes

    def read_by_paragraph(self, src: _Source) -> None:
        text = src.text
        start = 0
        pieces = [m.end() for m in _PARAGRAPH_BREAK.finditer(text)] + [len(text)]
        for end in pieces:
            piece = _Source.of(src.display, src.real, text[start:end], src.line(start))
            try:
                nodes = self.parse(piece, slack=300)
            except _TooTangled:
                self.warnings.append(f"{src.display}: line {piece.first_line}: read as plain text, markup removed")
                nodes = []
                self.flush()
                self.add(_strip_markup(piece.text), 0, piece)
            self.walk(nodes, piece)
            self.flush()
            start = end

    def define(self, node: LatexMacroNode) -> None:
        """Remember what a macro without arguments stands for (\\newcommand{\\ncases}{300})."""
        args = node.nodeargd.argnlist if node.nodeargd else []
        if len(args) < 5 or args[2] is not None or args[1] is None or args[4] is None:
            return
        name = _raw(args[1]).strip().lstrip("\\")
        if not re.fullmatch(r"[A-Za-z]+", name):
            return
        body = args[4].nodelist if isinstance(args[4], LatexGroupNode) else [args[4]]
        self.defs[name] = " ".join(_plain(body).split())

    def set_title(self, node: LatexMacroNode, src: _Source) -> None:
        text = " ".join(self.text_of(_last_arg(node), src).build()[0].split())
        if text:
            self.title = (text, src.line(node.pos), src.display)

    def include(self, node: LatexMacroNode, src: _Source) -> None:
        name = node.macroname
        args = _args(node)
        groups = [a for a in args if isinstance(a, LatexGroupNode)]
        if not groups:
            return
        if name in ("import", "subimport") and len(groups) >= 2:
            target = _raw(groups[0]).strip() + "/" + _raw(groups[1]).strip()
        else:
            target = _raw(groups[0]).strip()
        line = src.line(node.pos)
        shown = target if len(target) <= 80 else target[:77] + "..."
        where = f"{src.display}: line {line}: \\{name}{{{shown}}}"
        if not target:
            return
        self.flush()
        base = src.real.parent if _INCLUDES.get(name) else self.root
        candidate = base / target
        options = [candidate] if candidate.suffix == ".tex" else [Path(f"{candidate}.tex"), candidate]
        found: Path | None = None
        outside = False
        for option in options:
            try:
                resolved = option.resolve()
                if not resolved.is_relative_to(self.root):
                    outside = True
                    continue
                if resolved.is_file():
                    found = resolved
                    break
            except (OSError, RuntimeError, ValueError):  # a name too long, with a NUL, or a symlink loop
                continue
        if found is None:
            if outside:
                self.warnings.append(f"{where} points outside the document's folder; not read")
            else:
                self.warnings.append(f"{where}: no such file ({options[0].name}); skipped")
            return
        if found in self.active:
            chain = " -> ".join(p.name for p in self.active + [found])
            self.warnings.append(f"{where} would include a file already being read ({chain}); skipped the repeat")
            return
        if len(self.active) >= _MAX_DEPTH or self.files >= _MAX_FILES:
            self.warnings.append(f"{where}: too many or too deeply nested includes; skipped")
            return
        try:
            data = found.read_bytes()
        except OSError as exc:
            self.warnings.append(f"{where}: cannot be read ({exc.strerror or exc}); skipped")
            return
        self.bytes += len(data)
        if self.bytes > self.limits.max_bytes:
            self.warnings.append(f"{where}: the included files pass the size limit; skipped")
            return
        text, problems = decode_bytes(data)
        display = os.path.normpath(os.path.join(str(self.main.parent), os.path.relpath(found, self.root)))
        for p in problems:
            self.warnings.append(f"{display}: {p}")
        self.files += 1
        self.active.append(found)
        try:
            self.read_source(_Source.of(display, found, text))
        finally:
            self.active.pop()

    # -- the walk
    def walk(self, nodes: list[object], src: _Source) -> None:
        for node in nodes:
            if node is None or isinstance(node, LatexCommentNode):
                continue
            if isinstance(node, LatexCharsNode):
                self.chars(node, src)
            elif isinstance(node, LatexGroupNode):
                self.walk(node.nodelist, src)
            elif isinstance(node, LatexMathNode):
                self.math(node.nodelist, node.pos, src)
            elif isinstance(node, LatexSpecialsNode):
                self.specials(node, src)
            elif isinstance(node, LatexMacroNode):
                self.macro(node, src)
            elif isinstance(node, LatexEnvironmentNode):
                self.environment(node, src)

    def chars(self, node: LatexCharsNode, src: _Source) -> None:
        text = node.chars
        pos = node.pos
        last = 0
        for m in _PARAGRAPH_BREAK.finditer(text):
            self.add(text[last:m.start()], pos + last, src)
            if self.inline_depth:
                if self.cur is not None:
                    self.cur.space(line_break=True)
            else:
                self.flush()
            last = m.end()
        self.add(text[last:], pos + last, src)

    def math(self, nodes: list[object], pos: int | None, src: _Source) -> None:
        text = " ".join(_plain(nodes).split())
        if text:
            b = self.builder(src)
            b.add(text, src.line(pos))

    def specials(self, node: LatexSpecialsNode, src: _Source) -> None:
        chars = node.specials_chars
        if chars in ("~", "&"):
            if self.cur is not None:
                self.cur.space()
            return
        self.add(_plain([node]), node.pos, src)

    def macro(self, node: LatexMacroNode, src: _Source) -> None:
        name = node.macroname
        if name in _SECTIONS:
            self.heading(self.text_of(_last_arg(node), src).build()[0], src.line(node.pos), src, _SECTIONS[name])
        elif name in _INCLUDES:
            self.include(node, src)
        elif name == "title":
            self.set_title(node, src)
            if not self.inline_depth:
                self.emit_title()
        elif name == "maketitle":
            self.emit_title()
        elif name in _CITES_AND_REFS:
            if self.cur is not None:
                self.cur.no_space()  # "results \cite{x}." reads "results."
        elif name in ("newcommand", "renewcommand", "providecommand"):
            self.define(node)
        elif name in _DROP:
            return
        elif name in ("footnote", "footnotetext", "thanks"):
            b = self.text_of(_last_arg(node), src)
            if b:
                self.notes.append(b.block("footnote", Location(src.display, line=src.line(node.pos))))
        elif name in ("caption", "captionof", "subcaption"):
            b = self.text_of(_last_arg(node), src)
            if b and not self.inline_depth:
                self.flush()
                self.blocks.append(b.block("caption", Location(src.display, line=src.line(node.pos))))
        elif name in ("bibliography", "printbibliography"):
            self.heading("References", src.line(node.pos), src, _TOP)
        elif name == "item":
            if not self.inline_depth:
                self.start("list-item" if self.list_depth else "paragraph", src)
            label = node.nodeargd.argnlist[0] if node.nodeargd and node.nodeargd.argnlist else None
            if label is not None:
                self.walk([label], src)
                self.builder(src).add(":", src.line(node.pos))
        elif name == "bibitem":
            if not self.inline_depth:
                self.start("paragraph", src)
        elif name == "par":
            self.flush()
        elif name in ("\\", "newline", "linebreak", "tabularnewline", "break"):
            if self.cur is not None:
                self.cur.space(line_break=True)
        elif name in ("href",):
            groups = [a for a in _args(node) if isinstance(a, LatexGroupNode)]
            if len(groups) >= 2:
                b = self.builder(src)
                start = b.mark_position()
                self.walk([groups[-1]], src)
                note = url_note(self.builder(src).text_since(start), _raw(groups[0]))
                if note:
                    self.builder(src).add(note, None)
        elif name in ("url", "nolinkurl"):
            self.add(_raw(_last_arg(node)).strip(), node.pos, src)
        elif name == "texorpdfstring":
            groups = [a for a in _args(node) if isinstance(a, LatexGroupNode)]
            if groups:
                self.walk([groups[0]], src)
        elif name in ("SI", "qty", "SIrange", "qtyrange", "si", "unit", "num", "numrange", "ang"):
            self.siunitx(node, src)
        elif name == "ensuremath":
            arg = _last_arg(node)
            self.math(arg.nodelist if isinstance(arg, LatexGroupNode) else [], node.pos, src)
        elif name in _ACCENTS or not _args(node):
            text = self.defs[name] if name in self.defs else _plain([node])
            if text.strip():
                self.add(text, node.pos, src)
            elif text and self.cur is not None:
                self.cur.space()  # \, \quad and friends
            if node.macro_post_space and self.cur is not None:
                self.cur.space()
        else:
            arg = _last_arg(node)
            if arg is not None:
                self.walk([arg], src)

    def siunitx(self, node: LatexMacroNode, src: _Source) -> None:
        groups = [a for a in _args(node) if isinstance(a, LatexGroupNode)]
        if not groups:
            return
        name = node.macroname
        has_unit = name in ("SI", "qty", "SIrange", "qtyrange", "si", "unit", "ang")
        numbers = groups[:-1] if has_unit and name not in ("si", "unit") else groups
        if name in ("si", "unit"):
            numbers = []
        unit = _si_unit(_raw(groups[-1])) if has_unit and name != "ang" else ""
        values = [" ".join(_plain(g.nodelist).split()) for g in numbers]
        text = " to ".join(values)
        if name == "ang":
            text += "°"
        elif unit:
            text = f"{text} {unit}".strip() if unit != "%" else f"{text}%"
        self.add(text, node.pos, src)

    def environment(self, node: LatexEnvironmentNode, src: _Source) -> None:
        name = node.environmentname
        if name in _MATH:
            first = next((n for n in node.nodelist if not (isinstance(n, LatexCharsNode) and not n.chars.strip())),
                         node)
            self.math(node.nodelist, first.pos, src)
            return
        if name in _SKIP_ENVS:
            return
        if self.inline_depth:
            self.walk(node.nodelist, src)
            return
        self.flush()
        if name == "document":
            self.emit_title()
            self.walk(node.nodelist, src)
        elif name == "abstract":
            self.heading("Abstract", src.line(node.pos), src, _TOP)
            self.walk(node.nodelist, src)
        elif name in _ACKNOWLEDGEMENTS:
            self.heading("Acknowledgements", src.line(node.pos), src, _TOP)
            self.walk(node.nodelist, src)
        elif name == "thebibliography":
            self.heading("References", src.line(node.pos), src, _TOP)
            self.walk(node.nodelist, src)
        elif name in _LISTS:
            self.list_depth += 1
            try:
                self.walk(node.nodelist, src)
                self.flush()
            finally:
                self.list_depth -= 1
        elif name in _TABLES:
            self.table(node, src)
        else:
            self.walk(node.nodelist, src)
        self.flush()

    def table(self, node: LatexEnvironmentNode, src: _Source) -> None:
        self.tables += 1
        number = self.tables
        rows: list[list[LineText]] = [[]]
        cell = LineText()

        def end_cell() -> None:
            nonlocal cell
            rows[-1].append(cell)
            cell = LineText()

        self.inline_depth += 1
        saved = (self.cur, self.cur_kind, self.cur_file)
        try:
            for child in node.nodelist:
                if isinstance(child, LatexSpecialsNode) and child.specials_chars == "&":
                    end_cell()
                    continue
                if isinstance(child, LatexMacroNode) and child.macroname in ("\\", "tabularnewline"):
                    end_cell()
                    rows.append([])
                    continue
                self.cur, self.cur_file = cell, src.display
                self.walk([child], src)
                cell = self.cur
        finally:
            self.inline_depth -= 1
            self.cur, self.cur_kind, self.cur_file = saved
        end_cell()
        r = 0
        for row in rows:
            if not any(row):
                continue
            r += 1
            b = LineText()
            for c in row:
                if not c:
                    continue
                b.next_cell()
                b.extend(c)
            self.blocks.append(b.block("table-row", Location(src.display, table=number, row=r)))
        self.flush()

    # -- levels
    def finish(self) -> list[Block]:
        self.flush()
        ranks = [r for r in self.ranks if r is not None]
        top = min(ranks) if ranks else 1
        blocks = list(self.blocks)
        for index, rank in zip(self.heading_index, self.ranks):
            level = 1 if rank is None else rank - top + 1
            b = blocks[index]
            blocks[index] = Block(b.text, "heading", b.location, level=level, marks=b.marks)
        return blocks


def _si_unit(raw: str) -> str:
    """'\\milli\\metre' -> 'mm', '\\per\\second' -> '/s'; plain units stay as written."""
    out = []
    for macro, plain in re.findall(r"\\([A-Za-z]+)|([^\\\s{}]+)", raw):
        out.append(_SI_UNITS.get(macro, macro) if macro else plain)
    return "".join(out)


def _short_parser_message(message: str, src: _Source) -> str:
    m = re.search(r"@\s*\(?(\d+),\s*(\d+)\)?", message)
    text = re.sub(r"^Ignoring parse error \(tolerant parsing mode\):\s*", "", message)
    text = re.sub(r"\s*@\s*\(?\d+,\s*\d+\)?\s*$", "", text)
    text = text.split("\n")[0][:160]
    return f"line {m.group(1)}: {text}" if m else text


def sniff(head: bytes, path: Path) -> str | None:
    return sniff_text_like(head, "a LaTeX file")


def without_code_chunks(text: str) -> str:
    """A Sweave or knitr file (.Rnw) with its R code chunks blanked: the code is not the manuscript's prose. Each
    chunk keeps its lines, so that line numbers still point into the file."""
    return _CHUNK.sub(lambda m: "\n" * m.group(0).count("\n"), text)


def read(path: Path, data: bytes, limits: Limits) -> Parsed:
    text, warnings = decode_bytes(data)
    if path.suffix.lower() in (".rnw", ".snw"):
        text = without_code_chunks(text)
    reader = _LatexReader(path, limits)
    reader.warnings.extend(warnings)
    with _quiet_parser("pylatexenc.latex2text"):  # its complaints about odd macros are not the user's business
        reader.read_main(text)
    return Parsed(blocks=reader.finish(), warnings=reader.warnings)


# ---------------------------------------------------------------------------------------------- projects

_INCLUDE_TARGET = re.compile(r"(?<!\\)\\(?:input|include|subfile)\s*\{\s*([^{}]+?)\s*\}")
_COMMENT_LINE = re.compile(r"(?<!\\)%[^\n]*")
_MAX_PROJECT_FILES = 500


def main_files_for(part: Path, levels: int = 2) -> list[Path]:
    """The main files of a LaTeX project that read ``part`` through \\input, \\include or \\subfile, directly or
    through other parts: files with \\documentclass in the part's folder or up to ``levels`` folders above it
    (a main file reads its parts from its own folder down). Empty when ``part`` is itself a main file or no
    main file reads it. Paths are resolved; reading stops at 500 .tex files."""
    part = part.resolve()
    try:
        if b"\\documentclass" in part.read_bytes()[:65536]:
            return []
    except OSError:
        return []
    folders = [part.parent, *list(part.parents)[1:levels + 1]]
    found: list[Path] = []
    for folder in folders:
        try:
            candidates = sorted(folder.glob("*.tex"))
        except OSError:
            continue
        for main in candidates:
            try:
                head = main.read_bytes()[:65536]
            except OSError:
                continue
            if b"\\documentclass" in head and main not in found and part in _reached(main, folder):
                found.append(main)
        if found:
            break  # the nearest project wins
    return found


def _reached(main: Path, root: Path) -> set[Path]:
    """Every .tex file ``main`` reads, directly or through its parts, inside ``root``."""
    seen: set[Path] = set()
    todo = [main.resolve()]
    while todo and len(seen) < _MAX_PROJECT_FILES:
        current = todo.pop()
        if current in seen:
            continue
        seen.add(current)
        try:
            text = _COMMENT_LINE.sub("", current.read_text(encoding="utf-8", errors="replace"))
        except OSError:
            continue
        for m in _INCLUDE_TARGET.finditer(text):
            target = (root / m.group(1).strip())
            for option in ([target] if target.suffix == ".tex" else [Path(f"{target}.tex"), target]):
                try:
                    resolved = option.resolve()
                except (OSError, RuntimeError, ValueError):
                    continue
                if resolved.is_relative_to(root.resolve()) and resolved.is_file():
                    todo.append(resolved)
                    break
    return seen
