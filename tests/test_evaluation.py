"""Agreement with the user's labels: reading label files, the figures, the confusion table and disagreements.

All documents, institutions and people below are invented.
"""

from __future__ import annotations

import argparse
import json
import random
import textwrap
from pathlib import Path

import pytest

from checker.core.errors import ExitCode, InputError
from checker.many.evaluation import (
    STATUSES,
    DocumentOutcome,
    LabelError,
    Pair,
    evaluate,
    load_labels,
    summarize,
    to_json,
)

# ---------------------------------------------------------------------------------------------------- fixtures

MINI_CHECKLIST = """\
id: mini-study
title: A small checklist for the evaluation tests
version: "0.1"
groups:
  - id: data
    title: Data
  - id: reference
    title: Reference
  - id: ranking
    title: Ranking
items:
  - id: data.source
    group: data
    title: Where the images came from
    question: Does the document say where the images were collected?
    why: Readers need the origin of the data to judge whom the results describe.
    ask: Please say where and when the images were collected.
    facets:
      - id: origin
        title: the place the images come from
        phrases: [collected at, acquired at]
    needs: all
  - id: reference.annotators
    group: reference
    title: Who annotated, and how many
    question: Does the document say who drew the reference and how many people did?
    why: One annotator's masks carry that person's habits.
    ask: Please say how many people annotated each case.
    facets:
      - id: who
        title: who annotated
        phrases: [annotated by, annotators]
      - id: count
        title: how many annotated
        phrases: [three annotators, two annotators]
    needs: all
  - id: ranking.method
    group: ranking
    title: How methods were ranked
    question: Does the document say how the ranking was computed?
    why: Rankings change with the aggregation rule.
    ask: Please state the ranking rule.
    applies_when:
      phrases: [ranked, leaderboard]
      reason: nothing is ranked
    facets:
      - id: rule
        title: the ranking rule
        phrases: [ranked by]
    needs: all
"""

DOCS = {
    # everything reported; nothing ranked
    "alpha.md": """\
        # Fictional study Alpha

        ## Methods

        Images were collected at the Harrowgate Institute of Imaging between 2019 and 2021.

        The masks were annotated by three annotators with five years of experience each.
        """,
    # annotators without a count; a ranking; no origin of the data
    "beta.md": """\
        # Fictional study Beta

        ## Methods

        The masks were annotated by a resident of the Quillmoor Teaching Clinic.

        Entries on the leaderboard were ranked by mean Dice similarity coefficient.
        """,
    # origin only
    "gamma.md": """\
        # Fictional study Gamma

        ## Methods

        Scans were acquired at the Lake Verdan Medical Centre over eight months.
        """,
}

LABELS = {
    "01-alpha.yaml": """\
        document: docs/alpha.md
        checklist: mini-study.yaml
        kind: paper
        items:
          data.source:
            status: reported
            quote: Images were collected at the Harrowgate Institute of Imaging between 2019 and 2021.
            location: Methods
          reference.annotators: reported
          ranking.method: not-applicable
        """,
    "02-beta.yaml": """\
        document: docs/beta.md
        checklist: mini-study.yaml
        items:
          data.source: missing
          reference.annotators:
            status: reported
            quote: annotated by a resident of the Quillmoor Teaching Clinic
            location: Methods
            note: one resident, so the count is implied
          ranking.method: reported
          metrics.definition: missing
        """,
    "03-gamma.yaml": """\
        document: docs/gamma.md
        checklist: mini-study.yaml
        items:
          data.source:
            status: Missing
            note: the site name alone does not say where the cohort came from
          reference.annotators: missing
          ranking.method: missing
        """,
    "04-delta.yaml": """\
        document: docs/delta.docx
        checklist: mini-study.yaml
        items:
          data.source: reported
        """,
}


def _write(folder: Path, files: dict[str, str]) -> None:
    folder.mkdir(parents=True, exist_ok=True)
    for name, text in files.items():
        (folder / name).write_text(textwrap.dedent(text), encoding="utf-8")


