"""The concept library: concepts defined once and shared by the checklists, validated like a checklist."""

import pytest

from checker.matching.checklist import builtin_concepts, load_checklist, parse_checklist, parse_concepts
from checker.engine import check_text
from checker.core.errors import ChecklistError

SHARED = ["data.source", "data.counts", "data.split", "data.external-policy", "reference.annotators",
          "reference.expertise", "reference.protocol", "reference.fusion", "reference.agreement",
          "reference.blinding", "results.missing", "metrics.definition", "metrics.aggregation", "ranking.method",
          "ranking.uncertainty", "availability.data-code", "governance.organizer-participation"]


@pytest.mark.parametrize("cid", ["validation-study", "benchmark-proposal", "dataset-description"])
def test_every_shared_item_takes_its_cues_from_the_library(cid):
    checklist = load_checklist(cid)
    concepts = builtin_concepts()
    for item in checklist.items:
        if item.id in SHARED:
            assert item.concept == item.id
            library = {f.id for f in concepts[item.id].facets}
            assert {f.id for f in item.facets} <= library


def test_a_cue_added_to_a_concept_reaches_every_checklist():
    # the same sentence, one concept: all three checklists find the single-reader design
    sentence = "Each image was labelled by a single radiologist."
    for cid in ("validation-study", "benchmark-proposal", "dataset-description"):
        item = next(it for it in check_text(sentence, cid).items if it.id == "reference.fusion")
        assert item.status == "reported", cid


LIB = """id: concepts
version: "1"
vocabulary:
  PET: [cats, dogs, guinea pigs]
concepts:
  - id: demo.pets
    facets:
      - id: count
        regex: ['\\b{NUMBER}\\s+{PET}\\b']
      - id: word
        phrases: [pets]
    needs: [[count]]
"""


def test_vocabulary_words_become_one_regex_group():
    lib = parse_concepts(LIB, "lib.yaml")
    rx = lib["demo.pets"].facets[0].cues.regex[0]
    assert "guinea\\s+pigs" in rx and "{PET}" not in rx


def _checklist(item_yaml: str) -> str:
    return ("id: demo\ntitle: Demo\nversion: 1\nitems:\n  - id: demo.pets\n    group: g\n    title: Pets\n"
            "    question: q?\n    why: w\n    ask: a\n" + item_yaml)


def test_an_item_may_choose_facets_and_needs_of_its_concept():
    lib = parse_concepts(LIB, "lib.yaml")
    cl = parse_checklist(_checklist("    concept: demo.pets\n    uses: [word]\n"), "c.yaml", concepts=lib)
    item = cl.items[0]
    assert [f.id for f in item.facets] == ["word"] and item.needs == (("word",),)


def test_an_item_may_say_a_facet_completes_it_only_without_another():
    # a count of pets is the whole answer, unless the text also speaks of pets in words it leaves vague
    lib = parse_concepts(LIB, "lib.yaml")
    cl = parse_checklist(_checklist("    concept: demo.pets\n    only_without: {count: [word]}\n"), "c.yaml",
                         concepts=lib)
    assert dict((f.id, f.only_without) for f in cl.items[0].facets) == {"count": ("word",), "word": ()}
    assert lib["demo.pets"].facets[0].only_without == ()  # the concept itself is unchanged
    from checker.verdicts.decide import decide, only_without_of

    held = only_without_of(cl.items[0])
    assert decide({"count"}, (("count",),), False, only_without=held) == "reported"
    assert decide({"count", "word"}, (("count",),), False, only_without=held) == "partial"


@pytest.mark.parametrize("item_yaml, message", [
    ("    concept: demo.pets\n    only_without: {count: [wrod]}\n",
     "names facet 'wrod', which is not another facet of this item (did you mean 'word'?)"),
    ("    concept: demo.pet\n", "no concept 'demo.pet' in the concept library (did you mean 'demo.pets'?)"),
    ("    concept: demo.pets\n    uses: [colour]\n", "names facet 'colour', which concept 'demo.pets' does not have"),
    ("    concept: demo.pets\n    facets:\n      - id: x\n        phrases: [x]\n",
     "takes its facets from its concept or lists its own, not both"),
])
def test_concept_mistakes_are_located(item_yaml, message):
    lib = parse_concepts(LIB, "lib.yaml")
    with pytest.raises(ChecklistError) as exc:
        parse_checklist(_checklist(item_yaml), "c.yaml", concepts=lib)
    text = str(exc.value)
    assert message in text and "c.yaml:" in text


def test_heading_words_come_from_the_concept_unless_the_item_gives_its_own():
    lib = parse_concepts(LIB.replace("    needs: [[count]]\n", "    needs: [[count]]\n    headings: [animals, pets]\n"),
                         "lib.yaml")
    inherited = parse_checklist(_checklist("    concept: demo.pets\n"), "c.yaml", concepts=lib).items[0]
    own = parse_checklist(_checklist("    concept: demo.pets\n    headings: [household]\n"), "c.yaml",
                          concepts=lib).items[0]
    assert inherited.headings == ("animals", "pets") and own.headings == ("household",)


