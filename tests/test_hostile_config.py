"""Settings planted above the project: never read. The search goes from the current folder up to the nearest
project root (.git or pyproject.toml), never above the home folder and never to the file system's root."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import yaml

from checker.matching.checklist import load_checklist
from checker.core.config import find_config, search_folders

from .conftest import DATA

ROOT = Path(__file__).resolve().parent.parent
MINI = str(DATA / "checklists" / "mini.yaml")
TEXT = "# Methods\n\nWe compared two methods on a test set.\n"


def _waive_everything(folder: Path) -> Path:
    """A settings file that waives every item and drops --fail-on: what an attacker plants to pass CI."""
    waivers = {it.id: "not needed" for it in load_checklist(MINI).items}
    path = folder / "studygap.yaml"
    path.write_text(yaml.safe_dump({"waivers": waivers, "checklist": MINI}), encoding="utf-8")
    return path


def _check(cwd: Path, home: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT), "HOME": str(home)}
    return subprocess.run([sys.executable, "-m", "checker.cli", "check", "draft.md", "--checklist", MINI,
                           "--fail-on", "missing", "-f", "json", "--no-cache"],
                          cwd=cwd, capture_output=True, text=True, env=env, timeout=120)


def test_a_settings_file_planted_above_the_project_root_is_not_read(tmp_path):
    shared = tmp_path / "shared"
    project = shared / "project"
    (project / ".git").mkdir(parents=True)
    (project / "draft.md").write_text(TEXT, encoding="utf-8")
    _waive_everything(shared)
    proc = _check(project, home=tmp_path / "home")
    assert proc.returncode == 1, proc.stderr  # items are missing, and --fail-on still says so
    statuses = {it["status"] for it in json.loads(proc.stdout)["items"]}
    assert "waived" not in statuses and "missing" in statuses


def test_outside_home_without_a_project_root_only_the_current_folder_is_searched(tmp_path):
    parent = tmp_path / "mnt"
    here = parent / "drafts"
    here.mkdir(parents=True)
    (here / "draft.md").write_text(TEXT, encoding="utf-8")
    _waive_everything(parent)
    home = tmp_path / "home"
    assert search_folders(here, home) == [here.resolve()]
    assert find_config(here, home) is None
    proc = _check(here, home=home)
    assert proc.returncode == 1 and "waived" not in {it["status"] for it in json.loads(proc.stdout)["items"]}
    own = _waive_everything(here)  # the user's own file in the folder they run in is read
    assert find_config(here, home) == own


def test_under_home_the_search_stops_at_home(tmp_path):
    home = tmp_path / "home"
    deep = home / "papers" / "draft"
    deep.mkdir(parents=True)
    _waive_everything(tmp_path)  # above home
    assert find_config(deep, home) is None
    assert search_folders(deep, home) == [deep.resolve(), (home / "papers").resolve(), home.resolve()]
    mine = _waive_everything(home / "papers")
    assert find_config(deep, home) == mine


def test_the_project_root_is_searched_and_nothing_above_it(tmp_path):
    project = tmp_path / "home" / "project"
    sub = project / "paper" / "sections"
    sub.mkdir(parents=True)
    (project / "pyproject.toml").write_text('[tool.studygap]\nfail-on = "partial"\n')
    _waive_everything(tmp_path / "home")
    assert find_config(sub, tmp_path / "home") == project / "pyproject.toml"


def test_the_file_system_root_is_never_searched(tmp_path):
    assert Path("/") not in search_folders(Path("/"), tmp_path)
    assert Path("/") not in search_folders(Path("/usr/share"), tmp_path)


def test_a_broken_settings_file_is_one_line_with_its_place(tmp_path):
    # the fuzz test found these: a YAML error printed four lines (the parser's own excerpt), and a value of the
    # wrong type (a list as the checklist, a number as [tool.studygap]) gave a traceback
    (tmp_path / ".git").mkdir()
    draft = tmp_path / "draft.md"
    draft.write_text("# Methods\n\nThree radiologists annotated every scan.\n", encoding="utf-8")
    env = {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT), "HOME": str(tmp_path)}
    cases = [
        ("studygap.yaml", "checklist: validation-study\nfail-on: missing: yes\n", "studygap.yaml:2:", "valid YAML"),
        ("studygap.yaml", "checklist: [a, b]\n", "studygap.yaml", "checklist must be a checklist id"),
        ("studygap.yaml", "ignore-sections: {a: 1}\n", "studygap.yaml", "ignore-sections must be a list"),
        ("pyproject.toml", "[tool]\nstudygap = 3\n", "pyproject.toml", "[tool.studygap] must be a table"),
    ]
    for name, text, where, cause in cases:
        for old in ("studygap.yaml", "pyproject.toml"):
            (tmp_path / old).unlink(missing_ok=True)
        (tmp_path / name).write_text(text, encoding="utf-8")
        named = ["--config", name] if name == "pyproject.toml" else []  # found only with a [tool.studygap header
        proc = subprocess.run([sys.executable, "-m", "checker.cli", "check", "draft.md", "--checklist", MINI, *named],
                              cwd=tmp_path, capture_output=True, text=True, timeout=120, env=env, check=False)
        assert proc.returncode == 2 and "Traceback" not in proc.stderr, proc.stderr
        line, = proc.stderr.splitlines()
        assert line.startswith(f"studygap: error: {where if named else tmp_path / where}") and cause in line, line
