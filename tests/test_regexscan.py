"""Regex cues searched through the joined text give exactly the matches of searching each sentence alone."""

from __future__ import annotations

from pathlib import Path

import pytest
import regex
from hypothesis import given, settings
from hypothesis import strategies as st

from checker.matching.checklist import builtin_ids, compile_regex
from checker.matching.regexscan import Sentences, joinable, required_word_sets, required_words

ROOT = Path(__file__).resolve().parent.parent


def naive(rx, texts):
    return [(si, m.span(), m.groups()) for si, t in enumerate(texts) for m in rx.finditer(t) if m.end() > m.start()]


def macro_needs():
    from checker.matching.facts import MACRO_NEEDS

    return tuple(sorted(MACRO_NEEDS.items()))


def fast(rx, src, texts):
    sets = required_word_sets(src, macro_needs())
    return [(si, m.span(), m.groups())
            for si, m in Sentences(texts).search(rx, required_words(src), 5.0, also=sets[1:])]


def all_sources() -> list[str]:
    from checker.matching.checklist import load_checklist
    from checker.rules import load_rules

    out = []
    for cid in builtin_ids():
        for item in load_checklist(cid).items:
            for facet in item.facets:
                out += list(facet.cues.regex)
                if facet.near is not None:
                    out += list(facet.near.cues.regex)
                if facet.unless is not None:
                    out += list(facet.unless.regex)
    for rule in load_rules().rules:
        t = rule.trigger
        if t is not None:
            for cues in [t.cues, t.near.cues if t.near else None, t.unless] + [c.cues for c in t.with_ + t.without]:
                if cues:
                    out += list(cues.regex)
    return sorted(set(out))


def corpus_sentences() -> list[str]:
    """Sentences of the fictional demo documents and of scikit-learn's shipped dataset descriptions."""
    from checker.matching.nlp import split_sentences

    texts = [p.read_text(encoding="utf-8") for p in sorted((ROOT / "fixtures" / "demo").glob("*.md"))]
    descr = Path(pytest.importorskip("sklearn").__file__).parent / "datasets" / "descr"
    texts += [p.read_text(encoding="utf-8") for p in sorted(descr.glob("*.rst"))]
    out = []
    for t in texts:
        for para in t.split("\n\n"):
            out += split_sentences(" ".join(para.split()))
    return out


# edges a joined search could get wrong: numbers, symbols and words at a sentence's very start and end
EDGES = ["12", "3 hospitals", "Dice 0.91", "1.5 T", "0.5 mm slices.", "± 2", "τ = 2 mm", "| recall |", "recall",
         "mean", "by two of the authors", "", "  ", "ſtudy of 3 centres", "K-fold", "p < 0.05", "HD95", "5-fold"]


def test_every_builtin_regex_finds_what_a_sentence_by_sentence_search_finds():
    # scikit-learn's bundled descriptions (real text by other people) plus the demo documents
    texts = corpus_sentences() + EDGES
    sources = all_sources()
    assert len(sources) > 150  # every regex of the checklists, the concept library and the rules
    for src in sources:
        rx = compile_regex(src)
        assert fast(rx, src, texts) == naive(rx, texts), src


def test_most_builtin_regexes_take_a_fast_path():
    sources = all_sources()
    fast_ones = [s for s in sources if required_words(s) or joinable(compile_regex(s).pattern)]
    assert len(fast_ones) >= 0.9 * len(sources)


@pytest.mark.parametrize("src, words", [
    (r"\b{NUMBER}\s+(?:hospitals|centres)\b", ("centres", "hospitals")),
    (r"bootstrap(?:ped)?\s+{NUMBER}", ("bootstrap",)),
    (r"(?:κ|kappa)\s*=", ("kappa", "κ")),
    (r"(?:a|bootstrap)", ()),  # one branch has no word worth a filter
    (r"(?:bootstrap)?\s+\d+", ()),  # optional words are not required
    (r"(?:x|×)", ()),
])
def test_required_words(src, words):
    assert required_words(src) == words


def test_a_sentence_must_hold_a_word_of_every_required_set():
    src = r"\b{NUMBER}\s+(?:annotators|readers)\s+per\s+(?:case|image)\b"
    assert len(required_word_sets(src)) == 3  # without the macros' needs
    first, second, third, number = required_word_sets(src, macro_needs())
    assert (first, second, third) == (("annotators", "readers"), ("case", "image"), ("per",))
    assert "\\d" in number and "three" in number  # {NUMBER}: a digit or a number word
    texts = ["Two readers per case.", "Two readers saw each image.", "One image per case.", "3 annotators per image",
             "Some readers per case."]
    rx = compile_regex(src)
    assert fast(rx, src, texts) == naive(rx, texts) == [(0, (0, 20), ()), (3, (0, 22), ())]


@pytest.mark.parametrize("src, ok", [
    (r"\b\d+\s+sites\b", True),
    (r"(?<![\d.,])\d+(?![.,]?\d)", True),
    (r"^\d+", False),
    (r"\d+$", False),
    (r"\d+(?!\s)", False),
    (r"\d+(?![\s\S])", False),
    (r"a\s*+(?!b)", False),
    (r"(?>a\s*)b", False),
    (r"(?<![\x00-\x1f])a", False),
    (r"(?<![ \t\u00A0])a", True),
    (r"a(?![^b])", False),
])
def test_joinable(src, ok):
    assert joinable(src) is ok


ATOMS = [r"a", r"b", r"ab", r"\d", r"\w", r"\s", r".", r"[^a]", r"[a\n]", r"\b", r"^", r"$", r"(?!\s)", r"(?<!\s)",
         r"(?!a)", r"(?<=a)", r"(?=\s|$)", r"\s*+", r"(?>a+)", r"x", r"(?:a|bb)", r"\A", r"\Z"]
QUANT = ["", "?", "*", "+", "{0,2}"]


@settings(max_examples=300, deadline=None)
@given(
    parts=st.lists(st.tuples(st.sampled_from(ATOMS), st.sampled_from(QUANT)), min_size=1, max_size=5),
    texts=st.lists(st.text(alphabet="ab x1\n.", max_size=8), min_size=1, max_size=6),
)
def test_generated_regexes_agree_with_the_sentence_by_sentence_search(parts, texts):
    src = "".join(a + (q if a not in ("^", "$", r"\b", r"\A", r"\Z") and not a.startswith("(?") else "")
                  for a, q in parts)
    try:
        rx = regex.compile(src, regex.IGNORECASE | regex.V0)
    except regex.error:
        return
    assert fast(rx, src, texts) == naive(rx, texts)


@settings(max_examples=300, deadline=None)
@given(st.lists(st.sampled_from(["3", "٣", "12.5", ".5", "one", "Twenty-five", "a single", "a dozen", "ſingle",
                                 "hundred", "%", "per cent", "PERCENT", "pct", "of", "cases", " ", "-", "k", "x"]),
                max_size=8))
def test_every_macro_match_holds_a_string_of_each_of_its_sets(parts):
    """facts.MACRO_NEEDS lets sentences without a digit or a number word be passed over: no match may lack one
    (the regex module's \\d also matches other scripts' digits, hence the DIGIT stand-in)."""
    from checker.matching.facts import DIGIT, MACRO_NEEDS, MACROS

    text = " ".join(parts)
    for name, sets in MACRO_NEEDS.items():
        for m in regex.finditer(MACROS[name], text, regex.IGNORECASE | regex.V0):
            if m.end() == m.start():
                continue
            found = m.group().casefold()
            for words in sets:
                assert any(regex.search(r"\d", found) if w == DIGIT else w in found for w in words), (name, text)
