"""Split sizes that do not add up to the stated total, in prose or in a table's Total row."""

from __future__ import annotations

from typing import TYPE_CHECKING

import regex

from ..verdicts.report import Evidence, Finding

from .model import MAX_EVIDENCE, Rule
from .evidence import fill, make_finding, plural, statement_evidence, where_of
from .numbers import combos, distinct_values, RunContext, Statement

if TYPE_CHECKING:
    from ..matching.matcher import Scan


def check_split_sums(scan: "Scan", rule: Rule, ctx: RunContext) -> list[Finding]:
    """Split sizes that do not add up to the total stated for the same unit, in prose or in a table."""
    by: dict[tuple[str, str], list[Statement]] = {}
    for st in ctx.numbers.statements:
        if st.quantity == "cases":
            by.setdefault((st.unit, st.split), []).append(st)
    units = sorted({u for u, s in by if u})
    findings: list[Finding] = []
    for unit in units + [""]:
        totals = by.get((unit, "total"), []) if unit else [s for u in units for s in by.get((u, "total"), [])]
        if not totals:
            continue
        opts = {sp: distinct_values(by.get((unit, sp), []))
                for sp in ("training", "validation", "development", "test")}
        layouts = []
        if opts["training"] and opts["test"]:
            layouts.append(("training", "validation", "test") if opts["validation"] else ("training", "test"))
            if opts["validation"]:
                layouts.append(("training", "test"))  # validation carved out of training
        if opts["development"] and opts["test"]:
            layouts.append(("development", "test"))
        if opts["training"] and opts["validation"]:
            layouts.append(("training", "validation"))  # a test set counted apart from the total
        if not layouts:
            continue
        sums: list[tuple[int, tuple[Statement, ...]]] = []
        for layout in layouts:
            for combo in combos([opts[sp] for sp in layout]):
                sums.append((sum(s.value for s in combo), combo))
        total_values = distinct_values(totals)
        if any(t.value == s for t in total_values for s, _ in sums):
            continue
        # the full layout (every split named) is the one to show
        full = max(layouts, key=len)
        combo = next(iter(combos([opts[sp] for sp in full])))
        total = _nearest_total(total_values, sum(s.value for s in combo))
        if total is None:
            continue
        s_sum = sum(s.value for s in combo)
        if not total.value / 2 <= s_sum <= total.value * 2:
            continue  # splits of a part of a larger collection, or a "total" of something else
        # the counted noun as the document writes it ("radiographs"), else the unit's name
        written = total.text.split()[-1] if total.text.split()[-1].isalpha() else ""
        unit_word = written if unit and written else (plural(unit) if unit else "cases")
        parts = " + ".join(f"{s.value:,} {s.split}" for s in combo)
        evidence = [statement_evidence(scan, total, "total")]
        for s in combo:
            sent = scan.sentences[s.sentence]
            if not any(e.location == sent.location and e.text == sent.text.strip() for e in evidence):
                evidence.append(statement_evidence(scan, s, "split"))
        msg = fill(rule.message, {"sum": f"{s_sum:,}", "unit": unit_word, "parts": parts,
                                  "total": " ".join(total.text.split()),
                                  "total_where": where_of(scan.sentences[total.sentence].location)})
        findings.append(make_finding(rule, msg, evidence[:MAX_EVIDENCE]))
    findings += _table_sums(scan, rule)
    return findings


def _nearest_total(totals: list[Statement], value: int) -> Statement | None:
    if not totals:
        return None
    return min(totals, key=lambda t: (abs(t.value - value), t.sentence))


_CELL_NUMBER = regex.compile(r"^\s*(?P<a>\d{1,3}(?:,\d{3})+|\d+)\s*(?:\(\s*(?P<b>\d{1,3}(?:,\d{3})+|\d+)\s*\))?\s*$")


_TOTAL_LABEL = regex.compile(r"^\s*(?:\*\*)?(?:total|all|overall|sum|all\s+sites|all\s+centres|all\s+centers)\b",
                             regex.IGNORECASE)


_COLUMN_NOT_COUNT = regex.compile(r"%|\b(?:mean|median|sd|std|age|years?|rate|score|dice|auc|accuracy|ratio|"
                                  r"percent|percentage|proportion|range|iqr|min|max|period|date)\b", regex.IGNORECASE)


def _table_sums(scan: "Scan", rule: Rule) -> list[Finding]:
    """A table row labelled Total whose counts are not the sums of the rows above it."""
    doc = scan.document
    tables: dict[int, list[int]] = {}
    for bi, b in enumerate(doc.blocks):
        if b.kind == "table-row" and b.cells and b.role != "references" and b.location.table is not None:
            tables.setdefault(b.location.table, []).append(bi)
    findings = []
    for tid in sorted(tables):
        rows = tables[tid]
        if len(rows) < 3:
            continue
        header = doc.blocks[rows[0]].cells
        start = 1
        for ri in range(1, len(rows)):
            cells = doc.blocks[rows[ri]].cells
            if not _TOTAL_LABEL.match(cells[0]):
                continue
            total_nums = _trailing_numbers(cells)
            body = [_trailing_numbers(doc.blocks[r].cells) for r in rows[start:ri]]
            start = ri + 1
            k = len(total_nums)
            if not k or not body or any(len(b) < k for b in body):
                continue
            heads = header[-k:] if len(header) >= k else [""] * k
            for j in range(k):
                if _COLUMN_NOT_COUNT.search(heads[j]):
                    continue
                col = [b[len(b) - k + j] for b in body]
                for part, label in ((0, ""), (1, " (in parentheses)")):
                    vals = [c[part] for c in col]
                    want = total_nums[j][part]
                    if want is None or any(v is None for v in vals):
                        continue
                    got = sum(vals)  # type: ignore[arg-type]
                    if got != want:
                        block = doc.blocks[rows[ri]]
                        ev = [Evidence(block.text.strip(), block.location, 1.0, (), ("total",)),
                              Evidence(doc.blocks[rows[0]].text.strip(), doc.blocks[rows[0]].location, 1.0, (),
                                       ("header",))]
                        column = heads[j] or f"column {len(header) - k + j + 1}"
                        msg = fill(rule.message, {
                            "sum": f"{got:,}", "unit": f"in column {column}{label}",
                            "parts": " + ".join(f"{v:,}" for v in vals),
                            "total": f"{want:,}", "total_where": where_of(block.location),
                        })
                        findings.append(make_finding(rule, msg, ev))
    return findings


def _trailing_numbers(cells: tuple[str, ...]) -> list[tuple[int | None, int | None]]:
    out: list[tuple[int | None, int | None]] = []
    for c in reversed(cells[1:]):
        m = _CELL_NUMBER.match(c)
        if not m:
            break
        a = int(m.group("a").replace(",", ""))
        b = int(m.group("b").replace(",", "")) if m.group("b") else None
        out.append((a, b))
    return list(reversed(out))
