"""Heading roles and section paths."""

from __future__ import annotations

import pytest

from checker.reading.document import Block, Location
from checker.reading.sections import assign_sections, heading_role


@pytest.mark.parametrize(
    "heading, role",
    [
        ("2 Materials and Methods", "methods"),
        ("III. EXPERIMENTS", "methods"),
        ("2.1 Data", "data"),
        ("Datasets", "data"),
        ("Evaluation protocol", "evaluation"),
        ("4 Results", "results"),
        ("Related Work", "related-work"),
        ("Acknowledgments", "acknowledgements"),
        ("References", "references"),
        ("Bibliography", "references"),
        ("Refrences", "references"),  # a misspelt heading still hides the reference list
        ("Materials & methods", "methods"),
        ("A fracture detector for wrists", None),
        ("2.2 Reference annotation", "data"),
        ("Reference standard and annotation process", "data"),
    ],
)
def test_heading_roles(heading, role):
    assert heading_role(heading) == role


def test_section_paths_follow_heading_levels():
    blocks = [
        Block("Methods", "heading", Location("f", line=1), level=1),
        Block("Data", "heading", Location("f", line=2), level=2),
        Block("We used scans.", "paragraph", Location("f", line=3)),
        Block("Results", "heading", Location("f", line=4), level=1),
        Block("It worked.", "paragraph", Location("f", line=5)),
    ]
    out = assign_sections(blocks)
    assert out[2].section == ("Methods", "Data") and out[2].role == "data"
    assert out[4].section == ("Results",) and out[4].role == "results"
    assert out[2].location_at(0).section == ("Methods", "Data")


def _doc(*items):
    """Blocks from (kind, text, level) tuples; lines count from 1."""
    return [Block(text, kind, Location("f", line=i + 1), level=level) for i, (kind, text, level) in enumerate(items)]


H = "heading"
P = "paragraph"


@pytest.mark.parametrize("heading, role", [
    ("Literature Survey", "related-work"),
    ("2. Review of Literature", "related-work"),
    ("Background", "related-work"),
    ("Background subtraction", None),  # a method, not a survey of other work
    ("TABLE OF CONTENTS", "front-matter"),
    ("List of Figures", "front-matter"),
    ("CERTIFICATE", "front-matter"),
    ("Declaration", "front-matter"),
    ("Declarations", "acknowledgements"),  # a journal's statements on funding and interests
    ("Keywords", "front-matter"),
    ("Contents of the dataset", "data"),
    ("Hardware and Software Requirements", "requirements"),
    ("Submission requirements", "methods"),  # a challenge's rules, not a software report's requirements
    ("Appendix B", "appendix"),
])
def test_more_heading_roles(heading, role):
    assert heading_role(heading) == role


def test_an_abstract_heading_never_holds_the_numbered_body():
    # a manuscript whose only top-level heading is the abstract, the body numbered "1.0" ... "3.1" one level down
    out = assign_sections(_doc((H, "ABSTRACT", 1), (P, "We summarise the study.", None),
                               (H, "1.0 INTRODUCTION", 2), (P, "Fractures are common.", None),
                               (H, "3.0 PROPOSED SYSTEM", 2), (P, "The system segments scans.", None),
                               (H, "3.1 Data", 3), (P, "Forty scans.", None)))
    assert out[1].role == "abstract"
    assert out[3].section == ("1.0 INTRODUCTION",) and out[3].role == "introduction"
    assert out[5].section == ("3.0 PROPOSED SYSTEM",) and out[5].role == "methods"
    assert out[7].section == ("3.0 PROPOSED SYSTEM", "3.1 Data") and out[7].role == "data"


def test_a_structured_abstract_keeps_its_parts():
    out = assign_sections(_doc((H, "Abstract", 1), (H, "Methods", 2), (P, "We trained a network.", None),
                               (H, "Results", 2), (P, "Dice was 0.9.", None),
                               (H, "1 Introduction", 1), (P, "Segmentation matters.", None)))
    assert out[2].section == ("Abstract", "Methods") and out[2].role == "abstract"
    assert out[4].role == "abstract"
    assert out[6].section == ("1 Introduction",) and out[6].role == "introduction"


