"""DEVELOPERS.md's map of the package matches the tree: every module is there, and nothing that is gone."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def mapped_paths(text: str) -> set[str]:
    """Paths the map's code block names under checker/: a line is `NAMES  description`, indented two spaces a level."""
    block = re.search(r"```\n(checker/ .*?)```", text, re.S)
    assert block, "DEVELOPERS.md has a code block that starts with the line for checker/"
    stack: list[str] = []
    found = set()
    for line in block.group(1).splitlines():
        if not line.strip() or line.startswith(" " * 20):  # a description carried over to the next line
            continue
        depth = (len(line) - len(line.lstrip(" "))) // 2
        names = re.split(r"\s{2,}", line.strip())[0].split(" ")
        if depth == 0:
            if names[0] != "checker/":
                break  # the package's part of the map ends where the next top-level folder begins
            stack = ["checker"]
            continue
        del stack[depth:]
        for name in names:
            found.add("/".join([*stack, name.rstrip("/")]))
        if names[-1].endswith("/"):
            stack.append(names[-1].rstrip("/"))
    return found


def tree_paths() -> set[str]:
    pkg = ROOT / "checker"
    out = set()
    for p in pkg.rglob("*"):
        rel = p.relative_to(ROOT)
        if "__pycache__" in rel.parts or rel.parts[1] == "checklists":
            continue
        if p.is_dir() and not any(f.is_file() and "__pycache__" not in f.parts for f in p.rglob("*")):
            continue  # a folder left with nothing but compiled files
        if p.is_dir() or (p.suffix == ".py" and p.name != "__init__.py"):
            out.add(rel.as_posix())
    return out


def test_every_module_and_folder_of_the_package_is_on_the_map():
    listed = mapped_paths((ROOT / "DEVELOPERS.md").read_text(encoding="utf-8"))
    tree = tree_paths()
    assert sorted(tree - listed) == [], "modules missing from DEVELOPERS.md's map"
    gone = {p for p in listed - tree if not (ROOT / p).exists()}
    assert sorted(gone) == [], "DEVELOPERS.md's map names modules that do not exist"


def test_the_map_reader_sees_a_missing_module():
    text = "```\nchecker/   the package\n  core/   x\n    errors.py   y\n```\n"
    assert mapped_paths(text) == {"checker/core", "checker/core/errors.py"}


def test_where_things_happen_names_real_places():
    """The map's "Where things happen" line (where a status is decided, a cue compiled, a renderer registered ...)
    names files that exist and, in brackets after each, names those files define."""
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    para = re.search(r"Where things happen:(.*?)\n\n", text, re.S)
    assert para, "DEVELOPERS.md says where things happen"
    places = re.findall(r"`([\w/<>]+\.py)`(?: \(([^)]*)\))?", para.group(1))
    assert {"verdicts/decide.py", "matching/matcher.py", "reports/__init__.py"} <= {p for p, _ in places}
    for path, names in places:
        if "<" in path:
            continue  # a pattern such as cli/<command>.py
        source = (ROOT / "checker" / path).read_text(encoding="utf-8")
        for name in re.findall(r"`(\w+)`", names or ""):
            assert re.search(rf"^\s*(?:def|class) {name}\b", source, re.M), f"{path} defines no {name}"
