"""The command line: the parser of every command and one dispatch (each command module's ``run``); the work is
done in the library modules.

Heavy libraries (spaCy, pdfminer, rich) are imported inside the commands that need them, so that --help and
--version answer at once.
"""

from __future__ import annotations

import argparse
import sys
from typing import Sequence

from .. import __version__
from ..core.errors import ExitCode, StudygapError
from .options import print_internal

#: the exit codes every command shares, added to each command's own
COMMON_EXITS = "4 internal error (a bug in studygap; --debug shows the traceback), 130 interrupted."
EPILOG = f"""exit codes: 0 done (nothing over --fail-on), 1 items over --fail-on, 2 usage, checklist or input error,
3 a batch ran but some inputs could not be read, {COMMON_EXITS}
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


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="studygap",
        description="Check whether a validation-study document reports what its readers need.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"studygap {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    from . import audit, check, checklists, compare, evaluate, outline, screen

    for command in (check, outline, screen, audit, compare, evaluate, checklists):
        p = command.add_parser(sub)
        name = p.prog.split()[-1]
        epilog = p.epilog
        if epilog and COMMON_EXITS not in " ".join(epilog.split()):
            epilog = f"{epilog}\nAlso {COMMON_EXITS}"
        p.epilog = f"example:\n  {EXAMPLES[name]}" + (f"\n\n{epilog}" if epilog else "")
    _debug_option(parser)
    return parser


def _debug_option(parser: argparse.ArgumentParser) -> None:
    """--debug on every command, before or after its name: an internal error then shows its traceback."""
    parser.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help="on an internal error (exit 4), show the traceback")
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for command in action.choices.values():
                _debug_option(command)


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
        return int(args.handler(args))
    except StudygapError as exc:
        print(exc.line(), file=sys.stderr)
        return ExitCode.ERROR
    except KeyboardInterrupt:
        print("studygap: interrupted; no output was written", file=sys.stderr)
        return ExitCode.INTERRUPTED
    except BrokenPipeError:
        return ExitCode.OK
    except MemoryError:
        print("studygap: error: studygap ran out of the memory this machine allows (check fewer or smaller "
              "documents at once)", file=sys.stderr)
        return ExitCode.ERROR
    except Exception as exc:  # noqa: BLE001 - a bug: one line and its own exit code, the traceback on --debug
        files = getattr(args, "files", None) or [getattr(args, "file", None)]
        print_internal(exc, args, files[0] if len(files) == 1 else None)
        return ExitCode.INTERNAL_ERROR


#: allocations between collections of the youngest generation in the studygap command (Python's default: 700)
GC_YOUNG = 20_000


def entry() -> None:
    """The ``studygap`` command: main(), then the process ends at once. The exit handlers run (the regex cache
    is saved, logging is flushed) and the output is flushed, but Python's tear-down is skipped: freeing every
    object of the spaCy pipeline, the parsed document and the interpreter's modules one by one cost a few tenths
    of a second after each check, and a pre-commit hook waits for it. When another thread is still alive (a
    library's helper), a profiler or coverage is watching, or the output cannot be flushed, the process ends the
    ordinary way.

    The garbage collector's youngest generation is collected after GC_YOUNG allocations instead of Python's 700:
    a check allocates millions of objects that live until the report is written (tokens, lines, passages), and
    each full collection walks every one of them, with the spaCy pipeline, so a long document paid for them
    again and again (about 6% of its time at 300 pages, growing faster than the pages)."""
    import atexit
    import gc
    import os
    import threading

    _, middle, old = gc.get_threshold()
    gc.set_threshold(GC_YOUNG, middle, old)
    code = main()

    try:
        sys.stdout.flush()
        sys.stderr.flush()
    except (OSError, ValueError):  # a closed pipe: Python's own exit reports it as usual
        sys.exit(code)
    if threading.active_count() > 1 or sys.getprofile() is not None or sys.gettrace() is not None:
        sys.exit(code)  # a helper thread, or a profiler, coverage or debugger that writes its data at exit
    atexit._run_exitfuncs()
    try:
        sys.stdout.flush()
        sys.stderr.flush()
    except (OSError, ValueError):
        pass
    os._exit(code)


if __name__ == "__main__":  # pragma: no cover
    entry()
