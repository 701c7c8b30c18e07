"""Review copies with line numbers printed in the margin: the numbers stay out of the text, and every
location carries the printed number a reviewer cites (checked against pdftotext's layout text where present)."""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest

from checker.reading import read_document
from checker.reports.lines import position

reportlab = pytest.importorskip("reportlab")
from reportlab.lib.pagesizes import A4  # noqa: E402
from reportlab.pdfgen import canvas  # noqa: E402

SENTENCES = [
    "The fictional Lakeside dataset holds scans from three sites.",
    "Each scan was annotated by two readers with five years of experience.",
    "Disagreements were settled by a third reader in a consensus meeting.",
    "Dice and the Hausdorff distance were computed per case.",
    "Methods were ranked by their mean rank over all cases.",
    "Missing outputs were scored as the worst possible value.",
]


def _review_copy(path, *, numbers: bool = True, both_sides: bool = False, pages: int = 2, start: int = 1) -> dict:
    """A two-page manuscript with a numbered line in the margin beside every text line; returns
    sentence -> (page, printed number of its first line)."""
    c = canvas.Canvas(str(path), pagesize=A4, invariant=1)
    where = {}
    n = start
    for page in range(1, pages + 1):
        y = 780
        c.setFont("Helvetica-Bold", 13)
        c.drawString(72, y, "2 Results" if page == 2 else "1 Data and reference")
        if numbers:
            c.setFont("Helvetica", 7)
            c.drawRightString(52, y, str(n))
            n += 1
        y -= 22
        for k in range(24):
            sentence = SENTENCES[(k + 3 * page) % len(SENTENCES)]  # pages differ line by line (no running header)
            text = f"Line {k} of page {page}: {sentence}"
            where.setdefault(sentence, (page, n))
            c.setFont("Helvetica", 10)
            c.drawString(72, y, text)
            if numbers:
                c.setFont("Helvetica", 7)
                c.drawRightString(52, y, str(n))
                if both_sides:
                    c.drawString(548, y, str(n))
                n += 1
            y -= 14
        c.showPage()
    c.save()
    return where


def test_printed_numbers_stay_out_of_the_text_and_locate_every_line(tmp_path):
    path = tmp_path / "review.pdf"
    where = _review_copy(path)
    doc = read_document(path)
    text = " ".join(b.text for b in doc.blocks)
    # no number glued to a word or standing alone between lines ("cases.27 Line")
    assert not re.search(r"[.:]\s?\d{1,3}\s+Line\b", text), text[:400]
    assert text.count("Line ") == 48
    for b in doc.blocks:
        for k, m in enumerate(b.marks):
            loc = b.location_at(m.offset)
            assert loc.printed_line is not None
            end = b.marks[k + 1].offset if k + 1 < len(b.marks) else len(b.text)
            line_text = b.text[m.offset:end]
            # the printed number of a line is the one drawn beside it: heading numbers first, then 24 per page
            page_start = 1 if loc.page == 1 else 26
            if line_text.startswith("Line "):
                k_on_page = int(line_text.split()[1])
                assert loc.printed_line == page_start + 1 + k_on_page, line_text
            assert "page {}".format(loc.page) in loc.describe() and f"line {loc.printed_line}" in loc.describe()
            assert position(loc) == loc.printed_line  # --format lines gives the printed line
    assert doc.blocks[0].location.printed_line == 1


def test_printed_numbers_agree_with_pdftotext(tmp_path):
    if shutil.which("pdftotext") is None:
        pytest.skip("pdftotext (poppler-utils) is not installed; .ci/run installs it")
    path = tmp_path / "review.pdf"
    _review_copy(path, both_sides=True, start=100)
    doc = read_document(path)
    checked = 0
    for b in doc.blocks:
        for k, m in enumerate(b.marks):
            loc = b.location_at(m.offset)
            layout = subprocess.run(["pdftotext", "-layout", "-f", str(loc.page), "-l", str(loc.page), str(path), "-"],
                                    capture_output=True, text=True, check=True).stdout
            line = next(ln for ln in layout.splitlines() if re.match(rf"\s*{loc.printed_line}\s", ln))
            first_words = " ".join(b.text[m.offset:].split()[:3])
            assert first_words in line, (first_words, line)
            checked += 1
    assert checked == 50
    assert not re.search(r"\b1\d\d\b", " ".join(b.text for b in doc.blocks))  # numbers on both margins left out


def test_a_column_of_numbers_inside_the_text_is_not_line_numbering(tmp_path):
    path = tmp_path / "table.pdf"
    c = canvas.Canvas(str(path), pagesize=A4, invariant=1)
    y = 780
    for sentence in SENTENCES * 3:  # prose above the table, at the table's left edge
        c.setFont("Helvetica", 10)
        c.drawString(72, y, sentence)
        y -= 14
    for k in range(1, 25):
        c.setFont("Helvetica", 10)
        c.drawString(72, y, str(k))  # a case number in the first column of a table
        c.drawString(110, y, f"case {k} was read by the fictional reader panel")
        y -= 14
    c.showPage()
    c.save()
    doc = read_document(path)
    assert all(b.location.printed_line is None for b in doc.blocks)
    assert "17" in " ".join(b.text for b in doc.blocks)


def test_a_manuscript_without_numbers_has_no_printed_lines(tmp_path):
    path = tmp_path / "plain.pdf"
    _review_copy(path, numbers=False)
    doc = read_document(path)
    assert all(b.location.printed_line is None and all(m.printed_line is None for m in b.marks) for b in doc.blocks)
