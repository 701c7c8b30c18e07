"""Value extraction: the numbers a validation document states (counts with what they count, percentages,
tolerances, percentiles, bootstrap sizes, splits, folds, ranges), and the regex macros checklists capture them with.

Everything here works on plain strings, so it runs without the spaCy pipeline and on any sentence a reader made.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from decimal import Decimal, InvalidOperation
from typing import Any

import regex

from . import regexcache
from .fact import Fact
from ..core.words import builtin_words

__all__ = [
    "NUMBER", "COUNT", "DECIMAL", "UNIT", "PERCENT", "MACROS", "expand_macros", "parse_number", "Quantity",
    "parse_value", "Fact", "extract_facts", "KINDS",
]

# ---------------------------------------------------------------------------------------------------------------
# Regex building blocks. Every macro is a group without captures, safe to embed anywhere in a user's pattern and
# correct whether or not the pattern is compiled case-insensitively (case matters for "m" vs "M", "ms" vs "MS").

_SP = r"[ \t\u00A0\u2009\u202F]"  # a space inside a number or between a number and its unit (thin spaces too)
# a space groups thousands only in a short run: "12 000" is one number, "128 256 512" in a table are three
_DIGITS = rf"(?:\d{{1,3}}(?:,\d{{3}})+|\d{{1,3}}(?:{_SP}\d{{3}}){{1,3}}(?!{_SP}?\d)|\d+)"

_ONES = ["zero", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine", "ten", "eleven", "twelve",
         "thirteen", "fourteen", "fifteen", "sixteen", "seventeen", "eighteen", "nineteen"]
_TENS = ["twenty", "thirty", "forty", "fifty", "sixty", "seventy", "eighty", "ninety"]
_WORD_VALUE = {w: i for i, w in enumerate(_ONES)} | {w: 20 + 10 * i for i, w in enumerate(_TENS)}


def _alt(words: list[str]) -> str:
    # longest first, so "seventeen" is tried before "seven"
    return "|".join(sorted(words, key=len, reverse=True))


_B100_SHORT = _alt(_ONES + _TENS)
_B100 = rf"\b(?:(?:{_alt(_TENS)})(?:[-\u2010\u2011 ](?:{_alt(_ONES[1:10])}))?|{_alt(_ONES)})\b"
# one linear pass, so that "one hundred and twenty" is never matched again for each larger scale
_LEAD = rf"(?:{_B100}|\ba(?=\s+(?:hundred|thousand|million)\b))"
_H = rf"(?:{_LEAD}(?:\s+hundred\b(?:,?\s+(?:and\s+)?{_B100})?)?)"
_AND = r"(?:,?\s+(?:and\s+)?)"
_WORDS = (rf"(?i:\ba\s+single\b|(?:(?:{_B100}|\ba)\s+)?dozen\b|{_H}(?:\s+million\b(?:{_AND}{_H}"
          rf"(?:\s+thousand\b(?:{_AND}{_H})?)?)?|\s+thousand\b(?:{_AND}{_H})?)?)")

# The same language for checklist regexes, written compactly: checklists hold hundreds of regexes, and the
# precise grammar above costs tens of milliseconds to compile each time it is spliced in. This form accepts any
# run of number words (parse_number decides the value, and says None for nonsense such as "one one").
_NUMBER_WORD = _alt(_ONES + _TENS + ["hundred", "thousand", "million", "billion"])
_WORD_GAP = r"(?:(?<=hundred|thousand|million|billion),?\s+and\s+|,?\s+|[-\u2010\u2011])"
_WORDS_COMPACT = (rf"(?i:\ba\s+single\b|(?:\b(?:{_B100_SHORT})\s+|\ba\s+)?dozen\b"
                  rf"|\b(?:a\s+(?=(?:hundred|thousand|million)\b))?(?:{_NUMBER_WORD})(?:{_WORD_GAP}(?:{_NUMBER_WORD}))*\b)")

_DSCALE = rf"{_DIGITS}(?:\.\d+)?{_SP}+(?:thousand|million|billion)\b"
_KFORM = r"\d+(?:\.\d+)?k(?![a-z])"

#: a count in digits or words: "3", "1,000", "12 000", "three", "Twenty-five", "one hundred and twenty", "a single"
NUMBER = rf"(?i:(?<![\d.,])(?:{_DSCALE}|{_KFORM}|{_DIGITS})(?![.,]?\d)|{_WORDS_COMPACT})"

#: a number with an optional decimal part and sign (also the unicode minus): "2", "-0.5", "−3", "1,000.25", ".5"
DECIMAL = rf"(?:(?:(?<![\w.,])[-+\u2212]{_SP}?)?(?<![\d.,])(?:{_DIGITS}(?:\.\d+)?|\.\d+)(?![.,]?\d))"

_END = r"(?![\p{L}\p{N}_]|/\p{L})"  # "mm" but not "mmHg" or the "cm" of a speed "cm/s"
#: a length or size unit: mm, cm, m, µm/um, nm, px, pixel(s), voxel(s), mm³, degrees, s, ms (spelled out too)
UNIT = (
    rf"(?:(?-i:mm|cm|dm|km|nm|µm|μm|um|m)(?:\^?[23]|[²³])?{_END}"
    rf"|(?i:millimet(?:re|er)s?|centimet(?:re|er)s?|micromet(?:re|er)s?|microns?|nanomet(?:re|er)s?|met(?:re|er)s?"
    rf"|pixels?|px|voxels?|degrees?|deg|milliseconds?|seconds?){_END}"
    rf"|(?-i:msec|ms|sec|s){_END}"
    rf"|°(?![CF]\b|\p{{L}}))"
)

#: a percentage: "12%", "12 %", "12.5 percent", "twelve per cent"
PERCENT = rf"(?:(?:{DECIMAL}|{_WORDS_COMPACT}){_SP}?(?:%|(?i:per{_SP}?cent|percent|pct)\b))"

#: the size of a data set: a {NUMBER} that is not a challenge's edition year after its name ("the Harbour 2021 test
#: scans") nor the few items of a batch, collage, grid or maximum ("a batch of 5 testing images")
COUNT = (r"(?!(?<=(?-i:[A-Z])[\w-]*\s)(?:19|20)\d\d\b)"
         r"(?<!\b(?:batch|batches|collage|montage|mosaic|grid|maximum|minimum|panel)\s+of\s)" + rf"(?:{NUMBER})")

MACROS: dict[str, str] = {"NUMBER": NUMBER, "COUNT": COUNT, "DECIMAL": DECIMAL, "UNIT": UNIT, "PERCENT": PERCENT}

#: stands for "any decimal digit, as the regex module's \\d sees one" in MACRO_NEEDS
DIGIT = "\\d"
_COUNT_WORDS = (DIGIT, "single", "dozen", *_ONES, *_TENS, "hundred", "thousand", "million", "billion")
#: for each macro, the sets of strings (case-folded) of which every match holds one; regexscan uses them to pass
#: over sentences that cannot match (a {NUMBER} needs a digit or a number word)
MACRO_NEEDS: dict[str, tuple[tuple[str, ...], ...]] = {
    "NUMBER": (_COUNT_WORDS,),
    "COUNT": (_COUNT_WORDS,),
    "DECIMAL": ((DIGIT,),),
    "PERCENT": (_COUNT_WORDS, ("%", "per", "pct")),
    "UNIT": (),
}

_MACRO = regexcache.compile(r"(?<!\\)\{(" + "|".join(MACROS) + r")\}")


def expand_macros(pattern: str) -> str:
    """The pattern with {NUMBER}, {COUNT}, {DECIMAL}, {UNIT} and {PERCENT} replaced; other braces ({2,3}) stay as
    written."""
    return _MACRO.sub(lambda m: "(?:" + MACROS[m.group(1)] + ")", pattern)


_FLAGS = regex.IGNORECASE | regex.V0


def _c(src: str) -> regex.Pattern:
    return regexcache.compile(src, _FLAGS)


def _back(src: str) -> regex.Pattern:
    """A pattern anchored at the end of a look-back window, searched from the end (far faster than forwards)."""
    return regexcache.compile(src, _FLAGS | regex.REVERSE)


# ---------------------------------------------------------------------------------------------------------------
# Numbers

_NUMBER_FULL = _c(rf"(?:{NUMBER})")
_DIGITS_FULL = _c(rf"[-+]?(?:{_DIGITS}(?:\.\d+)?|\.\d+)")
_SCALED_FULL = _c(rf"([-+]?{_DIGITS}(?:\.\d+)?){_SP}*(k|thousand|million|billion)")
_WORDS_FULL = _c(_WORDS)
_SYMBOL_PREFIX = _c(r"(?:[a-z]{1,2}|[\p{Greek}])(?:_\{?\w+\}?)?\s*[=:≈]\s*")
_GROUPING = regexcache.compile(r"[,\s\u00A0\u2009\u202F]")
_LETTERS = regexcache.compile(r"[a-z]+")
_VALUE_START = regexcache.compile(r"[-+\d.]|\p{L}")
_POWER_END = regexcache.compile(r"\^?([23²³])$")
_LENGTH_POWER = regexcache.compile(r"(?:mm|cm|dm|km|nm|µm|μm|um|m)\^?[23²³]$")
_SPLIT_NAME = regexcache.compile(r"split|ratio|proportion|partition|fraction", regex.IGNORECASE)
_SCALE = {"k": 1000, "thousand": 1000, "million": 10**6, "billion": 10**9}


def _tidy(text: str) -> str:
    return " ".join(text.replace("\u2212", "-").split())


#: the most digits a number may have to be read as one; a longer run of digits (a checksum, an identifier, a
#: 5,000-digit line that would exceed Python's int-to-text limit of 4,300) stays text
MAX_DIGITS = 60


def _readable_digits(t: str) -> bool:
    """Whether the digits of t can be read as a number: ASCII digits only ("²", "٣" and "３" are not parsed as
    numbers) and at most MAX_DIGITS of them."""
    digits = [c for c in t if c.isdigit()]
    return len(digits) <= MAX_DIGITS and all("0" <= c <= "9" for c in digits)


def _to_number(d: Decimal, keep_float: bool) -> int | float:
    if d == d.to_integral_value() and not keep_float:
        return int(d)
    return float(d)


def _digits_value(t: str) -> int | float | None:
    if not _readable_digits(t) or not _DIGITS_FULL.fullmatch(t):
        return None
    try:
        d = Decimal(_GROUPING.sub("", t))
    except InvalidOperation:  # pragma: no cover - the regex only lets digits through
        return None
    return _to_number(d, "." in t)


def _words_value(t: str) -> int | None:
    words = [w for w in _LETTERS.findall(t.lower()) if w != "and"]
    if words == ["a", "single"]:
        return 1
    total = current = 0
    for w in words:
        if w == "a":
            current = 1
        elif w in _WORD_VALUE:
            current += _WORD_VALUE[w]
        elif w == "hundred":
            current = (current or 1) * 100
        elif w == "dozen":
            current = (current or 1) * 12
        elif w in ("thousand", "million"):
            total += (current or 1) * _SCALE[w]
            current = 0
        else:  # pragma: no cover - the regex only lets number words through
            return None
    return total + current


def parse_number(text: str) -> int | float | None:
    """The number a string states, in digits or words ("three" -> 3, "1,000" -> 1000, "a single" -> 1,
    "n = 3" -> 3, "1.5" -> 1.5, "2.5k" -> 2500, "one hundred and twenty" -> 120); None when it is not one number."""
    t = _tidy(text).rstrip(".,;:")
    if not t:
        return None
    m = _SYMBOL_PREFIX.match(t)
    if m and m.end() < len(t) and _VALUE_START.match(t, m.end()) and not _WORDS_FULL.fullmatch(t):
        t = t[m.end():]
    v = _digits_value(t)
    if v is not None:
        return v
    m = _SCALED_FULL.fullmatch(t) if _readable_digits(t) else None
    if m:
        d = Decimal(_GROUPING.sub("", m.group(1))) * _SCALE[m.group(2).lower()]
        return _to_number(d, False)
    if _WORDS_FULL.fullmatch(t):
        return _words_value(t)
    return None


# ---------------------------------------------------------------------------------------------------------------
# Quantities

_UNIT_NAMES = [
    (r"mm|millimet(?:re|er)s?", "mm"), (r"cm|centimet(?:re|er)s?", "cm"), (r"dm", "dm"), (r"km", "km"),
    (r"nm|nanomet(?:re|er)s?", "nm"), (r"µm|μm|um|micromet(?:re|er)s?|microns?", "µm"), (r"m|met(?:re|er)s?", "m"),
    (r"px|pixels?", "px"), (r"voxels?", "voxel"), (r"°|deg|degrees?", "degree"),
    (r"ms|msec|milliseconds?", "ms"), (r"s|sec|seconds?", "s"), (r"%|percent|per ?cent|pct", "%"),
]
_UNIT_NAME_RE = [(regexcache.compile(rf"(?:{p})", regex.IGNORECASE), name) for p, name in _UNIT_NAMES]
_MM_PER = {"mm": 1.0, "cm": 10.0, "dm": 100.0, "m": 1000.0, "km": 1e6, "µm": 1e-3, "nm": 1e-6}
_POWER = {"2": "²", "3": "³", "²": "²", "³": "³"}


def _unit(raw: str) -> str:
    """The one spelling studygap uses for a unit: "millimetres" -> "mm", "pixels" -> "px", "um^3" -> "µm³"."""
    r = raw.strip()
    power = ""
    m = _POWER_END.search(r)
    if m and _LENGTH_POWER.match(r):
        power, r = _POWER[m.group(1)], r[: m.start()]
    for pattern, name in _UNIT_NAME_RE:
        if pattern.fullmatch(r):
            return name + power
    return r.lower() + power


@dataclass(frozen=True)
class Quantity:
    """A number with its unit in studygap's spelling ("mm", "µm", "px", "voxel", "degree", "s", "ms", "%")."""

    value: float | int
    unit: str | None

    def in_mm(self) -> float | None:
        """The value in millimetres for a length unit, else None (pixels and voxels have no fixed length)."""
        f = _MM_PER.get(self.unit or "")
        return None if f is None else self.value * f

    def to_dict(self) -> dict[str, Any]:
        return {"value": self.value, "unit": self.unit}


