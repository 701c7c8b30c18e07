"""Token patterns matched by studygap's own lookup give exactly what spaCy's Matcher gives (the reference)."""

from __future__ import annotations

from pathlib import Path

import pytest

from checker.matching.checklist import builtin_ids, load_checklist
from checker.matching.matcher import TokenPatterns
from checker.matching.nlp import pipeline

ROOT = Path(__file__).resolve().parent.parent

CRAFTED = {
    "repeats": [[{"LOWER": "a"}], [{"LOWER": {"IN": ["a", "b"]}}], [{"LOWER": "a"}, {"LOWER": "a"}]],
    "never": [[{"LOWER": "NaN"}]],  # LOWER is compared as written: an upper-case value never matches
    "two-tests": [[{"LOWER": "p", "ORTH": "p"}, {"ORTH": "-"}, {"LEMMA": {"IN": ["value"]}}]],
    "operator": [[{"LOWER": "a", "OP": "?"}, {"ORTH": "b"}], [{"LIKE_NUM": True}, {"LOWER": "cases"}]],
}
TEXTS = ["a a b A", "Participants can submit. The participant's code", "containing 12 big images and 3 cases",
         "p-values, P-value, p - value, NaN nan NaNs mAP", "", "p", "Three readers intended for screening."]


def _builtin_patterns() -> dict[str, list]:
    out: dict[str, list] = {}
    for cid in builtin_ids():
        cl = load_checklist(cid)
        for ii, item in enumerate(cl.items):
            for fi, facet in enumerate(item.facets):
                for part, cues in (("cue", facet.cues), ("near", facet.near.cues if facet.near else None),
                                   ("unless", facet.unless)):
                    if cues and cues.patterns:
                        out[f"{cid}:{ii}:{fi}:{part}"] = [list(p) for p in cues.patterns]
        if cl.choose_when.patterns:
            out[f"{cid}:choose"] = [list(p) for p in cl.choose_when.patterns]
    return out


def test_the_same_matches_as_spacys_matcher():
    from spacy.matcher import Matcher

    nlp = pipeline()
    patterns = _builtin_patterns()
    assert len(patterns) >= 5
    patterns.update(CRAFTED)
    reference, ours = Matcher(nlp.vocab), TokenPatterns(nlp.vocab)
    for key, pats in patterns.items():
        reference.add(key, pats)
        ours.add(key, pats)
    assert len(ours) == len(reference)
    texts = list(TEXTS)
    for path in sorted((ROOT / "fixtures" / "demo").glob("*.md")):
        texts += path.read_text(encoding="utf-8").split("\n\n")
    # real text by other people: the dataset descriptions scikit-learn ships
    descr = Path(pytest.importorskip("sklearn").__file__).parent / "datasets" / "descr"
    texts += [p.read_text(encoding="utf-8") for p in sorted(descr.glob("*.rst"))]
    matched = 0
    for doc in nlp.pipe(texts):
        expected = sorted(reference(doc))
        assert sorted(ours(doc)) == expected, doc.text[:80]
        matched += len(expected)
    assert matched > 200


@pytest.mark.parametrize("key", sorted(CRAFTED) + ["no-plain-token"])
def test_each_set_alone_the_same_as_spacys_matcher(key):
    """A matcher that hands blocks to spaCy's Matcher only when they hold a word its patterns need gives what
    spaCy's Matcher gives on every block, with and without that word; and with a pattern that needs no
    particular word (LIKE_NUM, IS_ALPHA) every block still goes to it."""
    from spacy.matcher import Matcher

    nlp = pipeline()
    pats = CRAFTED.get(key) or [[{"LIKE_NUM": True}, {"IS_ALPHA": True, "OP": "+"}]]
    reference, ours = Matcher(nlp.vocab), TokenPatterns(nlp.vocab)
    reference.add(key, pats)
    ours.add(key, pats)
    found = 0
    for doc in nlp.pipe(TEXTS + ["b", "12 cases", "nothing to see", "3 big images"]):
        expected = sorted(reference(doc))
        assert sorted(ours(doc)) == expected, doc.text[:80]
        found += len(expected)
    assert found > 0 or key == "never"
