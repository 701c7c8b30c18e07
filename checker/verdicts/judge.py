"""A second opinion on the cues' verdict, learned from documents that careful readers labelled.

The cues decide which sentences are evidence and what each facet found (checker.verdicts.decide). Whether such
evidence is what a careful reader calls reported, partial or missing depends on more than the cues see: how a
sentence is worded around its cue, where it stands, how many sentences say something like it. Two small models
per item, fitted by `python benchmarks/learned.py --write` on labelled documents and shipped as data in
checklists/judge.json, weigh that:

1. a sentence scorer: a logistic regression on hashed lemma unigrams and bigrams of a sentence, its section role,
   the words of the headings it stands under, its block kind, whose statement it is, whether a cue of the item is
   in it and which of the item's facets' own cues matched it; it scores how likely the sentence holds what the
   item asks;
2. an item judge: a logistic regression from the best sentence scores, the cues' own verdict (status, share of
   facets found, best facet score) and which built-in checklist asks, to reported, partial or missing; it first
   weighs whether the item is there at all (partial and reported together against missing), then which of the
   two.

The judge may only move a verdict where quotes can back it: it never makes an item reported or partial without a
sentence where one of the item's facet cues was found (quoted, if the cues had counted it too little), and it
leaves not-applicable and waived items alone. The quotes a report shows stay the cues' sentences; the sentence
scorer only orders them (the likeliest first, see decide.evaluate_item). The reason says when the judge moved a
verdict and what the cues found. `judge: cues` in the settings (or `--judge cues`) turns it off. No word of any
document is kept in the model: only hashes of words.
"""

from __future__ import annotations

import dataclasses
import math
import re
import zlib
from collections.abc import Sequence
from functools import lru_cache
from importlib import resources
from typing import TYPE_CHECKING, Any

from ..core.errors import ChecklistError

if TYPE_CHECKING:
    from ..matching.checklist import Checklist
    from ..matching.matcher import Scan
    from .report import ItemResult

JUDGE_FILE = "judge.json"
STATUSES = ("missing", "partial", "reported")
#: the cues' statuses the judge reads, one feature each (the order of the shipped coefficients)
CUE_STATUSES = ("missing", "not-applicable", "partial", "reported")
#: the built-in checklists, one feature each (the order of the shipped coefficients)
CHECKLISTS = ("validation-study", "benchmark-proposal", "dataset-description")
WORD = re.compile(r"[a-z][a-z-]+")
NUMBER = re.compile(r"\d+(?:[.,]\d+)?%?")
#: sentences scored together (bounds the memory of a long document's scoring)
SENTENCES_AT_ONCE = 512
#: a sentence's score is damped when it stands where evidence counts little (see matcher.Scan.weight)
FULL_WEIGHT = 0.9


def sentence_features(lemmas: list[str], role: str, kind: str, whose: str, buckets: int,
                      heading: tuple[str, ...] = ()) -> list[int]:
    """The hashed features of one sentence: its lemmas (numbers as one word), lemma pairs, where it stands and the
    words of the headings it stands under (the two innermost: "Annotation protocol" says more than the section's
    role alone)."""
    words = []
    for lemma in lemmas:
        if NUMBER.fullmatch(lemma):
            words.append("<number>")
        elif WORD.fullmatch(lemma):
            words.append(lemma)
    names = set(words) | {a + "_" + b for a, b in zip(words, words[1:])}
    names |= {"@role=" + role, "@kind=" + kind, "@whose=" + whose}
    names |= {"@head=" + w for h in heading[-2:] for w in WORD.findall(h.lower())}
    return sorted({zlib.crc32(n.encode()) % buckets for n in names})


