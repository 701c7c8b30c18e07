"""The counts, shares and split ratios a document states ("312 patients in the test set", "300 (75%)", "70/15/15"),
read once per document for the consistency checks."""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Iterable

import regex

from ..matching.checklist import may_match
from .wording import (
    ANNOTATES_AFTER, ANNOTATION_CONTEXT, ANNOTATOR_UNITS, APPROX_BEFORE, BREAKDOWN_AFTER, BY_BEFORE, CASE_UNITS,
    CHAIN, LIST_NAMES_FIRST, LIST_NUMS_FIRST, LIST_STOP, METHOD_AFTER, METHOD_BEFORE, METHOD_SUBSET, METHOD_UNITS,
    N_SITE, NEUTRAL_QUALIFIERS, PART_BEFORE, PART_PRE, PLAN, PROFESSION, SHARE, SHARE_AFTER, SHARE_OF,
    SHARE_OF_AFTER, SINGLE_SITE, SITE_SUBSET, SITE_UNITS, SKIP_ROLES, SPLIT_ANCHOR_AFTER, SPLIT_ANCHOR_BEFORE,
    split_of, SPLIT_PAREN, SPLIT_WORD, STATEMENT_VERBS, STUDY_OF_READERS, SUBSET_AFTER, SUBSET_WORDS, TOTAL_AFTER,
    TOTAL_ANCHOR_BEFORE, VERB_AFTER,
)

if TYPE_CHECKING:
    from ..matching.matcher import Scan


@dataclass(frozen=True)
class Statement:
    """A number the document states for a quantity that should be the same wherever it is stated."""

    quantity: str  # cases | annotators | sites | methods
    unit: str  # unit group ("patient", "image", "radiologist"...); "" when the text gives none
    split: str  # training | validation | development | test | external | total | "" (no split)
    value: int
    sentence: int
    start: int
    end: int
    text: str


@dataclass(frozen=True)
class Share:
    """A percentage stated next to a count: "38 (38%)", "300 patients (70%)", "81/263 (30.8%)"."""

    count: int
    percent: float
    decimals: int
    sentence: int
    start: int
    end: int
    #: the base stated with it ("of 263"), or None when it has to be found in the context
    base: int | None = None
    statement: Statement | None = None
    #: counts of cases stated before it in the same sentence ("Of the 400 patients, 300 (75%)..."): bases to try
    context: tuple[tuple[int, str], ...] = ()


@dataclass(frozen=True)
class Ratio:
    """Split proportions: "70/15/15", "7:1:2", "75-25 train-test split", with the splits they name in order."""

    parts: tuple[float, ...]
    splits: tuple[str, ...]
    percent: bool
    sentence: int
    start: int
    end: int


@dataclass
class DocumentNumbers:
    statements: list[Statement] = field(default_factory=list)
    shares: list[Share] = field(default_factory=list)
    ratios: list[Ratio] = field(default_factory=list)


def _unit_of(noun: str | None) -> tuple[str, str] | None:
    if not noun:
        return None
    n = noun.lower()
    last = n.split("-")[-1]
    for table, quantity in ((CASE_UNITS, "cases"), (ANNOTATOR_UNITS, "annotators"), (SITE_UNITS, "sites"),
                            (METHOD_UNITS, "methods")):
        if n in table:
            return quantity, table[n]
        if last in table:
            return quantity, table[last]
    if PROFESSION.search(last):
        return "annotators", last
    return None


def splits_named(text: str) -> list[tuple[str, int, int]]:
    out = []
    for m in SPLIT_WORD.finditer(text):
        name = split_of(m.group("split"))
        if name:
            out.append((name, m.start(), m.end()))
    return out


def _one_split(text: str) -> str:
    names = {n for n, _, _ in splits_named(text)}
    return names.pop() if len(names) == 1 else ""


