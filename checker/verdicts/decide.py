"""From cue hits to item statuses: facets found, needs met, applicability and waivers."""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import lru_cache

from ..matching.checklist import Facet, Item
from ..matching.matcher import APPLIES, CUE, FOUND_AT, NEAR, UNLESS, CompiledChecklist, Hit, Scan, key
from ..matching.fact import Fact
from .report import Evidence, FacetResult, ItemResult

MAX_EVIDENCE = 3
MAX_FACTS_PER_NAME = 5
#: how much more a sentence counts, when ordering the evidence, if a heading above it names the item's topic
#: (the item's `headings:`): a writer who gives a section to the annotation puts the annotation there
HEADING_ORDER_FACTOR = 1.5


@dataclass(frozen=True)
class FacetHits:
    facet: Facet
    hits: tuple[Hit, ...]  # valid cue hits (near satisfied, not cancelled by unless)
    score: float
    #: how strong the best hit must be for the facet to count as found (fitted per concept, see fitted.py)
    threshold: float = FOUND_AT
    #: the best hit's score among sentences that give the details here rather than leave them to another
    #: document (equal to `score` unless the facet has `deferred: partial`)
    complete_score: float = 0.0

    @property
    def found(self) -> bool:
        return self.score >= self.threshold

    @property
    def complete(self) -> bool:
        """Found in a sentence that gives the details itself: only such a facet can make an item reported."""
        return self.complete_score >= self.threshold


def facet_hits(scan: Scan, ii: int, fi: int, facet: Facet, threshold: float = FOUND_AT) -> FacetHits:
    cue_hits = scan.hits.get(key(ii, fi, CUE), [])
    if not cue_hits:
        return FacetHits(facet, (), 0.0, threshold)
    unless = {h.sentence for h in scan.hits.get(key(ii, fi, UNLESS), [])}
    near_sents: set[int] | None = None
    if facet.near is not None:
        near_sents = {h.sentence for h in scan.hits.get(key(ii, fi, NEAR), [])}
    valid = []
    for h in cue_hits:
        if h.sentence in unless:
            continue
        if near_sents is not None and not is_near(scan, h.sentence, near_sents, facet.near.within):
            continue
        valid.append(h)
    score = max((facet.weight * scan.weight(h.sentence) for h in valid), default=0.0)
    complete = score
    if facet.deferred_partial:
        complete = max((facet.weight * scan.weight(h.sentence) for h in valid if not scan.defers(h.sentence)),
                       default=0.0)
    return FacetHits(facet, tuple(valid), score, threshold, complete)


def is_near(scan: Scan, s: int, others: set[int], within: int) -> bool:
    section = scan.sections[s]
    block = scan.sentences[s].block
    for t in range(s - within, s + within + 1):
        if t in others and 0 <= t < len(scan.sentences):
            if t == s or scan.sections[t] == section or scan.sentences[t].block == block:
                return True
    return False


@lru_cache(maxsize=512)
def _heading_cue(words: tuple[str, ...]) -> re.Pattern | None:
    """One case-insensitive regex for an item's heading words, each also in its plural."""
    if not words:
        return None
    alts = sorted({re.escape(w.lower()).replace(r"\ ", r"[\s_-]+") for w in words}, key=lambda a: (-len(a), a))
    return re.compile(r"\b(?:" + "|".join(alts) + r")(?:s|es)?\b", re.IGNORECASE)


def under_topic_heading(scan: Scan, item: Item) -> Callable[[int], bool]:
    """Whether a heading of a sentence's section names the item's topic (its `headings:`), by sentence index."""
    cue = _heading_cue(item.headings)
    known: dict[tuple[str, ...], bool] = {}

    def topical(si: int) -> bool:
        section = scan.sections[si]
        if section not in known:
            known[section] = cue is not None and any(cue.search(h) for h in section)
        return known[section]

    return topical


