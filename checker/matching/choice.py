"""`--checklist auto`: which built-in checklist suits a document, a paper, a benchmark design or a dataset
description.

What a document is shows in its words and in how it is built. Each built-in checklist's `choose_when` cues (its
YAML) are counted in the document, as are the kinds of its headings (abstract, methods, references...) and the
words it uses. A small model fitted on labelled documents (`python benchmarks/choice.py --write`, shipped as data
in checklists/choice.json) weighs these into one probability per checklist; no word of any document is kept in
it, only hashes of words. Without the model file the cue counts alone decide, as they did before it.

The reason given to users names the cue words found and, where the model is unsure, the checklist that came
close.
"""

from __future__ import annotations

import math
import zlib
from functools import lru_cache
from importlib import resources

from ..core.errors import ChecklistError
from ..reading.document import Document
from .checklist import builtin_ids, load_checklist

CHOICE_FILE = "choice.json"
#: each distinct cue counts up to this many times (a page that repeats "leaderboard" is not more of a benchmark)
CUE_CAP = 3
#: below this probability the reason says which other checklist came close
SURE = 0.7
#: the cue-count fallback: a paper's build (see paper_skeleton) weighs as this many cue words for the
#: validation-study checklist, since benchmark pages and dataset cards seldom have all three parts
PAPER_SKELETON_WEIGHT = 8
DEFAULT = "validation-study"


@lru_cache(maxsize=8)
def _choice_matcher(cid: str):
    """A matcher of one built-in checklist's `choose_when` cues (its other cues are not needed to choose)."""
    from .matcher import TokenPatterns, add_phrases
    from .nlp import pipeline

    nlp = pipeline()  # imports spaCy (see checker.matching.spacyimport) before the matchers below
    from spacy.matcher import PhraseMatcher

    cues = load_checklist(cid).choose_when
    if not cues.phrases and not cues.patterns:
        return None
    matchers = []
    if cues.phrases:
        m = PhraseMatcher(nlp.vocab, attr="LEMMA")
        add_phrases(nlp, {"choose": [p.lstrip("=") for p in cues.phrases]}, m)
        matchers.append(m)
    if cues.patterns:
        t = TokenPatterns(nlp.vocab)
        t.add("choose", [list(p) for p in cues.patterns])
        matchers.append(t)
    return lambda doc: [hit for m in matchers for hit in m(doc)]


def paper_skeleton(document: Document | None) -> bool:
    """Whether the document is built like a paper: abstract or introduction, references or related work, and
    methods, results or discussion."""
    if document is None:
        return False
    roles = {b.role for b in document.blocks if b.kind == "heading"}
    return bool(roles & {"abstract", "introduction"} and roles & {"references", "related-work"}
                and roles & {"methods", "results", "discussion"})


def cue_counts(docs: list) -> dict[str, dict[str, int]]:
    """Per built-in checklist with `choose_when` cues: each cue word found (as written, lower case) and how often."""
    out = {}
    for cid in builtin_ids():
        matcher = _choice_matcher(cid)
        if matcher is None:
            continue
        found: dict[str, int] = {}
        for doc in docs:
            for _mid, s, e in matcher(doc):
                word = doc[s:e].text.lower()
                found[word] = found.get(word, 0) + 1
        out[cid] = found
    return out


def choice_features(docs: list, document: Document | None, counts: dict[str, dict[str, int]]) -> dict[str, float]:
    """What the choice model reads, by name: per checklist, its cue count (the log), its share of all counts (a
    paper's build counted as in choose_by_cues) and how many distinct cues; the checklist the counts alone would
    choose; each cue found; whether the document is built like a paper; the kinds of its headings; and which words
    (lemmas, not stop words) it uses."""
    f: dict[str, float] = {}
    skeleton = paper_skeleton(document)
    built = cue_scores(counts, skeleton)
    total = sum(built.values())
    f["@cues=" + choose_by_cues(counts, skeleton)[0]] = 1.0
    for cid, found in counts.items():
        f["@score=" + cid] = math.log1p(sum(min(n, CUE_CAP) for n in found.values()))
        if total:
            f["@share=" + cid] = built[cid] / total
        f["@distinct=" + cid] = math.log1p(len(found))
        for word, n in found.items():
            f[f"@cue={cid}:{word}"] = min(n, CUE_CAP) / CUE_CAP
    f["@skeleton"] = float(skeleton)
    if document is not None:
        for b in document.blocks:
            if b.kind == "heading":
                f["@role=" + b.role] = 1.0
    for doc in docs:
        for t in doc:
            if t.is_alpha and not t.is_stop:
                f[(t.lemma_ or t.lower_).lower()] = 1.0
    return f


def hashed(features: dict[str, float], buckets: int) -> dict[int, float]:
    """The features as the model keeps them: each name's CRC-32 modulo the number of buckets."""
    out: dict[int, float] = {}
    for name, v in features.items():
        b = zlib.crc32(name.encode()) % buckets
        out[b] = out.get(b, 0.0) + v
    return out


