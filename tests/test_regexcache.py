"""Compiled regexes kept between runs: reused when sound, ignored when damaged or hostile, never required."""

from __future__ import annotations

import os
import pickle
import subprocess
import sys

import pytest
import regex

from checker.matching import regexcache

PATTERN = r"\b(?P<n>\d+)\s+(?:hospitals|centres)\b"
TEXT = "Images came from 3 hospitals and 2 centres."


def _run(cache: str, code: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, STUDYGAP_CACHE_DIR=cache)
    return subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, timeout=60)


FIND = ("import regex; from checker.matching import regexcache as r; rx = r.compile(%r, regex.I); "
        "print([m.group('n') for m in rx.finditer(%r)], r._new)" % (PATTERN, TEXT))


def test_a_second_run_takes_the_patterns_from_the_cache(tmp_path):
    first = _run(str(tmp_path), FIND)
    assert first.returncode == 0, first.stderr
    assert first.stdout.split() == ["['3',", "'2']", "1"]  # compiled, then written at exit
    files = list(tmp_path.glob("regex-*.pickle"))
    assert len(files) == 1
    second = _run(str(tmp_path), FIND)
    assert second.stdout.split() == ["['3',", "'2']", "0"]  # nothing compiled: all from the file


def test_a_damaged_cache_is_ignored_and_replaced(tmp_path, monkeypatch):
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(tmp_path))
    _run(str(tmp_path), FIND)
    (path,) = tmp_path.glob("regex-*.pickle")
    path.write_bytes(b"\x80\x05garbage")
    again = _run(str(tmp_path), FIND)
    assert again.returncode == 0 and again.stderr == ""
    assert again.stdout.split()[-1] == "1"
    assert regexcache._read(path)  # written anew, and sound


class _Boom:
    def __reduce__(self):
        return (os.system, ("echo pwned > pwned.txt",))


def test_a_cache_file_holding_anything_but_patterns_runs_nothing(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    path = tmp_path / "hostile.pickle"
    path.write_bytes(pickle.dumps({(PATTERN, 0): _Boom()}))
    assert regexcache._read(path) == {}
    assert not (tmp_path / "pwned.txt").exists()


def test_an_unwritable_cache_folder_costs_nothing(tmp_path):
    blocked = tmp_path / "file-not-folder"
    blocked.write_text("x")
    result = _run(str(blocked / "sub"), FIND)
    assert result.returncode == 0 and result.stderr == ""
    assert result.stdout.split()[:2] == ["['3',", "'2']"]


def test_off_writes_nothing(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    result = _run("off", FIND)
    assert result.returncode == 0
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("flags", [0, regex.IGNORECASE | regex.V0])
def test_cached_patterns_match_like_fresh_ones(tmp_path, monkeypatch, flags):
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(tmp_path))
    fresh = regex.compile(PATTERN, flags)
    path = tmp_path / "p.pickle"
    regexcache.pickle_atomically(path, {(PATTERN, int(flags)): fresh})
    loaded = regexcache._read(path)[(PATTERN, int(flags))]
    assert [m.span() for m in loaded.finditer(TEXT)] == [m.span() for m in fresh.finditer(TEXT)]


def test_start_up_data_is_kept_as_signed_json_and_rebuilt_when_damaged(tmp_path, monkeypatch):
    """The lemma table and the regexes' required words are kept as JSON data; a file that is not ours, or not
    what the caller accepts, is built afresh."""
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(tmp_path))
    calls = []

    def build():
        calls.append(1)
        return {"annotators": "annotator"}

    assert regexcache.cached_data("demo", "v1", build) == {"annotators": "annotator"}
    assert regexcache.cached_data("demo", "v1", build) == {"annotators": "annotator"}
    assert len(calls) == 1  # the second came from the file
    (path,) = (tmp_path / "data").glob("demo-*.json")
    assert path.read_bytes().endswith(b'{"annotators":"annotator"}')  # plain JSON behind the signature
    assert regexcache.cached_data("demo", "v2", build) and len(calls) == 2  # another stamp, another entry
    path.write_bytes(path.read_bytes().replace(b"annotator", b"planted!!"))  # signature no longer verifies
    assert regexcache.cached_data("demo", "v1", build) == {"annotators": "annotator"} and len(calls) == 3
    assert regexcache.cached_data("demo", "v1", build, check=lambda v: False) and len(calls) == 4
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", "off")
    assert regexcache.cached_data("demo", "v1", build) and len(calls) == 5


def test_cached_lemmas_and_required_words_equal_the_fresh_ones(tmp_path):
    code = ("from checker.matching import nlp, regexscan, matcher\n"
            "from checker.matching.checklist import load_checklist\n"
            "from checker.matching.facts import MACRO_NEEDS\n"
            "t = nlp._lemma_table()\n"
            "srcs = [s for it in load_checklist('validation-study').items for f in it.facets for s in f.cues.regex]\n"
            "w = matcher.required_word_sets_of(srcs)\n"
            "m = tuple(sorted(MACRO_NEEDS.items()))\n"
            "print(len(t), t['annotators'], t['were'], w == [regexscan.required_word_sets(s, m) for s in srcs], "
            "len(srcs))\n")
    first, second = _run(str(tmp_path), code), _run(str(tmp_path), code)
    assert first.returncode == 0, first.stderr
    assert first.stdout == second.stdout
    n, annotator, be, same, sources = second.stdout.split()
    assert int(n) > 10_000 and annotator == "annotator" and be == "be" and same == "True" and int(sources) > 20
    assert len(list((tmp_path / "data").glob("lemmas-en-*.json"))) == 1


def test_only_the_patterns_a_run_asks_for_are_unpickled(tmp_path):
    other = r"\b(?P<k>\d+)\s+readers\b"
    fill = ("import regex; from checker.matching import regexcache as r; r.compile(%r, regex.I); r.compile(%r); "
            "r.save()" % (PATTERN, other))
    assert _run(str(tmp_path), fill).returncode == 0
    one = _run(str(tmp_path), "import regex; from checker.matching import regexcache as r; "
                              "rx = r.compile(%r, regex.I); print(rx.search(%r).group('n'), r._new, len(r._memo), "
                              "sorted(k[0] for k in r._stored) == [%r])" % (PATTERN, TEXT, other))
    assert one.returncode == 0, one.stderr
    assert one.stdout.split() == ["3", "0", "1", "True"]  # from the file, the other pattern left packed


def test_cached_phrase_tokens_equal_the_tokenizers(tmp_path):
    """The cue phrases' lemmas and lower-case forms kept between runs are what the pipeline gives them."""
    code = ("from checker.matching import nlp\n"
            "texts = ['inter-rater agreement', 'Annotators', \"readers' consensus\", 'e.g. ground truth', '']\n"
            "n = nlp.pipeline()\n"
            "table = nlp.phrase_tokens(n, texts)\n"
            "fresh = {t: [[x.lemma_ for x in nlp.make_phrase_doc(n, t)], [x.lower_ for x in nlp.make_phrase_doc(n, t)]]"
            " for t in texts}\n"
            "print(table == fresh, table['Annotators'])\n")
    first, second = _run(str(tmp_path), code), _run(str(tmp_path), code)
    assert first.returncode == 0, first.stderr
    assert first.stdout == second.stdout == "True [['annotator'], ['annotators']]\n"
    assert len(list((tmp_path / "data").glob("phrases-*.json"))) == 1
