"""Screening many documents against one checklist: a matrix of statuses, completeness scores and facts side by side.

Built from batch results; the renderers in checker.reports.screening only show what the Screen holds.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any, ClassVar, Sequence

from .batch import BatchResult
from ..core.status import PARTIAL, REPORTED, STATUS_ORDER, applies
from ..core.cautions import CAUTIONS
from ..matching.fact import plain

SCORE_NOTE = ("completeness = (reported + half of partial) / applicable items; not-applicable and waived items "
              "are left out")


@dataclass(frozen=True)
class Cell:
    """What a matrix cell opens: the status, why, the best passages with their places, facts, or what was sought."""

    status: str
    reason: str
    quotes: tuple[tuple[str, str], ...] = ()  # (passage, place)
    facts: str = ""
    looked_for: tuple[str, ...] = ()  # the facets' titles, for an item with no passage
    question: str = ""


@dataclass(frozen=True)
class ScreenRow:
    path: str
    error: str
    statuses: tuple[str, ...]  # one per item of the row's checklist, in checklist order; empty for an error row
    completeness: float | None
    counts: tuple[tuple[str, int], ...]
    facts: tuple[tuple[str, str], ...]  # fact name -> values found, ", "-joined
    checklist: str = ""  # the id of the checklist this document was checked against ("" for an error row)
    cells: tuple[Cell, ...] = ()

    def to_dict(self, items: Sequence[str]) -> dict[str, Any]:
        if self.error:
            return {"path": self.path, "error": self.error}
        return {"path": self.path, "checklist": self.checklist, "completeness": _r(self.completeness),
                "summary": dict(self.counts), "statuses": dict(zip(items, self.statuses)),
                "facts": dict(self.facts)}


@dataclass(frozen=True)
class ScreenChecklist:
    id: str
    title: str
    version: str
    items: tuple[tuple[str, str], ...]  # (id, title)
    item_groups: tuple[str, ...]  # the group id of each item
    groups: tuple[tuple[str, str], ...]  # (id, title) in checklist order


@dataclass(frozen=True)
class Screen:
    KIND: ClassVar[str] = "screen"  # the renderers' key (checker.reports)
    checklist_note: str
    checklists: tuple[ScreenChecklist, ...]
    rows: tuple[ScreenRow, ...]
    fact_names: tuple[str, ...]
    seconds: float = 0.0
    #: (path, reason): files in the given folders that were not checked at all (not a readable kind, LaTeX parts)
    skipped: tuple[tuple[str, str], ...] = ()

    @property
    def checklist_id(self) -> str:
        return "+".join(c.id for c in self.checklists)

    @property
    def checklist_title(self) -> str:
        return "; ".join(c.title for c in self.checklists)

    @property
    def items(self) -> tuple[tuple[str, str], ...]:
        """Every item of every checklist, once each, in order of first appearance."""
        seen: dict[str, str] = {}
        for c in self.checklists:
            for i, t in c.items:
                seen.setdefault(i, t)
        return tuple(seen.items())

    @property
    def errors(self) -> tuple[ScreenRow, ...]:
        return tuple(r for r in self.rows if r.error)

    def rows_of(self, checklist_id: str) -> list[ScreenRow]:
        return [r for r in self.rows if not r.error and r.checklist == checklist_id]

    def item_shares(self) -> list[dict[str, Any]]:
        """Per item of each checklist: how many readable documents checked against it gave each status."""
        out = []
        for c in self.checklists:
            rows = self.rows_of(c.id)
            for i, (iid, title) in enumerate(c.items):
                counts = {s: sum(1 for r in rows if r.statuses[i] == s) for s in STATUS_ORDER}
                applicable = counts["reported"] + counts["partial"] + counts["missing"]
                out.append({"checklist": c.id, "id": iid, "title": title, **counts,
                            "reported_share": _r(counts["reported"] / applicable) if applicable else None})
        return out

    def to_dict(self) -> dict[str, Any]:
        ids = {c.id: [i for i, _ in c.items] for c in self.checklists}
        # no timing here: the same inputs must give the same JSON bytes on every engine
        return {
            "checklist": {"id": self.checklist_id, "title": self.checklist_title, "choice": self.checklist_note},
            "checklists": [{"id": c.id, "title": c.title, "version": c.version,
                            "documents": len(self.rows_of(c.id)),
                            "items": [{"id": i, "title": t, "group": g} for (i, t), g in zip(c.items, c.item_groups)]}
                           for c in self.checklists],
            "score": SCORE_NOTE,
            "items": [{"id": i, "title": t} for i, t in self.items],
            "documents": [r.to_dict(ids.get(r.checklist, [])) for r in self.rows],
            "item_shares": self.item_shares(),
            "summary": {"documents": len(self.rows), "errors": len(self.errors), "skipped": len(self.skipped)},
            "skipped": [{"path": p, "reason": why} for p, why in self.skipped],
            "cautions": list(CAUTIONS["screen"]),
        }


def completeness(statuses: Sequence[str]) -> float | None:
    """(reported + half of partial) / applicable; None when no item applies."""
    applicable = [s for s in statuses if applies(s)]
    if not applicable:
        return None
    return (sum(1 for s in applicable if s == REPORTED) + 0.5 * sum(1 for s in applicable if s == PARTIAL)) \
        / len(applicable)


def fact_text(value: Any) -> str:
    if isinstance(value, dict):
        if "value" in value and len(value) <= 3:
            return fact_text(value["value"]) + (f" {value['unit']}" if value.get("unit") else "")
        return ", ".join(f"{k}={fact_text(v)}" for k, v in value.items() if v is not None)
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def _cell(it, rep) -> Cell:
    quotes = tuple((" ".join(ev.text.split()), ev.location.describe(rep.document_path)) for ev in it.evidence[:2])
    facts = "; ".join(f"{name} {', '.join(x.text for x in fs)}" for name, fs in it.facts)
    # what was sought and not found: for a partial item what the verdicts say it lacks, else every facet not found
    looked_for = it.lacking or tuple(f.title for f in it.facets if not f.found)
    return Cell(it.status, it.reason, quotes, facts, looked_for, it.question)


def build_screen(results: Sequence[BatchResult], checklist_note: str = "", seconds: float = 0.0,
                 skipped: Sequence[tuple[str, str]] = ()) -> Screen:
    """The Screen of batch results; documents checked against different checklists get a matrix each."""
    checklists: dict[str, ScreenChecklist] = {}
    for res in results:
        if res.ok and res.report.checklist_id not in checklists:
            rep = res.report
            checklists[rep.checklist_id] = ScreenChecklist(
                rep.checklist_id, rep.checklist_title, rep.checklist_version,
                tuple((it.id, it.title) for it in rep.items), tuple(it.group for it in rep.items),
                tuple(rep.groups) or tuple((g, g) for g in dict.fromkeys(it.group for it in rep.items)))
    rows = []
    names: set[str] = set()
    for res in results:
        if not res.ok:
            rows.append(ScreenRow(res.path, res.error, (), None, (), ()))
            continue
        rep = res.report
        by_id = {it.id: it for it in rep.items}
        items = checklists[rep.checklist_id].items
        statuses = tuple(by_id[i].status if i in by_id else "not-applicable" for i, _ in items)
        cells = tuple(_cell(by_id[i], rep) if i in by_id else Cell("not-applicable", "") for i, _ in items)
        facts: dict[str, list[str]] = {}
        for it in rep.items:
            for name, fs in it.facts:
                seen = facts.setdefault(name, [])
                for f in fs:
                    text = fact_text(plain(f.value))
                    if text not in seen:
                        seen.append(text)
        names.update(facts)
        rows.append(ScreenRow(res.path, "", statuses, completeness(statuses),
                              tuple((s, statuses.count(s)) for s in STATUS_ORDER),
                              tuple(sorted((k, ", ".join(v)) for k, v in facts.items())), rep.checklist_id, cells))
    return Screen(checklist_note, tuple(checklists.values()), tuple(rows), tuple(sorted(names)), seconds,
                  tuple(skipped))


def short_names(paths: Sequence[str]) -> list[str]:
    """The shortest tail of each path that tells it from the others: file names, with folders only where needed."""
    parts = [Path(p).parts or (p,) for p in paths]
    depth = [1] * len(paths)
    for _ in range(max((len(p) for p in parts), default=1)):
        tails = ["/".join(p[-d:]) for p, d in zip(parts, depth)]
        clash = {t for t in tails if tails.count(t) > 1}
        if not clash:
            return tails
        depth = [d + 1 if t in clash and d < len(p) else d for p, d, t in zip(parts, depth, tails)]
    return [str(p) for p in paths]


def _r(x: float | None, digits: int = 4) -> float | None:
    return None if x is None else round(x, digits)


def sidecar(screen: Screen) -> dict[str, Any]:
    """What the CSV leaves out, as JSON beside it."""
    data = screen.to_dict()
    del data["documents"]
    data["summary"]["checked"] = data["summary"]["documents"] - data["summary"]["errors"]
    data["columns"] = {"completeness": SCORE_NOTE, "item columns": "the status of the item in that document: "
                       + ", ".join(STATUS_ORDER) + "; blank where the item belongs to another checklist"}
    return data
