"""`studygap checklists`: the built-in checklists, one checklist's items, and validation of checklist files."""

from __future__ import annotations

import argparse
import sys

from ..core.errors import ExitCode, StudygapError

DESCRIPTION = """The built-in checklists (list), the items of one (show), and a check of your own checklist
files that reports every problem with FILE:LINE:COLUMN (validate)."""


def add_parser(sub) -> argparse.ArgumentParser:
    """Add `checklists` to the command line's subparsers."""
    k = sub.add_parser("checklists", help="list, show and validate checklists", description=DESCRIPTION,
                       epilog="exit codes: 0 done, 2 a checklist has problems.",
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    ksub = k.add_subparsers(dest="action", metavar="ACTION")
    ksub.add_parser("list", help="the built-in checklists", description="The built-in checklists: id, version, "
                    "number of items and title.", epilog="example:\n  studygap checklists list",
                    formatter_class=argparse.RawDescriptionHelpFormatter)
    show = ksub.add_parser("show", help="the items of one checklist", description="The groups and items of one "
                           "checklist, each with its question.", epilog="example:\n  studygap checklists show "
                           "benchmark-proposal", formatter_class=argparse.RawDescriptionHelpFormatter)
    show.add_argument("ref", metavar="ID|PATH", help="a built-in checklist id or a YAML file")
    val = ksub.add_parser("validate", help="check checklist files and report every problem with its place",
                          description="Load checklist files strictly and report every problem with "
                          "FILE:LINE:COLUMN; exit 2 when any file has one.",
                          epilog="example:\n  studygap checklists validate my-checklist.yaml",
                          formatter_class=argparse.RawDescriptionHelpFormatter)
    val.add_argument("paths", nargs="+", metavar="PATH", help="checklist YAML files")
    k.set_defaults(handler=run)
    return k


def run(args) -> int:
    """Run `studygap checklists`; returns the exit code."""
    from ..matching.checklist import builtin_ids, load_checklist

    if args.action in (None, "list"):
        for cid in builtin_ids():
            cl = load_checklist(cid)
            print(f"{cl.id:<24} {cl.version:<6} {len(cl.items):>3} items  {cl.title}")
        return ExitCode.OK
    if args.action == "show":
        cl = load_checklist(args.ref)
        print(f"{cl.id} {cl.version}: {cl.title}")
        if cl.description:
            print(cl.description)
        for g in cl.groups:
            print(f"\n{g.title}")
            for it in cl.items:
                if it.group == g.id:
                    print(f"  {it.id:<34} {it.title}")
                    print(f"  {'':<34} {it.question}")
        return ExitCode.OK
    problems: list[str] = []
    for p in args.paths:
        try:
            cl = load_checklist(p, strict=True)
            print(f"{p}: valid ({len(cl.items)} items)")
        except StudygapError as exc:
            problems.extend(getattr(exc, "problems", [str(exc)]))
    if problems:
        print("\n".join(problems), file=sys.stderr)
        return ExitCode.ERROR
    return ExitCode.OK
