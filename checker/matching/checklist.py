"""Checklist YAML: loading with line numbers, validation of the whole file at once, and the model.

Every problem is reported as ``FILE:LINE:COLUMN: path -> to -> key: message``; nothing runs on a checklist
that has any.
"""

from __future__ import annotations

import dataclasses
import re
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any


from ..core.errors import ChecklistError, UsageError
from ..core.marked import (Node, Problems, closest, compose, expect_type, fields_of, flag_of, join_path, text_of,
                            texts_of)
from .regexscan import required_words

MAX_FILE_BYTES = 5 * 1024 * 1024

#: files beside the checklists that are not checklists: the cross-item rules and the concept library
NOT_CHECKLISTS = frozenset({"rules.yaml", "concepts.yaml", "fitted.yaml", "words.yaml"})
CONCEPTS_FILE = "concepts.yaml"
SLUG = re.compile(r"^[a-z0-9][a-z0-9-]*$")
ITEM_ID = re.compile(r"^[a-z0-9][a-z0-9-]*(\.[a-z0-9][a-z0-9-]*)+$")
FACET_ID = re.compile(r"^[a-z0-9][a-z0-9_-]*$")

#: token attributes the light pipeline fills (no tagger, parser or entity recogniser)
TOKEN_ATTRS = frozenset(
    "ORTH TEXT NORM LOWER LEMMA LENGTH IS_ALPHA IS_ASCII IS_DIGIT IS_LOWER IS_UPPER IS_TITLE IS_PUNCT IS_SPACE "
    "IS_STOP IS_SENT_START LIKE_NUM LIKE_URL LIKE_EMAIL SPACY SHAPE PREFIX SUFFIX OP".split()
)


@dataclass(frozen=True)
class Cues:
    phrases: tuple[str, ...] = ()
    patterns: tuple[tuple[dict, ...], ...] = ()
    regex: tuple[str, ...] = ()

    def __bool__(self) -> bool:
        return bool(self.phrases or self.patterns or self.regex)


@dataclass(frozen=True)
class Near:
    cues: Cues
    within: int = 0


@dataclass(frozen=True)
class Facet:
    id: str
    title: str
    cues: Cues
    near: Near | None = None
    unless: Cues | None = None
    weight: float = 1.0
    #: `deferred: partial`: a sentence that leaves the details to another document ("following the protocol
    #: described in [12]", "defined in the challenge paper", "available here") finds this facet only for partial
    deferred_partial: bool = False
    #: `only_without: [ids]`: the facet makes the item reported only in a document where none of these facets is
    #: found ("accuracy" alone needs no parameters; beside an F1 score whose averaging is not said, it does not
    #: complete the item); otherwise it counts as found, for partial
    only_without: tuple[str, ...] = ()


@dataclass(frozen=True)
class AppliesWhen:
    cues: Cues
    reason: str
    #: `strict: true`: where none of the cues occurs the item is not-applicable even if its facets are found
    #: (metric names in a datasheet that evaluates nothing are not its evaluation); otherwise only an item with
    #: nothing found is
    strict: bool = False


@dataclass(frozen=True)
class Item:
    id: str
    group: str
    title: str
    question: str
    why: str
    ask: str
    sources: tuple[str, ...]
    facets: tuple[Facet, ...]
    #: alternatives: the item is reported when every facet of any one set is found
    needs: tuple[tuple[str, ...], ...]
    applies_when: AppliesWhen | None = None
    examples_reported: tuple[str, ...] = ()
    examples_missing: tuple[str, ...] = ()
    #: the concept of the library the item's facets come from ("" for an item with facets of its own)
    concept: str = ""
    #: words a section heading uses for the item's topic ("Annotation", "Ground truth"): evidence under such a
    #: heading is quoted first among sentences that carry the same facets (the order only, never the status)
    headings: tuple[str, ...] = ()
    #: the concept's `judge_needs_facet`: the learned judge calls the item reported only where the cues found a
    #: facet of one of its `needs` sets (see checker.verdicts.judge)
    judge_needs_facet: bool = False