def extract_numbers(scan: "Scan") -> DocumentNumbers:
    """Every count, share and split ratio the document states that the consistency checks compare."""
    from ..matching.facts import extract_facts, parse_number

    out = DocumentNumbers()
    for si, sent in enumerate(scan.sentences):
        if sent.role in SKIP_ROLES or sent.kind in ("heading", "table-row"):
            continue
        text = sent.text
        folded = text.casefold()
        if may_match(PLAN, folded) and PLAN.search(text):
            continue
        facts = extract_facts(text)
        stmts: list[Statement] = []
        for f in facts:
            if f.kind == "count" and isinstance(f.value, int):
                st = _statement(text, si, f, stmts)
                if st is not None:
                    stmts.append(st)
            elif f.kind == "split" and isinstance(f.value, list):
                _split_fact(text, si, f, stmts, out.ratios)
        for m in SPLIT_PAREN.finditer(text) if may_match(SPLIT_PAREN, folded) else ():
            # "training (1,700), validation (168) and test (100)"
            v = parse_number(m.group("n"))
            if not isinstance(v, int) or any(s.start <= m.start("n") < s.end for s in stmts):
                continue
            unit = _unit_of(_singular(m.group("noun"))) if m.group("noun") else None
            if m.group("noun") and (unit is None or unit[0] != "cases"):
                continue
            stmts.append(Statement("cases", unit[1] if unit else "", split_of(m.group("split")), v, si,
                                   m.start(), m.end(), m.group()))
        if may_match(LIST_NAMES_FIRST, folded) or may_match(LIST_NUMS_FIRST, folded):
            stmts += _split_lists(text, si, stmts)
        if may_match(SINGLE_SITE, folded) or may_match(N_SITE, folded):
            stmts += _site_words(text, si, stmts)
        out.statements += stmts
        out.shares += _shares(text, si, stmts)
    return out


def _singular(word: str) -> str:
    from ..matching.facts import singular

    return singular(word)


def _statement(text: str, si: int, f, previous: list[Statement]) -> Statement | None:
    unit = _unit_of(f.noun)
    if unit is None:
        return None
    quantity, group = unit
    value = f.value
    before, after = text[max(0, f.start - 120):f.start], text[f.end:f.end + 120]
    modifiers = [w.lower() for w in regex.findall(r"[\w-]+", text[f.start:f.end])[1:-1]]
    if APPROX_BEFORE.search(before):
        return None
    if quantity == "cases":
        return _case_statement(text, si, f, group, before, after, modifiers, previous)
    if any(len(w) > 4 and w.endswith("est") for w in modifiers):
        return None  # "the three largest hospitals", "the two fastest methods": a part
    if quantity == "annotators":
        if PART_BEFORE.search(before) or value < 1 or STUDY_OF_READERS.search(text):
            return None
        if not ANNOTATION_CONTEXT.search(text) and group not in ("annotator",):
            return None
        # who made the reference: "segmented by two annotators", "three experts independently outlined";
        # "two radiologists had ten years of experience" says something about some of them
        if not (BY_BEFORE.search(before) or ANNOTATES_AFTER.match(after)):
            return None
        if group in ("expert", "reader", "annotator") or PROFESSION.search(group):
            return Statement("annotators", group, _one_split(text), value, si, f.start, f.end, f.text)
        return None
    if quantity == "sites":
        if PART_BEFORE.search(before) or any(w in SITE_SUBSET for w in modifiers) or value < 1:
            return None
        split = next((split_of(w) for w in modifiers if split_of(w)), None)
        if split is None:
            # "scans from three hospitals were used for training": the sites of one split
            names = {n for n, _, _ in splits_named(text)}
            if len(names) > 1:
                return None
            split = names.pop() if names else ""
        return Statement("sites", "site", split, value, si, f.start, f.end, f.text)
    if quantity == "methods":
        if value < 2 or any(w in METHOD_SUBSET for w in modifiers):
            return None
        if not (METHOD_BEFORE.search(before) or METHOD_AFTER.search(after)):
            return None
        if regex.search(r"\b(?:the|these|all)\s+$", before) and not METHOD_AFTER.search(after) \
                and not regex.search(r"(?:compar\w*|benchmark\w*|rank\w*|evaluat\w*|assess\w*|of)\s+"
                                     r"(?:the|all|these)\s+$", before):
            return None
        return Statement("methods", group, "", value, si, f.start, f.end, f.text)
    return None


