"""Cross-item rules: metric pitfalls and numbers that contradict each other, read from checklists/rules.yaml.

A rule's trigger is data (cues that must occur, cues that silence it) or a named check in this module (the
consistency of counts, split sums and percentages); every finding quotes the passages that set it off.
"""

from __future__ import annotations

import itertools
import math
import string
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING, Callable, Iterable

import regex

from ..matching.checklist import (
    SLUG,
    Cues,
    Near,
    _cue_block,
    _expect,
    _keys,
    _Loader,
    _Node,
    _Problems,
    _text,
    _texts,
    _TooManyAliases,
    compile_regex,
)
from ..core.errors import ChecklistError, StudygapError, UsageError
from ..verdicts.report import Evidence, Finding

if TYPE_CHECKING:
    from ..matching.checklist import Checklist
    from ..core.config import Config
    from ..reading.document import Location, Sentence
    from ..matching.matcher import Scan

BUILTIN = "rules.yaml"
SEVERITIES = ("warning", "note")
MAX_PASSAGES = 3
MAX_EVIDENCE = 4
#: placeholders a data rule's message may use
DATA_FIELDS = frozenset({"seen", "where", "count", "context"})
#: roles whose passages neither trigger nor silence a rule: they describe other people's work
OTHERS_WORK = frozenset({"related-work"})


# ---------------------------------------------------------------------------------------------- the model


@dataclass(frozen=True)
class Scope:
    """Where a cue set counts relative to a passage: anywhere, in its sentence, or within N sentences."""

    kind: str = "document"  # "document" | "sentence" | "within"
    within: int = 0

    def describe(self) -> str:
        return {"document": "document", "sentence": "same_sentence"}.get(self.kind, f"within {self.within}")


@dataclass(frozen=True)
class CueSet:
    cues: Cues
    scope: Scope = field(default_factory=Scope)


@dataclass(frozen=True)
class Trigger:
    cues: Cues
    near: Near | None = None
    unless: Cues | None = None
    with_: tuple[CueSet, ...] = ()
    without: tuple[CueSet, ...] = ()


@dataclass(frozen=True)
class Rule:
    id: str
    title: str
    severity: str
    message: str
    sources: tuple[str, ...]
    trigger: Trigger | None = None
    check: str | None = None
    examples_fires: tuple[str, ...] = ()
    examples_silent: tuple[str, ...] = ()


@dataclass(frozen=True)
class RuleSet:
    version: str
    rules: tuple[Rule, ...]
    path: str

    def rule(self, rule_id: str) -> Rule:
        for r in self.rules:
            if r.id == rule_id:
                return r
        raise KeyError(rule_id)

    @property
    def ids(self) -> tuple[str, ...]:
        return tuple(r.id for r in self.rules)


# ---------------------------------------------------------------------------------------------- loading


def _scope(p: _Problems, node: _Node | None, path: str) -> Scope:
    if node is None:
        return Scope()
    v = node.value
    if isinstance(v, str):
        t = v.strip().lower()
        if t == "document":
            return Scope()
        if t in ("same_sentence", "same sentence", "sentence"):
            return Scope("sentence")
        m = regex.fullmatch(r"within\s+(\d+)(?:\s+sentences?)?", t)
        if m:
            n = int(m.group(1))
            if n > 20:
                p.add(node, path, "must be at most 'within 20' sentences")
            return Scope("within", min(n, 20)) if n else Scope("sentence")
    p.add(node, path, "give document, same_sentence or 'within N' (N sentences before or after)")
    return Scope()


def _cue_sets(p: _Problems, node: _Node, path: str) -> tuple[CueSet, ...]:
    items = node.value if isinstance(node.value, list) else [node]
    if isinstance(node.value, list) and not node.value:
        p.add(node, path, "give at least one cue set")
    out = []
    for i, sub in enumerate(items):
        spath = f"{path}[{i}]" if isinstance(node.value, list) else path
        cues, fields = _cue_block(p, sub, spath, {"scope"})
        out.append(CueSet(cues, _scope(p, fields.get("scope"), f"{spath} -> scope")))
    return tuple(out)


def _trigger(p: _Problems, node: _Node, path: str) -> Trigger | None:
    fields = _keys(p, node, path, {"cues"}, {"with", "without"})
    if not fields:
        return None
    cues = Cues()
    near = None
    unless = None
    if "cues" in fields:
        cues, cfields = _cue_block(p, fields["cues"], f"{path} -> cues", {"near", "unless"})
        if "near" in cfields:
            ncues, nfields = _cue_block(p, cfields["near"], f"{path} -> cues -> near", {"within"})
            within = 0
            if "within" in nfields and _expect(p, nfields["within"], f"{path} -> cues -> near -> within", int):
                within = nfields["within"].value
                if not 0 <= within <= 20:
                    p.add(nfields["within"], f"{path} -> cues -> near -> within", "must be between 0 and 20 sentences")
            near = Near(ncues, within)
        if "unless" in cfields:
            unless, _ = _cue_block(p, cfields["unless"], f"{path} -> cues -> unless")
    with_ = _cue_sets(p, fields["with"], f"{path} -> with") if "with" in fields else ()
    without = _cue_sets(p, fields["without"], f"{path} -> without") if "without" in fields else ()
    return Trigger(cues, near, unless, with_, without)


def _placeholders(template: str) -> list[str] | None:
    try:
        return [name for _, name, _, _ in string.Formatter().parse(template) if name is not None]
    except ValueError:
        return None


def _rule(p: _Problems, node: _Node, path: str) -> Rule | None:
    if isinstance(node.value, dict) and isinstance(node.value.get("id", (None, _Node(None, 0, 0)))[1].value, str):
        path = f'rule "{node.value["id"][1].value.strip()}"'
    fields = _keys(p, node, path, {"id", "title", "severity", "message", "sources"},
                   {"trigger", "check", "examples"})
    if not fields:
        return None
    rid = _text(p, fields.get("id"), f"{path} -> id")
    if rid and not SLUG.match(rid):
        p.add(fields["id"], f"{path} -> id", "a rule id is a lower-case slug such as 'hausdorff-variant'")
    severity = _text(p, fields.get("severity"), f"{path} -> severity")
    if severity and severity not in SEVERITIES:
        p.add(fields["severity"], f"{path} -> severity", "must be 'warning' or 'note'")
    sources = _texts(p, fields.get("sources"), f"{path} -> sources")
    if "sources" in fields and not sources:
        p.add(fields["sources"], f"{path} -> sources", "name at least one published source")
    trigger = _trigger(p, fields["trigger"], f"{path} -> trigger") if "trigger" in fields else None
    check = _text(p, fields.get("check"), f"{path} -> check") if "check" in fields else None
    if ("trigger" in fields) == ("check" in fields):
        p.add(node, path, "give either a trigger (cues as data) or a check (a named Python check), not both")
    if check and check not in CHECKS:
        p.add(fields["check"], f"{path} -> check", f"no check named {check!r} (known: {', '.join(sorted(CHECKS))})")
    message = _text(p, fields.get("message"), f"{path} -> message")
    if message:
        names = _placeholders(message)
        allowed = DATA_FIELDS if check is None else CHECKS[check].fields if check in CHECKS else None
        if names is None:
            p.add(fields["message"], f"{path} -> message",
                  "unbalanced braces; write {name} for a value, {{ for a brace")
        elif allowed is not None:
            for n in names:
                if n not in allowed:
                    p.add(fields["message"], f"{path} -> message",
                          f"unknown placeholder {{{n}}} (this rule can use {', '.join(sorted(allowed))})")
    fires: tuple[str, ...] = ()
    silent: tuple[str, ...] = ()
    if "examples" in fields:
        ef = _keys(p, fields["examples"], f"{path} -> examples", {"fires", "silent"}, set())
        fires = _texts(p, ef.get("fires"), f"{path} -> examples -> fires")
        silent = _texts(p, ef.get("silent"), f"{path} -> examples -> silent")
    return Rule(rid, _text(p, fields.get("title"), f"{path} -> title"), severity, " ".join(message.split()),
                sources, trigger, check, fires, silent)


