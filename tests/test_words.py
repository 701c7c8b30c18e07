"""Word lists are data (checklists/words.yaml), checked like a checklist, and the analysis code holds none of its own."""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

from checker.core.errors import ChecklistError
from checker.core.words import GROUPS, LISTS, MAPS, builtin_words, parse_words

ROOT = Path(__file__).resolve().parent.parent

#: modules that may hold a literal collection of a dozen or more words, each with why: none holds words of the
#: documents' language or field (those are in checklists/words.yaml), only names of a format's or the code's own
ALLOWED = {
    "checker/core/words.py": "the names of the lists the code asks for",
    "checker/matching/facts.py": "the numerals (zero ... nineteen, twenty ... ninety, fifth ... ninety-ninth): "
                                 "the grammar of writing numbers, not vocabulary of the field",
    "checker/matching/matcher.py": "section role ids and their weights, not words of the text",
    "checker/reading/html.py": "HTML element names: the format's syntax",
    "checker/reading/latex.py": "LaTeX command and environment names: the format's syntax",
    "checker/reading/text.py": "reStructuredText directive names: the format's syntax",
}
#: a plain word or phrase of plain words ("related work", "list of figures and tables")
WORD = re.compile(r"^[a-z][a-z'.-]*( [a-z][a-z'.-]*)*$")


def word_lists_in(path: Path) -> list[tuple[int, int]]:
    """(line, size) of every literal collection of twelve or more lower-case words, or a string split into them."""
    out = []
    for n in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        consts: list[str] = []
        if isinstance(n, (ast.Set, ast.List, ast.Tuple)):
            consts = [e.value for e in n.elts if isinstance(e, ast.Constant) and isinstance(e.value, str)]
        elif isinstance(n, ast.Dict):
            consts = [k.value for k in n.keys if isinstance(k, ast.Constant) and isinstance(k.value, str)]
        elif (isinstance(n, ast.Call) and isinstance(n.func, ast.Attribute) and n.func.attr == "split"
              and not n.args and isinstance(n.func.value, ast.Constant) and isinstance(n.func.value.value, str)):
            consts = n.func.value.value.split()
        if sum(bool(WORD.match(c)) for c in consts) >= 12:
            out.append((n.lineno, len(consts)))
    return out


def test_the_built_in_word_lists_are_complete_and_valid():
    words = builtin_words()
    assert set(words.lists) == set(LISTS) and set(words.maps) == set(MAPS) and set(words.groups) == set(GROUPS)
    assert "radiologist" in words.set("known-nouns") and words.maps["irregular-plurals"]["mice"] == "mouse"
    assert words.groups["case-units"]["radiograph"] == "image"
    total = sum(map(len, words.lists.values())) + sum(map(len, words.maps.values())) \
        + sum(map(len, words.groups.values()))
    assert total > 800


def test_no_word_lists_in_python_modules():
    found = []
    for p in sorted((ROOT / "checker").rglob("*.py")):
        rel = p.relative_to(ROOT).as_posix()
        if rel not in ALLOWED:
            found += [f"{rel}:{line}: {size} words" for line, size in word_lists_in(p)]
    assert found == [], "word lists belong in checklists/words.yaml (checker.core.words)"


def test_the_scan_sees_a_word_list(tmp_path):
    probe = tmp_path / "probe.py"
    probe.write_text('X = frozenset("alpha beta gamma delta epsilon zeta eta theta iota kappa lambda mu".split())\n'
                     'Y = {"one": 1, "two": 2}\n', encoding="utf-8")
    assert word_lists_in(probe) == [(1, 12)]


GOOD = ("version: 1\nlists:\n" + "".join(f"  {n}: [w{i}]\n" for i, n in enumerate(LISTS))
        + "maps:\n" + "".join(f"  {n}: {{a: b}}\n" for n in MAPS)
        + "groups:\n" + "".join(f"  {n}: {{g: [x{i}]}}\n" for i, n in enumerate(GROUPS)))


def test_a_small_valid_file_reads():
    w = parse_words(GOOD, "w.yaml")
    assert w.set("known-nouns") == {"w0"} and w.groups["case-units"] == {"x0": "g"}


@pytest.mark.parametrize("change, message", [
    (("  known-nouns: [w0]\n", "  known-nouns: [w0, Radiologist]\n"), "w.yaml:3:"),
    (("  known-nouns: [w0]\n", "  known-nouns: [w0, w0]\n"), "is in this list twice"),
    (("  known-nouns: [w0]\n", "  known-nouns: [w0]\n  known-nuons: [x]\n"), "did you mean 'known-nouns'"),
    (("  known-nouns: [w0]\n", ""), "missing required key 'known-nouns'"),
    (("  known-nouns: [w0]\n", "  known-nouns: w0\n"), "expected a list"),
])
def test_mistakes_in_the_word_lists_are_located(change, message):
    with pytest.raises(ChecklistError) as exc:
        parse_words(GOOD.replace(*change), "w.yaml")
    assert message in str(exc.value) and all(line.startswith("w.yaml:") for line in exc.value.problems)
