"""`--checklist auto`: the kind of document decides the checklist, from its words and from how it is built."""

from checker.engine import choose_checklist, document_from_text, paper_skeleton
from checker.matching.nlp import parse_blocks


def _choose(text: str) -> str:
    doc = document_from_text(text)
    docs = list(parse_blocks(b.text for b in doc.blocks))
    return choose_checklist(docs, document=doc)[0]


PARTICIPANT_PAPER = """# Abstract

We describe our entry to a segmentation benchmark; the organizers ranked it third on the leaderboard.

# Introduction

Kidney tumours vary in size and contrast.

# Methods

We trained a three-dimensional network on the training cases provided by the organizers.

# Results

Our method reached a mean Dice of 0.81 on the hidden test set.

# References

1. Okafor A. A study. Fictional Journal. 2020."""


def test_a_participants_paper_is_checked_as_a_paper():
    # benchmark words (organizers, leaderboard, hidden test set) do not outweigh a paper's build
    assert paper_skeleton(_md(PARTICIPANT_PAPER))
    assert _choose_doc(_md(PARTICIPANT_PAPER)) == "validation-study"


def test_a_dataset_readme_without_the_word_dataset_is_a_dataset_description():
    text = ("Northvale fundus collection\n\n"
            "A collection containing 1,593 colour fundus photographs with lesion labels drawn by two graders.\n\n"
            "Files are named by eye and visit; labels are PNG masks of the same size.\n\n"
            "Released under a CC BY 4.0 licence.")
    assert _choose(text) == "dataset-description"


def test_a_challenge_page_is_a_benchmark_proposal():
    text = ("Overview\n\n"
            "This challenge asks participants to segment kidney stones in CT. Each team may make three submissions; "
            "the final ranking uses the hidden test set, and prizes go to the top three teams.")
    assert _choose(text) == "benchmark-proposal"


def _md(text: str):
    import tempfile
    from pathlib import Path

    from checker.core.limits import DEFAULT_LIMITS
    from checker.reading import read_document

    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "paper.md"
        p.write_text(text, encoding="utf-8")
        return read_document(str(p), DEFAULT_LIMITS)


def _choose_doc(doc) -> str:
    docs = list(parse_blocks(b.text for b in doc.blocks))
    return choose_checklist(docs, document=doc)[0]


def test_the_choice_and_its_reason_are_in_the_report(tmp_path):
    from checker.engine import check_document

    p = tmp_path / "paper.md"
    p.write_text(PARTICIPANT_PAPER, encoding="utf-8")
    report = check_document(p)
    assert report.checklist_id == "validation-study"
    assert "built like a paper" in report.checklist_choice


def test_an_evaluation_code_readme_is_a_benchmark_proposal():
    # a metrics repository's README: files and formats, but about scoring predictions against a reference
    text = ("Lesion metrics\n\n"
            "This repository holds the evaluation code of the stone detection benchmark.\n\n"
            "Put your prediction files and the ground truth files in two folders; the script computes the metrics "
            "for every case and writes one CSV file.\n\n"
            "Released under the MIT license.")
    assert _choose(text) == "benchmark-proposal"


def test_a_thesis_in_the_first_person_is_checked_as_a_paper():
    text = ("Segmenting the left atrium\n\n"
            "In this thesis I compared two networks on a public collection containing 30 patients.\n\n"
            "I implemented both in a common framework and I trained them on the same folds.\n\n"
            "The data set is stored as compressed files in the usual file format of the scanner.")
    assert _choose(text) == "validation-study"


def test_a_shared_task_page_is_a_benchmark_proposal():
    # NLP and audio evaluation campaigns call their challenges shared tasks and subtasks, with runs and systems
    page = """# Task overview

The shared task has two subtasks on detecting irony in short posts. The training data contain 4,000 posts
with labels, and the test data will be released in the spring.

# Evaluation

Participating systems are ranked by macro-averaged F1 on the test set. Groups may send three submitted runs;
a baseline system is provided. The task organizers publish the official ranking after the evaluation window.
"""
    assert _choose(page) == "benchmark-proposal"


def test_a_student_report_about_a_public_dataset_is_checked_as_a_paper():
    # a report that talks about "the dataset" a lot is still a study that trains and compares models
    report = """# Report

In this project we compared three classifiers on the dataset of the Northvale weather archive. The dataset
contains 12,000 daily records; the dataset was split by year. We trained a random forest and two baselines.

# Results

Our experiments show that the random forest had the lowest error. In this report we also discuss the dataset's
missing values and our findings on the seasonal errors.
"""
    assert _choose(report) == "validation-study"
