"""Sentence rules for scientific text, and lemmas, checked against pysbd on real texts."""

from __future__ import annotations

import importlib.util
import re
from pathlib import Path

import pytest

from checker.matching.nlp import split_sentences


@pytest.mark.parametrize(
    "text, expected",
    [
        ("Results are shown in Fig. 2 and Eq. 3. They hold.", ["Results are shown in Fig. 2 and Eq. 3.", "They hold."]),
        ("As Smith et al. (2020) showed, it works. Next.", ["As Smith et al. (2020) showed, it works.", "Next."]),
        ("We used approx. 300 images, e.g. CT and MR, i.e. two modalities. Done.",
         ["We used approx. 300 images, e.g. CT and MR, i.e. two modalities.", "Done."]),
        ("Dice was 0.91 ± 0.02 for method A vs. 0.88 for method B. Fine.",
         ["Dice was 0.91 ± 0.02 for method A vs. 0.88 for method B.", "Fine."]),
        ("Three raters (n = 3) labelled each scan. See No. 4.", ["Three raters (n = 3) labelled each scan.", "See No. 4."]),
        ("This was shown before.[12] The next sentence starts here.",
         ["This was shown before.[12]", "The next sentence starts here."]),
        ("Reviewed by J. Doe. It was fine.", ["Reviewed by J. Doe.", "It was fine."]),
        ("Is it robust? Yes! It is.", ["Is it robust?", "Yes!", "It is."]),
    ],
)
def test_scientific_sentence_rules(text, expected):
    assert split_sentences(text) == expected


def test_lemmas_are_lower_case_lookups(nlp):
    doc = nlp("Annotators LABELLED the Images")
    assert [t.lemma_ for t in doc] == ["annotator", "label", "the", "image"]


def _package_dir(name: str) -> Path | None:
    spec = importlib.util.find_spec(name)
    if spec is None or not spec.submodule_search_locations:
        return None
    return Path(list(spec.submodule_search_locations)[0])


def _prose_paragraphs() -> list[str]:
    """Prose paragraphs of the dataset descriptions that scikit-learn and nilearn ship (real text)."""
    roots = []
    for pkg, sub in (("sklearn", "datasets/descr"), ("nilearn", "datasets/description")):
        d = _package_dir(pkg)
        if d is not None and (d / sub).is_dir():
            roots.append(d / sub)
    out = []
    for root in roots:
        for f in sorted(root.glob("*.rst")):
            for para in re.split(r"\n\s*\n", f.read_text(encoding="utf-8")):
                lines = [ln.strip() for ln in para.strip().splitlines()]
                if not lines or any(re.match(r"^([=\-~*|:.+>]|\d+\.\s)", ln) for ln in lines):
                    continue  # tables, lists, directives, code: not prose
                text = " ".join(lines)
                if len(text.split()) >= 12:
                    out.append(text)
    return out


def _ends(sentences: list[str], text: str) -> set[int]:
    out, pos = set(), 0
    for s in sentences:
        s = s.strip()
        i = text.find(s, pos)
        if i >= 0:
            pos = i + len(s)
            out.add(pos)
    out.discard(len(text))
    return out


def _explained(text: str, end: int, ours: bool) -> bool:
    """Whether a disagreement belongs to a class that one of our rules decides on purpose."""
    before, after = text[:end], text[end:]
    if ours:
        # we break after a full stop (possibly closing a bracket or an rst citation) before a capital
        return bool(re.search(r"[.!?][)\]_]*$", before)) and bool(re.match(r"\s+[A-Z\"(]", after))
    # pysbd breaks where we do not: no white space after the stop, or the next word is lower case
    return bool(re.match(r"\S", after)) or bool(re.match(r"\s+[a-z]", after))


def test_sentence_boundaries_agree_with_pysbd_on_real_dataset_descriptions():
    # External check: pysbd (a rule-based sentence splitter from PyPI) on the dataset description files that
    # scikit-learn (sklearn/datasets/descr/*.rst) and nilearn (nilearn/datasets/description/*.rst) ship.
    pysbd = pytest.importorskip("pysbd")
    paragraphs = _prose_paragraphs()
    if len(paragraphs) < 20:
        pytest.skip("scikit-learn or nilearn dataset descriptions are not installed")
    seg = pysbd.Segmenter(language="en", clean=False)
    agree = total = 0
    unexplained = []
    for text in paragraphs:
        a = _ends(split_sentences(text), text)
        b = _ends(seg.segment(text), text)
        agree += len(a & b)
        total += len(a | b)
        unexplained += [text[max(0, e - 30):e + 20] for e in a - b if not _explained(text, e, True)]
        unexplained += [text[max(0, e - 30):e + 20] for e in b - a if not _explained(text, e, False)]
    assert total > 50
    assert agree / total >= 0.95, f"agreement {agree / total:.3f}"
    assert not unexplained, unexplained
