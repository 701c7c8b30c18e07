"""Screening and auditing: the demo documents, and a generated corpus whose reporting rates are known by construction."""

from __future__ import annotations

import argparse
import csv
import io
import json
import random
import shutil
from pathlib import Path

import pytest

from checker.cli import audit as audit_cmd
from checker.cli import screen as screen_cmd
from checker.many.audit import build_audit, load_meta
from checker.reports import render
from checker.reports.audit import plot
from checker.many.batch import run_batch
from checker.many.screen import build_screen, completeness

DEMO = Path(__file__).resolve().parent.parent / "fixtures" / "demo"
NO_OUTPUT = ("When a detector produced no output for a patient, the case was counted as a negative prediction "
             "with a score of zero.")


def parse(*argv: str):
    parser = argparse.ArgumentParser(prog="studygap")
    sub = parser.add_subparsers(dest="command")
    screen_cmd.add_parser(sub)
    audit_cmd.add_parser(sub)
    return parser.parse_args(list(argv))


def methods_part() -> list[str]:
    """The demo manuscript's title block and its Materials and methods section, as paragraphs."""
    paras = (DEMO / "wrist-fracture-manuscript.md").read_text(encoding="utf-8").split("\n\n")
    start = next(i for i, p in enumerate(paras) if p.startswith("## 3 Materials"))
    end = next(i for i, p in enumerate(paras) if p.startswith("## 4 Results"))
    # two long paragraphs that bear on none of the items counted below are left out, to keep the corpus quick
    return [p for p in paras[:3] + paras[start:end]
            if not p.startswith(("SplintNet was implemented", "Two comparators needed"))]


def paragraph(paras: list[str], opening: str) -> int:
    return next(i for i, p in enumerate(paras) if p.startswith(opening))


@pytest.fixture(scope="module")
def corpus(tmp_path_factory):
    """40 documents; per document a fixed-seed draw decides which paragraphs stay (the expected statuses)."""
    folder = tmp_path_factory.mktemp("corpus")
    base = methods_part()
    annotators = paragraph(base, "Two radiologists independently annotated")  # annotators, fusion, blinding
    training = paragraph(base, "All four methods were trained on the same")  # external data policy
    cohort = paragraph(base, "The final cohort comprised")  # counts; without it the split is only partial
    rng = random.Random(20240611)
    docs = []
    for n in range(40):
        keep = {"annotators": rng.random() < 0.6, "training": rng.random() < 0.45, "cohort": rng.random() < 0.7,
                "no_output": rng.random() < 0.35}
        drop = {i for i, key in ((annotators, "annotators"), (training, "training"), (cohort, "cohort"))
                if not keep[key]}
        paras = [p for i, p in enumerate(base) if i not in drop] + ([NO_OUTPUT] if keep["no_output"] else [])
        path = folder / f"doc-{n:02d}.md"
        path.write_text("\n\n".join(paras) + "\n", encoding="utf-8")
        docs.append((str(path), keep, 2023 + n % 2))
    meta = folder / "meta.csv"
    meta.write_text("file,year,venue\n" + "".join(f"{Path(p).name},{y},Fictional Imaging Letters\n"
                                                  for p, _, y in docs), encoding="utf-8")
    return docs, meta


@pytest.fixture(scope="module")
def corpus_results(corpus):
    docs, _ = corpus
    return run_batch([p for p, _, _ in docs], "validation-study", jobs=2)


def rate_rows(audit, group="all"):
    return {r.item: r for r in audit.rows if r.group == group}


def test_audit_rates_equal_the_rates_built_into_the_corpus(corpus, corpus_results):
    docs, _ = corpus
    audit = build_audit(corpus_results, "validation-study, named by the user")
    rows = rate_rows(audit)
    n = len(docs)
    with_annotators = sum(k["annotators"] for _, k, _ in docs)
    with_training = sum(k["training"] for _, k, _ in docs)
    with_no_output = sum(k["no_output"] for _, k, _ in docs)
    without_cohort = sum(not k["cohort"] for _, k, _ in docs)
    assert 0 < with_annotators < n and 0 < with_training < n and 0 < with_no_output < n and 0 < without_cohort < n
    assert (rows["reference.annotators"].reported, rows["reference.annotators"].applicable) == (with_annotators, n)
    assert rows["data.external-policy"].reported == with_training
    assert rows["results.missing"].reported == with_no_output
    assert rows["results.missing"].rate == pytest.approx(with_no_output / n)
    assert rows["data.split"].reported == n - without_cohort
    # partial counts as not reported, and has its own rate: without the training paragraph the compared methods
    # are named but not how they were trained, so that item is partial
    assert rows["methods.compared"].partial == n - with_training
    assert rows["methods.compared"].reported == with_training
    assert rows["methods.compared"].partial_rate == pytest.approx((n - with_training) / n)


