"""The `studygap screen` command (options and wiring), and the batch options that `audit` shares with it."""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

from ..core.errors import ExitCode, StudygapError, UsageError
from ..core.progress import progress_bar
from ..reports import names
from ..core.config import Config
from .options import add_judge_option, add_limit_options, config_with_judge, limits_from, write_csv, write_output

DESCRIPTION = """Check many documents against one checklist and show them side by side: a matrix of documents and
items, a completeness score per document, and the facts found (annotators, test cases, bootstrap samples...).

A folder is searched (with its sub-folders) for files studygap reads, in sorted order; LaTeX files without
\\documentclass are taken as parts of a main file there and not checked on their own.

Without --checklist, the checklist chosen automatically for the first document is used for all of them, and the
output says which; name one with --checklist to be sure every document meets the same items.

completeness = (reported + half of partial) / applicable items (not-applicable and waived items are left out).
Scores are a triage aid for the people who then read the documents, not a decision about any proposal or paper."""

EPILOG = """exit codes: 0 done, 2 usage or checklist error, 3 done but some documents could not be read (their rows
say why)."""


def add_batch_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("inputs", nargs="+", metavar="DIR|FILE", help="folders to search and documents to check")
    p.add_argument("--checklist", metavar="auto|ID|PATH", default=None,
                   help="checklist for every document, or 'auto' to choose one for each document (default: the one "
                        "chosen for the first document, used for all)")
    p.add_argument("--jobs", "-j", type=int, default=None, metavar="N",
                   help="documents checked in parallel on this machine (default: one per CPU)")
    p.add_argument("--engine", choices=["local", "dask"], default="local",
                   help="local process pool (default) or a Dask cluster (needs --scheduler)")
    p.add_argument("--scheduler", metavar="ADDRESS", default=None,
                   help="address of the Dask scheduler, for example tcp://host:8786")
    p.add_argument("--send", choices=["path", "bytes"], default="path",
                   help="give Dask workers the file paths (shared file system) or the documents' bytes (default path)")
    p.add_argument("--task-timeout", type=float, default=None, metavar="S",
                   help="with --engine dask: once the cluster has had no worker, or its scheduler has been out of "
                        "reach, for S seconds, the unfinished documents become error rows and the run ends "
                        "(default 60)")
    p.add_argument("-o", "--output", metavar="PATH", help="write the result to this file (atomically)")
    p.add_argument("--quiet", "-q", action="store_true", help="no progress display")
    p.add_argument("--no-cache", action="store_true",
                   help="check every file afresh instead of reusing the report of an unchanged file from an "
                        "earlier run")
    add_judge_option(p)
    add_limit_options(p)


def add_parser(subparsers) -> argparse.ArgumentParser:
    """Add `screen` to the command line's subparsers."""
    p = subparsers.add_parser("screen", help="many documents against one checklist, side by side",
                              description=DESCRIPTION, epilog=EPILOG,
                              formatter_class=argparse.RawDescriptionHelpFormatter)
    add_batch_options(p)
    p.add_argument("--format", "-f", choices=names("screen"), default="terminal",
                   help="output format (default terminal); csv writes its notes to NAME.meta.json beside -o NAME.csv; "
                        "docx is a landscape table for a meeting and needs -o")
    p.set_defaults(handler=run)
    return p


def collect_inputs(inputs: list[str], skipped: list[tuple[str, str]] | None = None) -> list[str]:
    """Files as given, and each folder's readable documents (sorted); a missing input stays, to become an error row.

    Files in a folder that are not checked are added to ``skipped`` as (path, reason), so that outputs can name
    them: a kind studygap does not read, a hidden file or folder, a LaTeX part of a main file, and (named or in a
    folder) a report studygap wrote, known by the mark in its content (an earlier screening page in the folder).
    """
    from ..core.output import written_by_studygap
    from ..reading import supported_suffixes

    suffixes = set(supported_suffixes())
    out: list[str] = []
    skips = skipped if skipped is not None else []
    for name in inputs:
        path = Path(name)
        if path.is_dir():
            found = []
            for p in sorted(path.rglob("*"), key=str):
                rel = p.relative_to(path).parts
                hidden = next((i for i, part in enumerate(rel) if part.startswith(".")), None)
                if hidden is not None:
                    # a hidden folder is named once, not file by file (a .git folder holds thousands)
                    if hidden == len(rel) - 1:
                        skips.append((str(p), "hidden " + ("folder, not searched" if p.is_dir() else "file")))
                    continue
                if not p.is_file():
                    continue
                if p.suffix.lower() in suffixes and written_by_studygap(p):
                    skips.append((str(p), OWN_OUTPUT))
                elif p.suffix.lower() in suffixes:
                    found.append(str(p))
                else:
                    skips.append((str(p), f"not a kind of file studygap reads ({p.suffix or 'no suffix'})"))
            kept = _without_latex_parts(found)
            skips.extend((p, "LaTeX part without \\documentclass, read as part of its main file")
                         for p in found if p not in kept)
            if not kept:
                raise UsageError(f"{name}: no documents found in this folder (studygap reads "
                                 f"{', '.join(sorted(suffixes))})")
            out.extend(kept)
        elif written_by_studygap(path):
            skips.append((name, OWN_OUTPUT))
        else:
            out.append(name)
    return out


