"""A process's first document read in a forked child while spaCy starts (checker.reading.ahead): the same Document
and the same report as an ordinary read, the ordinary error when the child cannot read the file, and no child left
behind when the check is interrupted. Each case runs in a fresh interpreter, as the command does (forking is only
done while no other thread runs)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "fixtures" / "demo"

pytestmark = pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reading ahead forks (Linux only)")


def _python(code: str, tmp_path: Path, **env: str) -> subprocess.CompletedProcess:
    environ = {**os.environ, "PYTHONPATH": str(ROOT), "STUDYGAP_CACHE_DIR": str(tmp_path / "cache"), **env}
    return subprocess.run([sys.executable, "-c", textwrap.dedent(code)], capture_output=True, text=True,
                          env=environ, timeout=300, cwd=tmp_path)


def _other_formats(tmp_path: Path) -> list[Path]:
    (tmp_path / "study.tex").write_text(
        "\\documentclass{article}\n\\begin{document}\n\\section{Methods}\nThree fictional readers annotated "
        "120 scans of the Northfield archive.\n\\end{document}\n", encoding="utf-8")
    (tmp_path / "study.html").write_text(
        "<html><body><h1>Data</h1><p>Two annotators labelled 40 images from the fictional Lakeside clinic."
        "</p></body></html>", encoding="utf-8")
    (tmp_path / "study.txt").write_text("Methods\n\nThe reference was drawn by one fictional expert.\n",
                                        encoding="utf-8")
    return [tmp_path / "study.tex", tmp_path / "study.html", tmp_path / "study.txt"]


def test_a_document_read_ahead_equals_the_ordinary_read_in_every_format(tmp_path):
    files = [DEMO / "wrist-fracture-manuscript.pdf", DEMO / "wrist-fracture-manuscript.docx",
             DEMO / "kidney-stone-benchmark-proposal.md", *_other_formats(tmp_path)]
    proc = _python(f"""
        from checker.core.limits import DEFAULT_LIMITS
        from checker.reading import read_document
        from checker.reading.ahead import start
        for path in {[str(f) for f in files]!r}:
            ahead = start(path, DEFAULT_LIMITS)
            assert ahead is not None, path
            document = ahead.read()
            assert ahead.used, path  # it came from the child, not from the fallback
            assert document == read_document(path, DEFAULT_LIMITS), path
            assert document.blocks, path
            print("same", path)
    """, tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.count("same ") == len(files)


def test_a_file_the_child_cannot_read_gives_the_ordinary_error(tmp_path):
    (tmp_path / "empty.md").write_text("   \n", encoding="utf-8")
    (tmp_path / "broken.pdf").write_bytes(b"%PDF-1.7\n1 0 obj << /Type /Catalog >> endobj\n")
    proc = _python("""
        from checker.core.errors import InputError
        from checker.core.limits import DEFAULT_LIMITS
        from checker.reading import read_document
        from checker.reading.ahead import start
        for path in ("empty.md", "broken.pdf"):
            try:
                read_document(path, DEFAULT_LIMITS)
            except InputError as exc:
                expected = exc.line()
            ahead = start(path, DEFAULT_LIMITS)
            try:
                ahead.read()
            except InputError as exc:
                assert exc.line() == expected, (exc.line(), expected)
                assert ahead.used is False  # read again here, where the error is raised as always
                print("same error:", expected)
    """, tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.count("same error:") == 2, proc.stdout


def test_an_interrupted_check_leaves_no_reading_child(tmp_path):
    (tmp_path / "slow.md").write_text("# Methods\n\nOne fictional reader.\n", encoding="utf-8")
    proc = _python(f"""
        import os, time
        import checker.reading
        from checker.core.limits import DEFAULT_LIMITS
        from checker.reading.ahead import start

        def slow_read(path, limits):  # a read that takes minutes (the child inherits it)
            time.sleep(120)
        checker.reading.read_document = slow_read
        ahead = start({str(tmp_path / "slow.md")!r}, DEFAULT_LIMITS)
        pid = ahead.pid
        def stopped():
            raise KeyboardInterrupt
        try:
            ahead.read(meanwhile=stopped)
        except KeyboardInterrupt:
            pass
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            print("child gone")
    """, tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert "child gone" in proc.stdout


def test_no_child_when_turned_off_when_a_thread_runs_or_for_a_long_document_or_what_is_not_a_file(tmp_path):
    proc = _python(f"""
        import os, threading
        from checker.core.limits import DEFAULT_LIMITS
        from checker.reading.ahead import start
        path = {str(DEMO / "kidney-stone-benchmark-proposal.md")!r}
        print("folder", start({str(tmp_path)!r}, DEFAULT_LIMITS))
        with open("long.md", "w") as fh:  # a long document: sending it back would cost more than it saves
            fh.write("Readers annotated the scans. " * 20_000)
        print("long", start("long.md", DEFAULT_LIMITS))
        os.environ["STUDYGAP_READ_AHEAD"] = "off"
        print("off", start(path, DEFAULT_LIMITS))
        del os.environ["STUDYGAP_READ_AHEAD"]
        stop = threading.Event()
        t = threading.Thread(target=stop.wait)
        t.start()
        print("thread", start(path, DEFAULT_LIMITS))
        stop.set(); t.join()
    """, tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.split("\n")[:4] == ["folder None", "long None", "off None", "thread None"], proc.stdout


@pytest.mark.parametrize("name", ["wrist-fracture-manuscript.pdf", "kidney-stone-benchmark-proposal.docx"])
def test_the_report_is_the_same_with_and_without_reading_ahead(tmp_path, name):
    outs = {}
    for switch in ("on", "off"):
        out = tmp_path / f"{switch}.json"
        env = {**os.environ, "PYTHONPATH": str(ROOT), "STUDYGAP_CACHE_DIR": str(tmp_path / "cache"),
               "STUDYGAP_READ_AHEAD": switch}
        proc = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(DEMO / name), "--no-cache",
                               "-f", "json", "-o", str(out)], capture_output=True, text=True, env=env, timeout=300)
        assert proc.returncode == 0, proc.stderr
        outs[switch] = out.read_bytes()
    assert outs["on"] == outs["off"]
    assert json.loads(outs["on"])["items"]


def test_a_failing_spacy_import_reports_the_same_with_and_without_reading_ahead(tmp_path):
    # a stand-in spaCy package that cannot be imported, ahead of the real one on the path
    (tmp_path / "broken" / "spacy").mkdir(parents=True)
    (tmp_path / "broken" / "spacy" / "__init__.py").write_text('raise ImportError("spaCy is broken here")\n')
    runs = {}
    for switch in ("on", "off"):
        env = {**os.environ, "PYTHONPATH": f"{tmp_path / 'broken'}{os.pathsep}{ROOT}", "NO_COLOR": "1",
               "STUDYGAP_CACHE_DIR": str(tmp_path / "cache"), "STUDYGAP_READ_AHEAD": switch}
        proc = subprocess.run([sys.executable, "-m", "checker.cli", "check",
                               str(DEMO / "kidney-stone-benchmark-proposal.md"), "-f", "json", "-o",
                               str(tmp_path / "out.json")], capture_output=True, text=True, env=env, timeout=300)
        runs[switch] = (proc.returncode, proc.stderr)
    assert runs["on"] == runs["off"]
    code, stderr = runs["on"]
    assert code == 4 and "ImportError: spaCy is broken here" in stderr and len(stderr.splitlines()) == 1
    assert not (tmp_path / "out.json").exists()


def _alive(pid: int) -> bool:
    """Whether a process runs (a zombie waiting to be reaped by whoever inherited it counts as gone)."""
    try:
        return Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0] != "Z"
    except OSError:
        return False


def test_a_killed_check_takes_its_reading_child_with_it(tmp_path):
    (tmp_path / "slow.md").write_text("# Methods\n\nOne fictional reader.\n", encoding="utf-8")
    code = textwrap.dedent(f"""
        import time
        import checker.reading
        from checker.core.limits import DEFAULT_LIMITS
        from checker.reading.ahead import start

        def slow_read(path, limits):  # a read that takes minutes (the child inherits it)
            time.sleep(120)
        checker.reading.read_document = slow_read
        ahead = start({str(tmp_path / "slow.md")!r}, DEFAULT_LIMITS)
        print(ahead.pid, flush=True)
        time.sleep(120)
    """)
    env = {**os.environ, "PYTHONPATH": str(ROOT), "STUDYGAP_CACHE_DIR": str(tmp_path / "cache")}
    proc = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.PIPE, text=True, env=env)
    try:
        child = int(proc.stdout.readline())
        assert _alive(child)  # still reading
        proc.kill()  # SIGKILL: no clean-up runs in the parent
        proc.wait(timeout=30)
        deadline = time.monotonic() + 20
        while _alive(child) and time.monotonic() < deadline:
            time.sleep(0.05)
        assert not _alive(child), "the reading child outlived its killed parent"
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