def evaluate_item(compiled: CompiledChecklist, scan: Scan, ii: int, item: Item, waivers: dict[str, str],
                  scores: Callable[[int, str, list[str]], Sequence[float] | None] | None = None) -> ItemResult:
    from ..matching.facts import parse_value
    from .fitted import threshold

    found_at = threshold(item.concept)
    per_facet = [facet_hits(scan, ii, fi, f, found_at) for fi, f in enumerate(item.facets)]
    found = {fh.facet.id for fh in per_facet if fh.found}
    complete = {fh.facet.id for fh in per_facet if fh.complete}
    facets = tuple(
        FacetResult(fh.facet.id, fh.facet.title, fh.found, fh.score, len({h.sentence for h in fh.hits}))
        for fh in per_facet
    )

    # evidence: sentences ranked by how many facets they carry, weighted by where they stand and by whether a heading
    # above them names the item's topic, and, where the learned sentence scorer is at hand (`scores`, see
    # judge.SentenceScores), by how likely the scorer finds that the sentence holds what the item asks: of several
    # sentences with the same cues, careful readers quote the one that says it; among equals, the one with more
    # distinct words matched says more about the item (a word said twice counts once)
    by_sentence: dict[int, dict[str, list[Hit]]] = {}
    for fh in per_facet:
        for h in fh.hits:
            by_sentence.setdefault(h.sentence, {}).setdefault(fh.facet.id, []).append(h)
    weights = {fh.facet.id: fh.facet.weight for fh in per_facet}
    topical = under_topic_heading(scan, item)
    likely = scores(ii, item.id, [f.id for f in item.facets]) if scores is not None else None
    ranked = sorted(
        by_sentence.items(),
        key=lambda kv: (-sum(weights[f] for f in kv[1]) * scan.weight(kv[0])
                        * (HEADING_ORDER_FACTOR if topical(kv[0]) else 1.0)
                        * (likely[kv[0]] if likely is not None else 1.0),
                        -len({scan.sentences[kv[0]].text[h.start:h.end].lower() for hs in kv[1].values() for h in hs}),
                        kv[0]),
    )
    evidence = []
    quoted: set[str] = set()
    for si, fhits in ranked:
        score = min(1.0, scan.weight(si) * sum(weights[f] for f in fhits) / max(1, len(item.facets)))
        if scan.weight(si) * max(weights[f] for f in fhits) < found_at:
            continue
        sent = scan.sentences[si]
        spans = merge_spans([(h.start, h.end) for hs in fhits.values() for h in hs])
        text, spans = trim_passage(sent.text, spans)
        if not first_quote(text, quoted):
            continue
        evidence.append(Evidence(text, sent.location, score, spans, tuple(f.id for f in item.facets if f.id in fhits),
                                 scan.attribution(si).kind))
        if len(evidence) >= MAX_EVIDENCE:
            break

    facts: dict[str, list[Fact]] = {}
    seen: set[tuple[str, int, str]] = set()
    for fh in per_facet:
        for h in fh.hits:
            if scan.weight(h.sentence) * fh.facet.weight < found_at:
                continue
            for name, text, start, end in h.groups:
                k = (name, h.sentence, text)
                if k in seen or len(facts.get(name, ())) >= MAX_FACTS_PER_NAME:
                    continue
                seen.add(k)
                facts.setdefault(name, []).append(
                    Fact(name, parse_value(name, text), text.strip(), start, end,
                         location=scan.sentences[h.sentence].location)
                )

    status, reason, lacking = _status(compiled, scan, ii, item, per_facet, found, complete, waivers)
    return ItemResult(
        id=item.id,
        group=item.group,
        title=item.title,
        question=item.question,
        ask=item.ask,
        status=status,
        facets=facets,
        evidence=tuple(evidence),
        facts=tuple((name, tuple(fs)) for name, fs in sorted(facts.items())),
        reason=reason,
        why=item.why,
        lacking=lacking,
    )


#: how much a sentence must count for its `applies_when` cue to make an item apply: a reference list, front
#: matter and text about other work (weight 0) do not make a document do what they mention
APPLIES_AT = 0.2


def applies(scan: Scan, ii: int, item: Item) -> bool:
    """Whether an item applies: it has no `applies_when`, or one of those cues occurs in text that counts."""
    if item.applies_when is None:
        return True
    return any(scan.weight(h.sentence) >= APPLIES_AT for h in scan.hits.get(key(ii, -1, APPLIES), ()))


def strict_applies(item: Item) -> bool:
    """Whether the item's `applies_when` makes it not-applicable even where its facets are found."""
    return item.applies_when is not None and item.applies_when.strict


def decide(found: set[str], needs: tuple[tuple[str, ...], ...], inapplicable: bool,
           complete: set[str] | None = None, only_without: tuple[tuple[str, tuple[str, ...]], ...] = (),
           strict: bool = False) -> str:
    """The status from the facets found: reported when every facet of one `needs` set is found (and `complete`:
    found in a sentence that gives the details itself, not only leaves them to another document; and not a
    facet whose `only_without` facets are found), partial when some facet is found, else not-applicable (the
    item's `applies_when` found nothing) or missing. With `strict` (the item's `applies_when: strict: true`) an
    inapplicable item is not-applicable whatever is found. The one rule that both the verdicts and the
    threshold fitting (fitting.py) use."""
    if inapplicable and strict:
        return "not-applicable"
    if not found:
        return "not-applicable" if inapplicable else "missing"
    return "reported" if any(set(n) <= completed(found, complete, only_without) for n in needs) else "partial"


