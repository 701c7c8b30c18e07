"""Speed and memory of `studygap check` against the floor of bare PDF text extraction, measured in one run.

    python benchmarks/speed.py [--runs 3] [--quick]

Generates manuscripts of 10, 30 and 120 pages (one and two columns) from the fictional demo manuscript with
fixtures/render.py, then times each command in its own process (median of several runs) and reads its peak
memory from the operating system. Targets are ratios, so they hold on a noisy machine.
"""

from __future__ import annotations

import argparse
import os
import re
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
OUT = ROOT / "benchmarks" / "out" / "speed"
DEMO = ROOT / "fixtures" / "demo" / "wrist-fracture-manuscript.md"


def _render():
    sys.path.insert(0, str(ROOT / "fixtures"))
    import render  # noqa: PLC0415 - the committed fixture renderer

    return render


def make_manuscript(pages: int, columns: int) -> Path:
    """A manuscript of about `pages` pages: the demo's body sections repeated with numbered variations."""
    target = OUT / f"manuscript-{pages}p-{columns}col.pdf"
    if target.exists():
        return target
    OUT.mkdir(parents=True, exist_ok=True)
    text = DEMO.read_text(encoding="utf-8")
    head, _, rest = text.partition("\n## 1 Introduction")
    body, _, refs = ("## 1 Introduction" + rest).partition("\n## References")
    render = _render()

    def build(copies: int) -> int:
        parts = [head]
        for i in range(copies):
            # number the headings so that each copy reads as another part of a long report
            parts.append(re.sub(r"^(#+) ", lambda m: f"{m.group(1)} Part {i + 1}: ", body, flags=re.M))
        parts.append("\n## References" + refs)
        src = OUT / f"manuscript-{pages}p-{columns}col.md"
        src.write_text("\n".join(parts), encoding="utf-8")
        render.render(src, pdf=target, columns=columns)
        return pages_of(target)

    per_copy = max(1, build(2) - build(1))  # pages one more copy of the body adds
    first = build(1)
    build(max(1, 1 + round((pages - first) / per_copy)))
    return target


def run(cmd: list[str]) -> tuple[float, int]:
    """Wall seconds and peak resident memory (bytes) of one command in its own process."""
    start = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, cwd=ROOT)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - start
    if os.waitstatus_to_exitcode(status) not in (0, 1):
        err = proc.stderr.read().decode(errors="replace") if proc.stderr else ""
        raise SystemExit(f"benchmark command failed: {' '.join(cmd)}\n{err}")
    return wall, usage.ru_maxrss * 1024


def median_run(cmd: list[str], runs: int) -> tuple[float, int]:
    results = [run(cmd) for _ in range(runs)]
    return statistics.median(r[0] for r in results), max(r[1] for r in results)


def pages_of(pdf: Path) -> int:
    from pypdf import PdfReader

    return len(PdfReader(str(pdf)).pages)


CHECK = [sys.executable, "-m", "checker.cli", "check", "--format", "json", "-o", os.devnull, "--quiet"]
EXTRACT = [sys.executable, "-c", "import sys; from pdfminer.high_level import extract_text; extract_text(sys.argv[1])"]


def verdict(ok: bool) -> str:
    return "pass" if ok else "FAIL"


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--quick", action="store_true", help="10 and 30 pages only, one run each")
    args = ap.parse_args(argv)
    runs = 1 if args.quick else args.runs
    sizes = (10, 30) if args.quick else (10, 30, 120)

    print(f"studygap speed benchmark ({runs} run(s) each, median wall time, peak memory of the process)\n")
    print(f"{'document':<28}{'pages':>6}{'check s':>9}{'extract s':>11}{'ratio':>7}{'s/page':>8}{'MB':>7}")
    per_page: dict[tuple[int, int], float] = {}
    ratio30 = None
    for columns in (1, 2):
        for size in sizes:
            pdf = make_manuscript(size, columns)
            n = pages_of(pdf)
            check_s, mem = median_run(CHECK + [str(pdf)], runs)
            extract_s, _ = median_run(EXTRACT + [str(pdf)], runs)
            ratio = check_s / extract_s
            per_page[(columns, size)] = check_s / n
            if size == 30 and columns == 2:
                ratio30 = ratio
            print(f"{pdf.name:<28}{n:>6}{check_s:>9.2f}{extract_s:>11.2f}{ratio:>7.2f}{check_s / n:>8.3f}"
                  f"{mem / 1e6:>7.0f}")

    pass_s, _ = median_run([sys.executable, "-c", "pass"], max(3, runs))
    help_s, _ = median_run([sys.executable, "-m", "checker.cli", "--help"], max(3, runs))
    version_s, _ = median_run([sys.executable, "-m", "checker.cli", "--version"], max(3, runs))
    print(f"\npython -c pass {pass_s:.3f} s; studygap --help {help_s:.3f} s; --version {version_s:.3f} s")

    print("\ntargets")
    if ratio30 is not None:
        print(f"  check of a 30-page two-column PDF <= 1.2x bare pdfminer extraction: {ratio30:.2f}x  "
              f"{verdict(ratio30 <= 1.2)}")
    print(f"  --help <= 0.25 s: {help_s:.3f} s  {verdict(help_s <= 0.25)}")
    big = max(sizes)
    for columns in (1, 2):
        scale = per_page[(columns, big)] / per_page[(columns, 10)]
        print(f"  time per page flat from 10 to {big} pages ({columns} column): {scale:.2f}x  {verdict(scale <= 1.1)}")
    print("\n(batch throughput and memory on a 300-page PDF: benchmarks/batch.py and --pages 300 of this script "
          "are still to come)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