@dataclass(frozen=True)
class Concept:
    """A study-design concept shared by checklists: its facets with their cues, and which facets make it
    reported. An item names it with `concept:` and adds its own words (question, why, ask, sources)."""

    id: str
    facets: tuple[Facet, ...]
    needs: tuple[tuple[str, ...], ...]
    applies_when: AppliesWhen | None = None
    headings: tuple[str, ...] = ()
    judge_needs_facet: bool = False


@dataclass(frozen=True)
class Group:
    id: str
    title: str


@dataclass(frozen=True)
class Checklist:
    id: str
    title: str
    version: str
    document_kinds: tuple[str, ...]
    groups: tuple[Group, ...]
    items: tuple[Item, ...]
    path: str
    description: str = ""
    choose_when: Cues = field(default_factory=Cues)

    def item(self, item_id: str) -> Item:
        for it in self.items:
            if it.id == item_id:
                return it
        raise KeyError(item_id)

    def group_title(self, group_id: str) -> str:
        return next((g.title for g in self.groups if g.id == group_id), group_id)


#: a group holding an unbounded repetition, itself repeated without bound: '(a+)+', '(\w*\s?)*', '(x+){2,}'
_CATASTROPHIC = re.compile(r"\((?:[^()\\]|\\.)*(?<!\\)[+*](?:[^()\\]|\\.)*\)(?:[+*]|\{\d+,\})")


@lru_cache(maxsize=8192)
def compile_regex(pattern: str):
    """A checklist regex with its macros expanded, compiled once per process (validation and matching share it)."""
    import regex

    from . import regexcache
    from .facts import expand_macros

    rx = regexcache.compile(expand_macros(pattern), regex.IGNORECASE | regex.V0)
    _WRITTEN.setdefault(rx.pattern, pattern)
    return rx


#: the source each compiled regex was written as, macros unexpanded (see may_match)
_WRITTEN: dict[str, str] = {}


def may_match(rx, folded: str) -> bool:
    """Whether a case-folded text holds one of the words every match of a compiled checklist regex contains (the
    cue layer's test, regexscan.required_words): a text without any of them needs no search."""
    # worked out from the source as written: the expanded macros ({NUMBER}...) take Python's parser ten times longer
    need = required_words(_WRITTEN.get(rx.pattern, rx.pattern))
    return not need or any(w in folded for w in need)


def _check_regex(p: Problems, node: Node, path: str, pattern: str) -> str | None:
    import regex

    from .facts import expand_macros
    from ..core.limits import regex_size_problem

    problem = regex_size_problem(expand_macros(pattern))
    if problem:  # refused before compiling: compiling such a regex alone can take gigabytes
        p.add(node, path, problem)
        return None
    try:
        if p.compile_regexes:
            compile_regex(pattern)
    except regex.error as exc:
        p.add(node, path, f"not a valid regular expression: {exc}")
        return None
    except (RecursionError, OverflowError):
        p.add(node, path, "regular expression too complex")
        return None
    if _CATASTROPHIC.search(pattern):
        p.add(node, path, "a repeated group that itself repeats (like '(a+)+') can take forever on some text; "
                          "rewrite it without the nested repetition")
        return None
    return pattern


