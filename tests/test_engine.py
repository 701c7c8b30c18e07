"""The engine on small texts: facets, needs, partial vs reported, near, unless, applicability, references,
section weights, waivers and facts."""

from __future__ import annotations

import json

from checker.core.config import Config
from checker.engine import check_text, document_from_text
from checker.matching.matcher import CompiledChecklist
from checker.verdicts.decide import evaluate

from .conftest import DATA

MINI = str(DATA / "checklists" / "mini.yaml")


def status(text: str, item: str = "reference.annotators", config: Config | None = None) -> str:
    r = check_text(text, MINI, config)
    return next(it for it in r.items if it.id == item).status


def item(text: str, item_id: str = "reference.annotators"):
    return next(it for it in check_text(text, MINI).items if it.id == item_id)


def test_both_facets_make_it_reported_one_makes_it_partial():
    assert status("Three board-certified radiologists annotated every scan.") == "reported"
    it = item("The scans were annotated by two radiologists.")
    assert it.status == "partial"
    assert "not found: their expertise" in it.reason
    assert status("A senior radiologist drew every outline of the reference standard.") == "partial"


def test_nothing_found_is_missing_and_no_annotation_at_all_is_not_applicable():
    assert status("The reference standard came from pathology. We trained a network.") == "missing"
    it = item("We trained a network on radiographs and measured its speed.")
    assert it.status == "not-applicable"
    assert "describes no human reference annotation" in it.reason


def test_number_words_and_digits_become_facts_with_locations():
    it = item("Intro paragraph.\n\nThe ground truth was annotated by 4 raters and, later,\nthree board-certified "
              "radiologists.")
    values = [f["value"] for f in it.facts_dict()["annotators"]]
    assert values == [4, 3]
    assert it.facts_dict()["annotators"][0]["location"]["line"] == 3


def test_unless_cancels_a_plan():
    assert item("In future work we plan to have three radiologists annotate the labels.").facets[0].found is False


def test_near_requires_the_other_cue_close_by():
    far = "We compared five methods.\n\nThe weather was fine.\n\nA confidence interval was computed for the mean age."
    assert status(far, "ranking.uncertainty") == "missing"
    close = "We compared five methods. Confidence intervals came from 2,000 bootstrap samples of the differences."
    it = item(close, "ranking.uncertainty")
    assert it.status == "reported"
    assert it.facts_dict()["bootstrap_samples"][0]["value"] == 2000


def test_references_never_count_and_related_work_counts_little():
    text = ("# Methods\n\nThe images were labelled by a team.\n\n# References\n\n"
            "Doe J. Three board-certified radiologists annotated chest films. J Imaging 2020.")
    doc = document_from_text(text.replace("# ", ""))
    assert doc  # plain paragraphs: headings are not recognised in this helper, so build blocks by hand below
    from checker.reading.document import Block, Document, Location
    from checker.reading.sections import assign_sections

    blocks = [
        Block("Methods", "heading", Location("t", line=1), level=1),
        Block("The images were labelled by a team.", "paragraph", Location("t", line=3)),
        Block("Related work", "heading", Location("t", line=5), level=1),
        Block("Earlier, three board-certified radiologists annotated chest films.", "paragraph", Location("t", line=7)),
        Block("References", "heading", Location("t", line=9), level=1),
        Block("Doe J. Three board-certified radiologists annotated chest films. J Imaging 2020.", "paragraph",
              Location("t", line=11)),
    ]
    d = Document("t", "text", tuple(assign_sections(blocks)))
    compiled = CompiledChecklist(__import__("checker.matching.checklist", fromlist=["x"]).load_checklist(MINI))
    scan = compiled.scan(d)
    assert all(s.role != "references" for s in scan.sentences)
    res = evaluate(compiled, scan)[0]
    assert res.status == "missing"
    assert "other work" in res.reason  # the related-work sentence is attributed to other work


def test_waiver_needs_no_evidence_and_says_why():
    cfg = Config(waivers={"reference.annotators": "simulated reference, no annotators"})
    it = next(i for i in check_text("Nothing here.", MINI, cfg).items if i.id == "reference.annotators")
    assert it.status == "waived" and "simulated reference" in it.reason


def test_evidence_quotes_mark_the_matched_words():
    it = item("Three board-certified radiologists annotated every scan.")
    ev = it.evidence[0]
    marked = [ev.text[s:e] for s, e in ev.matches]
    assert any("board-certified" in m for m in marked) and any("radiologists" in m for m in marked)
    assert "every scan" not in " ".join(marked)


def test_json_is_byte_identical_on_rerun():
    text = "Three board-certified radiologists annotated every scan. We compared two methods with a Wilcoxon test."
    a = json.dumps(check_text(text, MINI).to_dict(), ensure_ascii=False)
    b = json.dumps(check_text(text, MINI).to_dict(), ensure_ascii=False)
    assert a == b


def test_every_regex_of_a_facet_is_searched(tmp_path):
    # two regexes on one facet, each with its own literal word: both must be searched
    text = (DATA / "checklists" / "mini.yaml").read_text().replace(
        "regex: ['(?P<bootstrap_samples>{NUMBER})\\s+bootstrap']",
        "regex: ['(?P<bootstrap_samples>{NUMBER})\\s+bootstrap', 'wilcoxon\\s+signed']")
    path = tmp_path / "two.yaml"
    path.write_text(text)
    r = check_text("We compared the methods with 1,000 bootstrap samples.", str(path))
    assert next(i for i in r.items if i.id == "ranking.uncertainty").status == "reported"


def test_the_engine_takes_a_documents_bytes_as_well_as_its_path(tmp_path):
    """Bytes sent to a worker give the report of the file itself, located at the file's name; nothing is
    written to disk for them, and their size is held to --max-bytes like a file's."""
    import dataclasses

    import pytest

    from checker.core.errors import InputError
    from checker.core.limits import DEFAULT_LIMITS
    from checker.engine import check_document

    doc = tmp_path / "study.md"
    doc.write_text("# Methods\n\nTwo radiologists annotated 120 scans of the test set.\n", encoding="utf-8")
    data = doc.read_bytes()
    from_file = check_document(str(doc), MINI)
    elsewhere = str(tmp_path / "not-here" / "study.md")  # a name only: the worker cannot see the file
    from_bytes = check_document(elsewhere, MINI, data=data)
    assert from_bytes.document_path == elsewhere
    assert json.dumps(from_bytes.to_dict()).replace(elsewhere, str(doc)) == json.dumps(from_file.to_dict())
    assert not (tmp_path / "not-here").exists()
    small = dataclasses.replace(DEFAULT_LIMITS, max_bytes=10)
    with pytest.raises(InputError, match="over the limit"):
        check_document(elsewhere, MINI, None, small, data=data)


def test_a_sentence_met_twice_is_quoted_once_and_leaves_its_place_to_another():
    # a site's pages repeat their lines (a download link on every page), an abstract repeats the body: a reader
    # wants each statement once, and the room for another passage
    line = "The evaluation code is available at https://example.org/harbour/eval."
    text = "\n\n".join([line, "Overview of the tasks.", line,
                        "The images are available at https://example.org/harbour/data.", line])
    item = next(it for it in check_text(text).items if it.id == "availability.data-code")
    quotes = [e.text for e in item.evidence]
    assert quotes.count(line) == 1
    assert any("harbour/data" in q for q in quotes)