@pytest.fixture(scope="module")
def labelled(tmp_path_factory) -> Path:
    """A study folder: docs/ with three invented Markdown documents and one unreadable DOCX, labels/ beside it."""
    tmp_path = tmp_path_factory.mktemp("study")
    _write(tmp_path / "docs", DOCS)
    (tmp_path / "docs" / "delta.docx").write_text("this is not a Word file\n", encoding="utf-8")
    _write(tmp_path / "labels", LABELS)
    (tmp_path / "mini-study.yaml").write_text(MINI_CHECKLIST, encoding="utf-8")
    return tmp_path


# ---------------------------------------------------------------------------------------------------- end to end


@pytest.fixture(scope="module")
def evaluation(labelled: Path):
    labels = load_labels(labelled / "labels")
    return evaluate(labels, resamples=200, seed=0, source="labels")


def test_evaluate_confusion_table(evaluation):
    c = evaluation.confusion.to_dict()["counts"]
    assert c["reported"] == {"reported": 3, "partial": 1, "missing": 0, "not-applicable": 0}
    assert c["partial"] == {"reported": 0, "partial": 0, "missing": 0, "not-applicable": 0}
    assert c["missing"] == {"reported": 1, "partial": 0, "missing": 2, "not-applicable": 1}
    assert c["not-applicable"] == {"reported": 0, "partial": 0, "missing": 0, "not-applicable": 1}
    assert evaluation.pairs == 9
    assert evaluation.compared_documents == 3


def test_evaluate_lists_each_disagreement_with_both_sides(evaluation):
    found = {(Path(d.document).name, d.item_id): d for d in evaluation.disagreements}
    assert set(found) == {("beta.md", "reference.annotators"), ("gamma.md", "data.source"),
                          ("gamma.md", "ranking.method")}
    degree = found[("beta.md", "reference.annotators")]
    assert (degree.human, degree.tool, degree.kind) == ("reported", "partial", "degree")
    assert degree.human_quote == "annotated by a resident of the Quillmoor Teaching Clinic"
    assert degree.human_note == "one resident, so the count is implied"
    assert "Quillmoor" in degree.tool_evidence
    assert "how many annotated" in degree.tool_reason  # the tool says what it did not find
    presence = found[("gamma.md", "data.source")]
    assert (presence.human, presence.tool, presence.kind) == ("missing", "reported", "presence")
    assert "Lake Verdan" in presence.tool_evidence and "line" in presence.tool_location
    applicability = found[("gamma.md", "ranking.method")]
    assert (applicability.human, applicability.tool, applicability.kind) == ("missing", "not-applicable",
                                                                            "applicability")


def test_evaluate_per_item_scores_and_macro_f1(evaluation):
    items = {a.item_id: a for a in evaluation.items}
    src = items["data.source"].scores
    assert (src.tp, src.fp, src.fn, src.tn) == (1, 1, 0, 1)
    assert src.precision == pytest.approx(0.5) and src.recall == pytest.approx(1.0)
    assert items["reference.annotators"].scores.f1 == pytest.approx(1.0)  # partial counts as positive
    assert items["reference.annotators"].three_class_agreement == pytest.approx(2 / 3)
    assert items["ranking.method"].scores.f1 == pytest.approx(1.0)
    assert evaluation.figure("macro_f1").value == pytest.approx((2 / 3 + 1 + 1) / 3)
    # three-class: not-applicable counts as missing, so gamma's ranking.method agrees; beta's annotators do not
    assert evaluation.figure("three_class_agreement").value == pytest.approx(7 / 9)
    assert evaluation.figure("four_class_agreement").value == pytest.approx(6 / 9)


def test_evaluate_kappa_equals_scikit_learn(evaluation):
    # external reference: sklearn.metrics.cohen_kappa_score on the same nine pairs
    from sklearn.metrics import cohen_kappa_score

    human = ["reported", "reported", "not-applicable", "missing", "reported", "reported", "missing", "missing",
             "missing"]
    tool = ["reported", "reported", "not-applicable", "missing", "partial", "reported", "reported", "missing",
            "not-applicable"]
    pos = {"reported", "partial"}
    three = {"not-applicable": "missing"}
    assert evaluation.figure("binary_kappa").value == pytest.approx(
        cohen_kappa_score([h in pos for h in human], [t in pos for t in tool]))
    assert evaluation.figure("three_class_kappa").value == pytest.approx(
        cohen_kappa_score([three.get(h, h) for h in human], [three.get(t, t) for t in tool]))


