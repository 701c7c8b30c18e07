"""An output that cannot be written (a full disk, a file-size quota): one line naming the path, exit 2, the old
file unchanged, no half-written file left behind."""

from __future__ import annotations

import os
import resource
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
TEXT = "# Methods\n\nThree radiologists annotated every scan. We compared two methods.\n"


def _run(cwd: Path, *args: str, preexec=None) -> subprocess.CompletedProcess:
    env = {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT)}
    return subprocess.run([sys.executable, "-m", "checker.cli", "check", "draft.md", "-f", "json", "--no-cache",
                           *args], cwd=cwd, capture_output=True, text=True, env=env, timeout=120, preexec_fn=preexec)


def _one_line(proc: subprocess.CompletedProcess, path: str, cause: str) -> None:
    assert proc.returncode == 2 and "Traceback" not in proc.stderr, proc.stderr
    lines = proc.stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"studygap: error: {path}: cannot be written ({cause}")


@pytest.mark.skipif(not Path("/dev/full").exists(), reason="needs /dev/full (a device that is always full)")
def test_a_full_device_gives_one_line(tmp_path):
    (tmp_path / "draft.md").write_text(TEXT, encoding="utf-8")
    _one_line(_run(tmp_path, "-o", "/dev/full"), "/dev/full", "No space left on device")


def _small_files() -> None:
    resource.setrlimit(resource.RLIMIT_FSIZE, (2000, 2000))  # a report is larger: its write fails part-way


@pytest.mark.skipif(not hasattr(resource, "RLIMIT_FSIZE"), reason="needs a file-size limit")
def test_a_write_that_fails_part_way_keeps_the_old_file_and_leaves_no_part(tmp_path):
    (tmp_path / "draft.md").write_text(TEXT, encoding="utf-8")
    (tmp_path / "report.json").write_text("the previous report\n")
    proc = _run(tmp_path, "-o", "report.json", preexec=_small_files)
    _one_line(proc, "report.json", "File too large")
    assert (tmp_path / "report.json").read_text() == "the previous report\n"
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".part")]
