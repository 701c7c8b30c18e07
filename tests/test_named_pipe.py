"""A named pipe or a checklist regex that would take gigabytes is refused at once, with one line."""

import os
import subprocess
import sys

import pytest

from checker.matching.checklist import parse_checklist
from checker.core.errors import ChecklistError


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")
def test_a_named_pipe_given_as_a_document_is_refused_without_waiting(tmp_path):
    fifo = tmp_path / "draft.md"
    os.mkfifo(fifo)  # nobody writes to it: reading it would wait forever
    r = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(fifo)], capture_output=True, text=True,
                       timeout=60)
    assert r.returncode == 2
    assert "not a regular file" in r.stderr and r.stderr.count("\n") == 1


def test_a_regex_with_huge_counted_repeats_is_refused_with_its_place():
    text = ("id: x\ntitle: X\nversion: 1\nitems:\n  - id: a.b\n    group: a\n    title: T\n    question: q\n"
            "    why: w\n    ask: a\n    facets:\n      - id: f\n"
            "        regex: ['(?:(?:(?:a{1000}){1000}){1000})b']\n")
    with pytest.raises(ChecklistError) as exc:
        parse_checklist(text, "mine.yaml")
    assert "mine.yaml:13:" in str(exc.value) and "counted repeats" in str(exc.value)


@pytest.mark.skipif(not hasattr(os, "killpg"), reason="signals need a POSIX system")
def test_sigterm_to_a_multi_file_check_ends_it_like_ctrl_c(tmp_path):
    import signal
    import time

    # enough long files that the batch cannot finish before the signal, however fast the machine
    slow = []
    for i in range(12):
        f = tmp_path / f"long-{i}.md"
        f.write_text("# Methods\n\n" + "The scans were read by two radiologists. " * 60000, encoding="utf-8")
        slow.append(str(f))
    out = tmp_path / "report.json"
    env = dict(os.environ, STUDYGAP_CACHE_DIR="off")
    proc = subprocess.Popen([sys.executable, "-m", "checker.cli", "check", *slow, "--format", "json",
                             "-o", str(out), "--quiet"], stderr=subprocess.PIPE, text=True, env=env)
    time.sleep(4)
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 130
    assert "interrupted" in err and "Traceback" not in err
    assert not out.exists()


@pytest.mark.skipif(not hasattr(os, "kill") or not hasattr(os, "killpg"), reason="signals need a POSIX system")
def test_a_termination_that_a_finaliser_swallowed_still_ends_the_batch():
    # Python ignores an exception raised while a __del__ runs ("Exception ignored in ..."): a SIGTERM that lands
    # there must be delivered again, or a batch would run on after it was told to stop
    import signal
    import time

    from checker.many.batch import Terminated, stop_on_terminate

    class Finaliser:
        def __del__(self):
            os.kill(os.getpid(), signal.SIGTERM)
            deadline = time.monotonic() + 0.2
            while time.monotonic() < deadline:  # the handler runs here, inside the finaliser
                pass

    stopped = False
    with stop_on_terminate():
        try:
            Finaliser()  # gone at once; its finaliser swallows the first Terminated
            deadline = time.monotonic() + 5
            while time.monotonic() < deadline:
                time.sleep(0.01)
        except Terminated:
            stopped = True
    assert stopped