_VAL = rf"(?:{DECIMAL}|{_WORDS})"
_Q_FULL = _c(rf"(?P<v>{_VAL})(?:{_SP}|[-\u2010\u2011])?(?P<u>{UNIT})")
_PCT_FULL = _c(rf"(?P<v>{_VAL}){_SP}?(?:%|per{_SP}?cent|percent|pct)")
_P = rf"(?:{DECIMAL}(?:{_SP}?%)?)"
_SPLIT_FULL = _c(rf"{_P}(?:{_SP}?[/:]{_SP}?{_P})+")
_DASH_SPLIT_FULL = _c(rf"{_P}(?:{_SP}?[-\u2013]{_SP}?{_P})+")
_RANGE_FULL = _c(
    rf"(?:(?:between|from|ranging\s+from)\s+)?(?P<lo>{_VAL})(?P<lou>{_SP}?(?:{UNIT}|%))?"
    rf"(?:{_SP}?[-\u2010\u2011\u2012\u2013\u2014]{_SP}?|\s+(?:to|and)\s+)(?P<hi>{_VAL})(?P<u>{_SP}?(?:{UNIT}|%))?"
    rf"(?:\s+\p{{L}}[\p{{L}}\-]*)?"
)
_DECIMAL_RE = _c(DECIMAL)