def test_wilson_intervals_equal_statsmodels(corpus_results):
    # reference: statsmodels.stats.proportion.proportion_confint(method="wilson"), the registry's implementation
    from statsmodels.stats.proportion import proportion_confint

    audit = build_audit(corpus_results)
    checked = 0
    for r in audit.rows:
        if not r.applicable:
            continue
        low, high = proportion_confint(r.reported, r.applicable, alpha=0.05, method="wilson")
        # stats.py uses z = 1.96; statsmodels uses the exact normal quantile 1.959964..., a difference below 1e-4
        assert r.low == pytest.approx(low, abs=1e-4) and r.high == pytest.approx(high, abs=1e-4)
        checked += 1
    assert checked >= 20


def test_audit_by_metadata_field(corpus, corpus_results):
    docs, meta_path = corpus
    fields, meta = load_meta(meta_path)
    assert fields == ["year", "venue"]
    audit = build_audit(corpus_results, by="year", meta=meta)
    for year in (2023, 2024):
        rows = rate_rows(audit, str(year))
        expected = sum(k["annotators"] for _, k, y in docs if y == year)
        assert rows["reference.annotators"].reported == expected
        assert rows["reference.annotators"].applicable == sum(1 for _, _, y in docs if y == year)
    assert not audit.unmatched


def test_audit_plot_svg_is_deterministic_and_png_is_png(corpus_results, tmp_path):
    pytest.importorskip("matplotlib", reason="matplotlib is not installed (pip install 'studygap[plot]')")
    audit = build_audit(corpus_results)
    first = plot(audit, tmp_path / "rates.svg")
    assert first == plot(audit, tmp_path / "rates.svg")
    assert b"<svg" in first and b"reference.annotators" in first
    assert plot(audit, tmp_path / "rates.png").startswith(b"\x89PNG")


def folder_of(docs, n: int, folder: Path) -> Path:
    """A folder holding copies of the first n documents of the corpus."""
    folder.mkdir()
    for path, _, _ in docs[:n]:
        shutil.copy(path, folder)
    return folder


def test_audit_command_writes_table_and_plot(corpus, tmp_path, capsys):
    pytest.importorskip("matplotlib", reason="matplotlib is not installed (pip install 'studygap[plot]')")
    docs, meta = corpus
    folder = folder_of(docs, 8, tmp_path / "some")
    out, chart = tmp_path / "rates.csv", tmp_path / "rates.svg"
    args = parse("audit", str(folder), "--checklist", "validation-study", "--meta", str(meta), "--by", "year",
                 "--format", "csv", "-o", str(out), "--plot", str(chart), "--jobs", "2", "--quiet")
    assert audit_cmd.run(args) == 0
    text = out.read_text(encoding="utf-8")
    table = list(csv.DictReader(io.StringIO(text)))
    assert {row["group"] for row in table} == {"2023", "2024"}
    assert not text.startswith("#") and "\n#" not in text  # the notes are in the sidecar, not in the table
    notes = json.loads((tmp_path / "rates.meta.json").read_text(encoding="utf-8"))
    assert "partial counts as not reported" in notes["rate"]
    assert any("not a judgement" in c for c in notes["cautions"])
    assert notes["summary"] == {"documents": 8, "checked": 8, "errors": 0, "skipped": 0}
    assert chart.read_bytes().startswith(b"<?xml")
    bad = parse("audit", str(folder), "--meta", str(meta), "--by", "country", "--quiet")
    assert audit_cmd.run(bad) == 2
    assert "has no field 'country'" in capsys.readouterr().err


def test_audit_csv_reads_as_one_row_per_rate_with_csv_and_pandas(corpus_results):
    # external reader: pandas.read_csv with its defaults, beside the standard csv module
    pd = pytest.importorskip("pandas", reason="pandas is not installed (it comes with statsmodels, a test extra)")
    from checker.reports.audit import COLUMNS

    audit = build_audit(corpus_results[:10], "validation-study, named by the user")
    text = render("csv", audit)
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0] == list(COLUMNS) and len(rows) == 1 + len(audit.rows)
    assert all(len(r) == len(COLUMNS) for r in rows)
    frame = pd.read_csv(io.StringIO(text))
    assert frame.shape == (len(audit.rows), len(COLUMNS))
    assert list(frame["item"])[:2] == [r.item for r in audit.rows[:2]]


