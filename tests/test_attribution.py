"""Whose statement a sentence is, and that only this study's statements make an item reported."""

import json

import pytest

from checker.matching.attribution import BACKGROUND, OTHER_WORK, PLAN, TEMPLATE, THIS_STUDY, attribute
from checker.engine import check_document, check_text


@pytest.mark.parametrize("text, role, kind", [
    ("Three radiologists annotated each scan in a slice-based editor.", "methods", THIS_STUDY),
    ("We used images from the public archive [7], annotated by two readers.", "methods", THIS_STUDY),
    ("The images come from the public archive of the Northvale clinic [7].", "data", THIS_STUDY),
    ("Participants may not use external data or pretrained weights.", "body", THIS_STUDY),
    ("Each scan in this dataset was labelled by one technician.", "introduction", THIS_STUDY),
    ("Previous studies used three annotators per case.", "methods", OTHER_WORK),
    ("Okafor et al. annotated 300 scans with two radiologists.", "methods", OTHER_WORK),
    ("Two readers annotated the scans (Okafor and Lind, 2019).", "introduction", OTHER_WORK),
    ("Inter-rater agreement was 0.81 in a prior cohort [12].", "introduction", OTHER_WORK),
    ("Fractures of this kind are frequent in older adults¹⁴,¹⁵.", "introduction", OTHER_WORK),
    ("Annotators marked every lesion in the scans.", "related-work", OTHER_WORK),
    ("Please describe how the annotations of several readers were merged.", "body", TEMPLATE),
    ("Describe the number of annotators and their expertise.", "body", TEMPLATE),
    # a datasheet template's question with its own examples (common practice in datasheet templates); a statement
    # with an example in brackets stays the study's
    ("Who was involved in the data collection process (e.g., students, crowdworkers, contractors)?", "body",
     TEMPLATE),
    ("Are there recommended data splits (for example, training, validation and testing)?", "body", TEMPLATE),
    ("Two radiologists (e.g., a neuroradiologist) annotated each scan.", "methods", THIS_STUDY),
    ("In future work we plan to investigate consensus labels from several readers.", "discussion", PLAN),
    ("Bootstrap intervals could be explored in future editions.", "discussion", PLAN),
    ("Dice is widely used to compare segmentations.", "methods", BACKGROUND),
    ("Chronic kidney disease affects over 800 million people worldwide.", "introduction", BACKGROUND),
    ("Such systems could reduce inter-observer variability in routine reading.", "discussion", BACKGROUND),
    ("The proposed detector is intended as a second reader in emergency care.", "introduction", THIS_STUDY),
    # theses and student reports speak in the first person singular
    ("The data set that I used for this project comes from the public archive of a hospital [4].", "introduction",
     THIS_STUDY),
    ("In my experiments each scan was read once.", "discussion", THIS_STUDY),
    ("Table I lists the results of earlier methods [3].", "introduction", OTHER_WORK),
    ("Type I errors were reported by Okafor et al.", "methods", OTHER_WORK),
])
def test_attribution_of_typical_sentences(text, role, kind):
    assert attribute(text, role).kind == kind


def test_units_with_superscripts_are_not_citations():
    # "mm²" is a unit, not reference 2
    assert attribute("Each lesion larger than 5 mm² was outlined.", "methods").kind == THIS_STUDY


def test_a_templates_example_answers_are_not_the_documents_answer():
    # a datasheet left unanswered: the question's own examples name annotators, the document names none
    text = ("Collection process\n\n"
            "Who labelled the data (e.g., crowdworkers, an in-house annotation team, trained radiologists)?\n\n"
            "The images were taken with a handheld camera at three field sites.")
    items = {it.id: it for it in check_text(text, "dataset-description").items}
    assert items["reference.expertise"].status in ("missing", "not-applicable")


