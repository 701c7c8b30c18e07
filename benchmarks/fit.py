"""Fit each concept's evidence threshold on labelled documents and report leave-one-document-out figures.

    python benchmarks/fit.py [--dev DIR] [--extra DIR ...] [--write] [--needs] [--jobs N]

Every labelled document is checked once with the checklist its label names. For each concept the threshold
with the most agreement with the labels is chosen from a small grid (checker/many/fitting.py). The figures printed are
cross-validated: each document is judged with thresholds fitted on all the others. `--write` stores the
thresholds fitted on all documents in checklists/fitted.yaml, which the verdicts then use.

`--needs` also fits, per checklist item, which facets together make it reported (checker/fitting.py,
`fit_needs`), prints the cross-validated figures of that procedure and the needs that differ from the written
ones, each with the items it gains or loses in every labelled folder; a person copies into the checklists those
that gain on two folders or more and agree with the labelling conventions. `--extra DIR` adds another folder of
labelled documents.
"""

from __future__ import annotations

import argparse
import os
import sys
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))


def _scores(task):
    from checker.many.fitting import scores_of

    document, checklist, labels = task
    try:
        return scores_of(document, checklist, labels), ""
    except Exception as exc:  # a document that cannot be read is named, the others go on
        return [], f"{document}: {exc}"


def _figures(rows_with_status, label_files_by_doc):
    from checker.many.evaluation import DocumentOutcome, Pair, summarize

    by_doc: dict[str, list[Pair]] = {}
    for r, tool in rows_with_status:
        by_doc.setdefault(r.document, []).append(Pair(
            document=r.document, label_file=label_files_by_doc[r.document], item_id=r.item_id, title=r.item_id,
            human=r.human, tool=tool))
    docs = sorted(by_doc)
    outcomes = [DocumentOutcome(label_files_by_doc[d], d, "", len(by_doc[d]), len(by_doc[d])) for d in docs]
    return summarize(outcomes, [by_doc[d] for d in docs], resamples=1000)


