"""`screen` and `audit` know the reports studygap wrote by their content, whatever they are named, and skip them
with one line each: a screening page written into the proposals' folder is not screened as a proposal on the next
run (before, it was, and the next run refused to write over it as "an input").
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from checker.core.output import written_by_studygap
from tests.test_bad_input import run

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "fixtures" / "demo"
OWN = "written by studygap (a report, not a document to check)"


@pytest.fixture(scope="module")
def proposals(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("proposals")
    for name in ("wrist-fracture-manuscript.md", "kidney-stone-benchmark-proposal.md"):
        shutil.copy(DEMO / name, folder / name)
    first = run(["screen", ".", "--checklist", "validation-study", "-f", "html", "-o", "screening.html", "-q"],
                cwd=folder, timeout=180)
    assert first.returncode == 0, first.stderr
    # reports renamed like proposals: they are known by content, not by name
    for fmt, name in (("markdown", "proposal-3.md"), ("letter", "proposal-4.md"), ("html", "proposal-5.html"),
                      ("docx", "proposal-6.docx")):
        proc = run(["check", "wrist-fracture-manuscript.md", "-f", fmt, "-o", name], cwd=folder, timeout=120)
        assert proc.returncode == 0, proc.stderr
    return folder


def test_reports_carry_the_mark_and_documents_do_not(proposals):
    for name in ("screening.html", "proposal-3.md", "proposal-4.md", "proposal-5.html", "proposal-6.docx"):
        assert written_by_studygap(proposals / name), name
    for demo in DEMO.iterdir():
        assert not written_by_studygap(demo), demo.name
    for document in (ROOT / "tests" / "data").rglob("*"):
        assert not written_by_studygap(document), document


@pytest.mark.parametrize("command", ["screen", "audit"])
def test_screen_and_audit_skip_their_own_outputs_with_one_line_each(proposals, command):
    proc = run([command, ".", "--checklist", "validation-study", "-f", "json", "-o", f"{command}.json", "-q"],
               cwd=proposals, timeout=180)
    assert proc.returncode == 0, proc.stderr
    skipped = sorted(line for line in proc.stderr.splitlines() if line.endswith(OWN))
    assert skipped == [f"studygap: skipped: {n}: {OWN}" for n in
                       ("proposal-3.md", "proposal-4.md", "proposal-5.html", "proposal-6.docx", "screening.html")]
    data = json.loads((proposals / f"{command}.json").read_text())
    assert data["summary"]["documents"] == 2 and data["summary"]["errors"] == 0


def test_the_screening_page_can_be_written_again_over_itself(proposals):
    proc = run(["screen", ".", "--checklist", "validation-study", "-f", "html", "-o", "screening.html", "-q"],
               cwd=proposals, timeout=180)
    assert proc.returncode == 0, proc.stderr
    assert "is one of the input documents" not in proc.stderr
    assert written_by_studygap(proposals / "screening.html")


def test_a_report_named_on_the_command_line_is_skipped_too(proposals):
    proc = run(["screen", "wrist-fracture-manuscript.md", "proposal-3.md", "--checklist", "validation-study",
                "-f", "json", "-q"], cwd=proposals, timeout=180)
    assert proc.returncode == 0, proc.stderr
    assert f"studygap: skipped: proposal-3.md: {OWN}" in proc.stderr.splitlines()
    assert json.loads(proc.stdout)["summary"]["documents"] == 1
