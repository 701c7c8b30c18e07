"""Word lists as data: checklists/words.yaml, read and checked like a checklist (every problem FILE:LINE:COLUMN).

The code names the lists it reads (LISTS, MAPS, GROUPS below, with what each is for in the YAML's comments); the
words themselves live in the YAML, so that a list grows without a change to Python. ``lists`` are sets of words,
``maps`` word -> word, ``groups`` group -> words (read as word -> group).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from importlib import resources

from .errors import ChecklistError
from .marked import Node, Problems, compose, expect_type, fields_of, text_of

WORDS_FILE = "words.yaml"

LISTS = ("known-nouns", "singular-words-ending-in-s", "noun-phrase-stops", "never-counted-heads", "split-words",
         "number-labels", "subset-words", "site-subset-words", "method-subset-words", "statement-verbs",
         "part-of-collection-words", "neutral-test-set-qualifiers", "list-stop-words", "sentence-abbreviations",
         "letter-labelled-nouns", "structured-abstract-headings", "thesis-front-headings", "heading-joining-words",
         "hyphen-kept-heads", "contents-headings")
MAPS = ("irregular-plurals",)
GROUPS = ("case-units", "annotator-units", "site-units", "method-units", "section-headings")


@dataclass(frozen=True)
class Words:
    lists: dict[str, tuple[str, ...]]  # in the order written (an alternation of labels keeps it)
    maps: dict[str, dict[str, str]]
    groups: dict[str, dict[str, str]]  # word -> group

    def set(self, name: str) -> frozenset[str]:
        return frozenset(self.lists[name])


def _word(p: Problems, node: Node, path: str) -> str:
    if isinstance(node.value, (int, float)) and not isinstance(node.value, bool):
        node = Node(str(node.value), node.line, node.column)
    w = text_of(p, node, path)
    if w and w != w.lower():
        p.add(node, path, f"write words in lower case ({w.lower()!r}): the code compares them in lower case")
    return w


def _words(p: Problems, node: Node, path: str) -> tuple[str, ...]:
    if not expect_type(p, node, path, list):
        return ()
    out: list[str] = []
    for i, sub in enumerate(node.value):
        w = _word(p, sub, f"{path}[{i}]")
        if w in out:
            p.add(sub, f"{path}[{i}]", f"{w!r} is in this list twice")
        elif w:
            out.append(w)
    if not out and not p.items:
        p.add(node, path, "give at least one word")
    return tuple(out)


def parse_words(text: str, file: str) -> Words:
    """The word lists from YAML text; ChecklistError with every problem located."""
    p = Problems(file)
    top = fields_of(p, compose(text, file), "", {"version", "lists", "maps", "groups"}, set())
    lists: dict[str, tuple[str, ...]] = {}
    maps: dict[str, dict[str, str]] = {}
    groups: dict[str, dict[str, str]] = {}
    if "lists" in top:
        for name, node in fields_of(p, top["lists"], "lists", set(LISTS), set()).items():
            lists[name] = _words(p, node, f"lists -> {name}")
    if "maps" in top:
        for name, node in fields_of(p, top["maps"], "maps", set(MAPS), set()).items():
            if expect_type(p, node, f"maps -> {name}", dict):
                maps[name] = {k: _word(p, v, f"maps -> {name} -> {k}") for k, (_kn, v) in node.value.items()}
    if "groups" in top:
        for name, node in fields_of(p, top["groups"], "groups", set(GROUPS), set()).items():
            if not expect_type(p, node, f"groups -> {name}", dict):
                continue
            by_word: dict[str, str] = {}
            for group, (_kn, wnode) in node.value.items():
                for w in _words(p, wnode, f"groups -> {name} -> {group}"):
                    if w in by_word:
                        p.add(wnode, f"groups -> {name} -> {group}", f"{w!r} is in group {by_word[w]!r} already")
                    by_word.setdefault(w, group)
            groups[name] = by_word
    if p.items:
        raise ChecklistError(p.lines())
    return Words(lists, maps, groups)


@lru_cache(maxsize=1)
def builtin_words() -> Words:
    """The word lists shipped beside the checklists (parsed once per process, and kept between runs)."""
    from ..resultcache import parsed

    text = (resources.files("checker.checklists") / WORDS_FILE).read_text(encoding="utf-8")
    return parsed("Words", text, f"checklists/{WORDS_FILE}", "", lambda: parse_words(text, f"checklists/{WORDS_FILE}"))
