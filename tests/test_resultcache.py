"""Reports of unchanged files kept between runs: reused only when nothing they depend on changed, ignored when
damaged or hostile, and switched off by --no-cache or STUDYGAP_CACHE_DIR=off."""

from __future__ import annotations

import dataclasses
import os
import pickle
import shutil

import pytest

from checker import engine, resultcache
from checker.cli.main import main
from checker.core.config import Config
from checker.engine import check_document
from checker.core.limits import DEFAULT_LIMITS

from .conftest import DATA

MINI = str(DATA / "checklists" / "mini.yaml")
TEXT = """# Methods

Three board-certified radiologists annotated every scan as the reference standard.

# Results

We compare the model with the baseline method; differences were tested with a Wilcoxon signed-rank test.
"""


@pytest.fixture
def cache(tmp_path, monkeypatch):
    """A cache folder of this test's own, and a count of the checks that really ran (misses)."""
    folder = tmp_path / "cache"
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(folder))
    runs: list[str] = []
    real = engine._check

    def counting(path, *args):
        runs.append(str(path))
        return real(path, *args)

    monkeypatch.setattr(engine, "_check", counting)
    return folder, runs


@pytest.fixture
def doc(tmp_path):
    p = tmp_path / "draft.md"
    p.write_text(TEXT, encoding="utf-8")
    return p


def entries(folder):
    return sorted(p.name for p in (folder / "results").glob("*.pickle")) if (folder / "results").exists() else []


def entry_of(path, checklist=MINI, config=None, limits=DEFAULT_LIMITS):
    k = resultcache.key(path, path.read_bytes(), checklist, config or Config(), limits)
    return resultcache._folder() / f"{k}.pickle"


def test_an_unchanged_file_is_not_checked_again(cache, doc):
    folder, runs = cache
    first = check_document(doc, MINI, cache=True)
    second = check_document(doc, MINI, cache=True)
    assert runs == [str(doc)]
    assert second == first
    assert len(entries(folder)) == 1


def test_changed_bytes_are_checked_afresh(cache, doc):
    _, runs = cache
    first = check_document(doc, MINI, cache=True)
    doc.write_text(TEXT.replace("Three board-certified radiologists", "Two radiologists"), encoding="utf-8")
    second = check_document(doc, MINI, cache=True)
    assert len(runs) == 2
    # the new report describes the new text: the annotators' expertise is no longer stated
    assert [it.status for it in first.items if it.id == "reference.annotators"] == ["reported"]
    assert [it.status for it in second.items if it.id == "reference.annotators"] == ["partial"]


def test_a_changed_configuration_is_checked_afresh(cache, doc):
    _, runs = cache
    check_document(doc, MINI, cache=True)
    waived = check_document(doc, MINI, Config(waivers={"reference.annotators": "annotated by the authors"}),
                            cache=True)
    assert len(runs) == 2
    assert [it.status for it in waived.items if it.id == "reference.annotators"] == ["waived"]


def test_an_edited_checklist_file_is_checked_afresh(cache, doc, tmp_path):
    _, runs = cache
    mine = tmp_path / "mine.yaml"
    shutil.copy(MINI, mine)
    first = check_document(doc, str(mine), cache=True)
    mine.write_text(mine.read_text(encoding="utf-8").replace("Annotation reporting (test checklist)",
                                                             "Annotation reporting, revised"), encoding="utf-8")
    engine.compiled_for.cache_clear()  # this process compiled the old file; a new run would read it anew
    second = check_document(doc, str(mine), cache=True)
    assert len(runs) == 2
    assert (first.checklist_title, second.checklist_title) == ("Annotation reporting (test checklist)",
                                                               "Annotation reporting, revised")


def test_the_same_checklist_under_another_name_is_checked_afresh(cache, doc, tmp_path):
    # the report names the checklist file it was chosen by, so a copy elsewhere must not share its report
    _, runs = cache
    other = tmp_path / "other.yaml"
    shutil.copy(MINI, other)
    a = check_document(doc, MINI, cache=True)
    b = check_document(doc, str(other), cache=True)
    assert len(runs) == 2
    assert a.checklist_choice.startswith("mini:") and b.checklist_choice.startswith("other:")


def test_changed_limits_are_checked_afresh_but_the_time_bound_is_not_part_of_the_key(cache, doc):
    _, runs = cache
    check_document(doc, MINI, cache=True)
    check_document(doc, MINI, limits=dataclasses.replace(DEFAULT_LIMITS, regex_seconds=3.0), cache=True)
    assert len(runs) == 2
    # --seconds only bounds how long a check may take; a finished report does not depend on it
    check_document(doc, MINI, limits=dataclasses.replace(DEFAULT_LIMITS, seconds=60.0), cache=True)
    assert len(runs) == 2


