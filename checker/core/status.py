"""An item's status, and what every consumer asks of one: is it a gap to ask the authors about, does it apply.

The five words are part of the JSON contract (``reported``, ``partial``, ``missing``, ``not-applicable``,
``waived``); verdicts.decide is the one place a status is decided, everything else reads it through here.
"""

from __future__ import annotations

from typing import Literal

Status = Literal["reported", "partial", "missing", "not-applicable", "waived"]

REPORTED: Status = "reported"
PARTIAL: Status = "partial"
MISSING: Status = "missing"
NOT_APPLICABLE: Status = "not-applicable"
WAIVED: Status = "waived"

#: the contract's order (summaries, JSON, CSV columns)
STATUS_ORDER: tuple[Status, ...] = (REPORTED, PARTIAL, MISSING, NOT_APPLICABLE, WAIVED)
#: the order a reader of gaps wants (forms, pages, filters)
GAPS_FIRST: tuple[Status, ...] = (MISSING, PARTIAL, REPORTED, NOT_APPLICABLE, WAIVED)


def is_gap(status: str) -> bool:
    """Missing or partial: something to ask the authors for."""
    return status in (MISSING, PARTIAL)


def applies(status: str) -> bool:
    """The item counts for this document: not not-applicable and not waived."""
    return status not in (NOT_APPLICABLE, WAIVED)
