"""The Report: every item's status, evidence and facts for one document; what all renderers read."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..reading.document import Location
from ..core.cautions import CAUTIONS
from ..core.status import STATUS_ORDER
from ..matching.fact import Fact




@dataclass(frozen=True)
class Evidence:
    text: str
    location: Location
    score: float
    #: character spans (start, end) in `text` of the words that matched
    matches: tuple[tuple[int, int], ...] = ()
    facets: tuple[str, ...] = ()
    #: whose statement the passage is (this-study, other-work, background, plan, template; see attribution.py)
    attribution: str = "this-study"

    def to_dict(self) -> dict[str, Any]:
        return {
            "text": self.text,
            "location": self.location.to_dict(),
            "score": round(self.score, 3),
            "matches": [list(m) for m in self.matches],
            "facets": list(self.facets),
            "attribution": self.attribution,
        }


@dataclass(frozen=True)
class FacetResult:
    id: str
    title: str
    found: bool
    score: float
    evidence_count: int

    def to_dict(self) -> dict[str, Any]:
        return {"id": self.id, "title": self.title, "found": self.found, "score": round(self.score, 3),
                "evidence_count": self.evidence_count}


@dataclass(frozen=True)
class ItemResult:
    id: str
    group: str
    title: str
    question: str
    ask: str
    status: str
    facets: tuple[FacetResult, ...]
    evidence: tuple[Evidence, ...]
    facts: tuple[tuple[str, tuple[Fact, ...]], ...]
    reason: str
    why: str = ""
    #: what a partial item still lacks, decided by the verdicts (verdicts.decide): the facets of its best way to
    #: completion that were not found; empty for every other status
    lacking: tuple[str, ...] = ()

    def facts_dict(self) -> dict[str, list[dict[str, Any]]]:
        return {name: [f.report_dict() for f in fs] for name, fs in self.facts}

    def to_dict(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "group": self.group,
            "title": self.title,
            "question": self.question,
            "status": self.status,
            "facets": [f.to_dict() for f in self.facets],
            "evidence": [e.to_dict() for e in self.evidence],
            "facts": self.facts_dict(),
            "reason": self.reason,
            "lacking": list(self.lacking),
            "ask": self.ask,
        }


@dataclass(frozen=True)
class Finding:
    """A result of a cross-item rule (metric pitfalls, numbers that disagree)."""

    id: str
    title: str
    severity: str  # "warning" or "note"
    message: str
    evidence: tuple[Evidence, ...] = ()
    sources: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"id": self.id, "title": self.title, "severity": self.severity, "message": self.message,
                "evidence": [e.to_dict() for e in self.evidence], "sources": list(self.sources)}


@dataclass(frozen=True)
class Report:
    tool_version: str
    document_path: str
    document_format: str
    pages: int | None
    words: int
    sha256: str
    checklist_id: str
    checklist_title: str
    checklist_version: str
    items: tuple[ItemResult, ...]
    findings: tuple[Finding, ...] = ()
    #: why this checklist was used (chosen automatically, or named by the user)
    checklist_choice: str = ""
    warnings: tuple[str, ...] = ()
    groups: tuple[tuple[str, str], ...] = field(default=())  # (id, title) in checklist order

    @property
    def summary(self) -> dict[str, int]:
        counts = {s: 0 for s in STATUS_ORDER}
        for it in self.items:
            counts[it.status] += 1
        return counts

    def group_title(self, gid: str) -> str:
        return dict(self.groups).get(gid, gid)

    def to_dict(self) -> dict[str, Any]:
        return {
            "tool": {"name": "studygap", "version": self.tool_version},
            "document": {
                "path": self.document_path,
                "format": self.document_format,
                "pages": self.pages,
                "words": self.words,
                "sha256": self.sha256,
            },
            "checklist": {"id": self.checklist_id, "version": self.checklist_version, "title": self.checklist_title,
                          "choice": self.checklist_choice},
            "items": [it.to_dict() for it in self.items],
            "findings": [f.to_dict() for f in self.findings],
            "summary": self.summary,
            "warnings": list(self.warnings),
            "cautions": list(CAUTIONS["report"]),
        }
