"""Reports of unchanged files kept between runs, so that checking a draft again on every save is instant.

A report is reused only when everything it depends on is the same: the file's bytes and the path it was
named by, the checklist file, the configuration, the reading options, studygap's own code (its files' sizes
and modification times and the built-in checklists' content, so an edited development install never serves a
stale report) and the versions of Python and of the libraries that read and match the text. LaTeX
is not cached, because its parts live in other files. Reports are kept in ``results/`` of the cache folder
(see checker.matching.regexcache.cache_dir), at most _MAX_ENTRIES of them, and read back as studygap's own records
only. ``--no-cache`` or ``STUDYGAP_CACHE_DIR=off`` turns it off.

An entry is trusted no further than it is checked: its file must carry this installation's signature (see
checker.matching.regexcache.read_signed), it must name the key it was asked for, the path and the SHA-256 of the file
being checked, and the report in it must be made of studygap's records with the declared field types, known
statuses, small numbers, no cycles and a bounded size. An entry that fails is deleted (the check runs afresh and
writes a sound one) and said in ``notices``.
"""

from __future__ import annotations

import dataclasses
import hashlib
import io
import json
import os
import pickle
import sys
import types
import typing
from functools import lru_cache
from pathlib import Path

from .core.config import Config
from .core.limits import Limits
from .matching.regexcache import cache_dir, pickle_atomically, read_signed
from .core.status import STATUS_ORDER
from .verdicts.report import Report

_MAX_ENTRIES = 500
_FORMAT = "2"  # bump when the stored form of a Report changes
_MAX_ENTRY_BYTES = 64 * 1024 * 1024  # a report of a 2000-page document is a few MB
_MAX_NODES = 2_000_000  # values visited in one report, shared ones each time they are reached (no fan-out bomb)
_MAX_DEPTH = 40
_MAX_INT_BITS = 256  # counts, pages, spans and parsed numbers; a 5,000-digit number is no fact of a report
#: what key() saw for each key it made: the path as named and the SHA-256 of the bytes (an entry must match both)
_expected: dict[str, tuple[str, str]] = {}
#: one line per entry that was refused and deleted in this process (for --verbose)
notices: list[str] = []
_UNCACHED_SUFFIXES = (".tex", ".ltx", ".latex", ".rnw", ".snw")
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
        if t.name.endswith((".yaml", ".yml", ".json")):
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


def document_bytes(path: str | Path, max_bytes: int) -> bytes | None:
    """A document's bytes for its cache key (at most max_bytes + 1), or None when it is not a regular file (a
    named pipe, a device, a socket: opened without waiting and never read) or cannot be read; the reader then
    gives the error in its own words."""
    import stat

    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError:
        return None
    with os.fdopen(fd, "rb") as fh:
        if not stat.S_ISREG(os.fstat(fh.fileno()).st_mode):
            return None
        return fh.read(max_bytes + 1)


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
    digest = hashlib.sha256(data).digest()
    h = hashlib.sha256(digest)
    h.update(json.dumps(settings, sort_keys=True, default=str).encode())
    k = h.hexdigest()
    if len(_expected) > 10_000:
        _expected.clear()
    _expected[k] = (str(path), digest.hex())
    return k


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


def get(k: str | None, path: str | Path | None = None, sha256: str | None = None) -> Report | None:
    """The kept report for key k, or None. It must be the one key() made k for: the same path as named and the
    same SHA-256 (give them when k did not come from key() in this process)."""
    folder = _folder()
    if k is None or folder is None:
        return None
    expected = (str(path), sha256) if path is not None and sha256 is not None else _expected.get(k)
    if expected is None:
        return None
    entry_path = folder / f"{k}.pickle"
    data = read_signed(entry_path, _MAX_ENTRY_BYTES)
    if data is None:  # absent, damaged, not ours, or from an older studygap: check afresh
        if entry_path.exists():
            _drop(entry_path, "its signature does not verify", expected[0])
        return None
    try:
        entry = _ReportsOnly(io.BytesIO(data)).load()
    except Exception:  # noqa: BLE001 - signed by us but unreadable (another studygap): check afresh
        _drop(entry_path, "it cannot be read back", expected[0])
        return None
    try:
        problem = _entry_problem(entry, k, *expected)
    except Exception:  # noqa: BLE001 - a record with fields missing or of another shape (found by the fuzz test)
        problem = "its report is malformed (fields missing or of another kind)"
    if problem:
        _drop(entry_path, problem, expected[0])
        return None
    try:
        os.utime(entry_path)  # recently used entries are the ones kept
    except OSError:
        pass
    return entry["report"]