def _quantity(m: regex.Match) -> Quantity | None:
    v = parse_number(m.group("v"))
    if v is None:
        return None
    u = _unit(m.group("u"))
    return Quantity(v, u)


def _split_values(seq: str) -> list[int | float]:
    return [v for v in (parse_number(x.group()) for x in _DECIMAL_RE.finditer(seq)) if v is not None]


def _range_dict(m: regex.Match) -> dict[str, Any] | None:
    lo, hi = parse_number(m.group("lo")), parse_number(m.group("hi"))
    if lo is None or hi is None:
        return None
    units = {_unit(u) for u in (m.group("lou"), m.group("u")) if u}
    if len(units) > 1:
        return None
    out: dict[str, Any] = {"low": lo, "high": hi}
    if units:
        out["unit"] = units.pop()
    return out


_WORDS_AFTER = _c(r"(?:\s+|[-\u2010\u2011])\p{L}")


def parse_value(name: str, text: str) -> int | float | str | Quantity | dict | list:
    """A regex named group's text as a value: a number (words too), a Quantity for a number with a unit or a
    percentage, a list for a split ("70/15/15"), {"low", "high"} for a range ("3-5", "between 3 and 5"), else
    the stripped text. ``name`` is the group's name; names about splits or ratios read "75-25" as a split."""
    t = _tidy(text)
    if not t:
        return t
    body = t
    m = _SYMBOL_PREFIX.match(t)
    if m and m.end() < len(t) and not _WORDS_FULL.match(t):
        body = t[m.end():]
    splitish = _SPLIT_NAME.search(name) is not None
    if _SPLIT_FULL.fullmatch(body) or (splitish and _DASH_SPLIT_FULL.fullmatch(body)):
        return _split_values(body)
    m = _RANGE_FULL.fullmatch(body)
    if m and not _DIGITS_FULL.fullmatch(body):
        r = _range_dict(m)
        if r is not None and r["low"] <= r["high"]:
            return r
        if r is not None and _DASH_SPLIT_FULL.fullmatch(body) and 98 <= r["low"] + r["high"] <= 102:
            return [r["low"], r["high"]]  # "75-25" falls, so it is no range: a split
    if _DASH_SPLIT_FULL.fullmatch(body) and not _DIGITS_FULL.fullmatch(body):
        vals = _split_values(body)
        if len(vals) > 2 and 98 <= sum(vals) <= 102:
            return vals  # "60-20-20"
    m = _PCT_FULL.fullmatch(body)
    if m and parse_number(m.group("v")) is not None:
        return Quantity(parse_number(m.group("v")), "%")  # type: ignore[arg-type]
    m = _Q_FULL.fullmatch(body)
    if m and (q := _quantity(m)) is not None:
        return q
    v = parse_number(body)
    if v is not None:
        return v
    # a value followed by what it counts or measures: "three radiologists" -> 3, "2 mm tolerance" -> 2 mm
    for pattern in (_PCT_FULL, _Q_FULL, _NUMBER_FULL, _DECIMAL_RE):
        m = pattern.match(body)
        if m and _WORDS_AFTER.match(body, m.end()):
            if pattern is _PCT_FULL:
                return Quantity(parse_number(m.group("v")), "%")  # type: ignore[arg-type]
            if pattern is _Q_FULL:
                q = _quantity(m)
                if q is not None:
                    return q
                continue
            v = parse_number(m.group())
            if v is not None:
                return v
    return t


# ---------------------------------------------------------------------------------------------------------------
# Facts

KINDS = ("count", "percentage", "tolerance", "percentile", "bootstrap", "split", "folds", "range", "n")


# --- nouns ---------------------------------------------------------------------------------------------------

#: the word lists below are data: checklists/words.yaml (see checker.core.words)
_WORDS_DATA = builtin_words()
_KNOWN_NOUNS = _WORDS_DATA.set("known-nouns")
_PERSON_SUFFIX = regexcache.compile(r"(?:ologist|ician|iatrist|ographer|ist)$")

_IRREGULAR = _WORDS_DATA.maps["irregular-plurals"]


def singular(word: str) -> str:
    w = word.lower()
    if w in _IRREGULAR:
        return _IRREGULAR[w]
    if len(w) <= 2 or w.endswith(("ss", "us", "is")):
        return w
    if w.endswith("ies") and len(w) > 4:
        return w[:-3] + "y"
    if w.endswith(("sses", "shes", "ches", "xes", "zzes")):
        return w[:-2]
    if w.endswith("s"):
        return w[:-1]
    return w


_SINGULAR_S = _WORDS_DATA.set("singular-words-ending-in-s")


def _plural_looking(word: str) -> bool:
    w = word.lower()
    if w in _SINGULAR_S:
        return False
    return w in _IRREGULAR or (w.endswith("s") and not w.endswith(("ss", "us", "is")) and len(w) > 2)


def _known(lemma: str) -> bool:
    return lemma in _KNOWN_NOUNS or lemma.split("-")[-1] in _KNOWN_NOUNS or (
        len(lemma) >= 6 and _PERSON_SUFFIX.search(lemma) is not None)


_STOP = _WORDS_DATA.set("noun-phrase-stops")
_BAD_HEAD = _WORDS_DATA.set("never-counted-heads")

_WORD_TOKEN = regexcache.compile(r"(?:\p{L}[\p{L}\p{N}]*|\p{N}+\p{L}[\p{L}\p{N}]*)(?:[-'’/][\p{L}\p{N}]+)*")
_ABBREV = regexcache.compile(r"\(\p{Lu}[\p{L}\p{N}\-]{0,9}\)")
_RATE = regexcache.compile(r"(?:mm|cm|m|µm|μm|um|nm|km|px|pixels?|voxels?|deg|degrees?|ml|l|g|kg|mg)/\w{1,4}")
_SPACES = regexcache.compile(r"[ \t\u00A0\u2009\u202F]+|\s+")


