"""Accuracy on the development set: agreement of studygap with careful human labels, against our targets.

    python benchmarks/accuracy.py [--dev DIR] [--extra DIR ...] [--jobs N] [--disagreements] [--false-positives]
                                  [--choice]

The labelled documents stay where they are (default ../shared/eval/dev from the repository root); only the
JSON result is written, to benchmarks/out/accuracy.json. Besides the figures over all documents it prints them
for each part of the set (documents numbered below 60 are the first set, the ones the cues were first written
from; 60 and above were added later), for each kind of document, and for each `--extra` folder of labelled
documents (for example a set you labelled yourself and never tuned on). It also prints how often the tool's
quotes cover the labelled passage where both sides found an item, and whose statements the tool's false
"reported" verdicts quote. `--choice` also checks what `--checklist auto` chooses for every labelled document
against the checklist its label names.
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
    ap.add_argument("--extra", type=Path, action="append", default=[],
                    help="another folder of labelled documents (labels/ and the documents), reported apart")
    ap.add_argument("--false-positives", action="store_true",
                    help="list every item the tool calls reported that the labels call missing, with its quote")
    ap.add_argument("--choice", action="store_true",
                    help="also check the automatic checklist choice against the checklist each label names")
    args = ap.parse_args(argv)

    labels_dir = args.dev / "labels"
    if not labels_dir.is_dir():
        print(f"accuracy: skipped, no development set at {args.dev} (expected a labels/ folder there; "
              "give another with --dev DIR)")
        return 0

    from checker.many.evaluation import evaluate, load_labels, to_json
    from checker.core.output import write_atomic
    from checker.reports import RenderOptions, render

    labels = load_labels(labels_dir)
    start = time.perf_counter()
    ev = evaluate(labels, jobs=args.jobs, seed=args.seed, resamples=args.resamples, source=str(labels_dir))
    seconds = time.perf_counter() - start

    if args.disagreements:
        print(render("terminal", ev, RenderOptions(color=False, width=110)))

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
    kinds = {lf.path: lf.kind or "?" for lf in labels}
    _breakdown(ev, kinds, args)
    for extra in args.extra:
        if not (extra / "labels").is_dir():
            print(f"\n--extra {extra}: no labels/ folder there, left out")
            continue
        xl = load_labels(extra / "labels")
        xev = evaluate(xl, jobs=args.jobs, seed=args.seed, resamples=args.resamples, source=str(extra))
        print(f"\n=== {extra}: {xev.compared_documents} documents, {xev.pairs} item pairs "
              f"({len(xev.errors)} could not be checked)")
        for d in xev.errors:
            print(f"  not checked: {Path(d.label_file).name}: {d.error}")
        _figures_table(xev)
        _breakdown(xev, {lf.path: lf.kind or "?" for lf in xl}, args, parts=False)

    if args.choice:
        _choice_table([labels] + [load_labels(x / "labels") for x in args.extra if (x / "labels").is_dir()],
                      args.jobs)

    args.out.parent.mkdir(parents=True, exist_ok=True)
    write_atomic(args.out, to_json(ev))
    print(f"written: {args.out}")
    if failed:
        print(f"below target: {', '.join(failed)}")
        return 1
    print("all targets met")
    return 0


def _choose(document: str) -> str:
    from checker.core.limits import DEFAULT_LIMITS
    from checker.engine import choose_checklist
    from checker.matching.nlp import parse_blocks
    from checker.reading import read_document

    try:
        doc = read_document(document, DEFAULT_LIMITS)
        return choose_checklist(list(parse_blocks(b.text for b in doc.blocks)), document=doc)[0]
    except Exception as exc:  # a document that cannot be read is named, the others go on
        return f"(not read: {exc})"


def _choice_table(label_sets, jobs: int) -> None:
    """How often `--checklist auto` picks the checklist the label names, per labelled folder."""
    from concurrent.futures import ProcessPoolExecutor

    print()
    with ProcessPoolExecutor(max_workers=max(1, jobs)) as pool:
        for labels in label_sets:
            if not labels:
                continue
            chosen = list(pool.map(_choose, [lf.document for lf in labels]))
            wrong = [(lf, c) for lf, c in zip(labels, chosen) if c != lf.checklist]
            folder = Path(labels[0].path).parent.parent
            print(f"checklist choice on {folder}: right on {len(labels) - len(wrong)} of {len(labels)} documents")
            for lf, c in wrong:
                print(f"  {Path(lf.path).name}: chose {c}, the label names {lf.checklist}")


def _figures_table(ev, indent: str = "") -> None:
    for name in ("macro_f1", "binary_kappa", "three_class_agreement"):
        f = ev.figure(name)
        iv = f.interval
        ivs = f"[{iv.low:.3f} to {iv.high:.3f}]" if iv and iv.low is not None else ""
        print(f"{indent}{f.title:<46} {_fmt(f.value):>6}  {ivs}")


def _subset(ev, keep, resamples: int, seed: int):
    from checker.many.evaluation import summarize

    units = [u for u in ev.pairs_by_document if u and keep(u[0])]
    outcomes = [d for d in ev.documents if any(u[0].label_file == d.label_file for u in units)]
    return summarize(outcomes, units, resamples=resamples, seed=seed), len(units)


def _coverage(pairs) -> tuple[int, int]:
    """Agreed positives whose labelled passage the tool's quotes cover (evaluation.quote_covers), and how many had
    a labelled quote."""
    from checker.many.evaluation import quote_covers

    agreed = [p for p in pairs if p.human_positive and p.tool_positive and p.human_quote.strip()]
    return sum(quote_covers(p.human_quote, p.tool_quotes) for p in agreed), len(agreed)


def _breakdown(ev, kinds: dict[str, str], args, parts: bool = True) -> None:
    groups = []
    if parts:
        def number(p) -> int:
            head = Path(p.label_file).name.split("-")[0]
            return int(head) if head.isdigit() else -1
        groups += [("first set (numbered below 60)", lambda p: 0 <= number(p) < 60),
                   ("added set (60 and above)", lambda p: number(p) >= 60)]
    groups += [(f"kind {k}", lambda p, k=k: kinds.get(p.label_file) == k) for k in sorted(set(kinds.values()))]
    print()
    for title, keep in groups:
        sub, n = _subset(ev, keep, args.resamples, args.seed)
        if not n:
            continue
        print(f"{title}: {n} documents, {sub.pairs} item pairs")
        _figures_table(sub, "  ")
    pairs = [p for u in ev.pairs_by_document for p in u]
    covered, total = _coverage(pairs)
    if total:
        from checker.many.stats import bootstrap_ci

        def share(units) -> float | None:
            t = sum(u[1] for u in units)
            return sum(u[0] for u in units) / t if t else None

        # resampled by document, as the other figures, from each document's counts
        iv = bootstrap_ci([_coverage(u) for u in ev.pairs_by_document if u], share, args.resamples, args.seed)
        ivs = f" [{iv.low:.3f} to {iv.high:.3f}]" if iv.low is not None else ""
        print(f"\nquotes covering the labelled passage, where both sides found the item: {covered}/{total} "
              f"= {covered / total:.3f}{ivs}")
    false_rep = [p for p in pairs if p.tool == "reported" and p.human in ("missing", "not-applicable")]
    by_attr: dict[str, int] = {}
    for p in false_rep:
        by_attr[p.tool_attribution or "?"] = by_attr.get(p.tool_attribution or "?", 0) + 1
    print(f"false 'reported' (labels say missing or not applicable): {len(false_rep)}; whose statement the tool "
          "quoted: " + (", ".join(f"{k} {v}" for k, v in sorted(by_attr.items())) or "none"))
    if args.false_positives:
        for p in false_rep:
            print(f"  {Path(p.document).name[:40]} {p.item_id}: \"{p.tool_evidence[:220]}\" ({p.tool_location})")


if __name__ == "__main__":
    sys.exit(main())
