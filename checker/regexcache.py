"""Compiled regexes kept on disk between runs, as Python keeps compiled modules.

The regex module compiles in Python: the checklists' and the fact extractor's few hundred patterns (the number
patterns are long) cost about half a second in every process. A compiled pattern pickles to its compiled code,
so the second and later runs load them in milliseconds. The file sits in the user's cache folder
(``$STUDYGAP_CACHE_DIR``, else ``$XDG_CACHE_HOME/studygap``, else ``~/.cache/studygap``), is named after the
regex and Python versions, and is only ever read back as regex patterns; when it is missing, stale, damaged
or cannot be written, patterns are simply compiled as usual. ``STUDYGAP_CACHE_DIR=off`` turns it off.
"""

from __future__ import annotations

import atexit
import io
import os
import pickle
import sys
import tempfile
from pathlib import Path

import regex

_MAX_ENTRIES = 20_000  # user checklists add patterns; the file must not grow without end
_memo: dict[tuple[str, int], regex.Pattern] = {}
_loaded = False
_new = 0


def cache_dir() -> Path | None:
    """The folder for studygap's caches, or None when caching is turned off."""
    chosen = os.environ.get("STUDYGAP_CACHE_DIR")
    if chosen:
        return None if chosen.lower() in ("off", "0", "none", "no") else Path(chosen)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "studygap"


def _file() -> Path | None:
    d = cache_dir()
    if d is None:
        return None
    py = f"{sys.version_info[0]}{sys.version_info[1]}"
    return d / f"regex-{regex.__version__}-py{py}.pickle"


class _PatternsOnly(pickle.Unpickler):
    """Unpickles regex patterns (and the plain data they are built from), nothing else."""

    def find_class(self, module: str, name: str):
        if name == "compile" and module in ("_regex", "regex._regex"):
            return super().find_class(module, name)
        raise pickle.UnpicklingError(f"{module}.{name} is not a regex pattern")


def _read(path: Path) -> dict[tuple[str, int], regex.Pattern]:
    try:
        data = path.read_bytes()
        found = _PatternsOnly(io.BytesIO(data)).load()
    except Exception:  # missing, damaged, from another version: compile afresh
        return {}
    if not isinstance(found, dict):
        return {}
    return {k: v for k, v in found.items()
            if isinstance(k, tuple) and len(k) == 2 and isinstance(v, regex.Pattern)
            and v.pattern == k[0]}


def _load() -> None:
    global _loaded
    _loaded = True
    path = _file()
    if path is not None:
        for k, v in _read(path).items():
            _memo.setdefault(k, v)


def compile(pattern: str, flags: int = 0) -> regex.Pattern:  # noqa: A001 - named as regex.compile is
    """regex.compile(pattern, flags), from the on-disk cache when an earlier run compiled it."""
    global _new
    if not _loaded:
        _load()
    k = (pattern, int(flags))  # a plain int: the file holds nothing but patterns, strings and numbers
    hit = _memo.get(k)
    if hit is None:
        hit = _memo[k] = regex.compile(pattern, flags)
        _new += 1
    return hit


def save() -> None:
    """Write the patterns compiled in this process to the cache (merged with what other runs wrote)."""
    global _new
    path = _file()
    if not _new or path is None:
        return
    _new = 0
    try:
        merged = _read(path)
        merged.update(_memo)
        if len(merged) > _MAX_ENTRIES:
            merged = dict(_memo)
        pickle_atomically(path, merged)
    except OSError:  # a read-only home or a full disk: the next run compiles again, nothing is lost
        pass


def pickle_atomically(path: Path, value) -> None:
    """Pickle value to path so that a reader sees the old file or the whole new one (studygap's caches)."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.stem[:20]}-", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            pickle.dump(value, fh, protocol=pickle.HIGHEST_PROTOCOL)
        os.replace(tmp, path)
    except BaseException:
        os.unlink(tmp)
        raise


atexit.register(save)
