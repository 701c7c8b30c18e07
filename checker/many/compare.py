"""What a revision changed: per item, the status before and after, and where its evidence went.

Passages of the two reports are aligned with rapidfuzz, so a sentence that moved or was lightly reworded is
recognised as the same passage.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, ClassVar

from rapidfuzz import fuzz

from ..verdicts.report import Evidence, ItemResult, Report
from ..core.cautions import CAUTIONS

#: passages at least this similar (rapidfuzz ratio, 0-100) are the same passage; below REWORDED they are different
SAME = 90.0
REWORDED = 70.0
RANK = {"missing": 0, "partial": 1, "reported": 2}
#: change kinds in the order they are shown
KINDS = ("lost", "worse", "newly-reported", "improved", "newly-partial", "still-missing", "still-partial",
         "applicability-changed", "unchanged")
KIND_TEXT = {
    "lost": "lost: was reported, no longer is",
    "worse": "worse: was partial, now missing",
    "newly-reported": "newly reported",
    "improved": "improved: partial, now reported",
    "newly-partial": "newly partial: was missing, now partly reported",
    "still-missing": "still missing",
    "still-partial": "still partial",
    "applicability-changed": "applicability or waiver changed",
    "unchanged": "still reported",
}


@dataclass(frozen=True)
class PassageChange:
    """One passage of evidence: kept in place, moved, reworded, added or removed."""

    change: str  # "kept", "moved", "reworded", "added", "removed"
    old: Evidence | None
    new: Evidence | None
    similarity: float

    def to_dict(self) -> dict[str, Any]:
        return {"change": self.change, "similarity": round(self.similarity, 1),
                "old": self.old.to_dict() if self.old else None, "new": self.new.to_dict() if self.new else None}


@dataclass(frozen=True)
class ItemChange:
    id: str
    title: str
    old_status: str
    new_status: str
    kind: str
    passages: tuple[PassageChange, ...]
    ask: str = ""

    @property
    def evidence_moved(self) -> bool:
        return any(p.change in ("moved", "reworded") for p in self.passages)

    def to_dict(self) -> dict[str, Any]:
        return {"id": self.id, "title": self.title, "old": self.old_status, "new": self.new_status,
                "change": self.kind, "evidence_moved": self.evidence_moved,
                "passages": [p.to_dict() for p in self.passages]}


@dataclass(frozen=True)
class Comparison:
    KIND: ClassVar[str] = "compare"  # the renderers' key (checker.reports)
    old_path: str
    new_path: str
    checklist_id: str
    checklist_note: str
    items: tuple[ItemChange, ...]

    def over(self, fail_on: str) -> list[ItemChange]:
        """The items that stop a CI run: `lost` (reported or partial before, less reported now) or `missing`
        (missing in the new version, whatever it was before)."""
        if fail_on == "lost":
            return [it for it in self.items if it.kind in ("lost", "worse")]
        if fail_on == "missing":
            return [it for it in self.items if it.new_status == "missing"]
        raise ValueError(f"unknown --fail-on value {fail_on!r}")

    def counts(self) -> dict[str, int]:
        return {k: sum(1 for it in self.items if it.kind == k) for k in KINDS}

    def to_dict(self) -> dict[str, Any]:
        return {"old": self.old_path, "new": self.new_path,
                "checklist": {"id": self.checklist_id, "choice": self.checklist_note},
                "summary": self.counts(), "items": [it.to_dict() for it in self.items],
                "cautions": list(CAUTIONS["compare"])}


def change_kind(old: str, new: str) -> str:
    if old not in RANK or new not in RANK:
        return "unchanged" if old == new else "applicability-changed"
    if old == new:
        return {"missing": "still-missing", "partial": "still-partial", "reported": "unchanged"}[old]
    if new == "reported":
        return "improved" if old == "partial" else "newly-reported"
    if old == "reported":
        return "lost"
    return "newly-partial" if new == "partial" else "worse"


def _where(e: Evidence) -> tuple:
    # lines shift whenever text is added above; a passage has moved when it changes section, page or table
    loc = e.location
    return (loc.page, loc.table, loc.section)


def align(old: tuple[Evidence, ...], new: tuple[Evidence, ...]) -> tuple[PassageChange, ...]:
    """Pair old and new passages greedily by similarity (best pairs first); the rest are added or removed."""
    pairs = []
    for i, a in enumerate(old):
        for j, b in enumerate(new):
            score = fuzz.ratio(a.text, b.text)
            if score >= REWORDED:
                pairs.append((-score, i, j))
    pairs.sort()
    used_old: set[int] = set()
    used_new: set[int] = set()
    matched: dict[int, PassageChange] = {}
    for neg, i, j in pairs:
        if i in used_old or j in used_new:
            continue
        used_old.add(i)
        used_new.add(j)
        score = -neg
        if score < SAME:
            kind = "reworded"
        else:
            kind = "kept" if _where(old[i]) == _where(new[j]) else "moved"
        matched[j] = PassageChange(kind, old[i], new[j], score)
    out = [matched[j] if j in matched else PassageChange("added", None, b, 0.0) for j, b in enumerate(new)]
    out += [PassageChange("removed", a, None, 0.0) for i, a in enumerate(old) if i not in used_old]
    return tuple(out)


def compare_reports(old: Report, new: Report, checklist_note: str = "") -> Comparison:
    """Per item of the old report's checklist, the change in the new one (items only in the new come last)."""
    new_by = {it.id: it for it in new.items}
    old_ids = {it.id for it in old.items}
    changes = []
    for it in old.items:
        other: ItemResult | None = new_by.get(it.id)
        new_status = other.status if other else "not-applicable"
        changes.append(ItemChange(it.id, it.title, it.status, new_status, change_kind(it.status, new_status),
                                  align(it.evidence, other.evidence if other else ()),
                                  other.ask if other else it.ask))
    for it in new.items:
        if it.id not in old_ids:
            changes.append(ItemChange(it.id, it.title, "not-applicable", it.status,
                                      change_kind("not-applicable", it.status), align((), it.evidence), it.ask))
    return Comparison(old.document_path, new.document_path, old.checklist_id, checklist_note, tuple(changes))


def compare_documents(old_path: str, new_path: str, checklist: str | None = None, config=None,
                      limits=None) -> Comparison:
    """Check both versions against one checklist (by default the one chosen for OLD) and compare them."""
    from ..engine import check_document
    from ..core.limits import DEFAULT_LIMITS

    limits = limits or DEFAULT_LIMITS
    old = check_document(old_path, checklist or "auto", config, limits)
    note = (f"{old.checklist_id}, named by the user" if checklist else
            f"{old.checklist_id}, chosen for the old version ({old.checklist_choice}) and used for both")
    new = check_document(new_path, checklist or old.checklist_id, config, limits)
    return compare_reports(old, new, note)
