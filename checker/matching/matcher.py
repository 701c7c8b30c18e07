"""Cue matching: every cue of a checklist compiled once, then one pass over a document's sentences.

Phrases go to two PhraseMatchers (lemma and lower case), token patterns to one Matcher, regexes are compiled
with a time bound. A match key says which item, facet and part of the facet (cue, near, unless, applies) it is
for, so one pass serves every item.
"""

from __future__ import annotations

from bisect import bisect_left
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Iterable

from .checklist import Checklist, Cues, compile_regex
from .regexscan import Sentences, required_word_sets
from ..reading.document import Document, Sentence
from ..core.errors import InputError, StudygapError

if TYPE_CHECKING:
    from spacy.tokens import Doc

    from .attribution import Attribution

#: section role -> how much evidence found there counts; references never count
ROLE_WEIGHTS = {
    "methods": 1.0,
    "data": 1.0,
    "evaluation": 1.0,
    "results": 0.9,
    "abstract": 0.9,
    "acknowledgements": 0.9,
    "appendix": 0.9,
    "body": 0.9,
    "introduction": 0.6,
    "discussion": 0.6,
    "limitations": 0.6,
    "related-work": 0.3,
    "requirements": 0.3,
    "references": 0.0,
    # title page, declarations, table of contents, lists of figures: never evidence
    "front-matter": 0.0,
}
#: a heading names a topic but states nothing about it: alone it never makes a facet found
HEADING_FACTOR = 0.4
FOUND_AT = 0.5

CUE, NEAR, UNLESS, APPLIES = "cue", "near", "unless", "applies"


@dataclass(frozen=True, slots=True)
class Hit:
    sentence: int  # index into Scan.sentences
    start: int  # character offsets into the sentence text
    end: int
    #: named regex groups: (name, text, start, end) with offsets into the sentence text
    groups: tuple[tuple[str, str, int, int], ...] = ()


@dataclass
class Scan:
    """All sentences of a document (outside the references) and every cue hit, by match key."""

    document: Document
    sentences: list[Sentence]
    #: section path of each sentence's block, to keep `near` inside one section
    sections: list[tuple[str, ...]]
    hits: dict[str, list[Hit]] = field(default_factory=dict)
    #: sentences from the references section, kept only so that they can be counted in an outline
    skipped_reference_sentences: int = 0
    #: where each sentence lies in the parsed blocks: (index into docs, first token, end token)
    spans: list[tuple[int, int, int]] = field(default_factory=list, repr=False)
    docs: list["Doc"] = field(default_factory=list, repr=False)
    #: the sentences' texts joined and case-folded for the regex cues, shared by the checklist's and the rules' cues
    texts: Sentences | None = field(default=None, repr=False)
    #: whose statement each sentence is (see checker.matching.attribution); filled on first use
    _attributions: list["Attribution"] | None = field(default=None, repr=False)
    _defers: list[bool] | None = field(default=None, repr=False)

    def attribution(self, i: int) -> "Attribution":
        if self._attributions is None:
            from .attribution import attribute

            self._attributions = [attribute(s.text, s.role, s.kind) for s in self.sentences]
        return self._attributions[i]

    def defers(self, i: int) -> bool:
        """Whether sentence i leaves its details to another document (see attribution.defers)."""
        if self._defers is None:
            from .attribution import defers

            self._defers = [defers(s.text) for s in self.sentences]
        return self._defers[i]

    def weight(self, i: int) -> float:
        """How much sentence i counts as evidence: its section's weight times whose statement it is."""
        s = self.sentences[i]
        w = ROLE_WEIGHTS.get(s.role, 0.9)
        if s.kind == "heading":
            return w * HEADING_FACTOR
        return w * self.attribution(i).factor


def key(item: int, facet: int, part: str) -> str:
    return f"{item}:{facet}:{part}"


#: a phrase written "=word" is matched only as written (lower case), not by its lemma
EXACT = "="


