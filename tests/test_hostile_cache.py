"""Poisoned cache entries: damaged, foreign or crafted entries are never trusted; the verdicts equal a run
without the cache, and nothing crashes or hangs."""

from __future__ import annotations

import copy
import copyreg
import dataclasses
import io
import json
import os
import pickle
import random
import stat
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest
import regex

from checker import resultcache
from checker.matching import regexcache
from checker.cli.main import main
from checker.core.config import Config
from checker.engine import check_document
from checker.core.limits import DEFAULT_LIMITS
from checker.matching.fact import Fact

from .conftest import DATA

ROOT = Path(__file__).resolve().parent.parent
MINI = str(DATA / "checklists" / "mini.yaml")
TEXT = """# Methods

Three board-certified radiologists annotated every scan as the reference standard.

# Results

We compare the model with the baseline method.
"""


@pytest.fixture
def cache(tmp_path, monkeypatch) -> Path:
    folder = tmp_path / "cache"
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(folder))
    resultcache.notices.clear()
    return folder


@pytest.fixture
def doc(tmp_path) -> Path:
    p = tmp_path / "draft.md"
    p.write_text(TEXT, encoding="utf-8")
    return p


def _key_of(path: Path) -> str:
    return resultcache.key(path, path.read_bytes(), MINI, Config(), DEFAULT_LIMITS)


def _entry_file(path: Path) -> Path:
    return resultcache._folder() / f"{_key_of(path)}.pickle"


def _statuses(report) -> dict[str, str]:
    return {it.id: it.status for it in report.items}


def _all_reported(report):
    items = tuple(dataclasses.replace(it, status="reported") for it in report.items)
    return dataclasses.replace(report, items=items)


def _json(args: list[str], capsys) -> tuple[int, dict]:
    code = main(args)
    return code, json.loads(capsys.readouterr().out)


# ------------------------------------------------------------------------------------ report entries


def test_a_planted_all_reported_entry_is_not_served_and_fail_on_still_fails(cache, doc, capsys):
    fresh_code, fresh = _json(["check", str(doc), "--checklist", MINI, "-f", "json", "--fail-on", "missing",
                               "--no-cache"], capsys)
    assert fresh_code == 1  # the draft leaves items missing
    check_document(doc, MINI, cache=True)
    entry = _entry_file(doc)
    sound = resultcache._ReportsOnly(io.BytesIO(regexcache.read_signed(entry))).load()
    planted = {**sound, "report": _all_reported(sound["report"])}
    entry.write_bytes(pickle.dumps(planted))  # what an attacker without the key can write
    code, served = _json(["check", str(doc), "--checklist", MINI, "-f", "json", "--fail-on", "missing"], capsys)
    assert code == 1 and served == fresh
    assert any("signature" in n for n in resultcache.notices)


def test_an_entry_signed_by_another_installation_is_refused(cache, doc, tmp_path, monkeypatch):
    first = check_document(doc, MINI, cache=True)
    entry = _entry_file(doc)
    other = tmp_path / "other-cache"
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(other))
    regexcache.pickle_atomically(other / "results" / entry.name,
                                 {"format": resultcache._FORMAT, "key": entry.stem, "path": str(doc),
                                  "sha256": first.sha256, "report": _all_reported(first)})
    entry.write_bytes((other / "results" / entry.name).read_bytes())  # right name, another key
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(cache))
    again = check_document(doc, MINI, cache=True)
    assert _statuses(again) == _statuses(first) and again == first


def test_the_report_of_another_file_is_never_served_even_when_signed(cache, doc, tmp_path):
    other = tmp_path / "other.md"
    other.write_text(TEXT.replace("Three board-certified radiologists annotated", "Nobody says who annotated"),
                     encoding="utf-8")
    theirs = check_document(other, MINI, cache=True)
    entry = _entry_file(doc)
    # a validly signed entry (as if written by a bug or copied within this cache) that holds another file's report
    for forged in (
        {"format": resultcache._FORMAT, "key": entry.stem, "path": str(doc), "sha256": theirs.sha256,
         "report": theirs},
        {"format": resultcache._FORMAT, "key": entry.stem, "path": str(other), "sha256": theirs.sha256,
         "report": theirs},
        {"format": resultcache._FORMAT, "key": _key_of(other), "path": str(doc),
         "sha256": dataclasses.replace(theirs, document_path=str(doc)).sha256,
         "report": dataclasses.replace(theirs, document_path=str(doc))},
    ):
        regexcache.pickle_atomically(entry, forged)
        served = check_document(doc, MINI, cache=True)
        assert served.document_path == str(doc) and served.sha256 != theirs.sha256
    assert _statuses(served) == _statuses(check_document(doc, MINI))


