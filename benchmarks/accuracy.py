"""Accuracy on the development set: agreement of studygap with careful human labels, against our targets.

    python benchmarks/accuracy.py [--dev DIR] [--jobs N] [--disagreements]

The labelled documents stay where they are (default ../shared/eval/dev from the repository root); only the
JSON result is written, to benchmarks/out/accuracy.json.
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

#: figure name -> the lowest value we accept
TARGETS = {"macro_f1": 0.92, "binary_kappa": 0.85, "three_class_agreement": 0.85}


def _fmt(x: float | None) -> str:
    return "  n/a" if x is None else f"{x:.3f}"


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--dev", type=Path, default=ROOT.parent / "shared" / "eval" / "dev",
                    help="the development set: a folder with labels/ and the documents they name")
    ap.add_argument("--jobs", type=int, default=min(4, os.cpu_count() or 1), help="documents checked in parallel")
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--resamples", type=int, default=2000)
    ap.add_argument("--disagreements", action="store_true", help="also list every disagreement with its passages")
    ap.add_argument("--out", type=Path, default=ROOT / "benchmarks" / "out" / "accuracy.json")
    args = ap.parse_args(argv)

    labels_dir = args.dev / "labels"
    if not labels_dir.is_dir():
        print(f"accuracy: skipped, no development set at {args.dev} (expected a labels/ folder there; "
              "give another with --dev DIR)")
        return 0

    from checker.evaluation import evaluate, load_labels, to_json
    from checker.output import write_atomic
    from checker.reports.evaluation import render_evaluation

    labels = load_labels(labels_dir)
    start = time.perf_counter()
    ev = evaluate(labels, jobs=args.jobs, seed=args.seed, resamples=args.resamples, source=str(labels_dir))
    seconds = time.perf_counter() - start

    if args.disagreements:
        print(render_evaluation(ev, "terminal", color=False, width=110))

    print(f"accuracy on {labels_dir}: {ev.compared_documents} documents compared, {ev.pairs} item pairs, "
          f"{len(ev.errors)} could not be checked ({seconds:.1f} s, {args.jobs} jobs)")
    for d in ev.errors:
        print(f"  not checked: {Path(d.label_file).name}: {d.error}")
    for d in ev.documents:
        if d.not_in_checklist:
            print(f"  {Path(d.label_file).name}: not in checklist {d.checklist}: {', '.join(d.not_in_checklist)}")
    print()
    print(f"{'item':<36} {'pairs':>5} {'human+':>6} {'tool+':>6} {'prec':>6} {'recall':>6} {'F1':>6} {'3-class':>7}")
    for a in ev.items:
        s = a.scores
        mark = "" if a.in_macro else " *"
        print(f"{a.item_id + mark:<36} {a.pairs:>5} {s.support:>6} {s.predicted:>6} {_fmt(s.precision):>6} "
              f"{_fmt(s.recall):>6} {_fmt(s.f1):>6} {_fmt(a.three_class_agreement):>7}")
    if ev.macro_f1_left_out:
        print("* no positive on either side: left out of macro-F1")
    print()
    print(f"{'figure':<48} {'value':>6}   {ev.level:.0%} bootstrap interval (documents)   target")
    failed = []
    for f in ev.figures:
        iv = f.interval
        ivs = f"{iv.low:.3f} to {iv.high:.3f}" if iv and iv.low is not None else ""
        target = TARGETS.get(f.name)
        verdict = ""
        if target is not None:
            ok = f.value is not None and f.value >= target
            verdict = f">= {target:.2f}  {'PASS' if ok else 'FAIL'}"
            if not ok:
                failed.append(f.name)
        print(f"{f.title:<48} {_fmt(f.value):>6}   {ivs:<34} {verdict}")
    print()
    print("not-applicable counts as missing in these figures; the confusion table in the JSON keeps it apart.")

    args.out.parent.mkdir(parents=True, exist_ok=True)
    write_atomic(args.out, to_json(ev))
    print(f"written: {args.out}")
    if failed:
        print(f"below target: {', '.join(failed)}")
        return 1
    print("all targets met")
    return 0


if __name__ == "__main__":
    sys.exit(main())