def spelling_variants(phrase: str) -> list[str]:
    """Spelling variants authors mix: hyphen or not, British or American endings."""
    out = {phrase}
    if "-" in phrase:
        out.add(phrase.replace("-", " "))
        out.add(phrase.replace("-", ""))
    for a, b in (("isation", "ization"), ("ise", "ize"), ("ised", "ized"), ("ising", "izing"), ("centre", "center"),
                 ("labelled", "labeled"), ("labelling", "labeling"), ("modelling", "modeling"), ("colour", "color"),
                 ("analyse", "analyze"), ("tumour", "tumor"), ("oedema", "edema"), ("haem", "hem")):
        for v in list(out):
            if a in v:
                out.add(v.replace(a, b))
            if b in v:
                out.add(v.replace(b, a))
    return sorted(out)


def required_word_sets_of(sources: list[str]) -> list[tuple[tuple[str, ...], ...]]:
    """regexscan.required_word_sets() of each regex source, with what the macros need (facts.MACRO_NEEDS), kept
    in the cache folder between runs as JSON (Python's regex parser takes about a tenth of a second over a
    checklist's few hundred long regexes), keyed by the sources, regexscan's file, the macros' needs and the
    Python version."""
    import json
    import os
    import sys

    from . import regexscan
    from .facts import MACRO_NEEDS
    from .regexcache import cached_data

    macros = tuple(sorted(MACRO_NEEDS.items()))
    try:
        st = os.stat(regexscan.__file__)
        code = f"{regexscan.__file__}\0{st.st_size}\0{st.st_mtime_ns}\0{json.dumps(macros)}"
    except OSError:
        return [required_word_sets(s, macros) for s in sources]

    def sound(v) -> bool:
        return isinstance(v, list) and len(v) == len(sources) and all(
            isinstance(sets, list) and all(isinstance(w, list) and w and all(isinstance(x, str) and x for x in w)
                                           for w in sets) for sets in v)

    found = cached_data("required-words", "\0".join([sys.version, code, *sources]),
                        lambda: [[list(w) for w in required_word_sets(s, macros)] for s in sources], check=sound)
    return [tuple(tuple(w) for w in sets) for sets in found]


def add_phrases(nlp, phrases: dict[str, list[str]], lemma_matcher, lower_matcher=None) -> None:
    """Each key's cue phrases with their spelling variants (one pattern per distinct text, in sorted order) added
    to a PhraseMatcher on LEMMA and one on LOWER, as the hashes of their tokens' lemmas and lower-case forms
    (nlp.phrase_tokens, kept between runs): what the matchers would take from a Doc of each phrase. A phrase
    written "=mean" is matched as written, never by its lemma (else "mean" would match "meaning" and "by means
    of"): it goes to the LOWER matcher only."""
    from .nlp import phrase_tokens

    texts = {k: sorted({v for p in ps if not p.startswith(EXACT) for v in spelling_variants(p)})
             for k, ps in phrases.items()}
    exact = {k: sorted({v for p in ps if p.startswith(EXACT) for v in spelling_variants(p[len(EXACT):])})
             for k, ps in phrases.items()}
    table = phrase_tokens(nlp, sorted({t for group in (texts, exact) for ts in group.values() for t in ts}))
    add = nlp.vocab.strings.add
    for k in phrases:
        if texts[k]:
            lemma_matcher.add(k, [[add(w) for w in table[t][0]] for t in texts[k]])
        if lower_matcher is not None and (texts[k] or exact[k]):
            lower_matcher.add(k, [[add(w) for w in table[t][1]] for t in texts[k] + exact[k]])