def _crafted(report):
    """Reports no check makes: a cycle, a 5,000-digit number, a shared fan-out, an unknown status, a foreign type,
    a missing field."""
    item = report.items[0]
    location = item.evidence[0].location if item.evidence else None
    cyclic = []
    cyclic.append(cyclic)

    def fact_with(value):
        return dataclasses.replace(item, facts=(("count", (Fact("count", value, "x", location=location),)),))

    fan = ("x",)
    for _ in range(60):  # 2**60 leaves when walked naively
        fan = (fan, fan)
    yield "cycle", dataclasses.replace(report, items=(fact_with(cyclic),) + report.items[1:])
    yield "huge int", dataclasses.replace(report, items=(fact_with(10 ** 5000),) + report.items[1:])
    yield "fan-out", dataclasses.replace(report, items=(fact_with(fan),) + report.items[1:])
    yield "status", dataclasses.replace(report, items=(dataclasses.replace(item, status="certified"),)
                                        + report.items[1:])
    yield "type", dataclasses.replace(report, words="many")
    yield "shape", dataclasses.replace(report, items=[it for it in report.items])
    missing = copy.copy(report)  # a record without one of its fields (the fuzz test's find: an AttributeError)
    object.__delattr__(missing, "sha256")
    yield "missing field", missing


def test_crafted_entries_are_refused_without_a_hang_or_a_traceback(cache, doc):
    first = check_document(doc, MINI, cache=True)
    entry = _entry_file(doc)
    assert first.items[0].evidence, "the first item needs a passage for this test"
    for name, report in _crafted(first):
        regexcache.pickle_atomically(entry, {"format": resultcache._FORMAT, "key": entry.stem, "path": str(doc),
                                             "sha256": first.sha256, "report": report})
        served = check_document(doc, MINI, cache=True)
        assert served == first, name
    assert len(resultcache.notices) == 7


def test_cache_files_are_private(cache, doc):
    check_document(doc, MINI, cache=True)
    for p in [cache, cache / "results", *cache.rglob("*")]:
        assert stat.S_IMODE(p.stat().st_mode) & 0o077 == 0, p


def test_a_key_file_others_can_read_or_write_turns_the_cache_off(cache, doc):
    first = check_document(doc, MINI, cache=True)
    key = cache / ".key"
    os.chmod(key, 0o644)  # planted, or made readable: whoever reads it can sign entries
    entry = _entry_file(doc)
    with pytest.raises(OSError):  # the writer refuses such a key too
        regexcache.pickle_atomically(entry, {"anything": 1})
    assert check_document(doc, MINI, cache=True) == first
    assert regexcache.read_signed(entry) is None


# ------------------------------------------------------------------------------------ compiled regexes


PATTERN = r"\b(?P<n>\d+)\s+(?:hospitals|centres)\b"
OTHER = r"\b(?P<n>\d+)\s+(?:scanners)\b"
SENTENCE = "Images came from 3 hospitals and 2 centres on 4 scanners."


class _Swapped:
    """Pickles as regex's own rebuild call: PATTERN's name with OTHER's compiled code."""

    def __init__(self):
        other = regex.compile(OTHER)
        func, args = copyreg.dispatch_table[type(other)](other)[:2]
        self.reduced = (func, (PATTERN, *args[1:]))

    def __reduce__(self):
        return self.reduced


def test_swapped_compiled_code_is_never_loaded(tmp_path, monkeypatch):
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(tmp_path))
    path = regexcache._file()
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_bytes(pickle.dumps({(PATTERN, 0): _Swapped()}))
    assert regexcache._read(path) == {}
    other = tmp_path / "other"
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(other))
    regexcache.pickle_atomically(other / path.name, {(PATTERN, 0): _Swapped()})  # signed, but by another key
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(tmp_path))
    path.write_bytes((other / path.name).read_bytes())
    assert regexcache._read(path) == {}