def _check_pattern(p: Problems, node: Node, path: str) -> tuple[dict, ...] | None:
    if not expect_type(p, node, path, list):
        return None
    tokens = []
    ok = True
    for i, tok in enumerate(node.value):
        tpath = f"{path}[{i}]"
        if not expect_type(p, tok, tpath, dict):
            ok = False
            continue
        plain = _plain(tok)
        for key, (knode, _v) in tok.value.items():
            if key.upper() not in TOKEN_ATTRS:
                p.add(knode, join_path(tpath, key), f"token attribute not filled by studygap's pipeline "
                                                f"(use one of {', '.join(sorted(TOKEN_ATTRS - {'SPACY'}))})")
                ok = False
        tokens.append({k.upper(): v for k, v in plain.items()})
    if not tokens:
        p.add(node, path, "a token pattern needs at least one token")
        return None
    if ok:
        try:
            from .nlp import pipeline

            vocab = pipeline().vocab  # imports spaCy (see checker.matching.spacyimport) before the matcher
            from spacy.matcher import Matcher

            m = Matcher(vocab, validate=True)
            m.add("check", [tokens])
        except Exception as exc:  # spaCy's own validation message says what is wrong
            msg = str(exc).strip().splitlines()
            p.add(node, path, "spaCy refused this token pattern: " + " ".join(x.strip() for x in msg if x.strip())[:300])
            return None
    return tuple(tokens) if ok else None


def _plain(node: Node) -> Any:
    v = node.value
    if isinstance(v, dict):
        return {k: _plain(vn) for k, (_kn, vn) in v.items()}
    if isinstance(v, list):
        return [_plain(x) for x in v]
    return v


_CUE_KEYS = {"phrases", "patterns", "regex"}


def _cues(p: Problems, fields: dict[str, Node], path: str) -> Cues:
    phrases = texts_of(p, fields.get("phrases"), join_path(path, "phrases"))
    for ph in phrases:
        if ph.startswith("=") and not ph[1:].strip():
            p.add(fields["phrases"], join_path(path, "phrases"),
                  "'=' marks a phrase matched as written; a phrase must follow it")
    patterns = []
    if "patterns" in fields:
        pnode = fields["patterns"]
        if expect_type(p, pnode, join_path(path, "patterns"), list):
            for i, sub in enumerate(pnode.value):
                pat = _check_pattern(p, sub, f"{join_path(path, 'patterns')}[{i}]")
                if pat:
                    patterns.append(pat)
    regexes = []
    for i, r in enumerate(texts_of(p, fields.get("regex"), join_path(path, "regex"))):
        rnode = fields["regex"].value[i] if isinstance(fields["regex"].value, list) else fields["regex"]
        r = expand_vocabulary(r, p.vocabulary)
        ok = _check_regex(p, rnode, f"{join_path(path, 'regex')}[{i}]", r)
        if ok:
            regexes.append(ok)
    return Cues(tuple(phrases), tuple(patterns), tuple(regexes))


def cue_block(p: Problems, node: Node, path: str, extra: set[str] = frozenset()) -> tuple[Cues, dict[str, Node]]:
    fields = fields_of(p, node, path, set(), _CUE_KEYS | set(extra))
    cues = _cues(p, fields, path)
    if not _CUE_KEYS & set(fields) and isinstance(node.value, dict):
        p.add(node, path, "needs at least one of phrases, patterns or regex")
    return cues, fields