def test_evaluate_reports_unreadable_document_and_goes_on(evaluation):
    errors = evaluation.errors
    assert len(errors) == 1
    assert errors[0].label_file.endswith("04-delta.yaml")
    assert "delta.docx" in errors[0].error
    # the unlabelled-by-checklist item is named, not compared
    beta = next(d for d in evaluation.documents if d.label_file.endswith("02-beta.yaml"))
    assert beta.not_in_checklist == ("metrics.definition",)
    assert beta.compared == 3
    assert any("metrics.definition" in n for n in evaluation.notes)


def test_evaluate_json_is_deterministic_and_says_what_it_is(labelled):
    labels = load_labels(labelled / "labels")
    a = to_json(evaluate(labels, resamples=100, seed=5, source="labels"))
    b = to_json(evaluate(labels, resamples=100, seed=5, source="labels"))
    c = to_json(evaluate(labels, resamples=100, seed=6, source="labels"))
    assert a == b
    assert a != c  # another seed, other bootstrap draws
    data = json.loads(a)
    assert data["figures"]["macro_f1"]["interval"]["resamples"] == 100
    assert data["bootstrap"]["unit"] == "document"
    assert any("not-applicable" in n and "missing" in n for n in data["notes"])
    assert any("triage aid" in c for c in data["cautions"])
    assert any("sample" in c for c in data["cautions"])


def test_checklist_override_applies_to_every_document(labelled):
    labels = load_labels(labelled / "labels")
    ev = evaluate(labels[:1], checklist_override=str(labelled / "mini-study.yaml"), resamples=50)
    assert ev.checklist_override.endswith("mini-study.yaml")
    assert ev.documents[0].checklist == "mini-study"
    assert ev.pairs == 3


def test_parallel_jobs_give_the_same_result(labelled):
    labels = load_labels(labelled / "labels")
    assert to_json(evaluate(labels, jobs=2, resamples=100)) == to_json(evaluate(labels, jobs=1, resamples=100))


# ---------------------------------------------------------------------------------------------------- renderers, command


def test_terminal_rendering_shows_tables_disagreements_and_cautions(evaluation):
    from checker.reports import RenderOptions, render

    raw = render("terminal", evaluation, RenderOptions(color=False, width=110))
    assert "\x1b[" not in raw  # plain text when not a terminal
    assert not any(line.endswith(" ") for line in raw.splitlines())
    out = " ".join(raw.split())  # long lines wrap
    assert "macro-F1" in out and "Cohen's kappa" in out
    assert "Confusion (rows: your label, columns: studygap)" in out
    assert "Disagreements (3)" in out
    assert "Quillmoor" in out and "one resident, so the count is implied" in out
    assert "04-delta.yaml" in out
    assert "triage aid" in out and "counts as missing" in out
    coloured = render("terminal", evaluation, RenderOptions(color=True, width=110))
    assert "\x1b[" in coloured


def _command_args(argv: list[str]):
    from checker.cli.evaluate import add_parser

    parser = argparse.ArgumentParser(prog="studygap")
    add_parser(parser.add_subparsers(dest="command"))
    return parser.parse_args(["evaluate", *argv])


def test_command_writes_json_atomically_and_exits_3_when_a_document_failed(labelled, capsys):
    from checker.cli.evaluate import run

    out = labelled / "result.json"
    args = _command_args([str(labelled / "labels"), "--format", "json", "-o", str(out), "--resamples", "50",
                          "--seed", "2"])
    assert run(args) == ExitCode.SOME_INPUTS_FAILED
    data = json.loads(out.read_text(encoding="utf-8"))
    assert data["sample"] == {"label_files": 4, "documents_compared": 3, "documents_failed": 1, "pairs": 9}
    assert data["bootstrap"]["seed"] == 2
    assert "delta.docx" in capsys.readouterr().err
    assert not list(labelled.glob(".result.json.*"))  # no temporary file left behind


