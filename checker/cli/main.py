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


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
