"""Ctrl-C, SIGTERM and SIGKILL during a batch: it stops at once, no worker lives on, nothing half-written.

The batch runs through the real command line in its own process group, as a terminal runs a foreground command:
Ctrl-C there sends SIGINT to the whole group (the parent and its pool workers).
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import textwrap
import threading
import time
from pathlib import Path

import pytest

from checker.core.limits import signals_stay_with_main_thread

ROOT = Path(__file__).resolve().parent.parent
LINUX = sys.platform.startswith("linux")
SIGINT_BIT = 1 << (signal.SIGINT - 1)
SIGALRM_BIT = 1 << (signal.SIGALRM - 1)
SIGTERM_BIT = 1 << (signal.SIGTERM - 1)


def _blocked(tid: int) -> int:
    """The blocked-signal mask of one thread of this process (Linux /proc)."""
    for line in Path(f"/proc/self/task/{tid}/status").read_text().splitlines():
        if line.startswith("SigBlk:"):
            return int(line.split()[1], 16)
    raise AssertionError("no SigBlk line")


@pytest.mark.skipif(not LINUX, reason="reads thread signal masks from /proc (Linux)")
def test_threads_started_inside_leave_the_interrupting_signals_to_the_main_thread():
    seen: dict[str, int] = {}
    ready, done = threading.Event(), threading.Event()

    def helper(name: str) -> None:
        seen[name] = threading.get_native_id()
        ready.set()
        done.wait(5)

    with signals_stay_with_main_thread():
        inside = threading.Thread(target=helper, args=("inside",))
        inside.start()
        ready.wait(5)
    ready.clear()
    outside = threading.Thread(target=helper, args=("outside",))
    outside.start()
    ready.wait(5)
    try:
        mask_inside, mask_outside = _blocked(seen["inside"]), _blocked(seen["outside"])
        mask_main = _blocked(threading.get_native_id())
    finally:
        done.set()
        inside.join()
        outside.join()
    wanted = SIGINT_BIT | SIGALRM_BIT | SIGTERM_BIT
    assert mask_inside & wanted == wanted
    assert mask_outside & wanted == 0 and mask_main & wanted == 0  # the main thread gets them back


@pytest.mark.skipif(not LINUX, reason="reads thread signal masks from /proc (Linux)")
def test_library_helper_threads_started_by_a_check_never_take_ctrl_c():
    # numpy (which spaCy imports) starts a BLAS helper thread per extra CPU; a SIGINT handed to one of them
    # never wakes a main thread that waits in a read, so Ctrl-C did nothing on a first, cold-cache run
    code = textwrap.dedent("""
        import os, threading
        from checker.core.limits import time_limit
        with time_limit("doc.md", 30):
            import numpy
        main = threading.get_native_id()
        for tid in sorted(os.listdir("/proc/self/task")):
            for line in open(f"/proc/self/task/{tid}/status"):
                if line.startswith("SigBlk:"):
                    print(int(tid) == main, int(line.split()[1], 16))
    """)
    env = {**os.environ, "PYTHONPATH": str(ROOT), "OPENBLAS_NUM_THREADS": "2", "OMP_NUM_THREADS": "2"}
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, timeout=60,
                         check=True).stdout.split("\n")
    rows = [line.split() for line in out if line]
    helpers = [int(mask) for is_main, mask in rows if is_main == "False"]
    if not helpers:
        pytest.skip("this numpy starts no helper threads here")
    assert all(mask & SIGINT_BIT and mask & SIGALRM_BIT and mask & SIGTERM_BIT for mask in helpers), rows
    assert all(int(mask) & SIGINT_BIT == 0 for is_main, mask in rows if is_main == "True")


# ------------------------------------------------------------------------------------ a pool batch interrupted


def _group(pgid: int) -> list[int]:
    """Live processes of a process group (Linux /proc), zombies left out."""
    found = []
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            fields = Path(f"/proc/{entry}/stat").read_text().rsplit(")", 1)[1].split()
        except OSError:
            continue
        if int(fields[2]) == pgid and fields[0] != "Z":
            found.append(int(entry))
    return found


def _as_in_a_terminal() -> None:
    signal.signal(signal.SIGINT, signal.SIG_DFL)  # a foreground command's SIGINT is never ignored


@pytest.fixture
def slow_folder(tmp_path) -> Path:
    """Three documents that each take a worker well over a minute (a 10 MB single line)."""
    folder = tmp_path / "corpus"
    folder.mkdir()
    sentence = "The fictional readers annotated the scans with care and then compared them again. "
    text = "# Methods\n\n" + (sentence * (10_000_000 // len(sentence) + 1))[:10_000_000] + "\n"
    for name in ("a.md", "b.md", "c.md"):
        (folder / name).write_text(text)
    return folder


def _start_screen(folder: Path, out: Path) -> subprocess.Popen:
    env = {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT)}
    return subprocess.Popen(
        [sys.executable, "-m", "checker.cli", "screen", str(folder), "--jobs", "2", "--checklist", "validation-study",
         "--no-cache", "--seconds", "240", "-f", "json", "-o", str(out)],
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env, start_new_session=True,
        preexec_fn=_as_in_a_terminal)


def _wait_for_workers(proc: subprocess.Popen, n: int = 2, seconds: float = 120) -> list[int]:
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        workers = [p for p in _group(proc.pid) if p != proc.pid]
        if len(workers) >= n:
            time.sleep(1.0)  # the workers are busy with their first documents
            return workers
        assert proc.poll() is None, proc.communicate()
        time.sleep(0.1)
    raise AssertionError("the pool workers never started")


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"


def _gone(pids: list[int], seconds: float = 10) -> bool:
    deadline = time.monotonic() + seconds
    while any(_alive(p) for p in pids):
        if time.monotonic() > deadline:
            return False
        time.sleep(0.1)
    return True


@pytest.mark.skipif(not LINUX, reason="watches the process group through /proc (Linux)")
@pytest.mark.parametrize("how", ["ctrl-c", "sigterm"])
def test_an_interrupted_pool_batch_stops_at_once_and_leaves_no_worker(slow_folder, tmp_path, how):
    out = tmp_path / "screening.json"
    out.write_text("the previous screening\n")
    proc = _start_screen(slow_folder, out)
    try:
        workers = _wait_for_workers(proc)
        sent = time.monotonic()
        if how == "ctrl-c":
            os.killpg(proc.pid, signal.SIGINT)  # what a terminal does: the whole foreground group
        else:
            proc.send_signal(signal.SIGTERM)  # kill PID: the parent only
        _, stderr = proc.communicate(timeout=60)
        took = time.monotonic() - sent
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
    assert took < 15, f"the batch went on for {took:.0f} s after the signal"  # the documents need minutes
    assert proc.returncode == 130, stderr
    assert "Traceback" not in stderr, stderr
    assert "interrupted" in stderr and "no output was written" in stderr
    assert out.read_text() == "the previous screening\n"
    assert not list(tmp_path.glob("*.part")) and not list(tmp_path.glob(".*.part"))
    assert _gone(workers), f"workers still alive: {_group(proc.pid)}"


@pytest.mark.skipif(not LINUX, reason="workers learn of their parent's death through prctl (Linux)")
def test_workers_die_with_a_killed_parent(slow_folder, tmp_path):
    proc = _start_screen(slow_folder, tmp_path / "screening.json")
    try:
        workers = _wait_for_workers(proc)
        proc.send_signal(signal.SIGKILL)  # no clean-up can run in the parent
        proc.wait(timeout=30)
        assert _gone(workers), f"workers outlived their killed parent: {_group(proc.pid)}"
    finally:
        try:
            os.killpg(proc.pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
        proc.wait()
