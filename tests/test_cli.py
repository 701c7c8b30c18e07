"""The command line end to end: exit codes, formats, errors as one line, checklists and outline."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest

from checker.cli.main import main

from .conftest import DATA, DEMO, ROOT

MANUSCRIPT = DEMO / "wrist-fracture-manuscript.md"
PROPOSAL = DEMO / "kidney-stone-benchmark-proposal.md"
MINI = DATA / "checklists" / "mini.yaml"
SCHEMA = json.loads((ROOT / "checker" / "schema" / "report.schema.json").read_text())


def run(args, capsys):
    code = main([str(a) for a in args])
    out, err = capsys.readouterr()
    return code, out, err


def test_check_json_follows_the_schema_and_contract(capsys):
    code, out, err = run(["check", MANUSCRIPT, "--format", "json"], capsys)
    assert code == 0, err
    data = json.loads(out)
    jsonschema.validate(data, SCHEMA)
    assert data["document"]["format"] == "markdown" and data["checklist"]["id"] == "validation-study"
    assert sum(data["summary"].values()) == len(data["items"])
    reported = [it for it in data["items"] if it["status"] == "reported"]
    assert reported and all(it["evidence"] and it["evidence"][0]["location"]["line"] for it in reported)
    assert any("does not show that the study is sound" in c for c in data["cautions"])


def test_json_is_byte_identical_between_processes(tmp_path):
    outs = []
    for i in range(2):
        target = tmp_path / f"r{i}.json"
        subprocess.run([sys.executable, "-m", "checker.cli", "check", str(MANUSCRIPT), "--format", "json",
                        "-o", str(target)], check=True, cwd=ROOT)
        outs.append(target.read_bytes())
    assert outs[0] == outs[1]


def test_fail_on_sets_exit_code_one(capsys):
    code, _, _ = run(["check", MANUSCRIPT, "--checklist", MINI, "--fail-on", "partial", "-f", "json"], capsys)
    data_code, out, _ = run(["check", MANUSCRIPT, "--checklist", MINI, "-f", "json"], capsys)
    statuses = {it["status"] for it in json.loads(out)["items"]}
    assert data_code == 0
    assert code == (1 if statuses & {"missing", "partial"} else 0)


def test_terminal_report_spells_out_statuses_and_cautions(capsys):
    code, out, _ = run(["check", MANUSCRIPT, "--no-color"], capsys)
    assert code == 0
    assert "reported" in out and "Where the data came from" in out
    assert "\x1b[" not in out
    assert "a person must still read the document" in out.lower()


def test_bad_input_is_one_clear_line_and_exit_two(tmp_path, capsys):
    fake = tmp_path / "paper.pdf"
    fake.write_text("<html><body>not a pdf</body></html>")
    code, out, err = run(["check", fake], capsys)
    assert code == 2 and out == ""
    assert err.startswith(f"studygap: error: {fake}: ") and len(err.strip().splitlines()) == 1
    code, _, err = run(["check", tmp_path / "nothing.md"], capsys)
    assert code == 2 and "no such file" in err
    odd = tmp_path / "paper.xyz"
    odd.write_text("text")
    code, _, err = run(["check", odd], capsys)
    assert code == 2 and "unknown file type" in err


def test_a_batch_goes_on_past_a_bad_file(tmp_path, capsys):
    bad = tmp_path / "broken.docx"
    bad.write_bytes(b"PK\x03\x04 truncated")
    code, out, err = run(["check", MANUSCRIPT, bad, "--format", "json"], capsys)
    assert code == 3
    assert json.loads(out)[0]["document"]["path"].endswith("wrist-fracture-manuscript.md")
    assert str(bad) in err


def test_broken_checklist_is_refused_before_reading(tmp_path, capsys):
    bad = tmp_path / "bad.yaml"
    bad.write_text(MINI.read_text().replace("needs: any", "needs: sometimes").replace("title: Ranking", "titl: x"))
    code, out, err = run(["check", MANUSCRIPT, "--checklist", bad], capsys)
    assert code == 2 and out == ""
    lines = [ln for ln in err.splitlines() if ln.startswith(str(bad) + ":")]
    assert len(lines) == 3, err  # unknown key, missing title, bad needs: all at once


def test_checklists_commands(capsys):
    code, out, _ = run(["checklists", "list"], capsys)
    assert code == 0 and "validation-study" in out
    code, out, _ = run(["checklists", "show", "validation-study"], capsys)
    assert code == 0 and "data.source" in out
    code, out, _ = run(["checklists", "validate", MINI], capsys)
    assert code == 0 and "valid (2 items)" in out


def test_outline_json_has_sections_with_roles_and_lines(capsys):
    code, out, _ = run(["outline", MANUSCRIPT, "--format", "json"], capsys)
    assert code == 0
    data = json.loads(out)

    def flat(nodes):
        for n in nodes:
            yield n
            yield from flat(n["sections"])

    roles = {n["role"] for n in flat(data["sections"])}
    assert {"abstract", "methods", "results", "references"} <= roles
    assert all(n["start"]["line"] >= 1 for n in flat(data["sections"]))


@pytest.mark.parametrize("flag", ["--help", "--version"])
def test_help_and_version_answer(flag):
    proc = subprocess.run([sys.executable, "-m", "checker.cli", flag], capture_output=True, text=True, cwd=ROOT)
    assert proc.returncode == 0 and "studygap" in proc.stdout


def _commands():
    from checker.cli.main import build_parser

    parser = build_parser()
    sub = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction")
    out = []
    for name, p in sub.choices.items():
        out.append((name, p))
        for a in p._actions:
            if a.__class__.__name__ == "_SubParsersAction":
                out += [(f"{name} {n}", q) for n, q in a.choices.items()]
    return out


@pytest.mark.parametrize("name", [n for n, _ in _commands()])
def test_every_command_has_a_description_and_an_example(name):
    p = dict(_commands())[name]
    assert p.description and len(p.description) > 40, name
    assert "example:\n  studygap " + name.split()[0] in (p.epilog or ""), name
    for action in p._actions:
        if action.option_strings and action.dest != "help":
            assert action.help, f"{name} {action.option_strings[0]} has no help"
        elif not action.option_strings and action.__class__.__name__ != "_SubParsersAction":
            assert action.help, f"{name} {action.dest} has no help"


def test_readme_lists_every_command():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    commands = readme[readme.index("## Commands"):]
    commands = commands[: commands.index("\n## ", 5)]
    for name, _ in _commands():
        if " " not in name:
            assert f"`studygap {name}" in commands, name