def test_other_work_never_makes_an_item_reported():
    text = ("Methods\n\n"
            "Previous studies had each case annotated by three radiologists with ten years of experience.\n\n"
            "Okafor et al. merged the readers' masks by majority vote.")
    report = check_text(text, "validation-study")
    items = {it.id: it for it in report.items}
    assert items["reference.annotators"].status != "reported"
    assert items["reference.fusion"].status != "reported"


def test_this_study_statement_is_reported_and_shows_its_attribution():
    text = ("Methods\n\n"
            "Each case was annotated independently by three radiologists with ten years of experience.")
    report = check_text(text, "validation-study")
    item = next(it for it in report.items if it.id == "reference.annotators")
    assert item.status == "reported"
    data = json.loads(json.dumps(report.to_dict()))
    ev = next(i for i in data["items"] if i["id"] == "reference.annotators")["evidence"]
    assert ev and ev[0]["attribution"] == THIS_STUDY


@pytest.mark.parametrize("text, defers_", [
    ("Lesions were segmented following the annotation protocol described in [12].", True),
    ("The annotation guidelines are available here.", True),
    ("All metrics are defined in the challenge paper.", True),
    ("See the documentation for the metric definitions.", True),
    ("Annotators followed the same protocol as in the previous edition.", True),
    ("Annotators followed the protocol described in Section 3.", False),
    ("The thresholds are listed in Table 2.", False),
    ("Lesions were drawn in a slice-based editor by two radiologists.", False),
])
def test_sentences_that_leave_details_to_another_document(text, defers_):
    from checker.matching.attribution import defers

    assert defers(text) is defers_


def _item(text, checklist, item_id):
    return next(it for it in check_text(text, checklist).items if it.id == item_id)


def test_details_left_to_another_document_make_the_item_partial_and_say_so():
    # the labelling convention of the evaluation set: deferred to an external link or paper = partial
    elsewhere = _item("Lesions were manually segmented following the annotation protocol described in [12].",
                      "validation-study", "reference.protocol")
    here = _item("Lesions were manually segmented following a written annotation guideline with a worked example "
                 "per lesion type.", "validation-study", "reference.protocol")
    assert (elsewhere.status, here.status) == ("partial", "reported")
    assert "only referred to another document" in elsewhere.reason
    metrics = _item("Segmentations are scored with Dice and the Hausdorff distance at the 95th percentile, as "
                    "defined in the challenge paper.", "benchmark-proposal", "metrics.definition")
    assert metrics.status == "partial"


def test_the_sentence_that_says_most_about_an_item_is_quoted_first():
    # two sentences carry the same facet; the one with more of the item's cues is the one a reader wants first
    text = ("Evaluation\n\nWe report the Dice coefficient.\n\n"
            "Segmentations are compared with the Dice coefficient, the Jaccard index, the average symmetric surface "
            "distance and the Hausdorff distance.")
    item = _item(text, "validation-study", "metrics.definition")
    assert item.evidence[0].text.startswith("Segmentations are compared")


def test_evidence_under_a_heading_that_names_the_topic_is_quoted_first(tmp_path):
    # the same facet in two methods sections: the one whose heading names the annotation is the one a reviewer
    # wants to see first, though it comes later in the document
    md = tmp_path / "draft.md"
    md.write_text("# Methods\n\n## Model training\n\nThree radiologists reviewed the augmented training images.\n\n"
                  "## Reference annotation\n\nTwo radiologists outlined every lesion.\n", encoding="utf-8")
    report = check_document(md, "validation-study")
    annotators = next(it for it in report.items if it.id == "reference.annotators")
    assert annotators.evidence[0].text.startswith("Two radiologists outlined")
    assert annotators.evidence[1].text.startswith("Three radiologists reviewed")
    # the order only: the status comes from the facets, wherever they stand
    moved = tmp_path / "moved.md"
    moved.write_text(md.read_text(encoding="utf-8").replace("## Reference annotation", "## Further details"),
                     encoding="utf-8")
    plain = next(it for it in check_document(moved, "validation-study").items if it.id == "reference.annotators")
    assert plain.evidence[0].text.startswith("Three radiologists reviewed")
    assert plain.status == annotators.status