def test_studygap_command_line_runs_evaluate(labelled, capsys):
    from checker.cli.main import main

    assert main(["evaluate", str(labelled / "labels"), "--resamples", "50", "--no-color"]) == 3
    captured = capsys.readouterr()
    out = " ".join(captured.out.split())
    assert "Disagreements (3)" in out and "studygap is a triage aid" in out
    assert "delta.docx" in captured.err


def test_command_bad_labels_exit_2_with_one_clear_line(tmp_path, capsys):
    from checker.cli.evaluate import run

    _write(tmp_path / "docs", {"alpha.md": DOCS["alpha.md"]})
    _write(tmp_path / "labels", {"a.yaml": "document: docs/alpha.md\nitems:\n  data.source: reportd\n"})
    assert run(_command_args([str(tmp_path / "labels")])) == ExitCode.ERROR
    err = capsys.readouterr().err.strip()
    assert err.startswith("studygap: error: ")
    assert "a.yaml" in err and "items -> data.source -> status" in err and "'reported'" in err
    assert "\n" not in err


# ---------------------------------------------------------------------------------------------------- label files


def _labels(tmp_path: Path, files: dict[str, str], docs: tuple[str, ...] = ("alpha.md",)) -> Path:
    _write(tmp_path / "docs", {d: DOCS.get(d, "# Empty\n") for d in docs})
    _write(tmp_path / "labels", files)
    return tmp_path / "labels"


def test_labels_accept_bare_status_and_normalise_spelling(tmp_path):
    folder = _labels(tmp_path, {"a.yaml": """\
        document: docs/alpha.md
        checklist: validation-study
        notes: invented
        items:
          data.source: Reported
          ranking.method: not applicable
          reference.fusion:
            status: not_applicable
            note: one annotator only
        """})
    (lf,) = load_labels(folder)
    assert [(i.item_id, i.status) for i in lf.items] == [("data.source", "reported"),
                                                        ("ranking.method", "not-applicable"),
                                                        ("reference.fusion", "not-applicable")]
    assert lf.checklist == "validation-study"
    assert lf.document == str(tmp_path / "docs" / "alpha.md")
    assert lf.items[2].note == "one annotator only"


def test_labels_find_documents_in_docs_dir_by_path_or_file_name(tmp_path):
    _write(tmp_path / "elsewhere", {"alpha.md": DOCS["alpha.md"]})
    _write(tmp_path / "labels", {"a.yaml": "document: raw/alpha.md\nitems:\n  data.source: missing\n"})
    (lf,) = load_labels(tmp_path / "labels", docs_dir=tmp_path / "elsewhere")
    assert lf.document == str(tmp_path / "elsewhere" / "alpha.md")
    assert lf.checklist == "auto"  # no checklist named: the engine chooses


@pytest.mark.parametrize("text, expected", [
    ("document: docs/alpha.md\nitems:\n  data.source: reportd\n",
     ["items -> data.source -> status: 'reportd' is not a status", "did you mean 'reported'?"]),
    ("document: docs/alpha.md\nitems:\n  ranking.method: n/a\n", ["did you mean 'not-applicable'?"]),
    ("document: docs/missing.pdf\nitems:\n  data.source: missing\n",
     ["document: 'docs/missing.pdf' not found (looked for"]),
    ("items:\n  data.source: missing\n", ["document: missing"]),
    ("document: docs/alpha.md\n", ["items: missing"]),
    ("document: docs/alpha.md\nitems: {}\n", ["items: no item is labelled"]),
    ("document: docs/alpha.md\nitem:\n  data.source: missing\n", ["item: unknown key (did you mean 'items'?)"]),
    ("document: docs/alpha.md\nitems:\n  data.source: {status: missing, qoute: x}\n",
     ["items -> data.source -> qoute: unknown key (did you mean 'quote'?)"]),
    ("document: docs/alpha.md\nitems:\n  data.source: {quote: something}\n", ["items -> data.source -> status: missing"]),
    ("document: docs/alpha.md\nitems:\n  data.source: missing\n  data.source: reported\n",
     ["line 4", "the key 'data.source' is given twice (first on line 3)"]),
    ("document: docs/alpha.md\nitems:\n  data.source: [missing\n", ["not valid YAML"]),
    ("- just\n- a list\n", ["a label file is a mapping"]),
    ("document: docs/alpha.md\nchecklist: lists/none.yaml\nitems:\n  data.source: missing\n",
     ["checklist: no checklist file 'lists/none.yaml'"]),
])
def test_bad_label_files_give_clear_errors(tmp_path, text, expected):
    folder = _labels(tmp_path, {"bad.yaml": text})
    with pytest.raises(LabelError) as exc:
        load_labels(folder)
    message = str(exc.value)
    assert str(folder / "bad.yaml") + ": " in message  # names the file, then the key at fault
    for part in expected:
        assert part in message
    assert isinstance(exc.value, InputError)


