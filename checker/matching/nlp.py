"""The light spaCy pipeline: tokenizer, lower-case lookup lemmas and sentence rules for scientific text.

Built once per process (``pipeline()``); no model is downloaded: lemmas come from spacy-lookups-data.
"""

from __future__ import annotations

import re
from functools import lru_cache
from typing import TYPE_CHECKING, Iterable, Iterator

from ..core.words import builtin_words
from ..reading.document import Document, Sentence

if TYPE_CHECKING:  # spaCy is imported lazily: commands such as --help must stay fast
    from spacy.language import Language
    from spacy.tokens import Doc

#: words that end with a full stop without ending the sentence ("Fig. 2", "et al. (2020)", "approx. 3 mm"), from
#: checklists/words.yaml (see checker.core.words)
ABBREVIATIONS = builtin_words().set("sentence-abbreviations")

#: characters that may close a sentence after its final punctuation
_CLOSERS = frozenset(")]}\"'”’»")
#: nouns that name things by letter: "method B", "group C", "site A"
_LABELLED = builtin_words().set("letter-labelled-nouns")
_CITATION = re.compile(r"\[[0-9,\-–]+\]")
_FINAL = frozenset({".", "!", "?", "…", "...", "?!"})


def _is_final(doc: "Doc", i: int) -> bool:
    """Whether token i is a full stop, question or exclamation mark that ends a sentence."""
    tok = doc[i]
    if tok.text not in _FINAL:
        # "than method B. The": a label letter after a naming noun ends the sentence; elsewhere "J." is an initial
        return len(tok.text) == 2 and tok.text[0].isupper() and tok.text[1] == "." and i > 0 \
            and doc[i - 1].lower_ in _LABELLED

    if tok.text == "." and i > 0:
        prev = doc[i - 1]
        word = prev.lower_
        if not prev.whitespace_:
            # "Fig." "approx." "et al."; a single capital ("J. Smith") is an initial
            if word in ABBREVIATIONS or (len(prev.text) == 1 and prev.text.isalpha() and prev.text.isupper()):
                return False
    return True


def _skip_citation(doc: "Doc", j: int) -> int:
    """Past a numeric citation that follows the full stop: 'folds.[12] The' or 'folds.[3, 4-6] The'."""
    if j < len(doc) and doc[j].text.startswith("["):
        text = ""
        for k in range(j, min(j + 20, len(doc))):
            text += doc[k].text
            if text.endswith("]"):
                return k + 1 if _CITATION.fullmatch(text) else j
    return j


def _starts_sentence(tok) -> bool:
    if tok.like_url:  # "... as released. https://example.org/data" starts a sentence of its own
        return True
    first = tok.text[0]
    return first.isupper() or first.isdigit() or first in "([\"'“‘«*•-–" or not first.isalnum() and not first.islower()


def _scientific_sentences(doc: "Doc") -> "Doc":
    """Mark sentence starts: after final punctuation (and closers) when the next token opens a sentence.

    The marks are collected in a list and set in one call: setting ``is_sent_start`` token by token makes
    spaCy rescan the document each time, which is quadratic on a long block.
    """
    import numpy
    from spacy.attrs import LENGTH, ORTH, SENT_START

    n = len(doc)
    if n == 0:
        return doc
    starts = [-1] * n
    starts[0] = 1
    # only a final mark or a two-character token ("B.") can end a sentence (_is_final): the others are passed
    # over by their columns, without a Token object each
    strings = doc.vocab.strings
    finals = {strings[t] for t in _FINAL}
    orth, length = (col.tolist() for col in doc.to_array([ORTH, LENGTH]).T)
    i = 0
    while i < n:
        if (orth[i] in finals or length[i] == 2) and _is_final(doc, i):
            j = i + 1
            while j < n and (doc[j].text in _FINAL or doc[j].text in _CLOSERS):
                j += 1
            j = _skip_citation(doc, j)
            if j < n:
                starts[j] = 1 if _starts_sentence(doc[j]) and bool(doc[j - 1].whitespace_) else -1
            i = j + 1
            continue
        i += 1
    doc.from_array([SENT_START], numpy.array(starts, dtype="int32").reshape(n, 1).astype("uint64"))
    return doc