def test_damaged_regex_cache_files_never_crash_or_hang(tmp_path):
    # run apart: a bad compiled pattern would crash the interpreter itself (SIGSEGV), not raise
    code = textwrap.dedent(f"""
        import random, regex
        from checker.matching import regexcache
        path = regexcache._file()
        sound = {{({PATTERN!r}, 0): regex.compile({PATTERN!r}), ({OTHER!r}, 2): regex.compile({OTHER!r}, 2)}}
        regexcache.pickle_atomically(path, sound)
        good = path.read_bytes()
        rng = random.Random(20)
        loaded = 0
        for i in range(150):
            data = bytearray(good)
            for _ in range(rng.randint(1, 8)):
                at = rng.randrange(len(data))
                data[at] = (data[at] + rng.randrange(1, 256)) % 256  # always another byte: the file is damaged
            path.write_bytes(bytes(data))
            found = regexcache._read(path)
            assert found in ({{}}, sound), i
            loaded += bool(found)
            for rx in found.values():
                rx.search({SENTENCE!r})
        print("loaded", loaded)
    """)
    env = {**os.environ, "STUDYGAP_CACHE_DIR": str(tmp_path), "PYTHONPATH": str(ROOT)}
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, timeout=120)
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert proc.stdout.strip() == "loaded 0"  # every damaged byte is caught by the signature


def test_a_check_with_a_poisoned_regex_cache_gives_the_verdicts_of_a_clean_one(tmp_path, doc):
    clean = tmp_path / "clean"
    env = {**os.environ, "PYTHONPATH": str(ROOT), "NO_COLOR": "1"}
    args = [sys.executable, "-m", "checker.cli", "check", str(doc), "--checklist", MINI, "-f", "json", "--no-cache"]
    want = subprocess.run(args, capture_output=True, text=True, env={**env, "STUDYGAP_CACHE_DIR": str(clean)},
                          timeout=120)
    poisoned = tmp_path / "poisoned"
    poisoned.mkdir()
    name = subprocess.run([sys.executable, "-c", "from checker.matching import regexcache; print(regexcache._file().name)"],
                          capture_output=True, text=True, env={**env, "STUDYGAP_CACHE_DIR": str(poisoned)},
                          timeout=60).stdout.strip()
    rng = random.Random(7)
    good = (clean / name).read_bytes()
    bad = bytearray(good)
    for _ in range(20):
        bad[rng.randrange(len(bad))] = rng.randrange(256)
    (poisoned / name).write_bytes(bytes(bad))
    got = subprocess.run(args, capture_output=True, text=True, env={**env, "STUDYGAP_CACHE_DIR": str(poisoned)},
                         timeout=120)
    assert got.returncode == want.returncode and "Traceback" not in got.stderr
    assert got.stdout == want.stdout


def test_a_refused_entry_is_one_line_under_verbose_and_silent_otherwise(tmp_path):
    # before, the notices were collected but never shown
    folder = tmp_path / "cache"
    (tmp_path / "draft.md").write_text(TEXT, encoding="utf-8")
    env = {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT), "STUDYGAP_CACHE_DIR": str(folder)}

    def check(*extra: str) -> subprocess.CompletedProcess:
        return subprocess.run([sys.executable, "-m", "checker.cli", "check", "draft.md", "--checklist", MINI,
                               "-f", "json", *extra], cwd=tmp_path, capture_output=True, text=True, timeout=120,
                              env=env, check=False)

    first = check()
    assert first.returncode == 0, first.stderr
    entries = list((folder / "results").glob("*.pickle"))
    assert len(entries) == 1
    entries[0].write_bytes(b"planted by someone without the key")
    quiet = check()
    assert quiet.returncode == 0 and quiet.stderr == "" and quiet.stdout == first.stdout
    entries[0].write_bytes(b"planted again")
    loud = check("--verbose")
    assert loud.returncode == 0
    line, = loud.stderr.splitlines()
    assert line.startswith("studygap: cache: the kept report ") and "its signature does not verify" in line
    assert line.endswith("draft.md is checked afresh")