OWN_OUTPUT = "written by studygap (a report, not a document to check)"


def _without_latex_parts(paths: list[str]) -> list[str]:
    """Leave out LaTeX files without \\documentclass when the folder has a main file: they are its \\input parts."""
    tex = [p for p in paths if Path(p).suffix.lower() in (".tex", ".latex")]
    if not tex:
        return paths
    parts = set()
    for p in tex:
        try:
            with open(p, "rb") as fh:
                head = fh.read(65536)
        except OSError:
            continue  # kept: it becomes an error row with its reason
        if b"\\documentclass" not in head:
            parts.add(p)
    if len(parts) == len(tex):
        return paths  # no main file: every .tex file is a document of its own
    return [p for p in paths if p not in parts]


def resolve_checklist(paths: list[str], checklist: str | None, limits) -> tuple[str, str]:
    """The checklist for the whole batch and a sentence saying where it came from."""
    from ..core.errors import StudygapError
    from ..engine import choose_for_file

    if checklist == "auto":
        return "auto", ("chosen for each document from its words; documents checked against different checklists "
                        "are shown apart")
    if checklist:
        from ..matching.checklist import load_checklist

        cl = load_checklist(checklist)  # a broken checklist is refused before any document is read
        return checklist, f"{cl.id}, named by the user"
    for p in paths:
        try:
            cid, why = choose_for_file(p, limits)
        except (StudygapError, OSError, MemoryError):
            continue  # that document gets its error row from the batch; the next one chooses
        return cid, (f"{cid}, chosen for the first document ({p}; {why}) and used for all; name one with "
                     "--checklist to choose")
    return "validation-study", "validation-study, the default (no document could be read to choose one)"


def run_inputs(args, limits=None, skipped: list[tuple[str, str]] | None = None):
    """Resolve inputs and checklist, run the batch with a progress display; (results, note, seconds, paths).

    Files of the given folders that are not checked are added to ``skipped`` and named on stderr.
    """
    from ..many.batch import DASK_LOST_AFTER, run_batch

    limits = limits or limits_from(args)
    if args.jobs is not None and args.jobs < 1:
        raise UsageError("--jobs must be 1 or more")
    task_timeout = getattr(args, "task_timeout", None)
    if task_timeout is not None and not task_timeout > 0:
        raise UsageError("--task-timeout must be above 0")
    if args.engine == "dask" and not args.scheduler:
        raise UsageError("--engine dask needs --scheduler ADDRESS (for example tcp://host:8786)")
    skips: list[tuple[str, str]] = [] if skipped is None else skipped
    paths = collect_inputs(args.inputs, skips)
    for path, why in skips:
        print(f"studygap: skipped: {path}: {why}", file=sys.stderr)
    started = time.monotonic()
    checklist, note = resolve_checklist(paths, args.checklist, limits)
    with progress_bar("checking documents", len(paths), args.quiet) as progress:
        results = run_batch(paths, checklist, config_with_judge(Config(), args), limits, jobs=args.jobs,
                            engine=args.engine, scheduler=args.scheduler, send=args.send, progress=progress,
                            cache=not getattr(args, "no_cache", False), lost_after=task_timeout or DASK_LOST_AFTER)
    for r in results:
        if r.traceback and getattr(args, "debug", False):
            print(r.traceback, end="", file=sys.stderr)
        if not r.ok:
            print(f"studygap: {'internal error' if r.traceback else 'error'}: {r.error}", file=sys.stderr)
    return results, note, time.monotonic() - started, paths


def run(args) -> int:
    """Run `studygap screen`; returns the exit code."""
    from ..many.screen import build_screen, sidecar
    from ..reports import render

    try:
        if getattr(args, "output", None) and os.path.isdir(args.output):
            raise UsageError(f"{args.output}: is a folder; give a file name for the output")
        if args.format == "docx" and (not args.output or args.output == "-"):
            raise UsageError("the docx format is a file: give -o PATH.docx")
        skipped: list[tuple[str, str]] = []
        results, note, seconds, paths = run_inputs(args, skipped=skipped)
        screen = build_screen(results, note, seconds, skipped)
        if args.format == "csv":
            write_csv(render("csv", screen), sidecar(screen), args.output, paths)
        else:
            write_output(render(args.format, screen), args.output, paths)
    except StudygapError as exc:
        print(exc.line(), file=sys.stderr)
        return int(ExitCode.ERROR)
    return int(exit_code(results))


def exit_code(results) -> ExitCode:
    """4 when studygap itself failed on a document (a bug), 3 when some could not be checked, else 0."""
    if any(r.traceback for r in results):
        return ExitCode.INTERNAL_ERROR
    return ExitCode.SOME_INPUTS_FAILED if any(not r.ok for r in results) else ExitCode.OK
