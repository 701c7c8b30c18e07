"""The one vocabulary of statuses that every format shows.

The JSON contract values (``reported``, ``partial``, ``missing``, ``not-applicable``, ``waived``) are the words;
a page or a letter writes them as words (``not applicable`` with a space) and may put a glyph beside them. The
glyphs form one neutral scale of how much was found: a full disc, a half disc, an empty circle; a dash where the
item does not apply and a diamond where it was waived. Colour is never the only signal: the word or the glyph is
always there too.
"""

from __future__ import annotations

from ..core.status import GAPS_FIRST

#: contract value -> the word shown in every format
WORDS = {
    "reported": "reported",
    "partial": "partial",
    "missing": "missing",
    "not-applicable": "not applicable",
    "waived": "waived",
}
#: contract value -> a glyph for tight places (a matrix cell, a form column); always explained by a legend
GLYPHS = {
    "reported": "●",
    "partial": "◐",
    "missing": "○",
    "not-applicable": "–",
    "waived": "◇",
}
#: what each status means, for legends and help
MEANINGS = {
    "reported": "every part of the item was found",
    "partial": "some parts were found, others not",
    "missing": "nothing was found for the item",
    "not-applicable": "the item does not apply to this document",
    "waived": "the item was waived in the settings, with a reason",
}


def word(status: str) -> str:
    """The status as a word ("not applicable"); an unknown value is shown as it is."""
    return WORDS.get(status, status)


def heading(status: str) -> str:
    """The status as a heading word ("Not applicable")."""
    w = word(status)
    return w[:1].upper() + w[1:]


def glyph(status: str) -> str:
    return GLYPHS.get(status, "?")


def status_checkboxes() -> list[str]:
    """The status filter of both pages: one ticked box per status, gaps first, glyph and heading word."""
    return [f'<label><input type="checkbox" checked data-status="{s}"> {GLYPHS[s]} {heading(s)}</label>'
            for s in GAPS_FIRST]