def completed(found: set[str], complete: set[str] | None,
              only_without: tuple[tuple[str, tuple[str, ...]], ...] = ()) -> set[str]:
    """The facets found that can complete a `needs` set: found in a sentence that gives the details itself, and
    not held back by a facet of their `only_without` that is found too."""
    done = found if complete is None else found & complete
    return done - {f for f, blockers in only_without if found & set(blockers)}


def only_without_of(item: Item) -> tuple[tuple[str, tuple[str, ...]], ...]:
    """The item's facets that complete it only when certain other facets are not found, with those facets."""
    ids = {f.id for f in item.facets}
    return tuple((f.id, tuple(b for b in f.only_without if b in ids)) for f in item.facets if f.only_without)


def _status(compiled, scan, ii, item, per_facet, found, complete, waivers) -> tuple[str, str, tuple[str, ...]]:
    """The status, the reason in words, and what a partial item still lacks (the facets of its best way to
    completion that were not found: the one place this is decided; the requests to authors ask for these)."""
    if item.id in waivers:
        return "waived", f"waived in the configuration: {waivers[item.id]}", ()
    inapplicable = not applies(scan, ii, item)
    held_back = only_without_of(item)
    status = decide(found, item.needs, inapplicable, complete, held_back, strict_applies(item))
    if status == "not-applicable":
        # a strict applies_when can leave passages found: say why they do not count
        aside = " (the quoted passages only mention the topic)" if found else ""
        return status, f"not applicable: {item.applies_when.reason}{aside}", ()
    titles = {fh.facet.id: fh.facet.title for fh in per_facet}
    if status == "reported":
        return "reported", "found: " + "; ".join(titles[f] for f in titles if f in found), ()
    if found:
        # name what a best alternative still lacks; a facet whose details are only referred to elsewhere lacks
        # them here
        done = completed(found, complete, held_back)
        best = min(item.needs, key=lambda n: (len(set(n) - done), item.needs.index(n)))
        lacking = tuple(titles[f] + (" (only referred to another document)" if f in found - complete else "")
                        for f in best if f not in done)
        return "partial", ("found: " + "; ".join(titles[f] for f in titles if f in found)
                           + " — not found: " + "; ".join(lacking)), lacking
    weak = [h.sentence for fh in per_facet for h in fh.hits]
    if weak:
        kinds = {scan.attribution(si).kind for si in weak} - {"this-study"}
        where = [_WEAK_WORDS[k] for k in ("other-work", "background", "plan", "template") if k in kinds]
        if any(scan.attribution(si).kind == "this-study" for si in weak):
            where.append("sections that count little (introduction, discussion, headings)")
        return "missing", "only mentioned in " + " and ".join(where), ()
    return "missing", "nothing found for: " + "; ".join(titles.values()), ()


#: where a cue was found that did not count, in words for the reason
_WEAK_WORDS = {"other-work": "text about other work", "background": "general statements",
               "plan": "plans or future work", "template": "a template's prompts"}


def merge_spans(spans: list[tuple[int, int]]) -> tuple[tuple[int, int], ...]:
    out: list[list[int]] = []
    for s, e in sorted(spans):
        if out and s <= out[-1][1]:
            out[-1][1] = max(out[-1][1], e)
        else:
            out.append([s, e])
    return tuple((s, e) for s, e in out)


def first_quote(text: str, quoted: set[str]) -> bool:
    """Whether a passage says something not quoted yet for the item, and note it: the same sentence met again (a
    line repeated on several pages of a site, an abstract's sentence in the body) is quoted once, leaving its
    place to another passage."""
    said = " ".join(text.split()).casefold()
    if said in quoted:
        return False
    quoted.add(said)
    return True


def trim_passage(text: str, spans: tuple[tuple[int, int], ...]) -> tuple[str, tuple[tuple[int, int], ...]]:
    """Strip the sentence's outer white space, moving the spans with it."""
    lead = len(text) - len(text.lstrip())
    t = text.strip()
    out = []
    for s, e in spans:
        s, e = max(0, s - lead), min(len(t), e - lead)
        while s < e and t[s].isspace():  # a regex may take the space after its last word: show words only
            s += 1
        while e > s and t[e - 1].isspace():
            e -= 1
        if e > s:
            out.append((s, e))
    return t, tuple(out)


def evaluate(compiled: CompiledChecklist, scan: Scan, waivers: dict[str, str] | None = None,
             scores: Callable[[int, str, list[str]], Sequence[float] | None] | None = None
             ) -> tuple[ItemResult, ...]:
    """Every item's result from the cues. `scores` (item index, item id, facet ids -> a score per sentence, or None)
    orders each item's quotes where given; it never changes a status."""
    waivers = waivers or {}
    return tuple(evaluate_item(compiled, scan, ii, it, waivers, scores)
                 for ii, it in enumerate(compiled.checklist.items))