def parse_rules(text: str, file: str) -> RuleSet:
    """Validate and build the rules from YAML text; raise ChecklistError with every problem located."""
    import yaml

    p = _Problems(file)
    try:
        root_node = yaml.compose(text, Loader=yaml.SafeLoader)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line, col = (mark.line + 1, mark.column + 1) if mark else (1, 1)
        raise ChecklistError([f"{file}:{line}:{col}: not valid YAML: {exc.problem or exc}"]) from None
    except yaml.YAMLError as exc:
        raise ChecklistError([f"{file}:1:1: not valid YAML: {exc}"]) from None
    if root_node is None:
        raise ChecklistError([f"{file}:1:1: the file is empty"])
    try:
        root = _Loader(file).convert(root_node)
    except _TooManyAliases as exc:
        m = exc.node.start_mark
        raise ChecklistError([f"{file}:{m.line + 1}:{m.column + 1}: too many references to repeated YAML nodes"]) \
            from None
    except (yaml.YAMLError, ValueError, TypeError) as exc:
        raise ChecklistError([f"{file}:1:1: not valid YAML: {exc}"]) from None
    top = _keys(p, root, "", {"rules"}, {"version", "description"})
    version = ""
    if "version" in top:
        v = top["version"].value
        numeric = isinstance(v, (int, float)) and not isinstance(v, bool)
        version = str(v) if numeric else _text(p, top["version"], "version")
    rules: list[Rule] = []
    if "rules" in top and _expect(p, top["rules"], "rules", list):
        seen: dict[str, int] = {}
        for i, rnode in enumerate(top["rules"].value):
            r = _rule(p, rnode, f"rules[{i}]")
            if r is None:
                continue
            if r.id in seen:
                p.add(rnode, f'rule "{r.id}" -> id', f"duplicate rule id (first defined at line {seen[r.id]})")
            seen.setdefault(r.id, rnode.line)
            rules.append(r)
        if not top["rules"].value:
            p.add(top["rules"], "rules", "give at least one rule")
    if p.items:
        raise ChecklistError(p.lines())
    return RuleSet(version, tuple(rules), file)


@lru_cache(maxsize=8)
def _parse_cached(text: str, file: str) -> RuleSet:
    from ..resultcache import parsed

    return parsed("RuleSet", text, file, "", lambda: parse_rules(text, file))


def load_rules(path: str | Path | None = None) -> RuleSet:
    """The built-in rules (checklists/rules.yaml), or a rules file by path."""
    if path is None:
        text = (resources.files("checker.checklists") / BUILTIN).read_text(encoding="utf-8")
        return _parse_cached(text, f"checklists/{BUILTIN}")
    p = Path(path)
    if not p.is_file():
        raise UsageError(f"{p}: no such rules file")
    try:
        text = p.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise ChecklistError([f"{p}:1:1: the rules file is not UTF-8 text"]) from None
    return _parse_cached(text, str(p))


# ---------------------------------------------------------------------------------------------- cue matching


@dataclass(frozen=True)
class Hits:
    """Cue hits of one part of a rule: sentence index -> character spans in that sentence."""

    by_sentence: dict[int, tuple[tuple[int, int], ...]]

    def sentences(self) -> set[int]:
        return set(self.by_sentence)


class CompiledRules:
    """Every cue of a rule set compiled once (phrases, token patterns, regexes); match a Scan's sentences."""

    def __init__(self, ruleset: RuleSet, nlp=None) -> None:
        from spacy.matcher import Matcher, PhraseMatcher

        from ..matching.matcher import spelling_variants
        from ..matching.regexscan import required_words
        from ..matching.nlp import pipeline

        self.ruleset = ruleset
        self.nlp = nlp or pipeline()
        self.lemma_matcher = PhraseMatcher(self.nlp.vocab, attr="LEMMA")
        self.lower_matcher = PhraseMatcher(self.nlp.vocab, attr="LOWER")
        self.token_matcher = Matcher(self.nlp.vocab)
        self._regexes: list[tuple[str, regex.Pattern, str, tuple[str, ...]]] = []
        phrases: dict[str, list[str]] = {}
        for rule in ruleset.rules:
            t = rule.trigger
            if t is None:
                continue
            parts: list[tuple[str, Cues | None]] = [("cue", t.cues), ("near", t.near.cues if t.near else None),
                                                     ("unless", t.unless)]
            parts += [(f"with{i}", cs.cues) for i, cs in enumerate(t.with_)]
            parts += [(f"without{i}", cs.cues) for i, cs in enumerate(t.without)]
            for part, cues in parts:
                if not cues:
                    continue
                k = f"{rule.id}:{part}"
                if cues.phrases:
                    phrases.setdefault(k, []).extend(cues.phrases)
                if cues.patterns:
                    self.token_matcher.add(k, [list(pt) for pt in cues.patterns])
                for src in cues.regex:
                    self._regexes.append((k, compile_regex(src), src, required_words(src)))
        for k, ps in phrases.items():
            texts = sorted({v for ph in ps for v in spelling_variants(ph)})
            self.lemma_matcher.add(k, list(self.nlp.pipe(texts)))
            self.lower_matcher.add(k, [self.nlp.make_doc(t) for t in texts])
        self._matchers = [m for m in (self.lemma_matcher, self.lower_matcher, self.token_matcher) if len(m)]

    def match(self, scan: "Scan", regex_seconds: float = 2.0) -> dict[str, Hits]:
        from ..matching.matcher import match_sentences
        from ..matching.regexscan import Sentences

        found: dict[str, dict[int, set[tuple[int, int]]]] = {}
        sentences = scan.sentences
        if self._matchers:
            if scan.docs:
                hits = match_sentences(self._matchers, self.nlp.vocab.strings, scan.docs, scan.spans, sentences,
                                       clip=False)
            else:  # a Scan built by hand, without its parsed blocks
                hits = [(self.nlp.vocab.strings[mid], si, doc[a:b].start_char, doc[a:b].end_char)
                        for si, doc in enumerate(self.nlp.pipe([s.text for s in sentences], batch_size=128))
                        for m in self._matchers for mid, a, b in m(doc)]
            for mkey, si, a, b in hits:
                found.setdefault(mkey, {}).setdefault(si, set()).add((a, b))
        texts = Sentences([s.text for s in sentences])
        for k, rx, src, need in self._regexes:
            if not texts.mentions(need):
                continue
            try:
                for si, m in texts.search(rx, need, regex_seconds):
                    # a group named "seen" marks the words to quote ("sensitivity" of "sensitivity of 0.8")
                    span = m.span("seen") if "seen" in rx.groupindex and m.group("seen") else m.span()
                    found.setdefault(k, {}).setdefault(si, set()).add(span)
            except TimeoutError:
                raise StudygapError(
                    f"{scan.document.path}: the rule regex {src!r} took longer than {regex_seconds:g} s on this "
                    "text (it backtracks too much; simplify it)"
                ) from None
        return {k: Hits({si: tuple(sorted(spans)) for si, spans in v.items()}) for k, v in found.items()}


_COMPILED: dict[int, tuple[RuleSet, CompiledRules]] = {}


def compiled_rules(ruleset: RuleSet) -> CompiledRules:
    """The rule set's cues compiled once per process (by identity: token patterns hold dicts, not hashable)."""
    entry = _COMPILED.get(id(ruleset))
    if entry is None or entry[0] is not ruleset:
        if len(_COMPILED) >= 8:
            _COMPILED.clear()
        entry = _COMPILED[id(ruleset)] = (ruleset, CompiledRules(ruleset))
    return entry[1]


# ---------------------------------------------------------------------------------------------- evaluation helpers


def _in_scope(scan: "Scan", s: int, others: set[int], scope: Scope) -> bool:
    if not others:
        return False
    if scope.kind == "document":
        return True
    if scope.kind == "sentence":
        return s in others
    from ..verdicts.decide import _near

    return _near(scan, s, others, scope.within)


def _trim(text: str, spans: Iterable[tuple[int, int]]) -> tuple[str, tuple[tuple[int, int], ...]]:
    lead = len(text) - len(text.lstrip())
    t = text.strip()
    out = []
    for s, e in sorted(spans):
        s, e = max(0, s - lead), min(len(t), e - lead)
        if e > s:
            if out and s <= out[-1][1]:
                out[-1] = (out[-1][0], max(out[-1][1], e))
            else:
                out.append((s, e))
    return t, tuple(out)


def _evidence(scan: "Scan", si: int, spans: Iterable[tuple[int, int]], part: str) -> Evidence:
    sent = scan.sentences[si]
    text, matches = _trim(sent.text, spans)
    return Evidence(text, sent.location, round(scan.weight(si), 3), matches, (part,))


def _where(location: "Location") -> str:
    return location.describe()


def _finding(rule: Rule, message: str, evidence: list[Evidence]) -> Finding:
    return Finding(rule.id, rule.title, rule.severity, message, tuple(evidence), rule.sources)


def _fill(template: str, values: dict[str, object]) -> str:
    return template.format_map({k: values.get(k, "") for k in _placeholders(template) or []})


def _words_of(scan: "Scan", si: int, spans: Iterable[tuple[int, int]]) -> list[str]:
    """The matched words, leaving out a match inside a longer one ("surface distance" in "normalised surface
    distance")."""
    t = scan.sentences[si].text
    spans = list(spans)
    outer = [(s, e) for s, e in spans if not any(a <= s and e <= b and (a, b) != (s, e) for a, b in spans)]
    return [" ".join(t[s:e].split()) for s, e in sorted(outer)]


