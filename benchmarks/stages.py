"""What each part of one cold `check` costs: the start-up parts (imports, the spaCy pipeline, the compiled
checklist) and the work on the document (reading, parsing, matching, verdicts, rules, rendering).

    python benchmarks/stages.py [FILE ...] [--runs 5] [--checklist validation-study]

Each run is a new Python process that does what `studygap check --no-cache --format json` does, step by step,
and times each step; the table gives the median of the runs per step and in all, beside `python -c pass` and
`import spacy; spacy.blank('en')` measured in the same rounds. The caches (regexes, parsed checklists, the
pipeline and matcher data) are filled by a first run that is not counted, as any earlier run of a user's would;
``--cold-caches`` gives every run an empty cache folder instead. Default file: the demo manuscript (Markdown)
and the 30-page two-column PDF of benchmarks/speed.py when it has been generated.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

#: the steps of one check, run in a fresh process; prints {"step": seconds, ...} as JSON
STEPS = r"""
import json, sys, time
t0 = time.perf_counter()
out = {}
def lap(name):
    global t0
    t = time.perf_counter(); out[name] = t - t0; t0 = t
import checker.cli.main, checker.engine
lap("import studygap (cli, engine)")
from checker.matching import nlp
import spacy.tokens  # what the pipeline needs of spaCy
lap("import spaCy")
nlp.pipeline()
lap("spaCy pipeline (tokenizer, lemmas, sentences)")
from checker.engine import compiled_for, _check, build_report, ignore_sections, choose_checklist
from checker.reading import read_document
from checker.core.limits import DEFAULT_LIMITS
from checker.core.config import Config
ref = sys.argv[2]
compiled = compiled_for(ref)
lap("checklist loaded and compiled")
document = ignore_sections(read_document(sys.argv[1], DEFAULT_LIMITS), ())
lap("read document")
docs = list(nlp.parse_blocks(b.text for b in document.blocks))
lap("tokenize, lemmas, sentences")
scan = compiled.scan(document, regex_seconds=DEFAULT_LIMITS.regex_seconds, docs=docs)
lap("match cues")
from checker.verdicts.decide import evaluate
items = evaluate(compiled, scan, {})
lap("verdicts")
report = build_report(document, compiled.checklist, items, "x", tuple(document.warnings), scan=scan, config=Config())
lap("rules and report")
from checker.reports import render, RenderOptions
render("json", [report], RenderOptions())
lap("render JSON")
from checker.matching import regexcache
regexcache.save()
print(json.dumps(out))
"""


def run_steps(path: Path, checklist: str, env: dict[str, str]) -> dict[str, float]:
    start = time.perf_counter()
    proc = subprocess.run([sys.executable, "-c", STEPS, str(path), checklist], capture_output=True, text=True,
                          env=env, cwd=ROOT)
    wall = time.perf_counter() - start
    if proc.returncode:
        raise SystemExit(proc.stderr)
    steps = json.loads(proc.stdout.strip().splitlines()[-1])
    steps["wall time of the process"] = wall
    return steps


def wall(cmd: list[str], env: dict[str, str]) -> float:
    start = time.perf_counter()
    subprocess.run(cmd, env=env, cwd=ROOT, check=True, capture_output=True)
    return time.perf_counter() - start


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("files", nargs="*", type=Path)
    ap.add_argument("--runs", type=int, default=5)
    ap.add_argument("--checklist", default="validation-study")
    ap.add_argument("--cold-caches", action="store_true", help="an empty cache folder for every run")
    args = ap.parse_args(argv)
    files = args.files or [p for p in (ROOT / "fixtures/demo/wrist-fracture-manuscript.md",
                                       ROOT / "benchmarks/out/speed/manuscript-30p-2col.pdf") if p.exists()]
    print(f"load: {os.getloadavg()[0]:.2f} {os.getloadavg()[1]:.2f} {os.getloadavg()[2]:.2f} (1, 5, 15 min); "
          f"{os.cpu_count()} CPUs; median of {args.runs} runs")
    with tempfile.TemporaryDirectory(prefix="studygap-stages-") as tmp:
        base = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
        for path in files:
            samples: dict[str, list[float]] = {}
            refs: dict[str, list[float]] = {"python -c pass": [], "import spacy; spacy.blank('en')": []}
            warm = dict(base, STUDYGAP_CACHE_DIR=str(Path(tmp) / "warm"))
            if not args.cold_caches:
                run_steps(path, args.checklist, warm)
            for r in range(args.runs):
                env = dict(base, STUDYGAP_CACHE_DIR=str(Path(tmp) / f"cold-{r}")) if args.cold_caches else warm
                for k, v in run_steps(path, args.checklist, env).items():
                    samples.setdefault(k, []).append(v)
                refs["python -c pass"].append(wall([sys.executable, "-c", "pass"], env))
                refs["import spacy; spacy.blank('en')"].append(
                    wall([sys.executable, "-c", "import spacy; spacy.blank('en')"], env))
            print(f"\n{path.name} ({'empty' if args.cold_caches else 'filled'} caches)")
            total = sum(statistics.median(v) for k, v in samples.items() if k != "wall time of the process")
            for k, v in samples.items():
                print(f"  {k:<48}{statistics.median(v):>8.3f} s   ({min(v):.3f}-{max(v):.3f})")
            print(f"  {'sum of the steps':<48}{total:>8.3f} s")
            for k, v in refs.items():
                print(f"  {'reference: ' + k:<48}{statistics.median(v):>8.3f} s   ({min(v):.3f}-{max(v):.3f})")
    print(f"load: {os.getloadavg()[0]:.2f} {os.getloadavg()[1]:.2f} {os.getloadavg()[2]:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
