"""Short bold or large lines of a PDF that are never headings: figure-panel letters and axis labels, rows of a
table of numbers, bullets, author lines and affiliations; and the outline follows the section paths."""

from __future__ import annotations

import pytest

from checker.document import Block, Document, Location
from checker.outline import section_tree
from checker.readers.pdf import _plausible_heading
from checker.sections import assign_sections


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


def test_two_headings_set_one_above_the_other_are_two_headings(tmp_path):
    pytest.importorskip("reportlab")
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    from checker.readers import read_document

    path = tmp_path / "stacked.pdf"
    c = canvas.Canvas(str(path), pagesize=A4, invariant=1)
    y = 760
    body = ("The fictional readers of the Lakeside study segmented every scan by hand and agreed on a consensus "
            "for each case before the methods were compared on the held-out test set of the benchmark.")
    for heading in ("Results", "Accuracy of the readers", None, "Wrapped heading that runs over the whole width of",
                    "the column and on", None):
        if heading is None:
            c.setFont("Helvetica", 10)
            for k in range(0, len(body), 95):
                c.drawString(72, y, body[k:k + 95])
                y -= 13
            y -= 10
            continue
        c.setFont("Helvetica-Bold", 12)
        c.drawString(72, y, heading)
        y -= 16
    c.showPage()
    c.save()
    headings = [b.text for b in read_document(path).blocks if b.kind == "heading"]
    assert headings[:2] == ["Results", "Accuracy of the readers"]
    assert "Wrapped heading that runs over the whole width of the column and on" in headings


def test_lettered_subsections_under_roman_sections_are_headings(tmp_path):
    pytest.importorskip("reportlab")
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    from checker.readers import read_document

    path = tmp_path / "ieee.pdf"
    c = canvas.Canvas(str(path), pagesize=A4, invariant=1)
    y = 760
    body = ("The fictional Lakeside readers segmented every scan by hand and agreed on one consensus mask for "
            "each case before the methods were compared on the test set. ") * 3
    for heading, font in (("I. INTRODUCTION", "Helvetica"), (None, None), ("II. DATASET", "Helvetica"),
                          ("A. Data Collection", "Helvetica-Oblique"), (None, None),
                          ("B. Reference Annotation", "Helvetica-Oblique"), (None, None),
                          ("A. short line of a paragraph.", "Helvetica"), (None, None)):
        if heading is None:
            c.setFont("Helvetica", 10)
            for k in range(0, len(body), 90):
                c.drawString(72, y, body[k:k + 90])
                y -= 13
            y -= 8
            continue
        c.setFont(font, 10)
        c.drawString(72, y, heading)
        y -= 20  # set apart from the text below, as the style sets subsection headings
    c.showPage()
    c.save()
    doc = read_document(path)
    headings = [b.text for b in doc.blocks if b.kind == "heading"]
    assert "A. Data Collection" in headings and "B. Reference Annotation" in headings
    assert "A. short line of a paragraph." not in headings
    data = next(b for b in doc.blocks if b.text == "B. Reference Annotation")
    assert data.section == ("II. DATASET", "B. Reference Annotation") and data.role == "data"
