"""Compiled regexes kept on disk between runs, as Python keeps compiled modules.

The regex module compiles in Python: the checklists' and the fact extractor's few hundred patterns (the number
patterns are long) cost about half a second in every process. A compiled pattern pickles to its compiled code,
so the second and later runs load them in milliseconds; each is pickled on its own and unpickled only when a run
first asks for it. The file sits in the user's cache folder
(``$STUDYGAP_CACHE_DIR``, else ``$XDG_CACHE_HOME/studygap``, else ``~/.cache/studygap``), is named after the
regex and Python versions, and is only ever read back as regex patterns; when it is missing, stale, damaged
or cannot be written, patterns are simply compiled as usual. ``STUDYGAP_CACHE_DIR=off`` turns it off.

A compiled pattern is code for the regex engine, and damaged or planted code crashes or misleads it; so every
cache file of studygap's (this one, and the reports and parsed checklists of checker.resultcache) is signed
with HMAC-SHA256 under a random key that only this user can read (``.key`` in the cache folder, mode 0600), and
a file whose signature does not verify is never unpickled: it is ignored and written anew. The signature
covers the file's name too, so an entry moved to another name is refused. Files are written owner-only.
"""

from __future__ import annotations

import atexit
import hashlib
import hmac
import io
import os
import pickle
import stat
import sys
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


def _entries(path: Path) -> dict[tuple[str, int], object]:
    """The file's entries as stored: each pattern pickled on its own (bytes), or a pattern itself (files written
    before patterns were stored one by one); {} when the file is missing, damaged or not ours."""
    try:
        data = read_signed(path)
        if data is None:  # missing, damaged, planted or from another version: compile afresh
            return {}
        found = _PatternsOnly(io.BytesIO(data)).load()
    except Exception:  # noqa: BLE001 - signed by us but unreadable (another regex build): compile afresh
        return {}
    if not isinstance(found, dict):
        return {}
    return {k: v for k, v in found.items()
            if isinstance(k, tuple) and len(k) == 2 and isinstance(k[0], str) and isinstance(k[1], int)
            and isinstance(v, (bytes, regex.Pattern))}


def _pattern(key: tuple[str, int], stored) -> regex.Pattern | None:
    """The pattern of one entry, if it is a sound pattern for its key; unpickled only now, when first needed (a
    run uses a fraction of the few hundred patterns kept, and unpickling them all cost a tenth of a second)."""
    if isinstance(stored, bytes):
        try:
            stored = _PatternsOnly(io.BytesIO(stored)).load()
        except Exception:  # noqa: BLE001 - not a pattern: compile afresh
            return None
    if isinstance(stored, regex.Pattern) and stored.pattern == key[0] and stored.flags & key[1] == key[1]:
        return stored
    return None


def _read(path: Path) -> dict[tuple[str, int], regex.Pattern]:
    """Every sound pattern of the file."""
    out = {}
    for k, v in _entries(path).items():
        rx = _pattern(k, v)
        if rx is not None:
            out[k] = rx
    return out


#: entries of the cache file not unpickled yet
_stored: dict[tuple[str, int], object] = {}


def _load() -> None:
    global _loaded
    _loaded = True
    path = _file()
    if path is not None:
        for k, v in _entries(path).items():
            if k not in _memo:
                _stored[k] = v


def compile(pattern: str, flags: int = 0) -> regex.Pattern:  # noqa: A001 - named as regex.compile is
    """regex.compile(pattern, flags), from the on-disk cache when an earlier run compiled it."""
    global _new
    if not _loaded:
        _load()
    k = (pattern, int(flags))  # a plain int: the file holds nothing but patterns, strings and numbers
    hit = _memo.get(k)
    if hit is None and k in _stored:
        hit = _pattern(k, _stored.pop(k))
        if hit is not None:
            _memo[k] = hit
    if hit is None:
        if "){" in pattern:  # only a repeated group can multiply repeats inside it (see limits.regex_expansion)
            from ..core.limits import regex_size_problem

            problem = regex_size_problem(pattern)
            if problem:  # compiling alone would take gigabytes
                raise regex.error(problem)
        hit = _memo[k] = regex.compile(pattern, flags)
        _new += 1
    return hit


def save() -> None:
    """Write the patterns compiled in this process to the cache (merged with what other runs wrote), each
    pickled on its own so that a later run unpickles only those it uses."""
    global _new
    path = _file()
    if not _new or path is None:
        return
    _new = 0
    try:
        merged = _entries(path)
        merged.update(_stored)
        merged.update(_memo)
        if len(merged) > _MAX_ENTRIES:
            merged = dict(_memo)
        pickle_atomically(path, {k: v if isinstance(v, bytes) else pickle.dumps(v, protocol=pickle.HIGHEST_PROTOCOL)
                                 for k, v in merged.items()})
    except (OSError, pickle.PicklingError):  # a read-only home, a full disk: the next run compiles again
        pass


