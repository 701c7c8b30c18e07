"""Joining a PDF block's lines is linear in the block's length: one block of 20,000 lines is joined with
hyphenated words mended, compounds kept, and every line's mark at its own line, while the regular
expressions of the PDF reader read a bounded number of characters per line (not the growing block)."""

from __future__ import annotations

import re

import pytest

from checker.reading import pdf as pdfreader

LINES = 20_000


class _Counting:
    """A regex (or the re module) that adds the length of every string it is asked to scan to ``seen``."""

    def __init__(self, target, seen: list[int]) -> None:
        self._target, self._seen = target, seen

    def __getattr__(self, name):
        attr = getattr(self._target, name)
        if name not in ("search", "match", "fullmatch", "sub", "subn", "findall", "finditer", "split"):
            return attr

        def counted(*args, **kwargs):
            # the string scanned: re.sub(pattern, repl, string), re.search(pattern, string), pattern.sub(repl,
            # string), pattern.search(string)
            at = (1 if name in ("sub", "subn") else 0) + (1 if self._target is re else 0)
            if len(args) > at and isinstance(args[at], str):
                self._seen[0] += len(args[at])
            return attr(*args, **kwargs)

        return counted


def _rows() -> list:
    rows = []
    for i in range(LINES):
        if i % 10 == 4:
            text = f"line {i} of the reference segmen-"  # broken by hyphenation; "segmentation" is spelled whole
        elif i % 10 == 5:
            text = "tation protocol and the state-of-the-"
        elif i % 10 == 6:
            text = f"art method at line {i} of the long block"
        else:
            text = f"line {i} holds a plain segmentation sentence"
        rows.append(pdfreader._Row(text=text, page=1 + i // 50, line=1 + i % 50, column=(0, 0), x0=72.0, x1=300.0,
                                   y0=700.0 - 12 * (i % 50), y1=709.0 - 12 * (i % 50), size=10.0, bold=0.0))
    return rows


@pytest.fixture(scope="module")
def joined():
    rows = _rows()
    assembler = pdfreader._Assembler("long.pdf", rows)
    seen = [0]
    patch = pytest.MonkeyPatch()
    patch.setattr(pdfreader, "re", _Counting(re, seen))
    for name, value in list(vars(pdfreader).items()):
        if isinstance(value, re.Pattern):
            patch.setattr(pdfreader, name, _Counting(value, seen))
    try:
        text, marks = assembler._text(rows)
    finally:
        patch.undo()
    return rows, text, marks, seen[0]


def test_lines_are_joined_with_hyphenation_mended_and_compounds_kept(joined):
    rows, text, marks, _ = joined
    assert text.count("segmentation protocol") == LINES // 10
    assert text.count("segmen-") == 0
    assert text.count("state-of-the-art method") == LINES // 10
    assert text.startswith("line 0 holds a plain segmentation sentence line 1 holds")
    assert len(text.split()) == sum(len(r.text.split()) for r in rows) - LINES // 10 - LINES // 10


def test_every_line_keeps_its_page_and_line(joined):
    rows, text, marks, _ = joined
    assert len(marks) == LINES
    assert [(m.page, m.line) for m in marks] == [(r.page, r.line) for r in rows]
    for k in (0, 5, 6, 777, LINES - 1):  # each mark stands where its line's text starts
        start = marks[k].offset
        assert text[start:start + len(rows[k].text)] == rows[k].text, k
    assert text[marks[5].offset - len("segmen"):marks[5].offset + 6] == "segmentation"


def test_regexes_read_a_bounded_number_of_characters_per_line(joined):
    _, text, _, scanned = joined
    # a scan of the growing block per line would read about LINES * len(text) / 2 characters (some 8e9 here)
    assert scanned <= 8 * len(text), (scanned, len(text))