def proposal_variants(folder: Path, count: int) -> list[str]:
    """Proposals built from the demo proposal, each without one of its sections (a fixed-seed draw)."""
    text = (DEMO / "kidney-stone-benchmark-proposal.md").read_text(encoding="utf-8")
    parts = text.split("\n## ")
    rng = random.Random(7)
    out = []
    for n in range(count):
        drop = rng.randrange(1, len(parts))
        path = folder / f"proposal-{n:02d}.md"
        path.write_text("\n## ".join(p for i, p in enumerate(parts) if i != drop), encoding="utf-8")
        out.append(str(path))
    return out


@pytest.fixture(scope="module")
def mixed_results(corpus_results, tmp_path_factory):
    """32 documents: 24 manuscripts checked against validation-study, 8 proposals against benchmark-proposal, as a
    batch returns them when each document's checklist is chosen for it."""
    paths = proposal_variants(tmp_path_factory.mktemp("proposals"), 8)
    proposals = run_batch(paths, "benchmark-proposal", jobs=2)
    assert all(r.ok for r in proposals)
    mixed = list(corpus_results[:24])
    for k, r in enumerate(proposals):
        mixed.insert(3 * k + 1, r)
    return mixed


def test_audit_of_a_mixed_corpus_gives_rates_per_checklist(mixed_results, corpus_results):
    audit = build_audit(mixed_results)
    assert [(c[0], c[3]) for c in audit.checklists] == [("validation-study", 24), ("benchmark-proposal", 8)]
    manuscripts = {r.item: r for r in audit.rows if r.checklist == "validation-study"}
    proposals = {r.item: r for r in audit.rows if r.checklist == "benchmark-proposal"}
    assert manuscripts and proposals and set(manuscripts) != set(proposals)  # some ids are shared, not all
    # the manuscripts' rates are the rates of those 24 alone: the proposals do not dilute them
    alone = {r.item: r for r in build_audit(corpus_results[:24]).rows}
    for item, r in manuscripts.items():
        assert (r.reported, r.partial, r.applicable) == (alone[item].reported, alone[item].partial,
                                                         alone[item].applicable)
    assert all(r.applicable <= 8 for r in proposals.values())
    term = render("terminal", audit)
    assert "validation-study 1.0 (24 documents)" in term and "(8 documents)" in term
    data = json.loads(render("json", audit))
    assert {r["checklist"] for r in data["rates"]} == {"validation-study", "benchmark-proposal"}


def test_audit_plot_draws_for_every_corpus_size_from_1_to_60(mixed_results, tmp_path):
    """Every size n from 1 to 60 (the 32 documents again under other names past 32): items at 0% and at 100% for
    many n gave Wilson ends a hair outside the rate, and matplotlib refused the negative error bar."""
    pytest.importorskip("matplotlib", reason="matplotlib is not installed (pip install 'studygap[plot]')")
    import matplotlib.pyplot as plt

    from checker.reports.audit import figure
    from checker.many.batch import BatchResult

    edges = 0
    for n in range(1, 61):
        results = [BatchResult(f"copy-{k}/{Path(r.path).name}", r.report)
                   for k, r in ((k, mixed_results[k % len(mixed_results)]) for k in range(n))]
        audit = build_audit(results)
        edges += sum(1 for r in audit.rows if r.applicable and r.reported in (0, r.applicable))
        for r in audit.rows:
            if r.rate is not None:
                assert r.low <= r.rate <= r.high, (n, r)
        plt.close(figure(audit))  # the error bars are checked as the figure is built
    assert edges > 100  # the edges were met, many times
    # drawn in full through the command's path for a few sizes, including those that failed before
    assert plot(build_audit(mixed_results[:3]), tmp_path / "r3.svg").startswith(b"<?xml")
    assert plot(build_audit(mixed_results[:24]), tmp_path / "r24.png").startswith(b"\x89PNG")


