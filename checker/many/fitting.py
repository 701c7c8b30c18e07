"""Fit each concept's evidence threshold on labelled documents, and measure the fit by leaving one document out.

An item's status depends on how strong the best evidence for each facet is (section weight x whose statement it
is x facet weight) against a threshold. The threshold is the one number per concept fitted here: every labelled
document is checked once, each item is reduced to its facet scores, and the status at any threshold is then
worked out without checking again. Cross-validation fits on all documents but one and judges the one left out,
so that its figures say how the fitted values do on a document they were not fitted on.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Iterable, Sequence

from ..matching.matcher import FOUND_AT
from .evaluation import three_class

#: thresholds tried: between the weights a sentence can carry (1.0 methods, 0.9 results, 0.6 framing sections with
#: "we", 0.5 a general statement in methods, 0.4 a plan, 0.36 a heading, 0.3 background in an introduction)
GRID = (0.35, 0.45, 0.5, 0.55, 0.65, 0.75, 0.85, 0.95)


@dataclass(frozen=True)
class ItemScores:
    """One item of one labelled document, reduced to what its status depends on."""

    document: str
    item_id: str
    concept: str
    human: str
    facet_scores: tuple[tuple[str, float], ...]
    needs: tuple[tuple[str, ...], ...]
    #: the item has an `applies_when` and none of its cues occurs: nothing found makes it not applicable
    inapplicable_when_empty: bool
    #: the checklist the item belongs to (needs are chosen per checklist item)
    checklist: str = ""
    #: per facet, the best score among sentences that give the details here (see decide.FacetHits.complete);
    #: empty: the same as facet_scores
    complete_scores: tuple[tuple[str, float], ...] = ()
    #: facets that complete the item only when none of their `only_without` facets is found (decide.decide)
    only_without: tuple[tuple[str, tuple[str, ...]], ...] = ()
    #: the item's `applies_when` is strict: inapplicable whatever is found (decide.decide)
    strict: bool = False

    def status_at(self, threshold: float, needs: tuple[tuple[str, ...], ...] | None = None) -> str:
        """The status the verdicts give at this threshold (and with these `needs` instead of the item's)."""
        from ..verdicts.decide import decide

        return decide({f for f, s in self.facet_scores if s >= threshold},
                      self.needs if needs is None else needs, self.inapplicable_when_empty,
                      {f for f, s in self.complete_scores or self.facet_scores if s >= threshold},
                      self.only_without, self.strict)


def scores_of(document: str, checklist: str, labels: dict[str, str], limits=None) -> list[ItemScores]:
    """Check one document and reduce each labelled item to its facet scores."""
    from ..engine import compiled_for
    from ..core.limits import DEFAULT_LIMITS
    from ..matching.nlp import parse_blocks
    from ..reading import read_document
    from ..verdicts.decide import applies, facet_hits, only_without_of, strict_applies

    limits = limits or DEFAULT_LIMITS
    doc = read_document(document, limits)
    docs = list(parse_blocks(b.text for b in doc.blocks))
    compiled = compiled_for(checklist)
    scan = compiled.scan(doc, regex_seconds=limits.regex_seconds, docs=docs)
    out = []
    for ii, item in enumerate(compiled.checklist.items):
        if item.id not in labels:
            continue
        per = [facet_hits(scan, ii, fi, f) for fi, f in enumerate(item.facets)]
        out.append(ItemScores(
            document=document, item_id=item.id, concept=item.concept or item.id, checklist=compiled.checklist.id,
            human=labels[item.id],
            facet_scores=tuple((fh.facet.id, round(fh.score, 6)) for fh in per), needs=item.needs,
            inapplicable_when_empty=not applies(scan, ii, item),
            complete_scores=tuple((fh.facet.id, round(fh.complete_score, 6)) for fh in per),
            only_without=only_without_of(item), strict=strict_applies(item),
        ))
    return out


def _gain(rows: Sequence[ItemScores], t: float, needs: tuple[tuple[str, ...], ...] | None = None) -> float:
    """Agreement at threshold t: a point for the same reported/partial/missing, half a point for the same
    presence (reported or partial, or not), a quarter for the same not-applicable."""
    g = 0.0
    for r in rows:
        tool = r.status_at(t, needs)
        g += three_class(tool) == three_class(r.human)
        g += 0.5 * ((three_class(tool) != "missing") == (three_class(r.human) != "missing"))
        g += 0.25 * ((tool == "not-applicable") == (r.human == "not-applicable"))
    return g


#: a fitted threshold replaces the default only when it agrees with the labels on this many more points (about
#: two documents' worth): with a few dozen documents, smaller gains are as likely noise as signal
MARGIN = 2.0


def fit(rows: Iterable[ItemScores], grid: Sequence[float] = GRID, margin: float = MARGIN) -> dict[str, float]:
    """Per concept the threshold with the most agreement, kept only where it beats the default by `margin`;
    on a tie the one nearest the default."""
    by_concept: dict[str, list[ItemScores]] = {}
    for r in rows:
        by_concept.setdefault(r.concept, []).append(r)
    out = {}
    for c, rs in sorted(by_concept.items()):
        best = max(grid, key=lambda t: (_gain(rs, t), -abs(t - FOUND_AT)))
        out[c] = best if _gain(rs, best) >= _gain(rs, FOUND_AT) + margin else FOUND_AT
    return out


def cross_validate(rows: Sequence[ItemScores], grid: Sequence[float] = GRID) -> list[tuple[ItemScores, str]]:
    """Each row with the status given by thresholds fitted on every other document (leave one document out)."""
    documents = sorted({r.document for r in rows})
    out: list[tuple[ItemScores, str]] = []
    for d in documents:
        fitted = fit((r for r in rows if r.document != d), grid)
        out += [(r, r.status_at(fitted.get(r.concept, FOUND_AT))) for r in rows if r.document == d]
    return out


# --- which facets make an item reported -------------------------------------------------------------------------
#
# A checklist's `needs` say which facets together make an item reported rather than partial. Written by hand they
# are a guess at what readers call "specific enough"; here they are checked against the labels. Starting from the
# written needs, one alternative is added ([f] or [f, g]) or removed at a time while that gains at least `margin`
# points of agreement; the figures that judge the procedure are again from leaving one document out. The result is
# printed by `benchmarks/fit.py --needs` and copied into the checklists by hand, where it stays readable.

Needs = tuple[tuple[str, ...], ...]


def _neighbours(needs: Needs, facets: Sequence[str]) -> list[Needs]:
    have = {frozenset(n) for n in needs}
    out: list[Needs] = []
    singles = [(f,) for f in facets]
    pairs = [(f, g) for i, f in enumerate(facets) for g in facets[i + 1:]]
    for alt in singles + pairs:
        if frozenset(alt) not in have:
            out.append(needs + (alt,))
    if len(needs) > 1:
        out += [needs[:i] + needs[i + 1:] for i in range(len(needs))]
    return out


def fit_needs(rows: Iterable[ItemScores], margin: float = MARGIN, steps: int = 4) -> dict[tuple[str, str], Needs]:
    """Per checklist item, the needs with the most agreement reachable from the written ones by small steps that
    each gain at least `margin`; items whose written needs are not beaten keep them."""
    from ..verdicts.fitted import threshold

    by_item: dict[tuple[str, str], list[ItemScores]] = {}
    for r in rows:
        by_item.setdefault((r.checklist, r.item_id), []).append(r)
    out: dict[tuple[str, str], Needs] = {}
    for k, rs in sorted(by_item.items()):
        t = threshold(rs[0].concept)
        facets = [f for f, _ in rs[0].facet_scores]
        needs = rs[0].needs
        score = _gain(rs, t, needs)
        for _ in range(steps):
            cands = [(_gain(rs, t, n), -len(n), n) for n in _neighbours(needs, facets)]
            if not cands:
                break
            g, _, best = max(cands, key=lambda c: (c[0], c[1]))
            if g < score + margin:
                break
            needs, score = best, g
        out[k] = needs
    return out


def cross_validate_needs(rows: Sequence[ItemScores], margin: float = MARGIN) -> list[tuple[ItemScores, str]]:
    """Each row with the status given by needs fitted on every other document (leave one document out)."""
    from ..verdicts.fitted import threshold

    documents = sorted({r.document for r in rows})
    out: list[tuple[ItemScores, str]] = []
    for d in documents:
        fitted = fit_needs((r for r in rows if r.document != d), margin)
        out += [(r, r.status_at(threshold(r.concept), fitted.get((r.checklist, r.item_id), r.needs)))
                for r in rows if r.document == d]
    return out