def test_every_problem_of_every_label_file_is_listed_at_once(tmp_path):
    folder = _labels(tmp_path, {
        "a.yaml": "document: docs/alpha.md\nitems:\n  data.source: sometimes\n  ranking.method: never\n",
        "b.yaml": "document: docs/nowhere.md\nitems:\n  data.source: missing\n",
        "c.yaml": "document: docs/alpha.md\nitems:\n  data.source: missing\n",
    })
    with pytest.raises(LabelError) as exc:
        load_labels(folder)
    assert len(exc.value.problems) == 3
    text = str(exc.value)
    assert text.startswith("3 problems in the label files:")
    assert "a.yaml: items -> data.source" in text and "a.yaml: items -> ranking.method" in text
    assert "b.yaml: document: 'docs/nowhere.md' not found" in text


def test_one_document_labelled_twice_is_refused(tmp_path):
    folder = _labels(tmp_path, {
        "a.yaml": "document: docs/alpha.md\nitems:\n  data.source: missing\n",
        "b.yaml": "document: ../docs/alpha.md\nitems:\n  data.source: reported\n",
    })
    with pytest.raises(LabelError, match=r"b\.yaml: document: '../docs/alpha.md' is labelled already in .*a\.yaml"):
        load_labels(folder)


def test_missing_or_empty_labels_folder(tmp_path):
    with pytest.raises(InputError, match="no such folder of label files"):
        load_labels(tmp_path / "nope")
    (tmp_path / "empty").mkdir()
    with pytest.raises(InputError, match=r"holds no label files \(\*\.yaml or \*\.yml\)"):
        load_labels(tmp_path / "empty")
    with pytest.raises(InputError, match="no such folder of documents"):
        load_labels(tmp_path / "empty", docs_dir=tmp_path / "nodocs")


# ---------------------------------------------------------------------------------------------------- figures


def _random_units(seed: int) -> list[list[Pair]]:
    rng = random.Random(seed)
    items = ["data.source", "data.counts", "reference.annotators", "ranking.method", "results.missing"]
    units = []
    for d in range(rng.randint(3, 12)):
        pairs = []
        for iid in items:
            if rng.random() < 0.15:
                continue  # not every document labels every item
            human = rng.choice(STATUSES)
            tool = human if rng.random() < 0.6 else rng.choice(STATUSES)
            pairs.append(Pair(f"doc{d}.md", f"doc{d}.yaml", iid, iid, human, tool))
        units.append(pairs)
    return units