def test_another_library_version_gives_another_key(monkeypatch):
    from importlib import metadata

    before = resultcache._code_stamp()
    real = metadata.version
    monkeypatch.setattr(metadata, "version", lambda name: "0.0.1" if name == "spacy" else real(name))
    resultcache._code_stamp.cache_clear()
    try:
        assert resultcache._code_stamp() != before
    finally:
        monkeypatch.undo()
        resultcache._code_stamp.cache_clear()
    assert resultcache._code_stamp() == before


def test_a_damaged_entry_is_ignored_and_replaced(cache, doc):
    _, runs = cache
    first = check_document(doc, MINI, cache=True)
    path = entry_of(doc)
    path.write_bytes(path.read_bytes()[:200])  # cut short, as by a full disk
    second = check_document(doc, MINI, cache=True)
    assert len(runs) == 2 and second == first
    third = check_document(doc, MINI, cache=True)
    assert len(runs) == 2 and third == first  # the sound report was written back


class _Boom:
    def __init__(self, marker):
        self.marker = marker

    def __reduce__(self):
        return (os.system, (f"echo pwned > {self.marker}",))


def _hostile_pickles(marker):
    yield pickle.dumps(_Boom(marker))
    # a studygap record holding the call deep inside, where a report's text would be
    yield pickle.dumps({"items": [("x", _Boom(marker))]})
    # a name looked up through a studygap module that imports os (protocol 4 allows dotted names)
    module, name, arg = b"checker.many.batch", b"os.system", f"touch {marker}".encode()
    yield (b"\x80\x04\x8c" + bytes([len(module)]) + module + b"\x8c" + bytes([len(name)]) + name + b"\x93"
           + b"\x8c" + bytes([len(arg)]) + arg + b"\x85R.")


@pytest.mark.parametrize("which", [0, 1, 2])
def test_a_hostile_entry_runs_nothing(cache, doc, tmp_path, which):
    _, runs = cache
    marker = tmp_path / "pwned.txt"
    check_document(doc, MINI, cache=True)
    path = entry_of(doc)
    path.write_bytes(list(_hostile_pickles(marker))[which])
    report = check_document(doc, MINI, cache=True)
    assert not marker.exists()
    assert len(runs) == 2  # checked afresh instead
    assert [it.status for it in report.items if it.id == "reference.annotators"] == ["reported"]


def test_a_file_changed_while_being_checked_is_not_kept(tmp_path, monkeypatch, doc):
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", str(tmp_path / "cache"))
    real = engine._check

    def editing(path, *args):
        doc.write_text(TEXT + "\nA late paragraph.\n", encoding="utf-8")
        return real(path, *args)

    monkeypatch.setattr(engine, "_check", editing)
    check_document(doc, MINI, cache=True)
    assert entries(tmp_path / "cache") == []


def test_off_keeps_nothing(cache, doc, monkeypatch):
    folder, runs = cache
    monkeypatch.setenv("STUDYGAP_CACHE_DIR", "off")
    check_document(doc, MINI, cache=True)
    check_document(doc, MINI, cache=True)
    assert len(runs) == 2
    assert not folder.exists()


def test_latex_is_not_kept(cache, tmp_path):
    # a LaTeX file's text lives partly in the files it \inputs, which the key does not see
    folder, runs = cache
    tex = tmp_path / "paper.tex"
    tex.write_text("\\documentclass{article}\n\\begin{document}\n\\section{Methods}\n"
                   "Three board-certified radiologists annotated every scan.\n\\end{document}\n", encoding="utf-8")
    check_document(tex, MINI, cache=True)
    check_document(tex, MINI, cache=True)
    assert len(runs) == 2
    assert entries(folder) == []


def test_prune_keeps_the_most_recently_used(cache, tmp_path, monkeypatch):
    folder, runs = cache
    monkeypatch.setattr(resultcache, "_MAX_ENTRIES", 3)
    docs = []
    for name in "abcd":
        p = tmp_path / f"{name}.md"
        p.write_text(TEXT.replace("every scan", f"every scan of set {name}"), encoding="utf-8")
        docs.append(p)
    a, b, c, d = docs
    for p in (a, b, c):
        check_document(p, MINI, cache=True)
    for p, age in ((a, 10), (b, 300), (c, 100)):  # a used most recently, b longest ago
        t = entry_of(p).stat().st_mtime - age
        os.utime(entry_of(p), (t, t))
    check_document(d, MINI, cache=True)
    assert entries(folder) == sorted(entry_of(p).name for p in (a, c, d))
    check_document(a, MINI, cache=True)
    assert runs == [str(p) for p in (a, b, c, d)]  # a was kept, so not checked again


def _cli(args, capsys):
    code = main([str(x) for x in args])
    out, err = capsys.readouterr()
    assert code == 0, err
    return out


