"""Percentages beside counts, and split ratios, that the counts do not give."""

from __future__ import annotations

from typing import TYPE_CHECKING

import math

import regex

from ..verdicts.report import Finding

from .model import MAX_EVIDENCE, Rule
from .evidence import fill, make_finding, passage_evidence, statement_evidence, where_of
from .wording import TOTAL_ANCHOR_BEFORE
from .numbers import combos, distinct_values, DocumentNumbers, RunContext, splits_named, Statement

if TYPE_CHECKING:
    from ..matching.matcher import Scan


def _matches_share(count: int, base: int, percent: float, decimals: int) -> bool:
    if base <= 0:
        return False
    actual = 100 * count / base
    unit = 10 ** -decimals
    rounded = math.floor(actual / unit + 0.5 + 1e-9) * unit
    truncated = math.floor(actual / unit + 1e-9) * unit
    return abs(rounded - percent) < unit / 2 or abs(truncated - percent) < unit / 2


def check_split_percentages(scan: "Scan", rule: Rule, ctx: RunContext) -> list[Finding]:
    """Percentages next to counts, and split ratios, that the counts do not give."""
    nums = ctx.numbers
    findings: list[Finding] = []
    mismatches: list[tuple[int, str, list[tuple[int, int]], Statement | None]] = []
    by_split: dict[str, list[Statement]] = {}
    for st in nums.statements:
        if st.quantity == "cases" and st.split:
            by_split.setdefault(st.split, []).append(st)
    for sh in nums.shares:
        sent = scan.sentences[sh.sentence]
        text = sent.text
        bases: list[tuple[int, str, Statement | None]] = []
        if sh.base is not None:
            bases.append((sh.base, f"{sh.count:,} of {sh.base:,}", None))
        else:
            st = sh.statement
            if st is not None and st.split in ("training", "validation", "test", "development"):
                for t in by_split.get("total", []):
                    if not st.unit or not t.unit or t.unit == st.unit:
                        bases.append((t.value, f"{sh.count:,} of {t.value:,} {t.unit or ''}".strip() + "s"
                                      if t.unit else f"{sh.count:,} of {t.value:,}", t))
                if st.split in ("training", "validation"):
                    for t in by_split.get("development", []):
                        bases.append((t.value, f"{sh.count:,} of {t.value:,}", t))
            elif st is None:
                named = {n for n, _, _ in splits_named(text)}
                if TOTAL_ANCHOR_BEFORE.search(text[:sh.start]) or regex.search(
                        r"\b(?:cohort|dataset|data\s+set|total)\b", text, regex.IGNORECASE):
                    named.add("total")
                if not named and not sh.context:
                    continue
                for value, ctext in sh.context:  # "Of the 400 patients, 300 (75%) ..."
                    bases.append((value, f"{sh.count:,} of {' '.join(ctext.split())}", None))
                for n in sorted(named):
                    for s in by_split.get(n, []):
                        bases.append((s.value, f"{sh.count:,} of {' '.join(s.text.split())}", s))
        bases = [b for b in bases if b[0] >= sh.count]
        if not bases:
            continue
        if any(_matches_share(sh.count, b, sh.percent, sh.decimals) for b, _, _ in bases):
            continue
        base, base_text, base_st = bases[0]
        computed = 100 * sh.count / base
        wrong = (f"{_fmt_pct(sh.percent, sh.decimals)} for {sh.count:,}, but {base_text} is "
                 f"{computed:.{max(1, sh.decimals)}f}%")
        spans = [(sh.start, sh.end)]
        extra = base_st if base_st is not None and base_st.sentence != sh.sentence else None
        mismatches.append((sh.sentence, wrong, spans, extra))
    mismatches += _ratio_mismatches(scan, nums, by_split)
    # one finding per sentence, however many of its percentages disagree
    by_sentence: dict[int, list[tuple[int, str, list[tuple[int, int]], Statement | None]]] = {}
    for m in mismatches:
        by_sentence.setdefault(m[0], []).append(m)
    for si in sorted(by_sentence):
        ms = by_sentence[si]
        evidence = [passage_evidence(scan, si, [sp for m in ms for sp in m[2]], "share")]
        for _, _, _, st in ms:
            if st is not None and all(e.text != scan.sentences[st.sentence].text.strip() for e in evidence):
                evidence.append(statement_evidence(scan, st, "count"))
        msg = fill(rule.message, {"where": where_of(scan.sentences[si].location),
                                  "mismatches": "; ".join(m[1] for m in ms)})
        findings.append(make_finding(rule, msg, evidence[:MAX_EVIDENCE]))
    return findings


def _fmt_pct(p: float, decimals: int) -> str:
    return f"{p:.{decimals}f}%"


def _ratio_mismatches(scan: "Scan", nums: DocumentNumbers, by_split: dict[str, list[Statement]]
                      ) -> list[tuple[int, str, list[tuple[int, int]], Statement | None]]:
    out = []
    for r in nums.ratios:
        units = sorted({s.unit for sp in r.splits for s in by_split.get(sp, [])})
        stated_total = sum(r.parts)
        checked = fits = False
        shown: tuple[Statement, ...] | None = None
        for unit in units:
            options = [[s for s in distinct_values(by_split.get(sp, [])) if s.unit == unit] for sp in r.splits]
            if any(not o for o in options):
                continue
            for combo in combos(options):
                total = sum(s.value for s in combo)
                if total <= 0:
                    continue
                checked = True
                shown = shown or combo
                # a ratio in whole percent holds within one point, "7:1:2" within half a unit of the ratio;
                # both also within one case, since splits are made of whole patients
                tol = (1.0 if r.percent else 50.0 / stated_total) + 100.0 / total + 1e-9
                if all(abs(100 * s.value / total - 100 * p / stated_total) <= tol for s, p in zip(combo, r.parts)):
                    fits = True
                    break
            if fits:
                break
        if not checked or fits or shown is None:
            continue
        total = sum(s.value for s in shown)
        share = "/".join(_trim_num(p) for p in r.parts) + ("%" if r.percent else "")
        computed = "/".join(f"{100 * s.value / total:.1f}" for s in shown) + "%"
        parts = " + ".join(f"{s.value:,} {s.split}" for s in shown)
        wrong = f"a {share} split of {' / '.join(r.splits)}, but {parts} is {computed}"
        away = next((s for s in shown if s.sentence != r.sentence), None)
        out.append((r.sentence, wrong, [(r.start, r.end)], away))
    return out


def _trim_num(v: float) -> str:
    return str(int(v)) if v == int(v) else f"{v:g}"
