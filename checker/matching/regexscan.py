"""Regex cues over many sentences at once: one search of the joined text, then exact searches of the few
sentences it points to.

Searching each of a long document's thousands of sentences with each of a checklist's hundreds of regexes costs
hundreds of thousands of calls. Most regexes match in a handful of sentences, so each is first run once over
the sentences joined by newlines; only the sentences its matches touch are then searched on their own, which
gives exactly the matches the sentence-by-sentence search gives. The joined search finds every such sentence
as long as what a regex matches inside a sentence does not depend on whether the sentence's edge is the
string's edge or a newline; regexes that could tell the two apart (anchors, possessive or atomic parts,
negative look-arounds that can see a newline, verbose or fuzzy syntax) are searched sentence by sentence.
"""

from __future__ import annotations

import re
import time
from bisect import bisect_right
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from functools import lru_cache

_SEP = "\n"
_DIGIT_MARK = "\\d"  # facts.DIGIT, not imported here: facts compiles its patterns when imported

#: constructs whose result can differ at a newline and at the string's edge, or that stop backtracking
_EDGE_SENSITIVE = re.compile(
    r"""\\[AZzGK]          # string anchors, \\G, \\K
      | \*\+ | \+\+ | \?\+ | \}\+   # possessive quantifiers
      | \(\?>               # atomic groups
      | \(\?[a-zA-Z]*[xr]   # verbose or reverse-search flags
      | \{[^}]*[eids]\s*[<=] # fuzzy-match constraints such as {e<=1}
    """,
    re.VERBOSE,
)
#: escapes that can match a newline (\\p and \\x-style code points are decided separately)
_NEWLINE_ESCAPES = frozenset("sWDnvRXNP0")
#: Unicode properties that never include the newline, a control character
_SAFE_PROPERTIES = re.compile(r"\\p\{(?:L[ultmo]?|N[dlo]?|M[nce]?|P[cdseifo]?|S[mcko]?|Z[slp]?|Latin|Greek)\}")
_CODE_POINT = re.compile(r"\\(?:x([0-9a-fA-F]{2})|u([0-9a-fA-F]{4})|U([0-9a-fA-F]{8})|x\{([0-9a-fA-F]+)\})")


@lru_cache(maxsize=8192)
def joinable(src: str) -> bool:
    """Whether the regex (macros already expanded) may be searched in the joined text (see the module notes)."""
    if _EDGE_SENSITIVE.search(src):
        return False
    plain = _outside_classes(src)
    if "^" in plain or "$" in plain:
        return False
    return not any(_sees_newline(body) for body in _negative_lookarounds(src))


def _sees_newline(body: str) -> bool:
    """Whether a look-around body might match a newline (conservatively: any construct that could)."""
    i, n = 0, len(body)
    while i < n:
        c = body[i]
        if c == "\\":
            step = _escape(body, i)
            if step is None:
                return True
            i += step[0]
            if step[1] == 10:
                return True
        elif c == "[":
            j = i + 1
            if body[j:j + 1] == "^":
                return True  # a negated class matches a newline unless it names one
            if body[j:j + 1] == "]":
                j += 1
            previous = None
            while j < n and body[j] != "]":
                if body[j] == "\\":
                    step = _escape(body, j)
                    if step is None:
                        return True
                    width, point = step
                elif body[j] == "[":
                    return True  # a nested set (regex module V1 syntax): not worth taking apart
                else:
                    width, point = 1, ord(body[j])
                if body[j] == "-" and previous is not None and j + 1 < n and body[j + 1] != "]":
                    # a range: from the previous point to the next one
                    nxt = _escape(body, j + 1) if body[j + 1] == "\\" else (1, ord(body[j + 1]))
                    if nxt is None or nxt[1] is None or previous <= 10 <= nxt[1]:
                        return True
                    j += 1 + nxt[0]
                    previous = None
                    continue
                if point == 10:
                    return True
                previous = point
                j += width
            i = j + 1
        elif c in ".^$":
            return True
        else:
            i += 1
    return False


