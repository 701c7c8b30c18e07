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
