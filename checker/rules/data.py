"""Data rules: a rule's cues compiled once and matched on a document's sentences, and the finding of a rule whose
cues occur (with the cues that must or must not be near them)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Iterable

import regex

from ..matching.checklist import Cues
from ..verdicts.report import Finding

from .model import MAX_EVIDENCE, MAX_PASSAGES, OTHERS_WORK, Rule, RuleSet, Scope
from .evidence import evidence_order, fill, make_finding, passage_evidence, where_of

if TYPE_CHECKING:
    from ..matching.matcher import Scan


@dataclass(frozen=True)
class Hits:
    """Cue hits of one part of a rule: sentence index -> character spans in that sentence."""

    by_sentence: dict[int, tuple[tuple[int, int], ...]]

    def sentences(self) -> set[int]:
        return set(self.by_sentence)


class CompiledRules:
    """Every cue of a rule set compiled once, through the checklists' cue layer (matching.matcher.CompiledCues)
    under keys "RULE:PART"; match a Scan's sentences."""

    def __init__(self, ruleset: RuleSet, nlp=None) -> None:
        from ..matching.matcher import CompiledCues
        from ..matching.nlp import pipeline

        self.ruleset = ruleset
        self.nlp = nlp or pipeline()  # imports spaCy (see checker.matching.spacyimport) before the matchers
        cues: list[tuple[str, Cues | None]] = []
        for rule in ruleset.rules:
            t = rule.trigger
            if t is None:
                continue
            parts: list[tuple[str, Cues | None]] = [("cue", t.cues), ("near", t.near.cues if t.near else None),
                                                     ("unless", t.unless)]
            parts += [(f"with{i}", cs.cues) for i, cs in enumerate(t.with_)]
            parts += [(f"without{i}", cs.cues) for i, cs in enumerate(t.without)]
            cues += [(f"{rule.id}:{part}", c) for part, c in parts]
        self.cues = CompiledCues(self.nlp, cues, kind="rule", source=str(ruleset.path))

    def match(self, scan: "Scan", regex_seconds: float = 2.0) -> dict[str, Hits]:
        # a spaCy hit running into the next sentence is left out (not cut); a regex group named "seen" marks the
        # words to quote ("sensitivity" of "sensitivity of 0.8")
        found = self.cues.match(scan.sentences, scan.docs, scan.spans, clip=False, regex_seconds=regex_seconds,
                                path=scan.document.path, texts=scan.texts)
        out: dict[str, Hits] = {}
        for k, hits in found.items():
            spans: dict[int, set[tuple[int, int]]] = {}
            for h in hits:
                seen = next(((a, b) for name, text, a, b in h.groups if name == "seen" and text), (h.start, h.end))
                spans.setdefault(h.sentence, set()).add(seen)
            out[k] = Hits({si: tuple(sorted(v)) for si, v in spans.items()})
        return out


_COMPILED: dict[int, tuple[RuleSet, CompiledRules]] = {}


def compiled_rules(ruleset: RuleSet) -> CompiledRules:
    """The rule set's cues compiled once per process (by identity: token patterns hold dicts, not hashable)."""
    entry = _COMPILED.get(id(ruleset))
    if entry is None or entry[0] is not ruleset:
        if len(_COMPILED) >= 8:
            _COMPILED.clear()
        entry = _COMPILED[id(ruleset)] = (ruleset, CompiledRules(ruleset))
    return entry[1]


def _in_scope(scan: "Scan", s: int, others: set[int], scope: Scope) -> bool:
    if not others:
        return False
    if scope.kind == "document":
        return True
    if scope.kind == "sentence":
        return s in others
    from ..verdicts.decide import is_near

    return is_near(scan, s, others, scope.within)


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
    evidence = [passage_evidence(scan, si, cue[si], "trigger") for si in shown]
    context_words: list[str] = []
    for cs, wh in zip(t.with_, with_hits):
        near_ones = [si for si in sorted(wh) if any(_in_scope(scan, p, {si}, cs.scope) for p in shown)]
        for si in near_ones:
            context_words += _words_of(scan, si, wh[si])
        if any(si in wh for si in shown) or not near_ones or len(evidence) >= MAX_EVIDENCE:
            continue  # a passage shown already carries the context
        # the context passage nearest to the first passage, so that the reader sees why the rule applies
        nearest = min(near_ones, key=lambda si: (abs(si - shown[0]), si))
        evidence.append(passage_evidence(scan, nearest, wh[nearest], "context"))
    evidence.sort(key=lambda e: evidence_order(scan, e))
    values = {
        "seen": _distinct(w for si in passages for w in _words_of(scan, si, cue[si])),
        "where": where_of(scan.sentences[shown[0]].location),
        "count": len(passages),
        "context": _distinct(context_words),
    }
    return make_finding(rule, fill(rule.message, values), evidence)