def _facet(p: Problems, node: Node, path: str) -> Facet | None:
    fields = fields_of(p, node, path, {"id"},
                       {"title", "near", "unless", "weight", "deferred", "only_without"} | _CUE_KEYS)
    if not fields and not isinstance(node.value, dict):
        return None
    fid = text_of(p, fields.get("id"), join_path(path, "id"))
    if fid and not FACET_ID.match(fid):
        p.add(fields["id"], join_path(path, "id"), "a facet id is lower-case letters, digits, '-' or '_'")
    cues = _cues(p, fields, path)
    if not _CUE_KEYS & set(fields) and isinstance(node.value, dict):
        p.add(node, path, "a facet needs at least one of phrases, patterns or regex")
    near = None
    if "near" in fields:
        ncues, nfields = cue_block(p, fields["near"], join_path(path, "near"), {"within"})
        within = 0
        if "within" in nfields and expect_type(p, nfields["within"], join_path(path, "near -> within"), int):
            within = nfields["within"].value
            if not 0 <= within <= 20:
                p.add(nfields["within"], join_path(path, "near -> within"), "must be between 0 and 20 sentences")
        near = Near(ncues, within)
    unless = None
    if "unless" in fields:
        unless, _ = cue_block(p, fields["unless"], join_path(path, "unless"))
    weight = 1.0
    if "weight" in fields and expect_type(p, fields["weight"], join_path(path, "weight"), float):
        weight = float(fields["weight"].value)
        if not 0 < weight <= 2:
            p.add(fields["weight"], join_path(path, "weight"), "must be above 0 and at most 2")
    deferred_partial = False
    if "deferred" in fields:
        value = text_of(p, fields["deferred"], join_path(path, "deferred"))
        if value != "partial":
            p.add(fields["deferred"], join_path(path, "deferred"),
                  "the only value is 'partial' (details left to another document make the facet partial)")
        deferred_partial = value == "partial"
    only_without = texts_of(p, fields.get("only_without"), join_path(path, "only_without"))
    title = text_of(p, fields.get("title"), join_path(path, "title"), required=False) or fid
    return Facet(fid, title, cues, near, unless, weight, deferred_partial, only_without)


def _needs(p: Problems, node: Node | None, path: str, facet_ids: list[str]) -> tuple[tuple[str, ...], ...]:
    if node is None or node.value == "all":
        return (tuple(facet_ids),)
    v = node.value
    if v == "any":
        return tuple((f,) for f in facet_ids)
    if isinstance(v, int) and not isinstance(v, bool):
        if not 1 <= v <= len(facet_ids):
            p.add(node, path, f"must be between 1 and the number of facets ({len(facet_ids)})")
            return (tuple(facet_ids),)
        from itertools import combinations

        return tuple(combinations(facet_ids, v))
    if isinstance(v, list) and v:
        sets = [x.value for x in v]
        if all(isinstance(s, str) for s in sets):
            sets = [[s for s in sets]]
        elif all(isinstance(s, list) for s in sets):
            sets = [[y.value for y in s] for s in sets]
        else:
            p.add(node, path, "give all, any, a number, a list of facet ids, or a list of such lists")
            return (tuple(facet_ids),)
        out = []
        for s in sets:
            for f in s:
                if f not in facet_ids:
                    p.add(node, path, f"names facet {f!r}, which the item does not have")
            out.append(tuple(str(f) for f in s))
        return tuple(out)
    p.add(node, path, "give all, any, a number, a list of facet ids, or a list of such lists")
    return (tuple(facet_ids),)


def _facets(p: Problems, fields: dict[str, Node], path: str) -> list[Facet]:
    facets: list[Facet] = []
    if "facets" in fields and expect_type(p, fields["facets"], join_path(path, "facets"), list):
        if not fields["facets"].value:
            p.add(fields["facets"], join_path(path, "facets"), "an item needs at least one facet")
        seen: set[str] = set()
        placed: list[tuple[int, Node, Facet]] = []
        for i, fnode in enumerate(fields["facets"].value):
            f = _facet(p, fnode, f"{join_path(path, 'facets')}[{i}]")
            if f is None:
                continue
            placed.append((i, fnode, f))
            if f.id in seen:
                p.add(fnode, f"{join_path(path, 'facets')}[{i}] -> id", f"duplicate facet id {f.id!r}")
            seen.add(f.id)
            facets.append(f)
        ids = [f.id for f in facets]
        for i, fnode, f in placed:
            _check_only_without(p, fnode, f"{join_path(path, 'facets')}[{i}] -> only_without", f.id,
                                f.only_without, ids)
    return facets


def _check_only_without(p: Problems, node: Node, path: str, fid: str, others: tuple[str, ...],
                        ids: list[str]) -> None:
    """Each facet that `only_without` names must be another facet of the same item."""
    for other in others:
        if other not in ids or other == fid:
            hint = closest(other, set(ids) - {fid})
            p.add(node, path, f"names facet {other!r}, which is not another facet of this item"
                  + (f" (did you mean {hint!r}?)" if hint else ""))


