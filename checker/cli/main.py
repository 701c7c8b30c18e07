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
        p.epilog = f"example:\n  {EXAMPLES[name]}" + (f"\n\n{p.epilog}" if p.epilog else "")
    return parser


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


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
