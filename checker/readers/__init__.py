"""Readers, one module per format, chosen by suffix and checked against the file's first bytes.

Each reader module defines ``FORMAT``, ``SUFFIXES``, ``sniff(head, path)`` (returns a reason the bytes do not
fit the format, or None) and ``read(path, data, limits) -> Parsed``. ``read_document`` is the only entry point
the rest of studygap uses.
"""

from __future__ import annotations

import hashlib
import importlib
from dataclasses import dataclass, field
from pathlib import Path
from types import ModuleType

from ..document import Block, Document
from ..errors import InputError
from ..limits import DEFAULT_LIMITS, Limits

#: format name -> module name, in the order shown to users
_MODULES = {
    "pdf": "pdf",
    "docx": "docx",
    "latex": "latex",
    "markdown": "markdown",
    "html": "html",
    "text": "text",
}

_SUFFIXES = {
    ".pdf": "pdf",
    ".docx": "docx",
    ".tex": "latex",
    ".latex": "latex",
    ".ltx": "latex",
    ".md": "markdown",
    ".markdown": "markdown",
    ".rmd": "markdown",
    ".qmd": "markdown",
    ".html": "html",
    ".htm": "html",
    ".xhtml": "html",
    ".txt": "text",
    ".text": "text",
    ".rst": "text",
    ".rest": "text",
}


@dataclass
class Parsed:
    """What a reader returns: blocks in reading order (sections not yet assigned), pages and warnings."""

    blocks: list[Block]
    pages: int | None = None
    warnings: list[str] = field(default_factory=list)


def supported_suffixes() -> list[str]:
    return sorted(_SUFFIXES)


def format_for(path: Path) -> str:
    fmt = _SUFFIXES.get(path.suffix.lower())
    if fmt is None:
        known = ", ".join(supported_suffixes())
        raise InputError(path, f"unknown file type {path.suffix or '(no suffix)'!r}", f"studygap reads {known}")
    return fmt


def reader_module(fmt: str) -> ModuleType:
    return importlib.import_module(f".{_MODULES[fmt]}", __name__)


def read_bytes(path: Path, limits: Limits) -> bytes:
    try:
        if not path.exists():
            raise InputError(path, "no such file", "check the path")
        if path.is_dir():
            raise InputError(path, "is a folder, not a document", "name a file, or use 'studygap screen' for folders")
        size = path.stat().st_size
        if size > limits.max_bytes:
            raise InputError(
                path,
                f"file is {size / 1e6:.1f} MB, over the limit of {limits.max_bytes / 1e6:.0f} MB",
                "raise --max-bytes if the file is genuine",
            )
        with path.open("rb") as fh:  # read-only: inputs are never opened for writing
            return fh.read(limits.max_bytes + 1)
    except PermissionError:
        raise InputError(path, "permission denied", "check that you may read the file") from None
    except OSError as exc:
        raise InputError(path, f"cannot be read: {exc.strerror or exc}") from None


def read_document(path: str | Path, limits: Limits = DEFAULT_LIMITS, *, fmt: str | None = None) -> Document:
    """Read one file into a Document with sections and roles assigned (sentences come later, from nlp)."""
    from ..sections import assign_sections

    path = Path(path)
    fmt = fmt or format_for(path)
    data = read_bytes(path, limits)
    if not data.strip():
        cause = "the file is empty" if not data else "the file is empty: it holds only blank space"
        raise InputError(path, cause, "nothing to check; is it the right file?")
    module = reader_module(fmt)
    problem = module.sniff(data[:4096], path)
    if problem:
        raise InputError(path, problem)
    try:
        parsed: Parsed = module.read(path, data, limits)
    except InputError as exc:
        # a cause may quote a library's message; what users see must stay one line
        exc.cause, exc.hint = " ".join(exc.cause.split()), " ".join(exc.hint.split())
        raise
    except RecursionError:
        raise InputError(path, f"the {fmt} structure is nested too deeply to read",
                         "flatten its nesting, or save it in another format") from None
    except MemoryError:
        raise InputError(path, "reading it needed more memory than allowed") from None
    if len(parsed.blocks) > limits.max_blocks:
        raise InputError(path, f"more than {limits.max_blocks} blocks of text", "raise --max-blocks if genuine")
    from .hygiene import clean_blocks

    cleaned, hygiene_warnings = clean_blocks(parsed.blocks)
    blocks = assign_sections(cleaned)
    if not any(b.text.strip() for b in blocks):
        raise InputError(path, "no text found in the document", "is it empty, or an image?")
    return Document(
        path=str(path),
        format=fmt,
        blocks=tuple(blocks),
        pages=parsed.pages,
        sha256=hashlib.sha256(data).hexdigest(),
        warnings=tuple(parsed.warnings) + tuple(hygiene_warnings),
    )