def _case_statement(text: str, si: int, f, group: str, before: str, after: str, modifiers: list[str],
                    previous: list[Statement]) -> Statement | None:
    split = ""
    mod_split = [split_of(w) for w in modifiers if split_of(w)]
    if any(w in SUBSET_WORDS for w in modifiers) or any(w.endswith(("-positive", "-negative")) for w in modifiers):
        return None
    chained = None
    if previous:
        last = previous[-1]
        if last.quantity == "cases" and last.split and CHAIN.match(text[last.end:f.start]):
            chained = last.split
    m = SPLIT_ANCHOR_BEFORE.search(before)
    ma = SPLIT_ANCHOR_AFTER.match(after)
    mt = TOTAL_ANCHOR_BEFORE.search(before)
    if mod_split:
        split = mod_split[-1]
        # "Sixty-one test patients were imaged on system A and 39 on system B": a breakdown, not the test set
        verb = VERB_AFTER.match(after)
        if verb and verb.group("verb") not in STATEMENT_VERBS:
            return None
        if BREAKDOWN_AFTER.match(after) or SUBSET_AFTER.match(after):
            return None
    elif m:
        split = _qualified(m.group("qual"), m.group("split"))
        if SUBSET_AFTER.match(after) and not regex.match(r"^\s*(?:,\s*)?with\s+\d|^\s*,", after):
            return None  # "the test set contains 50 cases with a fracture": a part of the test set
    elif ma:
        split = split_of(ma.group("split"))
    elif chained:
        split = chained
    elif mt and _total_pre_ok(mt.group("pre")):
        split = "total"
        if SUBSET_AFTER.match(after) and not regex.match(r"^\s*with\s+\d", after):
            return None
    elif TOTAL_AFTER.match(after):
        split = "total"
    if not split:
        return None
    if BREAKDOWN_AFTER.match(after) and split != "total" and not m and not chained:
        return None
    return Statement("cases", group, split, f.value, si, f.start, f.end, f.text)


def _qualified(qual: str | None, split_word: str) -> str:
    """The split a phrase names; a qualifier such as "public" or "preliminary" makes it a split of its own
    ("test:preliminary"), so that its size is not compared with the study's test set."""
    split = split_of(split_word)
    if not qual:
        return split
    joined = split_of(f"{qual} {split_word}")
    if joined:
        return joined
    q = qual.lower()
    if q in NEUTRAL_QUALIFIERS or split_of(q) or q.isdigit():
        return split
    return f"{split}:{q}"


def _total_pre_ok(word: str | None) -> bool:
    """Whether the word before "dataset" leaves it the whole collection ("the final cohort", "a classification
    dataset"), not a part of it ("the preliminary scoring dataset", "a test dataset")."""
    if not word:
        return True
    return not split_of(word) and word.lower() not in PART_PRE and word.lower() not in SUBSET_WORDS


def _split_fact(text: str, si: int, f, stmts: list[Statement], ratios: list[Ratio]) -> None:
    vals = [float(v) for v in f.value]
    if not vals or any(v < 0 for v in vals):
        return
    b = text[max(0, f.start - 100):f.start]
    a = text[f.end:f.end + 100]
    if regex.search(r"\b(?:about|approximately|approx\.?|around|roughly|nearly|~|≈)\s*$", b) or \
            regex.search(r"\b(?:approximate(?:ly)?|about|roughly)\b", b[-40:]):
        return
    # the split names nearest to the numbers: "75-25 train-test split", "training/validation/test set of 1,188/98/298"
    order: list[str] = []
    for window in (a[:50], b[-60:], b[-60:] + " " + a[:60]):
        order = list(dict.fromkeys(n for n, _, _ in splits_named(window) if n != "external"))
        if len(order) == len(f.value):
            break
    noun = f.noun
    tail = f.text[max(i for i, c in enumerate(f.text) if c.isdigit()) + 1:] if any(c.isdigit() for c in f.text) else ""
    if noun and regex.search(r"\b(?:on|at|in|per|of|a|an|the|by|for|with)\b", tail, regex.IGNORECASE):
        noun = None  # "1,188/98/298 on a patient level": the split's level, not what it counts
    total = sum(vals)
    pct = "%" in f.text or 98 <= total <= 102
    frac = 0.98 <= total <= 1.02 and any(v < 1 for v in vals)
    small = all(v == int(v) and v <= 10 for v in vals) and total <= 20 and len(vals) <= 4
    if (pct or frac or small) and not (noun and _unit_of(noun)):
        if len(order) == len(vals):
            parts = tuple(v * 100 / total for v in vals) if frac else tuple(vals)
            ratios.append(Ratio(parts, tuple(order), pct or frac, si, f.start, f.end))
        return
    if len(order) != len(vals) or any(v != int(v) for v in vals):
        return
    unit = _unit_of(noun)
    if noun and (unit is None or unit[0] != "cases"):
        return
    for v, name in zip(vals, order):
        stmts.append(Statement("cases", unit[1] if unit else "", name, int(v), si, f.start, f.end, f.text))