def _noun_after(text: str, pos: int, value: float | int | None = None) -> tuple[str, int] | None:
    """The counted noun in the phrase that starts right after a number, as (lemma, end offset), or None.

    Up to a few modifiers are passed over ("two board-certified radiologists", "109,309 valid optical coherence
    tomography (OCT) images"); a known count noun wins over what follows it ("3 radiologists read the scans")."""
    i = pos
    words: list[tuple[str, int, int]] = []
    while len(words) < 7:
        sp = _SPACES.match(text, i)
        if not sp:
            break
        j = sp.end()
        ab = _ABBREV.match(text, j)
        if ab and words:  # "tomography (CT) images": an abbreviation inside the phrase
            nxt = _SPACES.match(text, ab.end())
            if nxt and _WORD_TOKEN.match(text, nxt.end()):
                i = ab.end()
                continue
            break
        m = _WORD_TOKEN.match(text, j)
        if not m:
            break
        w = m.group()
        lw = w.lower()
        if "/" in lw and _RATE.fullmatch(lw):
            break  # a rate such as "cm/s", not a thing counted
        if lw in _STOP:
            # "left and right adrenal glands": a coordination of modifiers, not of counted things
            if lw in ("and", "or") and words and not any(_known(singular(x)) for x, _, _ in words) \
                    and not _plural_looking(words[-1][0]):
                i = m.end()
                continue
            break
        lem = singular(w)
        if words and not _known(lem) and (
                (lw.endswith("ly") and len(lw) > 4) or (lw.endswith("ed") and len(lw) > 4)):
            break  # "3 radiologists independently", "3 graders blinded to"
        words.append((w, m.start(), m.end()))
        i = m.end()
        if i < len(text) and text[i] in "-/":
            break
    if not words:
        return None
    for k, (w, _s, e) in enumerate(words):
        # the first plural heads the phrase: what follows it is a verb ("three experts segment a neuron", "the
        # three comparators agrees"), since compounds put their plural last ("image patches", "disease labels");
        # a vendor name before a plural is a modifier ("two Philips scanners")
        if _plural_looking(w) and not (w[:1].isupper() and k + 1 < len(words) and _plural_looking(words[k + 1][0])):
            return singular(w), e
    for w, _s, e in reversed(words):
        lem = singular(w)
        if _known(lem):
            return lem, e
    w, _s, e = words[-1]
    lw = w.lower()
    if lw in _BAD_HEAD or lw.endswith(("ing", "ly", "ed")):
        return None
    if value != 1 and not _plural_looking(w):
        return None
    if value == 1 and lw.endswith("er"):
        return None  # "one step closer"
    return singular(w), e


# --- contexts where a number is no count ----------------------------------------------------------------------

_LABELS = "|".join(_WORDS_DATA.lists["number-labels"])
_LABEL_BEFORE = _back(rf"(?:^|[^\p{{L}}\p{{N}}])(?:{_LABELS})\.?\s*\(?\s*(?:\d+\s*(?:,|and|&|or|[-–])\s*)*$")
_MONTH = r"(?-i:Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Sept|Oct|Nov|Dec)(?-i:[a-z]*)\.?"
_MONTH_BEFORE = _back(rf"(?:^|\W){_MONTH}\s*$")
_MONTH_AFTER = _c(rf",?\s*{_MONTH}(?:\W|$)")
_PVALUE_BEFORE = _back(r"(?:^|[^\p{L}])(?:p(?:[-\s]?values?)?|α|alpha)\s*(?:[<>=≤≥]|of|was|is|were)\s*$")
_GLUED_BEFORE = _back(r"(?:[\p{L}\p{N}_^]|\p{L}[-_‐]|[$€£¥#§±×]\s*|\d\s*[×x*]\s*|\d\s*[/:]"
                      r"|\d\s?[-–−]\s?)$")
_GLUED_AFTER = _c(r"(?:[\p{L}\p{N}_]|[-‐‑]\p{L}|\s*[×x*]\s*\d|\s*±|[/:]\d|\s?[-–−]\s?\d|\+|'s\b|’s\b)")
_CITATION = _back(r"\[[\d\s,;–\-]*$")
_CITATION_END = _c(r"[\d\s,;–\-]*\]")
_YEAR_WORDS = _back(r"(?:^|\W)(?:in|since|from|until|till|to|by|during|between|of|year|years|early|late|mid|and|"
                 r"before|after|around|circa|c\.)\s*$")


def _blocked(text: str, s: int, e: int, *, after: bool = True) -> bool:
    """Whether the number at text[s:e] is part of something else: a name, a reference, a date, a dimension."""
    lo = max(0, s - 40)
    if _GLUED_BEFORE.search(text, lo, s) or _LABEL_BEFORE.search(text, lo, s) or _PVALUE_BEFORE.search(text, lo, s):
        return True
    if _MONTH_BEFORE.search(text, lo, s) or _MONTH_AFTER.match(text, e, e + 20):
        return True
    if _CITATION.search(text, max(0, s - 30), s) and _CITATION_END.match(text, e, e + 30):
        return True
    return bool(after and _GLUED_AFTER.match(text, e, e + 10))


def _is_year(text: str, s: int, e: int) -> bool:
    t = text[s:e]
    return len(t) == 4 and _readable_digits(t) and t.isdigit() and 1800 <= int(t) <= 2100


_SENT_END = regexcache.compile(r"[.!?;](?=\s+[\p{Lu}(\[])|\n\s*\n")


def _clause(text: str, s: int, e: int, before: int = 80, after: int = 60) -> tuple[str, str]:
    """The text around a match, cut at the sentence boundaries nearest to it."""
    b = text[max(0, s - before):s]
    cut = None
    for m in _SENT_END.finditer(b):
        cut = m.end()
    if cut is not None:
        b = b[cut:]
    a = text[e:e + after]
    m = _SENT_END.search(a)
    if m:
        a = a[:m.start()]
    return b, a


# --- candidates ----------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class _Cand:
    prio: int
    kind: str
    value: object
    start: int
    end: int
    nums: tuple[tuple[int, int], ...]
    noun: str | None = None


_PRIO = {k: i for i, k in enumerate(
    ("percentile", "bootstrap", "folds", "split", "tolerance", "range", "percentage", "n", "count"))}


def _cand(kind: str, value: object, start: int, end: int, nums, noun: str | None = None, prio: str | None = None):
    return _Cand(_PRIO[prio or kind], kind, value, start, end, tuple(nums), noun)


def _num(v: float | int) -> int | float:
    return int(v) if isinstance(v, float) and v.is_integer() else v


# percentiles ---------------------------------------------------------------------------------------------------
_ORD = {"fifth": 5, "tenth": 10, "twentieth": 20, "twenty-fifth": 25, "fiftieth": 50, "seventy-fifth": 75,
        "ninetieth": 90, "ninety-fifth": 95, "ninety-ninth": 99, "ninety-eighth": 98, "ninety-seventh": 97,
        "eightieth": 80}
