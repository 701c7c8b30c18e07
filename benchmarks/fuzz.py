"""The long fuzzing run: tests/test_fuzz.py with many examples per test and a fresh random seed each run.

Usage: ``python benchmarks/fuzz.py [--total N] [-k EXPR]``. The fuzz tests feed random and mutated bytes to every
reader, random and mutated YAML to the checklist loader, mutated settings files to the settings loader, and
planted or damaged entries to the report and regex caches. ``--total`` inputs (10,000 by default) are shared
evenly among the selected tests. Prints the inputs run, the time taken, the rate and the number of tests that
found a crashing input (anything but a Document, a checklist, settings, a cache entry used or refused, or a clean
one-line error; hypothesis prints the smallest such input), and exits with pytest's code.
"""

from __future__ import annotations

import argparse
import os
import re
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TESTS = ROOT / "tests" / "test_fuzz.py"


def _pytest(extra: list[str], env: dict | None = None, capture: bool = False) -> subprocess.CompletedProcess:
    cmd = [sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", str(TESTS), *extra]
    return subprocess.run(cmd, cwd=ROOT, env=env, text=True, check=False,
                          stdout=subprocess.PIPE if capture else None, stderr=subprocess.STDOUT if capture else None)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--total", type=int, default=10_000, help="inputs in all (default 10,000)")
    parser.add_argument("-k", default=None, metavar="EXPR", help="only the fuzz tests matching EXPR (pytest -k)")
    args = parser.parse_args(argv)
    select = ["-k", args.k] if args.k else []
    listed = _pytest(["--collect-only", *select], capture=True).stdout
    tests = [line for line in listed.splitlines() if "::" in line]
    if not tests:
        print("fuzz: no fuzz test selected", file=sys.stderr)
        return 2
    per_test = -(-args.total // len(tests))
    env = {**os.environ, "STUDYGAP_FUZZ_EXAMPLES": str(per_test)}
    started = time.monotonic()
    proc = _pytest([*select, "--hypothesis-show-statistics"], env=env, capture=True)
    seconds = time.monotonic() - started
    print(proc.stdout)
    failed = re.search(r"(\d+) failed", proc.stdout)
    crashes = int(failed.group(1)) if failed else 0
    total = per_test * len(tests)
    print(f"fuzz: {total:,} inputs ({per_test:,} in each of {len(tests)} tests) in {seconds:.1f} s, "
          f"{total / seconds:.0f} per second; tests that found a crashing input: {crashes}")
    return proc.returncode


if __name__ == "__main__":
    sys.exit(main())