def _distinct(words: Iterable[str], limit: int = 3) -> str:
    """The first few different words, a list like "sensitivity and specificity" taken apart."""
    out: list[str] = []
    seen: set[str] = set()
    for w in (x.strip() for phrase in words for x in regex.split(r"\s*(?:,|/|&|\band\b|\bor\b)\s*", phrase)):
        k = w.lower()
        if k and k not in seen:
            seen.add(k)
            out.append(w)
    return ", ".join(out[:limit])


def evaluate_data_rule(rule: Rule, scan: "Scan", hits: dict[str, Hits]) -> Finding | None:
    """A data rule's finding on one document, or None when it does not fire."""
    t = rule.trigger
    assert t is not None
    n = len(scan.sentences)

    def part(name: str, *, headings: bool = True) -> dict[int, tuple[tuple[int, int], ...]]:
        h = hits.get(f"{rule.id}:{name}")
        if h is None:
            return {}
        return {si: sp for si, sp in h.by_sentence.items() if si < n and scan.sentences[si].role not in OTHERS_WORK
                and (headings or scan.sentences[si].kind != "heading")}

    cue = part("cue", headings=False)
    if not cue:
        return None
    unless = set(part("unless")) if t.unless else set()
    near = set(part("near")) if t.near else None
    passages = [si for si in sorted(cue) if si not in unless
                and (near is None or _in_scope(scan, si, near, Scope("within", t.near.within) if t.near.within
                                                else Scope("sentence")))]
    with_hits = [part(f"with{i}") for i in range(len(t.with_))]
    for cs, wh in zip(t.with_, with_hits):
        passages = [si for si in passages if _in_scope(scan, si, set(wh), cs.scope)]
    for i, cs in enumerate(t.without):
        silencing = set(part(f"without{i}"))
        passages = [si for si in passages if not _in_scope(scan, si, silencing, cs.scope)]
    if not passages:
        return None
    # the passages that count most (methods before introduction), shown in document order
    shown = sorted(sorted(passages, key=lambda si: (-scan.weight(si), si))[:MAX_PASSAGES])
    evidence = [_evidence(scan, si, cue[si], "trigger") for si in shown]
    context_words: list[str] = []
    for cs, wh in zip(t.with_, with_hits):
        near_ones = [si for si in sorted(wh) if any(_in_scope(scan, p, {si}, cs.scope) for p in shown)]
        for si in near_ones:
            context_words += _words_of(scan, si, wh[si])
        if any(si in wh for si in shown) or not near_ones or len(evidence) >= MAX_EVIDENCE:
            continue  # a passage shown already carries the context
        # the context passage nearest to the first passage, so that the reader sees why the rule applies
        nearest = min(near_ones, key=lambda si: (abs(si - shown[0]), si))
        evidence.append(_evidence(scan, nearest, wh[nearest], "context"))
    evidence.sort(key=lambda e: _order(scan, e))
    values = {
        "seen": _distinct(w for si in passages for w in _words_of(scan, si, cue[si])),
        "where": _where(scan.sentences[shown[0]].location),
        "count": len(passages),
        "context": _distinct(context_words),
    }
    return _finding(rule, _fill(rule.message, values), evidence)


def _order(scan: "Scan", ev: Evidence) -> tuple[int, int]:
    loc = ev.location
    return (loc.page or 0, loc.line or loc.paragraph or 0)


# ---------------------------------------------------------------------------------------------- statements of counts

def _rx(src: str) -> regex.Pattern:
    return compile_regex(src)


#: split words as authors write them -> the split they name
_SPLIT_NAMES = (
    (r"internal\s+validation|internal\s+test(?:ing)?|held[- ]?out\s+test(?:ing)?|hold[- ]?out\s+test(?:ing)?|"
     r"holdout\s+test(?:ing)?|independent\s+test(?:ing)?", "test"),
    (r"external\s+(?:validation|test(?:ing)?)", "external"),
    (r"training|train", "training"),
    (r"development|dev", "development"),
    (r"validation|tuning|val", "validation"),
    (r"test(?:ing)?|held[- ]?out|hold[- ]?out|holdout", "test"),
)
_SPLIT_ALT = "|".join(f"(?:{a})" for a, _ in _SPLIT_NAMES)
_SET = r"(?:set|split|cohort|subset|partition|data\s*set|data|sample|group|portion)s?"


def _split_of(word: str) -> str:
    w = " ".join(word.lower().split())
    for pattern, name in _SPLIT_NAMES:
        if regex.fullmatch(pattern, w, regex.IGNORECASE):
            return name
    return ""


#: counted nouns (singular, as facts.py gives them) -> (quantity, unit group)
_CASE_UNITS = {
    **dict.fromkeys(["patient", "subject", "participant", "individual", "person", "volunteer"], "patient"),
    "case": "case",
    **dict.fromkeys(["image", "radiograph", "mammogram", "photograph", "x-ray", "b-scan", "picture"], "image"),
    **dict.fromkeys(["scan", "volume", "ct", "mri"], "scan"),
    **dict.fromkeys(["examination", "exam", "study"], "examination"),
    "series": "series",
    **dict.fromkeys(["slide", "wsi"], "slide"),
    **dict.fromkeys(["lesion", "nodule", "tumor", "tumour", "polyp"], "lesion"),
    "eye": "eye", **dict.fromkeys(["cell", "nucleus"], "cell"), **dict.fromkeys(["patch", "tile"], "patch"),
    "video": "video", "frame": "frame", "recording": "recording", "sample": "sample", "specimen": "specimen",
    "gland": "gland", "tooth": "tooth", "sequence": "sequence", "visit": "visit",
}
_ANNOTATOR_UNITS = {
    **dict.fromkeys(["annotator", "rater", "grader", "observer", "labeler", "labeller"], "annotator"),
    "reader": "reader", "expert": "expert",
}
_PROFESSION = regex.compile(r"(?:ologist|iatrist|ographer|ician|surgeon|resident|student|specialist|nurse|"
                            r"technician|technologist)$")
_SITE_UNITS = {w: "site" for w in ("site", "centre", "center", "hospital", "institution", "clinic", "institute")}
_METHOD_UNITS = {
    **dict.fromkeys(["method", "algorithm", "approach", "model", "detector", "network", "architecture", "pipeline",
                     "technique", "classifier", "segmenter", "tool", "system"], "method"),
    **dict.fromkeys(["team", "submission", "entry"], "team"),
}

#: words between a number and its noun that make the count a subset, not the size of a split or the whole
_SUBSET_WORDS = frozenset("""
positive negative malignant benign healthy normal abnormal fractured diseased affected male female excluded
additional remaining other new misclassified missed failed difficult challenging unlabelled unlabeled extra
further more fewer synthetic augmented duplicate duplicated low-quality discarded removed rejected incorrect
correct false true detected undetected small large mild moderate severe first last top best worst selected
random representative example sample
""".split())
_SITE_SUBSET = frozenset("other additional external partner new remaining first last further neighbouring "
                         "neighboring nearby different".split())
_METHOD_SUBSET = frozenset("""
other remaining competing published baseline existing previous prior state-of-the-art sota top best first last
additional alternative comparison reference selected leading winning best-performing top-performing our proposed
ranked top-ranked best-ranked participating
""".split())

_APPROX_BEFORE = _rx(r"(?:\babout|\bapproximately|\bapprox\.?|\baround|\broughly|\bnearly|\balmost|\bover|"
                     r"\bmore\s+than|\bless\s+than|\bfewer\s+than|\bat\s+least|\bat\s+most|\bup\s+to|\bunder|"
                     r"\bbelow|\babove|\bsome|~|≈|>|<|≥|≤|\bonly\s+about)\s*$")
_PART_BEFORE = _rx(r"\b(?:first|last|other|remaining|additional|another|further|extra|per|every|top|best|worst|"
                   r"next|previous)\s+$")
_PLAN = _rx(r"\b(?:we\s+plan|plan\s+to|planned\s+to|future\s+work|in\s+(?:the\s+)?future|"
            r"would\s+(?:need|require|allow)|"
            r"for\s+example|for\s+instance|e\.g\.|such\s+as|hypothetical|suppose|imagine)\b")
_BY_BEFORE = _rx(r"\b(?:by|from|between|among|of)\s+(?:the\s+|all\s+|these\s+)?$")
_ANNOTATES_AFTER = _rx(r"^\s*(?:\([^()]{0,60}\)\s*)?,?\s*(?:(?:independently|separately|manually|each|all|then|also|"
                       r"together|jointly|blindly)\s+)?(?:annotated|annotate|segmented|segment|labell?ed|label|delineated|"
                       r"contoured|read|graded|marked|outlined|reviewed|drew|traced|were\s+(?:trained|asked|instructed|"
                       r"involved|recruited|blinded|employed)|performed|participated|took\s+part|provided|produced)\b")
_STUDY_OF_READERS = _rx(r"\b(?:reader|observer)\s+(?:study|studies|performance|experiment)\b|\bMRMC\b")