_PCTL = [
    _c(rf"(?<![\w.,])(?P<p>\d{{1,3}}(?:\.\d+)?)(?:{_SP}?(?:th|st|nd|rd))?(?:{_SP}|[-\u2010\u2011])?"
       rf"(?:percentile|centile)s?\b"),
    _c(rf"(?<![\w.,])(?P<p>\d{{1,3}}(?:\.\d+)?){_SP}?%{_SP}?(?:[-\u2010\u2011]{_SP}?)?"
       rf"(?:percentile|quantile|(?-i:HD)\b|hausdorff)"),
    _c(rf"\b(?-i:HD)(?:{_SP}|[_\-])?\$?_?\{{?(?P<p>\d{{2}}(?:\.\d+)?)\}}?\$?(?![\d.]?\d)(?!{_SP}?{UNIT})"),
    _c(r"(?<![\w.])(?P<p>\d{2})(?-i:HD)\b"),
    _c(rf"(?:hausdorff(?:{_SP}distance)?|\b(?-i:HD)){_SP}?\({_SP}?(?P<p>\d{{2}}(?:\.\d+)?){_SP}?%{_SP}?\)"),
    _c(rf"(?<![\w.])(?P<q>0?\.\d+){_SP}?(?:[-\u2010]{_SP}?)?quantile"),
    _c(rf"\b(?P<w>{_alt(list(_ORD))})(?:{_SP}|-)percentile"),
]


_HD_BEFORE = regexcache.compile(r"HD[\s_\-$]*_?\{?$")


def _percentiles(text: str) -> list[_Cand]:
    out = []
    for pat in _PCTL:
        for m in pat.finditer(text):
            g = next(k for k in ("p", "q", "w") if m.groupdict().get(k) is not None)
            if g == "p":
                v = parse_number(m.group("p"))
            elif g == "q":
                v = float(Decimal(m.group("q")) * 100) if _readable_digits(m.group("q")) else None
            else:
                v = _ORD[m.group("w").lower()]
            if v is None or not 0 < v <= 100:
                continue
            # "HD95" is glued on purpose; any other glued or cited number is no percentile
            hd = g == "p" and _HD_BEFORE.search(text, max(0, m.start(g) - 8), m.start(g))
            if g != "w" and not hd and _blocked(text, m.start(g), m.end(g), after=False):
                continue
            out.append(_cand("percentile", _num(v), m.start(), m.end(), [m.span(g)]))
    return out


# bootstrap -----------------------------------------------------------------------------------------------------
_BOOT = r"bootstrap(?:s|ped|ping)?"
_RESAMPLES = (r"(?:re-?)?(?:samples?|samplings?|replicates?|replications?|repetitions?|iterations?|resamples?|"
              r"rounds?|runs?|draws?|times|trials?|datasets?|sets?)")
_BOOT_PATS = [
    _c(rf"(?P<n>{NUMBER})(?:{_SP}|-)+(?:(?:stratified|non-?parametric|paired|balanced|percentile|random|case)\s+)?"
       rf"{_BOOT}(?:\s+(?:re-?)?sampl\w*)?(?:\s+{_RESAMPLES}\b)?"),
    _c(rf"\b{_BOOT}\w*(?:[\s,:()\[\]=]+[^\s.;!?,:()\[\]=]+){{0,8}}?[\s,:()\[\]=~≈]+(?P<n>{NUMBER})"
       rf"\s+(?:(?:bootstrap|bootstrapped|random|stratified)\s+)?{_RESAMPLES}\b"),
    _c(rf"(?<![\w])(?:b|n)\s*=\s*(?P<n>{NUMBER})(?:\s+(?:{_BOOT}\s+)?{_RESAMPLES}\b)?"),
]
_BOOT_WORD = _c(r"bootstrap")


_LETTER_OR_COMPOUND = regexcache.compile(r"[-‐]\p{L}|\p{L}")


def _bootstrap(text: str) -> list[_Cand]:
    out = []
    for i, pat in enumerate(_BOOT_PATS):
        for m in pat.finditer(text):
            s, e = m.span("n")
            v = parse_number(m.group("n"))
            if v is None or not isinstance(v, int) or v < 2 or _blocked(text, s, e, after=False):
                continue
            if i != 0 and _LETTER_OR_COMPOUND.match(text, e):
                continue
            if i == 2:
                b, a = _clause(text, m.start(), m.end(), 60, 60)
                if not (_BOOT_WORD.search(b) or _BOOT_WORD.search(a) or _BOOT_WORD.search(m.group())):
                    continue
            out.append(_cand("bootstrap", v, m.start(), m.end(), [(s, e)]))
    return out


# folds ---------------------------------------------------------------------------------------------------------
_FOLD_PATS = [
    _c(rf"(?P<n>{NUMBER})(?:[-\u2010\u2011]|{_SP})?fold\b"),
    _c(r"\b(?P<w>two|three|four|five|six|seven|eight|nine|ten|twenty)fold\b"),
    _c(rf"(?P<n>{NUMBER})\s+(?:[\p{{L}}-]+\s+)?folds\b"),
    _c(r"(?<![\w])k\s*=\s*(?P<n>\d+)(?![.,]?\d)"),
]
_FOLD_NOT = _c(r"[\s-]*(?:[\p{L}-]+\s+)?(?:increase\w*|higher|lower|more|less|larger|smaller|greater|fewer|"
               r"reduc\w*|decreas\w*|improv\w*|faster|slower|speed-?ups?|differen\w*|changes?|rise|drop|gains?|"
               r"enrich\w*|magnif\w*|expan\w*|over-?sampl\w*|up-?sampl\w*|augment\w*|enlarg\w*|boost\w*|"
               r"excess|elevat\w*|accelerat\w*|upregulat\w*|downregulat\w*|symmetr\w*|axis|coverage)\b")
_FOLD_CTX_AFTER = _c(r"[\s-]*(?:[\p{L}-]+\s+){0,2}?(?:cross|cv\b|validat\w*|splits?\b|partition\w*|stratif\w*|"
                     r"nested|scheme|setting|setup|protocol|manner|fashion|way|experiments?|training|evaluation|"
                     r"ensembles?|models?|runs?|folds?)")
_FOLD_CTX = _c(r"cross[\s-]?validat|\bcv\b|\bfolds\b|\bk[\s-]fold")


_FOLD_WORD = _c(r"fold|cross[\s-]?valid")
_CV_AFTER = _c(r"(?:[\s-]+(?:stratified|nested|repeated))?[\s-]+(?:cross[\s-]?validation|cv)\b")