def _split_lists(text: str, si: int, stmts: list[Statement]) -> list[Statement]:
    """Sizes listed in the order of the splits they belong to, in either order of the two lists."""
    from ..matching.facts import NUMBER, parse_number

    out: list[Statement] = []
    for rx in (LIST_NAMES_FIRST, LIST_NUMS_FIRST):
        for m in rx.finditer(text):
            if any(s.start == m.start("nums") for s in out):
                continue  # both list forms read the same list
            names = [split_of(w.group("split")) for w in SPLIT_WORD.finditer(m.group("names"))]
            nums = [parse_number(x.group()) for x in regex.finditer(NUMBER, m.group("nums"))]
            if len(names) != len(nums) or len(set(names)) != len(names) or not all(isinstance(v, int) for v in nums):
                continue
            unit = None
            if m.group("noun"):
                for w in m.group("noun").split():
                    if w.lower() in LIST_STOP:
                        break  # "1,188/98/298 on a patient level": what follows is no counted noun
                    unit = unit or _unit_of(_singular(w))
                if unit is not None and unit[0] != "cases":
                    continue
            # drop what the count facts already took from this list: the list says which split each is
            stmts[:] = [s for s in stmts if not (m.start("nums") <= s.start < m.end("nums"))]
            for name, v in zip(names, nums):
                out.append(Statement("cases", unit[1] if unit else "", name, v, si, m.start("nums"), m.end("nums"),
                                     m.group("nums") + (f" {m.group('noun')}" if m.group("noun") else "")))
    return out


def _site_words(text: str, si: int, stmts: list[Statement]) -> list[Statement]:
    """"single-centre", "a two-centre study": site counts written as one word."""
    out = []
    for m in SINGLE_SITE.finditer(text):
        if not any(s.start <= m.start() < s.end for s in stmts):
            out.append(Statement("sites", "site", "", 1, si, m.start(), m.end(), m.group()))
    for m in N_SITE.finditer(text):
        from ..matching.facts import parse_number

        v = parse_number(m.group("n"))
        # at most 99, as a two-digit count: "a 2020-site" is a year's, not a count
        if isinstance(v, int) and 2 <= v <= 99 and not any(s.start <= m.start() < s.end for s in stmts):
            out.append(Statement("sites", "site", "", v, si, m.start(), m.end(), m.group()))
    return out


def _decimals(p: str) -> int:
    return len(p.split(".")[1]) if "." in p else 0


def _shares(text: str, si: int, stmts: list[Statement]) -> list[Share]:
    from ..matching.facts import parse_number

    from ..matching.facts import extract_facts

    counts = [f for f in extract_facts(text) if f.kind == "count"]
    out: list[Share] = []
    taken: list[tuple[int, int]] = []
    for rx, explicit in ((SHARE_OF, True), (SHARE_OF_AFTER, True), (SHARE, False), (SHARE_AFTER, False)):
        for m in rx.finditer(text):
            if any(a < m.end() and m.start() < b for a, b in taken):
                continue
            n = parse_number(m.group("n"))
            p = parse_number(m.group("p"))
            if not isinstance(n, int) or p is None or not 0 <= p <= 100:
                continue
            if regex.match(r"^\s*(?:ci|confidence|credible)", text[m.end():m.end() + 15], regex.IGNORECASE):
                continue
            base = parse_number(m.group("m")) if explicit else None
            if explicit and (not isinstance(base, int) or base <= 0):
                continue
            st = next((s for s in stmts if s.start <= m.start("n") < s.end), None)
            taken.append((m.start(), m.end()))
            context = tuple((f.value, f.text) for f in counts if f.end <= m.start() and isinstance(f.value, int)
                            and (_unit_of(f.noun) or ("", ""))[0] == "cases")
            out.append(Share(n, float(p), _decimals(m.group("p")), si, m.start(), m.end(), base, st, context))
    return out


@dataclass
class RunContext:
    scan: "Scan"
    _numbers: DocumentNumbers | None = None

    @property
    def numbers(self) -> DocumentNumbers:
        if self._numbers is None:
            self._numbers = extract_numbers(self.scan)
        return self._numbers


def combos(options: list[list[Statement]], limit: int = 64) -> Iterable[tuple[Statement, ...]]:
    return itertools.islice(itertools.product(*options), limit)


def distinct_values(sts: list[Statement]) -> list[Statement]:
    out: dict[int, Statement] = {}
    for s in sorted(sts, key=lambda s: (s.sentence, s.start)):
        out.setdefault(s.value, s)
    return list(out.values())[:6]
