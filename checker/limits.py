"""Bounds on what one document may cost; each is a documented command-line option."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Limits:
    max_bytes: int = 100 * 1024 * 1024  # size of the input file
    max_inflated_bytes: int = 200 * 1024 * 1024  # total uncompressed size of a DOCX's parts
    max_pages: int = 2000  # PDF pages read
    max_blocks: int = 200_000  # blocks (paragraphs, rows, headings) in one document
    seconds: float = 300.0  # wall time for one document in a batch
    regex_seconds: float = 2.0  # time bound for one checklist regex over one document


DEFAULT_LIMITS = Limits()