class TokenPatterns:
    """Token patterns, matched as spaCy's Matcher matches them: (key hash, start, end) of every match, each once
    per key.

    A pattern whose tokens each only ask for ORTH, LOWER or LEMMA to be a value or one of a set ("plain"; most
    checklist patterns) is looked up by its first token's values in one pass over the block's attribute
    columns: spaCy's Matcher calls a Python predicate per token for every set, which made five such patterns
    cost more than all phrase matching. Any other pattern (operators, LIKE_NUM, REGEX, ...) goes to spaCy's
    Matcher. A block is handed to spaCy's Matcher only when, for some such pattern, the block holds a value one
    of the pattern's tokens must have (a token without an operator, or with "+", tested only as above; the
    pattern's first such token): a block without it cannot match, and most blocks hold none.
    """

    _ATTRS = ("ORTH", "LOWER", "LEMMA")

    def __init__(self, vocab) -> None:
        self.vocab = vocab
        #: attribute -> value hash -> (key hash, width, tests) of the plain patterns whose first token may be it;
        #: tests are (token offset, attribute, the allowed hashes)
        self._first: dict[int, dict[int, list[tuple[int, int, tuple[tuple[int, int, frozenset[int]], ...]]]]] = {}
        self._matcher = None
        self._keys: set[str] = set()
        #: for the patterns spaCy's Matcher takes: (attribute, the hashes one of which a block must hold) of each;
        #: None once a pattern has no such token (then every block goes to spaCy's Matcher)
        self._needs: list[tuple[int, frozenset[int]]] | None = []

    @classmethod
    def _is_plain(cls, pattern) -> bool:
        return bool(pattern) and all(cls._is_plain_token(t) for t in pattern)

    @classmethod
    def _is_plain_token(cls, token) -> bool:
        def value_ok(v) -> bool:
            return isinstance(v, str) or (isinstance(v, dict) and set(v) == {"IN"} and isinstance(v["IN"], list)
                                          and all(isinstance(x, str) for x in v["IN"]))

        return isinstance(token, dict) and bool(token) and all(k in cls._ATTRS and value_ok(v)
                                                               for k, v in token.items())

    def _need_of(self, pattern) -> tuple[int, frozenset[int]] | None:
        """(attribute, allowed hashes) of the pattern's first token that every match holds and that is tested
        only on ORTH, LOWER or LEMMA against values; None when it has none."""
        for tok in pattern:
            if not isinstance(tok, dict) or tok.get("OP", "+") != "+":
                continue
            tests = {k: v for k, v in tok.items() if k != "OP"}
            if len(tests) == 1 and self._is_plain_token(tests):
                (attr, v), = tests.items()
                return self._ATTRS.index(attr), frozenset(self.vocab.strings.add(x)
                                                          for x in ([v] if isinstance(v, str) else v["IN"]))
        return None

    def add(self, key: str, patterns) -> None:
        self._keys.add(key)
        strings = self.vocab.strings
        other = []
        for pattern in patterns:
            if not self._is_plain(pattern):
                other.append(pattern)
                continue
            tests = tuple((i, self._ATTRS.index(attr), frozenset(strings.add(x) for x in
                                                                 ([v] if isinstance(v, str) else v["IN"])))
                          for i, tok in enumerate(pattern) for attr, v in tok.items())
            _, attr, values = tests[0]
            entry = (strings.add(key), len(pattern), tests)
            index = self._first.setdefault(attr, {})
            for h in values:
                index.setdefault(h, []).append(entry)
        if other:
            for pattern in other:
                need = self._need_of(pattern) if self._needs is not None else None
                self._needs = None if need is None else self._needs + [need]
            if self._matcher is None:
                from spacy.matcher import Matcher

                self._matcher = Matcher(self.vocab)
            self._matcher.add(key, other)

    def __len__(self) -> int:
        return len(self._keys)

    def __call__(self, doc) -> list[tuple[int, int, int]]:
        from spacy.attrs import LEMMA, LOWER, ORTH

        found: set[tuple[int, int, int]] = set()
        n = len(doc)
        columns = [c.tolist() for c in doc.to_array([ORTH, LOWER, LEMMA]).T] if n and (self._first or self._needs) \
            else None
        if self._first and n:
            for attr, index in self._first.items():
                for start, h in enumerate(columns[attr]):
                    entries = index.get(h)
                    if entries is None:
                        continue
                    for key, width, tests in entries:
                        if start + width <= n and all(columns[a][start + i] in values for i, a, values in tests):
                            found.add((key, start, start + width))
        out = sorted(found, key=lambda m: (m[1], m[2], m[0]))
        if self._matcher is not None and (self._needs is None or columns is None or self._may_match(columns)):
            out.extend(m for m in self._matcher(doc) if (m[0], m[1], m[2]) not in found)
            out.sort(key=lambda m: (m[1], m[2]))
        return out

    def _may_match(self, columns: list[list[int]]) -> bool:
        """Whether the block (its ORTH, LOWER and LEMMA columns) holds a value some pattern for spaCy's
        Matcher needs."""
        present: dict[int, set[int]] = {}
        for attr, values in self._needs:
            held = present.get(attr)
            if held is None:
                held = present[attr] = set(columns[attr])
            if not held.isdisjoint(values):
                return True
        return False


