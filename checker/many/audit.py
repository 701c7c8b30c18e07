"""Corpus audits for meta-research: how often each item is reported, with Wilson 95% intervals, by group if asked.

Reported means status `reported`; partial counts as not reported, and its own rate is given beside it.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from pathlib import Path
from typing import Any, ClassVar, Sequence

from .batch import BatchResult
from ..core.errors import UsageError
from .stats import wilson_counts
from ..core.cautions import CAUTIONS

RATE_NOTE = ("reporting rate = reported / applicable documents; partial counts as not reported (its share is given "
             "as the partial rate); not-applicable and waived documents are left out of the denominator; "
             "intervals are Wilson score 95% intervals")
ALL = "all"


@dataclass(frozen=True)
class RateRow:
    checklist: str
    group: str
    item: str
    title: str
    applicable: int
    reported: int
    partial: int
    low: float
    high: float

    @property
    def rate(self) -> float | None:
        return self.reported / self.applicable if self.applicable else None

    @property
    def partial_rate(self) -> float | None:
        return self.partial / self.applicable if self.applicable else None

    def to_dict(self) -> dict[str, Any]:
        return {"checklist": self.checklist, "group": self.group, "item": self.item, "title": self.title, "applicable": self.applicable,
                "reported": self.reported, "partial": self.partial, "rate": _r(self.rate),
                "low": _r(self.low), "high": _r(self.high), "partial_rate": _r(self.partial_rate)}


@dataclass(frozen=True)
class Audit:
    KIND: ClassVar[str] = "audit"  # the renderers' key (checker.reports)
    checklist_note: str
    by: str | None
    rows: tuple[RateRow, ...]
    documents: int
    errors: tuple[tuple[str, str], ...]  # (path, reason): named inputs that could not be checked
    unmatched: tuple[str, ...] = ()  # documents without a metadata row
    seconds: float = 0.0
    #: (checklist id, title, version, documents checked against it), in order of first appearance
    checklists: tuple[tuple[str, str, str, int], ...] = ()
    #: (path, reason): files in the given folders that were not checked at all (not a readable kind, LaTeX parts)
    skipped: tuple[tuple[str, str], ...] = ()

    @property
    def checklist_id(self) -> str:
        """The checklist's id, or the ids joined with '+' when the corpus was checked against several."""
        return "+".join(c[0] for c in self.checklists)

    @property
    def mixed(self) -> bool:
        return len(self.checklists) > 1

    def to_dict(self) -> dict[str, Any]:
        # no timing: the same inputs give the same JSON bytes on every engine
        return {"checklist": {"id": self.checklist_id, "choice": self.checklist_note},
                "checklists": [{"id": i, "title": t, "version": v, "documents": n}
                               for i, t, v, n in self.checklists],
                "by": self.by, "rate": RATE_NOTE, "rates": [r.to_dict() for r in self.rows],
                "summary": {"documents": self.documents, "checked": self.documents - len(self.errors),
                            "errors": len(self.errors), "skipped": len(self.skipped)},
                "errors": [{"path": p, "error": e} for p, e in self.errors],
                "skipped": [{"path": p, "reason": why} for p, why in self.skipped],
                "without_metadata": list(self.unmatched), "cautions": list(CAUTIONS["audit"])}


def _r(x: float | None, digits: int = 4) -> float | None:
    return None if x is None else round(x, digits)