@dataclasses.dataclass(frozen=True)
class Models:
    """The sentence scorers of all items as one matrix (a row per kept word, a column per item) and the judges."""

    buckets: int
    items: tuple[str, ...]
    #: word bucket -> row of `words`; the last row is all zeros (a sentence without a kept word)
    rows: dict[int, int]
    words: Any  # numpy array (len(rows) + 1, len(items))
    bias: Any  # numpy array (len(items),)
    cue: Any  # numpy array (len(items),)
    judges: dict[str, dict[str, Any]]
    #: item -> facet id -> weight when that facet's own cue matched the sentence (none in older model files)
    facet_cues: dict[str, dict[str, float]] = dataclasses.field(default_factory=dict)

    @classmethod
    def build(cls, buckets: int, sentence: dict[str, dict[str, Any]], judges: dict[str, dict[str, Any]]) -> Models:
        import numpy as np

        items = tuple(sorted(sentence))
        rows = {b: r for r, b in enumerate(sorted({b for m in sentence.values() for b in m["words"]}))}
        words = np.zeros((len(rows) + 1, len(items)))
        for k, item in enumerate(items):
            for b, w in sentence[item]["words"].items():
                words[rows[b], k] = w
        return cls(buckets, items, rows, words, np.array([float(sentence[i]["bias"]) for i in items]),
                   np.array([float(sentence[i]["cue"]) for i in items]), judges,
                   {i: {str(f): float(w) for f, w in sentence[i].get("facets", {}).items()} for i in items})

    def scores(self, features: list[list[int]], weights: list[float]) -> tuple[Any, Any]:
        """Every sentence's linear score per item before its cue (sentences x items), and the damping of each
        sentence where it counts little."""
        import numpy as np

        empty = len(self.rows)
        parts = []
        for c in range(0, len(features), SENTENCES_AT_ONCE):  # a 300-page thesis must not hold all rows at once
            cols: list[int] = []
            starts = []
            for fs in features[c:c + SENTENCES_AT_ONCE]:
                starts.append(len(cols))
                cols.extend(self.rows[f] for f in fs if f in self.rows)
                cols.append(empty)
            parts.append(np.add.reduceat(self.words[cols], starts, axis=0))
        z = np.concatenate(parts) if parts else np.zeros((0, len(self.items)))
        return z, np.minimum(1.0, np.asarray(weights, dtype=float) / FULL_WEIGHT)

    def item_scores(self, z: Any, damp: Any, item: str, cue_hit: set[int],
                    facet_hit: dict[str, set[int]] | None = None) -> list[float]:
        """How likely each sentence holds what the item asks, damped where the sentence counts little.
        `facet_hit`: per facet id, the sentences where that facet's own cue matched."""
        import numpy as np

        k = self.items.index(item)
        hit = np.zeros(len(damp))
        hit[sorted(cue_hit)] = 1.0
        lin = z[:, k] + self.bias[k] + self.cue[k] * hit
        for fid, w in self.facet_cues.get(item, {}).items():
            sents = sorted((facet_hit or {}).get(fid, ()))
            if sents and w:
                lin[sents] += w
        return list(damp / (1.0 + np.exp(-np.clip(lin, -30.0, 30.0))))


def judge_features(scores: list[float], status: str, facets: list[tuple[bool, float]], checklist: str) -> list[float]:
    """What the item judge reads: the best sentence scores, the cues' own verdict and which built-in checklist
    asks (careful readers read one item by the conventions of its kind of document: the public dataset a paper
    names is its data source, while a dataset's own description that only names the dataset it was drawn from
    says a part of it)."""
    p = sorted(scores, reverse=True) + [0.0, 0.0, 0.0]
    return [p[0], p[1], (p[0] + p[1] + p[2]) / 3, min(5, sum(1 for x in scores if x > 0.5)) / 5] + \
           [float(status == s) for s in CUE_STATUSES] + \
           [sum(f for f, _ in facets) / max(1, len(facets)), max([s for _, s in facets] + [0.0])] + \
           [float(checklist == c) for c in CHECKLISTS]


#: how many numbers the item judge reads
N_JUDGE_FEATURES = len(judge_features([], "missing", [], ""))