def test_audit_plot_labels_lie_inside_the_figure_and_show_n(mixed_results):
    pytest.importorskip("matplotlib", reason="matplotlib is not installed (pip install 'studygap[plot]')")
    import matplotlib.pyplot as plt
    from matplotlib.text import Text

    from checker.reports.audit import figure

    audit = build_audit(mixed_results)
    fig = figure(audit)
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    box = fig.bbox
    texts = [t for t in fig.findobj(Text) if t.get_visible() and t.get_text().strip()]
    assert texts
    for t in texts:
        ext = t.get_window_extent(renderer)
        assert ext.x0 >= box.x0 - 1 and ext.x1 <= box.x1 + 1 and ext.y0 >= box.y0 - 1 and ext.y1 <= box.y1 + 1, \
            t.get_text()
    words = [t.get_text() for t in texts]
    assert "n=24" in words and any("n = documents where the item applies" in w for w in words)
    assert sum(1 for w in words if "documents" in w and ("validation-study" in w or "benchmark-proposal" in w)) == 2
    plt.close(fig)


def test_audit_names_unread_and_skipped_files_and_keeps_the_table_when_the_plot_fails(corpus, tmp_path, capsys,
                                                                                      monkeypatch):
    pytest.importorskip("matplotlib", reason="matplotlib is not installed (pip install 'studygap[plot]')")
    docs, _ = corpus
    folder = folder_of(docs, 3, tmp_path / "in")
    (folder / "saved-page.pdf").write_text("<html><body>Sign in to read</body></html>", encoding="utf-8")
    (folder / "notes.odt").write_bytes(b"PK\x03\x04 not read")
    out, chart = tmp_path / "rates.json", tmp_path / "rates.png"

    import checker.reports.audit as audit_mod

    def broken(*_a, **_k):
        raise ValueError("'xerr' must not contain negative values")

    monkeypatch.setattr(audit_mod, "plot", broken)
    args = parse("audit", str(folder), "--checklist", "validation-study", "-f", "json", "-o", str(out),
                 "--plot", str(chart), "-j", "1", "-q")
    assert audit_cmd.run(args) == 2  # the plot failed
    err = capsys.readouterr().err
    data = json.loads(out.read_text(encoding="utf-8"))  # ... and the numbers were written all the same
    assert not chart.exists() and "the rates were written all the same" in err and "xerr" in err
    assert data["summary"] == {"documents": 4, "checked": 3, "errors": 1, "skipped": 1}
    assert data["errors"][0]["path"].endswith("saved-page.pdf") and "HTML" in data["errors"][0]["error"]
    assert data["skipped"] == [{"path": str(folder / "notes.odt"),
                                "reason": "not a kind of file studygap reads (.odt)"}]
    assert "saved-page.pdf" in err and "notes.odt" in err
    monkeypatch.undo()
    term = tmp_path / "rates.txt"
    assert audit_cmd.run(parse("audit", str(folder), "--checklist", "validation-study", "-o", str(term),
                               "-j", "1", "-q")) == 3
    text = term.read_text(encoding="utf-8")
    assert "could not be read: " + str(folder / "saved-page.pdf") in text
    assert "skipped: " + str(folder / "notes.odt") in text and "1 other file in the folders skipped" in text
    page = tmp_path / "rates.html"
    assert audit_cmd.run(parse("audit", str(folder), "--checklist", "validation-study", "-f", "html", "-o", str(page),
                               "-j", "1", "-q")) == 3
    html_text = page.read_text(encoding="utf-8")
    assert "<h2>Not counted</h2>" in html_text and "notes.odt: not a kind of file studygap reads" in html_text
    assert "saved-page.pdf" in html_text and "Wilson 95% interval" in html_text


@pytest.fixture(scope="module")
def demo_inputs(tmp_path_factory):
    folder = tmp_path_factory.mktemp("screen")
    shutil.copy(DEMO / "wrist-fracture-manuscript.md", folder / "a-manuscript.md")
    # a file name with markup in it must come out escaped in HTML
    shutil.copy(DEMO / "kidney-stone-benchmark-proposal.md", folder / "b-<b>&proposal.md")
    (folder / "c-saved-page.pdf").write_text("<html><body>Sign in to read</body></html>", encoding="utf-8")
    return folder