def load_meta(path: str | Path) -> tuple[list[str], dict[str, dict[str, str]]]:
    """A CSV sidecar: first column a document's path or file name, the others fields such as year or venue."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise UsageError(f"{p}: the metadata file cannot be read ({exc.strerror or exc})") from None
    except UnicodeDecodeError:
        raise UsageError(f"{p}: the metadata file is not UTF-8 text") from None
    reader = csv.reader(io.StringIO(text))
    try:
        header = [h.strip() for h in next(reader)]
    except StopIteration:
        raise UsageError(f"{p}: the metadata file is empty") from None
    if len(header) < 2:
        raise UsageError(f"{p}: the metadata file needs a first column with the path or file name and at least one "
                         "field (for example: path,year,venue)")
    rows: dict[str, dict[str, str]] = {}
    for n, cells in enumerate(reader, start=2):
        if not cells or not any(c.strip() for c in cells):
            continue
        key = cells[0].strip()
        if key in rows:
            raise UsageError(f"{p}:{n}: {key} appears twice")
        rows[key] = {h: (cells[i].strip() if i < len(cells) else "") for i, h in enumerate(header[1:], start=1)}
    return header[1:], rows


def meta_for(path: str, meta: dict[str, dict[str, str]],
             resolved: dict[str, dict[str, str]] | None = None) -> dict[str, str] | None:
    """The metadata row for a document: by the path as given, its normalised form, its absolute form or its name."""
    for key in (path, str(Path(path)), Path(path).name):
        if key in meta:
            return meta[key]
    if resolved is None:
        resolved = {str(Path(k).resolve()): row for k, row in meta.items()}
    return resolved.get(str(Path(path).resolve()))


def build_audit(results: Sequence[BatchResult], checklist_note: str = "", *, by: str | None = None,
                meta: dict[str, dict[str, str]] | None = None, z: float = 1.96, seconds: float = 0.0,
                skipped: Sequence[tuple[str, str]] = ()) -> Audit:
    """Rates per checklist (a corpus may mix them when each document's checklist is chosen for it), per group of
    the metadata field ``by`` (or one group, "all"), per item."""
    ok = [r for r in results if r.ok]
    # one block of rows per checklist, in order of first appearance; items in that checklist's order
    per_checklist: dict[str, list] = {}
    for res in ok:
        per_checklist.setdefault(res.report.checklist_id, []).append(res)
    unmatched = []
    absolute = {str(Path(k).resolve()): row for k, row in (meta or {}).items()} if by else {}
    group_of: dict[str, str] = {}
    for res in ok:
        if by is None:
            group_of[res.path] = ALL
            continue
        row = meta_for(res.path, meta or {}, absolute)
        if row is None:
            unmatched.append(res.path)
            group_of[res.path] = "(no metadata)"
        else:
            group_of[res.path] = row.get(by, "") or "(blank)"
    rows = []
    checklists = []
    for cid, members in per_checklist.items():
        first = members[0].report
        checklists.append((cid, first.checklist_title, first.checklist_version, len(members)))
        groups: dict[str, list] = {}
        for res in members:
            groups.setdefault(group_of[res.path], []).append(res.report)
        for key in sorted(groups, key=group_key):
            reports = groups[key]
            for it0 in first.items:
                statuses = [next((it.status for it in rep.items if it.id == it0.id), "not-applicable")
                            for rep in reports]
                applicable = sum(1 for s in statuses if s in ("reported", "partial", "missing"))
                reported = statuses.count("reported")
                partial = statuses.count("partial")
                low, high = wilson_counts(reported, applicable, z)
                rows.append(RateRow(cid, key, it0.id, it0.title, applicable, reported, partial, low, high))
    return Audit(checklist_note, by, tuple(rows), len(results), tuple((r.path, r.error) for r in results if not r.ok),
                 tuple(unmatched), seconds, tuple(checklists), tuple(skipped))


def group_key(g: str) -> tuple:
    # years sort as numbers, placeholders last
    return (g.startswith("("), 0 if g.isdigit() else 1, int(g) if g.isdigit() else 0, g)


def sidecar(audit: Audit) -> dict[str, Any]:
    """What the CSV leaves out: checklists, counts, unread and skipped files, the rate's definition, cautions."""
    data = audit.to_dict()
    del data["rates"]
    data["columns"] = {"applicable": "documents where the item applies (reported, partial or missing)",
                       "rate": "reported / applicable", "low": "Wilson score 95% interval, low end",
                       "high": "Wilson score 95% interval, high end", "partial_rate": "partial / applicable"}
    return data