def predict(judge: dict[str, Any], x: list[float]) -> str:
    """The judge's status. A judge marked `positive_first` asks first whether partial and reported together are
    likelier than missing, and only then which of the two it is (a careful reader's first question is whether the
    item is there at all); otherwise the class whose linear score is highest (one score: the second class when
    above 0)."""
    classes, coef, intercept = judge["classes"], judge["coef"], judge["intercept"]
    z = [b + sum(w * v for w, v in zip(row, x)) for row, b in zip(coef, intercept)]
    if len(classes) == 1:
        return classes[0]
    if len(z) == 1:
        return classes[1] if z[0] > 0 else classes[0]
    if judge.get("positive_first") and "missing" in classes:
        top = max(z)
        p = {c: math.exp(v - top) for c, v in zip(classes, z)}  # the softmax of the multinomial model, unscaled
        present = [c for c in classes if c != "missing"]
        if sum(p[c] for c in present) > p["missing"]:
            return max(present, key=lambda c: (p[c], -classes.index(c)))
        return "missing"
    return classes[max(range(len(z)), key=lambda k: (z[k], -k))]


def allowed(cue_status: str, judged: str, has_evidence: bool, mention_only: bool = False) -> str:
    """The judge's status where quotes can back it: without a sentence where a cue of the item was found (even one
    that counted too little on its own) an item stays missing; an item the cues found not applicable or a waived
    one keeps its status; an item whose cues found every detail the question asks stays reported rather than
    partial (on the labelled documents such moves were as often wrong as right); an item whose cues found only
    a mention (`mention_only`: no facet of its `needs`, where its concept sets `judge_needs_facet`) is partial at
    most; and so is an item the cues found missing: the judge may raise it one step, not two (cross-validated on
    494 labelled documents, raising missing to reported was right for 21 items, and for 10 the item was not there:
    a false 'reported' hides the gap and drafts no request)."""
    if cue_status not in STATUSES:
        return cue_status
    if judged in ("reported", "partial") and not has_evidence:
        return cue_status
    if cue_status == "reported" and judged == "partial":
        return cue_status
    if judged == "reported" and (mention_only or cue_status == "missing"):
        return "partial"
    return judged


def parse_model(text: str, file: str) -> Models:
    """The shipped models, checked enough that a damaged file is named rather than half used."""
    import json

    try:
        data = json.loads(text)
        buckets = int(data["buckets"])
        sentence, judges = {}, {}
        for item_id, m in data["items"].items():
            s, j = m["sentence"], m["judge"]
            words = {int(k): float(v) for k, v in s["words"].items()}
            if any(not 0 <= k < buckets for k in words):
                raise ValueError(f"{item_id}: a word bucket outside 0..{buckets - 1}")
            classes = [str(c) for c in j["classes"]]
            if not classes or not set(classes) <= set(STATUSES):
                raise ValueError(f"{item_id}: unknown status in {classes}")
            coef = [[float(v) for v in row] for row in j["coef"]]
            intercept = [float(v) for v in j["intercept"]]
            if len(coef) != len(intercept) or any(len(row) != N_JUDGE_FEATURES for row in coef):
                raise ValueError(f"{item_id}: the judge's coefficients do not fit its features")
            facets = {str(f): float(w) for f, w in s.get("facets", {}).items()}
            sentence[str(item_id)] = {"bias": float(s["bias"]), "cue": float(s["cue"]), "words": words,
                                      "facets": facets}
            judges[str(item_id)] = {"classes": classes, "coef": coef, "intercept": intercept,
                                    "positive_first": bool(j.get("positive_first", False))}
    except (ValueError, KeyError, TypeError, AttributeError) as exc:
        raise ChecklistError([f"{file}:1:1: not a judge model studygap can use: {exc}"]) from None
    return Models.build(buckets, sentence, judges)