def _only_without(p: Problems, node: Node, path: str, facets: list[Facet]) -> list[Facet]:
    """The concept's facets with the item's own `only_without: {facet: [facets]}`: which facets complete this item
    only in a document where none of the others is found (a dataset's total is its whole count unless the document
    names a split whose sizes it leaves out)."""
    ids = [f.id for f in facets]
    fields = fields_of(p, node, path, set(), set(ids))
    wanted = {}
    for fid, sub in fields.items():
        wanted[fid] = texts_of(p, sub, join_path(path, fid))
        _check_only_without(p, sub, join_path(path, fid), fid, wanted[fid], ids)
    return [dataclasses.replace(f, only_without=wanted[f.id]) if f.id in wanted else f for f in facets]


def _headings(p: Problems, fields: dict[str, Node], path: str) -> tuple[str, ...]:
    """The words of `headings:`, each checked to make a usable cue (letters, at most five words)."""
    node = fields.get("headings")
    words = texts_of(p, node, join_path(path, "headings"))
    for w in words:
        if not re.search(r"[^\W\d_]", w) or len(w.split()) > 5:
            p.add(node, join_path(path, "headings"),
                  f"{w!r} is not a heading word: write the words a section title uses, such as 'annotation'")
    return tuple(dict.fromkeys(w.strip() for w in words))


def _applies(p: Problems, fields: dict[str, Node], path: str) -> AppliesWhen | None:
    if "applies_when" not in fields:
        return None
    cues, afields = cue_block(p, fields["applies_when"], join_path(path, "applies_when"), {"reason", "strict"})
    reason = text_of(p, afields.get("reason"), join_path(path, "applies_when -> reason"), required=False)
    strict = flag_of(p, afields.get("strict"), join_path(path, "applies_when -> strict"))
    return AppliesWhen(cues, reason or "nothing in the document calls for it", strict)


