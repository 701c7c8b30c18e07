"""A file name or text with line breaks or escape sequences stays one record and reaches no terminal raw."""

import subprocess
import sys


def test_a_file_name_with_a_newline_cannot_forge_an_annotation_line(tmp_path):
    name = tmp_path / "draft\n::error file=x::forged.md"
    name.write_text("# Methods\n\nThe scans were read by two radiologists.\n", encoding="utf-8")
    r = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(name), "--format", "lines",
                        "--checklist", "validation-study", "--no-cache"], capture_output=True, text=True)
    assert r.stdout
    # every record still starts with the (escaped) path, so no line begins with a forged command
    assert not any(line.startswith("::") for line in r.stdout.splitlines())
    assert all("draft\\n::error" in line for line in r.stdout.splitlines())


def test_an_error_about_such_a_file_is_one_line_without_escape_codes(tmp_path):
    name = tmp_path / "empty\x1b[31m\nred.md"
    name.write_text("", encoding="utf-8")
    r = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(name)], capture_output=True, text=True)
    assert r.returncode == 2
    assert r.stderr.count("\n") == 1 and "\x1b" not in r.stderr and "\\x1b" in r.stderr


def test_escape_codes_in_a_file_name_reach_neither_terminal_nor_markdown(tmp_path):
    name = tmp_path / "draft\x1b[31m.md"
    name.write_text("# Methods\n\nThe scans were read by two radiologists.\n", encoding="utf-8")
    for fmt in ("terminal", "markdown", "letter"):
        r = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(name), "--format", fmt,
                            "--checklist", "validation-study", "--no-cache", "--no-color"],
                           capture_output=True, text=True)
        assert r.returncode in (0, 1) and r.stdout, fmt
        assert "\x1b" not in r.stdout, fmt