def _folds(text: str) -> list[_Cand]:
    out = []
    for i, pat in enumerate(_FOLD_PATS):
        for m in pat.finditer(text):
            g = "w" if i == 1 else "n"
            s, e = m.span(g)
            v = _WORD_VALUE[m.group("w").lower()] if i == 1 else parse_number(m.group("n"))
            if not isinstance(v, int) or not 2 <= v <= 1000:
                continue
            if i != 1 and _blocked(text, s, e, after=False):
                continue
            b, a = _clause(text, m.start(), m.end(), 120, 80)
            cv = _CV_AFTER.match(text, m.end()) if i in (0, 1) else None
            if i in (0, 1) and not cv:  # "a two-fold increase" is no cross-validation
                if _FOLD_NOT.match(a):
                    continue
                if not (_FOLD_CTX_AFTER.match(a) or _FOLD_CTX.search(b) or _FOLD_CTX.search(a)):
                    continue
            if i == 3 and not (_FOLD_WORD.search(b) or _FOLD_WORD.search(a)):
                continue
            end = cv.end() if cv else m.end()  # "cross-validation" belongs in the quote
            out.append(_cand("folds", v, m.start(), end, [(s, e)]))
    return out


# splits --------------------------------------------------------------------------------------------------------
_SPLIT_PATS = [
    (_c(rf"(?P<seq>{_P}(?:{_SP}?[/:]{_SP}?{_P}){{1,5}})"), "slash"),
    (_c(rf"(?P<seq>{_P}(?:{_SP}?[-\u2013]{_SP}?{_P}){{1,4}})"), "dash"),
    (_c(rf"(?P<seq>{DECIMAL}{_SP}?%(?:\s*,\s*{DECIMAL}{_SP}?%)*\s*,?\s*(?:and|&)\s*{DECIMAL}{_SP}?%)"), "list"),
]
_SPLIT_CTX = _c(r"\b(?:split\w*|partition\w*|divid\w*|division|train\w*|valid\w*|val|test\w*|dev|development|"
                r"held[-\s]?out|hold[-\s]?out|holdout|tuning)\b")


_SPLIT_WORDS = _WORDS_DATA.set("split-words")


def _date_like(vals: list, texts: list[str]) -> bool:
    if len(vals) == 3 and all(isinstance(v, int) for v in vals):
        a, b, c = vals
        if len(texts[2]) in (2, 4) and a <= 31 and b <= 31 and (a <= 12 or b <= 12):
            return True
        if len(texts[0]) == 4 and b <= 12 and c <= 31:
            return True
    return bool(vals) and all(isinstance(v, int) and len(t) == 4 and 1800 <= v <= 2100 for v, t in zip(vals, texts))


_NAME_AFTER = regexcache.compile(r"[\p{L}\p{N}]|[./]\w")
_NAME_BEFORE = regexcache.compile(r"[\p{L}\p{N}_.,/]$")


def _splits(text: str) -> list[_Cand]:
    out = []
    for pat, form in _SPLIT_PATS:
        for m in pat.finditer(text):
            s, e = m.span("seq")
            nums = [(x.start() + s, x.end() + s) for x in _DECIMAL_RE.finditer(m.group("seq"))]
            vals = [parse_number(text[a:b]) for a, b in nums]
            if len(vals) < 2 or any(v is None or v < 0 for v in vals):
                continue
            if _blocked(text, nums[0][0], nums[0][1], after=False):
                continue
            if _NAME_AFTER.match(text, e) or _NAME_BEFORE.search(text, max(0, s - 1), s):
                continue  # part of a name, a path or a URL
            total = sum(vals)  # type: ignore[arg-type]
            pct = "%" in m.group("seq") or 98 <= total <= 102
            frac = 0.98 <= total <= 1.02 and any(isinstance(v, float) for v in vals)
            b, a = _clause(text, s, e, 80, 50)
            ctx = bool(_SPLIT_CTX.search(b) or _SPLIT_CTX.search(a))
            noun = _noun_after(text, e)
            texts = [text[x:y] for x, y in nums]
            if form == "slash":
                sep_colon = ":" in m.group("seq")
                if len(vals) == 2 and not pct and not sep_colon and vals[0] < vals[1]:  # type: ignore[operator]
                    continue  # a fraction: "1/2 spacing", "3/4 of the cases"
                if sep_colon and not (ctx or (pct and not any(len(t) > 3 for t in texts))):
                    continue
                ok = ctx or frac or (pct and not _date_like(vals, texts)) or (noun is not None and len(vals) >= 3
                                                                            and not _date_like(vals, texts))
            elif form == "dash":
                ok = ctx and (pct or frac)
            else:
                ok = ctx and pct
            if not ok:
                continue
            end = e
            lemma = None
            if noun is not None and _known(noun[0]) and noun[0] not in _SPLIT_WORDS:
                lemma, end = noun
            out.append(_cand("split", [_num(v) for v in vals], s, end, nums, lemma))  # type: ignore[arg-type]
    return out


# tolerances ----------------------------------------------------------------------------------------------------
_TOL_CUE = _c(r"(?:\b(?:tolerances?|tolerated|tolerating|thresholds?|thresholded|tau|within|boundar(?:y|ies)|"
              r"borders?(?!-)|margins?(?!-)|cut-?offs?|radius|radii|nsd|surface[\s-]dice|surface[\s-]distance|"
              r"(?:maximum|max\.?|allowed|permitted|accepted|acceptable)\s+(?:allowed\s+|accepted\s+|permitted\s+)?"
              r"(?:distance|deviation|error|offset|displacement))\b|τ|@)")
_TOL_CUE_AFTER = _c(r"\s*(?:[\p{L}-]+\s+)?(?:tolerances?|thresholds?|margins?|boundar(?:y|ies)|cut-?offs?|radius)\b")
_TOL_NOT = _c(r"\b(?:isotropic|slices?|thick\w*|spacing|resolution|resampl\w*|in-plane|sizes?|diameters?|"
              r"lengths?|dimensions?|field|fov)\b")
_UNIT_ALONE = _c(rf"(?<![\p{{L}}\p{{N}}_])(?:{UNIT})|(?<=\d)(?:{UNIT})")
_VALUE_BEFORE_UNIT = _c(rf"(?P<v>{_VAL})(?:{_SP}|[-\u2010\u2011])?$")


def _quantities(text: str):
    """Every number followed by a unit, as (value start, value end, quantity start, quantity end, Quantity)."""
    for u in _UNIT_ALONE.finditer(text):
        if not u.group():
            continue
        v = _VALUE_BEFORE_UNIT.search(text, max(0, u.start() - 50), u.start())
        if not v:
            continue
        n = parse_number(v.group("v"))
        if n is not None:
            yield v.start("v"), v.end("v"), v.start(), u.end(), Quantity(n, _unit(u.group()))


_TOL_UNITLESS = _c(rf"(?:\btolerances?|τ|\btau\b)\s*(?:values?\s*)?"
                   rf"(?:(?:of|=|:|was|were|is|set|to|at|equal|equals)\s*){{0,3}}"
                   rf"(?P<v>{DECIMAL})(?!{_SP}?[-\u2010]?(?:{UNIT}|%))(?![.,]?\d)")
_LIST_BEFORE = _c(rf"(?:(?P<x>{DECIMAL})(?:{_SP}?(?:{UNIT}))?\s*(?:,\s*(?:and|or)?|\s+(?:and|or))\s*)+$")
_WORD_RE = _c(r"[\p{L}τ@][\p{L}\-']*|[τ@]")


