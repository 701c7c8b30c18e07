"""An unexpected error (a bug in studygap) is one line with its own exit code, 4, distinct from 1 (--fail-on),
2 (a user's mistake) and 3 (some inputs unreadable); --debug shows the traceback. In `check A B C` every
error, a bug or a regex time-out, is that file's line and the batch goes on.

Before: a bug printed a traceback and exited 1, the code --fail-on uses, and a regex time-out (an error without
a path) ended `check A B C` with nothing written.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from checker.many import batch
from checker.core.errors import ExitCode
from tests.test_bad_input import make_bad, run

ROOT = Path(__file__).resolve().parent.parent

#: the real command line, with a bug planted in the pipeline for documents whose name holds "buggy"
FAULTY_MAIN = """
import sys
import checker.engine as engine
real = engine._check
def planted(path, *args):
    if "buggy" in str(path):
        {}.items()["no such key"]  # a TypeError, as a bug would raise
    return real(path, *args)
engine._check = planted
from checker.cli.main import main
sys.exit(main(sys.argv[1:]))
"""


@pytest.fixture(scope="module")
def folder(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("internal")
    make_bad.build(out, only=["good_markdown", "good_text", "crafted_text", "checklist_slow_regex"])
    (out / "buggy.md").write_bytes((out / "good.md").read_bytes())
    return out


def faulty(args: list[str], cwd: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT), "STUDYGAP_CACHE_DIR": "off"}
    return subprocess.run([sys.executable, "-c", FAULTY_MAIN, *args], cwd=cwd, capture_output=True, text=True,
                          timeout=120, env=env, check=False)


def test_a_bug_is_one_line_with_exit_4_and_a_hint(folder):
    proc = faulty(["check", "buggy.md", "-f", "json"], folder)
    assert proc.returncode == ExitCode.INTERNAL_ERROR == 4
    assert proc.stdout == "" and "Traceback" not in proc.stderr
    line, = proc.stderr.splitlines()
    assert line.startswith("studygap: internal error: buggy.md: studygap failed (TypeError")
    assert "rerun with --debug" in line


def test_debug_shows_the_traceback(folder):
    proc = faulty(["check", "buggy.md", "--debug"], folder)
    assert proc.returncode == 4
    assert "Traceback (most recent call last)" in proc.stderr and "planted" in proc.stderr
    assert proc.stderr.splitlines()[-1].startswith("studygap: internal error: buggy.md:")
    assert faulty(["--debug", "check", "buggy.md"], folder).stderr.count("Traceback") == 1  # before the command too


def test_a_bug_on_one_file_of_three_costs_only_that_file(folder):
    proc = faulty(["check", "good.md", "buggy.md", "good.txt", "-f", "json"], folder)
    assert proc.returncode == 4 and "Traceback" not in proc.stderr
    line, = proc.stderr.splitlines()
    assert line.startswith("studygap: internal error: buggy.md:")
    assert [r["document"]["path"] for r in json.loads(proc.stdout)] == ["good.md", "good.txt"]


def test_a_regex_time_out_in_a_batch_of_three_gives_two_reports_and_one_error_line(folder):
    proc = run(["check", "good.md", "crafted.md", "good.txt", "-f", "json", "--checklist", "checklist-slow-regex.yaml",
                "--regex-seconds", "0.5", "--no-cache"], cwd=folder, timeout=120)
    assert proc.returncode == 3 and "Traceback" not in proc.stderr
    line, = proc.stderr.splitlines()
    assert line.startswith("studygap: error: crafted.md: the checklist regex ") and "--regex-seconds" in line
    assert [r["document"]["path"] for r in json.loads(proc.stdout)] == ["good.md", "good.txt"]


def test_a_bug_in_a_screen_worker_is_an_internal_row(folder, monkeypatch):
    import checker.engine as engine

    def planted(*args, **kwargs):
        raise KeyError("planted")

    monkeypatch.setattr(engine, "check_document", planted)
    result = batch.check_one(str(folder / "good.md"), "validation-study")
    assert not result.ok and "KeyError" in result.error and "planted" in result.traceback
    from checker.cli.screen import exit_code

    assert exit_code([result]) == ExitCode.INTERNAL_ERROR
    assert exit_code([batch.BatchResult("x.md", error="x.md: the file is empty")]) == ExitCode.SOME_INPUTS_FAILED


def test_the_exit_codes_are_documented_alike():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "4 internal error" in readme and "--debug" in readme
    for command in ("check", "outline", "screen", "audit", "compare", "evaluate", "checklists"):
        help_text = run([command, "--help"], cwd=ROOT).stdout
        assert "4 internal error (a bug in studygap; --debug shows the traceback)" in " ".join(help_text.split()), command