def _escape(src: str, i: int) -> tuple[int, int | None] | None:
    """(width, code point or None for a class escape such as \\d) of the escape at i; None if it may match a newline."""
    nxt = src[i + 1:i + 2]
    if nxt in _NEWLINE_ESCAPES:
        return None
    if nxt == "p":
        m = _SAFE_PROPERTIES.match(src, i)
        return (m.end() - i, None) if m else None
    m = _CODE_POINT.match(src, i)
    if m:
        return m.end() - i, int(next(g for g in m.groups() if g), 16)
    if nxt in "xuU":
        return None
    if nxt in "dwSbBtfae":
        return 2, None if nxt in "dwSbB" else {"t": 9, "f": 12, "a": 7, "e": 27}[nxt]
    return 2, ord(nxt) if nxt else None


def class_end(src: str, i: int) -> int:
    """The index of the ']' that closes the character class opened at src[i] (len(src) when it is not closed).
    A ']' right after '[' or '[^' is a member, escapes are skipped, and so are POSIX classes such as [:alpha:]."""
    n = len(src)
    j = i + 1
    if j < n and src[j] == "^":
        j += 1
    if j < n and src[j] == "]":
        j += 1
    while j < n and src[j] != "]":
        if src[j] == "\\":
            j += 2
        elif src.startswith("[:", j):
            close = src.find(":]", j + 2)
            j = j + 1 if close < 0 else close + 2
        else:
            j += 1
    return j


def _outside_classes(src: str) -> str:
    """The source with escapes and character classes blanked, so that a bare ^ or $ is an anchor."""
    out, i, n = [], 0, len(src)
    while i < n:
        c = src[i]
        if c == "\\":
            out.append("  ")
            i += 2
            continue
        if c == "[":
            j = class_end(src, i)
            out.append(" " * (j + 1 - i))
            i = j + 1
            continue
        out.append(c)
        i += 1
    return "".join(out)


def _negative_lookarounds(src: str) -> Iterator[str]:
    for m in re.finditer(r"\(\?<?!", src):
        depth, j, n = 1, m.end(), len(src)
        while j < n and depth:
            c = src[j]
            if c == "\\":
                j += 2
                continue
            depth += (c == "(") - (c == ")")
            j += 1
        yield src[m.end():j - 1]


@lru_cache(maxsize=8192)
def required_words(src: str) -> tuple[str, ...]:
    """Literal strings (case-folded) of which one must occur for the regex to match, or () when none is sure.

    Sentences without any of them need no search: most regexes name words such as 'bootstrap' or one of
    'hospitals|centres|sites'. Worked out from the parse of the unexpanded source ({NUMBER} and the like stand
    for no literal); a source Python's own parser cannot read gives (). The rarest-looking of
    required_word_sets().
    """
    sets = required_word_sets(src)
    return sets[0] if sets else ()


@lru_cache(maxsize=8192)
def required_word_sets(src: str, macro_needs: tuple = ()) -> tuple[tuple[str, ...], ...]:
    """Every set of literal strings (case-folded) of which a match must contain one, rarest-looking first: a
    sentence can match only if it holds a string of each set ("{NUMBER} (annotators|readers) per (case|image)"
    needs one of the first two words and one of the last two). ``macro_needs`` gives, as (name, sets) pairs,
    what each macro's match needs (facts.MACRO_NEEDS); those sets come last and never pick the sentences."""
    try:
        import re._parser as sre_parse  # Python 3.11 and later
    except ImportError:  # Python 3.10
        import sre_parse  # type: ignore[no-redef]

    # the macros become characters of their own (their sets are added below); other {NAME}s stand for no literal
    plain = _MACRO.sub(lambda m: _MACRO_CHAR[m.group(1)], src)
    plain = re.sub(r"\{[A-Z]+\}", r"\\d", plain)
    plain = re.sub(r"\\[pP]\{[^}]*\}", r"\\w", plain)
    try:
        parsed = sre_parse.parse(plain, re.IGNORECASE)
    except (re.error, RecursionError, OverflowError, ValueError):
        return ()
    macros = {_MACRO_CHAR[name]: tuple(_MacroNeed(w) for w in sets) for name, sets in macro_needs
              if name in _MACRO_CHAR}
    candidates = _candidates(list(parsed), macros)
    useful = sorted(set(_useful(candidates)), key=_rank, reverse=True)
    if not useful:
        return ()
    # the macros' sets only narrow the sentences that hold a word of the first set (see Sentences.search)
    macros = [f for f in dict.fromkeys(candidates) if isinstance(f, _MacroNeed)]
    return tuple(tuple(sorted(f)) for f in useful + macros)