_MAGIC = b"studygap-cache-1\n"
_KEY_FILE = ".key"
_KEY_BYTES = 32


def _private_folder(folder: Path) -> None:
    folder.mkdir(mode=0o700, parents=True, exist_ok=True)


def _open_key(path: Path, create: bool) -> bytes | None:
    """The installation key: 32 random bytes in a regular file that this user owns and nobody else can read."""
    flags = os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0)
    try:
        fd = os.open(path, flags)
    except FileNotFoundError:
        if not create:
            return None
        key = os.urandom(_KEY_BYTES)
        try:
            _private_folder(path.parent)
            fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0), 0o600)
        except FileExistsError:  # another process made it meanwhile: use that one
            return _open_key(path, create=False)
        except OSError:
            return None
        with os.fdopen(fd, "wb") as fh:
            fh.write(key)
        return key
    except OSError:  # a link, a folder, unreadable
        return None
    with os.fdopen(fd, "rb") as fh:
        st = os.fstat(fh.fileno())
        trusted = (stat.S_ISREG(st.st_mode) and st.st_mode & 0o077 == 0
                   and (not hasattr(os, "getuid") or st.st_uid == os.getuid()))
        key = fh.read(_KEY_BYTES + 1)
    return key if trusted and len(key) == _KEY_BYTES else None


def _key(create: bool) -> bytes | None:
    d = cache_dir()
    return None if d is None else _open_key(d / _KEY_FILE, create)


def _mac(key: bytes, name: str, payload: bytes) -> bytes:
    return hmac.new(key, name.encode("utf-8") + b"\0" + payload, hashlib.sha256).digest()


def read_signed(path: Path, max_bytes: int = 512 * 1024 * 1024) -> bytes | None:
    """The payload of a cache file that this installation wrote under this name, or None (absent, damaged,
    written by someone else, not a regular file, or larger than max_bytes)."""
    key = _key(create=False)
    if key is None:
        return None
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0))
    except OSError:
        return None
    with os.fdopen(fd, "rb") as fh:
        st = os.fstat(fh.fileno())
        if not stat.S_ISREG(st.st_mode) or st.st_size > max_bytes:
            return None
        data = fh.read(max_bytes + 1)
    head = len(_MAGIC) + hashlib.sha256().digest_size
    if len(data) < head or not data.startswith(_MAGIC) or len(data) > max_bytes:
        return None
    payload = data[head:]
    if not hmac.compare_digest(data[len(_MAGIC):head], _mac(key, path.name, payload)):
        return None
    return payload


def write_signed(path: Path, payload: bytes) -> None:
    """Write a cache file atomically, owner-only, signed with the installation key (OSError when it cannot)."""
    key = _key(create=True)
    if key is None:
        raise OSError(f"{path.parent}: no usable cache key (a key file not owned by this user, or not private)")
    _private_folder(path.parent)
    from ..core.output import replace_atomically

    replace_atomically(path, _MAGIC + _mac(key, path.name, payload) + payload)  # owner-only (mode 0600)


def pickle_atomically(path: Path, value) -> None:
    """Pickle value to a signed cache file, so that a reader sees the old file or the whole new one."""
    write_signed(path, pickle.dumps(value, protocol=pickle.HIGHEST_PROTOCOL))


def cached_data(name: str, stamp: str, build, check=None):
    """JSON data that is costly to build in every process (the lemma table, the words a checklist's regexes
    need), from a signed file of the cache folder when an earlier run built it under the same stamp.

    ``stamp`` names everything the data depends on (library versions, the source text it was made from); the
    file is ``data/NAME-<hash of stamp>.json``. Only JSON is stored and read back (strings, numbers, lists,
    dicts: never code), and ``check(value)`` must accept what is read, or the data is built afresh. Without a
    cache folder, or when the file cannot be written, the data is simply built.
    """
    import json

    d = cache_dir()
    if d is None:
        return build()
    path = d / "data" / f"{name}-{hashlib.sha256(stamp.encode('utf-8')).hexdigest()[:32]}.json"
    payload = read_signed(path)
    if payload is not None:
        try:
            value = json.loads(payload)
            if check is None or check(value):
                return value
        except ValueError:  # signed by us but not JSON (another studygap): build afresh
            pass
    value = build()
    try:
        write_signed(path, json.dumps(value, ensure_ascii=False, separators=(",", ":")).encode("utf-8"))
    except OSError:  # a read-only home, a full disk: the next run builds again
        pass
    return value


atexit.register(save)