def test_a_title_gives_no_role_to_its_sections():
    out = assign_sections(_doc((H, "Annotation guidelines", 1), (P, "Version 2.", None),
                               (H, "Tools", 2), (P, "Use the viewer.", None),
                               (H, "Contact", 2), (P, "Write to us.", None)))
    assert out[1].role == "body"
    assert out[3].section == ("Annotation guidelines", "Tools") and out[3].role == "body"


def test_chapter_number_and_title_are_one_heading_and_a_survey_keeps_its_role():
    out = assign_sections(_doc((H, "CHAPTER 1", 1), (H, "INTRODUCTION", 1), (P, "Lung cancer is common.", None),
                               (H, "CHAPTER 2", 1), (H, "LITERATURE SURVEY", 1),
                               (H, "2.1 A deep network for nodule detection", 2), (P, "They trained on 800 scans.", None),
                               (H, "CHAPTER 3", 1), (P, "METHODOLOGY", None), (P, "We trained a U-Net.", None)))
    texts = [b.text for b in out if b.kind == "heading"]
    assert texts == ["CHAPTER 1 INTRODUCTION", "CHAPTER 2 LITERATURE SURVEY", "2.1 A deep network for nodule detection",
                     "CHAPTER 3 METHODOLOGY"]
    by_text = {b.text: b for b in out}
    assert by_text["Lung cancer is common."].role == "introduction"
    # a paper summarised in the survey is still other people's work, whatever its title says
    assert by_text["They trained on 800 scans."].role == "related-work"
    assert by_text["We trained a U-Net."].role == "methods"
    assert by_text["We trained a U-Net."].section == ("CHAPTER 3 METHODOLOGY",)


def test_front_matter_of_a_thesis_is_never_body_text():
    out = assign_sections(_doc(
        (P, "A PROJECT REPORT submitted in partial fulfilment of the degree", None),
        (H, "CERTIFICATE", 1), (P, "This is to certify that the work was done by the students.", None),
        (H, "TABLE OF CONTENTS", 1),
        (H, "1 INTRODUCTION .......... 1", 1), (H, "2 LITERATURE SURVEY 4", 1), (P, "2.1 Data sets ...... 6", None),
        (H, "LIST OF FIGURES", 1), (P, "Figure 1 Block diagram 12", None),
        (H, "1 INTRODUCTION", 1), (P, "Lung cancer is common.", None)))
    roles = {b.text: b.role for b in out}
    assert roles["A PROJECT REPORT submitted in partial fulfilment of the degree"] == "front-matter"
    assert roles["This is to certify that the work was done by the students."] == "front-matter"
    # lines of the table of contents are not headings and not body text
    assert out[4].kind == "paragraph" and out[4].role == "front-matter"
    assert out[5].kind == "paragraph" and out[5].role == "front-matter"
    assert roles["2.1 Data sets ...... 6"] == "front-matter"
    assert roles["Figure 1 Block diagram 12"] == "front-matter"
    assert roles["Lung cancer is common."] == "introduction"
    assert out[-1].section == ("1 INTRODUCTION",)


def test_author_lines_and_affiliations_under_a_title_are_front_matter():
    out = assign_sections(_doc((H, "A fictional study of wrist fractures", 1),
                               (P, "Ada Smith1, Ben Jones2", None),
                               (P, "1 Department of Radiology, Northbay University Hospital", None),
                               (P, "Corresponding author: ada@northbay.example", None),
                               (H, "Abstract", 1), (P, "We trained on data from Northbay University Hospital.", None),
                               (H, "1 Introduction", 1), (P, "Fractures are common.", None)))
    assert out[2].role == "front-matter" and out[3].role == "front-matter"
    assert out[5].role == "abstract"  # the same words in the abstract stay evidence


