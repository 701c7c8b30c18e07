"""`studygap check`: the gap report for each document."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from ..core.errors import ExitCode, InputError, StudygapError, UsageError
from ..core.status import MISSING, is_gap
from .options import (add_judge_option, add_limit_options, color, config_with_judge, limits_from, print_internal,
                      write_output)

DESCRIPTION = """The gap report for each document: per checklist item a status (reported, partial, missing,
not applicable, waived), the passages found with their page, section and line, and the facts extracted."""

EPILOG = """exit codes: 0 done (nothing over --fail-on), 1 items over --fail-on, 2 usage, checklist or input error,
3 a batch ran but some inputs could not be read, 4 internal error (a bug in studygap; --debug shows the traceback),
130 interrupted.
A complete report does not show that a study is sound; a person must still read the document."""


def add_parser(sub) -> argparse.ArgumentParser:
    """Add `check` to the command line's subparsers."""
    from ..reports import names

    c = sub.add_parser("check", help="the gap report for each document", description=DESCRIPTION,
                       epilog=EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    c.add_argument("files", nargs="+", metavar="FILE", help="PDF, DOCX, LaTeX, Markdown, HTML or text files "
                   "(a LaTeX section file is checked as part of the main file that reads it)")
    c.add_argument("--together", action="store_true",
                   help="read all the files (or a folder's files, in the order of their names) as one document: "
                        "a website's pages, a paper and its supplement")
    c.add_argument("--checklist", default=None, metavar="ID|PATH",
                   help="built-in checklist id, a YAML file, or 'auto' (default: chosen from the document's words)")
    c.add_argument("--format", "-f", default="terminal", choices=names(), help="output format (default terminal)")
    c.add_argument("-o", "--output", metavar="PATH", help="write the report to this file (atomically)")
    c.add_argument("--fail-on", choices=["missing", "partial"], default=None,
                   help="exit 1 when an item is missing (or missing or partial)")
    c.add_argument("--config", metavar="FILE", help="settings file (default: nearest studygap.yaml or pyproject.toml)")
    c.add_argument("--verbose", "-v", action="store_true", help="show every passage and facet")
    c.add_argument("--all", dest="all_requests", action="store_true",
                   help="with --format markdown or letter: every request to the authors, not only the ten most "
                        "important")
    c.add_argument("--quiet", "-q", action="store_true", help="no progress display")
    c.add_argument("--no-color", action="store_true", help="no colour (NO_COLOR is respected too)")
    c.add_argument("--no-cache", action="store_true",
                   help="check every file afresh instead of reusing the report of an unchanged file from an "
                        "earlier run")
    add_judge_option(c)
    add_limit_options(c)
    c.set_defaults(handler=run)
    return c


def run(args) -> int:
    """Run `studygap check`; returns the exit code."""
    from ..core.config import load_config
    from ..engine import check_document
    from ..reports import RenderOptions, info, render

    limits = limits_from(args)
    config = config_with_judge(load_config(args.config), args)
    checklist = args.checklist or config.checklist
    fail_on = args.fail_on or config.fail_on
    if checklist != "auto":  # a broken checklist is refused before any document is read
        from ..matching.checklist import load_checklist

        load_checklist(checklist)
    if info(args.format).binary and not args.output:
        raise UsageError(f"the {args.format} format is a file: give -o PATH")
    reports = []
    errors = []
    from ..engine import check_together, main_documents
    from ..core.progress import progress_bar

    if args.together:
        from ..reading import files_in_order

        paths = [str(q) for f in args.files for q in (files_in_order(f) if Path(f).is_dir() else [Path(f)])]
        if not paths:
            raise UsageError(f"{args.files[0]}: no documents to read there")
        report = check_together(paths, checklist, config, limits)
        out = render(args.format, [report], RenderOptions(verbose=args.verbose, color=color(args), many=False,
                                                         all_requests=args.all_requests))
        write_output(out, args.output, paths)
        return _fail_code([report], fail_on)
    args.files, notes = main_documents(args.files)
    for note in notes:
        print(f"studygap: {note}", file=sys.stderr)
    internal = 0
    try:
        with progress_bar("checking documents", len(args.files), args.quiet) as progress:
            for f in args.files:
                try:
                    try:
                        reports.append(check_document(f, checklist, config, limits, cache=not args.no_cache))
                    except MemoryError:
                        raise InputError(f, "checking it needed more memory than this machine allowed",
                                         "check it in parts, each part as its own file") from None
                except StudygapError as exc:
                    if len(args.files) == 1 or getattr(exc, "path", None) is None:
                        raise
                    errors.append(exc)
                    print(exc.line(), file=sys.stderr)
                except Exception as exc:  # noqa: BLE001 - a bug on one document must not cost the others
                    if len(args.files) == 1:
                        raise
                    errors.append(exc)
                    internal += 1
                    print_internal(exc, args, f)
                if progress is not None:
                    progress(len(reports) + len(errors))
    except KeyboardInterrupt:
        done = len(reports) + len(errors)
        print(f"studygap: interrupted after {done} of {len(args.files)} document{'s' if len(args.files) != 1 else ''}"
              "; no output was written", file=sys.stderr)
        return ExitCode.INTERRUPTED
    if args.verbose:  # kept reports that were not used (damaged, planted, another file's): one line each
        from ..resultcache import notices

        for notice in notices:
            print(notice, file=sys.stderr)
        notices.clear()
    if reports:
        out = render(args.format, reports, RenderOptions(verbose=args.verbose, color=color(args),
                                                         many=len(args.files) > 1, all_requests=args.all_requests))
        write_output(out, args.output, args.files)
    if internal:
        return ExitCode.INTERNAL_ERROR
    if errors:
        return ExitCode.SOME_INPUTS_FAILED
    return _fail_code(reports, fail_on)


def _fail_code(reports, fail_on: str | None) -> int:
    if fail_on:
        over = (lambda s: s == MISSING) if fail_on == "missing" else is_gap
        if any(over(it.status) for r in reports for it in r.items):
            return ExitCode.ITEMS_OVER_THRESHOLD
    return ExitCode.OK