def test_the_cli_reuses_reports_and_the_json_is_byte_identical(cache, doc, tmp_path, capsys):
    folder, runs = cache
    outs = [tmp_path / f"{i}.json" for i in range(3)]
    _cli(["check", doc, "--checklist", MINI, "-f", "json", "-q", "-o", outs[0]], capsys)
    _cli(["check", doc, "--checklist", MINI, "-f", "json", "-q", "-o", outs[1]], capsys)
    assert runs == [str(doc)]  # the second run was served from the cache
    _cli(["check", doc, "--checklist", MINI, "-f", "json", "-q", "--no-cache", "-o", outs[2]], capsys)
    assert len(runs) == 2
    assert outs[0].read_bytes() == outs[1].read_bytes() == outs[2].read_bytes()


def test_no_cache_neither_reads_nor_writes_the_cache(cache, doc, capsys):
    folder, runs = cache
    for _ in range(2):
        _cli(["check", doc, "--checklist", MINI, "-f", "json", "-q", "--no-cache"], capsys)
    assert len(runs) == 2
    assert entries(folder) == []


def test_a_batch_reuses_reports_of_unchanged_files_and_rechecks_the_changed_one(cache, tmp_path):
    from checker.many.batch import run_batch
    from checker.reports.json import dumps

    folder, runs = cache
    paths = []
    for i in range(3):
        p = tmp_path / f"proposal-{i}.md"
        p.write_text(TEXT.replace("Three", ("Two", "Three", "Four")[i]), encoding="utf-8")
        paths.append(p)
    first = run_batch(paths, MINI, jobs=1, cache=True)
    assert len(runs) == 3
    paths[1].write_text(TEXT.replace("Three", "Five"), encoding="utf-8")
    second = run_batch(paths, MINI, jobs=1, cache=True)
    assert runs[3:] == [str(paths[1])]  # only the edited file was read again
    assert dumps(second[0].report.to_dict()) == dumps(first[0].report.to_dict())
    run_batch(paths, MINI, jobs=1)  # without the cache every file is read
    assert len(runs) == 7


def test_screen_no_cache_checks_every_file_afresh(cache, tmp_path, doc):
    folder, runs = cache
    out = tmp_path / "screen.json"
    assert main(["screen", str(doc), "--checklist", MINI, "--format", "json", "-o", str(out), "--quiet",
                 "--jobs", "1"]) == 0
    assert main(["screen", str(doc), "--checklist", MINI, "--format", "json", "-o", str(out), "--quiet",
                 "--jobs", "1"]) == 0
    assert runs == [str(doc)]
    assert main(["screen", str(doc), "--checklist", MINI, "--format", "json", "-o", str(out), "--quiet",
                 "--jobs", "1", "--no-cache"]) == 0
    assert runs == [str(doc), str(doc)]


def test_parsed_checklists_are_reused_and_errors_are_never_kept(cache, tmp_path, monkeypatch):
    from checker.matching import checklist as checklist_module
    from checker.core.errors import ChecklistError

    folder, _runs = cache
    text = (DATA / "checklists" / "mini.yaml").read_text(encoding="utf-8")
    first = resultcache.parsed("Checklist", text, "mini.yaml", "", lambda: checklist_module.parse_checklist(
        text, "mini.yaml"))
    assert len(list((folder / "parsed").glob("*.pickle"))) == 1

    def fail():
        raise AssertionError("parsed again although nothing changed")

    assert resultcache.parsed("Checklist", text, "mini.yaml", "", fail) == first
    for entry in (folder / "parsed").glob("*.pickle"):
        entry.write_bytes(b"damaged")
    assert resultcache.parsed("Checklist", text, "mini.yaml", "",
                              lambda: checklist_module.parse_checklist(text, "mini.yaml")) == first
    broken = "id: [unclosed\n"
    for _ in range(2):  # the error comes from parsing each time; nothing is kept for it
        with pytest.raises(ChecklistError):
            resultcache.parsed("Checklist", broken, "broken.yaml", "",
                               lambda: checklist_module.parse_checklist(broken, "broken.yaml"))
    assert len(list((folder / "parsed").glob("*.pickle"))) == 1


def test_the_bytes_for_the_key_never_wait_on_a_named_pipe(tmp_path, doc):
    fifo = tmp_path / "pipe.md"
    os.mkfifo(fifo)  # opened without a writer: a plain open() would wait forever
    assert resultcache.document_bytes(fifo, 100) is None
    assert resultcache.document_bytes(tmp_path / "absent.md", 100) is None
    assert resultcache.document_bytes(doc, 10_000) == doc.read_bytes()
    assert resultcache.document_bytes(doc, 10) == doc.read_bytes()[:11]  # one byte more tells it is too large
