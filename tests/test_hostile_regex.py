"""Checklist regexes whose counted repeats multiply into gigabytes are refused before the engine compiles them."""

from __future__ import annotations

import dataclasses
import os
import random
import resource
import subprocess
import sys
from pathlib import Path

import pytest
import regex

from checker.matching import regexcache
from checker.matching.checklist import builtin_ids, load_checklist
from checker.matching.facts import expand_macros
from checker.core.limits import MAX_REGEX_EXPANSION, regex_expansion, regex_size_problem

from .test_bad_input import make_bad  # the hostile corpus builder's checklist template

ROOT = Path(__file__).resolve().parent.parent
NESTED = "(?:(?:(?:a{1000}){1000}){1000}){1000}b"  # compiling it alone went past 24 GB


@pytest.mark.parametrize("pattern", [
    NESTED, r"(?:(?:a{1000}){1000}){1000}", r"(a{1000}){101}", r"((?:x|y){500}\s{500}){100}", "a{1000001}",
    "(" * 5000 + "a{10}" + "){10}" * 5000,  # deep nesting: no recursion inside the check
])
def test_multiplying_repeats_are_refused(pattern):
    problem = regex_size_problem(pattern)
    assert problem and f"{MAX_REGEX_EXPANSION:,}" in problem and "character" in problem


@pytest.mark.parametrize(("pattern", "size"), [
    (r"\d{1,3}(?:,\d{3}){1,3}", 15), (r"(?:ab|cd){3}", 12), (r"(?i)ab", 2), (r"(?P<n>\d+)(?<=x)y{3}", 5),
    (r"(?-i:HD){2}", 4), (r"[]{}]{100}", 100), (r"\p{L}{3}", 3), (r"x{,4}", 4), (r"[a-z]{2,}", 2),
    (r"(a{1000}){100}", 100_000), (r"a{2", 3), (r"(?#a{999999})b", 1),
])
def test_the_expansion_is_the_pattern_written_out(pattern, size):
    assert regex_expansion(pattern)[0] == size


def _regexes(value, seen=None) -> list[str]:
    seen = set() if seen is None else seen
    if id(value) in seen:
        return []
    seen.add(id(value))
    out = []
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        if isinstance(getattr(value, "regex", None), tuple):
            out.extend(value.regex)
        for f in dataclasses.fields(value):
            out.extend(_regexes(getattr(value, f.name), seen))
    elif isinstance(value, (tuple, list)):
        for v in value:
            out.extend(_regexes(v, seen))
    elif isinstance(value, dict):
        for v in value.values():
            out.extend(_regexes(v, seen))
    return out


def test_every_built_in_regex_is_far_below_the_bound():
    patterns = {expand_macros(p) for cid in builtin_ids() for p in _regexes(load_checklist(cid))}
    assert len(patterns) > 50
    largest = max(regex_expansion(p)[0] for p in patterns)
    assert largest * 10 < MAX_REGEX_EXPANSION, largest  # 2,227 at the time of writing


def test_random_patterns_never_break_the_check():
    rng = random.Random(4)
    alphabet = "ab()[]{}|*+?\\^$,.:=!<>P0123456789-"
    for _ in range(3000):
        pattern = "".join(rng.choice(alphabet) for _ in range(rng.randint(0, 40)))
        size, where = regex_expansion(pattern)
        assert 0 <= size <= MAX_REGEX_EXPANSION + 1 and where >= -1


def test_the_cache_compiler_refuses_them_before_compiling():
    with pytest.raises(regex.error, match="counted repeats multiply"):
        regexcache.compile(NESTED, regex.IGNORECASE | regex.V0)
    assert (NESTED, int(regex.IGNORECASE | regex.V0)) not in regexcache._memo


def _limit_memory() -> None:
    limit = 1536 * 1024 * 1024
    resource.setrlimit(resource.RLIMIT_AS, (limit, limit))


@pytest.mark.skipif(not hasattr(resource, "RLIMIT_AS"), reason="needs an address-space limit")
def test_validate_refuses_the_checklist_with_its_place_under_a_memory_limit(tmp_path):
    checklist = tmp_path / "greedy.yaml"
    checklist.write_text(make_bad._checklist(f"regex: ['{NESTED}']"), encoding="utf-8")
    env = {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT), "STUDYGAP_CACHE_DIR": str(tmp_path / "c")}
    proc = subprocess.run([sys.executable, "-m", "checker.cli", "checklists", "validate", str(checklist)],
                          capture_output=True, text=True, env=env, timeout=120, preexec_fn=_limit_memory)
    assert proc.returncode == 2, proc.stderr
    assert "Traceback" not in proc.stderr and "MemoryError" not in proc.stderr
    assert f"{checklist}:17:" in proc.stderr and "counted repeats multiply" in proc.stderr