@lru_cache(maxsize=1)
def shipped() -> Models | None:
    """The shipped models (None when the file is absent: the cues alone decide)."""
    res = resources.files("checker.checklists") / JUDGE_FILE
    if not res.is_file():
        return None
    return parse_model(res.read_text(encoding="utf-8"), f"checklists/{JUDGE_FILE}")


def features_of(scan: Scan, buckets: int) -> list[list[int]]:
    """Every sentence's hashed features, from the lemmas the pipeline gave it."""
    current, lemmas = -1, []
    out = []
    for i, (di, a, b) in enumerate(scan.spans):
        if di != current:  # one parsed block's lemmas at a time
            current, lemmas = di, [(t.lemma_ or t.lower_).lower() for t in scan.docs[di]]
        s = scan.sentences[i]
        out.append(sentence_features(lemmas[a:b], s.role, s.kind, scan.attribution(i).kind, buckets,
                                     s.location.section))
    return out


def needed_facets(checklist: Checklist) -> dict[str, frozenset[str]]:
    """For the items whose concept sets `judge_needs_facet`: the facets of their `needs` sets."""
    return {it.id: frozenset(f for n in it.needs for f in n) for it in checklist.items if it.judge_needs_facet}


def only_mentioned(held: frozenset[str] | None, facets) -> bool:
    """Whether an item held to its needs (`held`, see needed_facets) has none of those facets found: the cues
    found only a mention."""
    return held is not None and not any(f.found for f in facets if f.id in held)


def cue_sentences(scan: Scan, ii: int) -> set[int]:
    """The sentences where any cue of item ii was found."""
    prefix = f"{ii}:"
    return {h.sentence for k, hs in scan.hits.items() if k.startswith(prefix) for h in hs}


class SentenceScores:
    """The sentence scorer's scores of one scanned document, worked out on first use and kept: they order an
    item's quotes (decide.evaluate) and feed its judge (rejudge)."""

    def __init__(self, scan: Scan, models: Models) -> None:
        self.scan, self.models = scan, models
        self._z: Any = None
        self._damp: Any = None
        self._items: dict[int, list[float]] = {}

    def __call__(self, ii: int, item: str, facet_ids: Sequence[str] = ()) -> list[float] | None:
        """How likely each sentence holds what item `item` (index ii of the checklist, with these facets in their
        order) asks; None when the models have no scorer for the item."""
        if item not in self.models.items or not self.scan.sentences:
            return None
        if ii not in self._items:
            if self._z is None:
                self._z, self._damp = self.models.scores(
                    features_of(self.scan, self.models.buckets),
                    [self.scan.weight(i) for i in range(len(self.scan.sentences))])
            self._items[ii] = self.models.item_scores(self._z, self._damp, item, cue_sentences(self.scan, ii),
                                                      facet_sentences(self.scan, ii, facet_ids))
        return self._items[ii]


def facet_sentences(scan: Scan, ii: int, facet_ids: Sequence[str]) -> dict[str, set[int]]:
    """Per facet id of item ii, the sentences where that facet's own cue matched (see quotable_sentences)."""
    quotable = quotable_sentences(scan, ii, facet_ids)
    return {fid: {si for si, (_, facets) in quotable.items() if fid in facets} for fid in facet_ids}


def sentence_scores(scan: Scan, models: Models | None = None) -> SentenceScores | None:
    """The scorer of a document's sentences by the shipped models (None without them)."""
    models = models if models is not None else shipped()
    return SentenceScores(scan, models) if models is not None else None