_SYMMETRIC_BEFORE = _back(r"(?<![\d.]\s?)±\s?$")
_RANGE_TOP_BEFORE = _back(r"(?:\d\s?[-–−]\s?|\d\s+to\s+|\bbetween\s+\S+\s+and\s+)$")
_SIZE_AFTER = _c(rf"{_SP}?[×x*]{_SP}?\d")
_SIZE_BEFORE = _back(r"[×x*]\s*$")
_LIST_ITEM = _c(rf"(?P<x>{DECIMAL})(?:{_SP}?(?P<u>{UNIT}))?")


def _tolerances(text: str) -> list[_Cand]:
    out = []
    for s, e, qs, qe, q in _quantities(text):
        if q.unit == "%":
            continue
        if _blocked(text, s, e, after=False) and not _SYMMETRIC_BEFORE.search(text, max(0, s - 3), s):
            continue  # "±2 mm" stays a tolerance; "3×2 mm" and "ResNet-50 mm" do not
        if _RANGE_TOP_BEFORE.search(text, max(0, s - 30), s):
            continue  # the top of a range "3-5 mm"
        if _SIZE_AFTER.match(text, qe) or _SIZE_BEFORE.search(text, max(0, s - 3), s):
            continue  # a size "64mm×64mm"
        b, a = _clause(text, qs, qe, 70, 40)
        words = list(_WORD_RE.finditer(b))[-6:]
        cue_at = None
        if words:  # the cue nearest to the value, among the last few words
            for c in _TOL_CUE.finditer(b, words[0].start()):
                cue_at = c
        start, end = qs, qe
        between = b[cue_at.start():] if cue_at else ""
        after_cue = _TOL_CUE_AFTER.match(a)
        if after_cue and not _TOL_NOT.search(a[:after_cue.end()]):  # "a 2 mm tolerance"
            end = qe + after_cue.end()
        elif cue_at is not None and not _TOL_NOT.search(between) and not _TOL_NOT.match(a.lstrip()):
            start = qs - len(b) + cue_at.start()
        else:
            continue
        value: object = q
        nums = [(s, e)]
        lst = _LIST_BEFORE.search(text, start, qs) if start < qs else None
        if lst:  # "tolerances of 1, 2 and 4 mm": one fact with every value
            items = []
            for x in _LIST_ITEM.finditer(text, lst.start(), lst.end()):
                v = parse_number(x.group("x"))
                if v is not None:
                    items.append(Quantity(v, _unit(x.group("u")) if x.group("u") else q.unit))
                    nums.append(x.span("x"))
            if items:
                value = items + [q]
        out.append(_cand("tolerance", value, start, end, nums))
    for m in _TOL_UNITLESS.finditer(text):
        s, e = m.span("v")
        v = parse_number(m.group("v"))
        if v is None or _blocked(text, s, e, after=False) or _LETTER.match(text, e):
            continue
        out.append(_cand("tolerance", v, m.start(), m.end(), [(s, e)]))
    return out


# ranges --------------------------------------------------------------------------------------------------------
_RU = rf"(?:{_SP}?(?:{UNIT}|%))"
_DASHES = "-\u2010\u2011\u2012\u2013\u2014\u2212"
_RANGE_DASH = _c(rf"(?P<lo>{DECIMAL})(?P<lou>{_RU})?{_SP}?[{_DASHES}]{_SP}?(?P<hi>{DECIMAL})(?P<u>{_RU})?")
_RANGE_DASH_HINT = _c(rf"\d(?:{_SP}?\S{{1,3}})?{_SP}?[{_DASHES}]{_SP}?[-+\u2212]?\.?\d")
_RANGE_SEP = _c(r"\s+(?P<sep>to|or|and|&)\s+")
_LEFT_VALUE = _c(rf"(?P<lo>{_VAL})(?P<lou>{_RU})?$")
_RIGHT_VALUE = _c(rf"(?P<hi>{_VAL})(?P<u>{_RU})?")
_BETWEEN_BEFORE = _back(r"\bbetween\s+$")
_CHANGE_BEFORE = _back(r"\b(?:increas\w*|improv\w*|decreas\w*|reduc\w*|ris\w*|rose|fell|fall\w*|drop\w*|chang\w*|"
                    r"grew|grow\w*|went|boost\w*|rais\w*|declin\w*|jump\w*|climb\w*|ratio|compared)\b[^.;]*$")
_UP_BEFORE = _back(r"\bup\s*$")
_CITED_PAGES_BEFORE = _back(r"\d\s*(?:\(\d+\))?\s*,\s*$")
_CITED_PAGES_AFTER = _c(r"\s*(?:\(\s*(?:1[89]|20)\d\d\s*\)|[,.]\s*doi\b)")
_RANGE_TAIL_BAD = _c(r"[\p{L}\p{N}]|[-/:]\d|[.,]\d|\s*±")
_DATE_BEFORE = _back(r"\d[-/:.]$|[\d)]\s*:\s*$")


def _range_groups(text: str):
    """(start, end, groups) of every range-shaped pair: "3-5", "3 to 5 mm", "between 2 and 4", "2 or 3"."""
    if _RANGE_DASH_HINT.search(text):
        for m in _RANGE_DASH.finditer(text):
            yield m.start(), m.end(), "dash", {k: (m.group(k), m.span(k)) for k in ("lo", "lou", "hi", "u")}
    for sep in _RANGE_SEP.finditer(text):
        left = _LEFT_VALUE.search(text, max(0, sep.start() - 60), sep.start())
        right = _RIGHT_VALUE.match(text, sep.end())
        if not left or not right:
            continue
        word = sep.group("sep").lower()
        between = _BETWEEN_BEFORE.search(text, max(0, left.start() - 12), left.start())
        if (word in ("and", "&")) != bool(between):
            continue
        groups = {k: (left.group(k), left.span(k)) for k in ("lo", "lou")}
        groups |= {k: (right.group(k), right.span(k)) for k in ("hi", "u")}
        yield (between.start() if between else left.start()), right.end(), word, groups


class _Groups:
    """Just enough of a match object for _range_dict."""

    def __init__(self, groups):
        self.g = groups

    def group(self, k):
        return self.g[k][0]


def _ranges(text: str) -> list[_Cand]:
    out = []
    for start, end, form, groups in _range_groups(text):
        (ls, le), (hs, he) = groups["lo"][1], groups["hi"][1]
        r = _range_dict(_Groups(groups))
        if r is None or not r["low"] < r["high"]:
            continue
        if _blocked(text, ls, le, after=False):
            continue
        tail = text[end:end + 3]
        if _RANGE_TAIL_BAD.match(tail) and not tail[:1].isspace() or tail.lstrip().startswith("±"):
            continue
        if _DATE_BEFORE.search(text, max(0, ls - 6), ls):
            continue  # a date, or the pages of a cited article "38(1): 280-290"
        if _CITED_PAGES_BEFORE.search(text, max(0, ls - 12), ls) or _CITED_PAGES_AFTER.match(text[end:end + 12]):
            continue  # "Eye 6, 86-89 (1992)", "Radiology 38, 226-237, doi:"
        lo_t = text[ls:le]
        if _is_year(text, ls, le) or (_is_year(text, hs, he) and (len(lo_t) in (2, 4))):
            continue
        if _CITATION.search(text[max(0, ls - 30):ls]) and _CITATION_END.match(text[end:end + 30]):
            continue
        noun = None
        stop = end
        if "unit" not in r:
            na = _noun_after(text, end)
            if na:
                noun, stop = na
        if form in ("to", "or"):
            if form == "or" and (noun is None or not all(isinstance(r[k], int) for k in ("low", "high"))):
                continue
            b, _a = _clause(text, start, end, 50, 0)
            if _CHANGE_BEFORE.search(b) or _UP_BEFORE.search(b):
                continue
        out.append(_cand("range", r, start, stop, [(ls, le), (hs, he)], noun))
    return out


