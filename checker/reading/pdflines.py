"""The compact record of a laid-out PDF page that both layout paths build (pdfminer.six in checker.reading.pdf,
PDFium in checker.reading.pdfium_layout) and everything after them reads: its text lines (Piece), horizontal
rules and image count, and the text clean-up both paths apply to a line."""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass
from functools import lru_cache


@dataclass(frozen=True)
class Piece:
    """One run of text on one baseline, as pdfminer grouped it (a line, or part of one)."""

    text: str
    x0: float
    x1: float
    y0: float
    y1: float
    size: float
    bold: float  # share of letters set in a bold font
    bold_prefix: str  # a leading bold run followed by non-bold text ("Abstract."), else ""
    ends_soft: bool  # the line ended with a soft hyphen
    chars: int

    @property
    def cy(self) -> float:
        return (self.y0 + self.y1) / 2


@dataclass(frozen=True)
class Page:
    number: int
    width: float
    height: float
    pieces: tuple[Piece, ...]
    rules: tuple[tuple[float, float, float], ...]  # horizontal strokes: (y, x0, x1)
    images: int
    undecoded: int  # glyphs without a character map, (cid:N) in pdfminer's output


_CID = re.compile(r"\(cid:\d+\)")
_LONE_CID = re.compile(r"^\s*\(cid:\d+\)\s*$")
_LEADING_CID = re.compile(r"^\s*\(cid:\d+\)\s+(?=\S)")
_HYPHENS = str.maketrans({"\u2010": "-", "\u2011": "-", "\u00ad": None, "\u200b": None, "\ufeff": None})
_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f]")
_BOLD_FONT = re.compile(r"bold|black|heavy|semibold|demi|[-,_]medi(um)?\b|[-,_]medi$|cmbx|cmb\d|\bbd\b|[-,]b$",
                        re.IGNORECASE)


def clean(text: str) -> str:
    """NFKC (ligatures, compatibility forms), soft hyphens out, one space between words."""
    if "(cid:" in text:
        text = _CID.sub("", text)
    if not text.isascii():  # ASCII is its own NFKC form and holds none of the hyphens
        text = unicodedata.normalize("NFKC", text).translate(_HYPHENS)
    # split() and join: what re.sub(r"\s+", " ", ...).strip() gives, at a fraction of the cost
    return " ".join(_CONTROL.sub(" ", text).split())


@lru_cache(maxsize=1024)
def is_bold(fontname: str) -> bool:
    return bool(_BOLD_FONT.search(fontname.split("+", 1)[-1]))


def mark_undecoded(raw: str) -> tuple[str, int]:
    """A line's text with its glyphs without a character map, written (cid:N), settled: one standing alone at
    the start of the line is a bullet in practice; the others are counted (clean drops them)."""
    if "(cid:" not in raw:
        return raw, 0
    raw = "•" if _LONE_CID.match(raw) else _LEADING_CID.sub("• ", raw, count=1)
    return raw, len(_CID.findall(raw))