def _item(p: Problems, node: Node, path: str, groups: set[str],
          concepts: dict[str, Concept] | None = None) -> Item | None:
    if isinstance(node.value, dict) and isinstance(node.value.get("id", (None, Node(None, 0, 0)))[1].value, str):
        path = f'item "{node.value["id"][1].value.strip()}"'
    has_concept = isinstance(node.value, dict) and "concept" in node.value
    fields = fields_of(
        p, node, path,
        {"id", "group", "title", "question", "why", "ask"} | (set() if has_concept else {"facets"}),
        {"sources", "needs", "applies_when", "examples", "concept", "facets", "uses", "headings", "only_without"},
    )
    if not fields:
        return None
    iid = text_of(p, fields.get("id"), join_path(path, "id"))
    if iid:
        if not ITEM_ID.match(iid):
            p.add(fields["id"], join_path(path, "id"), "an item id is a dotted lower-case slug such as 'data.source'")
    group = text_of(p, fields.get("group"), join_path(path, "group"))
    if group and groups and group not in groups:
        p.add(fields["group"], join_path(path, "group"), f"names group {group!r}, which the checklist does not define")
    concept = None
    if "concept" in fields:
        cid = text_of(p, fields["concept"], join_path(path, "concept"))
        if "facets" in fields:
            p.add(fields["facets"], join_path(path, "facets"),
                  "an item takes its facets from its concept or lists its own, not both")
        concept = (concepts or {}).get(cid)
        if cid and concept is None:
            hint = closest(cid, set(concepts or ()))
            p.add(fields["concept"], join_path(path, "concept"), f"no concept {cid!r} in the concept library"
                  + (f" (did you mean {hint!r}?)" if hint else ""))
    if "only_without" in fields and concept is None and "concept" not in fields:
        p.add(fields["only_without"], join_path(path, "only_without"),
              "only an item with a concept sets only_without here (an item's own facets say it themselves)")
    if "uses" in fields and concept is None and "concept" not in fields:
        p.add(fields["uses"], join_path(path, "uses"), "only an item with a concept can choose which of its facets it uses")
    if concept is not None:
        facets = list(concept.facets)
        if "uses" in fields:
            wanted = texts_of(p, fields["uses"], join_path(path, "uses"))
            for w in wanted:
                if w not in {f.id for f in facets}:
                    p.add(fields["uses"], join_path(path, "uses"), f"names facet {w!r}, which concept {concept.id!r} "
                          f"does not have (it has {', '.join(f.id for f in facets)})")
            facets = [f for f in facets if f.id in wanted]
        if "only_without" in fields:
            facets = _only_without(p, fields["only_without"], join_path(path, "only_without"), facets)
        ids = {f.id for f in facets}
        if "needs" in fields:
            needs = _needs(p, fields["needs"], join_path(path, "needs"), [f.id for f in facets])
        else:  # the concept's alternatives that the chosen facets can meet
            needs = tuple(n for n in concept.needs if set(n) <= ids) or (tuple(sorted(ids)),)
        applies = _applies(p, fields, path) if "applies_when" in fields else concept.applies_when
        headings = _headings(p, fields, path) if "headings" in fields else concept.headings
    else:
        facets = _facets(p, fields, path)
        needs = _needs(p, fields.get("needs"), join_path(path, "needs"), [f.id for f in facets])
        applies = _applies(p, fields, path)
        headings = _headings(p, fields, path)
    ex_rep: tuple[str, ...] = ()
    ex_mis: tuple[str, ...] = ()
    if "examples" in fields:
        ef = fields_of(p, fields["examples"], join_path(path, "examples"), set(), {"reported", "missing"})
        ex_rep = texts_of(p, ef.get("reported"), join_path(path, "examples -> reported"))
        ex_mis = texts_of(p, ef.get("missing"), join_path(path, "examples -> missing"))
    return Item(
        id=iid,
        group=group,
        title=text_of(p, fields.get("title"), join_path(path, "title")),
        question=text_of(p, fields.get("question"), join_path(path, "question")),
        why=text_of(p, fields.get("why"), join_path(path, "why")),
        ask=text_of(p, fields.get("ask"), join_path(path, "ask")),
        sources=texts_of(p, fields.get("sources"), join_path(path, "sources")),
        facets=tuple(facets),
        needs=needs,
        applies_when=applies,
        examples_reported=ex_rep,
        examples_missing=ex_mis,
        concept=concept.id if concept is not None else "",
        headings=headings,
        judge_needs_facet=concept.judge_needs_facet if concept is not None else False,
    )


_VOCAB_NAME = re.compile(r"^[A-Z][A-Z0-9_]*$")


def expand_vocabulary(pattern: str, vocabulary: dict[str, str]) -> str:
    """The regex with each {NAME} of the vocabulary replaced by its words as one group; other braces stay."""
    if not vocabulary or "{" not in pattern:
        return pattern
    return re.sub(r"\{([A-Z][A-Z0-9_]*)\}", lambda m: vocabulary.get(m.group(1), m.group(0)), pattern)


def _vocabulary(p: Problems, node: Node | None) -> dict[str, str]:
    """Named word lists as regex groups, longest words first (so "scans" is tried before "scan")."""
    out: dict[str, str] = {}
    if node is None or not expect_type(p, node, "vocabulary", dict):
        return out
    from .facts import MACROS

    for name, (knode, vnode) in node.value.items():
        if not _VOCAB_NAME.match(name) or name in MACROS:
            p.add(knode, f"vocabulary -> {name}", "a word list's name is upper-case letters, digits and '_', "
                                                    f"and not one of {', '.join(sorted(MACROS))}")
            continue
        words = texts_of(p, vnode, f"vocabulary -> {name}")
        if not words:
            p.add(vnode, f"vocabulary -> {name}", "a word list needs at least one word")
            continue
        alts = sorted({re.escape(w).replace("\\ ", r"\s+") for w in words}, key=lambda w: (-len(w), w))
        out[name] = "(?:" + "|".join(alts) + ")"
    return out


