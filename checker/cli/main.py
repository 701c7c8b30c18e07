"""The command line: commands and options only; the work is done in the library modules.

Heavy libraries (spaCy, pdfminer, rich) are imported inside the commands that need them, so that --help and
--version answer at once.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path
from typing import Sequence

from .. import __version__
from ..core.errors import ExitCode, StudygapError, UsageError

EPILOG = """exit codes: 0 done (nothing over --fail-on), 1 items over --fail-on, 2 usage, checklist or input error,
3 a batch ran but some inputs could not be read.
A complete report does not show that a study is sound; a person must still read the document."""


#: an example for every command's --help, shown above its exit codes
EXAMPLES = {
    "check": ("studygap check paper.pdf\n"
              "  studygap check draft.tex --fail-on missing --format lines\n"
              "  studygap check paper.pdf --format html -o report.html\n"
              "  studygap check submission.pdf --format letter -o requests.md"),
    "outline": "studygap outline paper.pdf\n  studygap outline draft.docx --format json -o outline.json",
    "screen": ("studygap screen proposals/ --checklist benchmark-proposal --format html -o screening.html\n"
               "  studygap screen proposals/ --format docx -o screening.docx"),
    "audit": ("studygap audit corpus/ --checklist validation-study --format csv -o rates.csv --plot rates.svg\n"
              "  studygap audit corpus/ --meta corpus.csv --by year --format json -o rates.json"),
    "compare": ("studygap compare draft-v1.pdf draft-v2.pdf --format markdown\n"
                "  studygap compare main-before.tex main.tex --fail-on lost"),
    "evaluate": "studygap evaluate my-labels/ --format json -o agreement.json",
    "checklists": ("studygap checklists list\n  studygap checklists show validation-study\n"
                   "  studygap checklists validate my-checklist.yaml"),
}
OUTLINE_DESCRIPTION = """What the reader saw in one document: its format, pages and words, the section tree with the
role of each section (methods, results, references...) and its page or line range, and any warnings. Use it to
see why an item was or was not found in a section."""
CHECK_DESCRIPTION = """The gap report for each document: per checklist item a status (reported, partial, missing,
not applicable, waived), the passages found with their page, section and line, and the facts extracted."""
CHECKLISTS_DESCRIPTION = """The built-in checklists (list), the items of one (show), and a check of your own checklist
files that reports every problem with FILE:LINE:COLUMN (validate)."""


def _with_example(name: str, epilog: str | None) -> str:
    return f"example:\n  {EXAMPLES[name]}" + (f"\n\n{epilog}" if epilog else "")


def _limits_options(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("limits (for untrusted input)")
    g.add_argument("--max-bytes", type=int, default=None, metavar="N", help="largest input file read (default 100 MB)")
    g.add_argument("--max-pages", type=int, default=None, metavar="N", help="most PDF pages read (default 2000)")
    g.add_argument("--max-inflated-bytes", type=int, default=None, metavar="N",
                   help="largest uncompressed size of a DOCX's parts (default 200 MB)")
    g.add_argument("--regex-seconds", type=float, default=None, metavar="S",
                   help="time bound for one checklist regex over one document (default 2)")
    g.add_argument("--seconds", type=float, default=None, metavar="S",
                   help="time bound for checking one document; over it, the document is an error (default 300)")
    g.add_argument("--pdf-engine", choices=("pdfium", "pdfminer"), default=None,
                   help="how PDF text is laid out: pdfium (fast, default) or pdfminer (pdfminer.six layout "
                        "analysis, about ten times slower); both give the same verdicts on the test documents")


def _limits(args):
    import dataclasses

    from ..core.limits import DEFAULT_LIMITS

    changes = {k: getattr(args, k) for k in ("max_bytes", "max_pages", "max_inflated_bytes", "regex_seconds", "seconds")
               if getattr(args, k, None) is not None}
    for k, v in changes.items():
        if v <= 0:
            raise UsageError(f"--{k.replace('_', '-')} must be above 0")
    if getattr(args, "pdf_engine", None):
        changes["pdf_engine"] = args.pdf_engine
    return dataclasses.replace(DEFAULT_LIMITS, **changes)


def build_parser() -> argparse.ArgumentParser:
    from ..reports import names

    parser = argparse.ArgumentParser(
        prog="studygap",
        description="Check whether a validation-study document reports what its readers need.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"studygap {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    c = sub.add_parser("check", help="the gap report for each document", description=CHECK_DESCRIPTION,
                       epilog=_with_example("check", EPILOG), formatter_class=argparse.RawDescriptionHelpFormatter)
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
    _limits_options(c)

    o = sub.add_parser("outline", help="what the reader saw: sections, pages, lines, word counts",
                       description=OUTLINE_DESCRIPTION,
                       epilog=_with_example("outline", "exit codes: 0 done, 2 usage or input error."),
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    o.add_argument("file", metavar="FILE", help="PDF, DOCX, LaTeX, Markdown, HTML or text file")
    o.add_argument("--format", "-f", default="terminal", choices=["terminal", "json"],
                   help="output format (default terminal)")
    o.add_argument("-o", "--output", metavar="PATH", help="write the outline to this file (atomically)")
    _limits_options(o)

    from . import audit as audit_cmd, compare as compare_cmd, evaluate as evaluate_cmd, screen as screen_cmd

    screen_cmd.add_parser(sub)
    audit_cmd.add_parser(sub)
    compare_cmd.add_parser(sub)
    evaluate_cmd.add_parser(sub)
    for name in ("screen", "audit", "compare", "evaluate"):
        p = sub.choices[name]
        p.epilog = _with_example(name, p.epilog)

    k = sub.add_parser("checklists", help="list, show and validate checklists", description=CHECKLISTS_DESCRIPTION,
                       epilog=_with_example("checklists", "exit codes: 0 done, 2 a checklist has problems."),
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
    return parser


def _color(args) -> bool:
    if getattr(args, "no_color", False) or os.environ.get("NO_COLOR"):
        return False
    return sys.stdout.isatty() and not getattr(args, "output", None)


def _write(text: str | bytes, output: str | None, inputs: Sequence[str] = ()) -> None:
    if output is None or output == "-":
        if isinstance(text, bytes):
            sys.stdout.buffer.write(text)
        else:
            sys.stdout.write(text)
        sys.stdout.flush()
        return
    from ..core.output import write_atomic

    write_atomic(Path(output), text, inputs)


def cmd_check(args) -> int:
    from ..core.config import load_config
    from ..engine import check_document
    from ..reports import RenderOptions, info, render

    limits = _limits(args)
    config = load_config(args.config)
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
        out = render(args.format, [report], RenderOptions(verbose=args.verbose, color=_color(args), many=False,
                                                         all_requests=args.all_requests))
        _write(out, args.output, paths)
        return _fail_code([report], fail_on)
    args.files, notes = main_documents(args.files)
    for note in notes:
        print(f"studygap: {note}", file=sys.stderr)
    try:
        with progress_bar("checking documents", len(args.files), args.quiet) as progress:
            for f in args.files:
                try:
                    reports.append(check_document(f, checklist, config, limits, cache=not args.no_cache))
                except StudygapError as exc:
                    if len(args.files) == 1 or getattr(exc, "path", None) is None:
                        raise
                    errors.append(exc)
                    print(exc.line(), file=sys.stderr)
                if progress is not None:
                    progress(len(reports) + len(errors))
    except KeyboardInterrupt:
        done = len(reports) + len(errors)
        print(f"studygap: interrupted after {done} of {len(args.files)} document{'s' if len(args.files) != 1 else ''}"
              "; no output was written", file=sys.stderr)
        return ExitCode.INTERRUPTED
    if reports:
        out = render(args.format, reports, RenderOptions(verbose=args.verbose, color=_color(args), many=len(args.files) > 1,
                                                 all_requests=args.all_requests))
        _write(out, args.output, args.files)
    if errors:
        return ExitCode.SOME_INPUTS_FAILED
    return _fail_code(reports, fail_on)


def _fail_code(reports, fail_on: str | None) -> int:
    if fail_on:
        bad = {"missing"} if fail_on == "missing" else {"missing", "partial"}
        if any(it.status in bad for r in reports for it in r.items):
            return ExitCode.ITEMS_OVER_THRESHOLD
    return ExitCode.OK


def cmd_outline(args) -> int:
    from .outline import outline, render_outline

    data = outline(args.file, _limits(args))
    _write(render_outline(data, args.format, color=_color(args)), args.output, [args.file])
    return ExitCode.OK


def cmd_checklists(args) -> int:
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


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return ExitCode.ERROR
    from ..many.batch import stop_on_terminate

    with stop_on_terminate():  # SIGTERM ends the run like Ctrl-C: clean-up runs, nothing half-written
        return _dispatch(args)


def _dispatch(args) -> int:
    try:
        if args.command == "check":
            return int(cmd_check(args))
        if args.command == "outline":
            return int(cmd_outline(args))
        if args.command in ("screen", "audit", "compare"):
            return int(args.handler(args))
        if args.command == "evaluate":
            from . import evaluate as evaluate_cmd

            return int(evaluate_cmd.run(args))
        return int(cmd_checklists(args))
    except StudygapError as exc:
        print(exc.line(), file=sys.stderr)
        return ExitCode.ERROR
    except KeyboardInterrupt:
        print("studygap: interrupted; no output was written", file=sys.stderr)
        return ExitCode.INTERRUPTED
    except BrokenPipeError:
        return ExitCode.OK


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