_SPLIT_ANCHOR_BEFORE = _rx(
    rf"(?:\b(?P<qual>[\w-]+)\s+)?\b(?P<split>{_SPLIT_ALT})(?:[- ](?:only|phase))?\s+{_SET}"
    r"(?:\s*\([^()]{0,40}\))?\s*(?:,\s*)?"
    r"(?:(?:of|with|contain(?:s|ed|ing)?|compris(?:es|ed|ing)|includ(?:es|ed|ing)|consist(?:s|ed|ing)?\s+of|"
    r"(?:is|was|are|were)\s+(?:comprised|composed|made\s+up)\s+of|ha[sd]|having|:|=|\(|(?:is|was)|totall?ing|"
    r"(?:is|was)\s+formed\s+(?:of|by))\s*)?"
    r"(?:a\s+total\s+of\s+|only\s+|exactly\s+|n\s*=\s*)?$"
)
_SPLIT_ANCHOR_AFTER = _rx(
    r"^\s*(?:(?:were|was|are|is)\s+)?(?:(?:randomly\s+)?(?:used|reserved|kept|set\s+aside|held\s+out|included|assigned|"
    r"allocated|selected|chosen|sampled|placed|put)\s+)?(?:for|in|as|into|to)\s+(?:the\s+|our\s+)?"
    rf"(?P<split>{_SPLIT_ALT})(?:\s+{_SET}|ing)?\b"
)
_TOTAL_ANCHOR_BEFORE = _rx(
    r"(?:\ba\s+total\s+of|\bin\s+total,?|\boverall,?|\baltogether,?|\btotall?ing|"
    r"(?:\b(?P<pre>[\w-]+)\s+)?\b(?:dataset|data\s+set|cohort|study\s+population|population|database|collection|"
    r"corpus|archive|study|sample)(?:\s+of\s+(?:the\s+)?(?:[\w-]+\s+){0,3}?(?:study|trial|project|registry))?"
    r"(?:\s*\([^()]{0,40}\))?,?\s+(?:(?:of|with|compris(?:es|ed|ing)|contain(?:s|ed|ing)?|"
    r"includ(?:es|ed|ing)|consist(?:s|ed|ing)?\s+of|(?:is|was)\s+(?:comprised|composed|made\s+up)\s+of|ha[sd]|"
    r"totall?(?:ing|ed))\s+(?:(?:[\w-]+\s+){1,3}(?:from|of)\s+)?)(?:a\s+total\s+of\s+)?|"
    r"\bwe\s+(?:(?:retrospectively|prospectively|consecutively)\s+)?(?:included|enrolled|recruited|collected|"
    r"gathered|obtained|analy[sz]ed|used)(?:\s+a\s+total\s+of)?)\s*$"
)
_TOTAL_AFTER = _rx(r"^\s*(?:in\s+total|overall|altogether|in\s+all)\b")
_SUBSET_AFTER = _rx(r"^\s*(?:,\s*)?(?:with(?!\s+{NUMBER})|without|who|whose|that|which|having|had|have|showing|"
                    r"presenting|diagnosed|positive|negative|affected|per|each)\b")
_VERB_AFTER = _rx(r"^\s*(?:were|was|are|is)\s+(?P<verb>[a-z-]+)")
_STATEMENT_VERBS = frozenset("""
used included held reserved assigned allocated selected chosen kept set available randomly drawn sampled
annotated labelled labeled segmented read evaluated analysed analyzed assessed tested split divided
enrolled collected acquired retained obtained considered provided released given
""".split())
_BREAKDOWN_AFTER = _rx(r"^[^.;]{0,60}?\b(?:and|while|whereas|,)\s+{NUMBER}\s+(?:(?:were|was|had|on|in|at|from|with|"
                       r"for|by)\b|(?:[\w-]+\s+)?(?:on|in|at|from|with)\b)")
#: "312 images from 100 patients", "1,968 patients with 2,412 series (6,105 images)": the second count belongs to
#: the same split as the first
_CHAIN = _rx(r"^\s*(?:\(\s*(?:i\.e\.,?\s*|n\s*=\s*)?|from\s+|of\s+|with\s+)$")
#: words before "dataset"/"cohort" that make it a part of the collection, not the whole of it
_PART_PRE = frozenset("""
scoring preliminary evaluation tuning calibration pilot practice sample example subset additional external
independent second third another synthetic toy small reduced sub hidden leaderboard reader demo debug
""".split())
#: a document with several test sets (per task, per dataset) states several test-set sizes that do not conflict
_SEVERAL_TEST_SETS = _rx(r"\b(?:two|three|four|five|six|several|multiple|both|each|separate|\d+)\s+(?:[\w-]+\s+)?"
                         r"(?:test(?:ing)?|held[- ]?out|hold[- ]?out|holdout|validation|evaluation)\s+"
                         r"(?:sets|cohorts|datasets|data\s+sets|splits)\b|\b(?:test|validation)\s+sets?\s+(?-i:[A-D])\b(?!-)")
#: headings of parts that describe different tasks or experiments, each with its own data
_TASK_HEADING = _rx(r"\b(?:task|track|sub-?task|sub-?challenge|experiment|phase|stage|scenario)s?\b")
_ANNOTATION_CONTEXT = _rx(r"\b(?:annotat\w*|segment\w*|label\w*|delineat\w*|contour\w*|outlin\w*|read\b|reads|"
                          r"grad(?:ed|ing)\b|mark(?:ed|ing)\b|review\w*|adjudicat\w*|drew|drawn|trac(?:ed|ing)|"
                          r"rater|observer|ground[- ]truth|reference\s+standard|manual\w*|independent\w*)")
_METHOD_BEFORE = _rx(r"(?:\b(?:compar(?:e|es|ed|ing)|benchmark(?:s|ed|ing)?|rank(?:s|ed|ing)?|"
                     r"evaluat(?:e|es|ed|ing)|assess(?:es|ed|ing)?)\s+(?:the\s+|all\s+|these\s+)?|"
                     r"\b(?:comparison|benchmark|benchmarking|ranking|evaluation|assessment)\s+of\s+(?:the\s+|all\s+)?|"
                     r"\b(?:all|these)\s+)$")
_METHOD_AFTER = _rx(r"^\s*(?:were|are|was)\s+(?:then\s+)?(?:compared|ranked|benchmarked|evaluated|assessed|tested|"
                    r"trained)\b|^\s*(?:participated|took\s+part|competed|submitted)\b")
_SINGLE_SITE = _rx(r"\b(?:single|one|mono)[- ](?:centre|center|site|institution|hospital|institutional)\b|"
                   r"\bmonocentric\b|\bmono-centric\b")
_N_SITE = _rx(r"\b(?P<n>two|three|four|five|six|seven|eight|nine|ten|\d{1,2})[- ](?:centre|center|site|institution|"
              r"hospital)\b")
_SPLIT_PAREN = _rx(rf"\b(?P<split>{_SPLIT_ALT})(?:\s+{_SET})?\s*\(\s*(?:n\s*=\s*)?(?P<n>{{NUMBER}})"
                   r"(?:\s+(?P<noun>[a-z-]+))?\s*\)")
_SPLIT_WORD = _rx(rf"\b(?P<split>{_SPLIT_ALT})\b")
_NAMES = (rf"(?P<names>(?:(?:{_SPLIT_ALT})(?:ing)?\s*(?:,\s*(?:and\s+)?|\s+and\s+|/|&)\s*){{1,3}}"
          rf"(?:{_SPLIT_ALT})(?:ing)?)")
_NUMS = r"(?P<nums>{NUMBER}(?:\s*(?:,\s*(?:and\s+)?|\s+and\s+|/)\s*{NUMBER}){1,3})"
#: "the training, validation and test sets contain 3,500, 500 and 900 radiographs"
_LIST_NAMES_FIRST = _rx(_NAMES + r"\s+(?:sets?|splits?|subsets?|partitions?|cohorts?|data)?\s*(?:contain(?:s|ed)?|"
                        r"ha(?:ve|d|s)|compris(?:e|es|ed)|include[sd]?|consist(?:s|ed)?\s+of|of|with|:|=|hold|held)\s+"
                        + _NUMS + r"(?:\s+(?P<noun>[\w-]+(?:\s+[\w-]+){0,2}))?")
#: "3,500, 500 and 900 radiographs for training, validation and testing"
_LIST_NUMS_FIRST = _rx(_NUMS + r"(?:\s+(?P<noun>[\w-]+(?:\s+[\w-]+){0,2}?))?\s+(?:(?:were|are)\s+)?(?:(?:used|assigned|"
                       r"allocated|reserved|kept)\s+)?(?:for|to|in|into)\s+(?:the\s+)?" + _NAMES)


@dataclass(frozen=True)
class Statement:
    """A number the document states for a quantity that should be the same wherever it is stated."""

    quantity: str  # cases | annotators | sites | methods
    unit: str  # unit group ("patient", "image", "radiologist"...); "" when the text gives none
    split: str  # training | validation | development | test | external | total | "" (no split)
    value: int
    sentence: int
    start: int
    end: int
    text: str


