"""The one Fact model: a value a document states (its kind, parsed value, exact text, offsets in its sentence, what
it counts) and, once a verdict keeps it for an item, where it stands. Light to import: renderers read it."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

from ..reading.document import Location


def plain(value: Any) -> Any:
    """A fact's value as JSON data: records (a Quantity, a range) by their to_dict() or fields, lists and dicts
    item by item."""
    if hasattr(value, "to_dict"):
        return value.to_dict()
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {k.name: plain(getattr(value, k.name)) for k in dataclasses.fields(value)}
    if isinstance(value, (list, tuple)):
        return [plain(x) for x in value]
    if isinstance(value, dict):
        return {k: plain(x) for k, x in value.items()}
    return value


@dataclass(frozen=True)
class Fact:
    """One value found in a sentence. ``kind`` is what it is (count, tolerance, split ...; for a checklist's regex,
    the name of its group); ``start`` and ``end`` are offsets into the sentence's text; ``location`` is set once the
    fact is placed in a document (the facts of a report's items)."""

    kind: str
    value: Any  # plain data or a record such as facts.Quantity (the result cache checks it as Any)
    text: str
    start: int = 0
    end: int = 0
    noun: str | None = None  # for counts (and splits or ranges of things): what is counted, singular lower case
    location: Location | None = None

    def to_dict(self) -> dict[str, Any]:
        """The fact as read from its sentence: kind, value, text, offsets and counted noun."""
        return {"kind": self.kind, "value": plain(self.value), "text": self.text, "start": self.start,
                "end": self.end, "noun": self.noun}

    def report_dict(self) -> dict[str, Any]:
        """The fact as a report's item gives it (the JSON report's contract): value, text and location."""
        return {"value": plain(self.value), "text": self.text,
                "location": self.location.to_dict() if self.location is not None else None}
