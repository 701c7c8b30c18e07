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
sys.path.insert(0, str(ROOT / "benchmarks"))
from speed import compile_studygap  # noqa: E402 - benchmarks/speed.py, beside this file

#: the steps of one check, run in a fresh process; prints {"step": seconds, ...} as JSON
STEPS = r"""
import json, sys, time
t0 = time.perf_counter()
out = {}
def lap(name):
    global t0
    t = time.perf_counter(); out[name] = t - t0; t0 = t
def first(*names):
    import importlib
    for name in names:  # the module's place now, then where older checkouts kept it
        try:
            return importlib.import_module(name)
        except ImportError:
            continue
    raise ImportError(names[0])
first("checker.cli.main", "checker.cli"); engine = first("checker.engine")
lap("import studygap (cli, engine)")
nlp = first("checker.matching.nlp", "checker.nlp")
try:  # as studygap imports spaCy (older checkouts did it when checker was imported)
    first("checker.matching.spacyimport").import_spacy()
except (ImportError, AttributeError):
    pass
import spacy.tokens  # what the pipeline needs of spaCy
lap("import spaCy")
nlp.pipeline()
lap("spaCy pipeline (tokenizer, lemmas, sentences)")
read_document = first("checker.reading", "checker.readers").read_document
DEFAULT_LIMITS = first("checker.core.limits", "checker.limits").DEFAULT_LIMITS
Config = first("checker.core.config", "checker.config").Config
compiled = engine.compiled_for(sys.argv[2])
lap("checklist loaded and compiled")
document = engine.ignore_sections(read_document(sys.argv[1], DEFAULT_LIMITS), ())
lap("read document")
docs = list(nlp.parse_blocks(b.text for b in document.blocks))
lap("tokenize, lemmas, sentences")
scan = compiled.scan(document, regex_seconds=DEFAULT_LIMITS.regex_seconds, docs=docs)
lap("match cues")
items = first("checker.verdicts.decide", "checker.verdicts").evaluate(compiled, scan, {})
lap("verdicts")
report = engine.build_report(document, compiled.checklist, items, "x", tuple(document.warnings), scan=scan,
                             config=Config())
lap("rules and report")
reports = first("checker.reports")
reports.render("json", [report], reports.RenderOptions())
lap("render JSON")
first("checker.matching.regexcache", "checker.regexcache").save()
print(json.dumps(out))
"""


def run_steps(path: Path, checklist: str, env: dict[str, str]) -> dict[str, float]:
    start = time.perf_counter()
    proc = subprocess.run([sys.executable, "-c", STEPS, str(path.resolve()), checklist], capture_output=True,
                          text=True, env=env, cwd=env.get("PYTHONPATH", str(ROOT)).split(os.pathsep)[0])
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
    ap.add_argument("--against", type=Path, metavar="DIR",
                    help="also time another checkout of studygap (for example an older commit unpacked with "
                         "git archive), in the same rounds, to compare before and after under the same load")
    args = ap.parse_args(argv)
    files = args.files or [p for p in (ROOT / "fixtures/demo/wrist-fracture-manuscript.md",
                                       ROOT / "benchmarks/out/speed/manuscript-30p-2col.pdf") if p.exists()]
    print(f"load: {os.getloadavg()[0]:.2f} {os.getloadavg()[1]:.2f} {os.getloadavg()[2]:.2f} (1, 5, 15 min); "
          f"{os.cpu_count()} CPUs; median of {args.runs} runs")
    roots = {"this checkout": ROOT}
    if args.against:
        roots[f"{args.against}"] = args.against.resolve()
    for root in roots.values():
        print(f"{root}: {compile_studygap(root)}")
    with tempfile.TemporaryDirectory(prefix="studygap-stages-") as tmp:
        for path in files:
            samples: dict[str, dict[str, list[float]]] = {name: {} for name in roots}
            refs: dict[str, list[float]] = {"python -c pass": [], "import spacy; spacy.blank('en')": []}
            envs = {}
            for i, (name, root) in enumerate(roots.items()):
                base = dict(os.environ, PYTHONPATH=str(root))
                envs[name] = [dict(base, STUDYGAP_CACHE_DIR=str(Path(tmp) / f"cold-{i}-{r}")) if args.cold_caches
                              else dict(base, STUDYGAP_CACHE_DIR=str(Path(tmp) / f"warm-{i}"))
                              for r in range(args.runs)]
                if not args.cold_caches:
                    run_steps(path, args.checklist, envs[name][0])
            for r in range(args.runs):
                for name in roots:
                    for k, v in run_steps(path, args.checklist, envs[name][r]).items():
                        samples[name].setdefault(k, []).append(v)
                env = envs["this checkout"][r]
                refs["python -c pass"].append(wall([sys.executable, "-c", "pass"], env))
                refs["import spacy; spacy.blank('en')"].append(
                    wall([sys.executable, "-c", "import spacy; spacy.blank('en')"], env))
            print(f"\n{path.name} ({'empty' if args.cold_caches else 'filled'} caches); median seconds (min-max)")
            print(f"  {'':<48}" + "".join(f"{name[-22:]:>24}" for name in roots))
            for k in samples["this checkout"]:
                print(f"  {k:<48}" + "".join(f"{statistics.median(samples[n][k]):>9.3f} ({min(samples[n][k]):.2f}-"
                                             f"{max(samples[n][k]):.2f})" for n in roots))
            print(f"  {'sum of the steps':<48}" + "".join(
                f"{sum(statistics.median(v) for k, v in samples[n].items() if k != 'wall time of the process'):>9.3f}"
                f"{'':>15}" for n in roots))
            for k, v in refs.items():
                print(f"  {'reference: ' + k:<48}{statistics.median(v):>9.3f} ({min(v):.2f}-{max(v):.2f})")
    print(f"load: {os.getloadavg()[0]:.2f} {os.getloadavg()[1]:.2f} {os.getloadavg()[2]:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