@dataclass(frozen=True)
class Share:
    """A percentage stated next to a count: "38 (38%)", "300 patients (70%)", "81/263 (30.8%)"."""

    count: int
    percent: float
    decimals: int
    sentence: int
    start: int
    end: int
    #: the base stated with it ("of 263"), or None when it has to be found in the context
    base: int | None = None
    statement: Statement | None = None
    #: counts of cases stated before it in the same sentence ("Of the 400 patients, 300 (75%)..."): bases to try
    context: tuple[tuple[int, str], ...] = ()


@dataclass(frozen=True)
class Ratio:
    """Split proportions: "70/15/15", "7:1:2", "75-25 train-test split", with the splits they name in order."""

    parts: tuple[float, ...]
    splits: tuple[str, ...]
    percent: bool
    sentence: int
    start: int
    end: int


@dataclass
class DocumentNumbers:
    statements: list[Statement] = field(default_factory=list)
    shares: list[Share] = field(default_factory=list)
    ratios: list[Ratio] = field(default_factory=list)


_SKIP_ROLES = frozenset({"introduction", "related-work", "discussion", "limitations", "references"})


def _unit_of(noun: str | None) -> tuple[str, str] | None:
    if not noun:
        return None
    n = noun.lower()
    last = n.split("-")[-1]
    for table, quantity in ((_CASE_UNITS, "cases"), (_ANNOTATOR_UNITS, "annotators"), (_SITE_UNITS, "sites"),
                            (_METHOD_UNITS, "methods")):
        if n in table:
            return quantity, table[n]
        if last in table:
            return quantity, table[last]
    if _PROFESSION.search(last):
        return "annotators", last
    return None


def _splits_named(text: str) -> list[tuple[str, int, int]]:
    out = []
    for m in _SPLIT_WORD.finditer(text):
        name = _split_of(m.group("split"))
        if name:
            out.append((name, m.start(), m.end()))
    return out


def _one_split(text: str) -> str:
    names = {n for n, _, _ in _splits_named(text)}
    return names.pop() if len(names) == 1 else ""


def extract_numbers(scan: "Scan") -> DocumentNumbers:
    """Every count, share and split ratio the document states that the consistency checks compare."""
    from ..matching.facts import extract_facts, parse_number

    out = DocumentNumbers()
    for si, sent in enumerate(scan.sentences):
        if sent.role in _SKIP_ROLES or sent.kind in ("heading", "table-row"):
            continue
        text = sent.text
        if _PLAN.search(text):
            continue
        facts = extract_facts(text)
        stmts: list[Statement] = []
        for f in facts:
            if f.kind == "count" and isinstance(f.value, int):
                st = _statement(text, si, f, stmts)
                if st is not None:
                    stmts.append(st)
            elif f.kind == "split" and isinstance(f.value, list):
                _split_fact(text, si, f, stmts, out.ratios)
        for m in _SPLIT_PAREN.finditer(text):  # "training (1,700), validation (168) and test (100)"
            v = parse_number(m.group("n"))
            if not isinstance(v, int) or any(s.start <= m.start("n") < s.end for s in stmts):
                continue
            unit = _unit_of(_singular(m.group("noun"))) if m.group("noun") else None
            if m.group("noun") and (unit is None or unit[0] != "cases"):
                continue
            stmts.append(Statement("cases", unit[1] if unit else "", _split_of(m.group("split")), v, si,
                                   m.start(), m.end(), m.group()))
        stmts += _split_lists(text, si, stmts)
        stmts += _site_words(text, si, stmts)
        out.statements += stmts
        out.shares += _shares(text, si, stmts)
    return out


def _singular(word: str) -> str:
    from ..matching.facts import _singular as singular

    return singular(word)


def _statement(text: str, si: int, f, previous: list[Statement]) -> Statement | None:
    unit = _unit_of(f.noun)
    if unit is None:
        return None
    quantity, group = unit
    value = f.value
    before, after = text[max(0, f.start - 120):f.start], text[f.end:f.end + 120]
    modifiers = [w.lower() for w in regex.findall(r"[\w-]+", text[f.start:f.end])[1:-1]]
    if _APPROX_BEFORE.search(before):
        return None
    if quantity == "cases":
        return _case_statement(text, si, f, group, before, after, modifiers, previous)
    if any(len(w) > 4 and w.endswith("est") for w in modifiers):
        return None  # "the three largest hospitals", "the two fastest methods": a part
    if quantity == "annotators":
        if _PART_BEFORE.search(before) or value < 1 or _STUDY_OF_READERS.search(text):
            return None
        if not _ANNOTATION_CONTEXT.search(text) and group not in ("annotator",):
            return None
        # who made the reference: "segmented by two annotators", "three experts independently outlined";
        # "two radiologists had ten years of experience" says something about some of them
        if not (_BY_BEFORE.search(before) or _ANNOTATES_AFTER.match(after)):
            return None
        if group in ("expert", "reader", "annotator") or _PROFESSION.search(group):
            return Statement("annotators", group, _one_split(text), value, si, f.start, f.end, f.text)
        return None
    if quantity == "sites":
        if _PART_BEFORE.search(before) or any(w in _SITE_SUBSET for w in modifiers) or value < 1:
            return None
        split = next((_split_of(w) for w in modifiers if _split_of(w)), None)
        if split is None:
            # "scans from three hospitals were used for training": the sites of one split
            names = {n for n, _, _ in _splits_named(text)}
            if len(names) > 1:
                return None
            split = names.pop() if names else ""
        return Statement("sites", "site", split, value, si, f.start, f.end, f.text)
    if quantity == "methods":
        if value < 2 or any(w in _METHOD_SUBSET for w in modifiers):
            return None
        if not (_METHOD_BEFORE.search(before) or _METHOD_AFTER.search(after)):
            return None
        if regex.search(r"\b(?:the|these|all)\s+$", before) and not _METHOD_AFTER.search(after) \
                and not regex.search(r"(?:compar\w*|benchmark\w*|rank\w*|evaluat\w*|assess\w*|of)\s+"
                                     r"(?:the|all|these)\s+$", before):
            return None
        return Statement("methods", group, "", value, si, f.start, f.end, f.text)
    return None


def _case_statement(text: str, si: int, f, group: str, before: str, after: str, modifiers: list[str],
                    previous: list[Statement]) -> Statement | None:
    split = ""
    mod_split = [_split_of(w) for w in modifiers if _split_of(w)]
    if any(w in _SUBSET_WORDS for w in modifiers) or any(w.endswith(("-positive", "-negative")) for w in modifiers):
        return None
    chained = None
    if previous:
        last = previous[-1]
        if last.quantity == "cases" and last.split and _CHAIN.match(text[last.end:f.start]):
            chained = last.split
    m = _SPLIT_ANCHOR_BEFORE.search(before)
    ma = _SPLIT_ANCHOR_AFTER.match(after)
    mt = _TOTAL_ANCHOR_BEFORE.search(before)
    if mod_split:
        split = mod_split[-1]
        # "Sixty-one test patients were imaged on system A and 39 on system B": a breakdown, not the test set
        verb = _VERB_AFTER.match(after)
        if verb and verb.group("verb") not in _STATEMENT_VERBS:
            return None
        if _BREAKDOWN_AFTER.match(after) or _SUBSET_AFTER.match(after):
            return None
    elif m:
        split = _qualified(m.group("qual"), m.group("split"))
        if _SUBSET_AFTER.match(after) and not regex.match(r"^\s*(?:,\s*)?with\s+\d|^\s*,", after):
            return None  # "the test set contains 50 cases with a fracture": a part of the test set
    elif ma:
        split = _split_of(ma.group("split"))
    elif chained:
        split = chained
    elif mt and _total_pre_ok(mt.group("pre")):
        split = "total"
        if _SUBSET_AFTER.match(after) and not regex.match(r"^\s*with\s+\d", after):
            return None
    elif _TOTAL_AFTER.match(after):
        split = "total"
    if not split:
        return None
    if _BREAKDOWN_AFTER.match(after) and split != "total" and not m and not chained:
        return None
    return Statement("cases", group, split, f.value, si, f.start, f.end, f.text)


#: words before "test set" that leave it the one test set of the study
_NEUTRAL_QUALIFIERS = frozenset("""
the a an our this that its their whole entire full final same separate independent held-out hold-out holdout blind
blinded hidden sequestered official predefined pre-defined fixed random randomly respective locked untouched in into
of and with to as for on from comprised consisting containing called named
""".split())


def _qualified(qual: str | None, split_word: str) -> str:
    """The split a phrase names; a qualifier such as "public" or "preliminary" makes it a split of its own
    ("test:preliminary"), so that its size is not compared with the study's test set."""
    split = _split_of(split_word)
    if not qual:
        return split
    joined = _split_of(f"{qual} {split_word}")
    if joined:
        return joined
    q = qual.lower()
    if q in _NEUTRAL_QUALIFIERS or _split_of(q) or q.isdigit():
        return split
    return f"{split}:{q}"


