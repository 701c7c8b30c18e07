"""Random and mutated bytes into every reader, random and mutated YAML into the checklist loader.

The only outcomes allowed are a Document or a StudygapError (the one-line errors users see); anything else is a
bug. A few hundred examples run by default; set STUDYGAP_FUZZ_EXAMPLES=N (per test) for a long run, or use
``python benchmarks/fuzz.py``.
"""

from __future__ import annotations

import atexit
import importlib.util
import io
import os
import shutil
import tempfile
import zipfile
from contextlib import contextmanager
from functools import cache, lru_cache
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from checker.matching.checklist import Checklist, parse_checklist
from checker.reading.document import Document
from checker.core.errors import StudygapError
from checker.core.limits import Limits
from checker.reading import read_document

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = int(os.environ.get("STUDYGAP_FUZZ_EXAMPLES", "40"))
FUZZ = settings(max_examples=EXAMPLES, deadline=None, derandomize="STUDYGAP_FUZZ_EXAMPLES" not in os.environ,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
#: small bounds, so that a mutation that happens to declare huge sizes is refused rather than slow
LIMITS = Limits(max_bytes=2_000_000, max_inflated_bytes=5_000_000, max_pages=20, max_blocks=20_000)
_DIR = tempfile.mkdtemp(prefix="studygap-fuzz-")
atexit.register(shutil.rmtree, _DIR, True)


@lru_cache(maxsize=1)
def _make_bad():
    spec = importlib.util.spec_from_file_location("make_bad", ROOT / "fixtures" / "bad" / "make_bad.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@cache
def seed(suffix: str) -> bytes:
    """A small valid document of each format, the starting point of mutations."""
    mb = _make_bad()
    study = mb.STUDY
    if suffix == ".pdf":
        return mb._study_pdf()
    if suffix == ".docx":
        return mb._study_docx()
    if suffix == ".tex":
        return (b"\\documentclass{article}\n\\begin{document}\n\\section{Methods}\n"
                b"Three \\textbf{radiologists} annotated every scan~\\cite{x}.\n\\begin{itemize}\\item one\n"
                b"\\end{itemize}\n\\input{missing}\n\\end{document}\n")
    if suffix == ".md":
        return ("# Study\n\n## " + study.replace("\n\nResults", "\n\n## Results")
                + "\n| a | b |\n|---|---|\n| 1 | 2 |\n\n- item\n  - nested\n").encode()
    if suffix == ".html":
        return ("<!DOCTYPE html><html><head><title>t</title></head><body><h1>Methods</h1><p>"
                + study.replace("\n\n", "</p><p>") + "</p><table><tr><td>1</td></tr></table></body></html>").encode()
    return study.encode()


SUFFIXES = [".pdf", ".docx", ".tex", ".md", ".html", ".txt"]


@st.composite
def mutated(draw, data: bytes) -> bytes:
    """The seed with a few byte-level edits: flips, cuts, insertions and repeated slices."""
    out = bytearray(data)
    for _ in range(draw(st.integers(1, 6))):
        if not out:
            break
        op = draw(st.sampled_from(["flip", "cut", "insert", "repeat", "delete"]))
        i = draw(st.integers(0, len(out) - 1))
        if op == "flip":
            out[i] = draw(st.integers(0, 255))
        elif op == "cut":
            del out[i:]
        elif op == "insert":
            out[i:i] = draw(st.binary(min_size=1, max_size=64))
        elif op == "repeat":
            j = draw(st.integers(i, min(len(out), i + 256)))
            out[i:i] = bytes(out[i:j]) * draw(st.integers(1, 20))
        else:
            j = draw(st.integers(i, min(len(out), i + 256)))
            del out[i:j]
    return bytes(out)


@st.composite
def mutated_docx(draw) -> bytes:
    """A well-formed zip whose main XML part is mutated: reaches the XML handling, not just the zip checks."""
    src = zipfile.ZipFile(io.BytesIO(seed(".docx")))
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            data = src.read(info)
            if info.filename == "word/document.xml":
                data = draw(mutated(data))
            dst.writestr(info.filename, data)
    return buf.getvalue()


def _read(data: bytes, suffix: str) -> None:
    fd, name = tempfile.mkstemp(suffix=suffix, dir=_DIR)
    with os.fdopen(fd, "wb") as fh:
        fh.write(data)
    try:
        doc = read_document(name, LIMITS)
        assert isinstance(doc, Document) and doc.blocks
        assert all(isinstance(b.text, str) for b in doc.blocks)
    except StudygapError as exc:
        line = exc.line()
        assert line.startswith("studygap: error: ") and "\n" not in line
    finally:
        os.unlink(name)


@pytest.mark.parametrize("suffix", SUFFIXES)
@FUZZ
@given(data=st.data())
def test_random_bytes_give_a_document_or_a_clean_error(suffix, data):
    raw = data.draw(st.one_of(st.binary(max_size=4096),
                              st.text(max_size=2000).map(lambda t: t.encode("utf-8", "surrogatepass"))))
    _read(raw, suffix)


@pytest.mark.parametrize("suffix", SUFFIXES)
@FUZZ
@given(data=st.data())
def test_mutated_documents_give_a_document_or_a_clean_error(suffix, data):
    raw = data.draw(mutated_docx()) if suffix == ".docx" and data.draw(st.booleans()) else \
        data.draw(mutated(seed(suffix)))
    _read(raw, suffix)


# ---------------------------------------------------------------------------------------------------- checklists

MINI = (ROOT / "tests" / "data" / "checklists" / "mini.yaml").read_text()
YAML_BITS = st.sampled_from([":", "- ", "[", "]", "{", "}", "&a ", "*a", "!!python/object ", "|", ">", "'", '"',
                             "#", "\n", "  ", "\t", "(", ")", "{NUMBER}", "(?P<n>", "\\", "*", "+", "~", "null",
                             "<<: *a\n", "? ", "%YAML 1.1\n", "---\n", "...\n"])


@st.composite
def mutated_yaml(draw) -> str:
    text = MINI
    for _ in range(draw(st.integers(1, 5))):
        i = draw(st.integers(0, len(text)))
        op = draw(st.sampled_from(["insert", "delete", "repeat-line"]))
        if op == "insert":
            text = text[:i] + draw(st.one_of(YAML_BITS, st.text(max_size=8))) + text[i:]
        elif op == "delete":
            text = text[:i] + text[i + draw(st.integers(1, 40)):]
        else:
            lines = text.splitlines(keepends=True)
            k = draw(st.integers(0, len(lines) - 1))
            lines[k:k] = [lines[k]] * draw(st.integers(1, 4))
            text = "".join(lines)
    return text


def _parse(text: str) -> None:
    try:
        checklist = parse_checklist(text, "fuzz.yaml")
        assert isinstance(checklist, Checklist) and checklist.items
    except StudygapError as exc:
        assert str(exc)
        for problem in getattr(exc, "problems", []):
            assert problem.startswith("fuzz.yaml:"), problem


@FUZZ
@given(text=st.one_of(st.text(max_size=500), st.lists(YAML_BITS, max_size=60).map("".join)))
def test_random_yaml_gives_a_checklist_or_located_problems(text):
    _parse(text)


@FUZZ
@given(text=mutated_yaml())
def test_mutated_checklists_give_a_checklist_or_located_problems(text):
    _parse(text)


# ---------------------------------------------------------------------------------------------------- settings

CONFIG_SEEDS = {
    ".toml": ('[tool.studygap]\nchecklist = "validation-study"\nfail-on = "missing"\n'
              'ignore-sections = ["Supplementary material"]\n\n[tool.studygap.waivers]\n'
              '"ranking.method" = "a single method is validated; nothing is ranked"\n'),
    ".yaml": ('checklist: validation-study\nfail-on: missing\nignore-sections: [Supplementary material]\n'
              'waivers:\n  ranking.method: a single method is validated; nothing is ranked\nrules:\n  x: true\n'),
}
TOML_BITS = st.sampled_from(["[", "]", "[[", "]]", "=", '"', "'''", "\n", "{", "}", ",", "#", "1e999", "true",
                             "inf", "nan", "0x", "1979-05-27T07:32:00Z", "a.b.c", "\\u0000", "\\"])


@st.composite
def mutated_config(draw) -> tuple[str, str]:
    suffix = draw(st.sampled_from(sorted(CONFIG_SEEDS)))
    text = CONFIG_SEEDS[suffix]
    for _ in range(draw(st.integers(1, 5))):
        i = draw(st.integers(0, len(text)))
        if draw(st.booleans()):
            text = text[:i] + draw(st.one_of(TOML_BITS, YAML_BITS, st.text(max_size=8))) + text[i:]
        else:
            text = text[:i] + text[i + draw(st.integers(1, 30)):]
    return suffix, text


@FUZZ
@given(case=mutated_config())
def test_mutated_settings_give_settings_or_one_line(case):
    from checker.core.config import Config, load_config

    suffix, text = case
    name = os.path.join(_DIR, "pyproject.toml" if suffix == ".toml" else "studygap.yaml")
    with open(name, "w", encoding="utf-8", errors="surrogatepass") as fh:
        fh.write(text)
    try:
        assert isinstance(load_config(name), Config)
    except StudygapError as exc:
        assert exc.line().startswith("studygap: error: ") and "\n" not in exc.line()


# ---------------------------------------------------------------------------------------------------- caches
# Cache entries are signed with a key only this user can read: an entry planted or damaged without the key is
# never unpickled. The report cache also validates what it unpickles field by field, so it is fuzzed both ways:
# mutated bytes as planted (unsigned) and mutated bytes signed with the key (past the signature).


@pytest.fixture(scope="module")
def kept_report(tmp_path_factory):
    """A report kept by a real check with the cache on: (cache folder, key, path, sha256, entry file, payload,
    the first bytes of the regex cache file)."""
    import hashlib

    from checker import resultcache
    from checker.engine import check_document
    from checker.matching import regexcache

    folder = tmp_path_factory.mktemp("cache")
    doc = folder / "study.md"
    doc.write_bytes(seed(".md"))
    with _cache_at(folder / "c"):
        check_document(str(doc), "validation-study", cache=True)
        data = doc.read_bytes()
        from checker.core.config import Config
        from checker.core.limits import DEFAULT_LIMITS

        k = resultcache.key(str(doc), data, "validation-study", Config(), DEFAULT_LIMITS)
        entry = folder / "c" / "results" / f"{k}.pickle"
        payload = regexcache.read_signed(entry)
        assert payload, "the check kept no report"
        import regex

        # a regex cache file as the cache writes it (this process may have compiled everything already)
        patterns = {(p, 0): regex.compile(p) for p in (r"\b(\d+) annotators?\b", r"(?i)dice|jaccard", "a+b")}
        regexcache.pickle_atomically(regexcache._file(), patterns)
        assert regexcache._read(regexcache._file()).keys() == patterns.keys()
        regexes = regexcache._file().read_bytes()[:4096]
    return folder / "c", k, str(doc), hashlib.sha256(data).hexdigest(), entry, payload, regexes


@contextmanager
def _cache_at(folder: Path):
    old = os.environ.get("STUDYGAP_CACHE_DIR")
    os.environ["STUDYGAP_CACHE_DIR"] = str(folder)
    try:
        yield
    finally:
        if old is None:
            os.environ.pop("STUDYGAP_CACHE_DIR", None)
        else:
            os.environ["STUDYGAP_CACHE_DIR"] = old


def _planted_entry(kept_report, raw: bytes, signed: bool):
    from checker import resultcache
    from checker.matching import regexcache
    from checker.verdicts.report import Report

    cache, k, path, sha, entry, _, _ = kept_report
    with _cache_at(cache):
        if signed:
            regexcache.write_signed(entry, raw)
        else:
            entry.write_bytes(raw)
        got = resultcache.get(k, path, sha)
    assert got is None or (type(got) is Report and got.document_path == path and got.sha256 == sha)


@FUZZ
@given(data=st.data())
def test_mutated_report_cache_entries_are_checked_afresh_or_valid(kept_report, data):
    payload = kept_report[5]
    signed = data.draw(st.booleans())
    raw = data.draw(mutated(payload))
    if not signed:  # planted: a whole file as an attacker without the key would write it
        raw = data.draw(st.sampled_from([b"studygap-cache-1\n" + bytes(32), b""])) + raw
    _planted_entry(kept_report, raw, signed)


@FUZZ
@given(data=st.data())
def test_planted_regex_cache_files_are_never_used(kept_report, data):
    from checker.matching import regexcache

    with _cache_at(kept_report[0]):
        path = regexcache._file()
        real = kept_report[6]  # the start of the real file (the check kept its regexes)
        planted = data.draw(mutated(real))
        path.write_bytes(planted)
        found = regexcache._read(path)
    assert found == {} or planted == real
