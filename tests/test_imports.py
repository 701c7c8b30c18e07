"""The package's imports: no module imports one that imports it back (directly or round a loop), and no module
takes a private name (one starting with _) of another. Imports inside functions count too: a loop hidden in a
function is still a loop a reader must untangle."""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

def modules(root: Path = ROOT) -> dict[str, Path]:
    out = {}
    for p in sorted((root / "checker").rglob("*.py")):
        rel = p.relative_to(root)
        if "__pycache__" in rel.parts or rel.parts[1] == "checklists":
            continue
        parts = list(rel.with_suffix("").parts)
        if parts[-1] == "__init__":
            parts.pop()
        out[".".join(parts)] = p
    return out


def imports_of(name: str, path: Path, known: set[str]) -> list[tuple[str, str | None]]:
    """(module, name taken from it or None) for every import of the package's own modules in one file."""
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    out = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - (node.level - 1)]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target.split(".")[0] != "checker":
                continue
            for a in node.names:
                sub = f"{target}.{a.name}"
                out.append((sub, None) if sub in known else (target, a.name))
        elif isinstance(node, ast.Import):
            out.extend((a.name, None) for a in node.names if a.name.split(".")[0] == "checker")
    return out


def loops(graph: dict[str, set[str]]) -> set[tuple[str, ...]]:
    """The strongly connected groups of more than one module (Tarjan's algorithm, without recursion)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: set[tuple[str, ...]] = set()
    for start in sorted(graph):
        if start in index:
            continue
        work = [(start, iter(sorted(graph[start])))]
        index[start] = low[start] = len(index)
        stack.append(start)
        on_stack.add(start)
        while work:
            v, children = work[-1]
            w = next(children, None)
            if w is not None:
                if w not in index:
                    index[w] = low[w] = len(index)
                    stack.append(w)
                    on_stack.add(w)
                    work.append((w, iter(sorted(graph.get(w, ())))))
                elif w in on_stack:
                    low[v] = min(low[v], index[w])
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[v])
            if low[v] == index[v]:
                group = []
                while True:
                    w = stack.pop()
                    on_stack.discard(w)
                    group.append(w)
                    if w == v:
                        break
                if len(group) > 1:
                    found.add(tuple(sorted(group)))
    return found


def survey(root: Path = ROOT) -> tuple[set[tuple[str, ...]], set[tuple[str, str, str]]]:
    mods = modules(root)
    graph: dict[str, set[str]] = {m: set() for m in mods}
    private = set()
    for m, p in mods.items():
        for target, name in imports_of(m, p, set(mods)):
            if target in mods and target != m:
                graph[m].add(target)
            if name and name.startswith("_") and not name.startswith("__") and target != m:
                private.add((m, target, name))
    return loops(graph), private


def test_no_import_loops_and_no_private_names_across_modules():
    found_loops, private = survey()
    assert sorted(found_loops) == [], "modules that import each other (directly or round a loop)"
    assert sorted(private) == [], "private names imported from another module: make them public or move them"


def test_the_survey_sees_a_loop_and_a_private_name(tmp_path):
    pkg = tmp_path / "checker"
    (pkg / "sub").mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    (pkg / "sub" / "__init__.py").write_text("")
    (pkg / "a.py").write_text("def f():\n    from .sub import b\n")
    (pkg / "sub" / "b.py").write_text("from ..a import _hidden\n")
    assert survey(tmp_path) == ({("checker.a", "checker.sub.b")}, {("checker.sub.b", "checker.a", "_hidden")})