# percentages ---------------------------------------------------------------------------------------------------
_PCT_PAT = _c(rf"(?P<v>{_VAL}){_SP}?(?:%|(?:per{_SP}?cent|percent|pct)\b)")
_PCT_NOT_AFTER = _c(r"[\s-]*(?:ci\b|c\.i\.|confidence|credible|prediction|tolerance\s+interval|uncertainty\s+interval|"
                    r"bootstrap\w*\s+(?:confidence|interval|ci))")


_LAYOUT_BEFORE = _back(r"\b(?:width|height|max-width|min-width|size|scale|zoom|opacity)\s*[=:]\s*[\"']?$")


def _percentages(text: str) -> list[_Cand]:
    out = []
    for m in _PCT_PAT.finditer(text):
        s, e = m.span("v")
        v = parse_number(m.group("v"))
        if v is None or _blocked(text, s, e, after=False) or _PCT_NOT_AFTER.match(text[m.end():m.end() + 40]):
            continue
        if _LAYOUT_BEFORE.search(text[max(0, s - 20):s]):
            continue  # width="75%": page layout left in the text, not a reported figure
        out.append(_cand("percentage", Quantity(v, "%"), m.start(), m.end(), [(s, e)]))
    return out


# n = and counts ------------------------------------------------------------------------------------------------
_N_PAT = _c(rf"(?<![\w])n\s*=\s*(?P<n>{NUMBER})")
_NOUN_BEFORE_N = _back(r"(?P<w>\p{L}[\p{L}\-]*)\s*\(\s*$")
_COUNT_PAT = _c(NUMBER)
_UNIT_AFTER = _c(rf"(?:{_SP}?[-\u2010]?(?:{UNIT})|{_SP}?%|{_SP}?(?:per{_SP}?cent|percent)\b)")
_AND_BETWEEN = _c(r"\s*(?:,\s*(?:and\s+)?|,?\s+and\s+|\s*&\s*)$")


_LETTER = regexcache.compile(r"\p{L}")
_HEADING_AFTER = regexcache.compile(r"[.)]\s|\s+\p{Lu}\p{Ll}")


def _n_facts(text: str) -> list[_Cand]:
    out = []
    for m in _N_PAT.finditer(text):
        s, e = m.span("n")
        v = parse_number(m.group("n"))
        if not isinstance(v, int) or _blocked(text, s, e):
            continue
        noun = _noun_after(text, e, v)
        if noun:
            out.append(_cand("count", v, m.start(), noun[1], [(s, e)], noun[0], prio="n"))
            continue
        nb = _NOUN_BEFORE_N.search(text[max(0, m.start() - 40):m.start()])
        if nb and (_known(singular(nb.group("w"))) or _plural_looking(nb.group("w"))) \
                and nb.group("w").lower() not in _STOP:
            out.append(_cand("count", v, m.start(), m.end(), [(s, e)], singular(nb.group("w")), prio="n"))
        else:
            out.append(_cand("n", v, m.start(), m.end(), [(s, e)]))
    return out


def _counts(text: str) -> list[_Cand]:
    found: list[tuple[int, int, int, tuple[str, int] | None]] = []
    for m in _COUNT_PAT.finditer(text):
        s, e = m.span()
        t = m.group()
        v = parse_number(t)
        if v is None or isinstance(v, float) or v < 0:
            continue
        if _blocked(text, s, e) or _UNIT_AFTER.match(text[e:e + 12]):
            continue
        if t[0].isdigit() and not text[:s].strip() and _HEADING_AFTER.match(text, e):
            continue  # a list marker or a section number: "2 Methods", "1. Three readers"
        noun = _noun_after(text, e, v)
        if _is_year(text, s, e):
            raw = _WORD_TOKEN.match(text, e + 1) if text[e:e + 1] == " " else None
            if (_YEAR_WORDS.search(text[max(0, s - 12):s]) or noun is None or raw is None
                    or not _plural_looking(raw.group()) or not _known(noun[0])):
                continue
        found.append((s, e, v, noun))
    # "115 and 16 CT scans": a number followed by another joined with "and" counts the same thing
    for i in range(len(found) - 2, -1, -1):
        s, e, v, noun = found[i]
        ns, _ne, _nv, nnoun = found[i + 1]
        if noun is None and nnoun is not None and _AND_BETWEEN.match(text[e:ns]):
            found[i] = (s, e, v, (nnoun[0], e))
    out = []
    for s, e, v, noun in found:
        if noun is None:
            continue
        out.append(_cand("count", v, s, max(e, noun[1]), [(s, e)], noun[0]))
    return out


_DETECTORS = (_percentiles, _bootstrap, _folds, _splits, _tolerances, _ranges, _percentages, _n_facts, _counts)


_ANY_NUMBER = _c(rf"\d|\b(?:{_alt(_ONES + _TENS)}|hundred|thousand|million|dozen|single)\b|fold\b|percentile")
_ANY_PERCENT = _c(r"%|per\s?cent|pct")


def extract_facts(text: str) -> list[Fact]:
    """The generic facts one sentence (or a short passage) states, sorted by where they start.

    A number serves one fact: the more specific reading wins ("1,000 bootstrap samples" is a bootstrap size,
    not a count of samples; "95% Hausdorff distance" a percentile, not a percentage)."""
    return list(_facts_of(text))


@lru_cache(maxsize=4096)
def _facts_of(text: str) -> tuple[Fact, ...]:
    # verdicts, the consistency checks and the share checks all read the same sentences' facts
    if not text or not _ANY_NUMBER.search(text):
        return ()
    detectors = _DETECTORS if _ANY_PERCENT.search(text) else tuple(d for d in _DETECTORS if d is not _percentages)
    cands = [c for detect in detectors for c in detect(text)]
    cands.sort(key=lambda c: (c.prio, c.start, -(c.end - c.start)))
    used: list[tuple[int, int]] = []
    kept: list[_Cand] = []
    for c in cands:
        if any(a < y and x < b for a, b in c.nums for x, y in used):
            continue
        if any(k.kind == c.kind and c.start < k.end and k.start < c.end for k in kept):
            continue
        kept.append(c)
        used.extend(c.nums)
    kept.sort(key=lambda c: (c.start, c.end, c.prio))
    return tuple(Fact(c.kind, c.value, text[c.start:c.end], c.start, c.end, c.noun) for c in kept)
