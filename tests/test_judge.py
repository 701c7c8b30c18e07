"""The learned judge: it moves a cue verdict only where quotes back the new one, says so in the reason, computes
what scikit-learn's logistic regression computes, and can be turned off."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from checker.core.config import Config, parse_config
from checker.core.errors import ChecklistError, UsageError
from checker.engine import check_text, compiled_for
from checker.matching.checklist import builtin_ids, load_checklist
from checker.verdicts.decide import evaluate
from checker.verdicts.judge import (Models, allowed, judge_features, parse_model, predict, rejudge, sentence_features,
                                    shipped)

from .conftest import DEMO

N_FEATURES = len(judge_features([], "missing", [], "validation-study"))
TEXT = ("Two radiologists with ten years of experience each outlined every lesion. We report the Dice "
        "similarity coefficient per case.")


def _saying(statuses: dict[str, str]) -> Models:
    """Models whose judge says, per item named, that status whatever it reads (one class)."""
    sentence = {i: {"bias": 0.0, "cue": 0.0, "words": {}} for i in statuses}
    return Models.build(16, sentence, {i: {"classes": [s], "coef": [], "intercept": []} for i, s in statuses.items()})


def _always(status: str, items: list[str]) -> Models:
    """Models whose judge says `status` whatever it reads, for every item named."""
    return _saying({i: status for i in items})


def _scan_and_results(text: str, checklist: str = "validation-study"):
    from checker.engine import document_from_text

    compiled = compiled_for(checklist)
    scan = compiled.scan(document_from_text(text))
    return scan, evaluate(compiled, scan, {})


def test_the_judge_never_makes_an_item_reported_without_a_quote_to_show():
    assert allowed("missing", "reported", has_evidence=False) == "missing"
    assert allowed("missing", "partial", has_evidence=False) == "missing"
    assert allowed("missing", "partial", has_evidence=True) == "partial"
    # one step up at most from what the cues found: a false 'reported' is the costliest error
    assert allowed("missing", "reported", has_evidence=True) == "partial"
    assert allowed("reported", "partial", has_evidence=True) == "reported"  # complete cues are not second-guessed
    assert allowed("reported", "missing", has_evidence=True) == "missing"
    assert allowed("partial", "reported", has_evidence=True) == "reported"
    # the cues' not-applicable and a user's waiver are not the judge's to move
    assert allowed("not-applicable", "reported", has_evidence=True) == "not-applicable"
    assert allowed("waived", "missing", has_evidence=True) == "waived"
    # where the cues found only a mention and the concept holds the judge to its needs: partial at most
    assert allowed("partial", "reported", has_evidence=True, mention_only=True) == "partial"
    assert allowed("missing", "reported", has_evidence=True, mention_only=True) == "partial"
    assert allowed("partial", "missing", has_evidence=True, mention_only=True) == "missing"


def test_a_concept_can_keep_the_judge_from_completing_what_only_a_mention_found():
    # an approximate count is partial by the labelling conventions (shared/eval/dev/README.md); a judge that says
    # reported is held to partial where the concept sets judge_needs_facet, and obeyed where it does not
    text = "The archive contains approximately 1,100 annotated reading passages from six school districts."
    scan, results = _scan_and_results(text)
    counts = next(r for r in results if r.id == "data.counts")
    assert counts.status == "partial" and not any(f.found for f in counts.facets if f.id in ("split_counts", "total"))
    assert load_checklist("validation-study").item("data.counts").judge_needs_facet
    models = _saying({"data.counts": "reported"})
    held = rejudge(scan, results, models, needed={"data.counts": frozenset({"split_counts", "total", "scheme"})})
    free = rejudge(scan, results, models)
    assert next(r for r in held if r.id == "data.counts").status == "partial"
    assert next(r for r in free if r.id == "data.counts").status == "reported"


def test_an_approximate_challenge_dataset_stays_partial_under_the_shipped_judge(learned_judge):
    # the shipped judge alone would call this count reported (it did before the concept held it back); only a
    # size in numbers completes it (the labelling conventions: approximate counts are partial)
    page = ("# The Harbour Reading Challenge\n\n## Data\n\nThe challenge data contains approximately 1,100 annotated "
            "reading passages from six school districts of the Harbour region.\nAround 900 passages are released for "
            "training and the remaining passages form the hidden test set.\nEach passage was manually annotated with "
            "its difficulty level.\n\n## Evaluation\n\nSubmissions are scored with macro-averaged F1 over the "
            "difficulty levels.\n")
    counts = next(it for it in check_text(page, "benchmark-proposal").items if it.id == "data.counts")
    assert counts.status == "partial", counts.reason


def test_a_moved_verdict_says_so_and_keeps_the_cues_quotes():
    scan, results = _scan_and_results(TEXT)
    before = {r.id: r for r in results}
    assert before["reference.annotators"].status == "reported"
    from checker.verdicts.judge import cue_sentences

    silent = [r.id for ii, r in enumerate(results) if r.status == "missing" and not cue_sentences(scan, ii)]
    assert silent
    after = {r.id: r for r in rejudge(scan, results, _saying({"reference.annotators": "missing",
                                                                **{i: "partial" for i in silent}}))}
    moved = after["reference.annotators"]
    assert moved.status == "missing"
    assert moved.reason.startswith("judged missing") and "the cues alone said reported" in moved.reason
    assert moved.evidence == before["reference.annotators"].evidence  # the quotes stay the cues' sentences
    # an item without a sentence where its cues were found stays missing, whatever the judge says
    assert all(after[i].status == "missing" for i in silent)
    # items the models do not know keep the cues' verdict
    assert after["metrics.definition"] == before["metrics.definition"]


def test_the_judge_does_not_call_incomplete_what_the_cues_found_complete():
    scan, results = _scan_and_results(TEXT)
    before = {r.id: r for r in results}
    assert before["reference.annotators"].status == "reported"
    after = {r.id: r for r in rejudge(scan, results, _always("partial", ["reference.annotators"]))}
    assert after["reference.annotators"] == before["reference.annotators"]


def test_an_item_raised_from_missing_quotes_the_cue_sentences_that_counted_too_little():
    # the cues' verdict as it is when the annotators sentence counts too little (e.g. a low-weight section):
    # missing, no quotes, but a cue hit in the scan; a judge that calls the item partial must show that sentence
    import dataclasses

    scan, results = _scan_and_results(TEXT)
    weak = tuple(dataclasses.replace(r, status="missing", evidence=()) if r.id == "reference.annotators" else r
                 for r in results)
    after = next(r for r in rejudge(scan, weak, _always("partial", ["reference.annotators"]))
                 if r.id == "reference.annotators")
    assert after.status == "partial" and after.reason.startswith("judged partial")
    assert "the cues alone said missing" in after.reason
    assert after.evidence and "radiologists" in after.evidence[0].text
    assert after.evidence[0].matches  # the cue's words are marked as in any quote


def test_a_judged_missing_item_asks_about_the_passages_it_found():
    from checker.engine import build_report, document_from_text
    from checker.reports.markdown import request

    scan, results = _scan_and_results(TEXT)
    moved = rejudge(scan, results, _always("missing", ["reference.annotators"]))
    item = next(r for r in moved if r.id == "reference.annotators")
    assert item.status == "missing" and item.evidence
    report = build_report(document_from_text(TEXT), compiled_for("validation-study").checklist, moved, "", ())
    text = request(item, report)
    assert "do not seem to answer it" in text and "could not find" not in text


def test_scores_and_statuses_equal_scikit_learns_logistic_regression():
    # External check: the judge reads its shipped coefficients the way scikit-learn's LogisticRegression
    # predicts (predict_proba for the sentence scorer, predict for the three-class judge)
    np = pytest.importorskip("numpy")
    linear = pytest.importorskip("sklearn.linear_model")
    rng = np.random.RandomState(3)
    buckets = 64
    features = [sorted(set(rng.randint(0, buckets, size=rng.randint(1, 8)).tolist())) for _ in range(120)]
    hit = rng.rand(120) < 0.3
    x = np.zeros((120, buckets + 1))
    for i, fs in enumerate(features):
        x[i, fs] = 1
    x[:, buckets] = hit
    y = ((x[:, 3] + x[:, 7] + hit) > 0.5).astype(int)
    lr = linear.LogisticRegression(C=0.5, solver="liblinear").fit(x, y)
    words = {b: float(w) for b, w in enumerate(lr.coef_[0][:buckets]) if w}
    sentence = {"bias": float(lr.intercept_[0]), "cue": float(lr.coef_[0][buckets]), "words": words}
    j = rng.rand(90, N_FEATURES)
    labels = np.array(["missing", "partial", "reported"])[(j[:, 0] * 2 + j[:, 5] + rng.rand(90) * 0.5).astype(int) % 3]
    judge = linear.LogisticRegression(max_iter=3000).fit(j, labels)
    models = Models.build(buckets, {"data.source": sentence},
                          {"data.source": {"classes": list(judge.classes_), "coef": judge.coef_.tolist(),
                                           "intercept": judge.intercept_.tolist()}})
    z, damp = models.scores(features, [0.9] * 120)
    got = models.item_scores(z, damp, "data.source", set(np.flatnonzero(hit).tolist()))
    assert np.allclose(got, lr.predict_proba(x)[:, 1], atol=1e-9)
    assert [predict(models.judges["data.source"], row.tolist()) for row in j] == judge.predict(j).tolist()
    # the shipped judges ask first whether the item is there at all: partial and reported together against
    # missing, from the same predict_proba, then the likelier of the two
    first = {**models.judges["data.source"], "positive_first": True}
    p = judge.predict_proba(j)
    k = {c: i for i, c in enumerate(judge.classes_)}
    expected = ["missing" if p[n, k["missing"]] >= p[n, k["partial"]] + p[n, k["reported"]] else
                ("partial" if p[n, k["partial"]] >= p[n, k["reported"]] else "reported") for n in range(len(j))]
    assert [predict(first, row.tolist()) for row in j] == expected
    assert expected != judge.predict(j).tolist()  # the two rules differ on this sample


def test_an_item_that_is_likelier_there_than_not_is_not_judged_missing():
    # missing 0.4, partial 0.3, reported 0.3: the likeliest single status is missing, yet the item is likelier
    # there (0.6) than not; the judge then says which of the two, partial on a tie
    import math

    judge = {"classes": ["missing", "partial", "reported"], "coef": [[0.0], [0.0], [0.0]],
             "intercept": [math.log(0.4), math.log(0.3), math.log(0.3)]}
    assert predict(judge, [0.0]) == "missing"
    assert predict({**judge, "positive_first": True}, [0.0]) == "partial"


def test_a_sentence_standing_where_evidence_counts_little_scores_lower():
    models = Models.build(8, {"a": {"bias": 2.0, "cue": 0.0, "words": {}}}, {})
    z, damp = models.scores([[1], [1]], [0.9, 0.3])
    high, low = models.item_scores(z, damp, "a", set())
    assert low == pytest.approx(high / 3)


def test_features_are_hashed_words_numbers_and_where_the_sentence_stands():
    a = sentence_features(["two", "rater", "label", "120", "case"], "methods", "paragraph", "this-study", 1 << 18)
    b = sentence_features(["two", "rater", "label", "75", "case"], "methods", "paragraph", "this-study", 1 << 18)
    c = sentence_features(["two", "rater", "label", "75", "case"], "introduction", "paragraph", "this-study", 1 << 18)
    assert a == b  # any number is the same word
    assert a != c  # the section is a feature
    assert a == sorted(set(a)) and all(0 <= f < 1 << 18 for f in a)


def test_the_words_of_the_headings_a_sentence_stands_under_are_features():
    words = ["two", "rater", "label", "120", "case"]

    def under(*heading):
        return sentence_features(words, "methods", "paragraph", "this-study", 1 << 18, heading)

    assert under("Methods", "Annotation protocol") != under("Methods", "Training")
    assert under("Methods", "Annotation protocol") != under()
    # the two innermost headings count, whatever their case; the outer ones add nothing
    assert under("Part II", "Methods", "Annotation protocol") == under("Study", "METHODS", "annotation protocol")


def test_a_damaged_model_file_is_named():
    with pytest.raises(ChecklistError, match=r"checklists/judge.json:1:1: not a judge model"):
        parse_model("{not json", "checklists/judge.json")
    bad = {"buckets": 8, "items": {"x": {"sentence": {"bias": 0, "cue": 0, "words": {"9": 1.0}},
                                         "judge": {"classes": ["reported"], "coef": [], "intercept": []}}}}
    with pytest.raises(ChecklistError, match="outside 0..7"):
        parse_model(json.dumps(bad), "judge.json")
    bad["items"]["x"]["sentence"]["words"] = {}
    bad["items"]["x"]["judge"] = {"classes": ["done"], "coef": [], "intercept": []}
    with pytest.raises(ChecklistError, match="unknown status"):
        parse_model(json.dumps(bad), "judge.json")


def test_the_shipped_judge_knows_only_items_of_the_built_in_checklists():
    models = shipped()
    assert models is not None, "checklists/judge.json is shipped (python benchmarks/learned.py --write)"
    ids = {it.id for cid in builtin_ids() for it in load_checklist(cid).items}
    assert set(models.judges) <= ids
    assert {"data.source", "reference.annotators", "metrics.definition"} <= set(models.judges)


def test_the_settings_and_the_command_line_can_leave_the_verdicts_to_the_cues(learned_judge, monkeypatch):
    assert Config().judge == "learned"
    monkeypatch.setenv("STUDYGAP_JUDGE", "cues")
    assert Config().judge == "cues"
    monkeypatch.setenv("STUDYGAP_JUDGE", "learned")
    assert parse_config({"judge": "cues"}, "studygap.yaml").judge == "cues"
    with pytest.raises(UsageError, match="judge must be 'learned' or 'cues'"):
        parse_config({"judge": "model"}, "studygap.yaml")
    doc = DEMO / "wrist-fracture-manuscript.md"
    out = {}
    for judge in ("learned", "cues"):
        p = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(doc), "--format", "json", "--no-cache",
                            "--quiet", "--judge", judge], capture_output=True, text=True, check=False)
        assert p.returncode == 0, p.stderr
        out[judge] = {it["id"]: it for it in json.loads(p.stdout)["items"]}
    for item_id, it in out["cues"].items():
        assert not it["reason"].startswith("judged "), item_id
    for item_id, it in out["learned"].items():
        if it["status"] != out["cues"][item_id]["status"]:
            assert it["reason"].startswith("judged "), item_id


def test_a_checklist_of_the_users_own_keeps_the_cues_verdicts(tmp_path):
    own = tmp_path / "mine.yaml"
    from importlib import resources

    own.write_text(resources.files("checker.checklists").joinpath("validation-study.yaml").read_text(encoding="utf-8"),
                   encoding="utf-8")
    report = check_text(TEXT, str(own))
    assert not any(it.reason.startswith("judged ") for it in report.items)


ORDER_TEXT = ("The software is available under an open licence at https://example.org/harbour/tool. "
              "The evaluation code is available at https://example.org/harbour/eval.")


def _favouring(item: str, word: str, buckets: int = 1 << 18) -> Models:
    """Models whose sentence scorer for `item` likes sentences with `word` and whose judge agrees with the cues."""
    import zlib

    sentence = {item: {"bias": -1.0, "cue": 0.0, "words": {zlib.crc32(word.encode()) % buckets: 4.0}}}
    return Models.build(buckets, sentence, {})


def test_the_sentence_scorer_orders_an_items_quotes_and_never_its_status():
    # two sentences with the same cues: the cues alone quote first the one with more of its facets' words; with a scorer
    # that finds the other likelier to hold what the item asks, a reader sees that one first, and the verdicts stay
    from checker.engine import document_from_text
    from checker.verdicts.judge import SentenceScores

    compiled = compiled_for("validation-study")
    scan = compiled.scan(document_from_text(ORDER_TEXT))
    plain = {r.id: r for r in evaluate(compiled, scan, {})}
    item = "availability.data-code"
    assert len(plain[item].evidence) == 2 and "harbour/eval" in plain[item].evidence[0].text
    ordered = {r.id: r for r in evaluate(compiled, scan, {}, SentenceScores(scan, _favouring(item, "software")))}
    assert "harbour/tool" in ordered[item].evidence[0].text
    assert {e.text for e in ordered[item].evidence} == {e.text for e in plain[item].evidence}
    assert {i: r.status for i, r in ordered.items()} == {i: r.status for i, r in plain.items()}
    # items the scorer does not know keep the cues' order
    assert all(ordered[i] == plain[i] for i in plain if i != item)


def test_the_default_report_quotes_in_the_scorers_order_and_the_cues_setting_in_the_cues_order(learned_judge,
                                                                                               monkeypatch):
    # the order a user sees comes from the same shipped models as the judge; with `--judge cues` the cues' order
    from checker.verdicts import judge

    item = "availability.data-code"
    models = _favouring(item, "software")
    monkeypatch.setattr(judge, "shipped", lambda: models)
    learned = next(it for it in check_text(ORDER_TEXT).items if it.id == item)
    assert "harbour/tool" in learned.evidence[0].text
    monkeypatch.setenv("STUDYGAP_JUDGE", "cues")
    cues = next(it for it in check_text(ORDER_TEXT).items if it.id == item)
    assert "harbour/eval" in cues.evidence[0].text


def test_a_facets_own_cue_weighs_in_as_scikit_learns_logistic_regression_computes():
    # External check, as above: a sentence scorer with a column for whether each facet's own cue matched the
    # sentence scores what scikit-learn's LogisticRegression.predict_proba gives for the same columns
    np = pytest.importorskip("numpy")
    linear = pytest.importorskip("sklearn.linear_model")
    rng = np.random.RandomState(5)
    buckets, n = 32, 150
    features = [sorted(set(rng.randint(0, buckets, size=rng.randint(1, 6)).tolist())) for _ in range(n)]
    hit = rng.rand(n) < 0.4
    count = hit & (rng.rand(n) < 0.5)  # the facet "count" matched a part of the sentences with a cue
    x = np.zeros((n, buckets + 2))
    for i, fs in enumerate(features):
        x[i, fs] = 1
    x[:, buckets], x[:, buckets + 1] = hit, count
    y = ((x[:, 2] + 2 * count + rng.rand(n)) > 1.2).astype(int)
    lr = linear.LogisticRegression(C=0.5, solver="liblinear").fit(x, y)
    sentence = {"bias": float(lr.intercept_[0]), "cue": float(lr.coef_[0][buckets]),
                "words": {b: float(w) for b, w in enumerate(lr.coef_[0][:buckets]) if w},
                "facets": {"count": float(lr.coef_[0][buckets + 1])}}
    models = Models.build(buckets, {"data.counts": sentence}, {})
    z, damp = models.scores(features, [0.9] * n)
    got = models.item_scores(z, damp, "data.counts", set(np.flatnonzero(hit).tolist()),
                             {"count": set(np.flatnonzero(count).tolist())})
    assert np.allclose(got, lr.predict_proba(x)[:, 1], atol=1e-9)
    assert models.facet_cues["data.counts"]["count"] != 0.0


def _missing_for_dataset_descriptions() -> Models:
    """Models whose annotators judge says missing for a dataset's own description and reported otherwise."""
    from checker.verdicts.judge import CHECKLISTS

    n = N_FEATURES
    coef = [[0.0] * n for _ in range(3)]
    coef[0][n - len(CHECKLISTS) + CHECKLISTS.index("dataset-description")] = 5.0  # missing, for a dataset's card
    judge = {"classes": ["missing", "partial", "reported"], "coef": coef, "intercept": [0.0, -5.0, 1.0],
             "positive_first": True}
    return Models.build(16, {"reference.annotators": {"bias": 0.0, "cue": 0.0, "words": {}}},
                        {"reference.annotators": judge})


def test_the_judge_reads_which_checklist_asks():
    # the same sentences and the same cue verdict can be judged differently for a paper and for a dataset's own
    # description (the labelling conventions differ by kind of document)
    from checker.verdicts.judge import CHECKLISTS

    scan, results = _scan_and_results(TEXT)
    assert next(r for r in results if r.id == "reference.annotators").status == "reported"
    models = _missing_for_dataset_descriptions()
    status = {c: next(r for r in rejudge(scan, results, models, checklist=c) if r.id == "reference.annotators").status
              for c in CHECKLISTS}
    assert status == {"validation-study": "reported", "benchmark-proposal": "reported",
                      "dataset-description": "missing"}


def test_a_report_is_judged_by_the_checklist_it_uses(learned_judge, monkeypatch):
    # the engine tells the judge which checklist the report uses
    from checker.verdicts import judge

    models = _missing_for_dataset_descriptions()
    monkeypatch.setattr(judge, "shipped", lambda: models)
    status = {c: next(it for it in check_text(TEXT, c).items if it.id == "reference.annotators").status
              for c in ("validation-study", "dataset-description")}
    assert status == {"validation-study": "reported", "dataset-description": "missing"}