def test_screen_matrix_scores_and_error_row(demo_inputs, tmp_path, capsys):
    out = tmp_path / "screen.json"
    args = parse("screen", str(demo_inputs), "--format", "json", "-o", str(out), "--jobs", "2", "--quiet")
    assert screen_cmd.run(args) == 3  # one input could not be read
    data = json.loads(out.read_text(encoding="utf-8"))
    assert "c-saved-page.pdf" in capsys.readouterr().err
    docs = data["documents"]
    assert [Path(d["path"]).name for d in docs] == ["a-manuscript.md", "b-<b>&proposal.md", "c-saved-page.pdf"]
    assert "HTML" in docs[2]["error"]
    # no --checklist: the first document's choice is used for all, and the output says so
    assert data["checklist"]["id"] == "validation-study" and "first document" in data["checklist"]["choice"]
    ids = [i["id"] for i in data["items"]]
    for d in docs[:2]:
        assert list(d["statuses"]) == ids
        statuses = list(d["statuses"].values())
        applicable = [s for s in statuses if s in ("reported", "partial", "missing")]
        by_hand = (statuses.count("reported") + statuses.count("partial") / 2) / len(applicable)
        assert d["completeness"] == pytest.approx(by_hand, abs=1e-4)
    assert docs[0]["facts"]["annotators"].startswith("2")
    assert data["summary"] == {"documents": 3, "errors": 1, "skipped": 0}
    assert "half of partial" in data["score"] and any("triage aid" in c for c in data["cautions"])
    # the same inputs give the same bytes (no timing in JSON), serially too
    again = tmp_path / "again.json"
    assert screen_cmd.run(parse("screen", str(demo_inputs), "-f", "json", "-o", str(again), "-j", "1", "-q")) == 3
    assert again.read_bytes() == out.read_bytes()


def test_screen_csv_html_terminal_carry_notes(demo_inputs, tmp_path, capsys):
    results = run_batch(sorted(str(p) for p in demo_inputs.iterdir()), "validation-study", jobs=1)
    screen = build_screen(results, "validation-study, named by the user", seconds=1.5)
    text = render("csv", screen)
    rows = list(csv.reader(io.StringIO(text)))
    header = rows[0]
    assert header[:4] == ["path", "checklist", "error", "completeness"]
    assert "reference.annotators" in header and "fact: annotators" in header
    assert rows[3][2].startswith(str(demo_inputs / "c-saved-page.pdf"))
    page = render("html", screen)
    assert "b-&lt;b&gt;&amp;proposal.md" in page and "<b>&proposal" not in page
    assert page.count("<script>") == 1 and 'id="docfilter"' in page and "half of partial" in page
    assert "triage aid" in page
    term = render("terminal", screen)
    assert "half of partial" in term and "triage aid" in term and "1.5 s" in term
    assert "venue's own reporting requirements govern" in term


def test_completeness_counts_partial_half():
    assert completeness(["reported", "partial", "missing", "not-applicable", "waived"]) == pytest.approx(0.5)
    assert completeness(["not-applicable"]) is None


def test_folder_walk_skips_latex_parts_and_hidden_files(tmp_path):
    from checker.cli.screen import collect_inputs

    found = collect_inputs([str(DEMO)])
    assert str(DEMO / "wrist-fracture-manuscript" / "main.tex") in found
    assert not any("/sections/" in p for p in found)
    assert found == sorted(found)
    (tmp_path / ".draft.md").write_text("hidden", encoding="utf-8")
    (tmp_path / "notes.xyz").write_text("not a document", encoding="utf-8")
    from checker.core.errors import UsageError

    with pytest.raises(UsageError, match="no documents found"):
        collect_inputs([str(tmp_path)])


def test_screen_without_checklist_checks_the_first_document_once(demo_inputs, tmp_path, monkeypatch):
    # choosing the batch's checklist from the first document reads it but does not check it: each document is
    # checked exactly once, and an unreadable first document hands the choice to the next one
    import checker.engine as engine

    checked: list[str] = []
    real = engine._check

    def counting(path, *a, **k):
        checked.append(Path(path).name)
        return real(path, *a, **k)

    monkeypatch.setattr(engine, "_check", counting)
    first = tmp_path / "0-broken.docx"
    first.write_bytes(b"not a zip archive")
    out = tmp_path / "screen.json"
    args = parse("screen", str(first), *sorted(str(p) for p in demo_inputs.iterdir()), "-f", "json", "-o", str(out),
                 "-j", "1", "-q", "--no-cache")
    assert screen_cmd.run(args) == 3
    data = json.loads(out.read_text(encoding="utf-8"))
    assert "a-manuscript.md" in data["checklist"]["choice"] and "first document" in data["checklist"]["choice"]
    assert sorted(checked) == sorted(set(checked)) and "a-manuscript.md" in checked
