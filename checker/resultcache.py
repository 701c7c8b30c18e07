"""Reports of unchanged files kept between runs, so that checking a draft again on every save is instant.

A report is reused only when everything it depends on is the same: the file's bytes and the path it was
named by, the checklist file, the configuration, the reading options, studygap's own code (its files' sizes
and modification times and the built-in checklists' content, so an edited development install never serves a
stale report) and the versions of Python and of the libraries that read and match the text. LaTeX
is not cached, because its parts live in other files. Reports are kept in ``results/`` of the cache folder
(see checker.regexcache.cache_dir), at most _MAX_ENTRIES of them, and read back as studygap's own records
only. ``--no-cache`` or ``STUDYGAP_CACHE_DIR=off`` turns it off.
"""

from __future__ import annotations

import dataclasses
import hashlib
import io
import json
import os
import pickle
import sys
from functools import lru_cache
from pathlib import Path

from .config import Config
from .limits import Limits
from .regexcache import cache_dir, pickle_atomically
from .report import Report

_MAX_ENTRIES = 500
_FORMAT = "1"  # bump when the stored form of a Report changes
_UNCACHED_SUFFIXES = (".tex", ".ltx", ".latex")
#: the distributions whose behaviour shapes a report (reading, sentences, matching, YAML)
_LIBRARIES = ("spacy", "spacy-lookups-data", "pdfminer.six", "pypdfium2", "python-docx", "rapidfuzz", "PyYAML",
              "markdown-it-py", "lxml", "regex")


@lru_cache(maxsize=1)
def _code_stamp() -> str:
    """studygap's version, the size and time of each of its files, the built-in checklists' content (they are
    installed apart from the code in a development install), and the Python and library versions."""
    from importlib import metadata, resources

    from . import __version__

    root = Path(__file__).resolve().parent
    h = hashlib.sha256(f"{__version__}\0{_FORMAT}\0{sys.version}".encode())
    for p in sorted(root.rglob("*")):
        if p.suffix in (".py", ".yaml", ".yml", ".json") and "__pycache__" not in p.parts:
            st = p.stat()
            h.update(f"{p.relative_to(root)}\0{st.st_size}\0{st.st_mtime_ns}\n".encode())
    for t in sorted(resources.files("checker.checklists").iterdir(), key=lambda t: t.name):
        if t.name.endswith((".yaml", ".yml")):
            h.update(f"checklists/{t.name}\0".encode() + hashlib.sha256(t.read_bytes()).digest())
    for name in _LIBRARIES:
        try:
            version = metadata.version(name)
        except metadata.PackageNotFoundError:
            version = "absent"
        h.update(f"{name}\0{version}\n".encode())
    return h.hexdigest()


def _file_digest(ref: str) -> str:
    """A checklist reference as the check reads it: a file (load_checklist prefers an existing file), by its
    name and content, else a built-in id (covered by the code stamp) or 'auto'."""
    p = Path(ref)
    try:
        if p.is_file():
            return f"{ref}\0{hashlib.sha256(p.read_bytes()).hexdigest()}"
    except OSError:
        pass  # the check itself words the error, and a failed check is never kept
    return ref


def key(path: str | Path, data: bytes, checklist: str, config: Config, limits: Limits) -> str | None:
    """The cache key of one check, or None when this check is not cached."""
    if str(path).lower().endswith(_UNCACHED_SUFFIXES):
        return None
    settings = {
        "path": str(path),
        "checklist": _file_digest(checklist),
        "config": dataclasses.asdict(config),
        "limits": {k: v for k, v in dataclasses.asdict(limits).items() if k != "seconds"},
        "code": _code_stamp(),
    }
    h = hashlib.sha256(hashlib.sha256(data).digest())
    h.update(json.dumps(settings, sort_keys=True, default=str).encode())
    return h.hexdigest()


def _folder() -> Path | None:
    d = cache_dir()
    return None if d is None else d / "results"


class _ReportsOnly(pickle.Unpickler):
    """Unpickles studygap's own frozen records and plain data, nothing else."""

    def find_class(self, module: str, name: str):
        if module == "copyreg" and name in ("__newobj__", "_reconstructor"):
            return super().find_class(module, name)
        if module == "builtins" and name in ("object", "frozenset", "set", "tuple", "list", "dict"):
            return super().find_class(module, name)
        if module.startswith("checker."):
            obj = super().find_class(module, name)
            if isinstance(obj, type) and dataclasses.is_dataclass(obj) and obj.__dataclass_params__.frozen:
                return obj
        raise pickle.UnpicklingError(f"{module}.{name} is not one of studygap's records")


def get(k: str | None) -> Report | None:
    folder = _folder()
    if k is None or folder is None:
        return None
    path = folder / f"{k}.pickle"
    try:
        report = _ReportsOnly(io.BytesIO(path.read_bytes())).load()
    except Exception:  # absent, damaged, or from an older studygap: check afresh
        return None
    if not isinstance(report, Report):
        return None
    try:
        os.utime(path)  # recently used entries are the ones kept
    except OSError:
        pass
    return report


def put(k: str | None, report: Report) -> None:
    folder = _folder()
    if k is None or folder is None:
        return
    _store(folder / f"{k}.pickle", report)


def _store(path: Path, record) -> None:
    """Keep a record; a read-only or full disk loses nothing but time."""
    try:
        pickle_atomically(path, record)
        _prune(path.parent)
    except (OSError, pickle.PicklingError, TypeError, AttributeError):
        pass


def _mtime(p: Path) -> int:
    try:
        return p.stat().st_mtime_ns
    except OSError:  # pruned by another process meanwhile
        return 0


def _prune(folder: Path) -> None:
    """Keep the _MAX_ENTRIES most recently used reports."""
    entries = list(folder.glob("*.pickle"))
    if len(entries) <= _MAX_ENTRIES:
        return
    entries.sort(key=lambda p: (_mtime(p), p.name))
    for p in entries[: len(entries) - _MAX_ENTRIES]:
        try:
            p.unlink()
        except OSError:
            pass


def parsed(kind: str, text: str, file: str, options: str, build):
    """A parsed checklist or rule set, from the cache when the same text was parsed by this same studygap.

    Parsing the YAML with its line marks costs a few tenths of a second in every process; the parsed records
    are studygap's own frozen dataclasses, kept in ``parsed/`` of the cache folder and read back through the
    same restricted unpickler as reports. Errors are never cached: a file that fails is parsed (and fails)
    again each time.
    """
    d = cache_dir()
    if d is None:
        return build()
    h = hashlib.sha256(f"{kind}\0{file}\0{options}\0{_code_stamp()}\0".encode())
    h.update(text.encode("utf-8"))
    path = d / "parsed" / f"{h.hexdigest()}.pickle"
    try:
        found = _ReportsOnly(io.BytesIO(path.read_bytes())).load()
        if type(found).__name__ == kind:
            return found
    except Exception:  # absent, damaged or foreign: parse afresh
        pass
    result = build()
    _store(path, result)
    return result
