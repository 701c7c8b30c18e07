"""The long fuzzing run: tests/test_fuzz.py with many examples per test and a fresh random seed each night.

Usage: ``python benchmarks/fuzz.py [--examples N] [-k EXPR]``. Prints the examples run, the time taken and the
rate, and exits with pytest's code (non-zero when some input gave anything but a Document or a clean error;
hypothesis prints the smallest such input).
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--examples", type=int, default=2000, help="examples per fuzz test (default 2000)")
    parser.add_argument("-k", default=None, metavar="EXPR", help="only the fuzz tests matching EXPR (pytest -k)")
    args = parser.parse_args(argv)
    env = {**os.environ, "STUDYGAP_FUZZ_EXAMPLES": str(args.examples)}
    cmd = [sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", str(ROOT / "tests" / "test_fuzz.py"),
           "--hypothesis-show-statistics"]
    if args.k:
        cmd += ["-k", args.k]
    started = time.monotonic()
    code = subprocess.call(cmd, cwd=ROOT, env=env)
    seconds = time.monotonic() - started
    tests = 14 if not args.k else None
    total = f"{args.examples * tests} examples" if tests else f"{args.examples} examples per selected test"
    rate = f", {args.examples * tests / seconds:.0f} per second" if tests else ""
    print(f"fuzz: {total} in {seconds:.1f} s{rate}; {'no failures' if code == 0 else 'FAILURES (see above)'}")
    return code


if __name__ == "__main__":
    sys.exit(main())
