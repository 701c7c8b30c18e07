"""Comparing two versions of a document: what a revision fixed, what it lost, where passages went."""

from __future__ import annotations

import argparse
import json
from pathlib import Path

import pytest

from checker.cli import compare as compare_cmd
from checker.many.compare import align, change_kind, compare_documents
from checker.reports import render

DEMO = Path(__file__).resolve().parent.parent / "fixtures" / "demo"
ANNOTATION = "Two radiologists independently annotated"
NO_OUTPUT = ("When a detector produced no output for a patient, the case was counted as a negative prediction "
             "with a score of zero.")


@pytest.fixture(scope="module")
def versions(tmp_path_factory):
    """The demo manuscript without its annotation paragraph (old), and the revision that has it back and adds a
    sentence on missing outputs (new)."""
    folder = tmp_path_factory.mktemp("versions")
    text = (DEMO / "wrist-fracture-manuscript.md").read_text(encoding="utf-8")
    paras = text.split("\n\n")
    old = "\n\n".join(p for p in paras if not p.startswith(ANNOTATION))
    new = text.replace("and our own evaluation scripts.", "and our own evaluation scripts. " + NO_OUTPUT)
    old_path, new_path = folder / "draft-1.md", folder / "draft-2.md"
    old_path.write_text(old, encoding="utf-8")
    new_path.write_text(new, encoding="utf-8")
    return str(old_path), str(new_path)


@pytest.fixture(scope="module")
def comparison(versions):
    return compare_documents(*versions, checklist="validation-study")


def test_revision_fixes_are_newly_reported(comparison):
    by = {it.id: it for it in comparison.items}
    # the first draft names "experienced radiologists" without a count (partial); the revision gives the count
    annotators = by["reference.annotators"]
    assert (annotators.old_status, annotators.new_status, annotators.kind) == ("partial", "reported", "improved")
    assert any(p.change == "added" and p.new.text.startswith(ANNOTATION) for p in annotators.passages)
    fusion = by["reference.fusion"]
    assert (fusion.old_status, fusion.new_status, fusion.kind) == ("missing", "reported", "newly-reported")
    missing = by["results.missing"]
    assert missing.kind == "newly-reported"
    assert any(p.change == "added" and "no output" in p.new.text for p in missing.passages)
    assert by["ranking.uncertainty"].kind == "still-missing"
    assert by["data.source"].kind == "unchanged"


def test_reverse_direction_shows_losses(versions):
    back = compare_documents(versions[1], versions[0], checklist="validation-study")
    by = {it.id: it for it in back.items}
    assert by["reference.annotators"].kind == "lost"
    assert any(p.change == "removed" for p in by["reference.annotators"].passages)
    assert back.counts()["lost"] >= 2


def test_change_kinds():
    assert change_kind("partial", "reported") == "improved"
    assert change_kind("missing", "partial") == "newly-partial"
    assert change_kind("partial", "missing") == "worse"
    assert change_kind("reported", "partial") == "lost"
    assert change_kind("missing", "not-applicable") == "applicability-changed"


def test_passages_aligned_by_wording():
    from checker.reading.document import Location
    from checker.verdicts.report import Evidence

    a = Evidence("Two radiologists annotated every scan of the test set.", Location("x", line=4, section=("Data",)), 1)
    b = Evidence("Two radiologists annotated every scan of the test set.", Location("x", line=9,
                                                                                    section=("Reference",)), 1)
    c = Evidence("Two experienced radiologists annotated each scan of the test set.", Location("x", line=9), 1)
    d = Evidence("The code is available on request.", Location("x", line=30), 1)
    assert [p.change for p in align((a,), (b,))] == ["moved"]
    assert [p.change for p in align((a,), (c,))] == ["reworded"]
    assert [p.change for p in align((a,), (d,))] == ["added", "removed"]


def test_formats_and_command(versions, comparison, tmp_path):
    data = json.loads(render("json", comparison))
    assert data["summary"]["newly-reported"] >= 2 and data["checklist"]["id"] == "validation-study"
    assert render("json", comparison) == render("json", comparison)
    md = render("markdown", comparison)
    assert md.startswith("# What changed") and "**reference.annotators**" in md and "> " in md
    term = render("terminal", comparison)
    assert "newly reported" in term and "still missing" in term and "to ask:" in term

    parser = argparse.ArgumentParser(prog="studygap")
    compare_cmd.add_parser(parser.add_subparsers(dest="command"))
    out = tmp_path / "changes.md"
    args = parser.parse_args(["compare", *versions, "--checklist", "validation-study", "-f", "markdown",
                              "-o", str(out)])
    assert compare_cmd.run(args) == 0
    assert "reference.annotators" in out.read_text(encoding="utf-8")
    missing = parser.parse_args(["compare", versions[0], str(tmp_path / "nope.md"), "--checklist", "validation-study"])
    assert compare_cmd.run(missing) == 2


def test_fail_on_lost_and_missing_stop_ci(versions, tmp_path, capsys):
    parser = argparse.ArgumentParser(prog="studygap")
    compare_cmd.add_parser(parser.add_subparsers(dest="command"))
    old, new = versions
    out = str(tmp_path / "out.txt")
    # forwards nothing is lost, but some items are still missing
    assert compare_cmd.run(parser.parse_args(["compare", old, new, "--checklist", "validation-study", "-o", out,
                                              "--fail-on", "lost"])) == 0
    assert compare_cmd.run(parser.parse_args(["compare", old, new, "--checklist", "validation-study", "-o", out,
                                              "--fail-on", "missing"])) == 1
    assert "over --fail-on missing" in capsys.readouterr().err
    # backwards the annotation paragraph is lost: exit 1, and the item is named
    assert compare_cmd.run(parser.parse_args(["compare", new, old, "--checklist", "validation-study", "-o", out,
                                              "--fail-on", "lost"])) == 1
    err = capsys.readouterr().err
    assert "reference.annotators (reported -> " in err
    assert Path(out).read_text(encoding="utf-8")  # the report is written before the exit code is given
    assert compare_cmd.run(parser.parse_args(["compare", new, old, "--checklist", "validation-study", "-o",
                                              out])) == 0
