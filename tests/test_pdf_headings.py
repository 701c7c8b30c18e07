"""Short bold or large lines of a PDF that are never headings: figure-panel letters and axis labels, rows of a
table of numbers, bullets, author lines and affiliations; and the outline follows the section paths."""

from __future__ import annotations

import pytest

from checker.reading.document import Block, Document, Location
from checker.cli.outline import section_tree
from checker.reading.pdf import _plausible_heading
from checker.reading.sections import assign_sections


@pytest.mark.parametrize("text", [
    "(b)", "A", "E13.5 P14", "P4",  # panel letters, sample names on a figure
    "2 Epoch 0.0518 1.0 0.54", "Epoch 10 0.5 0.7",  # rows of a table of numbers
    "* tracts", "• Dice",  # bullets
    "Ada B. Smith1, Ben Jones2*", "Ada Smith, Ben Jones and Carl Wu",  # author lines
    "Department of Radiology, Northbay University Hospital", "ada.smith@northbay.example",  # affiliations
    "Anonymous LAKE-2031 submission", "Anonymous Authors",  # the by-line of a double-blind review copy
])
def test_never_a_heading(text):
    assert not _plausible_heading(text)


@pytest.mark.parametrize("text", [
    "2.1 Data", "Results", "III. METHODS", "CHAPTER 2", "Data, Methods and Results", "Precision, Recall and F1",
    "4 Experiments on 3 sites", "2.1 AllenCCFv3 brain image mapping",
])
def test_still_a_heading(text):
    assert _plausible_heading(text)


def test_the_outline_follows_section_paths_not_raw_levels():
    # the abstract is set larger than the numbered sections, but it does not hold them
    blocks = assign_sections([
        Block("Abstract", "heading", Location("f.pdf", page=1, line=1), level=1),
        Block("We summarise.", "paragraph", Location("f.pdf", page=1, line=2)),
        Block("1 Introduction", "heading", Location("f.pdf", page=1, line=3), level=2),
        Block("Fractures are common.", "paragraph", Location("f.pdf", page=1, line=4)),
        Block("1.1 Aims", "heading", Location("f.pdf", page=1, line=5), level=3),
        Block("We aim high.", "paragraph", Location("f.pdf", page=1, line=6)),
    ])
    roots, _, _ = section_tree(Document("f.pdf", "pdf", tuple(blocks)))
    assert [(r.title, r.role, [c.title for c in r.children]) for r in roots] == [
        ("Abstract", "abstract", []), ("1 Introduction", "introduction", ["1.1 Aims"])]


BODY = ("The fictional Lakeside readers segmented every scan by hand and agreed on one consensus mask for each "
        "case before the methods were compared on the held-out test set of the benchmark. ")


def _pdf(path, lines: list[tuple[str | None, str, int, int]], body: str) -> None:
    """A one-page PDF: per entry a heading (text, font, size, space below it), or None for a paragraph of body."""
    pytest.importorskip("reportlab")
    from tests.pdf_drawing import draw

    draw(path, [[(body, "body", 10, 9) if text is None else (text, font, size, below)
                 for text, font, size, below in lines]], wrap=90)


PARAGRAPH = (None, "", 0, 0)


def test_two_headings_set_one_above_the_other_are_two_headings(tmp_path):
    from checker.reading import read_document

    path = tmp_path / "stacked.pdf"
    bold = ("Helvetica-Bold", 12, 16)
    _pdf(path, [("Results", *bold), ("Accuracy of the readers", *bold), PARAGRAPH,
                ("Wrapped heading that runs over the whole width of", *bold), ("the column and on", *bold), PARAGRAPH],
         BODY)
    headings = [b.text for b in read_document(path).blocks if b.kind == "heading"]
    assert headings[:2] == ["Results", "Accuracy of the readers"]
    assert "Wrapped heading that runs over the whole width of the column and on" in headings


def test_lettered_subsections_under_roman_sections_are_headings(tmp_path):
    from checker.reading import read_document

    path = tmp_path / "ieee.pdf"
    caps, italic = ("Helvetica", 10, 14), ("Helvetica-Oblique", 10, 20)  # subsections set apart from the text
    _pdf(path, [("I. INTRODUCTION", *caps), PARAGRAPH, ("II. DATASET", *caps), ("A. Data Collection", *italic),
                PARAGRAPH, ("B. Reference Annotation", *italic), PARAGRAPH,
                ("A. short line of a paragraph.", "Helvetica", 10, 20), PARAGRAPH], BODY * 3)
    doc = read_document(path)
    headings = [b.text for b in doc.blocks if b.kind == "heading"]
    assert "A. Data Collection" in headings and "B. Reference Annotation" in headings
    assert "A. short line of a paragraph." not in headings
    data = next(b for b in doc.blocks if b.text == "B. Reference Annotation")
    assert data.section == ("II. DATASET", "B. Reference Annotation") and data.role == "data"
