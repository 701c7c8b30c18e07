"""Built-in checklists on short invented documents: applicability and automatic choice behave as a user expects."""

from __future__ import annotations

from checker.engine import check_text, choose_checklist
from checker.matching.nlp import parse_blocks

DATASHEET = """Fictional example: the Harrowgate Knee MRI Collection is an invented dataset.

The collection holds 412 knee MRI examinations of 398 adult patients, acquired on two 3 T scanners at the
fictional Harrowgate Clinic between 2018 and 2021. Files are provided as NIfTI volumes with one folder per patient.

Each meniscus tear was outlined by two musculoskeletal radiologists with 8 and 15 years of experience, using
written annotation guidelines; disagreements were resolved in a consensus meeting.

The dataset is released under a CC BY 4.0 licence at version 1.2 and can be downloaded from the project page."""


def test_a_datasheet_without_evaluation_gets_not_applicable_ranking_items():
    report = check_text(DATASHEET, "dataset-description")
    status = {it.id: it.status for it in report.items}
    assert status["ranking.method"] == "not-applicable"
    assert status["ranking.uncertainty"] == "not-applicable"
    assert status["data.source"] == "reported"
    assert status["reference.annotators"] == "reported"
    annotators = dict(next(it for it in report.items if it.id == "reference.annotators").facts)
    assert any(f.value == 2 for fs in annotators.values() for f in fs)


def test_automatic_choice_picks_the_dataset_checklist_for_a_datasheet_and_says_why():
    cid, why = choose_checklist(list(parse_blocks(DATASHEET.split("\n\n"))))
    assert cid == "dataset-description"
    assert why.startswith("dataset-description: mentions ")


def test_counts_in_scikit_learns_shipped_descriptions_equal_its_own_data():
    # External check: scikit-learn ships these datasets with their description files
    # (sklearn/datasets/descr/*.rst); the count that studygap extracts for data.counts with the
    # dataset-description checklist must equal the number of rows the package itself loads (no download).
    import importlib.util
    from pathlib import Path

    import pytest

    datasets = pytest.importorskip("sklearn.datasets")
    from checker.engine import check_document

    descr = Path(list(importlib.util.find_spec("sklearn").submodule_search_locations)[0]) / "datasets" / "descr"
    loaders = {"iris": datasets.load_iris, "wine_data": datasets.load_wine, "diabetes": datasets.load_diabetes,
               "breast_cancer": datasets.load_breast_cancer, "digits": datasets.load_digits,
               "linnerud": datasets.load_linnerud}
    for name, load in loaders.items():
        report = check_document(descr / f"{name}.rst", "dataset-description")
        counts = next(it for it in report.items if it.id == "data.counts")
        assert counts.status == "reported", name
        values = [f.value for _, fs in counts.facts for f in fs]
        assert load().data.shape[0] in values, (name, values)


def test_provenance_of_shipped_descriptions_is_found():
    # scikit-learn's descriptions say where their data came from in the words of dataset pages ("a copy of the
    # ... repository", "taken from ... paper", "Source URL"), with no devices or period: at least partial.
    import importlib.util
    from pathlib import Path

    from checker.engine import check_document

    descr = Path(list(importlib.util.find_spec("sklearn").submodule_search_locations)[0]) / "datasets" / "descr"
    for name in ("iris", "wine_data", "diabetes", "digits"):
        report = check_document(descr / f"{name}.rst", "dataset-description")
        source = next(it for it in report.items if it.id == "data.source")
        assert source.status in ("partial", "reported"), (name, source.reason)


def test_agreement_with_hand_labels_of_scikit_learns_shipped_descriptions():
    # External check on real text: twelve dataset descriptions that scikit-learn ships
    # (sklearn/datasets/descr/*.rst), labelled by our careful reading in tests/data/labels-sklearn/ for three
    # items, compared through `studygap evaluate` as a user would.
    import importlib.util
    from pathlib import Path

    from checker.many.evaluation import evaluate, load_labels

    from .conftest import DATA

    descr = Path(list(importlib.util.find_spec("sklearn").submodule_search_locations)[0]) / "datasets" / "descr"
    ev = evaluate(load_labels(DATA / "labels-sklearn", descr))
    assert ev.compared_documents == 12 and not ev.errors
    f1 = {i.item_id: i.scores.f1 for i in ev.items}
    assert f1["data.counts"] == 1.0
    assert f1["data.source"] >= 0.85 and f1["data.class-balance"] >= 0.8
    assert ev.figure("three_class_agreement").value >= 0.8
