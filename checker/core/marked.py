"""YAML read with the place of every value, and the checks every studygap YAML file shares (checklists, the
concept library, rules): expected types, known and required keys, texts; each problem located FILE:LINE:COLUMN.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from .errors import ChecklistError

if TYPE_CHECKING:  # imported where YAML is parsed: a run served from the parsed-checklist cache never needs it
    import yaml

#: a YAML file may refer to the same node again (aliases); past this many references it is refused,
#: so that a file of nested aliases cannot expand to billions of nodes
MAX_ALIAS_USES = 500
MAX_NODES = 200_000

class Node:
    """A YAML value with the place it was written, so every problem can be located."""

    __slots__ = ("value", "line", "column")

    def __init__(self, value: Any, line: int, column: int) -> None:
        self.value, self.line, self.column = value, line, column


class Loader:
    def __init__(self, file: str) -> None:
        self.file = file
        self.alias_uses = 0
        self.nodes = 0
        self.seen: set[int] = set()
        import yaml

        self.constructor = yaml.constructor.SafeConstructor()
        self.mapping, self.sequence = yaml.MappingNode, yaml.SequenceNode

    def convert(self, node: yaml.Node) -> Node:
        self.nodes += 1
        if id(node) in self.seen:
            self.alias_uses += 1
            if self.alias_uses > MAX_ALIAS_USES:
                raise TooManyAliases(node)
        if self.nodes > MAX_NODES:
            raise TooManyAliases(node)
        line, col = node.start_mark.line + 1, node.start_mark.column + 1
        if isinstance(node, self.mapping):
            self.seen.add(id(node))
            out: dict[str, tuple[Node, Node]] = {}
            for k, v in node.value:
                key = self.convert(k)
                out[str(key.value)] = (key, self.convert(v))
            return Node(out, line, col)
        if isinstance(node, self.sequence):
            self.seen.add(id(node))
            return Node([self.convert(v) for v in node.value], line, col)
        return Node(self.constructor.construct_object(node, deep=True), line, col)


class TooManyAliases(Exception):
    def __init__(self, node: yaml.Node) -> None:
        self.node = node


# ---------------------------------------------------------------------------------------------- validation


class Problems:
    def __init__(self, file: str, compile_regexes: bool = True) -> None:
        self.file = file
        #: compiling is the only full check of a regex, and the slow part of loading; built-in checklists are
        #: compiled by the test-suite, so at run time theirs are compiled when first needed
        self.compile_regexes = compile_regexes
        self.items: list[tuple[int, int, str]] = []
        #: word lists of the concept library, written {NAME} inside a regex (see expand_vocabulary)
        self.vocabulary: dict[str, str] = {}

    def add(self, node: Node | None, path: str, message: str) -> None:
        line, col = (node.line, node.column) if node is not None else (1, 1)
        self.items.append((line, col, f"{self.file}:{line}:{col}: {path}: {message}" if path else
                           f"{self.file}:{line}:{col}: {message}"))

    def lines(self) -> list[str]:
        return [m for _, _, m in sorted(self.items, key=lambda t: (t[0], t[1]))]


TYPE_WORDS = {str: "text", int: "a whole number", float: "a number", list: "a list", dict: "a mapping", bool: "true or false"}


def expect_type(p: Problems, node: Node, path: str, kind: type) -> bool:
    v = node.value
    ok = isinstance(v, kind) and not (kind in (int, float) and isinstance(v, bool))
    if kind is float and isinstance(v, int) and not isinstance(v, bool):
        ok = True
    if not ok:
        got = "nothing" if v is None else TYPE_WORDS.get(type(v), type(v).__name__)
        p.add(node, path, f"expected {TYPE_WORDS[kind]}, got {got}")
    return ok


def fields_of(p: Problems, node: Node, path: str, required: set[str], optional: set[str]) -> dict[str, Node]:
    """The mapping's values by key, with unknown and missing keys reported."""
    if not expect_type(p, node, path, dict):
        return {}
    out: dict[str, Node] = {}
    allowed = required | optional
    for key, (knode, vnode) in node.value.items():
        if key not in allowed:
            hint = closest(key, allowed)
            p.add(knode, join_path(path, key), "unknown key" + (f" (did you mean {hint!r}?)" if hint else ""))
            continue
        out[key] = vnode
    for key in sorted(required - set(out)):
        if key not in node.value:
            p.add(node, path, f"missing required key {key!r}")
    return out


def closest(key: str, allowed: set[str]) -> str | None:
    from rapidfuzz import process

    best = process.extractOne(key, sorted(allowed), score_cutoff=70)
    return best[0] if best else None


def join_path(path: str, key: str) -> str:
    return f"{path} -> {key}" if path else key


def text_of(p: Problems, node: Node | None, path: str, *, required: bool = True) -> str:
    if node is None:
        return ""
    if not expect_type(p, node, path, str):
        return ""
    if required and not node.value.strip():
        p.add(node, path, "must not be empty")
    return node.value.strip()


def flag_of(p: Problems, node: Node | None, path: str) -> bool:
    """An optional true/false value: false when absent or not a boolean (the latter reported)."""
    return node is not None and expect_type(p, node, path, bool) and node.value


def texts_of(p: Problems, node: Node | None, path: str) -> tuple[str, ...]:
    if node is None:
        return ()
    if isinstance(node.value, str):  # one phrase written without a list
        return (node.value,)
    if not expect_type(p, node, path, list):
        return ()
    out = []
    for i, sub in enumerate(node.value):
        t = text_of(p, sub, f"{path}[{i}]")
        if t:
            out.append(t)
    return tuple(out)


def compose(text: str, file: str) -> Node:
    """The YAML text as marked nodes, or ChecklistError with the place of the problem."""
    import yaml

    try:
        root_node = yaml.compose(text, Loader=getattr(yaml, "CSafeLoader", yaml.SafeLoader))  # libyaml when built
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line, col = (mark.line + 1, mark.column + 1) if mark else (1, 1)
        raise ChecklistError([f"{file}:{line}:{col}: not valid YAML: {exc.problem or exc}"]) from None
    except yaml.YAMLError as exc:
        raise ChecklistError([f"{file}:1:1: not valid YAML: {exc}"]) from None
    if root_node is None:
        raise ChecklistError([f"{file}:1:1: the file is empty"])
    loader = Loader(file)
    try:
        root = loader.convert(root_node)
    except TooManyAliases as exc:
        m = exc.node.start_mark
        raise ChecklistError([
            f"{file}:{m.line + 1}:{m.column + 1}: too many references to repeated YAML nodes (aliases); "
            f"a checklist or rules file needs at most {MAX_ALIAS_USES}"
        ]) from None
    except (yaml.YAMLError, ValueError, TypeError) as exc:
        raise ChecklistError([f"{file}:1:1: not valid YAML: {exc}"]) from None
    return root