#: "folds.[12] The": a full stop glued to a citation bracket is its own token
_CITATION_INFIX = r"(?<=[A-Za-z)])\.(?=\[)"


def _lemma_table():
    """spacy-lookups-data's English lemma table, form -> lemma. The forms read from its JSON file are kept in
    the cache folder between runs, keyed by the file's place, size and time: reading the table through spaCy's
    registry of lookups costs a tenth of a second in every process. Without the file spaCy's own loader
    answers (a Table, looked up by form just the same) or says what is missing."""
    import importlib.util
    import os

    from .regexcache import cached_data

    spec = importlib.util.find_spec("spacy_lookups_data")
    if spec is not None and spec.origin:
        base = os.path.join(os.path.dirname(spec.origin), "data", "en_lemma_lookup.json")
        for path in (base, base + ".gz"):
            try:
                st = os.stat(path)
            except OSError:
                continue

            def build() -> dict[str, str]:
                from spacy.util import load_language_data  # what spacy.lookups.load_lookups reads it with

                return {str(k): str(v) for k, v in load_language_data(base).items()}

            return cached_data("lemmas-en", f"{path}\0{st.st_size}\0{st.st_mtime_ns}", build,
                               check=lambda v: isinstance(v, dict) and all(isinstance(x, str) for x in v.values()))
    from spacy.lookups import load_lookups

    return load_lookups("en", ["lemma_lookup"]).get_table("lemma_lookup")


def _stamp() -> str | None:
    """What the tokens and lemmas of a text depend on: spaCy's version, this module and the lemma data file."""
    import importlib.util
    import os

    import spacy

    spec = importlib.util.find_spec("spacy_lookups_data")
    try:
        here = os.stat(__file__)
        data = [os.path.join(os.path.dirname(spec.origin), "data", "en_lemma_lookup.json" + gz)
                for gz in ("", ".gz")] if spec is not None and spec.origin else []
        parts = [spacy.__version__, f"{__file__}\0{here.st_size}\0{here.st_mtime_ns}"]
        for d in data:
            if os.path.exists(d):
                st = os.stat(d)
                parts.append(f"{d}\0{st.st_size}\0{st.st_mtime_ns}")
    except OSError:
        return None
    return "\0".join(parts)


def phrase_tokens(nlp: "Language", texts: list[str]) -> dict[str, list[list[str]]]:
    """For each cue phrase, the lemmas and the lower-case forms of its tokens ([lemmas, lowers]) as
    make_phrase_doc gives them. Kept in the cache folder between runs for studygap's own pipeline: in a fresh
    process, tokenizing a checklist's few thousand phrases costs a few tenths of a second."""
    from .regexcache import cached_data

    def build() -> dict[str, list[list[str]]]:
        out = {}
        for t in texts:
            doc = make_phrase_doc(nlp, t)
            out[t] = [[tok.lemma_ for tok in doc], [tok.lower_ for tok in doc]]
        return out

    ours = pipeline.cache_info().currsize > 0 and nlp is pipeline()  # a caller's own pipeline is not cached
    stamp = _stamp() if ours else None
    if stamp is None:
        return build()

    def sound(v) -> bool:
        return isinstance(v, dict) and set(v) == set(texts) and all(
            isinstance(x, list) and len(x) == 2 and len(x[0]) == len(x[1])
            and all(isinstance(w, str) for w in x[0] + x[1]) for x in v.values())

    return cached_data("phrases", "\0".join([stamp, *texts]), build, check=sound)