class ChoiceModel:
    """A multinomial logistic regression over hashed features: a weight row per kept bucket, one column per
    checklist."""

    def __init__(self, buckets: int, classes: list[str], intercept: list[float], weights: dict[int, list[float]]):
        self.buckets, self.classes, self.intercept, self.weights = buckets, classes, intercept, weights

    def probabilities(self, features: dict[str, float]) -> dict[str, float]:
        z = list(self.intercept)
        for b, v in hashed(features, self.buckets).items():
            row = self.weights.get(b)
            if row is not None:
                z = [a + w * v for a, w in zip(z, row)]
        top = max(z)
        e = [math.exp(a - top) for a in z]
        total = sum(e)
        return {c: x / total for c, x in zip(self.classes, e)}


def parse_choice_model(text: str, file: str) -> ChoiceModel:
    """A choice model from its JSON text; a clear error naming the file where it is not one."""
    import json

    try:
        data = json.loads(text)
        buckets = int(data["buckets"])
        classes = [str(c) for c in data["classes"]]
        intercept = [float(x) for x in data["intercept"]]
        weights = {int(b): [float(x) for x in row] for b, row in data["weights"].items()}
        if buckets <= 0 or len(intercept) != len(classes) or any(len(r) != len(classes) for r in weights.values()):
            raise ValueError("the classes, intercepts and weight rows do not line up")
        unknown = set(classes) - set(builtin_ids())
        if unknown:
            raise ValueError(f"unknown checklist {sorted(unknown)[0]!r}")
    except (ValueError, KeyError, TypeError, AttributeError) as exc:
        raise ChecklistError([f"{file}:1:1: not a checklist-choice model studygap can use: {exc}"]) from None
    return ChoiceModel(buckets, classes, intercept, weights)


@lru_cache(maxsize=1)
def shipped_choice() -> ChoiceModel | None:
    """The shipped model (None when the file is absent: the cue counts alone decide)."""
    res = resources.files("checker.checklists") / CHOICE_FILE
    if not res.is_file():
        return None
    return parse_choice_model(res.read_text(encoding="utf-8"), f"checklists/{CHOICE_FILE}")


def _mentions(found: dict[str, int]) -> str:
    top = sorted(found, key=lambda w: (-found[w], w))[:4]
    return "mentions " + ", ".join(top) if top else ""


def cue_scores(counts: dict[str, dict[str, int]], skeleton: bool) -> dict[str, int]:
    """Per checklist, its cues counted (each distinct cue up to CUE_CAP times); a paper's build adds
    PAPER_SKELETON_WEIGHT to the validation-study checklist."""
    return {cid: sum(min(n, CUE_CAP) for n in found.values()) + (PAPER_SKELETON_WEIGHT if skeleton and cid == DEFAULT
                                                                 else 0)
            for cid, found in counts.items()}


def choose_by_cues(counts: dict[str, dict[str, int]], skeleton: bool) -> tuple[str, str]:
    """The checklist whose cues the document uses most (see cue_scores), and why."""
    built = cue_scores(counts, skeleton)
    scores = [(built[cid], len(found), cid) for cid, found in counts.items()]
    if not scores:
        return DEFAULT, f"{DEFAULT}: the default checklist"
    scores.sort(key=lambda t: (-t[0], -t[1], t[2]))
    score, _, cid = scores[0]
    if score == 0:
        return DEFAULT, f"{DEFAULT}: nothing pointed to another kind of document, so the default"
    return cid, f"{cid}: {_why(cid, counts, skeleton)}"


def _why(cid: str, counts: dict[str, dict[str, int]], skeleton: bool) -> str:
    why = _mentions(counts.get(cid, {}))
    if skeleton and cid == DEFAULT:
        why = "built like a paper (introduction, methods or results, references)" + ("; " + why if why else "")
    return why or "how its words and headings compare with labelled documents of each kind"


def choose_checklist(docs: list, nlp=None, document: Document | None = None,  # noqa: ARG001
                     model: ChoiceModel | None = None) -> tuple[str, str]:
    """The built-in checklist that suits the document, and a sentence saying why.

    The shipped model (or `model`) weighs the cue counts, the document's build and its words; without one the
    cue counts decide (see choose_by_cues)."""
    counts = cue_counts(docs)
    skeleton = paper_skeleton(document)
    model = model if model is not None else shipped_choice()
    if model is None:
        return choose_by_cues(counts, skeleton)
    probs = model.probabilities(choice_features(docs, document, counts))
    ranked = sorted(probs, key=lambda c: (-probs[c], c))
    cid = ranked[0]
    why = f"{cid}: {_why(cid, counts, skeleton)}"
    if probs[cid] < SURE and len(ranked) > 1:
        why += f" (not sure: {probs[cid]:.0%} against {probs[ranked[1]]:.0%} for {ranked[1]})"
    return cid, why