def parse_concepts(text: str, file: str, *, compile_regexes: bool = True) -> dict[str, Concept]:
    """The concept library: every concept by id, validated like a checklist (all problems at once)."""
    p = Problems(file, compile_regexes)
    root = compose(text, file)
    top = fields_of(p, root, "", {"id", "version", "concepts"}, {"description", "vocabulary"})
    p.vocabulary = _vocabulary(p, top.get("vocabulary"))
    out: dict[str, Concept] = {}
    if "concepts" in top and expect_type(p, top["concepts"], "concepts", list):
        for i, cnode in enumerate(top["concepts"].value):
            path = f"concepts[{i}]"
            if isinstance(cnode.value, dict) and isinstance(cnode.value.get("id", (None, Node(None, 0, 0)))[1].value,
                                                            str):
                path = f'concept "{cnode.value["id"][1].value.strip()}"'
            fields = fields_of(p, cnode, path, {"id", "facets"},
                               {"needs", "applies_when", "note", "headings", "judge_needs_facet"})
            if not fields:
                continue
            cid = text_of(p, fields.get("id"), join_path(path, "id"))
            if cid and not ITEM_ID.match(cid):
                p.add(fields["id"], join_path(path, "id"), "a concept id is a dotted lower-case slug such as 'data.source'")
            if cid in out:
                p.add(fields["id"], join_path(path, "id"), f"duplicate concept id {cid!r}")
            facets = _facets(p, fields, path)
            needs = _needs(p, fields.get("needs"), join_path(path, "needs"), [f.id for f in facets])
            judge_needs = flag_of(p, fields.get("judge_needs_facet"), join_path(path, "judge_needs_facet"))
            out[cid] = Concept(cid, tuple(facets), needs, _applies(p, fields, path), _headings(p, fields, path),
                               judge_needs)
    if p.items:
        raise ChecklistError(p.lines())
    return out


def builtin_concepts(*, strict: bool = False) -> dict[str, Concept]:
    """The concept library shipped with studygap (checklists/concepts.yaml)."""
    res = resources.files("checker.checklists") / CONCEPTS_FILE
    text = res.read_text(encoding="utf-8")
    key = ("concepts", text, not strict)
    if key not in _CACHE:
        from ..resultcache import parsed

        _CACHE[key] = parsed("dict", text, f"checklists/{CONCEPTS_FILE}", f"builtin={not strict}",
                             lambda: parse_concepts(text, f"checklists/{CONCEPTS_FILE}", compile_regexes=strict))
    return _CACHE[key]


