"""The trade's usual ways of stating a design fact, each read as a careful reader would, in every checklist that
asks it. The sentences are invented; each form is common practice in challenge rules, dataset cards and papers
(the source of each form is named beside it)."""

from __future__ import annotations

import pytest

from checker.engine import check_document, check_text


def _status(text: str, checklist: str, item: str) -> str:
    return next(it for it in check_text(text, checklist).items if it.id == item).status


MISSING_OUTPUT_RULES = [
    # the scoring rule for a case without an output, phrased as a condition on the case (common practice in
    # challenge rules)
    "If a segmentation mask is not provided for a case, its Hausdorff distance is set to the image diagonal.",
    "When the algorithm did not return a result for a case, we set its score to the lowest value observed.",
    "Any case not predicted by a team is given the lowest rank for that case.",
    "Predictions that are missing or unreadable are replaced by an all-background mask.",
    # as a condition on the whole submission: it must cover every case or it is not scored (common practice)
    "Submissions that do not contain predictions for all test images will be considered invalid.",
    "Teams must provide a prediction for each of the test cases, otherwise the submission is rejected.",
    "A submission must include results for all 50 test videos to be evaluated.",
    # question answering and language-model benchmarks: abstentions and unparseable answers (common practice in
    # their evaluation protocols)
    "Unanswered questions and answers that cannot be parsed are counted as incorrect.",
]


@pytest.mark.parametrize("checklist", ["benchmark-proposal", "validation-study"])
@pytest.mark.parametrize("sentence", MISSING_OUTPUT_RULES)
def test_a_missing_output_rule_in_the_trades_words_is_reported(sentence, checklist):
    assert _status(sentence, checklist, "results.missing") == "reported"


@pytest.mark.parametrize("sentence", [
    "Predictions are provided for all test images in a single archive.",
    "Missing values in the clinical table were imputed with the median.",  # missing input data, not outputs
    "The results for all 50 test videos are shown in Table 3.",
])
def test_text_near_missing_outputs_that_states_no_rule_is_not_reported(sentence):
    assert _status(sentence, "benchmark-proposal", "results.missing") != "reported"


def test_split_sizes_in_a_table_are_counts(tmp_path):
    # dataset cards give split sizes as a table, one split per row or per column (common practice on dataset
    # hubs); each row is read as its own passage, so each form must count on its own
    rows = tmp_path / "rows.md"
    rows.write_text("# Data\n\n| Split | Sentences | Tokens |\n|---|---|---|\n| Train | 39,501 | 950,112 |\n"
                    "| Test | 4,940 | 119,007 |\n", encoding="utf-8")
    columns = tmp_path / "columns.md"
    columns.write_text("# Data\n\n| Language | Train | Validation | Test |\n|---|---|---|---|\n"
                       "| English | 12,000 | 1,500 | 1,500 |\n", encoding="utf-8")
    results = tmp_path / "results.md"
    results.write_text("# Results\n\n| Method | Train | Test |\n|---|---|---|\n| Ours | 0.95 | 0.88 |\n"
                       "\n| Split | Accuracy |\n|---|---|\n| Test | 0.88 |\n| Train | 97 |\n", encoding="utf-8")
    def counts(path):
        report = check_document(path, "dataset-description")
        return next(it for it in report.items if it.id == "data.counts").status

    assert counts(rows) == "reported"
    assert counts(columns) == "reported"
    assert counts(results) == "missing"  # scores per split are not split sizes


@pytest.mark.parametrize("sentence, status", [
    # datasheets state the size of a corpus with "there are" (common practice in dataset cards); a dataset that
    # defines no split is wholly counted by its total
    ("There are 2,000 unique instances in each language.", "reported"),
    ("In total, there are 1,422,914 sentences in the corpus.", "reported"),
    ("There are 2 reasons for this choice.", "missing"),
])
def test_a_corpus_size_stated_with_there_are_is_a_total(sentence, status):
    assert _status(sentence, "dataset-description", "data.counts") == status


@pytest.mark.parametrize("sentence, status", [
    # who labelled, named by the means or the role without a count (common practice in dataset documentation)
    ("Relation labels were assigned using crowd workers.", "partial"),
    ("We enrolled native speakers as human annotators to correct every transcription.", "partial"),
    ("The final cell type was determined by a specialist.", "partial"),
    ("Labels were assigned using a rule-based script.", "missing"),
])
def test_annotators_named_by_means_or_role_are_a_partial_report(sentence, status):
    assert _status(sentence, "dataset-description", "reference.annotators") == status


def test_releasing_every_annotators_labels_unmerged_is_a_fusion_design():
    # keeping each annotator's labels apart is a design statement, like a merging rule (common practice for
    # subjective labels)
    text = "Each image was labelled by three annotators. We provide the full, non-aggregated dataset."
    assert _status(text, "dataset-description", "reference.fusion") == "reported"


@pytest.mark.parametrize("text, status", [
    # a dataset that defines no split is wholly counted by its total (common practice in dataset cards)
    ("The dataset contains 1,797 images of handwritten digits.", "reported"),
    # one that names its own split but leaves out the sizes reports only part of its counts (the development
    # set's labelling conventions: totals without the split sizes are partial)
    ("The dataset contains 1,797 images of handwritten digits. We recommend the official split into training "
     "and test images.", "partial"),
    ("The dataset contains 1,797 images. Use the predefined train/val/test splits.", "partial"),
    # a split its source had is not the dataset's own
    ("The dataset contains 1,797 images; it is a copy of the test set of an older collection.", "reported"),
])
def test_a_datasets_total_is_its_whole_count_unless_it_names_a_split_without_sizes(text, status):
    assert _status(text, "dataset-description", "data.counts") == status