@lru_cache(maxsize=1)
def pipeline() -> "Language":
    """spaCy's blank English with a lower-case lookup lemmatizer and our sentence rules (cached per process).

    spaCy is imported here without its command-line tools (checker.matching.spacyimport). The tokenizer is built once,
    with the citation infix in the language defaults (setting ``infix_finditer`` afterwards makes spaCy load its
    2,700 special cases a second time).
    """
    from .spacyimport import import_spacy

    import_spacy()
    from spacy.lang.en import English, EnglishDefaults
    from spacy.language import Language

    if "studygap_lemmas" not in Language.factories:

        @Language.factory("studygap_lemmas")
        def _make_lemmas(nlp, name):  # noqa: ARG001 - spaCy's factory signature
            return _LowerLemmas(nlp.vocab)

        Language.component("studygap_sentences", func=_scientific_sentences)

    class _Defaults(EnglishDefaults):
        infixes = list(EnglishDefaults.infixes) + [_CITATION_INFIX]

    class _English(English):
        Defaults = _Defaults

    nlp = _English()
    nlp.max_length = 50_000_000
    nlp.add_pipe("studygap_lemmas", config={})
    nlp.add_pipe("studygap_sentences")
    nlp.get_pipe("studygap_lemmas").table = _lemma_table()
    return nlp


def make_phrase_doc(nlp: "Language", text: str) -> "Doc":
    """A cue phrase as the matchers need it: tokens and lemmas, without sentence marks (a phrase is one)."""
    return nlp.get_pipe("studygap_lemmas")(nlp.make_doc(text))


class _LowerLemmas:
    """Lemma from the lookup table by lower-case form, so 'Annotators' and 'annotators' both give 'annotator'."""

    def __init__(self, vocab) -> None:
        self.vocab = vocab
        self.table: dict[str, str] | None = None  # form -> lemma
        #: hash of a lower-case form -> hash of its lemma
        self._cache: dict[int, int] = {}

    def __call__(self, doc: "Doc") -> "Doc":
        """The lemmas of the whole block set in one call from its column of lower-case forms (a Token object per
        word, as ``tok.lemma_ = ...`` needs, cost more than the lookups)."""
        import numpy
        from spacy.attrs import LEMMA, LOWER

        n = len(doc)
        if n == 0:
            return doc
        cache, table, strings = self._cache, self.table, self.vocab.strings
        lemmas = []
        for h in doc.to_array([LOWER]).tolist():
            lemma = cache.get(h)
            if lemma is None:
                low = strings[h]
                lemma = strings.add(table.get(low, low) if table is not None else low)
                if len(cache) < 200_000:
                    cache[h] = lemma
            lemmas.append(lemma)
        doc.from_array([LEMMA], numpy.array(lemmas, dtype="uint64").reshape(n, 1))
        return doc


def parse_blocks(texts: Iterable[str], batch_size: int = 64) -> Iterator["Doc"]:
    return pipeline().pipe(texts, batch_size=batch_size)


def sentences_of(document: Document, docs: Iterable["Doc"] | None = None) -> Iterator[tuple[Sentence, "Doc", int, int]]:
    """Each sentence of the document with its block's spaCy Doc and token range (start, end)."""
    if docs is None:
        docs = parse_blocks(b.text for b in document.blocks)
    for bi, (block, doc) in enumerate(zip(document.blocks, docs)):
        # the block's text is the Doc's (spaCy's tokenizer keeps every character): a slice of it is the sentence's
        # text, without the Token object per word that Span.text builds (a Doc made some other way: Span.text)
        own = len(doc) > 0 and doc[-1].idx + len(doc[-1].text_with_ws) == len(block.text)
        for sent in doc.sents:
            start, end = sent.start_char, sent.end_char
            text = block.text[start:end] if own else sent.text
            if not text.strip():
                continue
            yield (
                Sentence(
                    text=text,
                    block=bi,
                    start=start,
                    end=end,
                    location=block.location_at(start),
                    role=block.role,
                    kind=block.kind,
                ),
                doc,
                sent.start,
                sent.end,
            )


def segment(document: Document) -> Document:
    """The document with its sentences filled in."""
    import dataclasses

    sents = tuple(s for s, _, _, _ in sentences_of(document))
    return dataclasses.replace(document, sentences=sents)


def split_sentences(text: str) -> list[str]:
    """Sentences of a plain string (for tests, examples and tools)."""
    return [s.text for s in pipeline()(text).sents if s.text.strip()]
