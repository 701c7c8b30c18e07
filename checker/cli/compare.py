"""The `studygap compare` command: options and wiring only; the work is in checker.many.compare."""

from __future__ import annotations

import argparse
import sys

from ..core.errors import ExitCode, StudygapError
from ..reports import names

DESCRIPTION = """What a revision fixed and what it lost: per checklist item, the status in OLD and in NEW (newly
reported, lost, still missing, partial now reported...), and where its passages went (kept, moved, reworded,
added, removed; passages are matched by similarity of wording).

Both versions are checked against one checklist: the one named with --checklist, or the one chosen for OLD."""

EPILOG = """exit codes: 0 done (nothing over --fail-on), 1 something over --fail-on (lost: an item reported or
partial in OLD is less reported in NEW; missing: an item is missing in NEW), 2 usage, checklist or input error
(either version could not be read)."""


def add_parser(subparsers) -> argparse.ArgumentParser:
    """Add `compare` to the command line's subparsers."""
    p = subparsers.add_parser("compare", help="what a revision fixed and what it lost", description=DESCRIPTION,
                              epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("old", metavar="OLD", help="the earlier version")
    p.add_argument("new", metavar="NEW", help="the revised version")
    p.add_argument("--checklist", metavar="ID|PATH", default=None,
                   help="checklist for both versions (default: the one chosen for OLD)")
    p.add_argument("--format", "-f", choices=names("compare"), default="terminal",
                   help="output format (default terminal)")
    p.add_argument("-o", "--output", metavar="PATH", help="write the result to this file (atomically)")
    p.add_argument("--fail-on", choices=["lost", "missing"], default=None,
                   help="exit 1 when the revision lost something (an item less reported than before) or when an "
                        "item is missing in NEW; for CI")
    p.set_defaults(handler=run)
    return p


def run(args) -> int:
    """Run `studygap compare`; returns the exit code."""
    from ..many.compare import compare_documents
    from ..reports import render
    from .options import write_output

    try:
        if args.checklist:
            from ..matching.checklist import load_checklist

            load_checklist(args.checklist)
        comp = compare_documents(args.old, args.new, args.checklist)
        write_output(render(args.format, comp), args.output, [args.old, args.new])
    except StudygapError as exc:
        print(exc.line(), file=sys.stderr)
        return int(ExitCode.ERROR)
    over = comp.over(args.fail_on) if args.fail_on else []
    if over:
        print(f"studygap: {len(over)} item{'s' if len(over) != 1 else ''} over --fail-on {args.fail_on}: "
              + ", ".join(f"{it.id} ({it.old_status} -> {it.new_status})" for it in over), file=sys.stderr)
        return int(ExitCode.ITEMS_OVER_THRESHOLD)
    return int(ExitCode.OK)