def _needs(items: list) -> frozenset[str] | None:
    """The best set of strings of which every match of this sequence contains one, or None."""
    useful = _useful(_candidates(items))
    # the rarest-looking: long strings (or symbols such as "τ" or "±"), few of them
    return max(useful, key=_rank) if useful else None


class _MacroNeed(frozenset):
    """A set of strings a macro's match needs (facts.MACRO_NEEDS); it may hold facts.DIGIT, which no text search
    finds, so it narrows candidates but never picks them."""


#: each macro of facts.MACROS as a private-use character while the source is parsed (named here, not imported:
#: facts compiles its patterns through core.limits, which reads this module)
_MACRO_CHAR = {"NUMBER": "\ue000", "DECIMAL": "\ue001", "UNIT": "\ue002", "PERCENT": "\ue003", "COUNT": "\ue004"}
_MACRO = re.compile(r"(?<!\\)\{(" + "|".join(_MACRO_CHAR) + r")\}")
_CHAR_MACRO = {v: k for k, v in _MACRO_CHAR.items()}


def _useful(candidates: list[frozenset[str]]) -> list[frozenset[str]]:
    return [f for f in candidates if not isinstance(f, _MacroNeed) and min(_rarity(w) for w in f) >= 3]


def _rank(f: frozenset[str]):
    return min(_rarity(w) for w in f), -len(f), sorted(f)


def _candidates(items: list, macros: dict | None = None) -> list[frozenset[str]]:
    """Sets of strings of which every match of this sequence contains one (each set on its own); `macros` maps
    the character standing for a macro to the sets its match needs."""
    macros = macros or {}
    try:
        from re import _constants as c  # Python 3.11 and later
    except ImportError:  # Python 3.10
        import sre_constants as c  # type: ignore[no-redef]

    candidates: list[frozenset[str]] = []
    run: list[str] = []

    def flush() -> None:
        if run:
            candidates.append(frozenset(["".join(run).casefold()]))
            run.clear()

    for op, av in items:
        if op is c.LITERAL and chr(av) not in _CHAR_MACRO:
            run.append(chr(av))
            continue
        flush()
        found = None
        if op is c.LITERAL:  # a macro
            candidates.extend(macros.get(chr(av), ()))
        elif op is c.SUBPATTERN:  # a group that must match: whatever its content needs, the whole needs
            candidates.extend(_candidates(list(av[-1]), macros))
        elif op is getattr(c, "ATOMIC_GROUP", None):  # 3.11 and later
            candidates.extend(_candidates(list(av), macros))
        elif op is c.IN and av and all(o is c.LITERAL for o, _ in av):  # [∩⋂]: one of these characters
            found = frozenset(chr(v).casefold() for _, v in av)
        elif op is c.BRANCH:
            sets = [_needs(list(b)) for b in av[1]]
            if all(sets):
                found = frozenset().union(*sets)
        elif op in (c.MAX_REPEAT, c.MIN_REPEAT, getattr(c, "POSSESSIVE_REPEAT", None)) and av[0] >= 1:
            candidates.extend(_candidates(list(av[2]), macros))
        if found:
            candidates.append(found)
    flush()
    return candidates


def _rarity(w: str) -> int:
    """How seldom a string is likely to occur: its length, but a symbol outside ASCII counts as a word."""
    return len(w) + 3 * sum(not ch.isascii() for ch in w)


