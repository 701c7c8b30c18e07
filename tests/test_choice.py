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


THESIS = """# Abstract

Segmenting the left atrium in late gadolinium-enhanced MRI is slow by hand. In this thesis I compared two
convolutional networks for the task and studied where they fail.

# Introduction

Atrial fibrillation is treated by ablation, and planning it needs the shape of the atrium. Manual delineation
takes an expert about an hour per scan, so automatic methods are wanted.

# Methods

I used a public collection containing 30 patients; the data set is stored as compressed files in the usual file
format of the scanner. I implemented a U-Net and a V-Net in a common framework and I trained them on the same
five folds, with the same augmentation and learning-rate schedule.

# Results

The V-Net reached a mean Dice of 0.89 and the U-Net 0.87. Both networks missed the pulmonary veins most often.

# Discussion

The difference between the networks is small against the variation between folds. A larger study would be
needed to tell them apart.

# References

1. Moreau L, Adeyemi T. Atrial shape from MRI. Fictional Journal of Cardiac Imaging. 2019."""


def test_a_thesis_in_the_first_person_is_checked_as_a_paper():
    # a thesis that compares methods, written in the first person and built like a paper
    assert _choose_doc(_md(THESIS)) == "validation-study"


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


STUDENT_REPORT = """# Predicting daily rainfall: a course report

# Introduction

In this project we compared three classifiers on the dataset of the Northvale weather archive, to predict whether
it rains on the next day. Earlier course projects used one model only.

# Data

The dataset contains 12,000 daily records from 1990 to 2022 with temperature, pressure, humidity and wind. The
dataset was split by year: 1990 to 2015 for training and 2016 to 2022 for testing. Days with missing pressure were
dropped.

# Methods

We trained a random forest, a logistic regression and a baseline that predicts the previous day's weather. The
hyperparameters of the forest were tuned by five-fold cross-validation on the training years.

# Results

Our experiments show that the random forest had the lowest error (accuracy 0.81 against 0.76 and 0.70). In this
report we also discuss the dataset's missing values and our findings on the seasonal errors: most mistakes fall in
spring.

# References

1. Tanaka R. Rain prediction with trees. Fictional Weather Letters. 2018."""


def test_a_student_report_about_a_public_dataset_is_checked_as_a_paper():
    # a report that talks about "the dataset" a lot is still a study that trains and compares models
    assert _choose_doc(_md(STUDENT_REPORT)) == "validation-study"


def test_scikit_learns_shipped_dataset_descriptions_are_taken_for_dataset_descriptions():
    # External check: scikit-learn ships a description of each bundled dataset (sklearn/datasets/descr/*.rst);
    # every one is a dataset description, and none was among the documents the choice model was fitted on
    import importlib.util
    from pathlib import Path

    from checker.engine import choose_for_file

    spec = importlib.util.find_spec("sklearn")
    if spec is None or spec.origin is None:
        import pytest

        pytest.skip("scikit-learn is not installed (pip install -e '.[test]')")
    files = sorted((Path(spec.origin).parent / "datasets" / "descr").glob("*.rst"))
    assert len(files) >= 10
    chosen = {f.name: choose_for_file(f)[0] for f in files}
    assert set(chosen.values()) == {"dataset-description"}, chosen


def test_medmnists_shipped_descriptions_are_taken_for_dataset_descriptions():
    # External check: medmnist ships a short description of each of its datasets (medmnist/info.py, INFO[...]
    # ["description"]): a paragraph of 50 to 120 words naming the source, the images and the labels. The cue
    # counts alone found no choice cue in 10 of the 18 and fell back to the paper checklist; the fitted choice,
    # never fitted on them, must take each for a dataset description, or say that it is not sure and that the
    # dataset description came close, so that a reader knows to check
    from checker.engine import document_from_text

    from .conftest import medmnist_info

    taken = 0
    for flag, entry in medmnist_info().items():
        doc = document_from_text(entry["description"])
        cid, why = choose_checklist(list(parse_blocks(b.text for b in doc.blocks)), document=doc)
        taken += cid == "dataset-description"
        assert cid == "dataset-description" or ("not sure" in why and why.endswith("for dataset-description)")), \
            (flag, why)
    assert taken >= len(medmnist_info()) // 2


def test_without_the_fitted_model_the_cue_counts_choose():
    from checker.matching.choice import choose_by_cues, cue_counts

    doc = _md(PARTICIPANT_PAPER)
    docs = list(parse_blocks(b.text for b in doc.blocks))
    cid, why = choose_by_cues(cue_counts(docs), paper_skeleton(doc))
    assert cid == "validation-study" and why.startswith("validation-study: built like a paper")
    assert choose_by_cues({}, False) == ("validation-study", "validation-study: the default checklist")


def test_an_unsure_choice_names_the_checklist_that_came_close():
    from checker.matching.choice import ChoiceModel, choose_checklist

    even = ChoiceModel(16, ["benchmark-proposal", "dataset-description", "validation-study"], [0.0, 0.05, 0.0], {})
    doc = document_from_text("A short note.")
    cid, why = choose_checklist(list(parse_blocks(b.text for b in doc.blocks)), document=doc, model=even)
    assert cid == "dataset-description"
    assert why.endswith("(not sure: 34% against 33% for benchmark-proposal)")


def test_a_damaged_choice_model_is_named_in_a_one_line_error():
    import json

    import pytest

    from checker.core.errors import ChecklistError
    from checker.matching.choice import parse_choice_model, shipped_choice

    with pytest.raises(ChecklistError, match=r"checklists/choice.json:1:1: not a checklist-choice model"):
        parse_choice_model("{not json", "checklists/choice.json")
    good = {"buckets": 8, "classes": ["dataset-description", "validation-study"], "intercept": [0, 0],
            "weights": {"3": [1.0, -1.0]}}
    assert parse_choice_model(json.dumps(good), "x").probabilities({})["validation-study"] == 0.5
    with pytest.raises(ChecklistError, match="do not line up"):
        parse_choice_model(json.dumps({**good, "weights": {"3": [1.0]}}), "choice.json")
    with pytest.raises(ChecklistError, match="unknown checklist 'poster'"):
        parse_choice_model(json.dumps({**good, "classes": ["poster", "validation-study"]}), "choice.json")
    assert shipped_choice() is not None, "checklists/choice.json is shipped (python benchmarks/choice.py --write)"