def test_a_heading_word_without_letters_is_located():
    with pytest.raises(ChecklistError, match=r"c.yaml:\d+:\d+: item \"demo.pets\" -> headings: '42' is not a heading"):
        parse_checklist(_checklist("    concept: demo.pets\n    headings: ['42']\n"), "c.yaml",
                        concepts=parse_concepts(LIB, "lib.yaml"))


def test_every_shared_concept_names_its_topic_for_headings():
    concepts = builtin_concepts()
    assert all(concepts[cid].headings for cid in SHARED)


def test_a_bad_vocabulary_name_is_located():
    with pytest.raises(ChecklistError, match=r"lib.yaml:4:\d+: vocabulary -> pets: a word list's name"):
        parse_concepts(LIB.replace("PET:", "pets:"), "lib.yaml")


def _facet(report, item_id, facet_id):
    item = next(i for i in report.items if i.id == item_id)
    return next(f for f in item.facets if f.id == facet_id)


def test_a_phrase_marked_exact_is_not_matched_by_its_lemma():
    # "=mean" in the library: the statistic, not the verb ("this means") nor "meaning"
    loose = check_text("Methods\n\nThis simply means that the accuracy of the model fluctuates between runs.")
    assert not _facet(loose, "metrics.aggregation", "statistic").found
    plain = check_text("Methods\n\nWe report the mean accuracy over all test cases.")
    assert _facet(plain, "metrics.aggregation", "statistic").found


def test_a_lone_equals_sign_is_not_a_phrase():
    bad = (LIB.replace("phrases: [pets]", "phrases: ['=']"))
    with pytest.raises(ChecklistError, match="marks a phrase matched as written"):
        parse_concepts(bad, "lib.yaml")


def test_an_item_applies_only_when_text_that_counts_mentions_it():
    # a dataset description that mentions ranking only in a sentence about other work ranks nothing itself
    text = ("Data\n\nThe collection holds 240 scans from two hospitals, each labelled by one technician.\n\n"
            "Related work\n\nOkafor et al. ranked twelve methods on an earlier collection [4].")
    report = check_text(text, "dataset-description")
    assert next(i for i in report.items if i.id == "ranking.method").status == "not-applicable"
    text = text.replace("Okafor et al. ranked twelve methods on an earlier collection [4].",
                        "We ranked three baseline methods by their mean Dice on the test split.")
    report = check_text(text, "dataset-description")
    assert next(i for i in report.items if i.id == "ranking.method").status != "not-applicable"


def _status(text, item_id, checklist="validation-study"):
    return next(i for i in check_text("Methods\n\n" + text, checklist).items if i.id == item_id).status


def test_a_metric_with_nothing_to_choose_is_reported_by_its_name_alone():
    # an error or a correlation has no threshold, tolerance or averaging to state; a sensitivity does
    assert _status("Forecasts are compared by their root mean square error.", "metrics.definition") == "reported"
    assert _status("We report accuracy, sensitivity and specificity.", "metrics.definition") == "partial"
    assert _status("Segmentations are compared with the Dice coefficient.", "metrics.definition") == "partial"
    # a plain metric completes the item only when no metric of the document leaves something to choose
    both = "We report the overall accuracy.\n\nSecondary metrics were the F1 score of each class."
    assert _status(both, "metrics.definition") == "partial"


def test_only_without_must_name_another_facet_of_the_item():
    bad = LIB.replace("        phrases: [pets]\n", "        phrases: [pets]\n        only_without: [colour]\n")
    with pytest.raises(ChecklistError, match=r"only_without: names facet 'colour', which is not another facet"):
        parse_concepts(bad, "lib.yaml")


def test_a_reference_computed_by_a_stated_method_says_how_it_was_made_unless_people_drew_it():
    derived = "Hourly flow observations from the national gauge network serve as the ground truth."
    drawn = "Contours drawn by two radiologists served as the ground truth."
    assert _status(derived, "reference.protocol") == "reported"
    assert _status(drawn, "reference.protocol") != "reported"


def test_a_concept_may_hold_the_judge_to_its_needs_and_its_items_inherit_it():
    lib = parse_concepts(LIB.replace("    needs: [[count]]\n", "    needs: [[count]]\n    judge_needs_facet: true\n"),
                         "lib.yaml")
    assert lib["demo.pets"].judge_needs_facet
    cl = parse_checklist(_checklist("    concept: demo.pets\n"), "c.yaml", concepts=lib)
    assert cl.items[0].judge_needs_facet
    assert not parse_concepts(LIB, "lib.yaml")["demo.pets"].judge_needs_facet
    bad = LIB.replace("    needs: [[count]]\n", "    needs: [[count]]\n    judge_needs_facet: often\n")
    with pytest.raises(ChecklistError, match=r"judge_needs_facet: expected true or false, got text"):
        parse_concepts(bad, "lib.yaml")
