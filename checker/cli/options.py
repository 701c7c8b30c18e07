"""What the commands share: the limit options for untrusted input, colour, and writing a result to a file
(atomically) or to standard output."""

from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path
from typing import Sequence

from ..core.errors import UsageError, internal_error_line


def add_limit_options(p: argparse.ArgumentParser) -> None:
    g = p.add_argument_group("limits (for untrusted input)")
    g.add_argument("--max-bytes", type=int, default=None, metavar="N", help="largest input file read (default 100 MB)")
    g.add_argument("--max-pages", type=int, default=None, metavar="N", help="most PDF pages read (default 2000)")
    g.add_argument("--max-inflated-bytes", type=int, default=None, metavar="N",
                   help="largest unpacked size of a DOCX's parts or a PDF's compressed streams, counted while "
                        "unpacking (default 500 MB)")
    g.add_argument("--regex-seconds", type=float, default=None, metavar="S",
                   help="time bound for one checklist regex over one document (default 2)")
    g.add_argument("--seconds", type=float, default=None, metavar="S",
                   help="time bound for checking one document; over it, the document is an error (default 300)")
    g.add_argument("--pdf-engine", choices=("pdfium", "pdfminer"), default=None,
                   help="how PDF text is laid out: pdfium (fast, default) or pdfminer (pdfminer.six layout "
                        "analysis, about ten times slower); both give the same verdicts on the test documents")


def add_judge_option(p: argparse.ArgumentParser) -> None:
    p.add_argument("--judge", choices=("learned", "cues"), default=None,
                   help="who has the last word on a built-in checklist's statuses: 'learned' (default) lets a model "
                        "fitted on documents that careful readers labelled move the cues' verdict where the quotes "
                        "back it; 'cues' keeps the cues' verdict")


def config_with_judge(config, args):
    """The settings with the judge the command line names (the settings' own otherwise)."""
    import dataclasses

    return dataclasses.replace(config, judge=args.judge) if getattr(args, "judge", None) else config


def limits_from(args):
    """The Limits the limit options ask for (the defaults where none is given)."""
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


def color(args) -> bool:
    """Colour only on a terminal, never into a file, and not with --no-color or NO_COLOR."""
    if getattr(args, "no_color", False) or os.environ.get("NO_COLOR"):
        return False
    return sys.stdout.isatty() and not getattr(args, "output", None)


def write_output(text: str | bytes, output: str | None, inputs: Sequence[str] = ()) -> None:
    """To the file named by -o (atomically; never over one of the inputs), or to standard output."""
    if output is None or output == "-":
        if isinstance(text, bytes):
            sys.stdout.buffer.write(text)
        else:
            sys.stdout.write(text)
        sys.stdout.flush()
        return
    from ..core.output import write_atomic

    write_atomic(Path(output), text, inputs)


def sidecar_path(output: str) -> Path:
    """Where a CSV's notes go: rates.csv -> rates.meta.json beside it."""
    p = Path(output)
    return p.with_name(p.stem + ".meta.json") if p.suffix else p.with_name(p.name + ".meta.json")


def write_csv(text: str, meta: dict, output: str | None, inputs: Sequence[str]) -> None:
    """A CSV table, and beside a named file its notes as JSON (a CSV holds one header row and the rows only)."""
    write_output(text, output, inputs)
    if output and output != "-" and (Path(output).is_file() or not Path(output).exists()):
        from ..core.output import write_atomic

        write_atomic(sidecar_path(output), json.dumps(meta, ensure_ascii=False, indent=2) + "\n", inputs)


def print_internal(exc: BaseException, args, path: str | None = None) -> None:
    """One line for a bug (exit code 4); with --debug its traceback first."""
    if getattr(args, "debug", False):
        import traceback

        traceback.print_exception(type(exc), exc, exc.__traceback__, file=sys.stderr)
    print(internal_error_line(exc, path), file=sys.stderr)
