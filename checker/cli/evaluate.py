"""The `studygap evaluate` command: options and wiring only; the work is in checker.many.evaluation."""

from __future__ import annotations

import argparse
import sys

from ..core.errors import ExitCode, StudygapError, UsageError
from ..core.progress import progress_bar
from ..reports import names
from .options import color, write_output

DESCRIPTION = """Compare studygap with your own labels, so that you can see how far to trust it on documents like yours.

LABELS_DIR holds one YAML file per document:

  document: raw/paper-01.pdf        # relative to the folder above LABELS_DIR, or to --docs DIR
  checklist: validation-study       # a built-in checklist id or a checklist file
  kind: paper                       # optional
  notes: anything you want to keep  # optional
  items:
    data.source:
      status: reported              # reported, partial, missing or not-applicable
      quote: Scans came from two hospitals between 2019 and 2021.
      location: Methods > Data
      note: optional
    ranking.method: not-applicable  # a bare status is fine too

Only the items you label are compared. The figures describe agreement on your sample; studygap is a triage
aid, and a person must still read each document."""

EPILOG = """exit codes: 0 done, 2 usage or label-file error, 3 done but some documents could not be checked
(they are listed, and their labels are not counted)."""


def add_parser(subparsers) -> argparse.ArgumentParser:
    """Add `evaluate` to the command line's subparsers."""
    p = subparsers.add_parser(
        "evaluate", help="agreement of studygap with your own labels (precision, recall, F1, kappa)",
        description=DESCRIPTION, epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("labels", metavar="LABELS_DIR", help="folder of YAML label files, one per document (or one file)")
    p.add_argument("--docs", metavar="DIR", default=None,
                   help="folder of the documents (default: paths are relative to the folder above LABELS_DIR)")
    p.add_argument("--checklist", metavar="ID|PATH", default=None,
                   help="use this checklist for every document instead of the one each label file names")
    p.add_argument("--format", "-f", choices=names("evaluation"), default="terminal",
                   help="output format (default terminal)")
    p.add_argument("-o", "--output", metavar="PATH", help="write the result to this file (atomically)")
    p.add_argument("--seed", type=int, default=0, metavar="N",
                   help="seed of the bootstrap resampling (default 0; the same seed gives the same intervals)")
    p.add_argument("--resamples", type=int, default=2000, metavar="N",
                   help="bootstrap resamples of the documents (default 2000)")
    p.add_argument("--jobs", "-j", type=int, default=1, metavar="N", help="documents checked in parallel (default 1)")
    p.add_argument("--quiet", "-q", action="store_true", help="no progress display")
    p.add_argument("--no-color", action="store_true", help="no colour (NO_COLOR is respected too)")
    p.set_defaults(handler=run)
    return p


def _evaluate(args):
    from ..many.evaluation import evaluate, load_labels

    if args.resamples < 1:
        raise UsageError("--resamples must be 1 or more (2000 is usual)")
    if args.jobs < 1:
        raise UsageError("--jobs must be 1 or more")
    if args.checklist:  # a broken checklist is refused before any document is read
        from ..matching.checklist import load_checklist

        load_checklist(args.checklist)
    labels = load_labels(args.labels, args.docs)
    with progress_bar("checking the labelled documents", len(labels), args.quiet) as progress:
        return evaluate(labels, args.checklist, jobs=args.jobs, progress=progress, seed=args.seed,
                        resamples=args.resamples, source=str(args.labels)), labels


def run(args) -> int:
    """Run `studygap evaluate`; returns the exit code."""
    from ..reports import RenderOptions, render

    try:
        ev, labels = _evaluate(args)
        for d in ev.errors:
            print(f"studygap: error: {d.error}", file=sys.stderr)
        out = render(args.format, ev, RenderOptions(color=color(args)))
        write_output(out, args.output, [lf.document for lf in labels] + [lf.path for lf in labels])
    except StudygapError as exc:
        print(exc.line(), file=sys.stderr)
        return int(ExitCode.ERROR)
    return int(ExitCode.SOME_INPUTS_FAILED if ev.errors else ExitCode.OK)