def _report_needs(rows, by_doc, default, folder_of=None) -> None:
    from checker.many.evaluation import three_class
    from checker.many.fitting import FOUND_AT, cross_validate_needs, fit_needs

    cv = _figures(cross_validate_needs(rows), by_doc)
    fitted = fit_needs(rows)
    same = _figures([(r, r.status_at(FOUND_AT, fitted.get((r.checklist, r.item_id), r.needs))) for r in rows],
                    by_doc)
    print()
    print(f"{'needs (which facets make an item reported)':<44} {'as written':>12} {'fitted, same docs':>18} "
          f"{'fitted, left out (CV)':>30}")
    for name in ("macro_f1", "binary_kappa", "three_class_agreement", "four_class_agreement"):
        vals = [next(x for x in ev.figures if x.name == name) for ev in (default, same, cv)]
        print(f"{vals[0].title:<44} {vals[0].value:>12.3f} {vals[1].value:>18.3f} {vals[2].value:>30.3f}")
    written = {(r.checklist, r.item_id): r.needs for r in rows}
    changed = [(k, n) for k, n in fitted.items() if n != written[k]]
    print(f"\nneeds that differ from the written ones ({len(changed)}):" if changed else "\nno needs changed")
    def agrees(r, needs) -> bool:
        return three_class(r.status_at(FOUND_AT, needs)) == three_class(r.human)

    for (checklist, item), n in changed:
        print(f"  {checklist} {item}: {[list(a) for a in written[(checklist, item)]]} -> {[list(a) for a in n]}")
        if folder_of:
            # a change that gains on one folder alone more likely fits that folder's phrasing than the trade's
            gains: dict[str, list[int]] = {}
            for r in rows:
                if (r.checklist, r.item_id) == (checklist, item):
                    g = gains.setdefault(folder_of.get(r.document, "?"), [0, 0])
                    g[0] += agrees(r, n) - agrees(r, r.needs)
                    g[1] += 1
            print("    items agreeing, gained or lost per folder: "
                  + ", ".join(f"{f} {g:+d} of {t}" for f, (g, t) in sorted(gains.items())))
    if changed and folder_of:
        print("  Copy a change into the checklist by hand only where it gains on two folders or more, loses on none by "
              "much, and agrees with the labelling conventions.")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--dev", type=Path, default=ROOT.parent / "shared" / "eval" / "dev",
                    help="a folder with labels/ and the documents they name")
    ap.add_argument("--extra", type=Path, action="append", default=[],
                    help="another folder with labels/ and documents, fitted on together with --dev")
    ap.add_argument("--needs", action="store_true",
                    help="also fit which facets make each item reported, and print where that differs")
    ap.add_argument("--write", action="store_true", help="store the thresholds in checklists/fitted.yaml")
    ap.add_argument("--jobs", type=int, default=min(2, os.cpu_count() or 1))
    args = ap.parse_args(argv)

    labels_dir = args.dev / "labels"
    if not labels_dir.is_dir():
        print(f"fit: skipped, no labelled documents at {args.dev} (expected a labels/ folder there)")
        return 0
    from checker.many.evaluation import load_labels
    from checker.many.fitting import FOUND_AT, GRID, cross_validate, fit

    label_files = load_labels(labels_dir)
    for extra in args.extra:
        label_files += load_labels(extra / "labels")
    tasks = [(lf.document, lf.checklist, {it.item_id: it.status for it in lf.items}) for lf in label_files]
    with ProcessPoolExecutor(max_workers=max(1, args.jobs)) as pool:
        results = list(pool.map(_scores, tasks))
    rows = [r for rs, _ in results for r in rs]
    for _, err in results:
        if err:
            print(f"  not checked: {err}")
    by_doc = {lf.document: lf.path for lf in label_files}

    default = _figures([(r, r.status_at(FOUND_AT)) for r in rows], by_doc)
    fitted_all = fit(rows)
    in_sample = _figures([(r, r.status_at(fitted_all.get(r.concept, FOUND_AT))) for r in rows], by_doc)
    cv = _figures(cross_validate(rows), by_doc)

    print(f"{len(by_doc)} documents, {len(rows)} labelled items; thresholds tried: {', '.join(map(str, GRID))}")
    print()
    print(f"{'figure':<44} {'default 0.5':>12} {'fitted, same docs':>18} {'fitted, left out (CV)':>30}")
    for name in ("macro_f1", "binary_kappa", "three_class_agreement", "four_class_agreement"):
        def val(ev):
            f = next(x for x in ev.figures if x.name == name)
            iv = f" [{f.interval.low:.3f}-{f.interval.high:.3f}]" if f.interval and f.interval.low is not None else ""
            return f"{f.value:.3f}{iv}"
        title = next(x.title for x in cv.figures if x.name == name)
        print(f"{title:<44} {val(default):>12} {val(in_sample):>18} {val(cv):>30}")
    if args.needs:
        _report_needs(rows, by_doc, default, {lf.document: Path(lf.path).parent.parent.name for lf in label_files})
    print()
    print("thresholds fitted on all documents (concepts without labels keep the default):")
    for c, t in fitted_all.items():
        print(f"  {c:<36} {t:.2f}{'' if t != FOUND_AT else '  (default)'}")
    if args.write:
        from checker.core.output import write_atomic

        cvf = {f.name: f.value for f in cv.figures}
        lines = [
            "# Evidence thresholds per concept, fitted on labelled documents by `python benchmarks/fit.py --write`.",
            "# Do not edit by hand; run the command again after changing cues or weights.",
            f"# Fitted on {len(by_doc)} documents ({len(rows)} labelled items). Leave-one-document-out figures:",
            f"# macro-F1 {cvf['macro_f1']:.3f}, kappa {cvf['binary_kappa']:.3f}, "
            f"three-class agreement {cvf['three_class_agreement']:.3f}.",
            "thresholds:",
        ] + [f"  {c}: {t}" for c, t in fitted_all.items()]
        out = ROOT / "checklists" / "fitted.yaml"
        write_atomic(out, "\n".join(lines) + "\n")
        print(f"written: {out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
