"""What every rule's finding is made of: the passages it quotes, the places it names and its message filled in."""

from __future__ import annotations

from typing import TYPE_CHECKING, Iterable

from ..verdicts.report import Evidence, Finding

from .model import placeholders, Rule
from .numbers import Statement

if TYPE_CHECKING:
    from ..reading.document import Location
    from ..matching.matcher import Scan


def _trim(text: str, spans: Iterable[tuple[int, int]]) -> tuple[str, tuple[tuple[int, int], ...]]:
    lead = len(text) - len(text.lstrip())
    t = text.strip()
    out = []
    for s, e in sorted(spans):
        s, e = max(0, s - lead), min(len(t), e - lead)
        if e > s:
            if out and s <= out[-1][1]:
                out[-1] = (out[-1][0], max(out[-1][1], e))
            else:
                out.append((s, e))
    return t, tuple(out)


def passage_evidence(scan: "Scan", si: int, spans: Iterable[tuple[int, int]], part: str) -> Evidence:
    sent = scan.sentences[si]
    text, matches = _trim(sent.text, spans)
    return Evidence(text, sent.location, round(scan.weight(si), 3), matches, (part,))


def where_of(location: "Location") -> str:
    return location.describe()


def make_finding(rule: Rule, message: str, evidence: list[Evidence]) -> Finding:
    return Finding(rule.id, rule.title, rule.severity, message, tuple(evidence), rule.sources)


def fill(template: str, values: dict[str, object]) -> str:
    return template.format_map({k: values.get(k, "") for k in placeholders(template) or []})


def evidence_order(scan: "Scan", ev: Evidence) -> tuple[int, int]:
    loc = ev.location
    return (loc.page or 0, loc.line or loc.paragraph or 0)


def plural(unit: str) -> str:
    return unit if unit.endswith(("s", "series")) else unit + ("es" if unit.endswith(("ch", "sh", "x")) else "s")


def statement_evidence(scan: "Scan", st: Statement, part: str) -> Evidence:
    return passage_evidence(scan, st.sentence, [(st.start, st.end)], part)


def quoted(text: str) -> str:
    """A stated count as it reads inside a sentence: "Two radiologists" -> "two radiologists"."""
    t = " ".join(text.split())
    return t[0].lower() + t[1:] if t[:1].isupper() and not t[1:2].isupper() else t
