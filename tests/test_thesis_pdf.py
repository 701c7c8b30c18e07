"""A student thesis as a PDF, read as its reader sees it: the title page, certificate, table of contents and list
of figures are front matter and never quoted; "CHAPTER 2" and "LITERATURE SURVEY" are one heading; the papers
summarised in the survey stay related work; the chapters of the body have their roles."""

from __future__ import annotations

import pytest

from checker.engine import check_document
from checker.reading import read_document

reportlab = pytest.importorskip("reportlab")
from tests.pdf_drawing import draw  # noqa: E402

BODY = {
    "intro": "Lung cancer is a common cause of death, and early detection of nodules on CT saves lives. ",
    "survey": "The authors trained a network on 800 scans from a public archive, annotated by four radiologists. ",
    "method": "We trained a U-Net on 120 scans from the fictional Lakeside clinic, each annotated by two readers. ",
    "results": "The detector reached a Dice score of 0.81 on the 30 held-out test scans of the Lakeside clinic. ",
}


@pytest.fixture(scope="module")
def thesis(tmp_path_factory):
    path = tmp_path_factory.mktemp("thesis") / "thesis.pdf"
    bold = "Helvetica-Bold"

    def h(text: str, size: int, font: str = bold) -> tuple[str, str, int, int]:
        return (text, font, size, size + 10)

    pages = [
        [h("A FICTIONAL LUNG NODULE DETECTOR", 18), h("A PROJECT REPORT", 14),
         h("submitted in partial fulfilment of the requirements for the degree", 11, "Helvetica"),
         h("Lakeside Institute of Technology, 2031", 11, "Helvetica")],
        [h("CERTIFICATE", 16), ("This is to certify that the project on 120 scans annotated by two readers was "
                                "carried out by the students under our guidance at the Lakeside clinic.",
                                "body", 11, 8)],
        [h("TABLE OF CONTENTS", 16), h("1 Introduction ........................................ 1", 11, "Helvetica"),
         h("2 Literature survey ................................... 3", 11, "Helvetica"),
         h("3 Methodology: 120 scans annotated by two readers ..... 6", 11, "Helvetica"),
         h("4 Results ............................................. 9", 11, "Helvetica"),
         h("LIST OF FIGURES", 16), h("Figure 1 Dice score on the 30 held-out test scans ..... 10", 11, "Helvetica")],
    ]
    for number, title, key, subs in ((1, "INTRODUCTION", "intro", ()),
                                     (2, "LITERATURE SURVEY", "survey", ("2.1 Deep learning for nodule detection",
                                                                         "2.2 Nodule classification with CNNs")),
                                     (3, "METHODOLOGY", "method", ("3.1 Data and annotation",)),
                                     (4, "RESULTS", "results", ())):
        lines = [h(f"CHAPTER {number}", 16), h(title, 16), (BODY[key] * 3, "body", 11, 8)]
        for sub in subs:
            lines += [h(sub, 13), (BODY[key] * 2, "body", 11, 8)]
        pages.append(lines)
    draw(path, pages)
    return path, read_document(path)


def test_chapter_numbers_join_their_titles(thesis):
    _, doc = thesis
    headings = [b.text for b in doc.blocks if b.kind == "heading"]
    for n, title in ((1, "INTRODUCTION"), (2, "LITERATURE SURVEY"), (3, "METHODOLOGY"), (4, "RESULTS")):
        assert f"CHAPTER {n} {title}" in headings, headings
    assert not any(h.startswith(("1 Introduction ...", "2 Literature survey")) for h in headings)


def test_front_matter_and_roles(thesis):
    _, doc = thesis
    def role_of(start: str) -> str:
        return next(b.role for b in doc.blocks if b.text.startswith(start))

    for start in ("A PROJECT REPORT", "submitted in partial fulfilment", "This is to certify", "1 Introduction ...",
                  "3 Methodology: 120 scans", "Figure 1 Dice score"):
        assert role_of(start) == "front-matter", start
    survey = [b for b in doc.blocks if b.text.startswith("The authors trained")]
    assert survey and all(b.role == "related-work" for b in survey)  # also under the survey's paper titles
    assert {b.role for b in doc.blocks if b.text.startswith("We trained a U-Net")} <= {"methods", "data"}
    assert {b.role for b in doc.blocks if b.text.startswith("The detector reached")} == {"results"}


def test_nothing_is_quoted_from_front_matter(thesis):
    path, doc = thesis
    report = check_document(path, "validation-study")
    front = [b.text for b in doc.blocks if b.role == "front-matter"]
    quoted = [ev.text for item in report.items for ev in item.evidence]
    assert quoted, "the body states counts and annotators; something must be found"
    for q in quoted:
        assert not any(q[:40] in f for f in front), q
        assert "....." not in q