def _total_pre_ok(word: str | None) -> bool:
    """Whether the word before "dataset" leaves it the whole collection ("the final cohort", "a classification
    dataset"), not a part of it ("the preliminary scoring dataset", "a test dataset")."""
    if not word:
        return True
    return not _split_of(word) and word.lower() not in _PART_PRE and word.lower() not in _SUBSET_WORDS


def _split_fact(text: str, si: int, f, stmts: list[Statement], ratios: list[Ratio]) -> None:
    vals = [float(v) for v in f.value]
    if not vals or any(v < 0 for v in vals):
        return
    b = text[max(0, f.start - 100):f.start]
    a = text[f.end:f.end + 100]
    if regex.search(r"\b(?:about|approximately|approx\.?|around|roughly|nearly|~|≈)\s*$", b) or \
            regex.search(r"\b(?:approximate(?:ly)?|about|roughly)\b", b[-40:]):
        return
    # the split names nearest to the numbers: "75-25 train-test split", "training/validation/test set of 1,188/98/298"
    order: list[str] = []
    for window in (a[:50], b[-60:], b[-60:] + " " + a[:60]):
        order = list(dict.fromkeys(n for n, _, _ in _splits_named(window) if n != "external"))
        if len(order) == len(f.value):
            break
    noun = f.noun
    tail = f.text[max(i for i, c in enumerate(f.text) if c.isdigit()) + 1:] if any(c.isdigit() for c in f.text) else ""
    if noun and regex.search(r"\b(?:on|at|in|per|of|a|an|the|by|for|with)\b", tail, regex.IGNORECASE):
        noun = None  # "1,188/98/298 on a patient level": the split's level, not what it counts
    total = sum(vals)
    pct = "%" in f.text or 98 <= total <= 102
    frac = 0.98 <= total <= 1.02 and any(v < 1 for v in vals)
    small = all(v == int(v) and v <= 10 for v in vals) and total <= 20 and len(vals) <= 4
    if (pct or frac or small) and not (noun and _unit_of(noun)):
        if len(order) == len(vals):
            parts = tuple(v * 100 / total for v in vals) if frac else tuple(vals)
            ratios.append(Ratio(parts, tuple(order), pct or frac, si, f.start, f.end))
        return
    if len(order) != len(vals) or any(v != int(v) for v in vals):
        return
    unit = _unit_of(noun)
    if noun and (unit is None or unit[0] != "cases"):
        return
    for v, name in zip(vals, order):
        stmts.append(Statement("cases", unit[1] if unit else "", name, int(v), si, f.start, f.end, f.text))


_LIST_STOP = frozenset("on a an the at per of in for with by and or respectively were are was is to from".split())


def _split_lists(text: str, si: int, stmts: list[Statement]) -> list[Statement]:
    """Sizes listed in the order of the splits they belong to, in either order of the two lists."""
    from ..matching.facts import NUMBER, parse_number

    out: list[Statement] = []
    for rx in (_LIST_NAMES_FIRST, _LIST_NUMS_FIRST):
        for m in rx.finditer(text):
            if any(s.start == m.start("nums") for s in out):
                continue  # both list forms read the same list
            names = [_split_of(w.group("split")) for w in _SPLIT_WORD.finditer(m.group("names"))]
            nums = [parse_number(x.group()) for x in regex.finditer(NUMBER, m.group("nums"))]
            if len(names) != len(nums) or len(set(names)) != len(names) or not all(isinstance(v, int) for v in nums):
                continue
            unit = None
            if m.group("noun"):
                for w in m.group("noun").split():
                    if w.lower() in _LIST_STOP:
                        break  # "1,188/98/298 on a patient level": what follows is no counted noun
                    unit = unit or _unit_of(_singular(w))
                if unit is not None and unit[0] != "cases":
                    continue
            # drop what the count facts already took from this list: the list says which split each is
            stmts[:] = [s for s in stmts if not (m.start("nums") <= s.start < m.end("nums"))]
            for name, v in zip(names, nums):
                out.append(Statement("cases", unit[1] if unit else "", name, v, si, m.start("nums"), m.end("nums"),
                                     m.group("nums") + (f" {m.group('noun')}" if m.group("noun") else "")))
    return out


def _site_words(text: str, si: int, stmts: list[Statement]) -> list[Statement]:
    """"single-centre", "a two-centre study": site counts written as one word."""
    out = []
    for m in _SINGLE_SITE.finditer(text):
        if not any(s.start <= m.start() < s.end for s in stmts):
            out.append(Statement("sites", "site", "", 1, si, m.start(), m.end(), m.group()))
    for m in _N_SITE.finditer(text):
        from ..matching.facts import parse_number

        v = parse_number(m.group("n"))
        if isinstance(v, int) and v >= 2 and not any(s.start <= m.start() < s.end for s in stmts):
            out.append(Statement("sites", "site", "", v, si, m.start(), m.end(), m.group()))
    return out


_SHARE_OF = _rx(r"(?P<n>\d[\d,]*)\s*(?:/|\bof\b|\bout\s+of\b)\s*(?:the\s+)?(?P<m>\d[\d,]*)(?:\s+[\w-]+){0,3}?\s*"
                r"\(\s*(?P<p>{DECIMAL})\s*%\s*\)")
_SHARE_OF_AFTER = _rx(r"(?P<p>{DECIMAL})\s*%\s*\(\s*(?P<n>\d[\d,]*)\s*(?:/|\bof\b|\bout\s+of\b)\s*(?:the\s+)?"
                      r"(?P<m>\d[\d,]*)(?:\s+[\w-]+){0,3}\s*\)")
_SHARE = _rx(r"(?P<n>{NUMBER})(?:\s+[\w-]+){0,3}?\s*\(\s*(?P<p>{DECIMAL})\s*%\s*\)")
_SHARE_AFTER = _rx(r"(?P<p>{DECIMAL})\s*%\s*\(\s*(?:n\s*=\s*)?(?P<n>{NUMBER})\s*(?:[\w-]+\s*)?\)")


def _decimals(p: str) -> int:
    return len(p.split(".")[1]) if "." in p else 0


def _shares(text: str, si: int, stmts: list[Statement]) -> list[Share]:
    from ..matching.facts import parse_number

    from ..matching.facts import extract_facts

    counts = [f for f in extract_facts(text) if f.kind == "count"]
    out: list[Share] = []
    taken: list[tuple[int, int]] = []
    for rx, explicit in ((_SHARE_OF, True), (_SHARE_OF_AFTER, True), (_SHARE, False), (_SHARE_AFTER, False)):
        for m in rx.finditer(text):
            if any(a < m.end() and m.start() < b for a, b in taken):
                continue
            n = parse_number(m.group("n"))
            p = parse_number(m.group("p"))
            if not isinstance(n, int) or p is None or not 0 <= p <= 100:
                continue
            if regex.match(r"^\s*(?:ci|confidence|credible)", text[m.end():m.end() + 15], regex.IGNORECASE):
                continue
            base = parse_number(m.group("m")) if explicit else None
            if explicit and (not isinstance(base, int) or base <= 0):
                continue
            st = next((s for s in stmts if s.start <= m.start("n") < s.end), None)
            taken.append((m.start(), m.end()))
            context = tuple((f.value, f.text) for f in counts if f.end <= m.start() and isinstance(f.value, int)
                            and (_unit_of(f.noun) or ("", ""))[0] == "cases")
            out.append(Share(n, float(p), _decimals(m.group("p")), si, m.start(), m.end(), base, st, context))
    return out


# ---------------------------------------------------------------------------------------------- checks


@dataclass(frozen=True)
class Check:
    run: Callable[["Scan", Rule, "RunContext"], list[Finding]]
    #: placeholders its message may use
    fields: frozenset[str]


@dataclass
class RunContext:
    scan: "Scan"
    _numbers: DocumentNumbers | None = None

    @property
    def numbers(self) -> DocumentNumbers:
        if self._numbers is None:
            self._numbers = extract_numbers(self.scan)
        return self._numbers


_QUANTITY_TEXT = {
    ("cases", "total"): "The total number of {unit}",
    ("cases", "training"): "The number of {unit} in the training set",
    ("cases", "validation"): "The number of {unit} in the validation set",
    ("cases", "development"): "The number of {unit} in the development set",
    ("cases", "test"): "The number of {unit} in the test set",
    ("cases", "external"): "The number of {unit} in the external test set",
    ("annotators", ""): "The number of {unit} who annotated the reference",
    ("annotators", "training"): "The number of {unit} who annotated the training data",
    ("annotators", "validation"): "The number of {unit} who annotated the validation data",
    ("annotators", "test"): "The number of {unit} who annotated the test data",
    ("sites", ""): "The number of sites (centres, hospitals)",
    ("sites", "training"): "The number of training sites",
    ("sites", "test"): "The number of test sites",
    ("methods", ""): "The number of {unit} compared",
}