def parse_checklist(text: str, file: str, *, compile_regexes: bool = True,
                    concepts: dict[str, Concept] | None = None) -> Checklist:
    """Validate and build a checklist from YAML text; raise ChecklistError with every problem located.

    Items may name a concept of the library (`concept: data.source`); `concepts` defaults to the built-in one.
    """
    p = Problems(file, compile_regexes)
    root = compose(text, file)
    if concepts is None and "concept:" in text:
        concepts = builtin_concepts(strict=compile_regexes)

    top = fields_of(p, root, "", {"id", "title", "version", "items"},
                {"document_kinds", "groups", "description", "choose_when"})
    cid = text_of(p, top.get("id"), "id")
    if cid and not SLUG.match(cid):
        p.add(top["id"], "id", "a checklist id is a lower-case slug such as 'validation-study'")
    version_node = top.get("version")
    version = ""
    if version_node is not None:
        if isinstance(version_node.value, (int, float)) and not isinstance(version_node.value, bool):
            version = str(version_node.value)
        else:
            version = text_of(p, version_node, "version")
    groups: list[Group] = []
    if "groups" in top and expect_type(p, top["groups"], "groups", list):
        for i, gnode in enumerate(top["groups"].value):
            gf = fields_of(p, gnode, f"groups[{i}]", {"id", "title"}, set())
            gid = text_of(p, gf.get("id"), f"groups[{i}] -> id")
            if gid and not SLUG.match(gid):
                p.add(gf["id"], f"groups[{i}] -> id", "a group id is a lower-case slug")
            if gid in {g.id for g in groups}:
                p.add(gf.get("id"), f"groups[{i}] -> id", f"duplicate group id {gid!r}")
            groups.append(Group(gid, text_of(p, gf.get("title"), f"groups[{i}] -> title")))
    choose = Cues()
    if "choose_when" in top:
        choose, _ = cue_block(p, top["choose_when"], "choose_when")
    items: list[Item] = []
    if "items" in top and expect_type(p, top["items"], "items", list):
        seen: dict[str, Node] = {}
        for i, inode in enumerate(top["items"].value):
            it = _item(p, inode, f"items[{i}]", {g.id for g in groups}, concepts)
            if it is None:
                continue
            if it.id in seen:
                first = seen[it.id]
                p.add(inode, f'item "{it.id}" -> id', f"duplicate item id (first defined at line {first.line})")
            seen[it.id] = inode
            items.append(it)
        if not top["items"].value:
            p.add(top["items"], "items", "a checklist needs at least one item")
    if p.items:
        raise ChecklistError(p.lines())
    return Checklist(
        id=cid,
        title=text_of(p, top.get("title"), "title"),
        version=version,
        document_kinds=texts_of(p, top.get("document_kinds"), "document_kinds"),
        groups=tuple(groups) or tuple(Group(g, g) for g in dict.fromkeys(it.group for it in items)),
        items=tuple(items),
        path=file,
        description=text_of(p, top.get("description"), "description", required=False),
        choose_when=choose,
    )


# ---------------------------------------------------------------------------------------------- finding checklists


def builtin_ids() -> list[str]:
    root = resources.files("checker.checklists")
    # rules.yaml beside the checklists holds the cross-item rules, not a checklist
    return sorted(p.name[:-5] for p in root.iterdir() if p.name.endswith(".yaml") and p.name not in NOT_CHECKLISTS)


def load_checklist(ref: str | Path, *, strict: bool = False) -> Checklist:
    """A built-in checklist by id, or a checklist file by path.

    ``strict`` compiles every regex of a built-in checklist too (a user's file always gets that).
    """
    ref_s = str(ref)
    path = Path(ref_s)
    if path.suffix.lower() in {".yaml", ".yml"} or path.exists():
        if not path.is_file():
            raise UsageError(f"{ref_s}: no such checklist file")
        if path.stat().st_size > MAX_FILE_BYTES:
            raise ChecklistError([f"{ref_s}:1:1: the checklist file is over {MAX_FILE_BYTES // 1_000_000} MB"])
        try:
            text = path.read_text(encoding="utf-8")
        except UnicodeDecodeError:
            raise ChecklistError([f"{ref_s}:1:1: the checklist is not UTF-8 text"]) from None
        return _cached(text, ref_s)
    ids = builtin_ids()
    if ref_s not in ids:
        raise UsageError(f"no built-in checklist {ref_s!r}; built-in checklists are {', '.join(ids)}, "
                         "or give the path of a YAML file")
    res = resources.files("checker.checklists") / f"{ref_s}.yaml"
    return _cached(res.read_text(encoding="utf-8"), f"checklists/{ref_s}.yaml", builtin=not strict)


_CACHE: dict[tuple[str, str, bool], Checklist] = {}


def _cached(text: str, file: str, builtin: bool = False) -> Checklist:
    key = (file, text, builtin)
    if key not in _CACHE:
        from ..resultcache import parsed

        _CACHE[key] = parsed("Checklist", text, file, f"builtin={builtin}",
                             lambda: parse_checklist(text, file, compile_regexes=not builtin))
    return _CACHE[key]
