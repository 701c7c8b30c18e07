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

from .document import Block, Document
from ..core.errors import InputError
from ..core.limits import DEFAULT_LIMITS, Limits

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
    ".rnw": "latex",
    ".snw": "latex",
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


def _too_large(path: Path, size: int, limits: Limits) -> None:
    if size > limits.max_bytes:
        raise InputError(
            path,
            f"file is {size / 1e6:.1f} MB, over the limit of {limits.max_bytes / 1e6:.0f} MB",
            "raise --max-bytes if the file is genuine",
        )


def read_bytes(path: Path, limits: Limits) -> bytes:
    try:
        if not path.exists():
            raise InputError(path, "no such file", "check the path")
        if path.is_dir():
            raise InputError(path, "is a folder, not a document", "name a file, or use 'studygap screen' for folders")
        if not path.is_file():  # a named pipe, a device or a socket: reading could wait forever
            raise InputError(path, "is not a regular file (a pipe, device or socket)", "save the document to a file")
        _too_large(path, path.stat().st_size, limits)
        with path.open("rb") as fh:  # read-only: inputs are never opened for writing
            return fh.read(limits.max_bytes + 1)
    except PermissionError:
        raise InputError(path, "permission denied", "check that you may read the file") from None
    except OSError as exc:
        raise InputError(path, f"cannot be read: {exc.strerror or exc}") from None


def _refuse_oversized(path: Path, blocks: list[Block], limits: Limits, where: str) -> None:
    """One document's text over the bounds is refused before spaCy sees it."""
    if len(blocks) > limits.max_blocks:
        raise InputError(path, f"more than {limits.max_blocks:,} blocks of text{where}",
                         "check it in parts, each part as its own file")
    chars = sum(len(b.text) for b in blocks)
    if chars > limits.max_text_chars:
        raise InputError(path, f"it holds {chars / 1e6:,.1f} million characters of text{where}, over the limit of "
                               f"{limits.max_text_chars / 1e6:,.0f} million for one document",
                         "check it in parts, each part as its own file")


def read_document(path: str | Path, limits: Limits = DEFAULT_LIMITS, *, fmt: str | None = None,
                  data: bytes | None = None) -> Document:
    """Read one file into a Document with sections and roles assigned (sentences come later, from nlp).

    With ``data`` the document's bytes are given (sent to a worker that cannot see the file): ``path`` then only
    names it, for its format and in every location, as if the file had been read there.
    """
    from .sections import assign_sections

    path = Path(path)
    fmt = fmt or format_for(path)
    if data is None:
        data = read_bytes(path, limits)
    else:
        _too_large(path, len(data), limits)
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
    _refuse_oversized(path, parsed.blocks, limits, "")
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


def files_in_order(folder: str | Path) -> list[Path]:
    """The documents of a folder in the order people number them: natural order of names ("page2" before
    "page10"), so a website's pages or a paper and its supplement are read as their names order them."""
    import re

    def key(p: Path) -> list:
        return [int(t) if t.isdigit() else t.lower() for t in re.split(r"(\d+)", p.name)]

    folder = Path(folder)
    return sorted((p for p in folder.iterdir() if p.is_file() and p.suffix.lower() in _SUFFIXES), key=key)


def read_together(paths: list[str | Path], limits: Limits = DEFAULT_LIMITS) -> Document:
    """Several files read as one document, in the order given: a website's pages, a paper and its supplement.

    Every block keeps its own file in its location, and each file's sections start afresh (a heading of one
    page never holds the next page). The document is named after the first file and has its format; its pages
    are the sum when every file has pages; warnings name their file. A file that cannot be read stops with its
    own error.
    """
    if not paths:
        raise ValueError("read_together needs at least one file")
    docs = [read_document(p, limits) for p in paths]
    if len(docs) == 1:
        return docs[0]
    blocks: list[Block] = [b for d in docs for b in d.blocks]
    _refuse_oversized(Path(paths[0]), blocks, limits, " in the files together")
    pages = [d.pages for d in docs]
    digest = hashlib.sha256()
    for d in docs:
        digest.update(d.path.encode("utf-8", "surrogateescape") + b"\0" + d.sha256.encode("ascii") + b"\0")
    return Document(
        path=docs[0].path,
        format=docs[0].format,  # the first file's: a report names one format
        blocks=tuple(blocks),
        pages=sum(pages) if all(p is not None for p in pages) else None,
        sha256=digest.hexdigest(),
        warnings=tuple(f"{Path(d.path).name}: {w}" for d in docs for w in d.warnings),
    )
