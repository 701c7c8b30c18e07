"""The code runs on the lowest Python that pyproject.toml claims (CI's machine has only a newer one).

Two checks stand in for a run on that Python: every file parses with that version's grammar, and no name the
standard library gained later is used unless its import sits in a ``try`` that falls back on ImportError. The
table of later names is from the "What's New in Python 3.11 / 3.12 / 3.13" pages (from memory; the ones a
program like this would reach for). Beyond them, .ci/run runs the whole suite on that Python in a venv of its own
wherever the machine has it (pyenv's 3.10 here), before the README's test command.
"""

from __future__ import annotations

import ast
import re
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent

#: (module, name or None for the module itself) -> the first Python that has it
LATER = {
    ("tomllib", None): (3, 11),
    ("re._parser", None): (3, 11),
    ("re._constants", None): (3, 11),
    ("re", "_parser"): (3, 11),
    ("re", "_constants"): (3, 11),
    ("re", "NOFLAG"): (3, 11),
    ("typing", "Self"): (3, 11),
    ("typing", "LiteralString"): (3, 11),
    ("typing", "Never"): (3, 11),
    ("typing", "assert_never"): (3, 11),
    ("typing", "assert_type"): (3, 11),
    ("typing", "reveal_type"): (3, 11),
    ("typing", "Required"): (3, 11),
    ("typing", "NotRequired"): (3, 11),
    ("typing", "TypeVarTuple"): (3, 11),
    ("typing", "Unpack"): (3, 11),
    ("typing", "dataclass_transform"): (3, 11),
    ("typing", "get_overloads"): (3, 11),
    ("typing", "override"): (3, 12),
    ("typing", "TypeAliasType"): (3, 12),
    ("typing", "ReadOnly"): (3, 13),
    ("typing", "TypeIs"): (3, 13),
    ("enum", "StrEnum"): (3, 11),
    ("enum", "ReprEnum"): (3, 11),
    ("enum", "verify"): (3, 11),
    ("enum", "EnumCheck"): (3, 11),
    ("datetime", "UTC"): (3, 11),
    ("contextlib", "chdir"): (3, 11),
    ("hashlib", "file_digest"): (3, 11),
    ("operator", "call"): (3, 11),
    ("math", "cbrt"): (3, 11),
    ("math", "exp2"): (3, 11),
    ("asyncio", "TaskGroup"): (3, 11),
    ("asyncio", "timeout"): (3, 11),
    ("logging", "getLevelNamesMapping"): (3, 11),
    ("itertools", "batched"): (3, 12),
    ("os.path", "splitroot"): (3, 12),
    ("sys", "exception"): (3, 11),
    ("sys", "monitoring"): (3, 12),
    ("copy", "replace"): (3, 13),
    ("warnings", "deprecated"): (3, 13),
    ("builtins", "ExceptionGroup"): (3, 11),
    ("builtins", "BaseExceptionGroup"): (3, 11),
}


def floor() -> tuple[int, int]:
    text = (ROOT / "pyproject.toml").read_text(encoding="utf-8")
    m = re.search(r'^requires-python\s*=\s*">=\s*(\d+)\.(\d+)"', text, re.M)
    assert m, "pyproject.toml states requires-python as >=X.Y"
    return int(m.group(1)), int(m.group(2))


def sources() -> list[Path]:
    return sorted(p for d in ("checker", "tests", "benchmarks", "fixtures") for p in (ROOT / d).rglob("*.py")
                  if "__pycache__" not in p.parts)


def _guarded(node: ast.AST, parents: dict[ast.AST, ast.AST]) -> bool:
    """Inside a try whose handlers catch ImportError (or AttributeError for a name): a fallback exists."""
    while node in parents:
        node, child = parents[node], node
        if isinstance(node, ast.Try) and child in node.body:
            for h in node.handlers:
                names = [h.type] if not isinstance(h.type, ast.Tuple) else list(h.type.elts)
                if any(isinstance(n, ast.Name) and n.id in ("ImportError", "ModuleNotFoundError", "AttributeError")
                       for n in names):
                    return True
    return False


def later_names(tree: ast.AST, version: tuple[int, int]) -> list[str]:
    parents = {c: p for p in ast.walk(tree) for c in ast.iter_child_nodes(p)}
    modules: dict[str, str] = {}  # local name -> module
    found = []

    def too_new(key, node):
        need = LATER.get(key)
        if need and need > version and not _guarded(node, parents):
            found.append(f"line {node.lineno}: {key[0]}{'.' + key[1] if key[1] else ''} needs Python "
                         f"{need[0]}.{need[1]}")

    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                modules[a.asname or a.name.split(".")[0]] = a.name if a.asname else a.name.split(".")[0]
                too_new((a.name, None), node)
        elif isinstance(node, ast.ImportFrom) and node.module and not node.level:
            too_new((node.module, None), node)
            for a in node.names:
                too_new((node.module, a.name), node)
                too_new((f"{node.module}.{a.name}", None), node)
    for node in ast.walk(tree):
        if isinstance(node, ast.Attribute) and isinstance(node.value, ast.Name) and node.value.id in modules:
            too_new((modules[node.value.id], node.attr), node)
        elif isinstance(node, ast.Attribute) and isinstance(node.value, ast.Attribute) \
                and isinstance(node.value.value, ast.Name) and node.value.value.id == "os":
            too_new((f"os.{node.value.attr}", node.attr), node)
        elif isinstance(node, ast.Name) and isinstance(node.ctx, ast.Load):
            too_new(("builtins", node.id), node)
    return found


def test_the_claimed_floor_is_the_oldest_python_the_tests_know():
    assert floor() == (3, 10), "a new floor: update LATER and run the suite on that Python"


@pytest.mark.parametrize("path", sources(), ids=lambda p: str(p.relative_to(ROOT)))
def test_every_file_parses_and_uses_only_names_of_the_lowest_claimed_python(path):
    version = floor()
    text = path.read_text(encoding="utf-8")
    try:
        tree = ast.parse(text, filename=str(path), feature_version=version)
    except SyntaxError as exc:
        pytest.fail(f"{path.relative_to(ROOT)}:{exc.lineno}: not Python {version[0]}.{version[1]} grammar: {exc.msg}")
    assert later_names(tree, version) == []


def test_the_check_sees_a_later_name_and_a_later_grammar():
    """The check itself can fail: a bare tomllib import, typing.Self and an except* are each caught."""
    assert later_names(ast.parse("import tomllib\n"), (3, 10)) == ["line 1: tomllib needs Python 3.11"]
    assert later_names(ast.parse("from typing import Self\n"), (3, 10)) == ["line 1: typing.Self needs Python 3.11"]
    assert later_names(ast.parse("import re._parser as p\n"), (3, 10)) == ["line 1: re._parser needs Python 3.11"]
    guarded = "try:\n    import tomllib\nexcept ImportError:\n    import tomli as tomllib\n"
    assert later_names(ast.parse(guarded), (3, 10)) == []
    if sys.version_info >= (3, 11):
        with pytest.raises(SyntaxError):
            ast.parse("try:\n    pass\nexcept* ValueError:\n    pass\n", feature_version=(3, 10))