def test_capitals_mark_the_main_sections_of_headings_ranked_alike():
    out = assign_sections(_doc((H, "INTRODUCTION", 1), (P, "Lungs.", None),
                               (H, "MATERIALS AND METHODS", 1), (H, "Image acquisition", 1), (P, "A 3 T scanner.", None),
                               (H, "RESULTS", 1), (H, "Segmentation accuracy", 1), (P, "Dice 0.9.", None)))
    assert out[4].section == ("MATERIALS AND METHODS", "Image acquisition") and out[4].role == "methods"
    assert out[7].section == ("RESULTS", "Segmentation accuracy") and out[7].role == "results"


def test_headings_set_alike_nest_under_a_heading_stacked_above_another():
    # sections and subsections in the same type: "Results" directly over its first subsection, twice
    out = assign_sections(_doc((H, "Introduction", 1), (P, "Why.", None),
                               (H, "Results", 1), (H, "Accuracy of the readers", 1), (P, "Dice 0.9.", None),
                               (H, "Models with and without pretraining", 1), (P, "Pretraining helped.", None),
                               (H, "Discussion", 1), (H, "Benchmark results", 1), (P, "It works.", None),
                               (H, "Conclusions", 1), (P, "Done.", None)))
    by_text = {b.text: b for b in out}
    assert by_text["Pretraining helped."].section == ("Results", "Models with and without pretraining")
    # a few words of a subsection's title ("Models ...") yield to the section it stands in
    assert by_text["Pretraining helped."].role == "results"
    assert by_text["It works."].role == "discussion"
    assert by_text["Done."].section == ("Conclusions",)


def test_a_reference_list_holds_no_sections():
    out = assign_sections(_doc((H, "References", 1), (P, "[1] A paper.", None), (H, "Figure captions", 2),
                               (P, "Figure 1. The pipeline.", None)))
    assert out[3].section == ("Figure captions",) and out[3].role == "body"


def test_prose_after_a_table_of_contents_is_body_text_again():
    # a README whose first section heading the reader could not tell ("1. Dataset" underlined): its prose must not
    # count as front matter, or nothing it says about the data counts
    out = assign_sections(_doc(
        (H, "Harbour sounds, development set", 1),
        (H, "Table of Contents", 1), (P, "Dataset", None), (P, "Usage", None), (P, "1 Introduction 1 2 Data 4", None),
        (P, "The recordings were collected in three harbours by the Northvale Acoustics Group between 2019 and "
            "2021.", None),
        (H, "License", 1), (P, "Free for research.", None)))
    roles = {b.text: b.role for b in out}
    assert roles["Usage"] == "front-matter" and roles["1 Introduction 1 2 Data 4"] == "front-matter"
    assert roles[out[5].text] == "body"
    assert out[5].section == ()


def test_contents_lines_are_front_matter_wherever_they_stand():
    out = assign_sections(_doc((H, "1 Introduction", 1),
                               (P, "1 Introduction .......... 1 2 Data sets and annotation .......... 4", None),
                               (P, "The dataset holds forty scans. See the table below .... for details.", None)))
    assert out[1].role == "front-matter"
    assert out[2].role == "introduction"


def test_a_heading_that_is_a_whole_sentence_is_read_as_a_paragraph():
    # web pages set sentences in heading style for emphasis; such a "heading" states something
    loc = Location("page.md", line=1)
    blocks = [Block("Stone detection challenge", "heading", loc, level=1),
              Block("Evaluation and ranking", "heading", loc, level=2),
              Block("Only teams with results for every test case will appear in the final ranking, and ties "
                    "share a place.", "heading", loc, level=5),
              Block("Metrics", "heading", loc, level=3)]
    out = assign_sections(blocks)
    assert [b.kind for b in out] == ["heading", "heading", "paragraph", "heading"]
    assert out[2].role == "evaluation"