@pytest.mark.filterwarnings("ignore::UserWarning")
@pytest.mark.parametrize("seed", range(15))
def test_figures_equal_scikit_learn_on_random_labels(seed):
    # external reference: sklearn.metrics cohen_kappa_score, f1_score, precision_score, recall_score,
    # confusion_matrix on the same pairs
    import numpy as np
    from sklearn.metrics import (
        cohen_kappa_score,
        confusion_matrix,
        f1_score,
        precision_score,
        recall_score,
    )

    units = _random_units(seed)
    outcomes = [DocumentOutcome(u[0].label_file if u else "x", "d", "c", len(u), len(u)) for u in units]
    ev = summarize(outcomes, units, resamples=50)
    pairs = [p for u in units for p in u]
    pos = {"reported", "partial"}
    h_bin = [p.human in pos for p in pairs]
    t_bin = [p.tool in pos for p in pairs]
    na = {"not-applicable": "missing"}
    kappa = cohen_kappa_score(h_bin, t_bin)
    assert ev.figure("binary_kappa").value == (None if np.isnan(kappa) else pytest.approx(kappa))
    assert ev.figure("three_class_kappa").value == pytest.approx(cohen_kappa_score(
        [na.get(p.human, p.human) for p in pairs], [na.get(p.tool, p.tool) for p in pairs]))
    f1s = []
    for a in ev.items:
        ps = [p for p in pairs if p.item_id == a.item_id]
        h = [p.human in pos for p in ps]
        t = [p.tool in pos for p in ps]
        for ours, fn in ((a.scores.precision, precision_score), (a.scores.recall, recall_score),
                         (a.scores.f1, f1_score)):
            theirs = fn(h, t, zero_division=np.nan)
            assert (ours is None and np.isnan(theirs)) or ours == pytest.approx(theirs)
        if any(h) or any(t):
            f1s.append(f1_score(h, t))
    assert ev.figure("macro_f1").value == pytest.approx(sum(f1s) / len(f1s))
    cm = confusion_matrix([p.human for p in pairs], [p.tool for p in pairs], labels=list(STATUSES))
    assert [list(r) for r in ev.confusion.counts] == cm.tolist()


def test_items_without_positives_are_left_out_of_macro_f1_and_named():
    units = [[Pair("a.md", "a.yaml", "data.source", "t", "reported", "reported"),
              Pair("a.md", "a.yaml", "ranking.method", "t", "not-applicable", "missing")],
             [Pair("b.md", "b.yaml", "data.source", "t", "missing", "reported"),
              Pair("b.md", "b.yaml", "ranking.method", "t", "missing", "missing")]]
    ev = summarize([DocumentOutcome("a.yaml", "a.md", "c", 2, 2), DocumentOutcome("b.yaml", "b.md", "c", 2, 2)],
                   units, resamples=50)
    assert ev.macro_f1_left_out == ("ranking.method",)
    assert ev.figure("macro_f1").value == pytest.approx(2 / 3)
    assert any("left out of macro-F1: ranking.method" in n for n in ev.notes)


def test_bootstrap_intervals_resample_documents_reproducibly():
    units = _random_units(3)
    outcomes = [DocumentOutcome("x", "d", "c", len(u), len(u)) for u in units]
    a = summarize(outcomes, units, seed=1, resamples=300)
    b = summarize(outcomes, units, seed=1, resamples=300)
    c = summarize(outcomes, units, seed=2, resamples=300)
    assert a.figure("macro_f1").interval == b.figure("macro_f1").interval
    assert a.figure("macro_f1").interval != c.figure("macro_f1").interval
    for name in ("macro_f1", "binary_kappa", "three_class_agreement"):
        f = a.figure(name)
        assert f.interval is not None and f.interval.low <= f.value <= f.interval.high


def test_no_comparable_pairs_gives_empty_figures_not_a_crash():
    ev = summarize([DocumentOutcome("x.yaml", "x.md", "c", 2, error="x.md: no such file")], [[]])
    assert ev.pairs == 0
    assert all(f.value is None and f.interval is None for f in ev.figures)
    assert json.loads(to_json(ev))["figures"]["macro_f1"]["value"] is None


def test_a_labelled_quote_is_covered_by_the_passage_that_holds_it_despite_extraction_differences():
    # the accuracy benchmark's quote coverage: a fragment of the labelled quote ("..." joins fragments) found in a
    # quoted passage, allowing hyphenation and spacing that differ between two extractions (common practice)
    from checker.many.evaluation import quote_covers

    quote = "Two radiologists annotated every scan ... disagreements were resolved by consensus"
    passage = "In the methods, two radio- logists annotated every scan independently, blinded to the outcome."
    assert quote_covers(quote, ["Images were resized.", passage])
    assert not quote_covers(quote, ["Images were resized to 256 pixels.", "The model was trained for 40 epochs."])
    assert not quote_covers(quote, [])