@dataclass
class Sentences:
    """The texts to search, joined once and shared by every regex of a scan."""

    texts: Sequence[str]
    joined: str = field(init=False)
    starts: list[int] = field(init=False)
    folded: str = field(init=False)
    folded_starts: list[int] = field(init=False)
    folded_texts: list[str] = field(init=False, repr=False)
    _digits: list[bool] | None = field(init=False, default=None, repr=False)
    #: per string, the sentences that hold it: the count and unit words recur in dozens of regexes
    _where: dict[str, list[int]] = field(init=False, default_factory=dict, repr=False)

    def __post_init__(self) -> None:
        self.joined, self.starts = _join(self.texts)
        # case-folded, as the regexes match without case ("ſ" folds to "s" as the regex module sees it)
        self.folded_texts = [t.casefold() for t in self.texts]
        self.folded, self.folded_starts = _join(self.folded_texts)

    def mentions(self, need: tuple[str, ...]) -> bool:
        return not need or any(self._sentences_with(w) for w in need)

    def _holds(self, si: int, words: tuple[str, ...]) -> bool:
        """Whether sentence si holds one of the strings (facts.DIGIT: any digit the regex module's \\d matches)."""
        text = self.folded_texts[si]
        for w in words:
            if w == _DIGIT_MARK:
                if self._digits is None:
                    import regex

                    digit = regex.compile(r"\d")
                    self._digits = [digit.search(t) is not None for t in self.texts]
                if self._digits[si]:
                    return True
            elif w in text:
                return True
        return False

    def _with_words(self, need: tuple[str, ...]) -> list[int]:
        """Sentences that contain one of the strings."""
        if len(need) == 1:
            return self._sentences_with(need[0])
        seen: set[int] = set()
        for w in need:
            seen.update(self._sentences_with(w))
        return sorted(seen)

    def _sentences_with(self, w: str) -> list[int]:
        """The sentences that contain the string, in order (looked up once per string and document)."""
        found = self._where.get(w)
        if found is None:
            found = self._where[w] = []
            text, starts = self.folded, self.folded_starts
            at = text.find(w)
            while at >= 0:
                si = bisect_right(starts, at) - 1
                found.append(si)
                # on to the next sentence: one occurrence is enough
                at = text.find(w, starts[si + 1]) if si + 1 < len(starts) else -1
        return found

    def _touched(self, rx, timeout: float) -> list[int]:
        """Sentences that a match in the joined text touches: the only ones that can match on their own."""
        seen: set[int] = set()
        starts = self.starts
        for m in rx.finditer(self.joined, timeout=timeout):
            a, b = m.span()
            first = bisect_right(starts, a) - 1
            last = bisect_right(starts, max(a, b - 1)) - 1
            seen.update(range(first, last + 1))
        return sorted(seen)

    def search(self, rx, need: tuple[str, ...], seconds: float,
               also: Sequence[tuple[str, ...]] = ()) -> Iterator[tuple[int, object]]:
        """(sentence index, match) for every non-empty match of rx in each sentence, sentence by sentence.

        The same matches as searching every sentence alone, found faster; TimeoutError after `seconds`.
        `need` is the regex's required_words(), `also` the other sets of its required_word_sets(): a sentence
        without a string of each cannot match.
        """
        started = time.monotonic()
        if need:
            candidates: Sequence[int] = self._with_words(need)
            for words in also:
                if not candidates:
                    break
                candidates = [si for si in candidates if self._holds(si, words)]
        elif joinable(rx.pattern):
            candidates = self._touched(rx, max(seconds, 0.001))
        else:
            candidates = range(len(self.texts))
        for si in candidates:
            left = seconds - (time.monotonic() - started)
            for m in rx.finditer(self.texts[si], timeout=max(left, 0.001)):
                if m.end() > m.start():
                    yield si, m


def _join(texts: Sequence[str]) -> tuple[str, list[int]]:
    starts, at = [], 0
    for t in texts:
        starts.append(at)
        at += len(t) + 1
    return _SEP.join(texts), starts
