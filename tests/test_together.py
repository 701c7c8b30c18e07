"""Several files as one document (`check --together`), and a LaTeX section file checked as part of its main file."""

import json
import os
import subprocess
import sys


def _studygap(*args, cwd=None):
    # a bare environment, but the same code: PYTHONPATH names the checkout under test where it is set
    env = {"STUDYGAP_CACHE_DIR": "off", "PATH": "/usr/bin:/bin", "PYTHONPATH": os.environ.get("PYTHONPATH", "")}
    return subprocess.run([sys.executable, "-m", "checker.cli", *args], capture_output=True, text=True, cwd=cwd,
                          env=env)


def test_a_site_of_several_pages_is_one_document(tmp_path):
    (tmp_path / "page1.md").write_text("# Overview\n\nThis challenge asks participants to segment kidneys in CT.\n")
    (tmp_path / "page10.md").write_text("# Terms\n\nEach team may make three submissions to the test phase.\n")
    (tmp_path / "page2.md").write_text("# Data\n\nThe test set holds 120 CT scans from three hospitals, each "
                                       "annotated by two radiologists.\n")
    r = _studygap("check", str(tmp_path), "--together", "--format", "json", "--checklist", "benchmark-proposal")
    assert r.returncode == 0, r.stderr
    report = json.loads(r.stdout)
    files = {ev["location"]["file"].rsplit("/", 1)[-1] for it in report["items"] for ev in it["evidence"]}
    # facts from the second and the tenth page reach the one report, each passage naming its own file
    assert {"page2.md", "page10.md"} <= files
    status = {it["id"]: it["status"] for it in report["items"]}
    assert status["reference.annotators"] == "reported" and status["data.counts"] != "missing"


def test_a_latex_section_file_is_checked_as_part_of_its_main_file(tmp_path):
    (tmp_path / "sections").mkdir()
    (tmp_path / "main.tex").write_text("\\documentclass{article}\n\\begin{document}\n\\section{Methods}\n"
                                       "\\input{sections/data}\n\\input{sections/eval}\n\\end{document}\n")
    (tmp_path / "sections" / "data.tex").write_text("Each scan was annotated by two radiologists.\n")
    (tmp_path / "sections" / "eval.tex").write_text("We report the mean Dice per patient.\n")
    r = _studygap("check", "sections/data.tex", "sections/eval.tex", "--format", "lines",
                  "--checklist", "validation-study", cwd=tmp_path)
    # one document checked once, not two fragments; stderr says why
    assert "sections/data.tex is part of main.tex" in r.stderr
    missing = [line for line in r.stdout.splitlines() if ": missing " in line]
    assert missing and all(line.startswith("main.tex:1:1:") for line in missing)
    items = [line.split(": missing ", 1)[1].split(":", 1)[0] for line in missing]
    assert len(items) == len(set(items))  # each gap once
    # a found passage names the part file it stands in
    assert any(line.startswith("sections/data.tex:1:") for line in r.stdout.splitlines())
