"""The `studygap audit` command: options and wiring only; the work is in checker.many.audit and checker.many.batch."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from ..core.errors import ExitCode, StudygapError, UsageError
from ..reports import names

DESCRIPTION = """How often each checklist item is reported across a corpus, with Wilson score 95% intervals.

reporting rate = reported / applicable documents. A partial item counts as not reported; its share is shown
beside the rate as the partial rate. Not-applicable and waived documents are left out of the denominator.

--meta FILE.csv adds fields per document: the first column holds the document's path (as given, or its file
name), the others fields such as year or venue; --by FIELD gives the rates per value of that field.

Without --checklist, the checklist chosen for the first document is used for all, and the output says so; a
corpus whose documents were checked against different checklists gets rates per checklist.

--format csv gives one header row and one row per checklist, group and item; with -o NAME.csv the notes (counts,
files that could not be read or were skipped, cautions) go to NAME.meta.json beside it. --plot is drawn after the
table is written: a plot that cannot be drawn never costs the table.
Rates describe what the wording reports; validate the tool on your own labelled sample (studygap evaluate)."""

EPILOG = """exit codes: 0 done, 2 usage, metadata or checklist error, or the plot could not be drawn (the table is
written all the same), 3 done but some documents could not be read (they are listed and left out of the rates)."""


def add_parser(subparsers) -> argparse.ArgumentParser:
    """Add `audit` to the command line's subparsers."""
    from .screen import add_batch_options

    p = subparsers.add_parser("audit", help="reporting rates across a corpus, with Wilson intervals",
                              description=DESCRIPTION, epilog=EPILOG,
                              formatter_class=argparse.RawDescriptionHelpFormatter)
    add_batch_options(p)
    p.add_argument("--meta", metavar="FILE.csv", default=None, help="metadata per document (path, then fields)")
    p.add_argument("--by", metavar="FIELD", default=None, help="rates per value of this metadata field")
    p.add_argument("--format", "-f", choices=names("audit"), default="terminal",
                   help="output format (default terminal)")
    p.add_argument("--plot", metavar="PATH.png|PATH.svg", default=None,
                   help="also draw the rates with their intervals as a bar chart")
    p.set_defaults(handler=run)
    return p


def run(args) -> int:
    """Run `studygap audit`; returns the exit code.

    The table (or JSON) is written before the plot is drawn, so a plot that cannot be drawn never costs the
    numbers: that failure is one line on stderr and exit code 2, with the table already in place.
    """
    from ..many.audit import build_audit, load_meta, sidecar
    from ..reports import render
    from ..reports.audit import PlotError, plot
    from ..core.output import write_atomic
    from .options import write_csv, write_output
    from .screen import exit_code, run_inputs

    try:
        meta = None
        if args.by and not args.meta:
            raise UsageError("--by needs --meta FILE.csv with that field")
        if args.meta:
            fields, meta = load_meta(args.meta)
            if args.by and args.by not in fields:
                raise UsageError(f"{args.meta}: has no field {args.by!r} (it has {', '.join(fields)})")
        if args.plot and Path(args.plot).suffix.lower() not in (".png", ".svg"):
            raise UsageError(f"{args.plot}: the plot is written as .png or .svg")
        skipped: list[tuple[str, str]] = []
        results, note, seconds, paths = run_inputs(args, skipped=skipped)
        audit = build_audit(results, note, by=args.by, meta=meta, seconds=seconds, skipped=skipped)
        for path in audit.unmatched:
            print(f"studygap: no metadata row: {path} (counted under \"(no metadata)\")", file=sys.stderr)
        inputs = paths + ([args.meta] if args.meta else [])
        if args.format == "csv":
            write_csv(render("csv", audit), sidecar(audit), args.output, inputs)
        else:
            write_output(render(args.format, audit), args.output, inputs)
    except StudygapError as exc:
        print(exc.line(), file=sys.stderr)
        return int(ExitCode.ERROR)
    if args.plot:
        try:
            write_atomic(Path(args.plot), plot(audit, args.plot), inputs)
        except StudygapError as exc:
            print(exc.line() + " (the rates were written all the same)", file=sys.stderr)
            return int(ExitCode.ERROR)
        except (PlotError, ValueError, RuntimeError, OSError) as exc:
            print(f"studygap: error: {args.plot}: the plot could not be drawn ({exc}); the rates were written all "
                  "the same", file=sys.stderr)
            return int(ExitCode.ERROR)
    return int(exit_code(results))