class CompiledCues:
    """Cues compiled for one spaCy pipeline under match keys, and matched in one pass over a document's sentences:
    THE cue layer, for the checklists (CompiledChecklist) and the rules (checker.rules.data) alike.

    Phrases go to two PhraseMatchers (lemma and lower case), token patterns to TokenPatterns, regexes are compiled
    when a document first needs one and searched with a time bound, only in sentences holding the words they
    require (regexscan).
    """

    def __init__(self, nlp, cues: Iterable[tuple[str, Cues]], *, kind: str = "checklist", source: str = "") -> None:
        #: what the cues are ("checklist", "rule") and the file they come from, for error messages
        self.kind, self.source = kind, source
        self.nlp = nlp
        from spacy.matcher import PhraseMatcher  # spaCy is imported: nlp came from nlp.pipeline()

        vocab = nlp.vocab
        self.lemma_matcher = PhraseMatcher(vocab, attr="LEMMA")
        self.lower_matcher = PhraseMatcher(vocab, attr="LOWER")
        self.token_matcher = TokenPatterns(vocab)
        #: (match key, regex source); compiled when a document first needs one (see _scan_regexes)
        self._regexes: list[tuple[str, str]] = []
        self.keys: set[str] = set()
        phrase_docs: dict[str, list[str]] = {}
        for k, c in cues:
            if not c:
                continue
            self.keys.add(k)
            if c.phrases:
                phrase_docs.setdefault(k, []).extend(c.phrases)
            if c.patterns:
                self.token_matcher.add(k, [list(p) for p in c.patterns])
            for src in c.regex:
                self._regexes.append((k, src))
        add_phrases(nlp, phrase_docs, self.lemma_matcher, self.lower_matcher)
        # a regex can only match where its literal words occur: sentences without them are skipped
        self._prefilter = required_word_sets_of([src for _, src in self._regexes])
        self._matchers = [m for m in (self.lemma_matcher, self.lower_matcher, self.token_matcher) if len(m)]

    def match(self, sentences: list[Sentence], docs: list["Doc"], spans: list[tuple[int, int, int]], *,
              clip: bool = True, regex_seconds: float = 2.0, path: str = "",
              texts: Sentences | None = None) -> dict[str, list[Hit]]:
        """Every hit by match key, sorted and each once. Without parsed blocks (a Scan built by hand) the
        sentences are parsed here. A spaCy hit that runs into the next sentence is cut there (clip) or left out.
        ``texts``: the sentences' texts prepared for the regexes (Sentences of the same sentences), if at hand."""
        hits: dict[str, list[Hit]] = {}
        if self._matchers:
            strings = self.nlp.vocab.strings
            if spans:
                match_sentences(self._matchers, strings, docs, spans, sentences, clip=clip, into=hits)
            else:
                for si, doc in enumerate(self.nlp.pipe([s.text for s in sentences], batch_size=128)):
                    for m in self._matchers:
                        for mid, a, b in m(doc):
                            hits.setdefault(strings[mid], []).append(Hit(si, doc[a:b].start_char, doc[a:b].end_char))
        if texts is None:
            texts = Sentences([s.text for s in sentences])
        self._scan_regexes(texts, hits, regex_seconds, path)
        for k, v in hits.items():  # one key at a time: a long document's hits are not held twice
            v.sort(key=lambda h: (h.sentence, h.start, h.end))
            hits[k] = _dedupe(v)
        return hits

    def _scan_regexes(self, texts: Sentences, hits: dict[str, list[Hit]], seconds: float, path: str) -> None:
        import regex

        for (k, src), sets in zip(self._regexes, self._prefilter):
            need = sets[0] if sets else ()
            if not texts.mentions(need):
                continue  # its word occurs nowhere: no need even to compile it
            try:
                rx = compile_regex(src)
            except regex.error as exc:
                raise StudygapError(f"{self.source}: {self.kind} regex {src!r} is not valid: {exc}") from None
            names = sorted(rx.groupindex, key=lambda n: rx.groupindex[n])
            try:
                for si, m in texts.search(rx, need, seconds, also=sets[1:]):
                    groups = tuple((name, m.group(name), m.start(name), m.end(name))
                                   for name in names if m.group(name) is not None)
                    hits.setdefault(k, []).append(Hit(si, m.start(), m.end(), groups))
            except TimeoutError:
                raise InputError(path, f"the {self.kind} regex {src!r} took longer than {seconds:g} s",
                                 "it backtracks too much on this text; simplify it, or raise --regex-seconds") from None


