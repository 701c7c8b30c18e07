"""Fitted evidence thresholds: the reduction to facet scores gives the verdicts' own statuses, and the fit and
its cross-validation choose what agrees with the labels."""

import pytest

from checker.core.errors import ChecklistError
from checker.verdicts.fitted import parse_thresholds, threshold
from checker.many.fitting import ItemScores, cross_validate, cross_validate_needs, fit, fit_needs, scores_of
from checker.matching.matcher import FOUND_AT

from .conftest import DEMO  # noqa: F401  (fixtures/demo)


@pytest.mark.parametrize("name, checklist", [("wrist-fracture-manuscript.md", "validation-study"),
                                             ("kidney-stone-benchmark-proposal.md", "benchmark-proposal")])
def test_status_from_facet_scores_equals_the_report(name, checklist):
    from checker.engine import check_document

    path = DEMO / name
    report = check_document(path, checklist)
    labels = {it.id: "missing" for it in report.items}
    rows = scores_of(str(path), checklist, labels)
    assert len(rows) == len(report.items)
    by_id = {it.id: it for it in report.items}
    for r in rows:
        assert r.status_at(threshold(r.concept)) == by_id[r.item_id].status, r.item_id


def _row(doc, human, score, concept="data.source"):
    return ItemScores(doc, concept, concept, human, (("a", score),), (("a",),), False)


def test_fit_moves_a_threshold_only_for_a_clear_gain():
    # evidence of 0.4 is right in six documents out of six: a lower threshold agrees with them all
    rows = [_row(f"d{i}", "reported", 0.4) for i in range(6)]
    assert fit(rows)["data.source"] < 0.4
    # one document is not enough to leave the default
    assert fit(rows[:1])["data.source"] == FOUND_AT


def test_cross_validation_judges_each_document_with_the_others_fit():
    rows = [_row(f"d{i}", "reported", 0.4) for i in range(6)] + [_row("odd", "missing", 0.4)]
    judged = dict((r.document, status) for r, status in cross_validate(rows))
    # the odd document is judged by thresholds fitted on the six others, which call its evidence reported
    assert judged["odd"] == "reported"
    assert all(judged[f"d{i}"] == "reported" for i in range(6))


def test_fitted_file_values_are_checked():
    assert parse_thresholds("thresholds:\n  data.source: 0.65\n", "f.yaml") == {"data.source": 0.65}
    with pytest.raises(ChecklistError, match="above 0 and at most 1"):
        parse_thresholds("thresholds:\n  data.source: 1.5\n", "f.yaml")
    with pytest.raises(ChecklistError, match="mapping"):
        parse_thresholds("thresholds: [1, 2]\n", "f.yaml")


def test_an_item_without_a_concept_keeps_the_default():
    assert threshold("") == FOUND_AT


def _two(doc, human, a, b):
    # an item with facets a and b whose written needs are "a and b together"
    return ItemScores(doc, "data.source", "data.source", human, (("a", a), ("b", b)), (("a", "b"),), False,
                      checklist="validation-study")


def test_needs_fit_accepts_a_facet_alone_when_readers_call_it_reported():
    # readers call the item reported in six documents that show facet b alone: b alone should be enough
    rows = [_two(f"d{i}", "reported", 0.0, 1.0) for i in range(6)]
    fitted = fit_needs(rows)[("validation-study", "data.source")]
    assert ("b",) in fitted
    assert all(status == "reported" for _, status in cross_validate_needs(rows))
    # with one such document the written needs stay
    assert fit_needs(rows[:1])[("validation-study", "data.source")] == (("a", "b"),)


def test_needs_fit_keeps_written_needs_when_labels_agree_with_them():
    rows = ([_two(f"p{i}", "partial", 0.0, 1.0) for i in range(4)]
            + [_two(f"r{i}", "reported", 1.0, 1.0) for i in range(4)])
    assert fit_needs(rows)[("validation-study", "data.source")] == (("a", "b"),)