def _plural(unit: str) -> str:
    return unit if unit.endswith(("s", "series")) else unit + ("es" if unit.endswith(("ch", "sh", "x")) else "s")


def _describe_quantity(st: Statement) -> str:
    if st.quantity == "methods":
        return "The number of teams or submissions compared" if st.unit == "team" else "The number of methods compared"
    split, _, qualifier = st.split.partition(":")
    template = _QUANTITY_TEXT.get((st.quantity, split), "The number of {unit}")
    text = template.format(unit=_plural(st.unit))
    return text.replace(f"the {split} set", f"the {qualifier} {split} set") if qualifier else text


def _statement_evidence(scan: "Scan", st: Statement, part: str) -> Evidence:
    return _evidence(scan, st.sentence, [(st.start, st.end)], part)


def _quoted(text: str) -> str:
    """A stated count as it reads inside a sentence: "Two radiologists" -> "two radiologists"."""
    t = " ".join(text.split())
    return t[0].lower() + t[1:] if t[:1].isupper() and not t[1:2].isupper() else t


def check_counts(scan: "Scan", rule: Rule, ctx: RunContext) -> list[Finding]:
    """The same quantity (test cases, annotators, sites, methods compared) stated with different numbers."""
    groups: dict[tuple[str, str, str], list[Statement]] = {}
    for st in ctx.numbers.statements:
        if not st.unit or (st.quantity == "cases" and not st.split):
            continue
        groups.setdefault((st.quantity, st.unit, st.split), []).append(st)
    findings = []
    several_test_sets = any(_SEVERAL_TEST_SETS.search(x.text) for x in scan.sentences)
    for key in sorted(groups, key=lambda k: (groups[k][0].sentence, groups[k][0].start)):
        sts = groups[key]
        values: dict[int, Statement] = {}
        for st in sts:
            values.setdefault(st.value, st)
        if len(values) < 2:
            continue
        if len(values) > 2:
            continue  # three or more sizes: several datasets or tasks, not one number written two ways
        if key[2] in ("test", "validation", "external") and several_test_sets:
            continue
        # a split stated both as "N" and inside a list of the same sentence is one statement
        firsts = sorted(values.values(), key=lambda s: (s.sentence, s.start))
        first, second = firsts[0], firsts[1]
        if first.sentence == second.sentence and key[0] != "cases":
            continue
        h1, h2 = (scan.sections[first.sentence][-1:] or ("",))[0], (scan.sections[second.sentence][-1:] or ("",))[0]
        if h1 != h2 and (_TASK_HEADING.search(h1) or _TASK_HEADING.search(h2)):
            continue
        evidence = [_statement_evidence(scan, s, "statement") for s in firsts[:MAX_EVIDENCE]]
        msg = _fill(rule.message, {
            "quantity": _describe_quantity(first),
            "first": _quoted(first.text),
            "first_where": _where(scan.sentences[first.sentence].location),
            "second": _quoted(second.text),
            "second_where": _where(scan.sentences[second.sentence].location),
            "values": ", ".join(str(v) for v in sorted(values)),
        })
        findings.append(_finding(rule, msg, evidence))
    return findings


def _combos(options: list[list[Statement]], limit: int = 64) -> Iterable[tuple[Statement, ...]]:
    return itertools.islice(itertools.product(*options), limit)


def check_split_sums(scan: "Scan", rule: Rule, ctx: RunContext) -> list[Finding]:
    """Split sizes that do not add up to the total stated for the same unit, in prose or in a table."""
    by: dict[tuple[str, str], list[Statement]] = {}
    for st in ctx.numbers.statements:
        if st.quantity == "cases":
            by.setdefault((st.unit, st.split), []).append(st)
    units = sorted({u for u, s in by if u})
    findings: list[Finding] = []
    for unit in units + [""]:
        totals = by.get((unit, "total"), []) if unit else [s for u in units for s in by.get((u, "total"), [])]
        if not totals:
            continue
        opts = {sp: _distinct_values(by.get((unit, sp), []))
                for sp in ("training", "validation", "development", "test")}
        layouts = []
        if opts["training"] and opts["test"]:
            layouts.append(("training", "validation", "test") if opts["validation"] else ("training", "test"))
            if opts["validation"]:
                layouts.append(("training", "test"))  # validation carved out of training
        if opts["development"] and opts["test"]:
            layouts.append(("development", "test"))
        if opts["training"] and opts["validation"]:
            layouts.append(("training", "validation"))  # a test set counted apart from the total
        if not layouts:
            continue
        sums: list[tuple[int, tuple[Statement, ...]]] = []
        for layout in layouts:
            for combo in _combos([opts[sp] for sp in layout]):
                sums.append((sum(s.value for s in combo), combo))
        total_values = _distinct_values(totals)
        if any(t.value == s for t in total_values for s, _ in sums):
            continue
        # the full layout (every split named) is the one to show
        full = max(layouts, key=len)
        combo = next(iter(_combos([opts[sp] for sp in full])))
        total = _nearest_total(total_values, sum(s.value for s in combo))
        if total is None:
            continue
        s_sum = sum(s.value for s in combo)
        if not total.value / 2 <= s_sum <= total.value * 2:
            continue  # splits of a part of a larger collection, or a "total" of something else
        # the counted noun as the document writes it ("radiographs"), else the unit's name
        written = total.text.split()[-1] if total.text.split()[-1].isalpha() else ""
        unit_word = written if unit and written else (_plural(unit) if unit else "cases")
        parts = " + ".join(f"{s.value:,} {s.split}" for s in combo)
        evidence = [_statement_evidence(scan, total, "total")]
        for s in combo:
            sent = scan.sentences[s.sentence]
            if not any(e.location == sent.location and e.text == sent.text.strip() for e in evidence):
                evidence.append(_statement_evidence(scan, s, "split"))
        msg = _fill(rule.message, {"sum": f"{s_sum:,}", "unit": unit_word, "parts": parts,
                                   "total": " ".join(total.text.split()),
                                   "total_where": _where(scan.sentences[total.sentence].location)})
        findings.append(_finding(rule, msg, evidence[:MAX_EVIDENCE]))
    findings += _table_sums(scan, rule)
    return findings


def _distinct_values(sts: list[Statement]) -> list[Statement]:
    out: dict[int, Statement] = {}
    for s in sorted(sts, key=lambda s: (s.sentence, s.start)):
        out.setdefault(s.value, s)
    return list(out.values())[:6]


def _nearest_total(totals: list[Statement], value: int) -> Statement | None:
    if not totals:
        return None
    return min(totals, key=lambda t: (abs(t.value - value), t.sentence))


_CELL_NUMBER = regex.compile(r"^\s*(?P<a>\d{1,3}(?:,\d{3})+|\d+)\s*(?:\(\s*(?P<b>\d{1,3}(?:,\d{3})+|\d+)\s*\))?\s*$")
_TOTAL_LABEL = regex.compile(r"^\s*(?:\*\*)?(?:total|all|overall|sum|all\s+sites|all\s+centres|all\s+centers)\b",
                             regex.IGNORECASE)
_COLUMN_NOT_COUNT = regex.compile(r"%|\b(?:mean|median|sd|std|age|years?|rate|score|dice|auc|accuracy|ratio|"
                                  r"percent|percentage|proportion|range|iqr|min|max|period|date)\b", regex.IGNORECASE)


def _cells(text: str) -> list[str]:
    return [c.strip() for c in text.split("|")]


def _table_sums(scan: "Scan", rule: Rule) -> list[Finding]:
    """A table row labelled Total whose counts are not the sums of the rows above it."""
    doc = scan.document
    tables: dict[int, list[int]] = {}
    for bi, b in enumerate(doc.blocks):
        if b.kind == "table-row" and b.role != "references" and b.location.table is not None:
            tables.setdefault(b.location.table, []).append(bi)
    findings = []
    for tid in sorted(tables):
        rows = tables[tid]
        if len(rows) < 3:
            continue
        header = _cells(doc.blocks[rows[0]].text)
        start = 1
        for ri in range(1, len(rows)):
            cells = _cells(doc.blocks[rows[ri]].text)
            if not _TOTAL_LABEL.match(cells[0]):
                continue
            total_nums = _trailing_numbers(cells)
            body = [_trailing_numbers(_cells(doc.blocks[r].text)) for r in rows[start:ri]]
            start = ri + 1
            k = len(total_nums)
            if not k or not body or any(len(b) < k for b in body):
                continue
            heads = header[-k:] if len(header) >= k else [""] * k
            for j in range(k):
                if _COLUMN_NOT_COUNT.search(heads[j]):
                    continue
                col = [b[len(b) - k + j] for b in body]
                for part, label in ((0, ""), (1, " (in parentheses)")):
                    vals = [c[part] for c in col]
                    want = total_nums[j][part]
                    if want is None or any(v is None for v in vals):
                        continue
                    got = sum(vals)  # type: ignore[arg-type]
                    if got != want:
                        block = doc.blocks[rows[ri]]
                        ev = [Evidence(block.text.strip(), block.location, 1.0, (), ("total",)),
                              Evidence(doc.blocks[rows[0]].text.strip(), doc.blocks[rows[0]].location, 1.0, (),
                                       ("header",))]
                        column = heads[j] or f"column {len(header) - k + j + 1}"
                        msg = _fill(rule.message, {
                            "sum": f"{got:,}", "unit": f"in column {column}{label}",
                            "parts": " + ".join(f"{v:,}" for v in vals),
                            "total": f"{want:,}", "total_where": _where(block.location),
                        })
                        findings.append(_finding(rule, msg, ev))
    return findings