class CompiledChecklist:
    """A checklist's cues compiled for one spaCy pipeline; build once, scan many documents."""

    def __init__(self, checklist: Checklist, nlp=None) -> None:
        from .nlp import pipeline

        self.checklist = checklist
        self.nlp = nlp or pipeline()  # imports spaCy (see checker.matching.spacyimport) before the matchers
        cues: list[tuple[str, Cues]] = []
        for ii, item in enumerate(checklist.items):
            for fi, facet in enumerate(item.facets):
                cues.append((key(ii, fi, CUE), facet.cues))
                if facet.near is not None:
                    cues.append((key(ii, fi, NEAR), facet.near.cues))
                if facet.unless is not None:
                    cues.append((key(ii, fi, UNLESS), facet.unless))
            if item.applies_when is not None:
                cues.append((key(ii, -1, APPLIES), item.applies_when.cues))
        cues.append(("choose", checklist.choose_when))
        self.cues = CompiledCues(self.nlp, cues, kind="checklist", source=str(checklist.path))
        self.keys = self.cues.keys

    def scan(self, document: Document, *, regex_seconds: float = 2.0, docs: Iterable["Doc"] | None = None) -> Scan:
        """Find every cue in the document's sentences; the references section is passed over."""
        from .nlp import sentences_of

        sentences: list[Sentence] = []
        sections: list[tuple[str, ...]] = []
        spans: list[tuple[int, int, int]] = []
        kept_docs: list["Doc"] = []
        skipped = 0
        for sent, doc, tstart, tend in sentences_of(document, docs):
            if sent.role == "references":
                skipped += 1
                continue
            sentences.append(sent)
            sections.append(document.blocks[sent.block].section)
            if not kept_docs or kept_docs[-1] is not doc:
                kept_docs.append(doc)
            spans.append((len(kept_docs) - 1, tstart, tend))
        texts = Sentences([s.text for s in sentences])
        hits = self.cues.match(sentences, kept_docs, spans, clip=True, regex_seconds=regex_seconds,
                               path=document.path, texts=texts) if sentences else {}
        return Scan(document, sentences, sections, hits, skipped, spans, kept_docs, texts)


def match_sentences(matchers, strings, docs: list["Doc"], spans: list[tuple[int, int, int]],
                    sentences: list[Sentence], *, clip: bool, into: dict[str, list[Hit]]) -> None:
    """Every spaCy matcher hit added to ``into`` under its match key, with offsets into the sentence text.

    Each parsed block is matched once and its hits are handed to the sentences they start in; a hit that runs
    into the next sentence is cut at the sentence's end (clip) or left out.
    """
    from spacy.attrs import IDX, LENGTH

    by_doc: dict[int, list[int]] = {}
    for si, (di, _, _) in enumerate(spans):
        by_doc.setdefault(di, []).append(si)
    for di, members in by_doc.items():
        doc = docs[di]
        # sorted by start (stable, so hits keep their order) and bisected per sentence: a block of thousands
        # of sentences must not cost sentences x matches
        found = sorted(((strings[mid], s, e) for m in matchers for mid, s, e in m(doc)), key=lambda t: t[1])
        if not found:
            continue
        starts = [f[1] for f in found]
        # character offsets of the tokens, read once: a Span per hit would cost more than the matching
        idx, length = (col.tolist() for col in doc.to_array([IDX, LENGTH]).T)
        for si in members:
            _, tstart, tend = spans[si]
            offset = sentences[si].start
            for mkey, ms, me in found[bisect_left(starts, tstart):bisect_left(starts, tend)]:
                if me > tend and not clip:
                    continue
                last = min(me, tend) - 1
                into.setdefault(mkey, []).append(Hit(si, idx[ms] - offset, idx[last] + length[last] - offset))


def _dedupe(hits: list[Hit]) -> list[Hit]:
    out: list[Hit] = []
    seen = set()
    for h in hits:
        k = (h.sentence, h.start, h.end)
        if k in seen:
            continue
        seen.add(k)
        out.append(h)
    return out