def put(k: str | None, report: Report) -> None:
    folder = _folder()
    if k is None or folder is None or k not in _expected:
        return
    path, sha256 = _expected[k]
    entry = {"format": _FORMAT, "key": k, "path": path, "sha256": sha256, "report": report}
    if _entry_problem(entry, k, path, sha256) is None:  # never keep what would be refused on reading
        _store(folder / f"{k}.pickle", entry)


def _drop(entry_path: Path, why: str, document: str) -> None:
    from .core.errors import visible

    notices.append(f"studygap: cache: the kept report {entry_path.name[:16]}… was not used ({why}); "
                   f"{visible(document)} is checked afresh")
    try:
        entry_path.unlink()
    except OSError:
        pass


def _entry_problem(entry, k: str, path: str, sha256: str) -> str | None:
    """Why a kept entry cannot stand for the check of `path` with bytes `sha256` under key k, or None."""
    if not isinstance(entry, dict) or set(entry) != {"format", "key", "path", "sha256", "report"}:
        return "it is not a report entry"
    if entry["format"] != _FORMAT or entry["key"] != k:
        return "it was kept under another key"
    if entry["path"] != path or entry["sha256"] != sha256:
        return "it is the report of another file"
    report = entry["report"]
    if type(report) is not Report or report.document_path != path or report.sha256 != sha256:
        return "it is the report of another file"
    budget = [_MAX_NODES]
    if not _conforms(report, Report, budget, 0):
        return "its report is malformed (types, sizes, cycles)"
    if any(it.status not in STATUS_ORDER for it in report.items):
        return "its report has an unknown status"
    return None


@lru_cache(maxsize=64)
def _hints(cls: type) -> dict[str, typing.Any]:
    return typing.get_type_hints(cls)


def _conforms(value, hint, budget: list[int], depth: int) -> bool:
    """Whether value is of the declared type hint, with bounded size, depth and numbers (no cycles survive:
    each visit spends from the budget, so a cycle or a shared fan-out exhausts it)."""
    budget[0] -= 1
    if budget[0] < 0 or depth > _MAX_DEPTH:
        return False
    if hint is typing.Any:
        return _plain(value, budget, depth)
    origin = typing.get_origin(hint)
    args = typing.get_args(hint)
    if origin is typing.Union or origin is types.UnionType:
        return any(_conforms(value, a, budget, depth) for a in args)
    if hint is type(None):
        return value is None
    if hint is str:
        return type(value) is str
    if hint is bool:
        return type(value) is bool
    if hint is int:
        return type(value) is int and value.bit_length() <= _MAX_INT_BITS
    if hint is float:
        return type(value) is float or (type(value) is int and value.bit_length() <= _MAX_INT_BITS)
    if origin is tuple:
        if type(value) is not tuple:
            return False
        if len(args) == 2 and args[1] is Ellipsis:
            return all(_conforms(v, args[0], budget, depth + 1) for v in value)
        return len(value) == len(args) and all(_conforms(v, a, budget, depth + 1) for v, a in zip(value, args))
    if origin in (list, dict):
        if type(value) is not origin:
            return False
        if origin is list:
            return all(_conforms(v, args[0] if args else typing.Any, budget, depth + 1) for v in value)
        kh, vh = args or (typing.Any, typing.Any)
        return all(_conforms(a, kh, budget, depth + 1) and _conforms(b, vh, budget, depth + 1)
                   for a, b in value.items())
    if isinstance(hint, type) and dataclasses.is_dataclass(hint):
        if type(value) is not hint:
            return False
        hints = _hints(hint)
        return all(_conforms(getattr(value, f.name, None), hints[f.name], budget, depth + 1)
                   for f in dataclasses.fields(hint))
    return False


def _plain(value, budget: list[int], depth: int) -> bool:
    """A value declared Any (a fact's value): plain data or studygap's frozen records, bounded like the rest."""
    if value is None or type(value) in (str, bool, float):
        return True
    if type(value) is int:
        return value.bit_length() <= _MAX_INT_BITS
    if type(value) in (tuple, list, frozenset, set):
        return all(_conforms(v, typing.Any, budget, depth + 1) for v in value)
    if type(value) is dict:
        return all(_conforms(a, typing.Any, budget, depth + 1) and _conforms(b, typing.Any, budget, depth + 1)
                   for a, b in value.items())
    cls = type(value)
    if dataclasses.is_dataclass(cls) and cls.__module__.startswith("checker."):
        return _conforms(value, cls, budget, depth)
    return False


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
    data = read_signed(path, _MAX_ENTRY_BYTES)
    if data is not None:  # absent, damaged or not ours: parse afresh
        try:
            found = _ReportsOnly(io.BytesIO(data)).load()
            if type(found).__name__ == kind:
                return found
        except Exception:  # noqa: BLE001 - signed by us but unreadable (another studygap): parse afresh
            pass
    result = build()
    _store(path, result)
    return result