def _trailing_numbers(cells: list[str]) -> list[tuple[int | None, int | None]]:
    out: list[tuple[int | None, int | None]] = []
    for c in reversed(cells[1:]):
        m = _CELL_NUMBER.match(c)
        if not m:
            break
        a = int(m.group("a").replace(",", ""))
        b = int(m.group("b").replace(",", "")) if m.group("b") else None
        out.append((a, b))
    return list(reversed(out))


def _matches_share(count: int, base: int, percent: float, decimals: int) -> bool:
    if base <= 0:
        return False
    actual = 100 * count / base
    unit = 10 ** -decimals
    rounded = math.floor(actual / unit + 0.5 + 1e-9) * unit
    truncated = math.floor(actual / unit + 1e-9) * unit
    return abs(rounded - percent) < unit / 2 or abs(truncated - percent) < unit / 2


def check_split_percentages(scan: "Scan", rule: Rule, ctx: RunContext) -> list[Finding]:
    """Percentages next to counts, and split ratios, that the counts do not give."""
    nums = ctx.numbers
    findings: list[Finding] = []
    mismatches: list[tuple[int, str, list[tuple[int, int]], Statement | None]] = []
    by_split: dict[str, list[Statement]] = {}
    for st in nums.statements:
        if st.quantity == "cases" and st.split:
            by_split.setdefault(st.split, []).append(st)
    for sh in nums.shares:
        sent = scan.sentences[sh.sentence]
        text = sent.text
        bases: list[tuple[int, str, Statement | None]] = []
        if sh.base is not None:
            bases.append((sh.base, f"{sh.count:,} of {sh.base:,}", None))
        else:
            st = sh.statement
            if st is not None and st.split in ("training", "validation", "test", "development"):
                for t in by_split.get("total", []):
                    if not st.unit or not t.unit or t.unit == st.unit:
                        bases.append((t.value, f"{sh.count:,} of {t.value:,} {t.unit or ''}".strip() + "s"
                                      if t.unit else f"{sh.count:,} of {t.value:,}", t))
                if st.split in ("training", "validation"):
                    for t in by_split.get("development", []):
                        bases.append((t.value, f"{sh.count:,} of {t.value:,}", t))
            elif st is None:
                named = {n for n, _, _ in _splits_named(text)}
                if _TOTAL_ANCHOR_BEFORE.search(text[:sh.start]) or regex.search(
                        r"\b(?:cohort|dataset|data\s+set|total)\b", text, regex.IGNORECASE):
                    named.add("total")
                if not named and not sh.context:
                    continue
                for value, ctext in sh.context:  # "Of the 400 patients, 300 (75%) ..."
                    bases.append((value, f"{sh.count:,} of {' '.join(ctext.split())}", None))
                for n in sorted(named):
                    for s in by_split.get(n, []):
                        bases.append((s.value, f"{sh.count:,} of {' '.join(s.text.split())}", s))
        bases = [b for b in bases if b[0] >= sh.count]
        if not bases:
            continue
        if any(_matches_share(sh.count, b, sh.percent, sh.decimals) for b, _, _ in bases):
            continue
        base, base_text, base_st = bases[0]
        computed = 100 * sh.count / base
        wrong = (f"{_fmt_pct(sh.percent, sh.decimals)} for {sh.count:,}, but {base_text} is "
                 f"{computed:.{max(1, sh.decimals)}f}%")
        spans = [(sh.start, sh.end)]
        extra = base_st if base_st is not None and base_st.sentence != sh.sentence else None
        mismatches.append((sh.sentence, wrong, spans, extra))
    mismatches += _ratio_mismatches(scan, nums, by_split)
    # one finding per sentence, however many of its percentages disagree
    by_sentence: dict[int, list[tuple[int, str, list[tuple[int, int]], Statement | None]]] = {}
    for m in mismatches:
        by_sentence.setdefault(m[0], []).append(m)
    for si in sorted(by_sentence):
        ms = by_sentence[si]
        evidence = [_evidence(scan, si, [sp for m in ms for sp in m[2]], "share")]
        for _, _, _, st in ms:
            if st is not None and all(e.text != scan.sentences[st.sentence].text.strip() for e in evidence):
                evidence.append(_statement_evidence(scan, st, "count"))
        msg = _fill(rule.message, {"where": _where(scan.sentences[si].location),
                                   "mismatches": "; ".join(m[1] for m in ms)})
        findings.append(_finding(rule, msg, evidence[:MAX_EVIDENCE]))
    return findings


def _fmt_pct(p: float, decimals: int) -> str:
    return f"{p:.{decimals}f}%"


def _ratio_mismatches(scan: "Scan", nums: DocumentNumbers, by_split: dict[str, list[Statement]]
                      ) -> list[tuple[int, str, list[tuple[int, int]], Statement | None]]:
    out = []
    for r in nums.ratios:
        units = sorted({s.unit for sp in r.splits for s in by_split.get(sp, [])})
        stated_total = sum(r.parts)
        checked = fits = False
        shown: tuple[Statement, ...] | None = None
        for unit in units:
            options = [[s for s in _distinct_values(by_split.get(sp, [])) if s.unit == unit] for sp in r.splits]
            if any(not o for o in options):
                continue
            for combo in _combos(options):
                total = sum(s.value for s in combo)
                if total <= 0:
                    continue
                checked = True
                shown = shown or combo
                # a ratio in whole percent holds within one point, "7:1:2" within half a unit of the ratio;
                # both also within one case, since splits are made of whole patients
                tol = (1.0 if r.percent else 50.0 / stated_total) + 100.0 / total + 1e-9
                if all(abs(100 * s.value / total - 100 * p / stated_total) <= tol for s, p in zip(combo, r.parts)):
                    fits = True
                    break
            if fits:
                break
        if not checked or fits or shown is None:
            continue
        total = sum(s.value for s in shown)
        share = "/".join(_trim_num(p) for p in r.parts) + ("%" if r.percent else "")
        computed = "/".join(f"{100 * s.value / total:.1f}" for s in shown) + "%"
        parts = " + ".join(f"{s.value:,} {s.split}" for s in shown)
        wrong = f"a {share} split of {' / '.join(r.splits)}, but {parts} is {computed}"
        away = next((s for s in shown if s.sentence != r.sentence), None)
        out.append((r.sentence, wrong, [(r.start, r.end)], away))
    return out


def _trim_num(v: float) -> str:
    return str(int(v)) if v == int(v) else f"{v:g}"


CHECKS: dict[str, Check] = {
    "consistency-counts": Check(check_counts, frozenset({"quantity", "first", "first_where", "second",
                                                         "second_where", "values"})),
    "split-sums": Check(check_split_sums, frozenset({"sum", "unit", "parts", "total", "total_where"})),
    "split-percentages": Check(check_split_percentages, frozenset({"where", "mismatches"})),
}


# ---------------------------------------------------------------------------------------------- entry point


def run_rules(scan: "Scan", items=None, checklist: "Checklist | None" = None, config: "Config | None" = None,
              ruleset: RuleSet | None = None) -> list[Finding]:
    """Every rule switched on in the configuration, on one scanned document, in the rules file's order."""
    ruleset = ruleset or load_rules()
    switches = dict(config.rules) if config is not None else {}
    unknown = sorted(set(switches) - set(ruleset.ids))
    if unknown:
        raise UsageError(f"{getattr(config, 'source', 'configuration')}: there is no rule {unknown[0]!r} to switch "
                         f"on or off (rules: {', '.join(ruleset.ids)})")
    active = [r for r in ruleset.rules if switches.get(r.id, True)]
    if not active or not scan.sentences:
        return []
    compiled = compiled_rules(ruleset)
    hits = compiled.match(scan) if any(r.trigger for r in active) else {}
    ctx = RunContext(scan)
    findings: list[Finding] = []
    for rule in active:
        if rule.trigger is not None:
            f = evaluate_data_rule(rule, scan, hits)
            if f is not None:
                findings.append(f)
        elif rule.check is not None:
            findings += CHECKS[rule.check].run(scan, rule, ctx)
    return findings
