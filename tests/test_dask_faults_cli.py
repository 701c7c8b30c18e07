"""Dask faults through the real command line: a scheduler and a worker run as processes, and one of them is
killed while `studygap screen --engine dask --task-timeout 5` runs. The run ends within a bounded time with exit
3, one error line per unfinished document and no traceback (before, there was no --task-timeout and a run
waited 60 s, or for ever, for a worker).
"""

from __future__ import annotations

import json
import os
import signal
import socket
import subprocess
import sys
import time
from pathlib import Path

import pytest

pytest.importorskip("distributed", reason="Dask distributed is not installed (pip install 'studygap[dask]')")

ROOT = Path(__file__).resolve().parent.parent
DOCS = 5
TASK_TIMEOUT = 5


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _env(cache: Path) -> dict:
    return {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT), "STUDYGAP_CACHE_DIR": str(cache)}


def _start(args: list[str], env: dict, log: Path) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-m", *args], env=env, stdout=subprocess.DEVNULL,
                            stderr=log.open("wb"), start_new_session=True)


def _stop(proc: subprocess.Popen) -> None:
    if proc.poll() is None:
        os.killpg(proc.pid, signal.SIGKILL)
        proc.wait()


@pytest.mark.parametrize("victim", ["scheduler"])  # losing the workers alone: tests/test_hostile_dask.py
def test_killing_the_cluster_ends_the_run_with_one_line_per_unfinished_document(tmp_path, victim):
    docs = tmp_path / "docs"
    docs.mkdir()
    for i in range(DOCS):
        paragraph = f"Study {i}: three radiologists annotated every scan, and the test set held 120 cases.\n\n"
        (docs / f"study-{i}.md").write_text("# Methods\n\n" + paragraph * 1500, encoding="utf-8")
    cache = tmp_path / "cache"
    env = _env(cache)
    address = f"tcp://127.0.0.1:{_free_port()}"
    scheduler = _start(["distributed.cli.dask_scheduler", "--host", "127.0.0.1", "--port", address.rsplit(":", 1)[1],
                        "--no-dashboard"], env, tmp_path / "scheduler.log")
    worker = _start(["distributed.cli.dask_worker", address, "--nthreads", "1", "--no-nanny", "--no-dashboard"],
                    env, tmp_path / "worker.log")
    run = None
    try:
        run = subprocess.Popen([sys.executable, "-m", "checker.cli", "screen", str(docs), "--checklist",
                                "validation-study", "--engine", "dask", "--scheduler", address, "--task-timeout",
                                str(TASK_TIMEOUT), "-f", "json", "-o", str(tmp_path / "screen.json"), "-q"],
                               env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        deadline = time.monotonic() + 180
        while not [p for p in (cache / "results").glob("*") if not p.name.startswith(".")]:
            assert run.poll() is None, run.communicate()
            assert time.monotonic() < deadline, "the worker never finished a first document"
            time.sleep(0.1)
        _stop(worker if victim == "worker" else scheduler)
        killed = time.monotonic()
        _, stderr = run.communicate(timeout=120)
        took = time.monotonic() - killed
    finally:
        if run is not None and run.poll() is None:
            run.kill()
            run.wait()
        _stop(worker)
        _stop(scheduler)
    assert "Traceback" not in stderr
    assert run.returncode == 3, stderr
    assert took < TASK_TIMEOUT + 30, took  # bounded by --task-timeout, not by Dask's wait for a worker
    data = json.loads((tmp_path / "screen.json").read_text())
    names = sorted(r["path"] for r in data["errors"]) if "errors" in data else None
    lines = [line for line in stderr.splitlines() if line.startswith("studygap: error: ")]
    assert lines, stderr  # (a result still held by a killed worker is lost with it, so all may be errors)
    assert all(f"for {TASK_TIMEOUT:g} s" in line or "Dask" in line for line in lines), lines
    assert len(stderr.splitlines()) == len(lines), stderr  # nothing else: no log lines from Dask
    assert data["summary"]["documents"] == DOCS and data["summary"]["errors"] == len(lines), names