def rejudge(scan: Scan, results: tuple[ItemResult, ...], models: Models | None = None,
            needed: dict[str, frozenset[str]] | None = None,
            scores: SentenceScores | None = None, checklist: str = "") -> tuple[ItemResult, ...]:
    """The results with the judge's status where it has a model for the item and quotes can back its verdict.
    `needed` (see needed_facets): the judge calls such an item reported only where the cues found one of its
    facets, else partial at most. `scores`: the document's sentence scores, if already at hand. `checklist`: the
    built-in checklist's id (see CHECKLISTS)."""
    models = models if models is not None else (scores.models if scores is not None else shipped())
    if models is None or not scan.sentences:
        return results
    if not any(r.id in models.judges and r.status in STATUSES for r in results):
        return results
    if scores is None or scores.models is not models:
        scores = SentenceScores(scan, models)
    out = []
    for ii, r in enumerate(results):
        if r.id not in models.judges or r.status not in STATUSES:
            out.append(r)
            continue
        likely = scores(ii, r.id, [f.id for f in r.facets])
        x = judge_features(likely, r.status, [(f.found, f.score) for f in r.facets], checklist)
        quotable = quotable_sentences(scan, ii, [f.id for f in r.facets])
        status = allowed(r.status, predict(models.judges[r.id], x), bool(r.evidence) or bool(quotable),
                         only_mentioned((needed or {}).get(r.id), r.facets))
        if status == r.status:
            out.append(r)
            continue
        if status in ("reported", "partial") and not r.evidence:
            r = dataclasses.replace(r, evidence=weak_evidence(scan, quotable, likely))
        out.append(moved(r, status))
    return tuple(out)


def quotable_sentences(scan: Scan, ii: int,
                       facet_ids: Sequence[str]) -> dict[int, tuple[list[tuple[int, int]], set[str]]]:
    """The sentences where a facet's own cue of item ii was found (not only a `near`, `unless` or `applies_when`
    cue), with the matched spans and the facets."""
    from ..matching.matcher import CUE, key

    out: dict[int, tuple[list[tuple[int, int]], set[str]]] = {}
    for fi, fid in enumerate(facet_ids):
        for h in scan.hits.get(key(ii, fi, CUE), ()):
            spans, facets = out.setdefault(h.sentence, ([], set()))
            spans.append((h.start, h.end))
            facets.add(fid)
    return out


def weak_evidence(scan: Scan, quotable: dict[int, tuple[list[tuple[int, int]], set[str]]],
                  scores: list[float]) -> tuple:
    """The quotes of an item the judge found where the cues' hits counted too little on their own: the sentences
    with a facet's cue (see quotable_sentences), those the sentence scorer rates highest first."""
    from .decide import MAX_EVIDENCE, first_quote, merge_spans, trim_passage
    from .report import Evidence

    out: list = []
    quoted: set[str] = set()
    for si in sorted(quotable, key=lambda i: (-scores[i], i)):
        if len(out) >= MAX_EVIDENCE:
            break
        spans, facets = quotable[si]
        sent = scan.sentences[si]
        text, marked = trim_passage(sent.text, merge_spans(spans))
        if not first_quote(text, quoted):
            continue
        out.append(Evidence(text, sent.location, round(scores[si], 3), marked, tuple(sorted(facets)),
                            scan.attribution(si).kind))
    return tuple(out)


def moved(r: ItemResult, status: str) -> ItemResult:
    """An item whose verdict the judge moved, with a reason that says so and what the cues found."""
    found = [f.title for f in r.facets if f.found]
    cues = "the cues found " + "; ".join(found) if found else "the cues found nothing that counts"
    if status == "reported":
        reason = (f"judged reported: {cues}, and careful readers count passages like these as reporting it"
                  f" (the cues alone said {r.status})")
        return dataclasses.replace(r, status=status, reason=reason, lacking=())
    if status == "partial":  # only ever from missing: `allowed` keeps a reported item reported
        reason = ("judged partial: the cues' passages counted too little on their own (the cues alone said "
                  "missing), but careful readers count passages like these as a partial report")
        return dataclasses.replace(r, status=status, reason=reason, lacking=())
    reason = (f"judged missing: {cues}, but careful readers seldom count passages like these as reporting it;"
              f" read them to be sure (the cues alone said {r.status})")
    return dataclasses.replace(r, status=status, reason=reason, lacking=())
